"""Re-check a result workbook: recompute every result block from its stored record and settings.

The record, its unit and time step, the spectrum periods and dampings, the
method, the oscillators (with their reduction factors R from the Peaks
sheet's elastic table, blank for elastic only) and the hardening ratio of the
yielding oscillators are read back through the workbook's defined names;
``content.build_report`` recomputes the content, ``render`` lays it
out in memory with the same layout, and every cell of every checked block
(the yielding table and the Summary's yielding line among them) is
compared with the stored one (numbers to a relative tolerance, text and
formulas exactly). The record's SHA-256 is compared with the one on the
Audit sheet.

A processed record: the record as read is the Record sheet's ``raw_table``;
the processing steps are read back from the Audit sheet's lines
(``ProcessingStep.describe()`` text), replayed on it with
``groundstep.core.replay_history`` and the result compared with the stored
processed samples; the report is then recomputed with the same processing,
so every block computed from the processed record is checked too.
"""

from __future__ import annotations

import ast
import math
import os
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from groundstep.core import ProcessingStep, Record, collect_warnings, replay_history
from groundstep.core.defaults import DEFAULT_DAMPING

from . import layout as lay
from . import sheets
from .content import PROJECT_KEYS, Oscillator, ReportSettings, build_report
from .guard import UnsafeWorkbook, check_package
from .render import CellRecorder, block_cells, column_letter, formula_fields, render_block
from .target import parameters_from_text

__all__ = ["BlockCheck", "NotAResultWorkbook", "RELATIVE_TOLERANCE", "verify_workbook"]

#: Relative tolerance for recomputed numbers. The workbook stores each float
#: exactly (17 digits); the compiled spectrum kernel may sum in another order
#: on another machine, which moves the last few of 16 digits only.
RELATIVE_TOLERANCE = 1e-9


class NotAResultWorkbook(ValueError):
    """The file cannot be read as a groundstep result workbook."""


@dataclass(frozen=True, slots=True)
class BlockCheck:
    """Outcome for one block: ``ok`` is False on any mismatch."""

    sheet: str
    block: str
    title: str
    ok: bool
    cells: int
    message: str

    def line(self) -> str:
        """One report line."""
        return f"{'match   ' if self.ok else 'MISMATCH'}  {self.sheet} / {self.title}: {self.message}"


def verify_workbook(path: str | os.PathLike[str]) -> list[BlockCheck]:
    """Recompute every result block of a workbook and compare.

    Parameters
    ----------
    path : path-like
        A workbook written by ``groundstep`` (``demo``, ``fill`` or
        ``spectrum --format xlsx``); a suite workbook (``groundstep
        suite``) is handed to ``suite_verify.verify_suite``.

    Returns
    -------
    list of BlockCheck
        The record digest first, then one entry per checked block, then the
        spreadsheet's own Verification result when the file carries
        calculated values.

    Raises
    ------
    NotAResultWorkbook
        Not an .xlsx package, or no groundstep format mark on the Audit
        sheet, or a stored record or setting that cannot be read (the
        message names it).
    """
    import openpyxl

    try:
        check_package(path)
    except UnsafeWorkbook as exc:
        raise NotAResultWorkbook(str(exc)) from None
    try:
        book = openpyxl.load_workbook(path, data_only=False, keep_vba=False)
    except Exception as exc:  # noqa: BLE001 - openpyxl and the XML parser raise many kinds for a bad package
        raise NotAResultWorkbook(f"{os.fspath(path)!r} cannot be opened as an .xlsx workbook ({exc})") from None
    reader = _Names(book)
    mark = reader.value("format", required=False)
    from .suite_sheets import SUITE_FORMAT_ID  # the suite workbook's own format (groundstep suite)

    if mark == SUITE_FORMAT_ID:
        from .suite_verify import verify_suite

        return verify_suite(book, path)
    if mark != lay.FORMAT_ID:
        raise NotAResultWorkbook(
            f"{os.fspath(path)!r} is not a groundstep result workbook (no {lay.NAME_PREFIX}format "
            f"cell holding {lay.FORMAT_ID!r}; found {mark!r})"
        )
    record, settings, audit = _read_inputs(reader)
    checks: list[BlockCheck | None] = [_check_digest(record, audit["record_sha256"])]
    steps = _read_steps(reader)
    if steps:
        checks.append(_check_replay(record, steps, reader))
        settings = _with_processing(settings, steps)
    with collect_warnings():
        report = build_report(record, settings, command=audit["command"], source=audit["record_source"])
    addresses = formula_fields(report.layout)
    for sheet in report.layout.sheets:
        for block in sheet.blocks:
            if not getattr(block, "checked", False):
                continue
            recorder = CellRecorder()
            render_block(sheet, block, report.content.get(block.key, {}), recorder, addresses)
            checks.append(_compare(book, sheet, block, recorder))
    checks.append(_spreadsheet_result(path))
    return [c for c in checks if c is not None]


