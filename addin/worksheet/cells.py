"""Spreadsheet cells to clean numbers: the entrance for every worksheet function.

Excel hands a worksheet function a single cell as a scalar and a range as a
list of row lists. Blank cells arrive as ``None``; error cells arrive as
``None`` or, when the argument asks for it (xlwings ``err_to_str``), as their
error text such as ``"#N/A"``. Numbers typed into cells formatted as text
arrive as strings, and a cell formatted as a percentage arrives as the
fraction (5 % is 0.05) while the text ``"5%"`` arrives as text.

Each helper here checks one thing and raises `CellError` with a message that
names the cell by its position in the range ("row 118 of the acceleration
range is blank"), the rule and the value received. Nothing here knows about
oscillators; the public API in ``groundstep.core`` checks the physics.
"""

from __future__ import annotations

import datetime as _dt
import math
import re
from numbers import Real
from typing import Any, NamedTuple

import numpy as np
from numpy.typing import NDArray

from groundstep.core.checks import percentage_hint
from groundstep.core.units import normalise_unit

#: The error values a spreadsheet cell can hold, as Excel spells them.
EXCEL_ERRORS = frozenset(
    {
        "#NULL!", "#DIV/0!", "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#N/A", "#GETTING_DATA",
        "#SPILL!", "#CALC!", "#FIELD!", "#BLOCKED!", "#CONNECT!", "#UNKNOWN!", "#BUSY!", "#PYTHON!",
    }
)  # fmt: skip

_DECIMAL_COMMA = re.compile(r"^[+-]?\d+,\d+$")
_REQUIRED = object()


class CellError(ValueError):
    """A cell or range cannot be read as the argument it was given for."""


def numbers(value: Any, what: str, min_count: int = 1) -> NDArray[np.float64]:
    """Numbers of a one-column or one-row range, headers and trailing blanks dropped.

    Leading blank and text cells (headers such as ``"Accel [g]"``) are
    skipped, and so are blank cells after the last number, so a generous
    range such as ``B2:B20000`` works. Every cell in between must hold a
    number, a number stored as text or a percentage text such as ``"5%"``.

    Parameters
    ----------
    value : scalar, list or list of row lists
        The cells as the spreadsheet passes them.
    what : str
        How messages name the range, e.g. ``"the acceleration range"``.
    min_count : int, default 1
        Fewest numbers accepted.

    Raises
    ------
    CellError
        A two-dimensional range; an interior blank, text, Boolean, date or
        error cell (named by its row or column in the range); too few numbers.
    """
    return _array(_values(value, what)[0], what, min_count)


def number(value: Any, what: str, default: Any = _REQUIRED) -> float:
    """One number from one cell; a blank cell gives `default` when one is given.

    Raises
    ------
    CellError
        A range of several cells; a blank cell without a default; text,
        Boolean, date or error cells.
    """
    cell = _single(value, what)
    if _is_blank(cell):
        if default is _REQUIRED:
            raise CellError(f"{what} is blank")
        return default
    return _number_in(cell, what)


def positive(value: Any, what: str, unit: str = "") -> float:
    """One number that must be > 0 (a time step [s], a ductility, ...)."""
    result = number(value, what)
    if not result > 0.0:
        raise CellError(f"{what} must be > 0{' ' + unit if unit else ''}, got {result:g}")
    return result


def nonnegative(value: Any, what: str, default: Any = _REQUIRED) -> float:
    """One number that must be >= 0 (a period [s], a hardening ratio, ...)."""
    result = number(value, what, default)
    if result is not None and result < 0.0:
        raise CellError(f"{what} must be >= 0, got {result:g}")
    return result


def periods(value: Any, what: str) -> NDArray[np.float64]:
    """Periods [s] of a range: numbers, each >= 0 (0 is a rigid oscillator)."""
    found, line, start = _values(value, what)
    negative = np.flatnonzero(found < 0.0)
    if negative.size:
        index = int(negative[0])
        raise CellError(f"{line.position(start + index)} of {what} holds {found[index]:g}; periods must be >= 0 s")
    return _array(found, what, 1)


def ductilities(value: Any, what: str) -> NDArray[np.float64]:
    """Target ductilities of a range: numbers, each >= 1 (peak over yield displacement)."""
    found, line, start = _values(value, what)
    low = np.flatnonzero(found < 1.0)
    if low.size:
        index = int(low[0])
        raise CellError(f"{line.position(start + index)} of {what} holds {found[index]:g}; ductilities must be >= 1")
    return _array(found, what, 1)


def damping(value: Any, what: str, default: Any = _REQUIRED) -> float:
    """A ratio of critical damping from one cell, with a hint for percentages."""
    return _check_damping(number(value, what, default), what, " ")


