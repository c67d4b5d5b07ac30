"""Cell values of an .xlsx workbook read by a direct scan of its sheet XML (ECMA-376 Part 1, §18.3.1).

``groundstep fill`` reads a long acceleration column from an input
workbook. openpyxl's normal mode builds a cell object for every cell of every
sheet (about 20 us a cell, 1.7 s for a 40,000-sample record beside its time
column); this module scans only the sheets asked for and keeps plain values.
openpyxl still reads the package in its read-only mode, which parses no
cells: the sheet list (worksheets and chart sheets), defined names of the
workbook and of each sheet, the shared-string table, the styles (which cell
formats are dates) and the 1904 date flag.

The scan gives each cell the value openpyxl's ``data_only`` reading gives:

- ``t="n"`` (or no ``t``): an int when the text has no ``.``, ``e`` or
  ``E``, else a float; under a date format, a date (openpyxl's own
  conversion is called, so the 1900 leap-year rule and the 1904 flag are
  its);
- ``t="s"``: the shared string; ``t="str"`` (a formula's text result) and
  ``t="e"`` (an error such as ``#N/A``): the text; ``t="b"``: a Boolean;
- an empty ``<v>`` or no ``<v>`` (a formula never calculated): None.

Anything else (inline strings, ``t="d"``, entity references, carriage
returns, whitespace between elements, an unfamiliar attribute order) is
handed cell by cell to openpyxl's own cell parser on that one element,
parsed with defusedxml; a sheet the scan cannot follow at all (cells without
a reference, namespace prefixes, another encoding, a DOCTYPE) is parsed whole
by openpyxl's sheet parser. Either way the values are openpyxl's; only the
common case is faster. Garbage collection is paused during a scan: the
values are plain floats and strings with no cycles, and the collector would
otherwise walk the growing dictionary many times.
"""

from __future__ import annotations

import gc
import io
import re
import zipfile
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

__all__ = ["SheetValues", "WorkbookValues", "open_workbook"]

#: Namespace of SpreadsheetML's main elements (ECMA-376 transitional), the default namespace of a sheet part.
_MAIN = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
#: A cell as Excel, LibreOffice and openpyxl write it: reference first, then style and type, in that order;
#: a plain value (no markup, entity reference or carriage return in it) is caught by the pattern itself.
_CELL = re.compile(
    r'<c r="([A-Z]{1,3})([0-9]+)"(?: s="([0-9]+)")?(?: t="([a-zA-Z]+)")?(?:/>|><v>([^<&\r]*)</v></c>|>(.*?)</c>)', re.S
)
#: Any cell element, whatever its attributes (to count the cells `_CELL` must have matched).
_ANY_CELL = re.compile(r"<c[\s/>]")
#: A formula cell's content: the formula, then the value.
_FORMULA_VALUE = re.compile(r"<f\b[^>]*?(?:/>|>[^<]*</f>)<v>([^<&\r]*)</v>")
#: An element with a namespace prefix (the scan reads only the default namespace's elements).
_PREFIXED = re.compile(r"</?[A-Za-z_][\w.-]*:")
_COLUMNS: dict[str, int] = {}


def _column(letters: str) -> int:
    """1-based index of column `letters` (``A`` -> 1, ``AB`` -> 28): openpyxl's, kept in `_COLUMNS` for the scan."""
    index = _COLUMNS.get(letters)
    if index is None:
        from openpyxl.utils.cell import column_index_from_string

        index = _COLUMNS[letters] = int(column_index_from_string(letters))
    return index


