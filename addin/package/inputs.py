"""Read a record and settings from an input workbook (``groundstep fill`` and the live macro).

An input workbook is only read, never written: the file's bytes are read
into memory once; openpyxl reads that copy's names, styles and shared strings
without its cells (read-only mode) and ``sheet_reader`` scans the XML of the
sheets the inputs are on (openpyxl's normal mode, a cell object for every
cell of every sheet, took 1.7 s of the 2.5 s ``fill`` of a 40,000-sample
record; the scan gives the same values, see ``sheet_reader``). Cells are found through defined
names (the calculation-package template, ``names.INPUTS``) or through an
explicit ``SHEET!RANGE`` for the record. Oscillators may carry a strength
reduction factor R (``input_peak_reduction_factors`` or
``gs_in_oscillator_reduction_factors``, cell for cell beside the periods; a
blank cell keeps that oscillator elastic only). Processing (baseline order,
band-pass corners) comes from ``input_baseline_order``, ``input_low_hz`` and
``input_high_hz``; blank cells ask for none. Every cell is checked by the
worksheet-function entrance (``worksheet.cells``), so messages are the same as in the
worksheet functions and name the range and row.
"""

from __future__ import annotations

import datetime
import io
import os
import re
from collections.abc import Callable
from pathlib import Path
from typing import Any

from groundstep.addin.result.content import PROJECT_KEYS, Oscillator, ReportSettings
from groundstep.addin.result.guard import UnsafeWorkbook, check_package
from groundstep.addin.worksheet import cells as _cells
from groundstep.core import Record
from groundstep.core.checks import check_hardening, check_integer
from groundstep.core.defaults import DEFAULT_DAMPING
from groundstep.core.units import ACCELERATION_UNITS

from .names import lookup_names
from .sheet_reader import SheetValues, open_workbook

__all__ = [
    "InputError",
    "clip_reference",
    "first_uncalculated_formula",
    "read_input_workbook",
    "settings_from_cells",
    "split_reference",
]

_REFERENCE = re.compile(r"^(?:'((?:[^']|'')+)'|([^!]+))!(\$?[A-Za-z]{1,3}\$?\d+(?::\$?[A-Za-z]{1,3}\$?\d+)?)$")

Getter = Callable[[str], Any]


class InputError(ValueError):
    """The input workbook or an option does not give a usable record or setting."""


def split_reference(reference: str) -> tuple[str, str]:
    """``'My sheet'!B2:B20`` -> (``My sheet``, ``B2:B20``).

    Raises
    ------
    InputError
        Not of the form SHEET!RANGE.
    """
    match = _REFERENCE.match(reference.strip())
    if not match:
        raise InputError(f"--record {reference!r} is not SHEET!RANGE, e.g. Input!B2:B4001 or 'My data'!C5:C900")
    sheet = match.group(1).replace("''", "'") if match.group(1) else match.group(2)
    return sheet, match.group(3).replace("$", "")


