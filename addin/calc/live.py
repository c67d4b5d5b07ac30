"""Fill result sheets into an open Calc document over UNO, from the same layout as the file writer.

`CalcWriter` implements ``result.render.SheetWriter`` for a Calc document
(a ``com.sun.star.sheet.SpreadsheetDocument`` reached over UNO): each block
of cells is one ``setDataArray`` (values) or ``setFormulaArray`` (formulas)
call, never a cell at a time (over a loopback connection one call costs
about as much as a few cells). `fill_document` is the ``fill_results``
macro's job for Calc: the named input cells of the open document
(``NamedRanges``, read with one ``getDataArray`` each, blanks turned into
``None`` as xlwings passes them), the report, the result sheets through
`CalcWriter`. The result sheets go into `target` (default: the document
itself); the calculation-package template has sheets of its own named
``Record`` and ``Peaks``, as the result workbook does, so a filled template
is filled into a new document (``groundstep calc-extension fill``).

The layout's formulas are written in Excel's A1 syntax (``Record!$B$9``,
``,`` between arguments); `calc_formula` rewrites them into the syntax
Calc's API takes (``$Record.$B$9``, ``;``).
"""

from __future__ import annotations

import os
import re
import tempfile
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from groundstep.addin.common import as_text, write_atomically
from groundstep.addin.package.inputs import settings_from_cells
from groundstep.addin.package.names import lookup_names
from groundstep.addin.result import layout as lay
from groundstep.addin.result.content import Report, ReportSettings, build_report
from groundstep.addin.result.render import Formula, SeriesRange, column_letter, render

__all__ = ["STORE_FILTERS", "CalcWriter", "calc_formula", "excel_cells", "fill_document", "fill_file", "named_cells"]

#: LibreOffice export filter of each result file type `fill_file` writes.
STORE_FILTERS = {".ods": "calc8", ".xlsx": "Calc Office Open XML"}

_TOKENS = re.compile(r'"(?:[^"]|"")*"|\'(?:[^\']|\'\')*\'!|[A-Za-z_][A-Za-z0-9_.]*!|,|[^"\',A-Za-z_]+|[A-Za-z_][A-Za-z0-9_.]*')
_BOLD = 150.0  # com.sun.star.awt.FontWeight.BOLD
_WIDTH_PER_CHARACTER = 190  # 1/100 mm per character of the default font (about 1.9 mm)
_CHART_UNIT = 1000  # 1/100 mm per cm


def calc_formula(formula: str) -> str:
    """An Excel-syntax formula in Calc's API syntax: ``Sheet!A1`` -> ``$Sheet.A1``, ``,`` -> ``;``."""
    out = []
    for token in _TOKENS.findall(formula):
        if token == ",":
            out.append(";")
        elif token.endswith("!") and not token.startswith('"'):
            out.append("$" + token[:-1] + ".")
        else:
            out.append(token)
    return "".join(out)


def excel_cells(rows: Sequence[Sequence[Any]]) -> list[list[Any]]:
    """Calc's ``getDataArray`` rows as xlwings passes a range (``ndim=2``): blank ``''`` -> None.

    Example
    -------
    >>> excel_cells(((0.01, ""), ("g", 2.0)))
    [[0.01, None], ['g', 2.0]]
    """
    return [[None if value == "" else value for value in row] for row in rows]


def named_cells(document: Any, name: str) -> list[list[Any]] | None:
    """The cells of `document`'s named range `name` as xlwings passes them, or None without that name.

    Rows beyond the sheet's used area are blank; they are left out (as
    ``package.inputs.clip_reference`` does for a file), so a 200,001-row
    record range costs what the filled rows cost. A name whose reference
    is broken (``#REF!``) reads as missing.
    """
    names = document.NamedRanges
    if not names.hasByName(name):
        return None
    cells = names.getByName(name).getReferredCells()
    if cells is None:
        return None
    address = cells.getRangeAddress()
    cursor = document.Sheets.getByIndex(address.Sheet).createCursor()
    cursor.gotoEndOfUsedArea(False)
    used = cursor.getRangeAddress()
    last_row, last_column = min(address.EndRow, used.EndRow), min(address.EndColumn, used.EndColumn)
    if last_row < address.StartRow or last_column < address.StartColumn:  # wholly outside the used area
        width = address.EndColumn - address.StartColumn + 1
        return [[None] * width]
    if (last_row, last_column) != (address.EndRow, address.EndColumn):
        cells = cells.getCellRangeByPosition(0, 0, last_column - address.StartColumn, last_row - address.StartRow)
    return excel_cells(cells.getDataArray())


