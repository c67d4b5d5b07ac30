"""Linear oscillators: response histories and elastic response spectra."""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike, NDArray

from . import _coefficients, _kernels, _notices, _validate
from . import budget as _budget
from .checks import (
    check_damping,
    check_dampings,
    check_integer,
    check_method,
    check_period,
    check_periods,
)
from .defaults import DEFAULT_DAMPING, DEFAULT_STEP_RATIO
from .methods import MAX_SUBSTEPS, Method, _too_many, step_limit, substep_count, substep_counts
from .record import Record
from .results import ElasticSpectrum, LinearResponse

__all__ = [
    "DEFAULT_STEP_RATIO",
    "SubstepWarning",
    "elastic_spectrum",
    "linear_response",
    "period_grid",
]


class SubstepWarning(UserWarning):
    """The record step was sub-divided to keep Δt/T within the limit."""


def linear_response(
    record: Record,
    period: float,
    damping: float = DEFAULT_DAMPING,
    method: str | tuple[float, float] | Method = "average",
    *,
    max_step_ratio: float | None = DEFAULT_STEP_RATIO,
    initial_displacement: float = 0.0,
    initial_velocity: float = 0.0,
) -> LinearResponse:
    """Response history of one linear single-degree-of-freedom oscillator.

    Parameters
    ----------
    record : Record
        Ground acceleration ü_g.
    period : float
        Natural period T [s], >= 0; 0 is a rigid oscillator.
    damping : float, default 0.05
        Ratio of critical damping ζ, in [0, 1).
    method : {"average", "linear", "exact"} or (beta, gamma), default "average"
        Newmark average acceleration (β = 1/4, γ = 1/2), linear acceleration
        (β = 1/6, γ = 1/2), any other Newmark pair, or the exact solution for
        excitation linear between samples.
    max_step_ratio : float or None, default 0.1
        Largest Δt/T: a longer record step is split into equal sub-steps
        with the excitation interpolated linearly. For Newmark methods this
        bounds the integration error; for ``"exact"`` it sets how often
        peaks are read between samples. ``None`` turns the limit off; the
        stability limit of a conditionally stable method (Δt/T <= √3/π for
        linear acceleration) always holds.
    initial_displacement : float, default 0
        u(0) [m].
    initial_velocity : float, default 0
        u̇(0) [m/s]. The initial acceleration follows from equilibrium at the
        first sample.

    Returns
    -------
    LinearResponse

    Raises
    ------
    TypeError
        `record` is not a Record; a number argument is not a number.
    ValueError
        Negative period, damping outside [0, 1), unknown method, or a
        non-positive `max_step_ratio`.

    Warns
    -----
    SubstepWarning
        When the record step was sub-divided (the count is in ``.substeps``).

    Notes
    -----
    Equation of motion per unit mass: ü + 2ζωu̇ + ω²u = -ü_g, ω = 2π/T.
    Histories are returned at the record's sample times; peaks (and their
    times) are read at every sub-step, as if the record had been resampled
    linearly onto the sub-step grid.

    References
    ----------
    Newmark, N. M. (1959). A method of computation for structural dynamics.
    Journal of the Engineering Mechanics Division, ASCE, 85(EM3), 67-94.

    Nigam, N. C., and Jennings, P. C. (1969). Calculation of response spectra
    from strong-motion earthquake records. Bulletin of the Seismological
    Society of America, 59(2), 909-922.

    Examples
    --------
    >>> import numpy as np
    >>> from groundstep.core import Record, linear_response
    >>> t = np.arange(0, 2, 0.01)
    >>> rec = Record(0.2 * np.sin(2 * np.pi * t), dt=0.01, unit="g")
    >>> res = linear_response(rec, period=0.5, damping=0.05)
    >>> bool(res.peak_displacement > 0)
    True
    """
    record = _check_record(record)
    period = check_period(period, "period")
    damping = check_damping(damping, "damping")
    resolved = check_method(method)
    ratio = _check_ratio(max_step_ratio)
    u0 = _budget.check_state(_validate.as_float(initial_displacement, "initial_displacement"), "initial_displacement", "m")
    v0 = _budget.check_state(_validate.as_float(initial_velocity, "initial_velocity"), "initial_velocity", "m/s")

    if period == 0.0:
        if u0 != 0.0 or v0 != 0.0:
            raise ValueError("a rigid oscillator (`period` 0) cannot start with a displacement or velocity")
        time = record.time
        zeros = np.zeros(record.n)
        total = record.accel.copy()
        index = int(np.argmax(np.abs(total)))
        peak = float(abs(total[index]))
        return LinearResponse(
            period=period, damping=damping, method=resolved, dt=record.dt, substeps=1,
            time=time, displacement=zeros, velocity=zeros.copy(), total_acceleration=total,
            peak_displacement=0.0, peak_velocity=0.0, peak_total_acceleration=peak,
            time_of_peak_displacement=0.0, time_of_peak_velocity=0.0,
            time_of_peak_total_acceleration=float(time[index]),
            pseudo_velocity=0.0, pseudo_acceleration=peak,
        )  # fmt: skip

    dt = record.dt
    substeps = substep_count(dt, period, resolved, ratio)
    n = record.n
    _budget.check_work(n * float(substeps), lambda: f"a response of {n} samples x {substeps} sub-steps")
    _warn_substeps(period, dt, substeps, resolved, ratio)
    omega = 2.0 * math.pi / period
    # the kernel is handed ü_g itself with the map's load rows negated (see elastic_spectrum)
    if resolved.is_newmark:
        coef = _coefficients.newmark_one(omega, damping, dt / substeps, resolved.beta, resolved.gamma, -1.0)
    else:
        coef = _coefficients.exact(omega, damping, dt / substeps, -1.0)[:, 0]
    time, displacement, velocity, total = np.empty(n), np.empty(n), np.empty(n), np.empty(n)
    found = np.empty(6)
    _kernels.history(record.accel, coef, substeps, dt, u0, v0, time, displacement, velocity, total, found)
    sd, sv, sa, when_d, when_v, when_a = found.tolist()
    return LinearResponse(
        period=period, damping=damping, method=resolved, dt=dt, substeps=substeps,
        time=time, displacement=displacement, velocity=velocity, total_acceleration=total,
        peak_displacement=sd, peak_velocity=sv, peak_total_acceleration=sa,
        time_of_peak_displacement=when_d, time_of_peak_velocity=when_v, time_of_peak_total_acceleration=when_a,
        pseudo_velocity=omega * sd, pseudo_acceleration=omega * omega * sd,
    )  # fmt: skip