def settings_from_cells(
    get: Getter,
    *,
    record_values: Any = None,
    dt: float | None = None,
    unit: str | None = None,
    source: str = "",
    base: ReportSettings | None = None,
) -> tuple[Record, ReportSettings]:
    """Build the record and settings from cell values.

    Parameters
    ----------
    get : callable
        ``get(key)`` returns the cells of input `key` (see ``names.INPUTS``)
        as a spreadsheet passes them, or None when the workbook lacks it.
    record_values, dt, unit
        Override the workbook's record range, time step [s] and unit.
    source : str
        Label of the record (file and range).
    base : ReportSettings, optional
        Settings used where the workbook is silent.
    """
    base = base or ReportSettings()
    values = record_values if record_values is not None else get("record")
    if values is None:
        raise InputError("the workbook has no named acceleration range (input_record); pass --record SHEET!RANGE")
    accel = _cells.numbers(values, "the acceleration range", 2)
    if dt is None:
        cell = get("dt")
        if cell is None:
            raise InputError("the workbook has no named time-step cell (input_dt); pass --dt SECONDS")
        if _blank(cell):
            raise InputError("the time-step cell (input_dt) is empty: enter the time step in seconds, or pass --dt SECONDS")
        dt = _cells.positive(cell, "the time-step cell", "s")
    if unit is None:  # never assumed: a wrong unit scales every result
        cell = get("unit")
        if cell is None:
            raise InputError(
                "the record unit is not given: fill the unit cell (input_unit) or pass --unit "
                f"({', '.join(ACCELERATION_UNITS)})"
            )
        unit = _cells.unit(cell, "the unit cell", ACCELERATION_UNITS)
    name_cell = get("record_name")
    name = _cells.text(name_cell, "the record-name cell", "") if name_cell is not None else ""
    record = Record(accel, dt, unit, name=name or source)

    periods = get("periods")
    dampings = get("dampings")
    method = get("method")
    labels, osc_periods, osc_dampings = get("oscillator_labels"), get("oscillator_periods"), get("oscillator_dampings")
    oscillators = base.oscillators
    if osc_periods is not None:
        found = _cells.periods(osc_periods, "the oscillator periods")
        ratios = (
            _cells.dampings(osc_dampings, "the oscillator dampings")
            if osc_dampings is not None
            else [DEFAULT_DAMPING] * len(found)
        )
        if len(ratios) != len(found):
            raise InputError(f"{len(found)} oscillator periods but {len(ratios)} dampings")
        names = _labels(labels, len(found))
        factors = _reduction_factors(get("oscillator_reduction_factors"), osc_periods, len(found))
        oscillators = tuple(
            Oscillator(n, float(p), float(d), r) for n, p, d, r in zip(names, found, ratios, factors)
        )
    hardening = base.hardening
    hardening_cell = get("hardening")
    if hardening_cell is not None:
        hardening = check_hardening(_cells.number(hardening_cell, "the hardening cell", 0.0), "the hardening cell")
    processing: dict[str, Any] = {}
    for key, what in (("baseline_order", "the baseline-order cell"), ("low_hz", "the low-corner cell"),
                      ("high_hz", "the high-corner cell")):  # fmt: skip
        cell = get(key)
        value = _cells.number(cell, what, None) if cell is not None else None
        processing[key] = getattr(base, key) if value is None else value
    if processing["baseline_order"] is not None:
        processing["baseline_order"] = check_integer(processing["baseline_order"], "the baseline-order cell", 1)
    project = []
    for key in PROJECT_KEYS:
        cell = get(key)
        if cell is not None:
            project.append((key, _cells.text(_as_text(cell), f"the {key} cell", "")))
    ductility_cells, yield_period_cells = get("ductilities"), get("yield_periods")
    yield_damping_cell = get("yield_damping")
    ductilities: tuple[float, ...] = base.ductilities
    if ductility_cells is not None and not _blank_range(ductility_cells):
        ductilities = tuple(float(d) for d in _cells.ductilities(ductility_cells, "the target ductilities"))
    yield_periods: tuple[float, ...] = base.yield_periods
    if yield_period_cells is not None and not _blank_range(yield_period_cells):
        yield_periods = tuple(float(p) for p in _cells.periods(yield_period_cells, "the Yielding periods"))
    yield_damping: float = base.yield_damping
    if yield_damping_cell is not None and not _blank(yield_damping_cell):
        yield_damping = float(_cells.dampings(yield_damping_cell, "the Yielding damping cell")[0])
    settings = ReportSettings(
        ductilities=ductilities,
        yield_periods=yield_periods,
        yield_damping=yield_damping,
        # T = 0 (rigid: PSA = PGA) stays in the spectrum table; the charts leave it out
        periods=tuple(float(p) for p in _cells.periods(periods, "the period range"))
        if periods is not None
        else base.periods,
        dampings=tuple(float(d) for d in _cells.dampings(dampings, "the damping range"))
        if dampings is not None
        else base.dampings,
        method=_cells.method(method, "the method cell", "average") if method is not None else base.method,
        max_step_ratio=base.max_step_ratio,
        oscillators=oscillators,
        verification_period=base.verification_period,
        verification_damping=base.verification_damping,
        project=tuple(project) or base.project,
        hardening=hardening,
        **processing,
        **_target(get, base),
    )
    return record, settings


