"""The ``fill_results`` macro: fill the result sheets of the open Excel workbook (xlwings).

``RunPython("import groundstep.addin.live as m; m.fill_results()")`` or the
xlwings ``@xw.sub`` button runs it: it reads the record and settings from the
workbook's named input cells (``package.inputs``), computes the report
(``result.content``) and writes the result sheets through
``result.live_writer.XlwingsWriter``, from the same layout as the file writer.
"""

from __future__ import annotations

from typing import Any

import xlwings as xw

from groundstep.addin.package.inputs import settings_from_cells
from groundstep.addin.package.names import lookup_names
from groundstep.addin.result.content import Report, ReportSettings, build_report
from groundstep.addin.result.live_writer import XlwingsWriter
from groundstep.addin.result.render import render

__all__ = ["XlwingsWriter", "fill_open_book", "fill_results"]


def fill_open_book(book: Any, base: ReportSettings | None = None, *, command: str = "live fill (xlwings)") -> Report:
    """Read inputs from `book`'s named cells, compute, write the result sheets into `book`.

    Parameters
    ----------
    book : xlwings.Book (or an object with the same members)
        The open workbook; its input cells are found by the names in
        ``package.names.INPUTS``.
    base : ReportSettings, optional
        Settings where the workbook is silent.

    Returns
    -------
    Report
        What was written.
    """
    available = {n.name.split("!")[-1]: n for n in book.names}

    def get(key: str) -> Any:
        for name in lookup_names(key):
            if name in available:
                return available[name].refers_to_range.options(ndim=2).value
        return None

    label = f"{book.name} (named input cells)"
    record, settings = settings_from_cells(get, source=label, base=base)
    report = build_report(record, settings, command=command, source=label)
    titles = {sheet.name: sheet.title for sheet in report.layout.sheets}
    render(report.layout, report.content, XlwingsWriter(book, titles))
    return report


@xw.sub
def fill_results() -> None:
    """Fill the result sheets of the calling workbook from its named input cells (xlwings macro)."""
    fill_open_book(xw.Book.caller())
