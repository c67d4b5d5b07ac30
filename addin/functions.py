"""Worksheet functions: the groundstep engine typed into a calculation sheet.

Point xlwings at this module (``UDF Modules`` = ``groundstep.addin.functions``,
as the templates' ``xlwings.conf`` sheet does) and import the functions; they
then work like built-in functions in desktop Excel on Windows.

Every function takes its arguments in one order: the record (acceleration
range, time step [s], record unit), then the oscillator (period or periods,
damping or dampings, strength where it applies), then options (which
quantity, method, output units, headers). Accelerations come back in the
record's unit and displacements and velocities in the length unit that
matches it (m for g and m/s2, cm for cm/s2 and gal, mm for mm/s2, in for
in/s2, ft for ft/s2), unless the output-unit options say otherwise. Times
are in seconds.

A problem with the input, or any failure, comes back as one cell of text
starting with `ERROR_PREFIX`, never as an exception. Sub-stepping of the
record step (see ``groundstep.core.linear_response``) is silent here;
``STEP_ABOUT`` and the ``"substeps"`` quantity of ``STEP_PEAK`` report it.

The names ``STEP_MEASURES``, ``STEP_DESIGN_SPECTRUM``, ``STEP_SCALE`` and
``STEP_ROTD`` are reserved for a later ground-motion toolkit.
"""

from __future__ import annotations

import functools
import math
import threading
import warnings
from collections.abc import Callable
from typing import Any, NamedTuple

import numpy as np
import xlwings as xw

from groundstep.core import (
    ConvergenceError,
    ConvergenceWarning,
    Record,
    SubstepWarning,
    __version__,
    ductility_spectrum,
    elastic_spectrum,
    inelastic_response,
    linear_response,
)
from groundstep.core._methods import Method, resolve_method, substep_counts
from groundstep.core._units import (
    ACCELERATION_UNITS,
    LENGTH_UNITS,
    MATCHING_LENGTH_UNIT,
    VELOCITY_UNITS,
)
from groundstep.core.linear import DEFAULT_STEP_RATIO

from . import _cache, _cells
from ._cells import CellError
from .layout import CAUTION

__all__ = [
    "CATEGORY",
    "CAUTION",
    "ERROR_PREFIX",
    "STEP_ABOUT",
    "STEP_DUCTILITY",
    "STEP_DUCTILITY_SPECTRUM",
    "STEP_HISTORY",
    "STEP_PEAK",
    "STEP_SPECTRUM",
]

#: Category the functions are listed under in the spreadsheet's function wizard.
CATEGORY = "groundstep"
#: Every error message returned to a cell starts with this text.
ERROR_PREFIX = "STEP error: "
# CAUTION (shown by STEP_ABOUT and on every template) is the result workbook's text: one source.

# Sub-stepping is reported through STEP_ABOUT and the "substeps" quantity, so the
# core's SubstepWarning is silenced around each core call (see `_quiet`). Warning
# filters are process-wide, so those calls take turns under this lock.
_WARNINGS_LOCK = threading.Lock()

Cell = Any  # a value as the spreadsheet passes it: number, text, bool, None or nested lists