@dataclass(slots=True)
class SheetValues:
    """The values of one worksheet: {(row, column): value}, 1-based, and the extent of its cells.

    `max_row` and `max_column` are those of every ``<c>`` element in the
    file, with or without a value (as openpyxl counts them); 1 for a sheet
    without cells.
    """

    title: str
    values: dict[tuple[int, int], Any] = field(default_factory=dict)
    max_row: int = 1
    max_column: int = 1

    def column(self, column: int, min_row: int, max_row: int) -> list[Any]:
        """The values of one column from `min_row` to `max_row`, top to bottom; None where the file has no value."""
        get = self.values.get
        return [get((row, column)) for row in range(min_row, max_row + 1)]

    def block(self, min_row: int, min_column: int, max_row: int, max_column: int) -> list[list[Any]]:
        """The values of a rectangle as a list of row lists; None where the file has no value."""
        get = self.values.get
        return [[get((row, column)) for column in range(min_column, max_column + 1)]
                for row in range(min_row, max_row + 1)]  # fmt: skip


@dataclass
class WorkbookValues:
    """A workbook read without cells (openpyxl read-only) and its worksheets scanned on demand.

    `book` is openpyxl's read-only workbook (defined names, sheet names,
    chart sheets); `sheet(title)` scans a worksheet once and keeps its values.
    """

    book: Any
    archive: zipfile.ZipFile
    parts: dict[str, str]
    shared_strings: list[str]
    date_formats: frozenset[int]
    timedelta_formats: frozenset[int]
    epoch: Any
    _sheets: dict[str, SheetValues] = field(default_factory=dict)

    @property
    def sheetnames(self) -> list[str]:
        """Every sheet's name (worksheets and chart sheets), in the workbook's order."""
        return list(self.book.sheetnames)

    def is_worksheet(self, title: str) -> bool:
        """True when `title` is a worksheet (a sheet of cells, not a chart sheet)."""
        return title in self.parts

    def sheet(self, title: str) -> SheetValues:
        """The values of worksheet `title`, scanned on first use (KeyError for no such worksheet)."""
        found = self._sheets.get(title)
        if found is None:
            data = self.archive.read(self.parts[title])
            found = scan_sheet(data, title, self.shared_strings, self.date_formats, self._openpyxl_parser)
            self._sheets[title] = found
        return found

    def _openpyxl_parser(self, source: Any) -> Any:
        from openpyxl.worksheet._reader import WorkSheetParser

        return WorkSheetParser(source, self.shared_strings, data_only=True, epoch=self.epoch,
                               date_formats=self.date_formats, timedelta_formats=self.timedelta_formats)  # fmt: skip


def open_workbook(data: bytes) -> WorkbookValues:
    """The workbook in `data` (.xlsx bytes) read without its cells; see `WorkbookValues`.

    Raises
    ------
    Exception
        Whatever openpyxl raises for a file it cannot read as a workbook.
    """
    from openpyxl.reader.excel import ExcelReader

    reader = ExcelReader(io.BytesIO(data), read_only=True, data_only=True, keep_vba=False, keep_links=False)
    reader.read()
    book = reader.wb
    parts = {}
    for sheet, relation in reader.parser.find_sheets():
        if "chartsheet" not in relation.Type and relation.target in reader.valid_files:
            parts[sheet.name] = relation.target
    return WorkbookValues(
        book=book, archive=reader.archive, parts=parts, shared_strings=reader.shared_strings,
        date_formats=frozenset(book._date_formats), timedelta_formats=frozenset(book._timedelta_formats),
        epoch=book.epoch,
    )  # fmt: skip


def scan_sheet(
    data: bytes,
    title: str,
    strings: list[str],
    dates: frozenset[int],
    openpyxl_parser: Callable[[Any], Any],
) -> SheetValues:
    """The values of the worksheet part `data`.

    `strings` is the shared-string table, `dates` the cell-format indices
    openpyxl treats as dates; `openpyxl_parser(source)` is openpyxl's sheet
    parser over `source` (a file object), used for single cells and for
    sheets the scan cannot follow.
    """
    enabled = gc.isenabled()
    gc.disable()
    try:
        try:
            text = data.decode("utf-8")
        except UnicodeDecodeError:
            text = ""
        try:
            found = _scan(text, title, strings, dates, openpyxl_parser) if text else None
        except Exception:  # noqa: BLE001 - any surprise in the scan: openpyxl's parser reads the part and says what is wrong
            found = None
        return found if found is not None else _parse_whole(data, title, openpyxl_parser)
    finally:
        if enabled:
            gc.enable()


