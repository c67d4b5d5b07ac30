"""Tests of groundstep.addin.package.inputs: records and settings read from input workbooks."""

from __future__ import annotations

import os

import numpy as np
import openpyxl
import pytest
from openpyxl.workbook.defined_name import DefinedName

from groundstep.addin.package.inputs import InputError, read_input_workbook, split_reference
from groundstep.addin.worksheet.cells import CellError
from groundstep.core import Record


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


@pytest.mark.parametrize(
    ("value", "message"),
    [
        ("#N/A", "row 40 of the acceleration range holds the error #N/A"),
        (True, "row 40 of the acceleration range holds TRUE, a Boolean, not a number"),
        (None, "row 40 of the acceleration range is blank"),
        ("n/a", "row 40 of the acceleration range holds the text 'n/a', not a number"),
    ],
)
def test_a_bad_record_cell_is_refused_naming_its_row(tmp_path, value, message):
    """An error, Boolean, blank or text cell inside the record is refused with its row (the worksheet messages)."""
    path = _book(tmp_path / "in.xlsx", NAMES)
    book = openpyxl.load_workbook(path)
    book["Data"]["A40"] = value
    book.save(path)
    with pytest.raises((InputError, CellError), match=message):
        read_input_workbook(path)


def test_a_date_where_a_number_is_expected_is_refused(tmp_path):
    """A time-step cell formatted as a date (0.01 day, read as the time 00:14:24 by openpyxl too) is refused, not read as 0.01 s."""
    path = _book(tmp_path / "in.xlsx", NAMES)
    book = openpyxl.load_workbook(path)
    book["Data"]["G1"].number_format = "yyyy-mm-dd"
    book.save(path)
    with pytest.raises((InputError, CellError), match=r"the time-step cell holds a date or time \(00:14:24\), not a number"):
        read_input_workbook(path)


def test_values_agree_with_openpyxls_reading(tmp_path):
    """The record and settings read by the sheet scan equal those read through openpyxl cells (bit for bit)."""
    path = _book(tmp_path / "in.xlsx", {**NAMES, "gs_in_oscillator_labels": "$C$1:$C$3"})
    record, settings, _ = read_input_workbook(path)
    sheet = openpyxl.load_workbook(path, data_only=True)["Data"]  # the independent reader
    expected = np.array([sheet.cell(row, 1).value for row in range(2, 202)], dtype=float)
    direct = Record(expected, 0.01, "g")  # the same conversion to m/s² from the reference values
    assert np.array_equal(record.accel.view(np.int64), direct.accel.view(np.int64))
    assert [o.period for o in settings.oscillators] == [sheet["D2"].value, sheet["D3"].value]


def test_a_whole_column_name_reads_the_used_rows(tmp_path):
    """gs_in_record = Data!$A:$A (a whole column) reads the 200 samples below the heading."""
    path = _book(tmp_path / "in.xlsx", {**NAMES, "gs_in_record": "$A:$A"})
    record, _, _ = read_input_workbook(path)
    assert record.n == 200


def test_a_sheet_scoped_record_name_is_checked_for_samples_below(tmp_path):
    """A record name scoped to its sheet that ends above the last sample is refused, as a workbook-scoped one is."""
    names = {k: v for k, v in NAMES.items() if k != "gs_in_record"}
    path = _book(tmp_path / "in.xlsx", names)
    book = openpyxl.load_workbook(path)
    book["Data"].defined_names["gs_in_record"] = DefinedName("gs_in_record", attr_text="Data!$A$1:$A$150")
    book.save(path)
    with pytest.raises(InputError, match=r"Data!A151 holds a sample below the record range Data!A1:A150"):
        read_input_workbook(path)


def test_a_chart_sheet_named_as_input_is_refused_clearly(tmp_path):
    """--record on a chart sheet says it is a chart sheet (it holds no cells)."""
    from openpyxl.chart import LineChart, Reference

    path = _book(tmp_path / "in.xlsx", NAMES)
    book = openpyxl.load_workbook(path)
    chart = LineChart()
    chart.add_data(Reference(book["Data"], min_col=1, min_row=1, max_row=20))
    book.create_chartsheet("Plot").add_chart(chart)
    book.save(path)
    with pytest.raises(InputError, match="'Plot' is a chart sheet, which holds no cells"):
        read_input_workbook(path, record="Plot!A1:A20")


def test_a_range_from_row_0_is_refused(tmp_path):
    """--record Data!A0:A20 names no cells (rows start at 1): refused with the range named, not read from row 1."""
    path = _book(tmp_path / "in.xlsx", NAMES)
    with pytest.raises(InputError, match=r"Data!A0:A20 is not a cell or range such as B2:B4001"):
        read_input_workbook(path, record="Data!A0:A20")