_DOC = {
    "accel": "Ground acceleration: one column (or row) of cells; text headers above and blank cells below are skipped.",
    "dt": "Time step of the record [s].",
    "unit": "Unit of the acceleration cells: g, m/s2, cm/s2, gal, mm/s2, in/s2 or ft/s2.",
    "period": "Natural period T of the oscillator [s]; 0 is a rigid oscillator.",
    "periods": "Periods T [s]: one column or row of cells; they become the rows of the table.",
    "damping": "Ratio of critical damping, e.g. 0.05 or 5% (not 5). Omitted: 0.05.",
    "dampings": "Ratios of critical damping: one cell, row or column; they become the columns of the table. Omitted: 0.05.",
    "quantity": "SD, SV, SA, PSV, PSA (default), SD time, SV time or SA time [s] (time of the peak), or substeps.",
    "spectrum_quantity": "SD, SV, SA, PSV or PSA (default).",
    "method": "average (default), linear or exact; or a two-cell range holding Newmark beta and gamma.",
    "accel_unit_out": "Unit of returned accelerations: g, m/s2, cm/s2, gal, mm/s2, in/s2 or ft/s2. Blank: the record's unit.",
    "length_unit_out": "Length unit of returned displacements and velocities (m, cm, mm, in, ft). Blank: matches the record's unit.",
    "headers": "TRUE adds a header row (and for tables a header column) with names and units. Default FALSE.",
    "yield_coefficient": "Yield strength over weight, Fy/(m g). Give this or reduction_factor.",
    "reduction_factor": "Strength reduction factor R = elastic strength / yield strength. Give this or yield_coefficient.",
    "hardening": "Post-yield stiffness over initial stiffness, in [0, 1). Default 0 (elastic-perfectly-plastic).",
    "ductility_quantity": (
        "ductility (default), peak displacement, yield displacement, residual displacement, hysteretic energy, "
        "yield coefficient, reduction factor, peak displacement time [s], yield excursions or substeps."
    ),
    "ductilities": "Target ductilities (>= 1): one column or row; they become the columns of the table.",
    "ductility_spectrum_quantity": (
        "yield coefficient (default), reduction factor, yield PSA, peak displacement or achieved ductility. "
        "An unreachable target shows 'not reached'."
    ),
    "inelastic_method": "average (default) or linear; or a two-cell range holding Newmark beta and gamma.",
    "about_dt": "Optional time step [s]: with a period, reports the sub-steps used.",
    "about_unit": "Optional record unit: reports the units results come back in.",
    "about_period": "Optional period [s]: with a time step, reports the sub-steps used.",
}


def _worksheet(function: Callable[..., Any]) -> Callable[..., Any]:
    """Return failures as one cell of text starting with ERROR_PREFIX."""

    @functools.wraps(function)
    def guarded(*args: Any, **kwargs: Any) -> Any:
        try:
            return function(*args, **kwargs)
        except (CellError, ValueError, TypeError, ConvergenceError) as exc:
            return f"{ERROR_PREFIX}{exc}"
        except Exception as exc:  # noqa: BLE001 - a cell must never see a traceback
            return f"{ERROR_PREFIX}unexpected {type(exc).__name__}: {exc} (please report this)"

    return guarded


@xw.func(category=CATEGORY)
@xw.arg("accel", ndim=2, err_to_str=True, doc=_DOC["accel"])
@xw.arg("dt", doc=_DOC["dt"])
@xw.arg("unit", doc=_DOC["unit"])
@xw.arg("period", doc=_DOC["period"])
@xw.arg("damping", doc=_DOC["damping"])
@xw.arg("quantity", doc=_DOC["quantity"])
@xw.arg("method", doc=_DOC["method"])
@xw.arg("accel_unit_out", doc=_DOC["accel_unit_out"])
@xw.arg("length_unit_out", doc=_DOC["length_unit_out"])
@_worksheet
def STEP_PEAK(
    accel: Cell,
    dt: Cell,
    unit: Cell,
    period: Cell,
    damping: Cell = 0.05,
    quantity: Cell = "PSA",
    method: Cell = "average",
    accel_unit_out: Cell = None,
    length_unit_out: Cell = None,
) -> Any:
    """Peak response of one linear oscillator: SD, SV, SA, PSV, PSA, or the time of a peak [s]."""
    record, key = _record(accel, dt, unit)
    name, attribute, kind = _choice(quantity, _PEAK_QUANTITIES, "the quantity")
    units = _units(record, accel_unit_out, length_unit_out)
    oscillator = (_cells.nonnegative(period, "the period"), _cells.damping(damping, "the damping"))
    resolved = _method(method)
    peaks = _cache.RESULTS.get_or_compute(
        ("peak", key, oscillator, _method_key(resolved)), lambda: _summary(_quiet(linear_response, record, *oscillator, resolved), _PEAK_QUANTITIES)
    )
    return _to_unit(peaks[attribute], kind, units)


