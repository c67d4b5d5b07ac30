"""Tests of the live (xlwings) writer with a stand-in book that records every write."""

from __future__ import annotations

import openpyxl
import pytest
from numpy.testing import assert_allclose

from groundstep.addin import live
from groundstep.addin.result.content import Oscillator, ReportSettings, build_report
from groundstep.addin.result.offline import write_report
from groundstep.addin.result.render import column_letter
from groundstep.core.synthetic import synthetic_record


class FakeRange:
    """Records writes to a rectangle of a FakeSheet, as xlwings.Range would apply them."""

    def __init__(self, sheet, row, column, rows=1, columns=1):
        self.sheet, self.row, self.column, self.rows, self.columns = sheet, row, column, rows, columns
        self.font = type("Font", (), {})()

    def resize(self, rows, columns):
        return FakeRange(self.sheet, self.row, self.column, rows, columns)

    def _store(self, values):
        assert len(values) == self.rows and all(len(line) == self.columns for line in values)
        for i, line in enumerate(values):
            for j, value in enumerate(line):
                self.sheet.cells[(self.row + i, self.column + j)] = value

    value = property(lambda self: self.sheet.cells.get((self.row, self.column)), _store)
    formula = property(lambda self: self.sheet.cells.get((self.row, self.column)), _store)

    @property
    def number_format(self):
        return self.sheet.formats.get((self.row, self.column))

    @number_format.setter
    def number_format(self, fmt):
        for i in range(self.rows):
            for j in range(self.columns):
                self.sheet.formats[(self.row + i, self.column + j)] = fmt

    left = property(lambda self: 48.0 * (self.column - 1))
    top = property(lambda self: 15.0 * (self.row - 1))

    def __setattr__(self, name, value):
        if name == "column_width":
            self.sheet.widths[self.column] = value
            return
        object.__setattr__(self, name, value)

    def options(self, **_):
        return self


class FakeChart:
    def __init__(self):
        self.chart_type = None
        self.source = None

    def set_source_data(self, rng):
        self.source = rng

    @property
    def api(self):  # no Excel object model here: the writer must fall back quietly
        raise AttributeError("api needs Excel")


class FakeCharts(list):
    def add(self, left, top, width, height):
        chart = FakeChart()
        self.append(chart)
        return chart


class FakeSheet:
    def __init__(self, book, name):
        self.book, self.name = book, name
        self.cells, self.formats, self.widths = {}, {}, {}
        self.charts = FakeCharts()

    def range(self, first, last=None):
        if isinstance(first, str):
            letters = "".join(ch for ch in first if ch.isalpha())
            column = sum((ord(ch) - 64) * 26**i for i, ch in enumerate(reversed(letters)))
            return FakeRange(self, int(first[len(letters):]), column)
        if last is None:
            return FakeRange(self, *first)
        return FakeRange(self, first[0], first[1], last[0] - first[0] + 1, last[1] - first[1] + 1)

    def delete(self):
        self.book.sheets.remove(self)


class FakeSheets(list):
    def __init__(self, book):
        super().__init__()
        self.book = book

    def __getitem__(self, key):
        if isinstance(key, str):
            return next(s for s in self if s.name == key)
        return list.__getitem__(self, key)

    def add(self, name, after=None):
        sheet = FakeSheet(self.book, name)
        self.insert(self.index(after) + 1 if after is not None else len(self), sheet)
        return sheet


class FakeName:
    def __init__(self, names, name, refers_to, values=None):
        self.names, self.name, self.refers_to, self.values = names, name, refers_to, values

    def delete(self):
        self.names.remove(self)

    @property
    def refers_to_range(self):
        values = self.values
        return type("R", (), {"options": lambda self, **_: type("V", (), {"value": values})()})()


class FakeNames(list):
    def add(self, name, refers_to):
        self.append(FakeName(self, name, refers_to))

    def __getitem__(self, key):
        if isinstance(key, str):
            return next(n for n in self if n.name == key)
        return list.__getitem__(self, key)


