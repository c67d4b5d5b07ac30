"""Walk the layout and hand every cell, name and chart to a writer.

The writer interface (`SheetWriter`) is small on purpose so that three
implementations stay simple: ``offline.OpenpyxlWriter`` (a file),
``live.XlwingsWriter`` (the open workbook in Excel) and `CellRecorder` (a
dictionary, used by ``verify`` and by tests).
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from dataclasses import dataclass
from types import SimpleNamespace
from typing import Any, Protocol

from . import layout as lay
from . import printing

__all__ = ["CellRecorder", "Formula", "SeriesRange", "SheetWriter", "block_cells", "column_letter", "render"]


class Formula(str):
    """A formula the layout itself writes (``=MAX(...)``); every other text a writer receives is text.

    Writers write a `Formula` as a formula and any plain ``str`` as text,
    whatever its first character, so text copied from inputs (titles,
    labels, sheet and file names) never becomes a formula.
    """

    __slots__ = ()


@dataclass(frozen=True, slots=True)
class SeriesRange:
    """A column of data on a sheet: rows first_row..last_row (1-based, inclusive)."""

    sheet: str
    column: int
    first_row: int
    last_row: int

    def address(self) -> str:
        """``Sheet!$B$9:$B$2009``."""
        letter = column_letter(self.column)
        return f"{self.sheet}!${letter}${self.first_row}:${letter}${self.last_row}"


class SheetWriter(Protocol):
    """What a result-workbook writer must do; every position is 1-based."""

    def add_sheet(self, name: str) -> None:
        """Create an empty worksheet called `name` after the others."""

    def write_cells(
        self, sheet: str, row: int, column: int, values: Sequence[Sequence[Any]], number_format: str | None, bold: bool
    ) -> None:
        """Write a rectangle of values (rows of cells); a `Formula` is a formula, any other ``str`` is text."""

    def define_name(self, name: str, sheet: str, reference: str) -> None:
        """Workbook-level name for ``sheet!reference`` (reference like ``$B$5`` or ``$B$9:$B$20``)."""

    def set_column_width(self, sheet: str, column: int, width: float) -> None:
        """Width of a column in characters."""

    def add_chart(self, sheet: str, chart: lay.Chart, x: SeriesRange, series: Sequence[tuple[str, SeriesRange]]) -> None:
        """A scatter chart (lines, no markers) of each (title, y range) against `x`."""

    def set_page(self, sheet: str, page: lay.PageSetup) -> None:
        """Print set-up: orientation, fit to width (and height), repeated title rows, frozen panes."""


def column_letter(column: int) -> str:
    """1 -> A, 27 -> AA."""
    letters = ""
    while column > 0:
        column, remainder = divmod(column - 1, 26)
        letters = chr(65 + remainder) + letters
    return letters


def render(workbook: lay.WorkbookLayout, content: dict[str, dict[str, Any]], writer: SheetWriter) -> None:
    """Write every sheet of `workbook` with the values in `content` through `writer`."""
    addresses = formula_fields(workbook)
    for sheet in workbook.sheets:
        writer.add_sheet(sheet.name)
        writer.write_cells(sheet.name, 1, 1, [[sheet.title]], None, True)
        if sheet.note:
            writer.write_cells(sheet.name, 2, 1, [[sheet.note]], None, True)
        for block in sheet.blocks:
            render_block(sheet, block, content.get(block.key, {}), writer, addresses)
            _define_names(sheet, block, writer)
        for chart in sheet.charts:
            table = next(b for b in sheet.blocks if b.key == chart.table)
            x = _column_range(sheet.name, table, chart.x, chart.skip_rows)
            series = [(title, _column_range(sheet.name, table, key, chart.skip_rows)) for key, title in chart.series]
            writer.add_chart(sheet.name, chart, x, series)
        writer.set_page(sheet.name, printing.page_setup(sheet, summary=sheet is workbook.sheets[0]))


def render_block(sheet: lay.Sheet, block, values: dict[str, Any], writer: SheetWriter, addresses: dict[str, Any]) -> None:
    """Write one block (fields, value table or formula table) of `sheet`."""
    name = sheet.name
    writer.write_cells(name, block.row, block.column, [[block.title]], None, True)
    if isinstance(block, lay.Fields):
        formulas = dict(block.formulas)
        writer.set_column_width(name, block.column, 46.0)
        writer.set_column_width(name, block.column + 1, 22.0)
        for offset, item in enumerate(block.fields, start=1):
            row = block.row + offset
            writer.write_cells(name, row, block.column, [[item.label]], None, False)
            if item.key in formulas:
                value = Formula(formulas[item.key].format_map(addresses))
            else:
                value = _safe(values.get(item.key))
            writer.write_cells(name, row, block.column + 1, [[value]], item.number_format, False)
            if item.unit:
                writer.write_cells(name, row, block.column + 2, [[item.unit]], None, False)
            if item.source:
                writer.write_cells(name, row, block.column + 3, [[item.source]], None, False)
        return
    header_row = block.row + 1
    first = header_row + 1
    for index, column in enumerate(block.columns):
        col = block.column + index
        header = f"{column.header} [{column.unit}]" if column.unit else column.header
        writer.write_cells(name, header_row, col, [[header]], None, True)
        writer.set_column_width(name, col, printing.column_width(column))
        if block.rows == 0:
            continue
        if isinstance(block, lay.FormulaTable):
            letters = {c.key: column_letter(block.column + i) for i, c in enumerate(block.columns)}
            offset = addresses[_FIRST_ROWS][block.source] - first + block.source_start if block.source else 0
            cells = []
            for row in range(first, first + block.rows):
                template = column.first if row == first else column.step
                cells.append([Formula(template.format_map({**addresses, **letters, "r": row, "q": row - 1, "rr": row + offset}))])
        else:
            data = values.get(column.key, [])
            if len(data) != block.rows:
                raise ValueError(f"block {block.key!r} column {column.key!r}: {len(data)} values for {block.rows} rows")
            cells = [[_safe(v)] for v in data]
        writer.write_cells(name, first, col, cells, printing.number_format(column.number_format, data) if not
                           isinstance(block, lay.FormulaTable) else column.number_format, False)  # fmt: skip


def block_cells(sheet: lay.Sheet, block) -> list[tuple[int, int]]:
    """Every (row, column) of `block` that holds a value or formula (titles, labels and headers excluded)."""
    if isinstance(block, lay.Fields):
        return [(block.row + i, block.column + 1) for i in range(1, len(block.fields) + 1)]
    first = block.row + 2
    return [(r, block.column + c) for c in range(len(block.columns)) for r in range(first, first + block.rows)]


#: Key of `formula_fields`' entry that maps each table to its first data row (not a formula field).
_FIRST_ROWS = "__first_rows__"


def formula_fields(workbook: lay.WorkbookLayout) -> dict[str, Any]:
    """Formula placeholders: field key -> ``$B$5``; table key -> namespace of column ranges."""
    addresses: dict[str, Any] = {_FIRST_ROWS: {}}
    for sheet in workbook.sheets:
        for block in sheet.blocks:
            if isinstance(block, lay.Fields):
                letter = column_letter(block.column + 1)
                for offset, item in enumerate(block.fields, start=1):
                    addresses[item.key] = f"${letter}${block.row + offset}"
            else:
                ranges = {
                    c.key: _column_range(sheet.name, block, c.key).address().split("!", 1)[1] for c in block.columns
                }
                addresses[block.key] = SimpleNamespace(**ranges)
                addresses[_FIRST_ROWS][block.key] = block.row + 2
    return addresses


def _define_names(sheet: lay.Sheet, block, writer: SheetWriter) -> None:
    if isinstance(block, lay.Fields):
        letter = column_letter(block.column + 1)
        for offset, item in enumerate(block.fields, start=1):
            writer.define_name(lay.NAME_PREFIX + item.key, sheet.name, f"${letter}${block.row + offset}")
    elif block.rows > 0:
        for column in block.columns:
            reference = _column_range(sheet.name, block, column.key).address().split("!", 1)[1]
            writer.define_name(f"{lay.NAME_PREFIX}{block.key}_{column.key}", sheet.name, reference)


def _column_range(sheet: str, block, key: str, skip: int = 0) -> SeriesRange:
    index = next(i for i, c in enumerate(block.columns) if c.key == key)
    first = block.row + 2
    last = first + max(block.rows, 1) - 1
    return SeriesRange(sheet, block.column + index, min(first + skip, last), last)


def _safe(value: Any) -> Any:
    """Empty text becomes a blank cell; text starting with '=' gets a leading space, so even a reader
    that takes '=' for a formula sees text; control characters the xlsx format cannot hold become spaces."""
    if value == "":
        return None
    if isinstance(value, str) and not isinstance(value, Formula):
        cleaned = _CONTROL.sub(" ", value)
        return " " + cleaned if cleaned.startswith("=") else cleaned
    return value


#: Characters XML 1.0 (so xlsx) cannot hold: C0 controls other than tab, line feed and carriage return.
_CONTROL = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f]")


class CellRecorder:
    """A `SheetWriter` that keeps every write in dictionaries (no spreadsheet library).

    ``cells[(sheet, row, column)]`` is the value or formula text,
    ``formats[...]`` its number format, ``names[name]`` the ``sheet!reference``
    ``charts`` a list of (sheet, chart key, x address, [(title, y address)])
    and ``pages[sheet]`` its `layout.PageSetup`.
    """

    def __init__(self) -> None:
        self.sheets: list[str] = []
        self.cells: dict[tuple[str, int, int], Any] = {}
        self.formats: dict[tuple[str, int, int], str] = {}
        self.names: dict[str, str] = {}
        self.widths: dict[tuple[str, int], float] = {}
        self.charts: list[tuple[str, str, str, list[tuple[str, str]]]] = []
        self.pages: dict[str, lay.PageSetup] = {}

    def add_sheet(self, name: str) -> None:
        self.sheets.append(name)

    def write_cells(self, sheet, row, column, values, number_format, bold) -> None:
        for i, line in enumerate(values):
            for j, value in enumerate(line):
                self.cells[(sheet, row + i, column + j)] = value
                if number_format:
                    self.formats[(sheet, row + i, column + j)] = number_format

    def define_name(self, name, sheet, reference) -> None:
        self.names[name] = f"{sheet}!{reference}"

    def set_column_width(self, sheet, column, width) -> None:
        self.widths[(sheet, column)] = width

    def add_chart(self, sheet, chart, x, series) -> None:
        self.charts.append((sheet, chart.key, x.address(), [(title, y.address()) for title, y in series]))

    def set_page(self, sheet, page) -> None:
        self.pages[sheet] = page
