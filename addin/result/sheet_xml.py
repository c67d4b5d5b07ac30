"""The cells of a worksheet as SpreadsheetML ``<sheetData>`` text (ECMA-376 Part 1, §18.3.1).

`SheetCells` collects the rectangles of values that ``render`` hands a
writer and streams them out as the ``<sheetData>`` element of a worksheet
part, row by row. ``offline.OpenpyxlWriter`` uses it for every cell of the
result workbook while openpyxl writes the rest of the package (styles,
defined names, column widths, page set-up, charts), so the layout stays the
one description both writers walk; only the backend of the cells differs.

What is written (all of it read back by openpyxl, LibreOffice and Gnumeric in the tests; Excel is not run here):

- a number as ``<v>repr(x)</v>``: the shortest text that reads back as the
  same float64 (exact, and shorter than a fixed 17 digits); integers as
  they are; a NaN or infinity is refused with the sheet and cell named
  (the xlsx format has no such number, and a blank would hide it);
- text as an inline string (``t="inlineStr"``), formulas as ``<f>`` without
  the leading ``=``, Booleans as ``t="b"``; None writes a blank cell that
  keeps its format (no cell at all under the default format);
- the reference ``r`` on every cell. ECMA-376 makes it optional
  (§18.3.1.4: a cell without ``r`` is the next column), and leaving it off
  after the first cell of a run kept a 40,000-row column a third smaller,
  but Gnumeric 1.12 then put every such cell in column 0
  ("sheet_cell_create: assertion 'col >= 0' failed") and lost the
  Verification formulas, found by the Gnumeric recalculation test;
- the row's ``r`` only where a row does not follow the one before
  (§18.3.1.73: a row without ``r`` is the next row), which LibreOffice,
  Gnumeric and openpyxl read (tests/test_calc_extension.py,
  tests/test_sheet_xml.py); Excel could not be run here to check it;
- a run of formulas down a column that differ only by their relative rows
  (the Verification sheet's replay columns) as one shared formula
  (§18.3.1.40, ``t="shared"``): the first cell holds the text and the
  range (``ref``), the others only its index (``si``), each read as the
  first cell's formula with its relative references moved down. A run is
  shared only when the formula moved down is, character for character,
  the text written for each cell (`_SharedFormula`), so a spreadsheet
  shows every cell the formula it would have shown written out.
"""

from __future__ import annotations

import math
import re
from collections.abc import Callable, Iterator, Sequence
from typing import Any

from .render import Formula, column_letter

__all__ = ["SheetCells"]

#: Characters XML 1.0 cannot hold (C0 controls other than tab, line feed, carriage return).
_ILLEGAL = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f]")
#: Rows of sheet XML joined into one piece of text before it is handed on (a few hundred kB).
_CHUNK_ROWS = 2000
#: Fewest cells a shared formula stands for (shorter runs are written out; the master's ``ref`` costs more).
_SHARED_RUN = 3
#: A cell or area reference as the tokenizer gives it: optional sheet, then $?COLUMN$?ROW (twice for an area).
_REFERENCE = re.compile(
    r"((?:'(?:[^']|'')+'|[A-Za-z_][\w.]*)!)?(\$?[A-Z]{1,3})(\$?)([0-9]+)(?::(\$?[A-Z]{1,3})(\$?)([0-9]+))?"
)
_DIGITS = re.compile("[0-9]+")