def elastic_spectrum(
    record: Record,
    periods: ArrayLike,
    dampings: ArrayLike = DEFAULT_DAMPING,
    method: str | tuple[float, float] | Method = "average",
    *,
    max_step_ratio: float | None = DEFAULT_STEP_RATIO,
) -> ElasticSpectrum:
    """Elastic response spectra of a record for many periods and dampings.

    Parameters
    ----------
    record : Record
        Ground acceleration ü_g.
    periods : array_like (n_periods,)
        Periods T [s], >= 0 (0 is a rigid oscillator); see `period_grid`.
    dampings : float or array_like (n_dampings,), default 0.05
        Ratios of critical damping, each in [0, 1).
    method : {"average", "linear", "exact"} or (beta, gamma), default "average"
        As in `linear_response`.
    max_step_ratio : float or None, default 0.1
        As in `linear_response`.

    Returns
    -------
    ElasticSpectrum
        ``sd``, ``sv``, ``sa``, ``psv``, ``psa`` of shape
        (n_dampings, n_periods) in SI units, oscillators at rest at t = 0.

    Raises
    ------
    TypeError, ValueError
        As in `linear_response`, naming the index of a bad period or damping.

    Warns
    -----
    SubstepWarning
        When any oscillator needed sub-steps (counts in ``.substeps``).

    Notes
    -----
    PSV = ω·SD, PSA = ω²·SD. All oscillators run in one compiled pass over
    the record, interleaved so the loop over oscillators vectorises.

    References
    ----------
    See `linear_response`.

    Examples
    --------
    >>> import numpy as np
    >>> from groundstep.core import Record, elastic_spectrum, period_grid
    >>> rec = Record(0.1 * np.sin(np.arange(500) * 0.05), dt=0.01, unit="g")
    >>> spec = elastic_spectrum(rec, period_grid(0.1, 4.0, 50), [0.02, 0.05])  # Δt/T <= 0.1: no sub-steps
    >>> spec.psa.shape
    (2, 50)
    """
    record = _check_record(record)
    period_values = check_periods(periods, "periods")
    damping_values = check_dampings(dampings, "dampings")
    resolved = check_method(method)
    ratio = _check_ratio(max_step_ratio)

    dt = record.dt
    limit = step_limit(resolved, ratio)
    counts, order, used, starts, total, largest, split, worst, needed = _kernels.spectrum_plan(
        period_values, damping_values, dt, limit, MAX_SUBSTEPS
    )
    if worst >= 0:
        raise _too_many(dt, float(period_values[worst]), needed, limit, resolved)
    found = np.empty((3, order.shape[0]))
    if order.shape[0]:
        n = record.n
        _budget.check_work(
            n * float(total),
            lambda: f"a spectrum of {n} samples x {used.size} oscillators x {used.mean():.3g} sub-steps on average",
        )
        # The kernels step the load p = -ü_g. Negating the load rows A4..A7 of the map instead and
        # handing them ü_g itself saves a record-length copy and changes no bit: negation is exact
        # and rounding is symmetric about zero, so every product, sum and interpolated load of the
        # recurrence comes out exactly negated and the state (u, v) exactly the same.
        if resolved.is_newmark:
            coef = _coefficients.newmark_sorted(order, period_values, damping_values, counts, dt,
                                                resolved.beta, resolved.gamma, -1.0)  # fmt: skip
        else:
            coef = _coefficients.exact_sorted(order, period_values, damping_values, counts, dt, -1.0)
        zeros = np.zeros(order.shape[0])
        _kernels.spectrum_peaks(record.accel, coef, used, starts, zeros, zeros, found, total)
    shape = (damping_values.shape[0], period_values.shape[0])
    substeps = counts.reshape(shape)
    if largest > 1:
        _warn_grid_substeps(dt, substeps, "oscillators", resolved, ratio, counted=(split, largest))
    sd, sv, sa, psv, psa = _kernels.spectrum_values(found, order, period_values, shape[0], record.accel).reshape(
        (5, *shape)
    )
    return ElasticSpectrum(
        periods=period_values, dampings=damping_values, sd=sd, sv=sv, sa=sa, psv=psv, psa=psa,
        substeps=substeps, method=resolved, dt=dt,
        max_step_ratio=math.nan if ratio is None else ratio,
    )  # fmt: skip