def fill_document(
    document: Any, base: ReportSettings | None = None, target: Any = None, *, command: str = "live fill (Calc)"
) -> Report:
    """Read inputs from `document`'s named cells, compute, write the result sheets into `target`.

    Parameters
    ----------
    document : com.sun.star.sheet.SpreadsheetDocument
        The open Calc document; its input cells are found by the names in
        ``package.names.INPUTS`` (the template's, or ``gs_in_*`` aliases).
    base : ReportSettings, optional
        Settings where the document is silent.
    target : com.sun.star.sheet.SpreadsheetDocument, optional
        Where the result sheets go; default `document` itself.
    command : str
        What the Audit sheet records as the command.

    Returns
    -------
    Report
        What was written.

    Raises
    ------
    package.inputs.InputError, worksheet.cells.CellError
        Missing or bad input cells (the message names the cell).
    ValueError
        `target` has a sheet of a result sheet's name that groundstep did
        not write.
    """

    def get(key: str) -> Any:
        for name in lookup_names(key):
            found = named_cells(document, name)
            if found is not None:
                return found
        return None

    title = document.getTitle() if hasattr(document, "getTitle") else "Calc document"
    label = f"{title} (named input cells)"
    record, settings = settings_from_cells(get, source=label, base=base)
    report = build_report(record, settings, command=command, source=label)
    titles = {sheet.name: sheet.title for sheet in report.layout.sheets}
    render(report.layout, report.content, CalcWriter(document if target is None else target, titles))
    return report


def fill_file(
    source: str | os.PathLike[str], out: str | os.PathLike[str], *, force: bool = False, command: str = ""
) -> Report:
    """Open `source` in a private headless LibreOffice, fill its results into a new document, store it as `out`.

    `source` (a filled calculation-package template, .xlsx or .ods) is
    opened read-only and never stored; the result sheets go into a new
    document (see the module notes), recalculated and stored as `out`
    (atomically) in the format its suffix names (`STORE_FILTERS`).

    Raises
    ------
    ValueError
        `out` has another suffix, or names `source`; missing or bad input cells.
    FileExistsError
        `out` exists and `force` is false.
    office.OfficeError
        LibreOffice could not be started or could not open `source`.
    """
    from .office import Office, OfficeError, import_uno, property_values

    source, out = Path(source), Path(out)
    suffix = out.suffix.lower()
    if suffix not in STORE_FILTERS:
        raise ValueError(f"`--out` {str(out)!r} must end in {' or '.join(STORE_FILTERS)}; choose one of them")
    if out.resolve() == source.resolve():
        raise ValueError("`--out` names the input document; the input is never overwritten: choose another file")
    if not source.is_file():
        raise FileNotFoundError(f"input document {str(source)!r} does not exist or is not a file")
    if out.exists() and not force:
        raise FileExistsError(f"output {str(out)!r} exists; pass --force to replace it")
    uno = import_uno()
    with tempfile.TemporaryDirectory(prefix="groundstep-calc-fill-") as work, Office(Path(work) / "profile") as office:
        url = uno.systemPathToFileUrl(str(source.resolve()))
        document = office.desktop.loadComponentFromURL(url, "_blank", 0, property_values(Hidden=True, ReadOnly=True))
        if document is None or not hasattr(document, "NamedRanges"):
            raise OfficeError(f"LibreOffice could not open {str(source)!r} as a spreadsheet")
        result = office.new_spreadsheet()
        report = fill_document(document, target=result, command=command or f"calc-extension fill {source.name}")
        sheets = result.Sheets
        first = sheets.getByIndex(0)  # the new document's own empty sheet
        if first.Name not in {sheet.name for sheet in report.layout.sheets}:
            sheets.removeByName(first.Name)
        result.calculateAll()
        write_atomically(out, lambda path: Office.save(result, path, STORE_FILTERS[suffix]), force=force)
        result.close(True)
        document.close(True)
    return report


