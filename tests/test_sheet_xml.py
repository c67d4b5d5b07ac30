"""Tests of the SpreadsheetML cell writer (``result/sheet_xml.py``) through the openpyxl package writer.

References: openpyxl's own reader (an independent parser of ECMA-376 sheet
XML) reads every file back; the float texts are checked against Python's
``float()`` (repr is the shortest text that round-trips, PEP 3101 / the
``repr`` of ``float`` since Python 3.1).
"""

from __future__ import annotations

import zipfile

import numpy as np
import openpyxl
import pytest

from groundstep.addin.result import layout as lay
from groundstep.addin.result.offline import OpenpyxlWriter
from groundstep.addin.result.render import Formula
from groundstep.addin.result.sheet_xml import SheetCells


def _write(tmp_path, blocks):
    writer = OpenpyxlWriter()
    writer.add_sheet("One")
    writer.add_sheet("Two")
    for sheet, row, column, values, number_format, bold in blocks:
        writer.write_cells(sheet, row, column, values, number_format, bold)
    path = tmp_path / "cells.xlsx"
    writer.save(path)
    return path


def test_floats_read_back_bit_for_bit(tmp_path):
    """Every float64 of a long column, tiny and huge among them, reads back as the same bits (repr text)."""
    rng = np.random.default_rng(3)
    values = (rng.standard_normal(5000) * 10.0 ** rng.integers(-300, 300, 5000)).tolist() + [0.1, 1 / 3, -0.0, 5e-324]
    path = _write(tmp_path, [("Two", 9, 3, [[v] for v in values], lay.SCIENTIFIC, False)])
    sheet = openpyxl.load_workbook(path)["Two"]
    found = [sheet.cell(row=9 + i, column=3).value for i in range(len(values))]
    # the same bits, -0.0 and the smallest subnormal among them
    assert np.array_equal(np.asarray(found, dtype=float).view(np.int64), np.asarray(values, dtype=float).view(np.int64))
    assert sheet.cell(row=9, column=3).number_format == lay.SCIENTIFIC


def test_text_formulas_booleans_and_positions(tmp_path):
    """Text stays text whatever its first character, formulas stay formulas, cells land where they were written."""
    path = _write(tmp_path, [
        ("One", 1, 1, [["Title", None, "  spaced  "]], None, True),
        ("One", 3, 2, [[Formula("=SUM(B4:B5)"), "=not a formula", True, 7]], None, False),
        ("One", 4, 2, [[1.5], [2.5]], lay.FIXED3, False),
        ("Two", 2, 5, [["a < b & c > d"]], lay.TEXT, False),
    ])  # fmt: skip
    book = openpyxl.load_workbook(path)
    one, two = book["One"], book["Two"]
    assert one["A1"].value == "Title" and one["A1"].font.b and one["C1"].value == "  spaced  "
    assert one["B3"].value == "=SUM(B4:B5)" and one["B3"].data_type == "f"
    assert one["C3"].value == "=not a formula" and one["C3"].data_type == "s"
    assert one["D3"].value is True and one["E3"].value == 7
    assert (one["B4"].value, one["B5"].value, one["B5"].number_format) == (1.5, 2.5, lay.FIXED3)
    assert two["E2"].value == "a < b & c > d" and two["E2"].number_format == lay.TEXT
    assert one.max_row == 5 and one.max_column == 5


def test_every_cell_carries_its_reference(tmp_path):
    """Every cell names itself (r="A2"), gap or not: Gnumeric misplaces cells without it (seen in its recalc test)."""
    path = _write(tmp_path, [("One", 2, 1, [[1.0, 2.0]], None, False), ("One", 2, 5, [[3.0]], None, False)])
    with zipfile.ZipFile(path) as package:
        text = package.read("xl/worksheets/sheet1.xml").decode()
    assert '<row r="2"><c r="A2"><v>1.0</v></c><c r="B2"><v>2.0</v></c><c r="E2"><v>3.0</v></c></row>' in text
    assert '<dimension ref="A1:E2"/>' in text
    assert [c.value for c in openpyxl.load_workbook(path)["One"][2]] == [1.0, 2.0, None, None, 3.0]


