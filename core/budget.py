"""Limits of the engine: the work budget and the input bounds that keep float64 finite.

Every public computation states its cost before it starts, in
oscillator-sub-steps (one oscillator advanced over one sub-step), and a
request beyond the budget is refused up front with a message that states
the cost, the budget and how to raise it. Inputs whose computation would
leave float64's range are refused the same way, with the bound in the
message.

The budget is a per-thread (per-context) setting: ``with work_budget(1e11):``
raises it for the calls inside the block, in this thread only, so the
worksheet functions can run with a smaller one while a script raises its own.

Examples
--------
>>> from groundstep.core.budget import current_budget, work_budget
>>> current_budget() == DEFAULT_MAX_WORK
True
>>> with work_budget(1e11):
...     current_budget()
100000000000.0
"""

from __future__ import annotations

import contextlib
import contextvars
import math
from collections.abc import Callable, Iterator

import numpy as np
from numpy.typing import NDArray

__all__ = [
    "DEFAULT_MAX_WORK",
    "DT_RANGE",
    "DUCTILITY_RUNS_PER_TARGET",
    "MAX_NEWTON_ITERATIONS",
    "MAX_SAMPLE_SI",
    "MAX_STATE_SI",
    "PERIOD_RANGE",
    "TOLERANCE_RANGE",
    "YIELDING_WEIGHT",
    "LimitError",
    "check_dt",
    "check_iterations",
    "check_samples",
    "check_state",
    "check_tolerance",
    "check_work",
    "current_budget",
    "work_budget",
]

#: Default budget [oscillator-sub-steps]. At the 2-10 ns per oscillator-step that
#: benchmarks/bench_linear.py prints on a 2-core machine this is roughly 40-200 s
#: of work: the largest request a script should wait for without asking for it.
DEFAULT_MAX_WORK = 2e10

#: One yielding oscillator-sub-step counts as this many linear ones (Newton
#: iterations and the yield-state bookkeeping). A chosen weight of the order of
#: the ns-per-step ratio of benchmarks/bench_inelastic.py to bench_linear.py.
YIELDING_WEIGHT = 8.0

#: Accepted positive periods [s]. Below 1e-12 s the step ratio dt/T leaves float64
#: for the longest accepted step (1e3 s / 1e-12 s = 1e15 is still exact, a
#: subnormal period is not); above 1e6 s (11.6 days) ω² = 4e-11 s⁻² and the
#: stiffness is lost against the loads. Spectra stop at tens of seconds.
PERIOD_RANGE = (1e-12, 1e6)

#: Yielding runs a constant-ductility search costs per target ductility, for the
#: estimate made before it starts: its bracketing passes plus the Illinois passes,
#: typically about a dozen (the `stats` of benchmarks/bench_inelastic.py); the
#: search stops at 60 in any case.
DUCTILITY_RUNS_PER_TARGET = 12.0

#: Largest |acceleration sample| [m/s²]. Energies and the Arias intensity are
#: quadratic in the samples: 1e150² = 1e300 stays below float64's largest
#: number (1.8e308) with 8 decades left for the durations, periods and sample
#: counts that multiply it. The strongest recorded motions are below 100 m/s².
MAX_SAMPLE_SI = 1e150

#: Largest |initial displacement| [m] and |initial velocity| [m/s]; same reasoning
#: as MAX_SAMPLE_SI (the energies are quadratic in them).
MAX_STATE_SI = 1e150

#: Accepted time steps [s]. Below 1e-9 s the sample times n·dt lose the step
#: to round-off against any period a sub-step count can reach (MAX_SUBSTEPS x
#: ratio); above 1e3 s a record of two samples spans more than 15 minutes per
#: step, which no accelerogram does and which makes sub-step counts explode.
DT_RANGE = (1e-9, 1e3)

#: Accepted relative Newton tolerances: below 1e-12 the residual of a sum of a
#: few float64 terms (round-off about 1e-16 of each) cannot reach it and the
#: solver would split steps forever; at 1e-2 and above the result is not a
#: converged state.
TOLERANCE_RANGE = (1e-12, 1e-2)

#: Most Newton iterations per step. Newton's method converges quadratically
#: once the branch is fixed; the default 20 is ample, 100 leaves five times that.
MAX_NEWTON_ITERATIONS = 100

_BUDGET: contextvars.ContextVar[float] = contextvars.ContextVar("groundstep_work_budget", default=DEFAULT_MAX_WORK)


class LimitError(ValueError):
    """A request beyond a stated limit (work budget, a float64 bound).

    ``str(error)`` is the full message for a script, with the keyword or
    setting that raises the limit. Adapters whose users cannot pass that
    keyword (spreadsheet cells) show ``error.fact`` followed by their own
    advice, or ``error.cell_advice`` when the core knows one.

    Attributes
    ----------
    fact : str
        What was asked and which limit it passes, without advice.
    advice : str
        How a caller of the Python API proceeds.
    cell_advice : str
        How a spreadsheet user proceeds ("" when the adapter must say).
    """

    def __init__(self, fact: str, advice: str, cell_advice: str = "") -> None:
        super().__init__(f"{fact}; {advice}" if advice else fact)
        self.fact = fact
        self.advice = advice
        self.cell_advice = cell_advice


