"""How the result workbook prints: page set-up per sheet, number formats and column widths from the data.

`page_setup` derives each sheet's `layout.PageSetup` from its layout: the
longest table's header row repeats on every page and stays frozen on screen,
wide sheets print landscape, every sheet is fitted to the page width (A4 and
Letter alike), and the Summary to one page. `number_format` picks an ordinary
format with four significant digits for a column from the range of its
values, and E-notation only for tiny or huge ones; `column_width` makes a
column wide enough for its header.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

from . import layout as lay

__all__ = ["SIGNIFICANT_DIGITS", "column_width", "number_format", "page_setup"]

#: Significant digits shown by the chosen number formats (the stored values keep every digit).
SIGNIFICANT_DIGITS = 4
#: Columns whose widths add up to more than this many characters print landscape
#: (an A4 or Letter portrait page holds about 90 characters of 11-point text at 100 %).
_PORTRAIT_CHARACTERS = 90.0
#: Rows of a table from which its header is repeated and frozen.
_LONG_TABLE = 30
#: Widest column set from its header [characters]; longer headers wrap.
_WIDEST = 36.0


def page_setup(sheet: lay.Sheet, summary: bool = False) -> lay.PageSetup:
    """The page set-up of `sheet`: landscape when wide, header rows of its longest table repeated and frozen."""
    tables = [b for b in sheet.blocks if not isinstance(b, lay.Fields)]
    longest = max(tables, key=lambda b: b.rows, default=None)
    title_rows = freeze = None
    if longest is not None and longest.rows >= _LONG_TABLE:
        header = longest.row + 1
        title_rows, freeze = (header, header), (header + 1, 1)
    width = max((sum(column_width(c) for c in b.columns) + b.column for b in tables), default=0.0)
    fields = [b for b in sheet.blocks if isinstance(b, lay.Fields)]
    width = max(width, max((46.0 + 22.0 + 10.0 + b.column for b in fields), default=0.0))
    return lay.PageSetup(
        landscape=width > _PORTRAIT_CHARACTERS, fit_width=True, fit_height=summary,
        title_rows=title_rows, freeze=freeze,
    )  # fmt: skip


def column_width(column: Any) -> float:
    """The layout's width, widened to fit the header ``header [unit]`` up to `_WIDEST` characters."""
    header = f"{column.header} [{column.unit}]" if getattr(column, "unit", "") else column.header
    return round(max(float(column.width), min(len(header) * 1.1 + 2.0, _WIDEST)), 1)


def number_format(layout_format: str | None, values: Sequence[Any]) -> str | None:
    """An ordinary-notation format with `SIGNIFICANT_DIGITS` digits for the largest value of a column.

    Only the layout's scientific format is replaced: ``0.000`` style when
    every non-zero value lies between 1e-3 and 1e6 of magnitude, else
    ``0.000E+00``. Other formats (integers, fixed, text) are kept.
    """
    if layout_format != lay.SCIENTIFIC:
        return layout_format
    finite = [abs(float(v)) for v in values if isinstance(v, (int, float)) and not isinstance(v, bool)]
    finite = [v for v in finite if math.isfinite(v) and v > 0.0]
    if not finite:
        return "0.000"
    low, high = min(finite), max(finite)
    if low < 1e-3 or high >= 1e6:
        return "0." + "0" * (SIGNIFICANT_DIGITS - 1) + "E+00"
    decimals = max(SIGNIFICANT_DIGITS - 1 - math.floor(math.log10(high)), 0)
    return "0." + "0" * decimals if decimals else "0"