@xw.func(category=CATEGORY)
@xw.arg("accel", ndim=2, err_to_str=True, doc=_DOC["accel"])
@xw.arg("dt", doc=_DOC["dt"])
@xw.arg("unit", doc=_DOC["unit"])
@xw.arg("periods", ndim=2, err_to_str=True, doc=_DOC["periods"])
@xw.arg("dampings", ndim=2, err_to_str=True, doc=_DOC["dampings"])
@xw.arg("quantity", doc=_DOC["spectrum_quantity"])
@xw.arg("method", doc=_DOC["method"])
@xw.arg("accel_unit_out", doc=_DOC["accel_unit_out"])
@xw.arg("length_unit_out", doc=_DOC["length_unit_out"])
@xw.arg("headers", doc=_DOC["headers"])
@_worksheet
def STEP_SPECTRUM(
    accel: Cell,
    dt: Cell,
    unit: Cell,
    periods: Cell,
    dampings: Cell = 0.05,
    quantity: Cell = "PSA",
    method: Cell = "average",
    accel_unit_out: Cell = None,
    length_unit_out: Cell = None,
    headers: Cell = False,
) -> Any:
    """Elastic response spectrum table (spills): one row per period, one column per damping."""
    record, key = _record(accel, dt, unit)
    name, attribute, kind = _choice(quantity, _SPECTRUM_QUANTITIES, "the quantity")
    units = _units(record, accel_unit_out, length_unit_out)
    grid = (_cells.periods(periods, "the periods range"), _cells.dampings(dampings, "the dampings range"))
    resolved = _method(method)
    spectrum = _cache.RESULTS.get_or_compute(
        ("spectrum", key, *(tuple(values.tolist()) for values in grid), _method_key(resolved)),
        lambda: _quiet(elastic_spectrum, record, *grid, resolved),
    )
    table = _to_unit(getattr(spectrum, attribute), kind, units).T
    corner = f"{_label(name, kind, units)}: T [s] down, damping across"
    return _table(table, grid[0], grid[1], corner, _cells.flag(headers, "the headers option", False))


@xw.func(category=CATEGORY)
@xw.arg("accel", ndim=2, err_to_str=True, doc=_DOC["accel"])
@xw.arg("dt", doc=_DOC["dt"])
@xw.arg("unit", doc=_DOC["unit"])
@xw.arg("period", doc=_DOC["period"])
@xw.arg("damping", doc=_DOC["damping"])
@xw.arg("method", doc=_DOC["method"])
@xw.arg("accel_unit_out", doc=_DOC["accel_unit_out"])
@xw.arg("length_unit_out", doc=_DOC["length_unit_out"])
@xw.arg("headers", doc=_DOC["headers"])
@_worksheet
def STEP_HISTORY(
    accel: Cell,
    dt: Cell,
    unit: Cell,
    period: Cell,
    damping: Cell = 0.05,
    method: Cell = "average",
    accel_unit_out: Cell = None,
    length_unit_out: Cell = None,
    headers: Cell = False,
) -> Any:
    """Response history (spills): time [s], relative displacement, relative velocity, total acceleration."""
    record, key = _record(accel, dt, unit)
    units = _units(record, accel_unit_out, length_unit_out)
    oscillator = (_cells.nonnegative(period, "the period"), _cells.damping(damping, "the damping"))
    resolved = _method(method)
    response = _cache.HISTORIES.get_or_compute(
        ("history", key, oscillator, _method_key(resolved)),
        lambda: _quiet(linear_response, record, *oscillator, resolved),
    )
    columns = np.column_stack(
        [
            response.time,
            _to_unit(response.displacement, "length", units),
            _to_unit(response.velocity, "velocity", units),
            _to_unit(response.total_acceleration, "acceleration", units),
        ]
    ).tolist()
    if not _cells.flag(headers, "the headers option", False):
        return columns
    names = [("relative displacement", "length"), ("relative velocity", "velocity"), ("total acceleration", "acceleration")]
    return [["time [s]", *(_label(name, kind, units) for name, kind in names)], *columns]