def current_budget() -> float:
    """The work budget in force in this thread [oscillator-sub-steps]."""
    return _BUDGET.get()


@contextlib.contextmanager
def work_budget(max_work: float) -> Iterator[float]:
    """Set the work budget for the calls inside a ``with`` block (this thread or task only).

    Parameters
    ----------
    max_work : float
        Largest cost accepted [oscillator-sub-steps], > 0; ``math.inf`` turns
        the budget off.

    Yields
    ------
    float
        The budget set.
    """
    if isinstance(max_work, bool) or not isinstance(max_work, (int, float)):
        raise TypeError(f"`max_work` must be a number, got {type(max_work).__name__} {max_work!r:.40}")
    value = float(max_work)
    if not value > 0.0:  # also refuses NaN
        raise ValueError(f"`max_work` must be > 0 oscillator-sub-steps, got {value!r}")
    token = _BUDGET.set(value)
    try:
        yield value
    finally:
        _BUDGET.reset(token)


def check_work(cost: float, what: str | Callable[[], str]) -> float:
    """Refuse a request whose `cost` [oscillator-sub-steps] exceeds the budget in force.

    Parameters
    ----------
    cost : float
        The request's cost, e.g. samples x sum of sub-steps.
    what : str or callable
        The request, for the message ("20000 samples x 500 oscillators x 1 sub-step"),
        or a function returning it, called only when the request is refused (so a
        call that passes builds no message).

    Returns
    -------
    float
        `cost`.

    Raises
    ------
    LimitError
        When `cost` is above `current_budget()`.
    """
    budget = current_budget()
    if not math.isfinite(cost) or cost > budget:
        described = what if isinstance(what, str) else what()
        raise LimitError(
            f"{described} costs {cost:.3g} oscillator-sub-steps, beyond the work budget of {budget:.3g}",
            "raise it with `with groundstep.core.budget.work_budget(N):` around the call, "
            "or shorten the record, use fewer periods or a longer time step",
        )
    return cost


def check_dt(dt: float, label: str = "dt") -> float:
    """Refuse a time step [s] outside `DT_RANGE` (the message states the range)."""
    low, high = DT_RANGE
    if not low <= dt <= high:
        raise LimitError(
            f"`{label}` must lie in [{low:g}, {high:g}] s, got {dt!r}",
            "check the unit of the time step (seconds)",
            "check the unit of the time step (seconds)",
        )
    return dt


def check_samples(samples: NDArray[np.float64], factor: float, label: str = "accel") -> None:
    """Refuse samples whose magnitude times `factor` (their unit in m/s²) exceeds `MAX_SAMPLE_SI`.

    Checked before the conversion, so the conversion itself cannot overflow.
    """
    if samples.size == 0:
        return
    index = int(np.argmax(np.abs(samples)))
    largest = abs(float(samples[index]))
    if largest > MAX_SAMPLE_SI / factor:
        raise LimitError(
            f"`{label}` index {index} holds {float(samples[index]):.6g}, beyond the bound of "
            f"{MAX_SAMPLE_SI:g} m/s² ({MAX_SAMPLE_SI / factor:.6g} in the record's unit) that keeps "
            "every response finite in float64",
            "check the unit and the column of the samples",
            "check the unit and the column of the samples",
        )


def check_state(value: float, label: str, unit: str) -> float:
    """Refuse an initial displacement [m] or velocity [m/s] beyond `MAX_STATE_SI`."""
    if abs(value) > MAX_STATE_SI:
        raise LimitError(
            f"`{label}` must be within ±{MAX_STATE_SI:g} {unit} (keeps the response finite in float64), got {value!r}",
            "",
        )
    return value


def check_tolerance(value: float, label: str = "tolerance") -> float:
    """Refuse a relative Newton tolerance outside `TOLERANCE_RANGE`."""
    low, high = TOLERANCE_RANGE
    if not low <= value < high:
        raise LimitError(
            f"`{label}` must lie in [{low:g}, {high:g}) (a fraction of the reference force), got {value!r}",
            f"the default {1e-9:g} suits every record",
        )
    return value


def check_iterations(value: int, label: str = "max_iterations") -> int:
    """Refuse a Newton iteration limit above `MAX_NEWTON_ITERATIONS`."""
    if value > MAX_NEWTON_ITERATIONS:
        raise LimitError(
            f"`{label}` must be <= {MAX_NEWTON_ITERATIONS}, got {value!r}",
            "Newton's method converges in a few iterations or not at all; steps that do not "
            "converge are split automatically",
        )
    return value
