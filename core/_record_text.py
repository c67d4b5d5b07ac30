"""Reading the numbers of a record text: separators, decimal commas, layout, time column.

Private helper of `Record.from_text`. The rules, in the order they apply:

* Leading lines that are not numbers are a header; after the first number
  line, a line that is not numbers is refused, and so is a blank line with
  data after it (the rule for a blank cell inside a spreadsheet range);
  blank lines after the data are dropped.
* The decimal mark is read from the whole data block: ``;`` anywhere makes
  ``;`` and blanks the separators and ``,`` the decimal mark; without ``;``
  and without any ``.``, a line of blank-separated numbers such as
  ``0,20409`` or ``0,1 -0,2`` holds decimal commas; otherwise ``,`` is a
  separator. A reading that would stay ambiguous (a field holding both
  marks, two commas in a blank-separated field, decimal-comma values that
  strictly increase like a time column) is refused naming the line.
* Every data line has the same number of values (the last line may hold
  fewer, as in fixed-width files written several values to a line).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

__all__: list[str] = []

#: Largest deviation of a time value from uniform spacing, as a fraction of
#: the step, still read as uniform. Printed time columns carry rounding of a
#: few digits; 1 % of a step is common practice for accepting them.
TIME_SPACING_TOLERANCE = 0.01

_ANY_SEPARATOR = re.compile(r"[,;\s]+")
_SEMICOLON_OR_BLANK = re.compile(r"[;\s]+")
_BLANK = re.compile(r"\s+")
_DECIMAL_COMMA = re.compile(r"[+-]?\d*,\d+(?:[eE][+-]?\d+)?|[+-]?\d+(?:[eE][+-]?\d+)?")
_NUMBER = re.compile(r"[+-]?(\d*)(?:\.(\d*))?(?:[eE]([+-]?\d+))?")


@dataclass(frozen=True, slots=True)
class Words:
    """How messages name the arguments: core spells them as Python arguments, the CLI as options."""

    dt: str = "`dt`"
    give_dt: str = "pass dt=..."
    time_column: str = "time_column=True"
    no_time_column: str = "time_column=False"


@dataclass(frozen=True, slots=True)
class Parsed:
    """The numbers of a record text, line by line, with the texts they were read from."""

    header: tuple[str, ...]
    rows: tuple[tuple[float, ...], ...]
    fields: tuple[tuple[str, ...], ...]
    line_numbers: tuple[int, ...]
    decimal_comma: bool


def parse(text: str, label: str, time_column: bool | None, words: Words) -> Parsed:
    """Split `text` into header lines and rows of numbers (see the module notes)."""
    lines = text.splitlines()
    header: list[str] = []
    data: list[tuple[int, str]] = []
    blank_at: int | None = None
    for number, line in enumerate(lines, start=1):
        stripped = line.strip()
        if not stripped:
            if data and blank_at is None:
                blank_at = number
            continue
        numeric = _all_numbers(_ANY_SEPARATOR.split(stripped))
        if not data and not numeric:
            header.append(stripped)
            continue
        if blank_at is not None:
            raise ValueError(
                f"{label}: line {blank_at} is blank inside the data (data goes on at line {number}); "
                "a blank inside the record is refused as a blank cell is: delete the line, or give the "
                "missing sample"
            )
        if not numeric:
            raise ValueError(
                f"{label}: line {number} is not numeric ({stripped[:60]!r}) "
                "but data began earlier; only leading header lines are skipped"
            )
        data.append((number, stripped))
    if not data:
        raise ValueError(f"{label}: no numeric lines found")
    decimal_comma, splitter = _decimal_mark(data, label)
    rows: list[tuple[float, ...]] = []
    fields: list[tuple[str, ...]] = []
    for number, stripped in data:
        items = tuple(item for item in splitter.split(stripped) if item)
        if decimal_comma:
            for item in items:
                if "." in item or item.count(",") > 1:
                    raise ValueError(
                        f"{label}: line {number} field {item[:60]!r} cannot be read with ',' as the decimal mark "
                        "(the file uses decimal commas elsewhere): use one decimal mark in the whole file"
                    )
            items = tuple(item.replace(",", ".") for item in items)
        values = tuple(float(item) for item in items)
        for item, value in zip(items, values):
            if not math.isfinite(value):
                raise ValueError(f"{label}: line {number} holds a non-finite value {item[:60]!r}")
        rows.append(values)
        fields.append(items)
    line_numbers = tuple(number for number, _ in data)
    _check_layout(rows, line_numbers, label)
    if decimal_comma and time_column is None and all(len(row) == 1 for row in rows) and len(rows) >= 3:
        column = np.array([row[0] for row in rows])
        if bool(np.all(np.diff(column) > 0.0)):
            raise ValueError(
                f"{label}: lines such as {data[0][1]!r} (line {data[0][0]}) read with a decimal comma give "
                "values that only increase, as a time column would; an acceleration record never does. "
                f"If each line is 'time,acceleration', pass {words.time_column}; if the values are decimal-comma "
                f"samples, pass {words.no_time_column}"
            )
    if decimal_comma and time_column is True and all(len(row) == 1 for row in rows):
        # the user says 'time, acceleration': the single comma of each line separates them
        rows = [tuple(float(item) for item in line.split(",")) for _, line in data]
        fields = [tuple(line.split(",")) for _, line in data]
        decimal_comma = False
    return Parsed(tuple(header), tuple(rows), tuple(fields), line_numbers, decimal_comma)


def uniform_step(
    times: NDArray[np.float64], texts: list[str], line_numbers: tuple[int, ...], label: str
) -> float:
    """The time column's step: uniform within the tolerance, rounded to the digits the column shows.

    The step is (t_last - t_0)/(n - 1) rounded to the decimals printed in
    the column, so ``0.00, 0.02, ..., 9.98`` gives 0.02 and not the
    0.019999999999999997 that the subtraction leaves.
    """
    if times.size < 2:
        raise ValueError(f"{label}: a time column needs at least two lines")
    steps = np.diff(times)
    typical = float(np.median(steps))
    if not typical > 0.0:
        raise ValueError(f"{label}: the time column does not increase")
    off = np.flatnonzero(np.abs(steps - typical) > TIME_SPACING_TOLERANCE * typical)
    if off.size:
        index = int(off[0]) + 1
        raise ValueError(
            f"{label}: the time column is not uniformly spaced: line {line_numbers[index]} "
            f"has t = {float(times[index])!r}, {steps[index - 1]:.6g} s after the line before; "
            f"the usual step is {typical:.6g} s"
        )
    step = float((times[-1] - times[0]) / (times.size - 1))
    shown = [_decimals(text) for text in texts]
    if any(d is None for d in shown):
        return step
    decimals = max(d for d in shown if d is not None)
    rounded = round(step, decimals)
    # keep the rounding only when it moves the step by round-off, never by a visible amount
    return rounded if rounded > 0.0 and abs(rounded - step) <= 1e-9 * step else step


def _decimals(text: str) -> int | None:
    """Decimal places a number's text shows (``2.0E-02`` shows 3); None when not a plain number."""
    match = _NUMBER.fullmatch(text.strip())
    if match is None:
        return None
    fraction, exponent = match.group(2) or "", match.group(3)
    return max(len(fraction) - (int(exponent) if exponent else 0), 0)