@xw.func(category=CATEGORY)
@xw.arg("accel", ndim=2, err_to_str=True, doc=_DOC["accel"])
@xw.arg("dt", doc=_DOC["dt"])
@xw.arg("unit", doc=_DOC["unit"])
@xw.arg("period", doc=_DOC["period"])
@xw.arg("damping", doc=_DOC["damping"])
@xw.arg("yield_coefficient", doc=_DOC["yield_coefficient"])
@xw.arg("reduction_factor", doc=_DOC["reduction_factor"])
@xw.arg("hardening", doc=_DOC["hardening"])
@xw.arg("quantity", doc=_DOC["ductility_quantity"])
@xw.arg("method", doc=_DOC["inelastic_method"])
@xw.arg("accel_unit_out", doc=_DOC["accel_unit_out"])
@xw.arg("length_unit_out", doc=_DOC["length_unit_out"])
@_worksheet
def STEP_DUCTILITY(
    accel: Cell,
    dt: Cell,
    unit: Cell,
    period: Cell,
    damping: Cell = 0.05,
    yield_coefficient: Cell = None,
    reduction_factor: Cell = None,
    hardening: Cell = 0.0,
    quantity: Cell = "ductility",
    method: Cell = "average",
    accel_unit_out: Cell = None,
    length_unit_out: Cell = None,
) -> Any:
    """Ductility demand (or another chosen result) of a yielding oscillator of given strength."""
    record, key = _record(accel, dt, unit)
    name, attribute, kind = _choice(quantity, _DUCTILITY_QUANTITIES, "the quantity")
    units = _units(record, accel_unit_out, length_unit_out)
    oscillator = (_cells.nonnegative(period, "the period"), _cells.damping(damping, "the damping"))
    strength = _strength(yield_coefficient, reduction_factor)
    slope = _cells.nonnegative(hardening, "the hardening", 0.0)
    resolved = _method(method)
    result = _cache.RESULTS.get_or_compute(
        ("ductility", key, oscillator, strength, slope, _method_key(resolved)),
        lambda: _summary(
            _quiet(inelastic_response, record, *oscillator, hardening=slope, method=resolved, **strength._asdict()),
            _DUCTILITY_QUANTITIES,
        ),
    )
    return _to_unit(result[attribute], kind, units)


@xw.func(category=CATEGORY)
@xw.arg("accel", ndim=2, err_to_str=True, doc=_DOC["accel"])
@xw.arg("dt", doc=_DOC["dt"])
@xw.arg("unit", doc=_DOC["unit"])
@xw.arg("periods", ndim=2, err_to_str=True, doc=_DOC["periods"])
@xw.arg("ductilities", ndim=2, err_to_str=True, doc=_DOC["ductilities"])
@xw.arg("damping", doc=_DOC["damping"])
@xw.arg("hardening", doc=_DOC["hardening"])
@xw.arg("quantity", doc=_DOC["ductility_spectrum_quantity"])
@xw.arg("method", doc=_DOC["inelastic_method"])
@xw.arg("accel_unit_out", doc=_DOC["accel_unit_out"])
@xw.arg("length_unit_out", doc=_DOC["length_unit_out"])
@xw.arg("headers", doc=_DOC["headers"])
@_worksheet
def STEP_DUCTILITY_SPECTRUM(
    accel: Cell,
    dt: Cell,
    unit: Cell,
    periods: Cell,
    ductilities: Cell,
    damping: Cell = 0.05,
    hardening: Cell = 0.0,
    quantity: Cell = "yield coefficient",
    method: Cell = "average",
    accel_unit_out: Cell = None,
    length_unit_out: Cell = None,
    headers: Cell = False,
) -> Any:
    """Constant-ductility spectrum table (spills): one row per period, one column per ductility."""
    record, key = _record(accel, dt, unit)
    name, attribute, kind = _choice(quantity, _DUCTILITY_SPECTRUM_QUANTITIES, "the quantity")
    units = _units(record, accel_unit_out, length_unit_out)
    grid = (_cells.periods(periods, "the periods range"), _cells.ductilities(ductilities, "the ductilities range"))
    ratio = _cells.damping(damping, "the damping")
    slope = _cells.nonnegative(hardening, "the hardening", 0.0)
    resolved = _method(method)
    spectrum = _cache.RESULTS.get_or_compute(
        ("ductility spectrum", key, *(tuple(values.tolist()) for values in grid), ratio, slope, _method_key(resolved)),
        # unreached targets come back as NaN and are shown as text, so the core's RuntimeWarning is not needed
        lambda: _quiet(ductility_spectrum, record, *grid, ratio, slope, method=resolved, ignore=(RuntimeWarning,)),
    )
    table = _to_unit(getattr(spectrum, attribute), kind, units).T
    corner = f"{_label(name, kind, units)}: T [s] down, ductility across"
    missing = "n/a" if attribute == "achieved_ductility" else "not reached"
    return _table(table, grid[0], grid[1], corner, _cells.flag(headers, "the headers option", False), missing)


