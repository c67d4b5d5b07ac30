"""The one layout description of the result workbook (data only).

Sheets, blocks, columns, named cells, number formats, formulas and charts
are described by the frozen dataclasses here; ``sheets.py`` uses them to
describe the result workbook itself. Both writers (``offline.py`` with
openpyxl, ``live.py`` with xlwings) and the checker (``verify.py``) walk the
same description through ``render.render``; nothing here imports a
spreadsheet library or computes a result.

Positions are 1-based (row, column). Every field value cell and every table
data column gets a workbook-level defined name ``NAME_PREFIX + key``.

Formula templates use ``str.format`` fields: ``{r}`` this row, ``{q}`` the
row above, ``{rr}`` the matching row of the source table, a column key of the
same table (its column letter), a field key of any sheet (its absolute
address without sheet name, e.g. ``$B$5``), or ``{TABLE.COLUMN}`` (the
absolute range of a table column's data, e.g. ``$J$9:$J$2009``).
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = [
    "FIXED3",
    "FIXED4",
    "FORMAT_ID",
    "GENERAL",
    "INTEGER",
    "NAME_PREFIX",
    "SCIENTIFIC",
    "TEXT",
    "Chart",
    "Column",
    "Field",
    "Fields",
    "FormulaColumn",
    "FormulaTable",
    "PageSetup",
    "Sheet",
    "Table",
    "WorkbookLayout",
]

#: Stored on the Audit sheet; ``verify`` reads a workbook only when it finds this.
FORMAT_ID = "groundstep-result-workbook/1"
#: Prefix of every defined name the result workbook carries.
NAME_PREFIX = "gs_"

# number formats (spreadsheet format codes, understood by Excel and LibreOffice)
GENERAL = "General"
TEXT = "@"
FIXED3 = "0.000"
FIXED4 = "0.0000"
SCIENTIFIC = "0.00000E+00"
INTEGER = "0"


@dataclass(frozen=True, slots=True)
class Field:
    """One labelled value: label in the block's first column, value beside it, unit after, then `source`.

    `source` (optional) names the definition or paper the value follows; it
    is written as text after the unit.
    """

    key: str
    label: str
    unit: str = ""
    number_format: str = GENERAL
    source: str = ""


@dataclass(frozen=True, slots=True)
class Fields:
    """A vertical list of fields under a bold title.

    `checked` blocks hold results that ``verify`` recomputes; `formulas`
    maps a field key to a formula template written instead of a value.
    """

    key: str
    title: str
    row: int
    column: int
    fields: tuple[Field, ...]
    checked: bool = False
    formulas: tuple[tuple[str, str], ...] = ()


@dataclass(frozen=True, slots=True)
class Column:
    """One column of a value table. The header shows ``header [unit]``."""

    key: str
    header: str
    unit: str = ""
    number_format: str = GENERAL
    width: float = 14.0


@dataclass(frozen=True, slots=True)
class Table:
    """A table of values: title row, header row, then `rows` data rows."""

    key: str
    title: str
    row: int
    column: int
    columns: tuple[Column, ...]
    rows: int
    checked: bool = False


@dataclass(frozen=True, slots=True)
class FormulaColumn:
    """A column of formulas: `first` in the first data row, `step` below it."""

    key: str
    header: str
    first: str
    step: str
    unit: str = ""
    number_format: str = GENERAL
    width: float = 14.0


@dataclass(frozen=True, slots=True)
class FormulaTable:
    """A table of formulas; ``{rr}`` refers to the same data row of table `source` on sheet `source_sheet`.

    `source_start` data rows of `source` are skipped first: the table's first
    row then faces the source's row ``source_start + 1`` (a window of it).
    `checked`: ``verify`` compares every formula's text with the layout's.
    """

    key: str
    title: str
    row: int
    column: int
    columns: tuple[FormulaColumn, ...]
    rows: int
    source_sheet: str = ""
    source: str = ""
    checked: bool = True
    source_start: int = 0


@dataclass(frozen=True, slots=True)
class Chart:
    """A native scatter chart (straight lines, no markers) of table columns.

    Each entry of `series` is (y column key, series title); all share the
    `x` column of `table`. `log_x` and `log_y` put that axis on a base-10
    logarithmic scale (its values must then be > 0).
    """

    key: str
    title: str
    table: str
    x: str
    series: tuple[tuple[str, str], ...]
    x_title: str
    y_title: str
    row: int
    column: int
    log_x: bool = False
    skip_rows: int = 0
    log_y: bool = False
    width_cm: float = 16.0
    height_cm: float = 8.5


@dataclass(frozen=True, slots=True)
class Sheet:
    """One worksheet: title in A1, `note` in A2, its blocks in writing order and its charts."""

    name: str
    title: str
    blocks: tuple[Fields | Table | FormulaTable, ...]
    charts: tuple[Chart, ...] = ()
    note: str = ""


@dataclass(frozen=True, slots=True)
class PageSetup:
    """How a sheet prints: orientation, fit to the page width, repeated title rows, frozen panes.

    `title_rows` is (first, last) sheet row repeated at the top of every
    printed page; `freeze` is the (row, column) of the first cell that
    scrolls. `fit_height` also fits the whole sheet on one page tall (the
    Summary). Fitting to the width scales the sheet to the paper, so it holds
    for A4 and Letter alike.
    """

    landscape: bool = False
    fit_width: bool = True
    fit_height: bool = False
    title_rows: tuple[int, int] | None = None
    freeze: tuple[int, int] | None = None


@dataclass(frozen=True, slots=True)
class WorkbookLayout:
    """All sheets, in order."""

    sheets: tuple[Sheet, ...]

    def sheet(self, name: str) -> Sheet:
        """The sheet called `name` (KeyError naming the sheets otherwise)."""
        for sheet in self.sheets:
            if sheet.name == name:
                return sheet
        raise KeyError(f"no sheet {name!r}; the layout has {[s.name for s in self.sheets]}")
