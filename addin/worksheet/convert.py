"""Between cells and the core API: records and options from cells, results back into cells.

The worksheet functions (``functions.py``) are one to three lines each; the
work of turning cells into a `Record`, a method, output units and a strength,
of caching, of calling the core with its warnings kept as data, and of
laying a result out as cells is here, once.
"""

from __future__ import annotations

from collections.abc import Callable, Hashable
from typing import Any

import numpy as np

from groundstep.core import Record, collect_warnings, elastic_spectrum
from groundstep.core.methods import Method, resolve_method
from groundstep.core.units import ACCELERATION_UNITS, LENGTH_UNITS, VELOCITY_UNITS, OutputUnits, output_units

from . import cache, cells
from .cells import CellError
from .registry import Quantity

__all__ = [
    "Cell",
    "cached",
    "choice",
    "label",
    "method",
    "method_key",
    "peaks",
    "quiet",
    "record",
    "strength",
    "summary",
    "table",
    "to_unit",
    "units",
]

Cell = Any  # a value as the spreadsheet passes it: number, text, bool, None or nested lists


def record(accel: Cell, dt: Cell, unit: Cell) -> tuple[Record, tuple[Any, ...]]:
    """The record of the cells (parsed once per distinct cells, time step and unit) and its cache key.

    Plain cells are keyed by `cache.cell_digest` (a repeat of cells seen
    before is found by comparing them in full, not by hashing them again),
    other cells (numpy scalars, bytes, arrays of objects) by
    `cache.strict_digest`.
    """
    step = cells.positive(dt, "the time step", "s")
    name = _record_unit(unit)
    fast = cache.cell_digest(accel)
    key: tuple[Any, ...] = ("record", fast if fast is not None else cache.strict_digest(accel), step, name)
    parsed = cache.RECORDS.get_or_compute(key, lambda: Record(cells.numbers(accel, "the acceleration range", min_count=2), step, name))
    return parsed, key


def _remembered(key: tuple[Any, ...], read: Callable[[], Any]) -> Any:
    """`read()` once per option key (in `cache.OPTIONS`); keys holding anything but text or None are read every time.

    Text cells only (type str exactly, or blank), so a hit is the same
    reading; a reading that raises is not kept.
    """
    if not all(part is None or type(part) is str for part in key[1:]):
        return read()
    return cache.OPTIONS.get_or_compute(key, read)


def _record_unit(unit: Cell) -> str:
    return _remembered(("record unit", unit), lambda: cells.unit(unit, "the record unit", ACCELERATION_UNITS))


#: Rows of an ElasticSpectrum -> the attributes of a linear response's peaks that STEP_PEAK reads.
_SPECTRUM_PEAKS = {
    "sd": "peak_displacement",
    "sv": "peak_velocity",
    "sa": "peak_total_acceleration",
    "psv": "pseudo_velocity",
    "psa": "pseudo_acceleration",
}


def peaks(record: Record, key: Hashable, oscillator: tuple[float, float], resolved: Method) -> dict[str, Any]:
    """Peaks (SD, SV, SA, PSV, PSA and the sub-step count) of one oscillator, from `elastic_spectrum`.

    The first cell of a damping and method over a record not seen before
    computes every period other cells asked for with that damping and method
    (`cache.ASKED`) in the same spectrum pass and stores each under the key
    ``STEP_PEAK`` looks up: after an edit of the record, a sheet of 500
    cells costs one spectrum instead of 500 oscillators. A period's peaks do
    not depend on the other periods of the pass (each oscillator is stepped
    alone; tests/test_functions.py pins batched and single values equal).
    """
    period, damping = oscillator
    method_id = method_key(resolved)
    batch = cache.ASKED.batch(key, (damping, method_id), period)
    spectrum = quiet(elastic_spectrum, record, np.array(batch), damping, resolved)
    found: list[dict[str, Any]] = []
    for index in range(len(batch)):
        values = {attribute: float(getattr(spectrum, row)[0, index]) for row, attribute in _SPECTRUM_PEAKS.items()}
        values["substeps"] = int(spectrum.substeps[0, index])
        found.append(values)
    for each, values in zip(batch[1:], found[1:]):
        cache.RESULTS.get_or_compute(("peak", key, (each, damping), method_id), _constant(values))
    return found[0]


def _constant(value: dict[str, Any]) -> Callable[[], dict[str, Any]]:
    return lambda: value


def choice(value: Cell, quantities: dict[str, Quantity], what: str = "the quantity") -> Quantity:
    """The quantity named in a cell (case, ``_`` and ``-`` ignored); the first entry when blank."""
    table, chosen = _remembered((("choice", id(quantities), what), value), lambda: (quantities, _choose(value, quantities, what)))
    return chosen if table is quantities else _choose(value, quantities, what)  # an id reused by another table