@xw.func(category=CATEGORY)
@xw.arg("dt", doc=_DOC["about_dt"])
@xw.arg("unit", doc=_DOC["about_unit"])
@xw.arg("period", doc=_DOC["about_period"])
@xw.arg("method", doc=_DOC["method"])
@xw.arg("accel_unit_out", doc=_DOC["accel_unit_out"])
@xw.arg("length_unit_out", doc=_DOC["length_unit_out"])
@_worksheet
def STEP_ABOUT(
    dt: Cell = None,
    unit: Cell = None,
    period: Cell = None,
    method: Cell = "average",
    accel_unit_out: Cell = None,
    length_unit_out: Cell = None,
) -> Any:
    """Version, method settings, output units, sub-steps and the caution text (spills two columns)."""
    resolved = _method(method)
    step = _cells.number(dt, "the time step", None)
    oscillator = _cells.nonnegative(period, "the period", None)
    rows: list[list[Any]] = [
        ["groundstep version", __version__],
        ["method", resolved.describe()],
        ["beta", _or_text(resolved.beta, "not used")],
        ["gamma", _or_text(resolved.gamma, "not used")],
        ["largest step ratio dt/T", DEFAULT_STEP_RATIO if resolved.is_newmark else "not used"],
        ["stability limit dt/T", _or_text(resolved.stability_limit, "none")],
    ]
    if step is not None and oscillator is not None:
        count = int(substep_counts(_cells.positive(step, "the time step", "s"), [oscillator], resolved, DEFAULT_STEP_RATIO)[0])
        rows.append([f"sub-steps per record step at T = {oscillator:g} s", count])
    else:
        rows.append(["sub-steps per record step", "give a time step and a period"])
    if _cells.text(unit, "the record unit", None) is not None:
        record_unit = _cells.unit(unit, "the record unit", ACCELERATION_UNITS)
        units = _output_units(record_unit, accel_unit_out, length_unit_out)
        rows += [
            ["record unit", record_unit],
            ["accelerations returned in", units.accel],
            ["displacements returned in", units.length],
            ["velocities returned in", f"{units.length}/s"],
        ]
    else:
        rows += [[label, "give the record unit"] for label in _UNIT_ROWS]
    rows += [["error prefix", ERROR_PREFIX], ["caution", CAUTION]]
    return rows


# ----------------------------------------------------------------------------- helpers


class _Units(NamedTuple):
    accel: str
    length: str


class _Strength(NamedTuple):
    yield_coefficient: float | None
    reduction_factor: float | None


_UNIT_ROWS = ("record unit", "accelerations returned in", "displacements returned in", "velocities returned in")