def _target(get: Getter, base: ReportSettings) -> dict[str, Any]:
    """The Target sheet's design spectrum: standard and name/value rows, or the period/Sa table; base's when blank."""
    cell = get("target_standard")
    if cell is None or _blank(cell):
        return {"target_standard": base.target_standard, "target_parameters": base.target_parameters}
    standard = str(_cells.text(cell, "the target-standard cell", "")).strip()
    if standard.lower() == "table":
        columns = [_column(get("target_table_periods")), _column(get("target_table_sa"))]
        pairs = []
        for row, (period, sa) in enumerate(zip(*columns), start=1):
            if _blank(period) and _blank(sa):
                continue
            if not all(_is_number(v) for v in (period, sa)):
                raise InputError(f"row {row} of the target table holds {period!r}, {sa!r}: give a period [s] and Sa [g]")
            pairs.append((float(period), float(sa)))
        parameters: tuple[tuple[str, Any], ...] = (
            ("periods_table", tuple(p for p, _ in pairs)), ("sa_table", tuple(v for _, v in pairs)),
        )  # fmt: skip
        return {"target_standard": "table", "target_parameters": parameters}
    found = []
    for row, (name, value) in enumerate(zip(_column(get("target_names")), _column(get("target_values"))), start=1):
        if _blank(name):
            if not _blank(value):
                raise InputError(f"row {row} of the target parameters has the value {value!r} but no name")
            continue
        if _blank(value):
            raise InputError(f"row {row} of the target parameters names {str(name).strip()!r} but has no value")
        found.append((str(name).strip().lower(), float(value) if _is_number(value) else str(value).strip()))
    return {"target_standard": standard, "target_parameters": tuple(found)}


def _column(cells: Any) -> list[Any]:
    """The cells of a one-column range, top to bottom ([] when the workbook lacks it)."""
    if cells is None:
        return []
    return [row[0] if isinstance(row, (list, tuple)) else row for row in cells]


def _is_number(value: Any) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool)


def read_input_workbook(
    path: str | os.PathLike[str],
    *,
    record: str | None = None,
    dt: float | None = None,
    unit: str | None = None,
    base: ReportSettings | None = None,
) -> tuple[Record, ReportSettings, str]:
    """Record and settings from an input workbook, which is left untouched.

    Parameters
    ----------
    path : path-like
        An .xlsx file (a filled template, or any workbook with `record`).
    record : str, optional
        ``SHEET!RANGE`` of the acceleration column; else the named range.
    dt, unit : optional
        Time step [s] and unit, overriding the named cells.
    base : ReportSettings, optional
        Settings where the workbook is silent.

    Returns
    -------
    (Record, ReportSettings, source)

    Raises
    ------
    InputError, _cells.CellError
        Missing or bad cells, named with the range and row.
    """
    file = Path(path)
    if not file.is_file():
        what = "a folder" if file.is_dir() else "not a regular file" if file.exists() else "does not exist"
        raise InputError(f"input workbook {str(file)!r} {what}" if what == "does not exist"
                         else f"input workbook {str(file)!r} is {what}; give an .xlsx file")
    try:
        check_package(file)
    except UnsafeWorkbook as exc:
        raise InputError(str(exc)) from None
    data = file.read_bytes()  # read once: the file itself is never opened for writing
    book = _attempt(file, lambda: open_workbook(data))

    def sheet_values(sheet_name: str) -> SheetValues:
        if sheet_name not in book.sheetnames:
            raise InputError(f"{file.name}: no sheet {sheet_name!r}; the sheets are {book.sheetnames}")
        if not book.is_worksheet(sheet_name):
            raise InputError(f"{file.name}: {sheet_name!r} is a chart sheet, which holds no cells; "
                             "name a range on a worksheet")  # fmt: skip
        return _attempt(file, lambda: book.sheet(sheet_name))

    def cells(sheet_name: str, reference: str, flat: bool = False) -> Any:
        """The range's values as row lists (one cell as [[value]], as a spreadsheet passes it: a blank cell is
        not a missing name); with `flat`, a range of one column as one list (the cells `_cells.numbers` reads
        the same way, without a list per row)."""
        sheet = sheet_values(sheet_name)
        try:
            low_col, low_row, high_col, high_row = _bounds(clip_reference(reference, sheet.max_row, sheet.max_column))
        except ValueError:
            raise InputError(f"{file.name}: {sheet_name}!{reference} is not a cell or range such as B2:B4001") from None
        if flat and low_col == high_col and high_row > low_row:
            return sheet.column(low_col, low_row, high_row)
        return sheet.block(low_row, low_col, high_row, high_col)

    def get(key: str) -> Any:
        found = _destination(book.book, key)
        return cells(*found, flat=key == "record") if found is not None else None

    _refuse_samples_below_the_range(book.book, sheet_values)
    source = file.name
    record_values = None
    if record is not None:
        sheet_name, reference = split_reference(record)
        record_values = cells(sheet_name, reference, flat=True)
        source = f"{file.name} {sheet_name}!{reference}"
    try:
        rec, settings = settings_from_cells(get, record_values=record_values, dt=dt, unit=unit, source=source, base=base)
    except (InputError, _cells.CellError) as exc:
        uncalculated = first_uncalculated_formula(data, lambda title, row, column: book.sheet(title).values.get((row, column)))
        if uncalculated:
            raise InputError(
                f"{file.name}: {uncalculated} holds a formula with no saved value; open the file in a spreadsheet, "
                f"let it calculate and save it, then run again ({exc})"
            ) from None
        raise
    return rec, settings, source


