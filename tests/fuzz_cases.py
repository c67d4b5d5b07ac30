"""Hostile and absurd inputs for the fuzz tests and the long campaign (benchmarks/fuzz_long.py).

Hypothesis strategies that build what a spreadsheet can hand a worksheet
function (numbers of any magnitude, huge integers, text, error values,
Booleans, dates, ranges of any shape) and what a script can hand the core
API, and one classifier per target that sorts an outcome into the classes
of the table in DEVELOPERS.md: answered, clear message, escaped exception,
non-finite, over budget.
"""

from __future__ import annotations

import datetime as dt_module
import math
import time
from collections.abc import Callable
from typing import Any

import numpy as np
from hypothesis import strategies as st

from groundstep.addin.common import ERROR_PREFIX
from groundstep.core import ConvergenceError

#: Outcome classes, in the column order of the DEVELOPERS.md table.
OUTCOMES = ("answered", "message", "escaped", "non-finite", "over budget")

# magnitudes that break float arithmetic: float64's extremes, subnormals, huge integers
_EXTREMES = [0.0, -0.0, 1e-300, 5e-324, 1e-9, 1e-6, 1e3, 1e150, 1e300, 1.8e308, -1.8e308, 10**400, -(10**400), 2**63]
_TEXTS = ["", " ", "abc", "5%", "1e400", "nan", "inf", "-inf", "0,5", "#N/A", "#DIV/0!", "=1+1", "@SUM(A1)", "x" * 200]

hostile_scalar = st.one_of(
    st.none(),
    st.booleans(),
    st.sampled_from(_EXTREMES),
    st.floats(allow_nan=True, allow_infinity=True),
    st.integers(min_value=-(10**400), max_value=10**400),
    st.sampled_from(_TEXTS),
    st.text(max_size=12),
    st.just(dt_module.date(2024, 1, 1)),
)
_sane_accel_value = st.floats(min_value=-2.0, max_value=2.0, allow_nan=False)


def _column(values: st.SearchStrategy[Any], max_size: int) -> st.SearchStrategy[list[list[Any]]]:
    return st.lists(values, min_size=0, max_size=max_size).map(lambda cells: [[cell] for cell in cells])


def _sometimes(sane: st.SearchStrategy[Any], odd: st.SearchStrategy[Any]) -> st.SearchStrategy[Any]:
    """`sane` about four times in five, else `odd` (so most calls reach the computation)."""
    return st.tuples(st.integers(0, 4), sane, odd).map(lambda t: t[2] if t[0] == 4 else t[1])


def _mostly(sane: st.SearchStrategy[Any], odd: st.SearchStrategy[Any]) -> st.SearchStrategy[Any]:
    """Like `_sometimes`, the odd values mixed with any hostile cell value."""
    return _sometimes(sane, st.one_of(odd, hostile_scalar))


#: A range of acceleration cells: mostly sane, sometimes with one hostile cell, sometimes hostile throughout.
accel_range = _mostly(
    st.lists(_sane_accel_value, min_size=2, max_size=60).map(lambda cells: [[cell] for cell in cells]),
    st.one_of(
    st.tuples(_column(_sane_accel_value, 60), hostile_scalar, st.integers(0, 59)).map(
        lambda t: [row if i != t[2] else [t[1]] for i, row in enumerate(t[0])]
    ),
    _column(st.one_of(st.sampled_from(_EXTREMES), st.floats(allow_nan=False, allow_infinity=False)), 30),
    st.lists(st.lists(hostile_scalar, min_size=2, max_size=3), min_size=2, max_size=3),  # two-dimensional
    hostile_scalar,
    ),
)
_time_step = _mostly(st.sampled_from([0.01, 0.005, 0.02]),
                     st.sampled_from([1e-9, 1e-300, 100.0, 1e3, 1e4, 1.8e308, 0.0, -0.01]))
_period = _mostly(st.sampled_from([0.0, 0.05, 0.3, 1.0, 4.0]), st.sampled_from([1e-9, 1e-6, 1e6, 1e300, 1e-300]))
_ratio = _mostly(st.sampled_from([0.0, 0.02, 0.05, 0.2]), st.sampled_from([0.999, 5.0, 1e300, 1e-300]))
_unit = _mostly(st.sampled_from(["g", "m/s2", "cm/s2", "gal", "in/s2"]), st.sampled_from(["furlong", "G", " gal "]))


def _range_of(values: st.SearchStrategy[Any]) -> st.SearchStrategy[Any]:
    return st.one_of(values, _column(values, 6), st.lists(values, min_size=0, max_size=4).map(lambda v: [v]))


