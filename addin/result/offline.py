"""The result workbook written with openpyxl, driven by the layout of ``sheets.py``.

A workbook is always written new: openpyxl drops charts and pictures when it
loads and saves a file, so a user's workbook is never loaded for writing.
The file is written to a temporary name beside the target and moved into
place with ``os.replace``.
"""

from __future__ import annotations

import os
from collections.abc import Sequence
from copy import copy
from pathlib import Path
from typing import Any

from openpyxl import Workbook
from openpyxl.chart import Reference, ScatterChart, Series
from openpyxl.styles import Font
from openpyxl.workbook.defined_name import DefinedName

from groundstep.addin.common import write_atomically

from . import layout as lay
from .content import Report
from .render import Formula, SeriesRange, column_letter, render

__all__ = ["OpenpyxlWriter", "write_report", "write_workbook_atomically"]

_BOLD = Font(bold=True)


class OpenpyxlWriter:
    """`render.SheetWriter` into a new openpyxl ``Workbook``."""

    def __init__(self) -> None:
        self.book = Workbook()
        self._first = True

    def add_sheet(self, name: str) -> None:
        if self._first:  # the new workbook's own empty sheet becomes the first of ours
            self.book.active.title = name
            self._first = False
        else:
            self.book.create_sheet(name)

    def write_cells(self, sheet: str, row: int, column: int, values: Sequence[Sequence[Any]], number_format, bold) -> None:
        ws = self.book[sheet]
        style = None  # the first cell's style, shared by the rest (openpyxl resolves a format per assignment)
        for i, line in enumerate(values):
            for j, value in enumerate(line):
                cell = ws.cell(row=row + i, column=column + j, value=value)
                if isinstance(value, str) and not isinstance(value, Formula):
                    cell.data_type = "s"  # text stays text whatever its first character
                if not (number_format and number_format != lay.GENERAL) and not bold:
                    continue  # General, not bold: the default style
                if style is None:
                    if number_format:
                        cell.number_format = number_format
                    if bold:
                        cell.font = _BOLD
                    style = cell._style
                else:
                    cell._style = copy(style)

    def define_name(self, name: str, sheet: str, reference: str) -> None:
        self.book.defined_names[name] = DefinedName(name, attr_text=f"{sheet}!{reference}")

    def set_column_width(self, sheet: str, column: int, width: float) -> None:
        self.book[sheet].column_dimensions[column_letter(column)].width = width

    def set_page(self, sheet: str, page: lay.PageSetup) -> None:
        ws = self.book[sheet]
        ws.page_setup.orientation = "landscape" if page.landscape else "portrait"
        if page.fit_width:
            ws.sheet_properties.pageSetUpPr.fitToPage = True
            ws.page_setup.fitToWidth = 1
            ws.page_setup.fitToHeight = 1 if page.fit_height else 0  # 0: as many pages tall as needed
        if page.title_rows:
            ws.print_title_rows = f"{page.title_rows[0]}:{page.title_rows[1]}"
        if page.freeze:
            ws.freeze_panes = f"{column_letter(page.freeze[1])}{page.freeze[0]}"

    def add_chart(self, sheet: str, chart: lay.Chart, x: SeriesRange, series) -> None:
        ws = self.book[sheet]
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
        if chart.log_y:
            plot.y_axis.scaling.logBase = 10
        # plain axis labels, not the scientific format of the table cells
        plot.x_axis.number_format = "General"
        plot.y_axis.number_format = "General"
        x_ref = Reference(self.book[x.sheet], min_col=x.column, min_row=x.first_row, max_row=x.last_row)
        for title, y in series:
            y_ref = Reference(self.book[y.sheet], min_col=y.column, min_row=y.first_row, max_row=y.last_row)
            line = Series(y_ref, x_ref, title=title)
            line.marker.symbol = "none"
            line.smooth = False
            plot.series.append(line)
        ws.add_chart(plot, f"{column_letter(chart.column)}{chart.row}")


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
    return write_workbook_atomically(writer.book, path, force=force)


def write_workbook_atomically(book: Workbook, path: str | os.PathLike[str], *, force: bool = False) -> Path:
    """Save `book` to a temporary file beside `path`, then move it into place (``common.write_atomically``)."""
    return write_atomically(path, book.save, force=force)