class FakeBook:
    def __init__(self):
        self.name = "input.xlsx"
        self.sheets = FakeSheets(self)
        self.names = FakeNames()


@pytest.fixture(scope="module")
def report():
    record = synthetic_record(3.0, 0.01, pga=0.2, seed=9, name="live test")
    settings = ReportSettings(
        periods=(0.1, 0.3, 1.0, 3.0),
        dampings=(0.05, 0.1),
        oscillators=(Oscillator("frame", 0.5, 0.05, 3.0), Oscillator("mast", 1.2, 0.02)),
    )
    return build_report(record, settings, command="test", created="2026-01-01T00:00:00+00:00")


def _as_file_keeps(value):
    """The file keeps floats exactly (``sheet_xml`` writes repr, the shortest round-trip text)."""
    if isinstance(value, str) and value.startswith("'"):  # Excel's quote prefix: stored as text, not shown
        return value[1:]
    return value


def _render_live(report, book=None):
    book = book or FakeBook()
    titles = {s.name: s.title for s in report.layout.sheets}
    live.render(report.layout, report.content, live.XlwingsWriter(book, titles))
    return book


def test_live_writer_writes_what_the_file_writer_writes(report, tmp_path):
    """Every cell, number format and defined name of the live writer equals the openpyxl file's."""
    path = write_report(report, tmp_path / "file.xlsx")
    stored = openpyxl.load_workbook(path)
    book = _render_live(report)
    assert [s.name for s in book.sheets] == stored.sheetnames
    compared = 0
    for sheet in book.sheets:
        ws = stored[sheet.name]
        for (row, column), value in sheet.cells.items():
            assert ws.cell(row=row, column=column).value == _as_file_keeps(value), (sheet.name, row, column)
            compared += 1
        for (row, column), fmt in sheet.formats.items():
            assert ws.cell(row=row, column=column).number_format == fmt
        # the file holds nothing the live writer left out
        filled = {(c.row, c.column) for line in ws.iter_rows() for c in line if c.value is not None}
        assert filled == {key for key, value in sheet.cells.items() if value is not None}
        for column, width in sheet.widths.items():
            assert ws.column_dimensions[column_letter(column)].width == width
    assert compared > 1000
    # the yielding table (2 oscillators: data from row 10) and the Summary yielding block are mirrored
    peaks = book.sheets["Peaks"].cells
    assert peaks[(10, 1)] == "frame" and peaks[(10, 8)] == report.content["yielding_table"]["ductility"][0]
    assert any(n.name == "gs_largest_ductility" for n in book.names)
    assert {n.name: n.refers_to for n in book.names} == {
        name: "=" + item.attr_text for name, item in stored.defined_names.items()
    }


def test_live_writer_adds_scatter_charts(report):
    """Each layout chart becomes a scatter chart (lines, no markers) with its x and first y column."""
    book = _render_live(report)
    spectra = book.sheets["Spectra"]
    assert [c.chart_type for c in spectra.charts] == ["xy_scatter_lines_no_markers"] * 2
    source = spectra.charts[0].source
    assert (source.row, source.column, source.rows) == (5, 1, 4)  # period column, 4 periods from row 5


def test_live_writer_replaces_its_own_sheets_but_not_others(report):
    """A second fill replaces groundstep's sheets; a user's sheet with a result-sheet name is refused."""
    book = _render_live(report)
    _render_live(report, book)
    assert [s.name for s in book.sheets].count("Spectra") == 1
    other = FakeBook()
    other.sheets.add("Peaks").cells[(1, 1)] = "my own peaks"
    with pytest.raises(ValueError, match="already has a sheet 'Peaks' that groundstep did not write"):
        _render_live(report, other)