class _Names:
    """Read values through the workbook's ``gs_`` defined names."""

    def __init__(self, book) -> None:
        self.book = book

    def _cells(self, key: str):
        defined = self.book.defined_names.get(lay.NAME_PREFIX + key)
        if defined is None:
            return None
        sheet, reference = next(iter(defined.destinations))
        sheet = sheet.replace("''", "'")  # openpyxl keeps the doubled quotes of 'O''Brien'
        if sheet not in self.book.sheetnames:
            raise NotAResultWorkbook(f"name {lay.NAME_PREFIX}{key} points to a missing sheet {sheet!r}")
        return self.book[sheet], reference.replace("$", ""), sheet

    def value(self, key: str, *, required: bool = True) -> Any:
        found = self._cells(key)
        if found is None:
            if required:
                raise NotAResultWorkbook(f"the workbook has no cell named {lay.NAME_PREFIX}{key}")
            return None
        sheet, reference, _ = found
        return sheet[reference].value

    def column(self, key: str, *, required: bool = True) -> list[Any]:
        found = self._cells(key)
        if found is None:
            if required:
                raise NotAResultWorkbook(f"the workbook has no range named {lay.NAME_PREFIX}{key}")
            return []
        sheet, reference, _ = found
        return [row[0].value for row in sheet[reference]]

    def number(self, key: str) -> float:
        value = self.value(key)
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise NotAResultWorkbook(f"cell {lay.NAME_PREFIX}{key} should hold a number, holds {value!r}")
        return float(value)

    def numbers(self, key: str, *, required: bool = True) -> list[float]:
        values = self.column(key, required=required)
        for index, value in enumerate(values, start=1):
            if isinstance(value, bool) or not isinstance(value, (int, float)):
                raise NotAResultWorkbook(f"range {lay.NAME_PREFIX}{key} row {index} should hold a number, holds {value!r}")
        return [float(v) for v in values]


def _read_inputs(names: _Names) -> tuple[Record, ReportSettings, dict[str, str]]:
    unit = names.value("record_unit")
    # a processed workbook keeps the record as read in its own table; the analysed one is recomputed
    samples = names.numbers("raw_table_accel", required=False) or names.numbers("record_table_accel")
    try:
        record = Record(np.asarray(samples), names.number("dt"), unit, name=names.value("record_name") or "")
    except (TypeError, ValueError) as exc:
        raise NotAResultWorkbook(f"the stored record cannot be read: {exc}") from None
    method: Any = names.value("method")
    if method == "newmark":
        method = (names.number("beta"), names.number("gamma"))
    ratio = names.value("max_step_ratio")
    try:
        dampings = tuple(float(text) for text in str(names.value("dampings")).split(","))
    except ValueError:
        raise NotAResultWorkbook(f"cell {lay.NAME_PREFIX}dampings should list numbers, holds {names.value('dampings')!r}") from None
    labels = names.column("peaks_table_label", required=False)
    periods = names.numbers("peaks_table_period", required=False)
    oscillator_dampings = names.numbers("peaks_table_damping", required=False)
    factors = _optional_numbers(names, "peaks_table_reduction_factor", len(periods))
    hardening = names.value("hardening", required=False)
    if hardening in (None, ""):
        hardening = 0.0
    elif isinstance(hardening, bool) or not isinstance(hardening, (int, float)):
        raise NotAResultWorkbook(f"cell {lay.NAME_PREFIX}hardening should hold a number, holds {hardening!r}")
    settings = ReportSettings(
        periods=tuple(names.numbers("spectra_table_period")),
        dampings=dampings,
        method=method,
        max_step_ratio=None if ratio in (None, "") else float(ratio),
        oscillators=tuple(
            Oscillator("" if label is None else str(label), p, d, r)
            for label, p, d, r in zip(labels, periods, oscillator_dampings, factors)
        ),
        verification_period=names.number("verification_period"),
        verification_damping=names.number("verification_damping"),
        project=tuple((key, names.value(key) or "") for key in PROJECT_KEYS),
        hardening=float(hardening),
        ductilities=_listed_numbers(names, "ductilities"),
        yield_periods=tuple(names.numbers("ductility_table_period", required=False)),
        yield_damping=names.number("yield_damping") if names.value("yield_damping", required=False) is not None
        else DEFAULT_DAMPING,
        **_read_target(names),
    )
    audit = {key: str(names.value(key, required=False) or "") for key in ("record_sha256", "command", "record_source")}
    return record, settings, audit