def _choose(value: Cell, quantities: dict[str, Quantity], what: str) -> Quantity:
    spelled = _plain(cells.text(value, what, next(iter(quantities))))
    for name, quantity in quantities.items():
        if _plain(name) == spelled:
            return quantity
    raise CellError(f"{what} {cells.excerpt(str(value))} is not one of: {', '.join(quantities)}")


def method(value: Cell) -> Method:
    """The method of a cell or two-cell (beta, gamma) range; blank is average acceleration."""
    return resolve_method(cells.method(value, "the method", "average"))


def method_key(resolved: Method) -> Hashable:
    """A cache key for a method (NaN beta and gamma of "exact" never equal themselves)."""
    return resolved.name if resolved.name != "newmark" else (resolved.name, resolved.beta, resolved.gamma)


def strength(yield_coefficient: Cell, reduction_factor: Cell) -> dict[str, float | None]:
    """Exactly one of the yield coefficient and the reduction factor, as keyword arguments of the core."""
    given = {
        "yield_coefficient": cells.number(yield_coefficient, "the yield coefficient", None),
        "reduction_factor": cells.number(reduction_factor, "the reduction factor", None),
    }
    if given["yield_coefficient"] is None and given["reduction_factor"] is None:
        raise CellError("give the strength: a yield coefficient or a reduction factor (both are blank)")
    if given["yield_coefficient"] is not None and given["reduction_factor"] is not None:
        raise CellError(
            f"give a yield coefficient or a reduction factor, not both (got {given['yield_coefficient']:g} "
            f"and {given['reduction_factor']:g})"
        )
    return given


def units(record_unit: str, accel_unit_out: Cell, length_unit_out: Cell) -> OutputUnits:
    """Output units: the cells' choices, else the record's unit and its matching length unit."""
    return _remembered(("units", record_unit, accel_unit_out, length_unit_out),
                       lambda: _units(record_unit, accel_unit_out, length_unit_out))  # fmt: skip


def _units(record_unit: str, accel_unit_out: Cell, length_unit_out: Cell) -> OutputUnits:
    accel = cells.unit(accel_unit_out, "the output acceleration unit", ACCELERATION_UNITS, record_unit)
    spelled = cells.text(length_unit_out, "the output length unit", None)
    if spelled is None:
        return output_units(record_unit, acceleration=accel)
    try:
        length = cells.unit(spelled, "the output length unit", LENGTH_UNITS)
    except CellError:
        try:  # a velocity unit such as "cm/s" names its length unit too
            length = cells.unit(spelled, "the output length unit", VELOCITY_UNITS)[:-2]
        except CellError:
            raise CellError(
                f"the output length unit {cells.excerpt(spelled)} is not a known unit; use one of {', '.join(LENGTH_UNITS)}"
            ) from None
    return output_units(record_unit, acceleration=accel, length=length)


def to_unit(value_si: Any, kind: str, out: OutputUnits) -> Any:
    """SI value(s) in the output unit of their kind; scalars come back as Python numbers."""
    converted = np.asarray(out.from_si(kind, value_si), dtype=np.float64)
    if converted.ndim == 0:
        return int(value_si) if kind == "count" else float(converted)
    return converted


def label(name: str, kind: str, out: OutputUnits) -> str:
    """``name [unit]`` for a header cell."""
    # times are in s and Arias intensity keeps its SI unit; ratios and counts have none
    unit = out.unit_of(kind) or {"time": "s", "arias": "m/s"}.get(kind, "-")
    return f"{name} [{unit}]"


def table(
    values: np.ndarray, rows: np.ndarray, columns: np.ndarray, corner: str, headers: bool, missing: str = ""
) -> list[list[Any]]:
    """Rows of values (NaN shown as `missing`), optionally under a header row and beside a header column."""
    body = [[value if value == value else missing for value in line] for line in values.tolist()]
    if not headers:
        return body
    return [[corner, *columns.tolist()], *([row, *line] for row, line in zip(rows.tolist(), body))]


def quiet(compute: Callable[..., Any], *args: Any, **kwargs: Any) -> Any:
    """Call a core function with its warnings kept as data and dropped.

    Cells report what the warnings say in their own way: sub-steps through
    ``STEP_ABOUT`` and the "substeps" quantities, an unreached ductility
    target as "not reached", a split-and-converged step not at all. The
    core's `collect_warnings` is per thread, so calls run concurrently.
    """
    with collect_warnings():
        return compute(*args, **kwargs)


def cached(store: cache.LRUCache, key: Hashable, compute: Callable[[], Any]) -> Any:
    """`compute()` once per key in `store`."""
    return store.get_or_compute(key, compute)


def summary(result: Any, quantities: dict[str, Quantity]) -> dict[str, Any]:
    """The scalar results a function may return, kept instead of the (large) result object."""
    return {q.attribute: getattr(result, q.attribute) for q in quantities.values()}


def _plain(name: str) -> str:
    return " ".join(name.lower().replace("_", " ").replace("-", " ").split())
