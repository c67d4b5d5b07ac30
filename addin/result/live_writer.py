"""Fill result sheets in the open Excel workbook (xlwings), from the same layout as the file writer.

``fill_results`` is the macro entry (``RunPython("import groundstep.addin.live as m; m.fill_results()")``
or the xlwings ``@xw.sub`` button): it reads the record and settings from the
workbook's named input cells, computes the report and writes the result
sheets through `XlwingsWriter`, which implements the same small writer
interface as the openpyxl writer (``render.SheetWriter``). Excel is
needed to run it; its logic is tested with a stand-in book object that
records writes.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from groundstep.addin.common import as_text

from . import layout as lay
from .render import Formula, SeriesRange

__all__ = ["XlwingsWriter"]

#: Excel's chart type name for straight lines without markers (xlwings spelling).
_SCATTER = "xy_scatter_lines_no_markers"
_LOG_SCALE = -4133  # Excel XlScaleType.xlScaleLogarithmic
_CATEGORY_AXIS = 1  # Excel XlAxisType.xlCategory (the x axis of a scatter chart)
_PORTRAIT, _LANDSCAPE = 1, 2  # Excel XlPageOrientation xlPortrait, xlLandscape
_VALUE_AXIS = 2  # Excel XlAxisType.xlValue (the y axis)
_POINTS_PER_CM = 28.3465


class XlwingsWriter:
    """`render.SheetWriter` into an open xlwings ``Book``.

    Result sheets written before by groundstep (their A1 holds the layout's
    sheet title) are replaced; any other sheet of the same name is left alone
    and the write stops with an error naming it.
    """

    def __init__(self, book: Any, titles: dict[str, str]) -> None:
        self.book = book
        self.titles = titles

    def _sheet(self, name: str) -> Any:
        return self.book.sheets[name]

    def add_sheet(self, name: str) -> None:
        existing = [sheet.name for sheet in self.book.sheets]
        if name in existing:
            old = self.book.sheets[name]
            if old.range("A1").value != self.titles.get(name):
                raise ValueError(
                    f"the workbook already has a sheet {name!r} that groundstep did not write; "
                    "rename it so the result sheets can be added"
                )
            old.delete()
            existing.remove(name)
        if existing:
            self.book.sheets.add(name, after=self.book.sheets[existing[-1]])
        else:
            self.book.sheets.add(name)

    def write_cells(self, sheet: str, row: int, column: int, values: Sequence[Sequence[Any]], number_format, bold) -> None:
        rows = [[v if isinstance(v, Formula) else as_text(v) for v in line] for line in values]
        target = self._sheet(sheet).range((row, column)).resize(len(rows), len(rows[0]))
        if any(isinstance(v, Formula) for line in rows for v in line):
            target.formula = rows
        else:
            target.value = rows
        if number_format:
            target.number_format = number_format
        if bold:
            target.font.bold = True

    def define_name(self, name: str, sheet: str, reference: str) -> None:
        names = self.book.names
        if name in [n.name for n in names]:
            names[name].delete()
        names.add(name, f"={sheet}!{reference}")

    def set_column_width(self, sheet: str, column: int, width: float) -> None:
        self._sheet(sheet).range((1, column)).column_width = width

    def set_page(self, sheet: str, page: lay.PageSetup) -> None:
        """Excel's PageSetup through the COM object (Windows and macOS Excel expose the same members)."""
        ws = self._sheet(sheet)
        try:
            setup = ws.api.PageSetup
        except (AttributeError, TypeError):  # no Excel object model (tests, other hosts): the print set-up is skipped
            return
        setup.Orientation = _LANDSCAPE if page.landscape else _PORTRAIT
        if page.fit_width:
            setup.Zoom = False
            setup.FitToPagesWide = 1
            setup.FitToPagesTall = 1 if page.fit_height else False  # False: as many pages tall as needed
        if page.title_rows:
            setup.PrintTitleRows = f"${page.title_rows[0]}:${page.title_rows[1]}"
        if page.freeze:
            ws.activate()
            window = self.book.app.api.ActiveWindow
            window.FreezePanes = False
            window.SplitRow, window.SplitColumn = page.freeze[0] - 1, page.freeze[1] - 1
            window.FreezePanes = True

    def add_chart(self, sheet: str, chart: lay.Chart, x: SeriesRange, series) -> None:
        ws = self._sheet(sheet)
        anchor = ws.range((chart.row, chart.column))
        plot = ws.charts.add(
            anchor.left, anchor.top, chart.width_cm * _POINTS_PER_CM, chart.height_cm * _POINTS_PER_CM
        )
        plot.chart_type = _SCATTER
        first = series[0][1]
        plot.set_source_data(ws.range((x.first_row, x.column), (x.last_row, first.column)))
        try:  # series names, all series and the log axis need Excel's own object model (Windows)
            native = plot.api[1]
            while native.SeriesCollection().Count:
                native.SeriesCollection(1).Delete()
            for title, y in series:
                line = native.SeriesCollection().NewSeries()
                line.Name = title
                line.XValues = "=" + x.address()
                line.Values = "=" + y.address()
            native.HasTitle = True
            native.ChartTitle.Text = chart.title
            if chart.log_x:
                native.Axes(_CATEGORY_AXIS).ScaleType = _LOG_SCALE
            if chart.log_y:
                native.Axes(_VALUE_AXIS).ScaleType = _LOG_SCALE
        except (AttributeError, TypeError, IndexError):
            pass  # elsewhere the chart keeps the first series on a linear axis