def _read_target(names: _Names) -> dict[str, Any]:
    """The target spectrum's standard and parameters from the Audit sheet (a table from its target table)."""
    standard = names.value("target_standard", required=False)
    if standard in (None, ""):
        return {}
    if str(standard) == "table":
        parameters: tuple[tuple[str, Any], ...] = (
            ("periods_table", tuple(names.numbers("target_input_period"))),
            ("sa_table", tuple(names.numbers("target_input_sa"))),
        )
    else:
        try:
            parameters = parameters_from_text(str(names.value("target_parameters") or ""))
        except ValueError as exc:
            raise NotAResultWorkbook(f"cell {lay.NAME_PREFIX}target_parameters on the {sheets.AUDIT} sheet: {exc}") from None
    return {"target_standard": str(standard), "target_parameters": parameters}


def _listed_numbers(names: _Names, key: str) -> tuple[float, ...]:
    """Numbers listed in one text cell (``2.0, 4.0``); empty when the workbook lacks the cell."""
    text = names.value(key, required=False)
    if text in (None, ""):
        return ()
    try:
        return tuple(float(part) for part in str(text).split(","))
    except ValueError:
        raise NotAResultWorkbook(f"cell {lay.NAME_PREFIX}{key} should list numbers, holds {text!r}") from None


def _read_steps(names: _Names) -> tuple[ProcessingStep, ...]:
    """The processing steps of the Audit sheet, one ``operation(name=value, ...) [library]`` line each."""
    return tuple(_parse_step(str(line), index) for index, line in enumerate(names.column("processing_table_step", required=False)))


def _parse_step(text: str, index: int) -> ProcessingStep:
    """A `ProcessingStep` from its ``describe()`` line; arguments must be Python literals."""
    call, _, library = text.strip().partition(" [")
    try:
        tree = ast.parse(call, mode="eval").body
        if not isinstance(tree, ast.Call) or not isinstance(tree.func, ast.Name) or tree.args:
            raise ValueError("not operation(name=value, ...)")
        parameters = tuple((str(k.arg), ast.literal_eval(k.value)) for k in tree.keywords)
    except (SyntaxError, ValueError) as exc:
        raise NotAResultWorkbook(
            f"processing step {index + 1} on the {sheets.AUDIT} sheet cannot be read ({text!r}: {exc})"
        ) from None
    return ProcessingStep(tree.func.id, parameters, library[:-1] if library.endswith("]") else library)


def _check_replay(record: Record, steps: tuple[ProcessingStep, ...], names: _Names) -> BlockCheck:
    """Replay the steps on the record as read and compare with the stored processed samples."""
    try:
        with collect_warnings():  # another library version is reported by the comparison itself
            replayed = replay_history(record, steps).accel_in(record.unit)
    except (TypeError, ValueError) as exc:
        return BlockCheck(sheets.RECORD, "processing", "processing replay", False, 0, f"the replay failed: {exc}")
    stored = np.asarray(names.numbers("record_table_accel"))
    what = f"{len(steps)} processing step(s) replayed on the record as read"
    if stored.shape != replayed.shape:
        return BlockCheck(sheets.RECORD, "processing", "processing replay", False, stored.size,
                          f"{what} give {replayed.size} samples, the sheet holds {stored.size}")  # fmt: skip
    scale = float(np.max(np.abs(replayed), initial=0.0))
    bad = np.flatnonzero(~np.isclose(stored, replayed, rtol=RELATIVE_TOLERANCE, atol=1e-12 * scale))
    if bad.size:
        first = int(bad[0])
        return BlockCheck(
            sheets.RECORD, "processing", "processing replay", False, stored.size,
            f"{what}: {bad.size} of {stored.size} samples differ; first: row {first + 1} holds {stored[first]!r}, "
            f"replayed {replayed[first]!r}",
        )  # fmt: skip
    return BlockCheck(sheets.RECORD, "processing", "processing replay", True, stored.size,
                      f"{what} match the {stored.size} processed samples")  # fmt: skip