@pytest.mark.parametrize("value", [float("nan"), float("inf"), np.float64("-inf")])
def test_non_finite_numbers_are_refused_naming_the_cell(value):
    """A NaN or infinity is refused with the sheet and cell named, never written as a blank."""
    cells = SheetCells("Spectra", lambda number_format, bold: 0)
    with pytest.raises(ValueError, match=r"sheet 'Spectra' cell C12: .* is not a number a workbook can hold"):
        cells.write_column(10, 3, [1.0, 2.0, value], None)


def test_a_cell_written_twice_is_refused():
    """Two blocks writing the same cell is a layout error, named (a silent overwrite would hide one)."""
    cells = SheetCells("Record", lambda number_format, bold: 0)
    cells.write(4, 2, [["first"]], None, False)
    cells.write(4, 2, [["second"]], None, False)
    with pytest.raises(ValueError, match="sheet 'Record' cell B4 is written twice"):
        list(cells.xml())


def _sheet_text(path, part="xl/worksheets/sheet1.xml"):
    with zipfile.ZipFile(path) as package:
        return package.read(part).decode()


def test_a_formula_column_is_shared_and_reads_back_cell_for_cell(tmp_path):
    """Formulas down a column that differ only in relative rows become one shared formula; openpyxl expands each."""
    rows = range(5, 205)
    column = [[Formula(f"=Record!B{r + 100}*$B$2+F{r - 1}-SUM($C$1:C{r})")] for r in rows]
    path = _write(tmp_path, [("One", 5, 6, column, lay.SCIENTIFIC, False)])
    text = _sheet_text(path)
    assert '<c r="F5" s="1"><f t="shared" ref="F5:F204" si="0">Record!B105*$B$2+F4-SUM($C$1:C5)</f></c>' in text
    assert text.count('<f t="shared" si="0"/>') == 199
    sheet = openpyxl.load_workbook(path)["One"]  # openpyxl's Translator moves the master formula itself
    assert [sheet.cell(r, 6).value for r in rows] == [f[0] for f in column]


def test_formulas_that_do_not_follow_one_rule_are_written_out(tmp_path):
    """A changing $-row, quoted text that looks like a cell, a name or a short run: every formula written in full."""
    blocks = [
        ("One", 1, 1, [[Formula(f"=A${r}")] for r in range(1, 6)], None, False),  # $ row changes: not a move
        ("One", 1, 2, [[Formula(f'="B{r}"&B{r + 10}')] for r in range(1, 6)], None, False),  # text moves too
        ("One", 1, 3, [[Formula(f"=input_dt*C{r + 10}")] for r in range(1, 6)], None, False),  # a defined name
        ("One", 1, 4, [[Formula(f"=D{r + 10}")] for r in range(1, 3)], None, False),  # two cells: too short
    ]
    path = _write(tmp_path, blocks)
    assert 't="shared"' not in _sheet_text(path)
    sheet = openpyxl.load_workbook(path)["One"]
    for _, row, column, values, _, _ in blocks:
        assert [sheet.cell(row + i, column).value for i in range(len(values))] == [v[0] for v in values]


def test_a_row_reference_is_left_off_only_after_the_row_before(tmp_path):
    """<row> without r follows the row before (ECMA-376 §18.3.1.73); after a gap r is written; cells keep r."""
    path = _write(tmp_path, [("One", 3, 1, [[1.0], [2.0], [3.0]], None, False), ("One", 9, 1, [[4.0], [5.0]], None, False)])
    text = _sheet_text(path)
    assert ('<row r="3"><c r="A3"><v>1.0</v></c></row><row><c r="A4"><v>2.0</v></c></row><row><c r="A5"><v>3.0</v></c>'
            '</row><row r="9"><c r="A9"><v>4.0</v></c></row><row><c r="A10"><v>5.0</v></c></row>') in text  # fmt: skip
    sheet = openpyxl.load_workbook(path)["One"]
    assert [(c.row, c.value) for (c,) in sheet.iter_rows(min_row=1, max_row=10) if c.value is not None] == [
        (3, 1.0), (4, 2.0), (5, 3.0), (9, 4.0), (10, 5.0)
    ]