# quantity as typed (matched ignoring case, "_" and "-") -> (display name, result attribute, kind of unit)
_PEAK_QUANTITIES = {
    "SD": ("SD", "peak_displacement", "length"),
    "SV": ("SV", "peak_velocity", "velocity"),
    "SA": ("SA", "peak_total_acceleration", "acceleration"),
    "PSV": ("PSV", "pseudo_velocity", "velocity"),
    "PSA": ("PSA", "pseudo_acceleration", "acceleration"),
    "SD time": ("time of SD", "time_of_peak_displacement", "time"),
    "SV time": ("time of SV", "time_of_peak_velocity", "time"),
    "SA time": ("time of SA", "time_of_peak_total_acceleration", "time"),
    "substeps": ("sub-steps", "substeps", "count"),
}
_SPECTRUM_QUANTITIES = {
    "SD": ("SD", "sd", "length"),
    "SV": ("SV", "sv", "velocity"),
    "SA": ("SA", "sa", "acceleration"),
    "PSV": ("PSV", "psv", "velocity"),
    "PSA": ("PSA", "psa", "acceleration"),
}
_DUCTILITY_QUANTITIES = {
    "ductility": ("ductility", "ductility", "ratio"),
    "peak displacement": ("peak displacement", "peak_displacement", "length"),
    "yield displacement": ("yield displacement", "yield_displacement", "length"),
    "residual displacement": ("residual displacement", "residual_displacement", "length"),
    "hysteretic energy": ("hysteretic energy per unit mass", "hysteretic_energy", "energy"),
    "yield coefficient": ("yield coefficient", "yield_coefficient", "ratio"),
    "reduction factor": ("reduction factor", "reduction_factor", "ratio"),
    "peak displacement time": ("time of peak displacement", "time_of_peak_displacement", "time"),
    "yield excursions": ("yield excursions", "yield_excursions", "count"),
    "substeps": ("sub-steps", "substeps", "count"),
}
_DUCTILITY_SPECTRUM_QUANTITIES = {
    "yield coefficient": ("yield coefficient", "yield_coefficient", "ratio"),
    "reduction factor": ("reduction factor", "reduction_factor", "ratio"),
    "yield PSA": ("yield PSA", "yield_pseudo_acceleration", "acceleration"),
    "peak displacement": ("peak displacement", "peak_displacement", "length"),
    "achieved ductility": ("achieved ductility", "achieved_ductility", "ratio"),
}


def _record(accel: Cell, dt: Cell, unit: Cell) -> tuple[Record, tuple[Any, ...]]:
    """The record of the cells (parsed once per distinct cells, time step and unit) and its cache key."""
    step = _cells.positive(dt, "the time step", "s")
    name = _cells.unit(unit, "the record unit", ACCELERATION_UNITS)
    key = ("record", _cache.digest(accel), step, name)
    record = _cache.RECORDS.get_or_compute(
        key, lambda: Record(_cells.numbers(accel, "the acceleration range", min_count=2), step, name)
    )
    return record, key


def _choice(value: Cell, table: dict[str, tuple[str, str, str]], what: str) -> tuple[str, str, str]:
    def plain(name: str) -> str:
        return " ".join(name.lower().replace("_", " ").replace("-", " ").split())

    spelled = plain(_cells.text(value, what, next(iter(table))))
    for name, choice in table.items():
        if plain(name) == spelled:
            return choice
    raise CellError(f"{what} {value!r} is not one of: {', '.join(table)}")


def _method(value: Cell) -> Method:
    return resolve_method(_cells.method(value, "the method", "average"))


def _method_key(method: Method) -> tuple[str, float, float] | str:
    # NaN (beta and gamma of "exact") never equals itself, so named methods key by name
    return method.name if method.name != "newmark" else (method.name, method.beta, method.gamma)