def _escape(text: str) -> str:
    return _ILLEGAL.sub(" ", text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;"))


class SheetCells:
    """The cells of one worksheet, kept as SpreadsheetML text per row until `xml` streams them.

    `style` maps (number format or None, bold) to the cell-format index
    (``s``) of the workbook's style sheet; the owner registers the formats.
    """

    def __init__(self, name: str, style: Callable[[str | None, bool], int]) -> None:
        self.name = name
        self._style = style
        self._rows: dict[int, list[tuple[int, str]]] = {}
        self._formulas: dict[tuple[int, int], tuple[str, str]] = {}  # (row, column): (style, text without "=")
        self.max_row = 0
        self.max_column = 0

    def write(self, row: int, column: int, values: Sequence[Sequence[Any]], number_format: str | None, bold: bool) -> None:
        """Keep a rectangle of values whose top-left cell is (`row`, `column`), 1-based."""
        index = self._style(number_format, bold)
        style = f' s="{index}"' if index else ""
        rows = self._rows
        for i, line in enumerate(values):
            cells = rows.setdefault(row + i, [])
            for j, value in enumerate(line):
                if value is None:
                    if style:  # a blank cell keeps its format, as a spreadsheet keeps one typed into it
                        cells.append((column + j, f"{style}/>"))
                    continue
                cells.append((column + j, self._cell(value, style, row + i, column + j)))
        if values:
            self.max_row = max(self.max_row, row + len(values) - 1)
            self.max_column = max(self.max_column, column + max(len(line) for line in values) - 1)

    def write_column(self, row: int, column: int, values: Sequence[Any], number_format: str | None) -> None:
        """Keep one column of values from (`row`, `column`) down: the fast path for long numeric columns."""
        index = self._style(number_format, False)
        style = f' s="{index}"' if index else ""
        head = f"{style}><v>"
        rows = self._rows
        for i, value in enumerate(values, start=row):
            if type(value) is float and math.isfinite(value):
                rows.setdefault(i, []).append((column, f"{head}{value!r}</v></c>"))
            elif value is not None:
                rows.setdefault(i, []).append((column, self._cell(value, style, i, column)))
            elif style:  # a blank cell keeps its format
                rows.setdefault(i, []).append((column, f"{style}/>"))
        if values:
            self.max_row = max(self.max_row, row + len(values) - 1)
            self.max_column = max(self.max_column, column)

    def _cell(self, value: Any, style: str, row: int, column: int) -> str:
        """The text of one ``<c>`` element after ``<c`` and its reference."""
        if isinstance(value, Formula):
            text = value[1:] if value.startswith("=") else value
            self._formulas[(row, column)] = (style, text)
            return f"{style}><f>{_escape(text)}</f></c>"
        if isinstance(value, str):
            text = _escape(value)
            space = ' xml:space="preserve"' if text != text.strip() else ""
            return f'{style} t="inlineStr"><is><t{space}>{text}</t></is></c>'
        if isinstance(value, bool):
            return f'{style} t="b"><v>{int(value)}</v></c>'
        if isinstance(value, int) or hasattr(value, "__index__"):
            return f"{style}><v>{int(value)}</v></c>"
        if isinstance(value, float) or hasattr(value, "__float__"):
            number = float(value)
            if not math.isfinite(number):
                raise ValueError(
                    f"sheet {self.name!r} cell {column_letter(column)}{row}: {number!r} is not a number a "
                    "workbook can hold; nothing was written"
                )
            return f"{style}><v>{number!r}</v></c>"
        raise TypeError(f"sheet {self.name!r} cell {column_letter(column)}{row}: cannot write a {type(value).__name__}")

    def dimension(self) -> str:
        """The used range, ``A1:K2009`` (``A1`` for an empty sheet)."""
        if not self.max_row:
            return "A1"
        return f"A1:{column_letter(max(self.max_column, 1))}{self.max_row}"

    def xml(self) -> Iterator[str]:
        """The ``<sheetData>`` element, in pieces of a few thousand rows."""
        yield "<sheetData>"
        shared = self._shared_formulas()
        parts: list[str] = []
        last = 0
        for number in sorted(self._rows):
            cells = self._rows[number]
            if not cells:
                continue
            cells.sort(key=lambda cell: cell[0])
            previous = 0
            parts.append("<row>" if number == last + 1 else f'<row r="{number}">')
            last = number
            for column, text in cells:
                if column == previous:
                    raise ValueError(f"sheet {self.name!r} cell {column_letter(column)}{number} is written twice")
                if shared:
                    text = shared.get((number, column), text)
                parts.append(f'<c r="{column_letter(column)}{number}"{text}')
                previous = column
            parts.append("</row>")
            if len(parts) > 8 * _CHUNK_ROWS:
                yield "".join(parts)
                parts = []
        parts.append("</sheetData>")
        yield "".join(parts)

    def _shared_formulas(self) -> dict[tuple[int, int], str]:
        """The cell texts (after ``<c r=..``) of the formulas written as shared formulas, by (row, column)."""
        texts: dict[tuple[int, int], str] = {}
        formulas = self._formulas
        done: set[tuple[int, int]] = set()
        index = 0
        for row, column in sorted(formulas, key=lambda cell: (cell[1], cell[0])):
            if (row, column) in done:
                continue  # inside a run already found
            style, text = formulas[(row, column)]
            run = [row]
            if _same_shape(formulas, row, column):
                master = _SharedFormula.parse(text)
                while master is not None:
                    below = formulas.get((run[-1] + 1, column))
                    if below is None or below[0] != style or master.moved(run[-1] + 1 - row) != below[1]:
                        break
                    run.append(run[-1] + 1)
            if len(run) < _SHARED_RUN:
                continue
            done.update((member, column) for member in run)
            letter = column_letter(column)
            texts[(row, column)] = (f'{style}><f t="shared" ref="{letter}{row}:{letter}{run[-1]}" si="{index}">'
                                    f"{_escape(text)}</f></c>")  # fmt: skip
            for member in run[1:]:
                texts[(member, column)] = f'{style}><f t="shared" si="{index}"/></c>'
            index += 1
        return texts


def _same_shape(formulas: dict[tuple[int, int], tuple[str, str]], row: int, column: int) -> bool:
    """True when the formulas of (`row`, `column`) and the cell below differ at most in their digits (a cheap pre-check)."""
    below = formulas.get((row + 1, column))
    return below is not None and _DIGITS.sub("", formulas[(row, column)][1]) == _DIGITS.sub("", below[1])


class _SharedFormula:
    """A formula as literal pieces and cell references, to write it moved down by `moved` (a shared formula's rule).

    The references are found by openpyxl's formula tokenizer (operands of
    subtype RANGE; text in quotes and function names are other tokens). A
    relative row moves with the cell, a ``$`` row does not (ECMA-376 Part 1,
    §18.17.2.3, as for a formula filled down). A formula with any other
    range operand (a defined name, a whole row or column) is never shared.
    """

    __slots__ = ("_pieces",)

    def __init__(self, pieces: list[str | tuple[str, str, str, int, str, str, int | None]]) -> None:
        self._pieces = pieces

    @classmethod
    def parse(cls, text: str) -> _SharedFormula | None:
        """The pieces of formula `text` (no leading ``=``), or None when it cannot be shared safely."""
        from openpyxl.formula.tokenizer import Token, Tokenizer

        try:
            tokens = Tokenizer("=" + text).items
        except Exception:  # noqa: BLE001 - a formula the tokenizer cannot read is written out, not shared
            return None
        pieces: list[str | tuple[str, str, str, int, str, str, int | None]] = []
        for token in tokens:
            if token.type == Token.OPERAND and token.subtype == Token.RANGE:
                match = _REFERENCE.fullmatch(token.value)
                if match is None:
                    return None
                sheet, column, fixed, row, column2, fixed2, row2 = match.groups()
                pieces.append((sheet or "", column, fixed, int(row), column2 or "", fixed2 or "",
                               int(row2) if row2 else None))  # fmt: skip
            else:
                pieces.append(token.value)
        shared = cls(pieces)
        return shared if shared.moved(0) == text else None  # the tokens give back the text, or no sharing

    def moved(self, rows: int) -> str:
        """The formula's text with its relative rows moved down by `rows`."""
        out = []
        for piece in self._pieces:
            if isinstance(piece, str):
                out.append(piece)
                continue
            sheet, column, fixed, row, column2, fixed2, row2 = piece
            text = f"{sheet}{column}{fixed}{row if fixed else row + rows}"
            if row2 is not None:
                text += f":{column2}{fixed2}{row2 if fixed2 else row2 + rows}"
            out.append(text)
        return "".join(out)
