"""The review chain of a result workbook: digest to 15 digits, changed settings caught, foreign files, permissions."""

from __future__ import annotations

import os
import stat

import numpy as np
import openpyxl
import pytest

from groundstep.addin.cli import main
from groundstep.addin.common import write_atomically
from groundstep.addin.result.verify import verify_workbook
from groundstep.core import Record
from groundstep.core.synthetic import synthetic_record


def _fifteen_digits(values):
    """Each value as a spreadsheet stores it: 15 significant digits (Excel and LibreOffice Calc cell precision)."""
    return np.array([float(f"{v:.15g}") for v in values])


def test_digest_is_unchanged_by_rounding_to_fifteen_digits():
    """Samples cut to 15 significant digits (a spreadsheet's save) keep the record digest."""
    record = synthetic_record(2.0, 0.01, pga=0.3, seed=5)
    samples = record.accel_in("g")
    assert np.any(_fifteen_digits(samples) != samples)  # the rounding really changes bits
    again = Record(_fifteen_digits(samples), 0.01, "g")
    assert again.sha256() == record.sha256()
    changed = Record(samples * (1 + 1e-13), 0.01, "g")  # a change a spreadsheet shows is still caught
    assert changed.sha256() != record.sha256()


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    path = tmp_path_factory.mktemp("chain") / "demo.xlsx"
    assert main(["demo", str(path)]) == 0
    return path


def _edited(demo, tmp_path, name, value):
    book = openpyxl.load_workbook(demo)
    sheet, reference = book.defined_names[f"gs_{name}"].attr_text.split("!")
    book[sheet.strip("'")][reference.replace("$", "")].value = value
    out = tmp_path / f"{name}.xlsx"
    book.save(out)
    return out


def test_workbook_saved_with_fifteen_digit_record_verifies(demo, tmp_path):
    """The Record sheet rewritten at 15 digits (what Calc saves) still verifies."""
    book = openpyxl.load_workbook(demo)
    sheet, reference = book.defined_names["gs_record_table_accel"].attr_text.split("!")
    for row in book[sheet.strip("'")][reference.replace("$", "")]:
        row[0].value = float(f"{row[0].value:.15g}")
    book.save(tmp_path / "rounded.xlsx")
    bad = [c.line() for c in verify_workbook(tmp_path / "rounded.xlsx") if not c.ok]
    assert bad == []


@pytest.mark.parametrize(("name", "value"), [("verification_tolerance", 1), ("verification_beta", 0.3)])
def test_changed_verification_setting_fails_verify(demo, tmp_path, name, value):
    """Loosening the tolerance cell from 1e-9 to 1 (or changing β) is a mismatch (before: all checks match)."""
    edited = _edited(demo, tmp_path, name, value)
    checks = verify_workbook(edited)
    assert [c.block for c in checks if not c.ok] == ["verification_inputs"]
    assert main(["verify", str(edited)]) == 1


def test_text_file_named_xlsx_is_an_input_error(tmp_path, capsys):
    """A text file named .xlsx gives exit 2 and one line naming it."""
    fake = tmp_path / "notes.xlsx"
    fake.write_text("not a workbook\n")
    assert main(["verify", str(fake)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "notes.xlsx" in err[0] and "cannot be opened as an .xlsx workbook" in err[0]


@pytest.mark.parametrize("umask", [0o022, 0o027, 0o002])
def test_output_files_get_the_umask_permissions(tmp_path, umask):
    """A written file has mode 0666 & ~umask, as any new file would (not mkstemp's 0600)."""
    old = os.umask(umask)
    try:
        path = write_atomically(tmp_path / f"out{umask:o}.txt", lambda p: p.write_text("x"))
    finally:
        os.umask(old)
    assert stat.S_IMODE(path.stat().st_mode) == 0o666 & ~umask  # POSIX open(2) rule for a new file


def test_spectrum_workbook_from_time_column_verifies(tmp_path):
    """`spectrum --format xlsx` of a time+acceleration CSV verifies (before: dt 0.019999999999999997 mismatch)."""
    record = synthetic_record(6.0, 0.02, pga=0.2, seed=11)
    lines = [f"{t:.2f},{a:.6f}" for t, a in zip(record.time, record.accel_in("g"))]
    (tmp_path / "tc.csv").write_text("time,accel\n" + "\n".join(lines) + "\n")
    assert main(["spectrum", str(tmp_path / "tc.csv"), "--unit", "g", "--format", "xlsx",
                 "--out-dir", str(tmp_path), "--quiet", "--workers", "1"]) == 0  # fmt: skip
    out = tmp_path / "tc.spectrum.xlsx"
    assert openpyxl.load_workbook(out)["Record"]["B4"].value is not None
    assert [c.line() for c in verify_workbook(out) if not c.ok] == []
