"""Tests of groundstep.addin.package.inputs: records and settings read from input workbooks."""

from __future__ import annotations

import os

import numpy as np
import openpyxl
import pytest
from openpyxl.workbook.defined_name import DefinedName

from groundstep.addin.package.inputs import InputError, read_input_workbook, split_reference
from groundstep.addin.worksheet.cells import CellError


def _book(path, names, sheet_name="Data"):
    """An invented input workbook: a record in A, oscillators in C:E, names pointing at them."""
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = sheet_name
    sheet["A1"] = "Accel [g]"
    for row, value in enumerate(0.1 * np.sin(np.arange(200) * 0.2), start=2):
        sheet.cell(row, 1, float(value))
    for row, (label, period, r) in enumerate((("Label", "T [s]", "R"), ("tank", 0.5, 3.0), ("mast", 1.2, None)), 1):
        sheet.cell(row, 3, label), sheet.cell(row, 4, period), sheet.cell(row, 5, r)
    sheet["G1"], sheet["G2"] = 0.01, "g"
    quoted = "'" + sheet_name.replace("'", "''") + "'"
    for name, reference in names.items():
        book.defined_names[name] = DefinedName(name, attr_text=f"{quoted}!{reference}")
    book.save(path)
    return path


NAMES = {
    "gs_in_record": "$A$1:$A$201",
    "gs_in_dt": "$G$1",
    "gs_in_unit": "$G$2",
    "gs_in_oscillator_periods": "$D$1:$D$3",
    "gs_in_oscillator_reduction_factors": "$E$1:$E$3",
}


def test_oscillator_labels_are_read_beside_the_periods(tmp_path):
    """A gs_in_oscillator_labels range names the oscillators (it once stopped with 'too many values to unpack')."""
    path = _book(tmp_path / "in.xlsx", {**NAMES, "gs_in_oscillator_labels": "$C$1:$C$3"})
    record, settings, _ = read_input_workbook(path)
    assert [(o.label, o.period, o.reduction_factor) for o in settings.oscillators] == [
        ("tank", 0.5, 3.0),
        ("mast", 1.2, None),
    ]
    assert record.n == 200 and record.unit == "g" and record.dt == 0.01


def test_the_input_file_is_left_untouched(tmp_path):
    """Reading changes neither the bytes nor the modification time of the input workbook."""
    path = _book(tmp_path / "in.xlsx", NAMES)
    before, stamp = path.read_bytes(), os.stat(path).st_mtime_ns
    read_input_workbook(path)
    assert path.read_bytes() == before and os.stat(path).st_mtime_ns == stamp


def test_a_sheet_name_with_quotes_is_found(tmp_path):
    """A defined name on a sheet called O'Brien's data (quotes doubled in the reference) reads that sheet."""
    path = _book(tmp_path / "in.xlsx", NAMES, sheet_name="O'Brien's data")
    record, _, _ = read_input_workbook(path)
    assert record.n == 200


def test_split_reference_undoubles_quotes():
    """'O''Brien''s data'!A1:A9 names the sheet O'Brien's data (the spreadsheet quoting rule)."""
    assert split_reference("'O''Brien''s data'!$A$1:$A$9") == ("O'Brien's data", "A1:A9")
    with pytest.raises(InputError, match="is not SHEET!RANGE"):
        split_reference("A1:A9")


def test_missing_unit_is_named_not_assumed(tmp_path):
    """Without a unit cell or --unit the reader stops and says where to give it."""
    names = {k: v for k, v in NAMES.items() if k != "gs_in_unit"}
    with pytest.raises(InputError, match="the record unit is not given"):
        read_input_workbook(_book(tmp_path / "in.xlsx", names))


def test_a_bad_reduction_factor_names_its_row(tmp_path):
    """R <= 0 beside an oscillator period is refused naming the row of the range."""
    path = _book(tmp_path / "in.xlsx", NAMES)
    book = openpyxl.load_workbook(path)
    book["Data"]["E2"] = -2.0
    book.save(path)
    with pytest.raises((InputError, CellError), match="row 2 of the oscillator reduction factors holds -2"):
        read_input_workbook(path)