#: Strategy per worksheet argument name (registry.ARGUMENT_HELP keys and parameter names).
ARGUMENT_STRATEGIES: dict[str, st.SearchStrategy[Any]] = {
    "accel": accel_range,
    "dt": _time_step,
    "unit": _unit,
    "period": _period,
    "periods": _range_of(_period),
    "damping": _ratio,
    "dampings": _range_of(_ratio),
    "quantity": st.one_of(st.none(), st.sampled_from(["PSA", "SD", "SD time", "substeps", "ductility",
                                                      "yield coefficient", "hysteretic energy", "reduction factor",
                                                      "achieved ductility", "bogus"]), hostile_scalar),
    "method": _mostly(st.sampled_from(["average", "linear", "exact"]),
                      st.lists(hostile_scalar, min_size=2, max_size=2).map(lambda v: [v])),
    "accel_unit_out": st.one_of(st.none(), _unit),
    "length_unit_out": st.one_of(st.none(), st.sampled_from(["m", "mm", "cm/s", "parsec"])),
    "headers": _mostly(st.booleans(), st.none()),
    "yield_coefficient": st.one_of(st.none(), st.none(), st.sampled_from([0.05, 0.2, 1e-300, 1e300, -1.0])),
    "reduction_factor": _mostly(st.sampled_from([1.0, 2.0, 4.0]), st.sampled_from([1e-300, 1e300, 0.5])),
    "hardening": _mostly(st.sampled_from([0.0, 0.05]), st.sampled_from([0.999, 1.0, -0.1, 1e-300])),
    "ductilities": _range_of(_mostly(st.sampled_from([1.0, 2.0, 4.0]), st.sampled_from([1e300, 0.5, 1e6]))),
}


def worksheet_arguments(function_name: str) -> st.SearchStrategy[tuple[Any, ...]]:
    """Positional arguments for one STEP_ function, one strategy per declared argument."""
    from groundstep.addin.worksheet.registry import FUNCTIONS

    declared = FUNCTIONS[function_name].arguments
    return st.tuples(*(ARGUMENT_STRATEGIES.get(a.name, hostile_scalar) for a in declared))


def classify_cell_result(result: Any) -> str:
    """The outcome class of what a worksheet function returned to its cell."""
    if isinstance(result, str) and result.startswith(ERROR_PREFIX):
        if "unexpected" in result and "please report" in result:
            return "escaped"
        return "over budget" if "work budget" in result else "message"
    values = result if isinstance(result, list) else [result]
    for line in values:
        for value in line if isinstance(line, list) else [line]:
            if isinstance(value, float) and not math.isfinite(value):
                return "non-finite"
    return "answered"


def _all_finite(result: Any) -> bool:
    """Every float and array field of a result object is finite (NaN documented as 'not reached' excepted)."""
    from dataclasses import fields

    from groundstep.core import DuctilitySpectrum

    allowed_nan = {"max_step_ratio", "beta", "gamma"}  # NaN means "not used" (ratio off, exact method)
    if isinstance(result, DuctilitySpectrum):  # NaN where a target is not reached, documented with a warning
        allowed_nan |= {"reduction_factor", "yield_coefficient", "yield_pseudo_acceleration", "peak_displacement",
                        "achieved_ductility"}

    for item in fields(result):
        value = getattr(result, item.name)
        if isinstance(value, (float, np.ndarray)) and np.asarray(value).dtype.kind == "f":
            array = np.asarray(value)
            if np.isinf(array).any() or (np.isnan(array).any() and item.name not in allowed_nan):
                return False
    return True


def classify_core_call(call: Callable[[], Any]) -> str:
    """Run a core call and sort its outcome; the exception classes allowed out of the API are message outcomes."""
    from groundstep.core.budget import LimitError

    try:
        result = call()
    except LimitError as exc:
        return "over budget" if "work budget" in str(exc) else "message"
    except ConvergenceError as exc:
        ok = math.isfinite(exc.residual) and math.isfinite(exc.time)
        return "message" if ok else "escaped"
    except (ValueError, TypeError):
        return "message"
    except Exception:  # noqa: BLE001 - counted, that is the point
        return "escaped"
    return "answered" if _all_finite(result) else "non-finite"


def timed(call: Callable[[], str]) -> tuple[str, float]:
    """The outcome of `call` and its wall time [s]."""
    start = time.perf_counter()
    outcome = call()
    return outcome, time.perf_counter() - start


# ---- the core API -------------------------------------------------------------------------------

_core_number = _mostly(st.floats(min_value=-2.0, max_value=2.0), st.one_of(
    st.sampled_from(_EXTREMES), st.floats(allow_nan=True, allow_infinity=True)))
_samples = _mostly(
    st.lists(st.floats(min_value=-3.0, max_value=3.0), min_size=2, max_size=80),
    st.one_of(st.lists(_core_number, min_size=0, max_size=40), st.just([1e308] * 50), st.just([[1.0, 2.0]]),
              st.just("abc"), st.just(None)),
)
_core_dt = _mostly(st.sampled_from([0.01, 0.005, 0.02]),
                   st.sampled_from([1e-9, 1e-300, 1e-10, 100.0, 1e3, 1.8e308, 0.0, -1.0, float("nan"), "0.01"]))