def _scan(text: str, title: str, strings: list[str], dates: frozenset[int], openpyxl_parser) -> SheetValues | None:
    """The fast scan of a decoded sheet part; None when the part must go through openpyxl's parser whole."""
    head = text[:400].lstrip("\ufeff")
    declaration = re.match(r"<\?xml[^>]*encoding=[\"']([^\"']+)", head)
    if declaration and declaration.group(1).lower().replace("-", "") != "utf8":
        return None
    start = text.find("<sheetData>")
    end = text.find("</sheetData>", start)
    if start < 0 or end < 0:
        return None if "<sheetData/>" not in text and "<sheetData />" not in text else SheetValues(title)
    body = text[start + len("<sheetData>") : end]
    if (f'xmlns="{_MAIN}"' not in text[:start] or "<!" in text or text.find("<?", 2) >= 0
            or _PREFIXED.search(body)):  # fmt: skip
        return None  # a DOCTYPE, comment or CDATA, a processing instruction, prefixed elements
    sheet = SheetValues(title)
    values = sheet.values
    columns = _COLUMNS
    max_row = max_column = count = 0
    for letters, digits, style, kind, plain, inner in _CELL.findall(body):
        count += 1
        row, column = int(digits), columns.get(letters) or _column(letters)
        if row > max_row:
            max_row = row
        if column > max_column:
            max_column = column
        if inner:
            found = _FORMULA_VALUE.fullmatch(inner)
            if found is None:
                values[(row, column)] = _one_cell(letters + digits, style, kind, ">" + inner + "</c>", openpyxl_parser)
                continue
            plain = found.group(1)
        if not plain:
            values[(row, column)] = None  # no value, or an empty one: openpyxl's `findtext(...) or None`
        elif not kind or kind == "n":
            if style and int(style) in dates:
                values[(row, column)] = _one_cell(letters + digits, style, kind, f"><v>{plain}</v></c>", openpyxl_parser)
            elif "." in plain or "E" in plain or "e" in plain:  # openpyxl's `_cast_number`
                values[(row, column)] = float(plain)
            else:
                values[(row, column)] = int(plain)
        elif kind == "s":
            values[(row, column)] = strings[int(plain)]
        elif kind == "str" or kind == "e":
            values[(row, column)] = plain
        elif kind == "b":
            values[(row, column)] = bool(int(plain))
        else:
            values[(row, column)] = _one_cell(letters + digits, style, kind, f"><v>{plain}</v></c>", openpyxl_parser)
    if count != len(_ANY_CELL.findall(body)):
        return None  # a cell written another way (attribute order, no reference): openpyxl's parser reads it
    sheet.max_row, sheet.max_column = max(max_row, 1), max(max_column, 1)
    return sheet


def _one_cell(reference: str, style: str, kind: str, rest: str, openpyxl_parser) -> Any:
    """The value openpyxl's cell parser gives one ``<c>`` element (parsed with defusedxml)."""
    from defusedxml.ElementTree import fromstring

    attributes = f' r="{reference}"' + (f' s="{style}"' if style else "") + (f' t="{kind}"' if kind else "")
    element = fromstring(f'<c xmlns="{_MAIN}"{attributes}{rest}')
    return openpyxl_parser(None).parse_cell(element)["value"]


def _parse_whole(data: bytes, title: str, openpyxl_parser) -> SheetValues:
    """Every cell of the part through openpyxl's sheet parser (defusedxml underneath when installed)."""
    sheet = SheetValues(title)
    max_row = max_column = 0
    for _, cells in openpyxl_parser(io.BytesIO(data)).parse():
        for cell in cells:
            row, column = cell["row"], cell["column"]
            max_row, max_column = max(max_row, row), max(max_column, column)
            sheet.values[(row, column)] = cell["value"]
    sheet.max_row, sheet.max_column = max(max_row, 1), max(max_column, 1)
    return sheet