def dampings(value: Any, what: str) -> NDArray[np.float64]:
    """Ratios of critical damping from a range, each checked like `damping`."""
    found, line, start = _values(value, what)
    for index, ratio in enumerate(found.tolist()):
        _check_damping(ratio, f"{line.position(start + index)} of {what}", ": ")
    return _array(found, what, 1)


def text(value: Any, what: str, default: Any = _REQUIRED) -> str:
    """Text from one cell, stripped; a blank cell gives `default` when one is given."""
    cell = _single(value, what)
    if _is_blank(cell):
        if default is _REQUIRED:
            raise CellError(f"{what} is blank")
        return default
    if isinstance(cell, str):
        if cell.strip() in EXCEL_ERRORS:
            raise CellError(f"{what} holds the error {cell.strip()}")
        return cell.strip()
    raise CellError(f"{what} must be text, got {_shown(cell)}")


def unit(value: Any, what: str, table: dict[str, float], default: Any = _REQUIRED) -> str:
    """A unit name from one cell, normalised against one table of ``core._units``."""
    if default is _REQUIRED and _is_blank(_single(value, what)):
        raise CellError(f"{what} is blank; enter one of {', '.join(table)}")
    name = text(value, what, default)
    if name is default and default is not _REQUIRED:
        return name
    try:
        return normalise_unit(name, table, what)
    except ValueError:
        accepted = ", ".join(table)
        raise CellError(f"{what} {excerpt(name)} is not a known unit; use one of {accepted}") from None


def flag(value: Any, what: str, default: bool) -> bool:
    """TRUE/FALSE from one cell: a Boolean, 1 or 0, or the text TRUE/FALSE/YES/NO."""
    cell = _single(value, what)
    if _is_blank(cell):
        return default
    if isinstance(cell, (bool, np.bool_)):
        return bool(cell)
    if isinstance(cell, Real) and cell in (0, 1):  # no float(): an integer cell may exceed float64
        return bool(cell)
    if isinstance(cell, str) and cell.strip().lower() in {"true", "false", "yes", "no"}:
        return cell.strip().lower() in {"true", "yes"}
    raise CellError(f"{what} must be TRUE or FALSE, got {_shown(cell)}")


def line(value: Any, what: str) -> list[Any]:
    """The cells of a scalar, a flat list, or a one-column or one-row range, in order.

    Raises
    ------
    CellError
        A range of several rows and several columns.
    """
    return _line(value, what).cells


def method(value: Any, what: str, default: str) -> str | tuple[float, float]:
    """A method name, or a (beta, gamma) pair from a two-cell range."""
    if isinstance(value, (list, tuple)):
        cells = _line(value, what).cells
        if len(cells) == 2:
            return (_number_in(cells[0], f"the beta cell of {what}"), _number_in(cells[1], f"the gamma cell of {what}"))
    return text(value, what, default).lower()


class _Line(NamedTuple):
    """The cells of a one-column or one-row range and how to name a cell's position."""

    cells: list[Any]
    label: str  # "row" or "column"

    def position(self, index: int) -> str:
        return f"{self.label} {index + 1}"


class _Reason(ValueError):
    """Why one cell is not a number ("is blank", "holds the error #N/A", ...)."""


def _values(value: Any, what: str) -> tuple[NDArray[np.float64], _Line, int]:
    """The numbers between the leading headers and the trailing blanks, the line, and the first index."""
    line = _line(value, what)
    cells = line.cells
    start = 0
    while start < len(cells) and (_is_blank(cells[start]) or _is_header(cells[start])):
        start += 1
    stop = len(cells)
    while stop > start and _is_blank(cells[stop - 1]):
        stop -= 1
    interior = cells[start:stop]
    fast = set(map(type, interior)) <= {float, int}  # the usual case, done by numpy
    if fast:
        try:
            found = np.array(interior, dtype=np.float64)
        except OverflowError:  # an integer beyond float64: the cell-by-cell path names it
            fast = False
    if fast:
        bad = np.flatnonzero(~np.isfinite(found))
        if bad.size:
            raise CellError(f"{line.position(start + int(bad[0]))} of {what} holds {float(found[bad[0]])!r}, not a finite number")
        return found, line, start
    found = np.empty(len(interior))
    for index, cell in enumerate(interior):
        try:
            found[index] = _number(cell)
        except _Reason as reason:
            raise CellError(f"{line.position(start + index)} of {what} {reason}") from None
    return found, line, start


def _array(found: NDArray[np.float64], what: str, min_count: int) -> NDArray[np.float64]:
    if found.size < min_count:
        if not found.size:
            raise CellError(f"{what} holds no numbers")
        raise CellError(f"{what} holds {found.size} number(s); at least {min_count} are needed")
    return found


