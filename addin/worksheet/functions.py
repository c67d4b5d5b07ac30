"""The ``STEP_`` worksheet functions: the groundstep engine typed into a calculation sheet.

Point xlwings at ``groundstep.addin.functions`` (``UDF Modules``, as the
templates' ``xlwings.conf`` sheet does; that module re-exports these) and
import the functions; they then work like built-in functions in desktop
Excel on Windows.

Every function takes its arguments in one order: the record (acceleration
range, time step [s], record unit), then the oscillator (period or periods,
damping or dampings, strength where it applies), then options (which
quantity, method, output units, headers). Accelerations come back in the
record's unit and displacements and velocities in the length unit that
matches it (m for g and m/s2, cm for cm/s2 and gal, mm for mm/s2, in for
in/s2, ft for ft/s2), unless the output-unit options say otherwise. Times
are in seconds.

A problem with the input, or any failure, comes back as one cell of text
starting with ``ERROR_PREFIX``, never as an exception. Sub-stepping of the
record step (see ``groundstep.core.linear_response``) is silent here;
``STEP_ABOUT`` and the ``"substeps"`` quantity of ``STEP_PEAK`` report it.

To add a function: write it here under ``@worksheet_function`` (positional
parameters with defaults, a one-line docstring, a body that hands off to
``convert`` and the core API) and give any new argument a help text in
``registry.ARGUMENT_HELP``.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from groundstep.addin.common import CAUTION, ERROR_PREFIX
from groundstep.core import (
    __version__,
    ductility_spectrum,
    elastic_spectrum,
    inelastic_response,
    linear_response,
)
from groundstep.core.defaults import DEFAULT_DAMPING, DEFAULT_STEP_RATIO
from groundstep.core.methods import substep_counts
from groundstep.core.plausibility import check_record
from groundstep.core.units import ACCELERATION_UNITS

from . import cells, convert
from .cache import HISTORIES, RESULTS
from .convert import Cell
from .registry import (
    CATEGORY,
    DUCTILITY_QUANTITIES,
    DUCTILITY_SPECTRUM_QUANTITIES,
    PEAK_QUANTITIES,
    SPECTRUM_QUANTITIES,
    worksheet_function,
)

__all__ = [
    "CATEGORY",
    "CAUTION",
    "ERROR_PREFIX",
    "STEP_ABOUT",
    "STEP_CHECK",
    "STEP_DUCTILITY",
    "STEP_DUCTILITY_SPECTRUM",
    "STEP_HISTORY",
    "STEP_PEAK",
    "STEP_SPECTRUM",
]


@worksheet_function(help={"quantity": "peak_quantity"})
def STEP_PEAK(
    accel: Cell,
    dt: Cell,
    unit: Cell,
    period: Cell,
    damping: Cell = DEFAULT_DAMPING,
    quantity: Cell = "PSA",
    method: Cell = "average",
    accel_unit_out: Cell = None,
    length_unit_out: Cell = None,
) -> Any:
    """Peak response of one linear oscillator: SD, SV, SA, PSV, PSA, or the time of a peak [s]."""
    record, key = convert.record(accel, dt, unit)
    chosen, out = convert.choice(quantity, PEAK_QUANTITIES), convert.units(record.unit, accel_unit_out, length_unit_out)
    oscillator, resolved = _oscillator(period, damping), convert.method(method)
    if chosen.kind == "time":  # times of the peaks: the one-oscillator history kernel records them
        peaks = RESULTS.get_or_compute(
            ("peak times", key, oscillator, convert.method_key(resolved)),
            lambda: convert.summary(convert.quiet(linear_response, record, *oscillator, resolved), PEAK_QUANTITIES),
        )
    else:  # amplitudes: the spectrum pass, shared by the cells of one damping and method (convert.peaks)
        peaks = RESULTS.get_or_compute(
            ("peak", key, oscillator, convert.method_key(resolved)),
            lambda: convert.peaks(record, key, oscillator, resolved),
        )
    return convert.to_unit(peaks[chosen.attribute], chosen.kind, out)


@worksheet_function(spills=True, help={"quantity": "spectrum_quantity"})
def STEP_SPECTRUM(
    accel: Cell,
    dt: Cell,
    unit: Cell,
    periods: Cell,
    dampings: Cell = DEFAULT_DAMPING,
    quantity: Cell = "PSA",
    method: Cell = "average",
    accel_unit_out: Cell = None,
    length_unit_out: Cell = None,
    headers: Cell = False,
) -> Any:
    """Elastic response spectrum table (spills): one row per period, one column per damping."""
    record, key = convert.record(accel, dt, unit)
    chosen, out = convert.choice(quantity, SPECTRUM_QUANTITIES), convert.units(record.unit, accel_unit_out, length_unit_out)
    grid = (cells.periods(periods, "the periods range"), cells.dampings(dampings, "the dampings range"))
    resolved = convert.method(method)
    spectrum = RESULTS.get_or_compute(
        ("spectrum", key, *(tuple(values.tolist()) for values in grid), convert.method_key(resolved)),
        lambda: convert.quiet(elastic_spectrum, record, *grid, resolved),
    )
    corner = f"{convert.label(chosen.name, chosen.kind, out)}: T [s] down, damping across"
    values = convert.to_unit(getattr(spectrum, chosen.attribute), chosen.kind, out).T
    return convert.table(values, grid[0], grid[1], corner, _headers(headers))


@worksheet_function(spills=True)
def STEP_HISTORY(
    accel: Cell,
    dt: Cell,
    unit: Cell,
    period: Cell,
    damping: Cell = DEFAULT_DAMPING,
    method: Cell = "average",
    accel_unit_out: Cell = None,
    length_unit_out: Cell = None,
    headers: Cell = False,
) -> Any:
    """Response history (spills): time [s], relative displacement, relative velocity, total acceleration."""
    record, key = convert.record(accel, dt, unit)
    out = convert.units(record.unit, accel_unit_out, length_unit_out)
    oscillator, resolved = _oscillator(period, damping), convert.method(method)
    response = HISTORIES.get_or_compute(
        ("history", key, oscillator, convert.method_key(resolved)),
        lambda: convert.quiet(linear_response, record, *oscillator, resolved),
    )
    names = (("relative displacement", "displacement", "length"), ("relative velocity", "velocity", "velocity"),
             ("total acceleration", "total_acceleration", "acceleration"))  # fmt: skip
    columns = [response.time] + [convert.to_unit(getattr(response, a), kind, out) for _, a, kind in names]
    rows = np.column_stack(columns).tolist()
    if not _headers(headers):
        return rows
    return [["time [s]", *(convert.label(name, kind, out) for name, _, kind in names)], *rows]


@worksheet_function(help={"quantity": "ductility_quantity", "method": "inelastic_method"})
def STEP_DUCTILITY(
    accel: Cell,
    dt: Cell,
    unit: Cell,
    period: Cell,
    damping: Cell = DEFAULT_DAMPING,
    yield_coefficient: Cell = None,
    reduction_factor: Cell = None,
    hardening: Cell = 0.0,
    quantity: Cell = "ductility",
    method: Cell = "average",
    accel_unit_out: Cell = None,
    length_unit_out: Cell = None,
) -> Any:
    """Ductility demand (or another chosen result) of a yielding oscillator of given strength."""
    record, key = convert.record(accel, dt, unit)
    chosen = convert.choice(quantity, DUCTILITY_QUANTITIES)
    out = convert.units(record.unit, accel_unit_out, length_unit_out)
    oscillator, strength = _oscillator(period, damping), convert.strength(yield_coefficient, reduction_factor)
    slope, resolved = cells.nonnegative(hardening, "the hardening", 0.0), convert.method(method)
    result = RESULTS.get_or_compute(
        ("ductility", key, oscillator, tuple(strength.values()), slope, convert.method_key(resolved)),
        lambda: convert.summary(
            convert.quiet(inelastic_response, record, *oscillator, method=resolved, hardening=slope, **strength),
            DUCTILITY_QUANTITIES,
        ),
    )
    return convert.to_unit(result[chosen.attribute], chosen.kind, out)


@worksheet_function(
    spills=True, help={"quantity": "ductility_spectrum_quantity", "method": "inelastic_method"}
)
def STEP_DUCTILITY_SPECTRUM(
    accel: Cell,
    dt: Cell,
    unit: Cell,
    periods: Cell,
    ductilities: Cell,
    damping: Cell = DEFAULT_DAMPING,
    hardening: Cell = 0.0,
    quantity: Cell = "yield coefficient",
    method: Cell = "average",
    accel_unit_out: Cell = None,
    length_unit_out: Cell = None,
    headers: Cell = False,
) -> Any:
    """Constant-ductility spectrum table (spills): one row per period, one column per ductility."""
    record, key = convert.record(accel, dt, unit)
    chosen = convert.choice(quantity, DUCTILITY_SPECTRUM_QUANTITIES)
    out = convert.units(record.unit, accel_unit_out, length_unit_out)
    grid = (cells.periods(periods, "the periods range"), cells.ductilities(ductilities, "the ductilities range"))
    ratio, slope = cells.damping(damping, "the damping"), cells.nonnegative(hardening, "the hardening", 0.0)
    resolved = convert.method(method)
    spectrum = RESULTS.get_or_compute(
        ("ductility spectrum", key, *(tuple(v.tolist()) for v in grid), ratio, slope, convert.method_key(resolved)),
        # unreached targets come back as NaN and are shown as text: the core's warning is kept as data
        lambda: convert.quiet(ductility_spectrum, record, *grid, ratio, method=resolved, hardening=slope),
    )
    corner = f"{convert.label(chosen.name, chosen.kind, out)}: T [s] down, ductility across"
    missing = "n/a" if chosen.attribute == "achieved_ductility" else "not reached"
    values = convert.to_unit(getattr(spectrum, chosen.attribute), chosen.kind, out).T
    return convert.table(values, grid[0], grid[1], corner, _headers(headers), missing)


@worksheet_function(spills=True, help={"periods": "check_periods"})
def STEP_CHECK(accel: Cell, dt: Cell, unit: Cell, periods: Cell = None) -> Any:
    """Plausibility notes of a record (time step, PGA for the unit, periods, drift): warnings, not errors (spills)."""
    record, _ = convert.record(accel, dt, unit)
    grid = None if periods is None or periods == "" else cells.periods(periods, "the periods range")
    return [[f.check, f.message] for f in check_record(record, grid)] or [["none", "no plausibility notes"]]


@worksheet_function(spills=True, help={"dt": "about_dt", "unit": "about_unit", "period": "about_period"})
def STEP_ABOUT(
    dt: Cell = None,
    unit: Cell = None,
    period: Cell = None,
    method: Cell = "average",
    accel_unit_out: Cell = None,
    length_unit_out: Cell = None,
) -> Any:
    """Version, method settings, output units, sub-steps and the caution text (spills two columns)."""
    resolved = convert.method(method)
    return [
        ["groundstep version", __version__],
        ["method", resolved.describe()],
        ["beta", _or_text(resolved.beta, "not used")],
        ["gamma", _or_text(resolved.gamma, "not used")],
        # the exact method uses the ratio too: to read peaks between samples
        ["largest step ratio dt/T", DEFAULT_STEP_RATIO],
        ["stability limit dt/T", _or_text(resolved.stability_limit, "none")],
        _substep_row(dt, period, resolved),
        *_unit_rows(unit, accel_unit_out, length_unit_out),
        ["error prefix", ERROR_PREFIX],
        ["caution", CAUTION],
    ]


# ----------------------------------------------------------------------------- helpers

_UNIT_ROWS = ("record unit", "accelerations returned in", "displacements returned in", "velocities returned in")


def _oscillator(period: Cell, damping: Cell) -> tuple[float, float]:
    return cells.nonnegative(period, "the period"), cells.damping(damping, "the damping")


def _headers(headers: Cell) -> bool:
    return cells.flag(headers, "the headers option", False)


def _substep_row(dt: Cell, period: Cell, resolved: Any) -> list[Any]:
    step = cells.number(dt, "the time step", None)
    oscillator = cells.nonnegative(period, "the period", None)
    if step is None or oscillator is None:
        return ["sub-steps per record step", "give a time step and a period"]
    step = cells.positive(step, "the time step", "s")
    count = int(substep_counts(step, [oscillator], resolved, DEFAULT_STEP_RATIO)[0])
    return [f"sub-steps per record step at T = {oscillator:g} s", count]


def _unit_rows(unit: Cell, accel_unit_out: Cell, length_unit_out: Cell) -> list[list[Any]]:
    if cells.text(unit, "the record unit", None) is None:
        return [[label, "give the record unit"] for label in _UNIT_ROWS]
    record_unit = cells.unit(unit, "the record unit", ACCELERATION_UNITS)
    out = convert.units(record_unit, accel_unit_out, length_unit_out)
    return [
        ["record unit", record_unit],
        ["accelerations returned in", out.acceleration],
        ["displacements returned in", out.length],
        ["velocities returned in", out.velocity],
    ]


def _or_text(value: float, text: str) -> float | str:
    return text if math.isnan(value) or math.isinf(value) else value