def _attempt(file: Path, read: Callable[[], Any]) -> Any:
    """`read()`, with whatever openpyxl or the scan raises for a file that is not .xlsx turned into an InputError."""
    try:
        return read()
    except InputError:
        raise
    except Exception as exc:  # openpyxl raises several kinds for a file that is not .xlsx
        raise InputError(f"{str(file)!r} cannot be read as an .xlsx workbook ({type(exc).__name__}: {str(exc)[:120]})") from None


def _bounds(reference: str) -> tuple[int, int, int, int]:
    """(first column, first row, last column, last row) of ``B2:D9`` or ``B2``, 1-based."""
    from openpyxl.utils.cell import range_boundaries

    low_col, low_row, high_col, high_row = range_boundaries(reference)
    if min(low_col, low_row) < 1:  # row 0 (B0:B5): there is no such cell
        raise ValueError(f"{reference} starts before row 1 or column A")
    return low_col, low_row, high_col, high_row


def clip_reference(reference: str, max_row: int, max_column: int) -> str:
    """`reference` (``A2:XFD1048576``) cut to the sheet's used area, so a whole-column range reads only used cells."""
    from openpyxl.utils.cell import get_column_letter, range_boundaries

    if ":" not in reference:
        return reference
    try:
        low_col, low_row, high_col, high_row = range_boundaries(reference)
    except ValueError:
        return reference  # openpyxl names the problem when it reads the range
    low_row = 1 if low_row is None else low_row  # a whole column (A:A)
    low_col = 1 if low_col is None else low_col  # a whole row (3:3)
    high_row = min(high_row or max_row, max(max_row, low_row))
    high_col = min(high_col or max_column, max(max_column, low_col))
    return f"{get_column_letter(low_col)}{low_row}:{get_column_letter(high_col)}{high_row}"


def first_uncalculated_formula(data: bytes, value: Callable[[str, int, int], Any]) -> str:
    """``Sheet!B7`` of the first formula cell with no saved value, or "" (a file written by a program, never opened).

    `value(sheet, row, column)` is the saved value of a cell (None when there is none).
    """
    import openpyxl

    formulas = openpyxl.load_workbook(io.BytesIO(data), data_only=False, keep_vba=False)
    for sheet in formulas.worksheets:
        for row in sheet.iter_rows():
            for cell in row:
                if cell.data_type == "f" and value(sheet.title, cell.row, cell.column) is None:
                    return f"{sheet.title}!{cell.coordinate}"
    return ""


def _reduction_factors(factors: Any, periods: Any, count: int) -> list[float | None]:
    """R of each oscillator, cell for cell beside the period cells; a blank cell means elastic only.

    The reduction-factor range lines up with the period range (same rows in
    the template): the k-th period cell's oscillator takes the k-th cell of
    this range. Cells beside rows without a period are not read.
    """
    if factors is None:
        return [None] * count
    what = "the oscillator reduction factors"
    start = _first_number(_cells.line(periods, "the oscillator periods"))
    cells = _cells.line(factors, what)
    found: list[float | None] = []
    for index in range(start, start + count):
        cell = cells[index] if index < len(cells) else None
        value = _cells.number(cell, f"row {index + 1} of {what}", None)
        if value is not None and not value > 0.0:
            raise InputError(
                f"row {index + 1} of {what} holds {value:g}; R = peak elastic force / yield force must be > 0 "
                "(leave the cell blank for an elastic-only oscillator)"
            )
        found.append(value)
    return found