def _line(value: Any, what: str) -> _Line:
    """The cells of a scalar, a flat list, or a one-column or one-row range."""
    if isinstance(value, np.ndarray):
        value = value.tolist()
    if not isinstance(value, (list, tuple)):
        return _Line([value], "row")
    if not any(isinstance(row, (list, tuple)) for row in value):
        return _Line(list(value), "row")
    rows = value if all(isinstance(row, (list, tuple)) for row in value) else [
        row if isinstance(row, (list, tuple)) else [row] for row in value
    ]
    width = max(map(len, rows))
    if width <= 1:
        return _Line([row[0] if row else None for row in rows], "row")
    if len(rows) == 1:
        return _Line(list(rows[0]), "column")
    raise CellError(
        f"{what} must be one column or one row, got {len(rows)} rows x {width} columns; "
        "select a single column"
    )


def _single(value: Any, what: str) -> Any:
    if isinstance(value, (list, tuple, np.ndarray)):
        cells = _line(value, what).cells
        if len(cells) != 1:
            raise CellError(f"{what} must be one cell, got a range of {len(cells)} cells")
        return cells[0]
    return value


def _is_blank(cell: Any) -> bool:
    return cell is None or (isinstance(cell, str) and not cell.strip())


def _is_header(cell: Any) -> bool:
    """Text that is not a number and not an error value: a column heading."""
    if not isinstance(cell, str) or cell.strip() in EXCEL_ERRORS:
        return False
    try:
        _text_number(cell)
    except ValueError:
        return True
    return False


def _text_number(cell: str) -> float:
    """A number stored as text; ``"5%"`` is 0.05. Raises ValueError otherwise."""
    stripped = cell.strip().replace("\u00a0", "")
    if stripped.endswith("%"):
        return float(stripped[:-1]) / 100.0
    return float(stripped)


def _number(cell: Any) -> float:
    """The number in one cell, or _Reason saying what the cell holds instead."""
    if isinstance(cell, (bool, np.bool_)):
        raise _Reason(f"holds {str(bool(cell)).upper()}, a Boolean, not a number")
    if isinstance(cell, (Real, np.integer, np.floating)):
        try:
            result = float(cell)
        except OverflowError:  # an integer beyond float64 (about 1.8e308)
            raise _Reason(f"holds an integer of {len(str(abs(cell)))} digits, too large for a number") from None
    elif cell is None:
        raise _Reason("is blank")
    elif isinstance(cell, str):
        stripped = cell.strip()
        if not stripped:
            raise _Reason("is blank")
        if stripped in EXCEL_ERRORS:
            raise _Reason(f"holds the error {stripped}")
        if _DECIMAL_COMMA.match(stripped):
            raise _Reason(
                f"holds the text {excerpt(stripped)}: write the number with a decimal point ({stripped.replace(',', '.')})"
            )
        try:
            result = _text_number(stripped)
        except ValueError:
            raise _Reason(f"holds the text {excerpt(stripped)}, not a number") from None
    elif isinstance(cell, (_dt.date, _dt.time, _dt.timedelta)):
        raise _Reason(f"holds a date or time ({cell}), not a number")
    else:
        raise _Reason(f"holds {_shown(cell)}, not a number")
    if not math.isfinite(result):
        raise _Reason(f"holds {result!r}, not a finite number")
    return result


def _number_in(cell: Any, where: str) -> float:
    try:
        return _number(cell)
    except _Reason as reason:
        raise CellError(f"{where} {reason}") from None


def _check_damping(ratio: float, what: str, sep: str) -> float:
    if ratio < 0.0:
        raise CellError(f"{what} must be >= 0, got {ratio:g}")
    hint = percentage_hint(ratio)
    if hint:  # a cell also takes the percentage itself as text
        raise CellError(f"{what}{sep}{hint} or {ratio:g}%")
    if ratio >= 1.0:
        raise CellError(f"{what} must be a ratio of critical damping in [0, 1), got {ratio:g}")
    return ratio


#: Longest excerpt of a cell's text quoted in a message [characters].
EXCERPT_LENGTH = 60


def excerpt(text: str) -> str:
    """`text` quoted, cut to EXCERPT_LENGTH characters with its full length said."""
    if len(text) <= EXCERPT_LENGTH:
        return repr(text)
    return f"{text[:EXCERPT_LENGTH]!r}... ({len(text)} characters)"


def _shown(cell: Any) -> str:
    if isinstance(cell, (bool, np.bool_)):
        return f"{str(bool(cell)).upper()} (a Boolean)"
    if isinstance(cell, str):
        return excerpt(cell)
    if isinstance(cell, int) and abs(cell) > 10**300:
        return f"an integer of {len(str(abs(cell)))} digits"
    if isinstance(cell, Real):
        return f"{float(cell):g}"
    return f"{type(cell).__name__} {cell!r:.40}"