class CalcWriter:
    """`render.SheetWriter` into an open Calc document over UNO.

    Result sheets written before by groundstep (their A1 holds the layout's
    sheet title) are replaced; any other sheet of the same name stops the
    write with an error naming it.
    """

    def __init__(self, document: Any, titles: dict[str, str]) -> None:
        self.document = document
        self.titles = titles

    def _sheet(self, name: str) -> Any:
        return self.document.Sheets.getByName(name)

    def add_sheet(self, name: str) -> None:
        sheets = self.document.Sheets
        if sheets.hasByName(name):
            if sheets.getByName(name).getCellByPosition(0, 0).getString() != self.titles.get(name):
                raise ValueError(
                    f"the document already has a sheet {name!r} that groundstep did not write; "
                    "rename it so the result sheets can be added"
                )
            sheets.removeByName(name)
        sheets.insertNewByName(name, sheets.getCount())

    def write_cells(self, sheet: str, row: int, column: int, values: Sequence[Sequence[Any]], number_format, bold) -> None:
        rows = [list(line) for line in values]
        target = self._sheet(sheet).getCellRangeByPosition(column - 1, row - 1, column + len(rows[0]) - 2, row + len(rows) - 2)
        if any(isinstance(v, Formula) for line in rows for v in line):  # only the layout's own formulas
            target.setFormulaArray(tuple(tuple(_formula_text(v) for v in line) for line in rows))
        else:
            target.setDataArray(tuple(tuple(_data(v) for v in line) for line in rows))
        if number_format:
            target.NumberFormat = self._format_key(number_format)
        if bold:
            target.CharWeight = _BOLD

    def define_name(self, name: str, sheet: str, reference: str) -> None:
        names = self.document.NamedRanges
        if names.hasByName(name):
            names.removeByName(name)
        origin = self._sheet(sheet).getCellByPosition(0, 0).getCellAddress()
        names.addNewByName(name, f"${_quoted(sheet)}.{reference}", origin, 0)

    def set_column_width(self, sheet: str, column: int, width: float) -> None:
        self._sheet(sheet).Columns.getByIndex(column - 1).Width = int(width * _WIDTH_PER_CHARACTER)

    def add_chart(self, sheet: str, chart: lay.Chart, x: SeriesRange, series) -> None:
        from .office import import_uno

        uno = import_uno()
        target = self._sheet(sheet)
        anchor = target.getCellByPosition(chart.column - 1, chart.row - 1).Position
        frame = uno.createUnoStruct("com.sun.star.awt.Rectangle")
        frame.X, frame.Y = anchor.X, anchor.Y
        frame.Width, frame.Height = int(chart.width_cm * _CHART_UNIT), int(chart.height_cm * _CHART_UNIT)
        ranges = [target.getCellRangeByName(_local(x)).getRangeAddress()]
        ranges += [target.getCellRangeByName(_local(y)).getRangeAddress() for _, y in series]
        charts = target.Charts
        if charts.hasByName(chart.key):
            charts.removeByName(chart.key)
        charts.addNewByName(chart.key, frame, tuple(ranges), False, False)
        document = charts.getByName(chart.key).getEmbeddedObject()
        document.setDiagram(document.createInstance("com.sun.star.chart.XYDiagram"))
        document.HasMainTitle = True
        document.Title.String = chart.title
        if chart.log_x:
            document.getDiagram().getXAxis().Logarithmic = True

    def set_page(self, sheet: str, page: lay.PageSetup) -> None:
        """A page style of the sheet's own (Calc shares page styles between sheets), title rows, frozen panes."""
        target = self._sheet(sheet)
        styles = self.document.StyleFamilies.getByName("PageStyles")
        name = f"groundstep {sheet}"
        if not styles.hasByName(name):
            styles.insertByName(name, self.document.createInstance("com.sun.star.style.PageStyle"))
        style = styles.getByName(name)
        if page.landscape and not style.IsLandscape:  # swap the paper's sides with the orientation
            style.IsLandscape, style.Width, style.Height = True, style.Height, style.Width
        if page.fit_width:
            style.ScaleToPagesX, style.ScaleToPagesY = 1, 1 if page.fit_height else 0
        target.PageStyle = name
        if page.title_rows:
            from .office import import_uno

            rows = import_uno().createUnoStruct("com.sun.star.table.CellRangeAddress")
            rows.Sheet = target.getCellByPosition(0, 0).getCellAddress().Sheet
            rows.StartRow, rows.EndRow = page.title_rows[0] - 1, page.title_rows[1] - 1
            target.setPrintTitleRows(True)
            target.setTitleRows(rows)
        if page.freeze:
            controller = self.document.getCurrentController()
            if controller is not None:  # a document loaded without a view has no panes to freeze
                controller.setActiveSheet(target)
                controller.freezeAtPosition(page.freeze[1] - 1, page.freeze[0] - 1)

    def _format_key(self, number_format: str) -> int:
        from .office import import_uno

        locale = import_uno().createUnoStruct("com.sun.star.lang.Locale")
        formats = self.document.NumberFormats
        key = formats.queryKey(number_format, locale, False)
        return key if key >= 0 else formats.addNew(number_format, locale)


def _formula_text(value: Any) -> str:
    if value is None:
        return ""
    if isinstance(value, str):
        # text beside a formula goes through the formula parser too: quote-prefix it so it stays text
        return calc_formula(value) if isinstance(value, Formula) else str(as_text(value))
    return repr(float(value)) if not isinstance(value, bool) else ("1" if value else "0")


def _data(value: Any) -> Any:
    if value is None:
        return ""
    if isinstance(value, str):
        return value
    return float(value)


def _quoted(sheet: str) -> str:
    return sheet if re.fullmatch(r"[A-Za-z_][A-Za-z0-9_]*", sheet) else "'" + sheet.replace("'", "''") + "'"


def _local(series: SeriesRange) -> str:
    letter = column_letter(series.column)
    return f"{letter}{series.first_row}:{letter}{series.last_row}"