def _strength(yield_coefficient: Cell, reduction_factor: Cell) -> _Strength:
    given = _Strength(
        _cells.number(yield_coefficient, "the yield coefficient", None),
        _cells.number(reduction_factor, "the reduction factor", None),
    )
    if given.yield_coefficient is None and given.reduction_factor is None:
        raise CellError("give the strength: a yield coefficient or a reduction factor (both are blank)")
    if given.yield_coefficient is not None and given.reduction_factor is not None:
        raise CellError(
            f"give a yield coefficient or a reduction factor, not both (got {given.yield_coefficient:g} "
            f"and {given.reduction_factor:g})"
        )
    return given


def _units(record: Record, accel_unit_out: Cell, length_unit_out: Cell) -> _Units:
    return _output_units(record.unit, accel_unit_out, length_unit_out)


def _output_units(record_unit: str, accel_unit_out: Cell, length_unit_out: Cell) -> _Units:
    accel = _cells.unit(accel_unit_out, "the output acceleration unit", ACCELERATION_UNITS, record_unit)
    spelled = _cells.text(length_unit_out, "the output length unit", None)
    if spelled is None:
        return _Units(accel, MATCHING_LENGTH_UNIT[record_unit])
    try:
        length = _cells.unit(spelled, "the output length unit", LENGTH_UNITS)
    except CellError:
        try:  # a velocity unit such as "cm/s" names its length unit too
            length = _cells.unit(spelled, "the output length unit", VELOCITY_UNITS)[:-2]
        except CellError:
            raise CellError(
                f"the output length unit {spelled!r} is not a known unit; use one of {', '.join(LENGTH_UNITS)}"
            ) from None
    return _Units(accel, length)


def _to_unit(value_si: Any, kind: str, units: _Units) -> Any:
    """SI value(s) in the output unit of their kind; scalars come back as Python numbers."""
    factor = {
        "length": LENGTH_UNITS[units.length],
        "velocity": VELOCITY_UNITS[f"{units.length}/s"],
        "acceleration": ACCELERATION_UNITS[units.accel],
        "energy": LENGTH_UNITS[units.length] ** 2,
    }.get(kind, 1.0)
    converted = np.asarray(value_si, dtype=np.float64) / factor
    if converted.ndim == 0:
        return int(value_si) if kind == "count" else float(converted)
    return converted


def _label(name: str, kind: str, units: _Units) -> str:
    unit = {
        "length": units.length,
        "velocity": f"{units.length}/s",
        "acceleration": units.accel,
        "energy": f"{units.length}2/s2",
        "time": "s",
    }.get(kind, "-")
    return f"{name} [{unit}]"


def _table(
    values: np.ndarray, rows: np.ndarray, columns: np.ndarray, corner: str, headers: bool, missing: str = ""
) -> list[list[Any]]:
    """Rows of values (NaN shown as `missing`), optionally under a header row and beside a header column."""
    body = [[value if value == value else missing for value in line] for line in values.tolist()]
    if not headers:
        return body
    return [[corner, *columns.tolist()], *([row, *line] for row, line in zip(rows.tolist(), body))]


def _quiet(compute: Callable[..., Any], *args: Any, ignore: tuple[type[Warning], ...] = (), **kwargs: Any) -> Any:
    """Call a core function with the warnings the sheet reports otherwise silenced.

    SubstepWarning (sub-steps are reported by STEP_ABOUT and the "substeps"
    quantities) and ConvergenceWarning (the step was split and did converge)
    always; `ignore` adds more for one call.
    """
    with _WARNINGS_LOCK, warnings.catch_warnings():
        for category in (SubstepWarning, ConvergenceWarning, *ignore):
            warnings.simplefilter("ignore", category)
        return compute(*args, **kwargs)


def _summary(result: Any, table: dict[str, tuple[str, str, str]]) -> dict[str, float]:
    """The scalar results a function may return, kept instead of the (large) result object."""
    return {attribute: getattr(result, attribute) for _, attribute, _ in table.values()}


def _or_text(value: float, text: str) -> float | str:
    return text if math.isnan(value) or math.isinf(value) else value