def _all_numbers(items: list[str]) -> bool:
    found = [item for item in items if item]
    if not found:
        return False
    try:
        for item in found:
            float(item)
    except ValueError:
        return False
    return True


def _decimal_mark(data: list[tuple[int, str]], label: str) -> tuple[bool, re.Pattern[str]]:
    """(decimal comma?, the separator pattern) for the data block."""
    has_comma = any("," in line for _, line in data)
    if any(";" in line for _, line in data):
        return has_comma, _SEMICOLON_OR_BLANK
    if not has_comma or any("." in line for _, line in data):
        return False, _ANY_SEPARATOR
    for number, line in data:
        for item in _BLANK.split(line):
            if not _DECIMAL_COMMA.fullmatch(item):
                raise ValueError(
                    f"{label}: line {number} field {item[:60]!r} is ambiguous: with no '.' in the file, ',' may be "
                    "a decimal mark or a separator. Separate values by ';', tabs or blanks and use one "
                    "decimal mark, or write decimal points"
                )
    return True, _BLANK


def _check_layout(rows: list[tuple[float, ...]], line_numbers: tuple[int, ...], label: str) -> None:
    """Every line holds as many values as the first; the last may hold fewer."""
    width = len(rows[0])
    for index, row in enumerate(rows):
        last = index == len(rows) - 1
        if len(row) != width and not (last and len(row) < width):
            raise ValueError(
                f"{label}: line {line_numbers[index]} holds {len(row)} value(s) but the first data line "
                f"(line {line_numbers[0]}) holds {width}; several values per line are read only when every "
                "line has the same layout (the last may be shorter): check the separators and decimal marks"
            )
