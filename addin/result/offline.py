"""The result workbook written as an .xlsx file, driven by the layout of ``sheets.py``.

openpyxl builds the package (styles, defined names, column widths, page
set-up, charts); the cells go through ``sheet_xml.SheetCells``, which
streams each worksheet's ``<sheetData>`` as SpreadsheetML text into the
package openpyxl wrote (openpyxl's own cell objects cost about 20 us a cell
to build and write, 7 s for the 340,000 cells of a 40,000-sample record).

A workbook is always written new: openpyxl drops charts and pictures when it
loads and saves a file, so a user's workbook is never loaded for writing.
The file is written to a temporary name beside the target and moved into
place with ``os.replace``.
"""

from __future__ import annotations

import io
import os
import re
import zipfile
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from openpyxl import Workbook
from openpyxl.chart import Reference, ScatterChart, Series
from openpyxl.styles import Font
from openpyxl.workbook.defined_name import DefinedName

from groundstep.addin.common import write_atomically

from . import layout as lay
from .content import Report
from .render import SeriesRange, column_letter, render
from .sheet_xml import SheetCells

__all__ = ["OpenpyxlWriter", "write_report"]

_BOLD = Font(bold=True)
#: Compression of the package's parts (zlib level; 6 is zlib's default, the usual trade of size for time).
_COMPRESSION = 6
_SHEET_DATA = re.compile(rb"<sheetData\s*/>|<sheetData>.*?</sheetData>", re.S)
_DIMENSION = re.compile(rb'<dimension ref="[^"]*"\s*/>')


class OpenpyxlWriter:
    """`render.SheetWriter` into a new .xlsx package: openpyxl for the package, `SheetCells` for the cells."""

    def __init__(self) -> None:
        self.book = Workbook()
        self._first = True
        self.cells: dict[str, SheetCells] = {}
        self._styles: dict[tuple[str | None, bool], int] = {(None, False): 0}

    def add_sheet(self, name: str) -> None:
        if self._first:  # the new workbook's own empty sheet becomes the first of ours
            self.book.active.title = name
            self._first = False
        else:
            self.book.create_sheet(name)
        self.cells[name] = SheetCells(name, self._style)

    def _style(self, number_format: str | None, bold: bool) -> int:
        """Index of the cell format (number format, bold) in the workbook's style sheet, registered once."""
        key = (number_format if number_format and number_format != lay.GENERAL else None, bool(bold))
        if key not in self._styles:
            # a fresh scratch cell (its own style record) registers the format in openpyxl's style table;
            # the cell itself is never written, since this module writes every <sheetData>
            scratch = self.book.worksheets[0].cell(row=1, column=len(self._styles))
            scratch.number_format = key[0] or lay.GENERAL
            scratch.font = _BOLD if key[1] else Font()
            self._styles[key] = scratch.style_id
        return self._styles[key]

    def write_cells(self, sheet: str, row: int, column: int, values: Sequence[Sequence[Any]], number_format, bold) -> None:
        target = self.cells[sheet]
        if len(values) > 1 and not bold and all(len(line) == 1 for line in values):
            target.write_column(row, column, [line[0] for line in values], number_format)
        else:
            target.write(row, column, values, number_format, bold)

    def save(self, target: str | os.PathLike[str] | Any) -> None:
        """Write the package to `target` (a path or a binary file): openpyxl's parts, each sheet's cells spliced in."""
        package = io.BytesIO()
        self.book.save(package)  # no cells of ours: the parts openpyxl writes are small
        parts = {ws.path[1:]: self.cells[ws.title] for ws in self.book.worksheets}
        with zipfile.ZipFile(package) as source, zipfile.ZipFile(
            target, "w", zipfile.ZIP_DEFLATED, compresslevel=_COMPRESSION
        ) as out:
            for item in source.infolist():
                data = source.read(item)
                cells = parts.get(item.filename)
                if cells is None:
                    out.writestr(item.filename, data)
                    continue
                head, tail = _split_sheet(data, item.filename)
                head = _DIMENSION.sub(f'<dimension ref="{cells.dimension()}"/>'.encode(), head, count=1)
                with out.open(item.filename, "w") as stream:
                    stream.write(head)
                    for piece in cells.xml():
                        stream.write(piece.encode("utf-8"))
                    stream.write(tail)

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
    return write_atomically(path, writer.save, force=force)


def _split_sheet(data: bytes, name: str) -> tuple[bytes, bytes]:
    """A worksheet part openpyxl wrote, cut around its ``<sheetData>`` element."""
    match = _SHEET_DATA.search(data)
    if match is None:  # openpyxl always writes the element; a changed openpyxl must not pass silently
        raise RuntimeError(f"{name} as written by openpyxl has no <sheetData> element")
    return data[: match.start()], data[match.end() :]
