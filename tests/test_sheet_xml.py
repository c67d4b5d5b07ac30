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