_core_period = _mostly(st.sampled_from([0.05, 0.3, 1.0, 3.0]),
                       st.sampled_from([0.0, 1e-9, 1e-300, 5e-324, 1e6, 1e300, float("inf"), -1.0, [0.1, 0.2]]))
_core_damping = _mostly(st.sampled_from([0.0, 0.02, 0.05]), st.sampled_from([5.0, 0.999999, 1.0, -0.01, 1e-300]))
_core_method = _mostly(st.sampled_from(["average", "linear", "exact"]),
                       st.sampled_from(["bogus", (0.0, 0.5), (1e-300, 0.5), (0.25, 1e300), (float("nan"), 0.5)]))
_core_ratio = _mostly(st.sampled_from([0.1, 0.05]), st.sampled_from([None, 1e-300, 1e300, 0.0, 1e-6]))
_core_state = _mostly(st.just(0.0), st.sampled_from([1e-3, 1.8e308, -1e200, 1e150, float("nan")]))
_core_tolerance = _mostly(st.just(1e-9), st.sampled_from([1e-300, 1e-13, 0.5, 0.0, float("nan")]))
_core_iterations = _mostly(st.just(20), st.sampled_from([10**6, 1, 0, 101, 2.5, 10**400]))
_core_strength = _sometimes(st.sampled_from([("reduction_factor", 2.0), ("yield_coefficient", 0.1)]),
                         st.sampled_from([("reduction_factor", 1e300), ("reduction_factor", 1e-300),
                                          ("yield_coefficient", 1e-300), ("yield_coefficient", 1e300),
                                          ("reduction_factor", 0.5)]))
_core_ductilities = _mostly(st.sampled_from([[1.0, 2.0], [4.0], [1.0]]),
                            st.sampled_from([[1e300], [0.5], [], [float("nan")], [1e6, 2.0]]))


def _record(accel: Any, dt: Any, unit: str) -> Any:
    from groundstep.core import Record

    return Record(accel, dt, unit)


@st.composite
def core_calls(draw: Any) -> tuple[str, Callable[[], Any]]:
    """A (description, zero-argument call) of one public core function with fuzzed arguments."""
    from groundstep.core import (
        ductility_spectrum,
        elastic_spectrum,
        inelastic_response,
        linear_response,
    )

    accel, dt = draw(_samples), draw(_core_dt)
    unit = draw(st.sampled_from(["g", "m/s2", "cm/s2"]))
    which = draw(st.sampled_from(["record", "linear", "spectrum", "inelastic", "ductility"]))
    period, damping, method, ratio = draw(_core_period), draw(_core_damping), draw(_core_method), draw(_core_ratio)
    text = f"{which}(accel={accel!r:.80}, dt={dt!r}, unit={unit!r}, period={period!r}, damping={damping!r}, "
    text += f"method={method!r}, max_step_ratio={ratio!r}"
    if which == "record":
        return text + ")", lambda: _record(accel, dt, unit)
    if which == "linear":
        u0, v0 = draw(_core_state), draw(_core_state)
        return text + f", u0={u0!r}, v0={v0!r})", lambda: linear_response(
            _record(accel, dt, unit), period, damping, method, max_step_ratio=ratio,
            initial_displacement=u0, initial_velocity=v0)
    if which == "spectrum":
        periods = draw(st.lists(_core_period, min_size=1, max_size=5))
        return text + f", periods={periods!r})", lambda: elastic_spectrum(
            _record(accel, dt, unit), [p for p in periods if not isinstance(p, list)] or [0.1], [damping],
            method, max_step_ratio=ratio)
    tolerance, iterations = draw(_core_tolerance), draw(_core_iterations)
    hardening = draw(_mostly(st.just(0.0), st.sampled_from([0.05, 0.99, 1e-300])))
    text += f", tolerance={tolerance!r}, max_iterations={iterations!r}, hardening={hardening!r}"
    if which == "inelastic":
        key, value = draw(_core_strength)
        return text + f", {key}={value!r})", lambda: inelastic_response(
            _record(accel, dt, unit), period, damping, method, hardening=hardening, max_step_ratio=ratio,
            tolerance=tolerance, max_iterations=iterations, **{key: value})
    periods = draw(st.lists(_core_period, min_size=1, max_size=3))
    targets = draw(_core_ductilities)
    return text + f", periods={periods!r}, ductilities={targets!r})", lambda: ductility_spectrum(
        _record(accel, dt, unit), [p for p in periods if not isinstance(p, list)] or [0.1], targets, damping,
        method, hardening=hardening, max_step_ratio=ratio, tolerance=tolerance, max_iterations=iterations)