def _first_number(cells: list[Any]) -> int:
    """Index of the first cell holding a number (blank cells and headings above it are skipped)."""
    for index, cell in enumerate(cells):
        try:
            if _cells.number(cell, "", None) is not None:
                return index
        except _cells.CellError:
            continue
    return len(cells)


def _labels(labels: Any, count: int) -> list[str]:
    if labels is None:
        return [f"Oscillator {i}" for i in range(1, count + 1)]
    cells = _cells.line(labels, "the oscillator labels")
    texts = ["" if c is None else str(c).strip() for c in cells]
    while texts and not texts[-1]:
        texts.pop()
    texts = texts[-count:] if len(texts) > count else texts  # a header label above the list is dropped
    return [texts[i] if i < len(texts) and texts[i] else f"Oscillator {i + 1}" for i in range(count)]


def _blank(cell: Any) -> bool:
    """True for an empty cell, passed alone or as a one-cell range."""
    while isinstance(cell, (list, tuple)) and len(cell) == 1:
        cell = cell[0]
    return cell is None or (isinstance(cell, str) and not cell.strip())


def _destination(book: Any, key: str) -> tuple[str, str] | None:
    """(sheet, reference) of input `key`'s defined name (workbook scope first, then each sheet's), or None."""
    for name in lookup_names(key):
        defined = book.defined_names.get(name)
        if defined is None:
            for sheet in book.worksheets:  # names scoped to a sheet
                defined = sheet.defined_names.get(name)
                if defined is not None:
                    break
        if defined is not None:
            sheet_name, reference = next(iter(defined.destinations))
            # openpyxl keeps the doubled quotes of 'O''Brien'
            return sheet_name.replace("''", "'"), reference.replace("$", "")
    return None


def _refuse_samples_below_the_range(book: Any, sheet_values: Callable[[str], SheetValues]) -> None:
    """A record longer than its named range is refused, never cut (the template holds `RECORD_ROWS` samples)."""
    found = _destination(book, "record")
    if found is None or found[0] not in book.sheetnames:
        return
    sheet_name, reference = found
    match = re.fullmatch(r"([A-Za-z]{1,3})(\d+):([A-Za-z]{1,3})(\d+)", reference)
    if match is None or match.group(1) != match.group(3):
        return
    sheet = sheet_values(sheet_name)
    column, last = match.group(1), int(match.group(4))
    if sheet.max_row <= last:
        return
    index = _column_index(column)
    below = min((row for (row, col), value in sheet.values.items() if col == index and row > last and value is not None),
                default=None)  # fmt: skip
    if below is not None:
        raise InputError(
            f"{sheet_name}!{column}{below} holds a sample below the record range {sheet_name}!{reference} "
            f"(input_record ends at row {last}; at most {last - 1:,} samples below the heading): the record "
            "would be cut. Extend the input_record name to the last sample, or pass --record SHEET!RANGE"
        )


def _column_index(letters: str) -> int:
    from openpyxl.utils.cell import column_index_from_string

    return int(column_index_from_string(letters.upper()))


def _as_text(cell: Any) -> Any:
    """A date cell as ISO text (``2026-03-01``); other cells as they are."""
    inner = cell
    while isinstance(inner, (list, tuple)) and len(inner) == 1:
        inner = inner[0]
    if isinstance(inner, datetime.datetime):
        return inner.date().isoformat()
    if isinstance(inner, datetime.date):
        return inner.isoformat()
    return cell


def _blank_range(cells: Any) -> bool:
    """True when every cell of a range is empty."""
    flat = cells if not isinstance(cells, (list, tuple)) else [c for row in cells for c in (row if isinstance(row, (list, tuple)) else [row])]
    return all(_blank(c) for c in (flat if isinstance(flat, list) else [flat]))