def period_grid(shortest: float = 0.01, longest: float = 10.0, count: int = 100) -> NDArray[np.float64]:
    """Log-spaced periods [s] from `shortest` to `longest`, both included.

    Parameters
    ----------
    shortest, longest : float
        First and last period [s], 0 < shortest < longest.
    count : int, default 100
        Number of periods, >= 2.

    Returns
    -------
    ndarray (count,)
        Periods [s], ascending.

    Raises
    ------
    TypeError, ValueError
        A bound that is not a positive number, `longest` <= `shortest`, or
        `count` not an integer >= 2.

    Examples
    --------
    >>> period_grid(0.1, 10.0, 3)
    array([ 0.1,  1. , 10. ])
    """
    low = _validate.positive(shortest, "shortest")
    high = _validate.positive(longest, "longest")
    if not high > low:
        raise ValueError(f"`longest` must exceed `shortest`, got {low!r} and {high!r}")
    grid = np.geomspace(low, high, check_integer(count, "count", 2))
    grid[0], grid[-1] = low, high
    return grid


def _check_record(record: object) -> Record:
    if not isinstance(record, Record):
        raise TypeError(
            f"`record` must be a groundstep Record, got {type(record).__name__}; "
            "build one with Record(accel, dt, unit) or Record.from_text(path, dt)"
        )
    return record


def _check_ratio(max_step_ratio: float | None) -> float | None:
    if max_step_ratio is None:
        return None
    ratio = _validate.positive(max_step_ratio, "max_step_ratio")
    if ratio < _MIN_STEP_RATIO:
        raise _budget.LimitError(
            f"`max_step_ratio` must be >= {_MIN_STEP_RATIO:g}, got {ratio!r}",
            "pass None to turn the accuracy limit off, or a ratio such as 0.1",
        )
    return ratio


#: Smallest accepted `max_step_ratio`: times the smallest period (1e-12 s) it keeps
#: limit·T a normal float64 (1e-21), so dt/(limit·T) cannot divide by an underflowed zero.
_MIN_STEP_RATIO = 1e-9


def _limit_text(method: Method, ratio: float | None) -> str:
    limit = min(math.inf if ratio is None else ratio, method.stability_limit)
    return f"{limit:.4g}"


def _warn_substeps(period: float, dt: float, substeps: int, method: Method, ratio: float | None,
                   stacklevel: int = 3) -> None:  # fmt: skip
    """SubstepWarning for one oscillator whose record step was split (none when substeps is 1).

    `stacklevel` counts from the caller of this helper's caller: the user's line by default.
    """
    if substeps > 1:
        _notices.warn(
            SubstepWarning(
                f"period {period:g} s with record step {dt:g} s: each step split into "
                f"{substeps} sub-steps (Δt/T <= {_limit_text(method, ratio)})"
            ),
            stacklevel=stacklevel,
        )


def _warn_grid_substeps(dt: float, substeps: NDArray[np.int64], what: str, method: Method,
                        ratio: float | None, stacklevel: int = 3,
                        counted: tuple[int, int] | None = None) -> None:  # fmt: skip
    """One SubstepWarning for a grid of `what` ("oscillators", "periods") if any was split.

    `counted` is (how many counts exceed 1, the largest count) when the caller has them.
    """
    split, largest = (int(np.count_nonzero(substeps > 1)), int(substeps.max())) if counted is None else counted
    if largest > 1:
        _notices.warn(
            SubstepWarning(
                f"record step {dt:g} s: {split} of {substeps.size} {what} sub-stepped, "
                f"up to {largest} sub-steps (Δt/T <= {_limit_text(method, ratio)})"
            ),
            stacklevel=stacklevel,
        )


def _step_coefficients(
    dt: float, periods: NDArray[np.float64], dampings: NDArray[np.float64], method: Method, ratio: float | None
) -> tuple[NDArray[np.float64], NDArray[np.int64]]:
    """Map coefficients (10, n) of ONE sub-step h = dt/s, and the sub-step counts s."""
    substeps = substep_counts(dt, periods, method, ratio)
    omega = 2.0 * np.pi / periods
    step = dt / substeps
    if not method.is_newmark:
        return _coefficients.exact(omega, dampings, step), substeps
    return _coefficients.newmark(omega, dampings, step, method.beta, method.gamma), substeps
