"""Re-check a suite workbook: re-read its record files, recompute every block and compare.

The Audit sheet names each record's files, time step and unit and holds the
SHA-256 of each component as it was read (``Record.sha256``: samples, unit
and time step); the inputs block holds the target, damping, method, rule,
fraction, range or preset. Each file is read again and its digest compared;
when every record reads back unchanged, ``suite_content.build_suite``
recomputes the workbook, ``render`` lays it out in memory with the same
layout, and every cell of every checked block (factors, ratios, pass/fail,
each record's spectra) is compared with the stored one, numbers to
``verify.RELATIVE_TOLERANCE``, text exactly. A record file that is missing
or changed is a mismatch: the spectra cannot be rechecked without it.
"""

from __future__ import annotations

import os
from typing import Any

from groundstep.core import Record, collect_warnings

from . import layout as lay
from .render import CellRecorder, formula_fields, render_block
from .suite_content import SuiteRecord, SuiteSettings, build_suite
from .suite_sheets import SUITE_AUDIT
from .target import parameters_from_text
from .verify import BlockCheck, NotAResultWorkbook, _compare, _Names

__all__ = ["verify_suite"]


def verify_suite(book: Any, path: str | os.PathLike[str]) -> list[BlockCheck]:
    """Recompute a suite workbook already opened with openpyxl (`book`, read from `path`).

    Returns
    -------
    list of BlockCheck
        One digest check per record, then one per checked block (only when
        every record read back unchanged).

    Raises
    ------
    NotAResultWorkbook
        A stored input that cannot be read (the message names it).
    """
    names = _Names(book)
    settings = _settings(names)
    records, checks = _records(names)
    if any(not check.ok for check in checks):
        return checks
    with collect_warnings():
        report = build_suite(records, settings, command=str(names.value("command") or ""))
    addresses = formula_fields(report.layout)
    for sheet in report.layout.sheets:
        for block in sheet.blocks:
            if getattr(block, "checked", False):
                recorder = CellRecorder()
                render_block(sheet, block, report.content.get(block.key, {}), recorder, addresses)
                checks.append(_compare(book, sheet, block, recorder))
    return checks


def _settings(names: _Names) -> SuiteSettings:
    standard = str(names.value("target_standard"))
    if standard == "table":
        parameters: tuple[tuple[str, Any], ...] = (
            ("periods_table", tuple(names.numbers("target_input_period"))),
            ("sa_table", tuple(names.numbers("target_input_sa"))),
        )
    else:
        parameters = _parameters(str(names.value("target_parameters") or ""))
    low, high = _optional(names, "range_low_input"), _optional(names, "range_high_input")
    return SuiteSettings(
        target_standard=standard,
        target_parameters=parameters,
        periods=tuple(names.numbers("ratio_table_period")),
        damping=names.number("damping"),
        method=str(names.value("method")),
        spectrum=str(names.value("spectrum")),
        rule=str(names.value("rule_input")),
        fraction=_optional(names, "fraction_input"),
        period_range=None if low is None or high is None else (low, high),
        preset=str(names.value("preset") or "") or None,
        structure_period=_optional(names, "structure_period"),
        factor_limits=(names.number("factor_limit_low"), names.number("factor_limit_high")),
    )


def _parameters(text: str) -> tuple[tuple[str, Any], ...]:
    """``name=value, ...`` (values as Python literals) back into pairs."""
    try:
        return parameters_from_text(text)
    except ValueError as exc:
        raise NotAResultWorkbook(f"the target parameters on the {SUITE_AUDIT} sheet cannot be read: {exc}") from None


def _optional(names: _Names, key: str) -> float | None:
    value = names.value(key)
    if value in (None, ""):
        return None
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise NotAResultWorkbook(f"cell {lay.NAME_PREFIX}{key} should hold a number or be blank, holds {value!r}")
    return float(value)


def _records(names: _Names) -> tuple[list[SuiteRecord], list[BlockCheck]]:
    """Each record read again from its files, and one digest check per record."""
    columns = {key: names.column(f"records_input_{key}") for key in ("label", "file_x", "file_y", "dt", "unit", "sha256_x", "sha256_y")}
    records: list[SuiteRecord] = []
    checks: list[BlockCheck] = []
    for index, label in enumerate(columns["label"]):
        row = {key: values[index] for key, values in columns.items()}
        title = f"record {index + 1} ({label})"
        try:
            x = Record.from_text(str(row["file_x"]), float(row["dt"]), str(row["unit"]), name=str(label))
            y = (Record.from_text(str(row["file_y"]), float(row["dt"]), str(row["unit"]), name=str(label))
                 if row["file_y"] else None)  # fmt: skip
        except (OSError, TypeError, ValueError) as exc:
            checks.append(BlockCheck(SUITE_AUDIT, "records_input", title, False, 0,
                                     f"cannot read the record again ({exc}); its spectra cannot be rechecked"))  # fmt: skip
            continue
        stored = (str(row["sha256_x"] or ""), str(row["sha256_y"] or ""))
        found = (x.sha256(), y.sha256() if y is not None else "")
        ok = found == stored
        message = ("SHA-256 of the file(s) as read matches the Audit sheet" if ok else
                   "the file(s) changed since the workbook was written (SHA-256 differs)")  # fmt: skip
        checks.append(BlockCheck(SUITE_AUDIT, "records_input", title, ok, x.n, message))
        records.append(SuiteRecord(str(label), str(row["file_x"]), x, str(row["file_y"] or ""), y))
    return records, checks
