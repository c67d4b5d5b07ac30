"""The result workbook written with openpyxl, driven by the layout of ``sheets.py``.

A workbook is always written new: openpyxl drops charts and pictures when it
loads and saves a file, so a user's workbook is never loaded for writing.
The file is written to a temporary name beside the target and moved into
place with ``os.replace``.

The writer keeps every cell the layout hands it as plain values (no
openpyxl cell objects) and, when the workbook is saved, streams each sheet
row by row through openpyxl's write-only mode: one styled cell per column
and style is filled and handed on, so a 40,000-sample record costs no
per-cell objects (benchmarks/bench_fill.py measures it).
"""

from __future__ import annotations

import os
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from openpyxl import Workbook
from openpyxl.cell import WriteOnlyCell
from openpyxl.chart import Reference, ScatterChart, Series
from openpyxl.styles import Font
from openpyxl.workbook.defined_name import DefinedName

from groundstep.addin.common import write_atomically

from . import layout as lay
from .content import Report
from .render import SeriesRange, column_letter, render

__all__ = ["OpenpyxlWriter", "write_report", "write_workbook_atomically"]

_BOLD = Font(bold=True)


class OpenpyxlWriter:
    """`render.SheetWriter` into a new openpyxl ``Workbook`` (write-only, streamed on `finish`)."""

    def __init__(self) -> None:
        self.book = Workbook(write_only=True)
        self._order: list[str] = []
        # sheet -> row -> column -> (value, number format or None, bold)
        self._cells: dict[str, dict[int, dict[int, tuple[Any, str | None, bool]]]] = {}
        self._widths: dict[str, dict[int, float]] = {}
        self._charts: list[tuple[str, lay.Chart, SeriesRange, Any]] = []
        self._finished = False

    def add_sheet(self, name: str) -> None:
        self._order.append(name)
        self._cells[name] = {}
        self._widths[name] = {}

    def write_cells(self, sheet: str, row: int, column: int, values: Sequence[Sequence[Any]], number_format, bold) -> None:
        rows = self._cells[sheet]
        style = (number_format or None, bool(bold))
        for i, line in enumerate(values, start=row):
            cells = rows.setdefault(i, {})
            for j, value in enumerate(line, start=column):
                cells[j] = (value, *style)

    def finish(self) -> Workbook:
        """Stream every sheet into the write-only workbook (once); return the workbook to save."""
        if self._finished:
            return self.book
        sheets = {name: self.book.create_sheet(name) for name in self._order}
        for name in self._order:
            ws = sheets[name]
            for column, width in sorted(self._widths[name].items()):
                ws.column_dimensions[column_letter(column)].width = width
            for sheet, chart, x, series in self._charts:
                if sheet == name:
                    ws.add_chart(_scatter(chart, sheets, x, series), f"{column_letter(chart.column)}{chart.row}")
            rows = self._cells[name]
            templates: dict[tuple[int, str | None, bool], WriteOnlyCell] = {}
            previous = 0
            for row in sorted(rows):
                for _ in range(row - previous - 1):
                    ws.append([])
                previous = row
                cells = rows[row]
                line: list[Any] = [None] * max(cells)
                for column, (value, number_format, bold) in cells.items():
                    if number_format is None and not bold:  # a styled blank keeps its format
                        line[column - 1] = value
                        continue
                    key = (column, number_format, bold)
                    cell = templates.get(key)
                    if cell is None:
                        cell = templates[key] = WriteOnlyCell(ws)
                        if number_format:
                            cell.number_format = number_format
                        if bold:
                            cell.font = _BOLD
                    cell.value = value  # written out by `append` before the next row refills it
                    line[column - 1] = cell
                ws.append(line)
        self._cells.clear()
        self._finished = True
        return self.book

    def define_name(self, name: str, sheet: str, reference: str) -> None:
        self.book.defined_names[name] = DefinedName(name, attr_text=f"{sheet}!{reference}")

    def set_column_width(self, sheet: str, column: int, width: float) -> None:
        self._widths[sheet][column] = width

    def add_chart(self, sheet: str, chart: lay.Chart, x: SeriesRange, series) -> None:
        self._charts.append((sheet, chart, x, list(series)))


def _scatter(chart: lay.Chart, sheets: dict[str, Any], x: SeriesRange, series) -> ScatterChart:
    """The openpyxl chart of one layout chart (straight lines, no markers)."""
    plot = ScatterChart()
    plot.title = chart.title
    plot.style = 2  # one distinct colour per series (one per damping)
    plot.x_axis.title = chart.x_title
    plot.y_axis.title = chart.y_title
    plot.width, plot.height = chart.width_cm, chart.height_cm
    # openpyxl 3.1 hides axes unless told otherwise
    plot.x_axis.delete = False
    plot.y_axis.delete = False
    if chart.log_x:
        plot.x_axis.scaling.logBase = 10
    # plain axis labels, not the scientific format of the table cells
    plot.x_axis.number_format = "General"
    plot.y_axis.number_format = "General"
    x_ref = Reference(sheets[x.sheet], min_col=x.column, min_row=x.first_row, max_row=x.last_row)
    for title, y in series:
        y_ref = Reference(sheets[y.sheet], min_col=y.column, min_row=y.first_row, max_row=y.last_row)
        line = Series(y_ref, x_ref, title=title)
        line.marker.symbol = "none"
        line.smooth = False
        plot.series.append(line)
    return plot


def write_report(report: Report, path: str | os.PathLike[str], *, force: bool = False) -> Path:
    """Write `report` as a new .xlsx file at `path`.

    Parameters
    ----------
    report : Report
        From ``content.build_report``.
    path : path-like
        Output file; its folder must exist.
    force : bool, default False
        Replace an existing file.

    Returns
    -------
    Path
        The written file.

    Raises
    ------
    FileExistsError
        `path` exists and `force` is false.
    """
    writer = OpenpyxlWriter()
    render(report.layout, report.content, writer)
    # rows are streamed inside the write, so a refused target leaves no half-written sheet behind
    return write_atomically(path, lambda temporary: writer.finish().save(temporary), force=force)


def write_workbook_atomically(book: Workbook, path: str | os.PathLike[str], *, force: bool = False) -> Path:
    """Save `book` to a temporary file beside `path`, then move it into place (``common.write_atomically``)."""
    return write_atomically(path, book.save, force=force)
