"""Tests of groundstep.addin.result.verify: a result workbook re-checked from its own cells."""

from __future__ import annotations

import shutil

import openpyxl
import pytest

from groundstep.addin.result.verify import NotAResultWorkbook, verify_workbook


def test_verify_passes_on_a_fresh_workbook(made):
    """verify recomputes every checked block and finds them all equal."""
    _, _, _, path = made
    checks = verify_workbook(path)
    assert all(c.ok for c in checks), [c.line() for c in checks if not c.ok]
    assert {c.block for c in checks} >= {"record_sha256", "spectra_table", "peaks_table", "verification_steps"}


@pytest.mark.parametrize(
    ("sheet", "cell", "block"),
    [
        ("Spectra", "D7", "spectra_table"),
        ("Peaks", "D5", "peaks_table"),
        ("Summary", "B15", "record_summary"),
        ("Peaks", "H12", "yielding_table"),  # ductility of the second yielding oscillator ("mid")
        ("Peaks", "F11", "yielding_table"),  # yield displacement of the first ("short")
        ("Summary", "B30", "yielding_summary"),  # largest ductility demand
    ],
)
def test_verify_names_the_block_with_a_changed_cell(made, tmp_path, sheet, cell, block):
    """Changing one result cell (in a copy, with openpyxl) makes verify fail that block only."""
    _, _, _, path = made
    copy = tmp_path / "edited.xlsx"
    shutil.copy(path, copy)
    book = openpyxl.load_workbook(copy)
    book[sheet][cell].value = book[sheet][cell].value * 1.001
    book.save(copy)
    bad = [c for c in verify_workbook(copy) if not c.ok]
    assert [c.block for c in bad] == [block]
    assert f"{cell} holds" in bad[0].message


def test_verify_detects_an_edited_record_sample(made, tmp_path):
    """Changing one acceleration sample breaks the SHA-256 check."""
    _, _, _, path = made
    copy = tmp_path / "edited.xlsx"
    shutil.copy(path, copy)
    book = openpyxl.load_workbook(copy)
    book["Record"]["B50"].value = 1.0
    book.save(copy)
    bad = {c.block for c in verify_workbook(copy) if not c.ok}
    assert "record_sha256" in bad


def test_verify_refuses_other_files(tmp_path):
    """A text file and a workbook without our format mark raise NotAResultWorkbook."""
    text = tmp_path / "notes.xlsx"
    text.write_text("hello")
    with pytest.raises(NotAResultWorkbook, match="cannot be opened as an .xlsx"):
        verify_workbook(text)
    other = tmp_path / "other.xlsx"
    openpyxl.Workbook().save(other)
    with pytest.raises(NotAResultWorkbook, match="is not a groundstep result workbook"):
        verify_workbook(other)


def test_verify_reads_r_back_from_the_peaks_table(made, tmp_path):
    """R is read back from the elastic table: changing it there makes the recomputed yielding table differ."""
    _, _, _, path = made
    copy = tmp_path / "edited.xlsx"
    shutil.copy(path, copy)
    book = openpyxl.load_workbook(copy)
    book["Peaks"]["L5"].value = 2.5  # R of "short" in the elastic table
    book.save(copy)
    bad = {c.block for c in verify_workbook(copy) if not c.ok}
    assert "yielding_table" in bad and "peaks_table" not in bad