def _with_processing(settings: ReportSettings, steps: tuple[ProcessingStep, ...]) -> ReportSettings:
    """`settings` with the processing the steps describe (a step the settings cannot express is
    left to the block comparison, which then reports the difference)."""
    changes: dict[str, Any] = {}
    for step in steps:
        arguments = dict(step.parameters)
        if step.operation == "baseline_correct":
            changes["baseline_order"] = arguments.get("order")
        elif step.operation == "bandpass":
            changes["low_hz"], changes["high_hz"] = arguments.get("low_hz"), arguments.get("high_hz")
    return replace(settings, **changes)


def _optional_numbers(names: _Names, key: str, count: int) -> list[float | None]:
    """A column whose blank cells mean "not given" (None); `count` Nones when the workbook lacks it."""
    values = names.column(key, required=False) or [None] * count
    found: list[float | None] = []
    for index, value in enumerate(values, start=1):
        if value in (None, ""):
            found.append(None)
        elif isinstance(value, bool) or not isinstance(value, (int, float)):
            raise NotAResultWorkbook(f"range {lay.NAME_PREFIX}{key} row {index} should hold a number or be blank, holds {value!r}")
        else:
            found.append(float(value))
    return found


def _check_digest(record: Record, stored: str) -> BlockCheck:
    digest = record.sha256()
    ok = digest == stored
    message = (
        f"SHA-256 of the stored samples, unit and time step matches the Audit sheet ({digest[:16]}...)"
        if ok
        else f"SHA-256 of the stored samples is {digest[:16]}..., the Audit sheet says {stored[:16] or '(blank)'}..."
    )
    return BlockCheck(sheets.RECORD, "record_sha256", "record digest", ok, record.n, message)


def _compare(book, sheet: lay.Sheet, block, recorder: CellRecorder) -> BlockCheck:
    title = block.title
    if sheet.name not in book.sheetnames:
        return BlockCheck(sheet.name, block.key, title, False, 0, f"sheet {sheet.name!r} is missing")
    stored_sheet = book[sheet.name]
    positions = block_cells(sheet, block)
    stored_values = [recorder.cells.get((sheet.name, *p)) for p in positions]
    scale = max((abs(float(v)) for v in stored_values if isinstance(v, (int, float))), default=0.0)
    bad: list[str] = []
    for row, column in positions:
        expected = recorder.cells.get((sheet.name, row, column))
        found = stored_sheet.cell(row=row, column=column).value
        if not _same(found, expected, scale):
            bad.append(f"{column_letter(column)}{row} holds {found!r}, recomputed {expected!r}")
    if bad:
        return BlockCheck(
            sheet.name, block.key, title, False, len(positions),
            f"{len(bad)} of {len(positions)} cells differ; first: {bad[0]}",
        )  # fmt: skip
    return BlockCheck(sheet.name, block.key, title, True, len(positions), f"{len(positions)} cells match")


def _is_number(value: Any) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool)


def _same(found: Any, expected: Any, scale: float) -> bool:
    if expected in (None, "") or found in (None, ""):
        return expected in (None, "") and found in (None, "")
    if _is_number(expected) and _is_number(found):
        if isinstance(expected, int) and isinstance(found, int):
            return found == expected
        # relative to the value, with a floor of 1e-12 of the block's largest value for entries near 0
        return math.isclose(found, expected, rel_tol=RELATIVE_TOLERANCE, abs_tol=1e-12 * scale)
    return str(found) == str(expected)


def _spreadsheet_result(path) -> BlockCheck | None:
    """The Verification sheet's own pass/fail, when a spreadsheet has calculated and saved it."""
    import openpyxl

    book = openpyxl.load_workbook(path, data_only=True)
    names = _Names(book)
    status = names.value("verification_overall", required=False)
    if status is None:
        return BlockCheck(
            sheets.VERIFICATION, "verification_overall", "formula replay", True, 0,
            "formulas not yet calculated in this file (open it in a spreadsheet to see pass/fail)",
        )  # fmt: skip
    ok = status == "pass"
    return BlockCheck(
        sheets.VERIFICATION, "verification_overall", "formula replay", ok, 1,
        f"the spreadsheet's last calculation says {status!r}",
    )  # fmt: skip