def test_fill_open_book_reads_named_inputs():
    """The macro's reader takes the record, time step and unit from named cells as xlwings passes them."""
    record = synthetic_record(2.0, 0.01, pga=0.1, seed=4)
    book = FakeBook()
    book.sheets.add("Input")
    column = [["Accel [g]"]] + [[v] for v in record.accel_in("g").tolist()] + [[None]] * 5
    book.names.append(FakeName(book.names, "gs_in_record", "=Input!$B$1:$B$207", column))
    book.names.append(FakeName(book.names, "gs_in_dt", "=Input!$E$2", [[0.01]]))
    book.names.append(FakeName(book.names, "gs_in_unit", "=Input!$E$3", [["g"]]))
    result = live.fill_open_book(book, ReportSettings(periods=(0.2, 1.0), dampings=(0.05,)))
    assert result.content["record"]["dt"] == 0.01
    # the stored record is rounded to the 15 digits a spreadsheet keeps: half a unit of the 15th digit
    assert_allclose(result.content["record_table"]["accel"], record.accel_in("g"), rtol=5e-15, atol=0.0)
    assert "Verification" in [s.name for s in book.sheets]
    assert book.sheets[0].name == "Input"  # the input sheet stays first and untouched


def test_fill_open_book_reads_reduction_factors():
    """The macro's reader takes R per oscillator (blank: elastic only) and fills the yielding table."""
    record = synthetic_record(2.0, 0.01, pga=0.3, seed=4)
    book = FakeBook()
    book.sheets.add("Input")
    column = [[v] for v in record.accel_in("g").tolist()]
    book.names.append(FakeName(book.names, "gs_in_record", "=Input!$B$1:$B$201", column))
    book.names.append(FakeName(book.names, "gs_in_dt", "=Input!$E$2", [[0.01]]))
    book.names.append(FakeName(book.names, "gs_in_unit", "=Input!$E$3", [["g"]]))
    book.names.append(FakeName(book.names, "gs_in_oscillator_periods", "=Input!$G$1:$G$4", [["T [s]"], [0.3], [0.9], [2.0]]))
    factors = [["R"], [4.0], [None], [1.5]]  # a header, then R beside each period; the 0.9 s oscillator stays elastic
    book.names.append(FakeName(book.names, "gs_in_oscillator_reduction_factors", "=Input!$H$1:$H$4", factors))
    result = live.fill_open_book(book, ReportSettings(periods=(0.2, 1.0), dampings=(0.05,)))
    table = result.content["yielding_table"]
    assert table["period"] == [0.3, 2.0] and table["reduction_factor"] == [4.0, 1.5]
    assert result.content["peaks_table"]["reduction_factor"] == [4.0, None, 1.5]
    yielding_title = book.sheets["Peaks"].cells[(9, 1)]  # 3 oscillators: the yielding table starts on row 9
    assert yielding_title.startswith("Yielding oscillators")


def test_live_writer_sets_up_pages_through_excel_page_setup():
    """set_page fits to one page wide, sets landscape, print titles and freezes panes through the COM members."""
    from types import SimpleNamespace

    from groundstep.addin.result.layout import PageSetup
    from groundstep.addin.result.live_writer import XlwingsWriter

    setup, window = SimpleNamespace(), SimpleNamespace()
    sheet = SimpleNamespace(api=SimpleNamespace(PageSetup=setup), activate=lambda: None)
    book = SimpleNamespace(sheets={"Record": sheet}, app=SimpleNamespace(api=SimpleNamespace(ActiveWindow=window)))
    XlwingsWriter(book, {}).set_page("Record", PageSetup(landscape=True, title_rows=(8, 8), freeze=(9, 1)))
    # Excel's constants: xlLandscape = 2; FitToPagesTall False = as many pages as needed
    assert (setup.Orientation, setup.Zoom, setup.FitToPagesWide, setup.FitToPagesTall) == (2, False, 1, False)
    assert setup.PrintTitleRows == "$8:$8" and (window.SplitRow, window.SplitColumn, window.FreezePanes) == (8, 0, True)
