"""Yielding oscillators: response histories, ductility demand, constant-ductility spectra."""

from __future__ import annotations

import math
import time
import warnings

import numpy as np
from numpy.typing import ArrayLike, NDArray

from . import _kernels_inelastic as _kernels
from . import _validate
from ._methods import Method, resolve_method, substep_counts
from ._units import STANDARD_GRAVITY
from .inelastic_results import ConvergenceError, ConvergenceWarning, DuctilitySpectrum, InelasticResponse
from .linear import DEFAULT_STEP_RATIO, SubstepWarning, elastic_spectrum, linear_response
from .linear import _check_ratio, _check_record, _limit_text  # shared checks, one source
from .record import Record

__all__ = [
    "ConvergenceError",
    "ConvergenceWarning",
    "DEFAULT_MAX_ITERATIONS",
    "DEFAULT_TOLERANCE",
    "ductility_spectrum",
    "inelastic_response",
]

#: Default accepted residual force, as a fraction of the reference force
#: fy/m + max|ü_g|. The spring is piecewise linear, so Newton's method ends
#: on the exact root; 1e-9 leaves room only for round-off.
DEFAULT_TOLERANCE = 1e-9
#: Default Newton iterations per step; two are the norm at a change of
#: branch when Δt/T <= 0.1, so 20 is ample.
DEFAULT_MAX_ITERATIONS = 20
#: Finest split of a step that fails to converge (a power of two).
_MAX_PIECES = 256
#: Strength candidates per period in the first (grid) stage of the search.
_GRID_CANDIDATES = 64
#: The search stops when |μ - target| <= _SEARCH_RTOL·target ...
_SEARCH_RTOL = 1e-6
#: ... or when the bracket on ln R is narrower than this.
_SEARCH_XTOL = 1e-10
#: Largest number of refinement passes (Illinois steps).
_SEARCH_PASSES = 60
#: Largest reduction factor searched before a target counts as unreachable.
_LARGEST_REDUCTION = 1e4


def inelastic_response(
    record: Record,
    period: float,
    damping: float = 0.05,
    *,
    yield_coefficient: float | None = None,
    reduction_factor: float | None = None,
    hardening: float = 0.0,
    method: str | tuple[float, float] = "average",
    tolerance: float = DEFAULT_TOLERANCE,
    max_iterations: int = DEFAULT_MAX_ITERATIONS,
    max_step_ratio: float | None = DEFAULT_STEP_RATIO,
    energy_histories: bool = False,
) -> InelasticResponse:
    """Response history of one yielding (bilinear) single-degree-of-freedom oscillator.

    Parameters
    ----------
    record : Record
        Ground acceleration ü_g.
    period : float
        Elastic natural period T [s], > 0.
    damping : float, default 0.05
        Ratio of critical damping ζ of the elastic oscillator, in [0, 1);
        the damping coefficient c = 2ζω·m stays constant when it yields.
    yield_coefficient : float, optional
        Strength as fy / (m·g) [-], > 0, with g = 9.80665 m/s².
    reduction_factor : float, optional
        Strength as R = (peak elastic force) / fy [-], > 0; the peak
        elastic force is that of the same oscillator kept linear (same
        method and sub-steps, `linear_response`). Give exactly one of
        `yield_coefficient` and `reduction_factor`.
    hardening : float, default 0
        Post-yield stiffness as a fraction α of the elastic stiffness, in
        [0, 1); 0 is elastoplastic. Kinematic hardening.
    method : {"average", "linear"} or (beta, gamma), default "average"
        Newmark average acceleration (β = 1/4, γ = 1/2), linear acceleration
        (β = 1/6, γ = 1/2) or another implicit pair (β > 0).
    tolerance : float, default 1e-9
        Newton iterations stop when |R| <= tolerance·(fy/m + max|ü_g|), R the
        residual force per unit mass [m/s²]; in (0, 0.01).
    max_iterations : int, default 20
        Newton iterations per step before the step is split and repeated.
    max_step_ratio : float or None, default 0.1
        Largest Δt/T; longer record steps are split into equal sub-steps
        with the excitation linear in between, as in `linear_response`.
    energy_histories : bool, default False
        Also return the energy at every sample.

    Returns
    -------
    InelasticResponse

    Raises
    ------
    TypeError
        `record` is not a Record; a number argument is not a number.
    ValueError
        Period <= 0, damping outside [0, 1), hardening outside [0, 1), both
        or neither of `yield_coefficient` and `reduction_factor`, a strength
        <= 0, method ``"exact"`` or β = 0, a bad tolerance or iteration count.
    ConvergenceError
        A step did not converge even when split into 256 pieces; the message
        names the time and the residual.

    Warns
    -----
    SubstepWarning
        When the record step was sub-divided for the Δt/T limit.
    ConvergenceWarning
        When steps had to be split for Newton's method to converge.

    Notes
    -----
    Equation of motion per unit mass: ü + 2ζω·u̇ + fs(u) = -ü_g with fs the
    bilinear hysteresis: elastic slope k = ω², yield force fy, post-yield
    slope α·k, kinematic hardening (the elastic range keeps the width
    2·(1 - α)·fy). Each step is implicit Newmark (Newmark 1959) with the
    residual R = p - ü - c·u̇ - fs(u) driven to zero by Newton-Raphson with
    the tangent of the current branch. Ductility μ = max|u| / u_y with
    u_y = fy/k, over the sample times.

    Energies per unit mass, relative formulation (Uang & Bertero 1990):
    E_I = -∫ü_g du = E_K + E_D + E_S + E_H. E_I and E_D use the trapezoid
    rule in time and ∫fs du is exact along the bilinear path; with average
    acceleration the balance then holds to round-off except in steps where
    the branch changes, so its error falls as Δt².

    References
    ----------
    Newmark, N. M. (1959). A method of computation for structural dynamics.
    Journal of the Engineering Mechanics Division, ASCE, 85(EM3), 67-94.

    Veletsos, A. S., and Newmark, N. M. (1960). Effect of inelastic behavior
    on the response of simple systems to earthquake motions. Proceedings of
    the 2nd World Conference on Earthquake Engineering, Tokyo, 2, 895-912.

    Uang, C.-M., and Bertero, V. V. (1990). Evaluation of seismic energy in
    structures. Earthquake Engineering and Structural Dynamics, 19(1), 77-90.

    Examples
    --------
    >>> import numpy as np
    >>> from groundstep.core import Record, inelastic_response
    >>> t = np.arange(0, 4, 0.01)
    >>> rec = Record(0.3 * np.sin(2 * np.pi * t) * np.exp(-t), dt=0.01, unit="g")
    >>> res = inelastic_response(rec, period=0.5, reduction_factor=4.0)
    >>> bool(res.ductility > 1)
    True
    """
    record = _check_record(record)
    period = _check_period(period)
    damping, alpha, resolved, ratio, relative_tolerance, iterations_allowed = _check_settings(
        damping, hardening, method, max_step_ratio, tolerance, max_iterations
    )
    coefficient, reduction = _check_strength(yield_coefficient, reduction_factor)

    substeps = int(substep_counts(record.dt, np.array([period]), resolved, ratio)[0])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", SubstepWarning)  # reported once, below
        linear = linear_response(record, period, damping, resolved, max_step_ratio=ratio)
    elastic_force = linear.pseudo_acceleration
    if coefficient is not None:
        fy = coefficient * STANDARD_GRAVITY
    else:
        if elastic_force <= 0.0:
            raise ValueError(
                "`reduction_factor` cannot set a strength: the record produces no elastic force "
                "(are all samples zero?); give `yield_coefficient` instead"
            )
        fy = elastic_force / reduction
    if substeps > 1:
        warnings.warn(
            f"period {period:g} s with record step {record.dt:g} s: each step split into "
            f"{substeps} sub-steps (Δt/T <= {_limit_text(resolved, ratio)})",
            SubstepWarning, stacklevel=2,
        )

    omega = 2.0 * math.pi / period
    k, c = omega * omega, 2.0 * damping * omega
    accepted = relative_tolerance * (fy + record.pga)
    n = record.n
    u, v, fs = np.empty(n), np.empty(n), np.empty(n)
    e_input, e_damping, e_spring = np.empty(n), np.empty(n), np.empty(n)
    info = np.zeros(_kernels.INFO_SIZE)
    _kernels.history(
        -record.accel, record.dt, substeps, k, c, fy, alpha, resolved.beta, resolved.gamma,
        accepted, iterations_allowed, _MAX_PIECES, u, v, fs, e_input, e_damping, e_spring, info,
    )  # fmt: skip
    _raise_if_failed(info, period, fy, accepted)
    retried = int(info[_kernels.INFO_RETRIED])
    if retried:
        warnings.warn(
            f"period {period:g} s: {retried} steps did not converge in {iterations_allowed} Newton "
            f"iterations and were split into up to {int(info[_kernels.INFO_PIECES])} pieces",
            ConvergenceWarning, stacklevel=2,
        )

    kinetic = 0.5 * v * v
    strain = fs * fs / (2.0 * k)
    hysteretic = e_spring - strain
    imbalance = np.max(np.abs(e_input - (kinetic + e_damping + e_spring)))
    scale = np.max(np.abs(e_input))
    balance_error = float(imbalance / scale) if scale > 0.0 else 0.0
    where = int(np.argmax(np.abs(u)))
    peak = float(abs(u[where]))
    yield_displacement = fy / k
    time_axis = record.time
    histories = (e_input, kinetic, e_damping, strain, hysteretic) if energy_histories else (None,) * 5
    return InelasticResponse(
        period, damping, alpha, resolved.name, resolved.beta, resolved.gamma, record.dt, substeps,
        fy, fy / STANDARD_GRAVITY, elastic_force / fy, elastic_force,
        time_axis, u, v, -(c * v + fs), fs,
        peak, float(time_axis[where]), yield_displacement, peak / yield_displacement,
        float(u[-1] - fs[-1] / k), int(info[_kernels.INFO_EXCURSIONS]),
        float(e_input[-1]), float(kinetic[-1]), float(e_damping[-1]), float(strain[-1]),
        float(hysteretic[-1]), *histories,
        balance_error, int(info[_kernels.INFO_ITERATIONS]), True, retried, accepted,
    )  # fmt: skip


def ductility_spectrum(
    record: Record,
    periods: ArrayLike,
    ductilities: ArrayLike,
    damping: float = 0.05,
    hardening: float = 0.0,
    *,
    method: str | tuple[float, float] = "average",
    max_step_ratio: float | None = DEFAULT_STEP_RATIO,
    tolerance: float = DEFAULT_TOLERANCE,
    max_iterations: int = DEFAULT_MAX_ITERATIONS,
) -> DuctilitySpectrum:
    """Constant-ductility spectra: the strength that gives each target ductility.

    Parameters
    ----------
    record : Record
        Ground acceleration ü_g.
    periods : array_like (n_periods,)
        Elastic periods T [s], >= 0; T = 0 gives the limit T → 0 (below).
    ductilities : array_like (n_ductilities,)
        Target ductilities μ [-], each >= 1.
    damping : float, default 0.05
        Ratio of critical damping ζ, in [0, 1).
    hardening : float, default 0
        Post-yield stiffness ratio α, in [0, 1).
    method, max_step_ratio, tolerance, max_iterations
        As in `inelastic_response`.

    Returns
    -------
    DuctilitySpectrum
        ``yield_coefficient``, ``reduction_factor``,
        ``yield_pseudo_acceleration`` and more, each of shape
        (n_ductilities, n_periods).

    Raises
    ------
    TypeError, ValueError
        As in `inelastic_response`; a ductility below 1 (naming its index);
        a record that produces no elastic force.
    ConvergenceError
        As in `inelastic_response`.

    Warns
    -----
    SubstepWarning
        When any period needed sub-steps for the Δt/T limit.
    RuntimeWarning
        When a target cannot be reached with R <= 1e4 (NaN is returned) or
        the search stopped before its tolerance.

    Notes
    -----
    μ(fy) is not monotonic: several strengths can give the same ductility,
    and the largest is taken, as is common practice. For each period the
    ductility is first computed for 64 strengths fy = F_el/R, R log-spaced
    from 1 to 2·max(μ) + 1 (extended fourfold while a target is not reached),
    all in one compiled pass; the crossing of the target nearest R = 1 is
    then refined by regula falsi with the Illinois modification until
    |μ - target| <= 1e-6·target. A crossing narrower than one grid interval
    (R ratio about 1.04) can be missed. μ = 1 gives fy = F_el exactly: the
    elastic spectrum (``achieved_ductility`` reports the oscillator's actual
    μ there, above 1 only when it peaks between samples at sub-stepped
    periods). At T = 0 the limit T → 0 is returned: fy = m·PGA,
    R = 1 for every ductility (a rigid oscillator cannot yield without
    unbounded ductility).

    References
    ----------
    Veletsos, A. S., and Newmark, N. M. (1960). Effect of inelastic behavior
    on the response of simple systems to earthquake motions. Proceedings of
    the 2nd World Conference on Earthquake Engineering, Tokyo, 2, 895-912.

    Newmark, N. M. (1959). A method of computation for structural dynamics.
    Journal of the Engineering Mechanics Division, ASCE, 85(EM3), 67-94.

    Dowell, M., and Jarratt, P. (1971). A modified regula falsi method for
    computing the root of an equation. BIT Numerical Mathematics, 11(2),
    168-174.

    Examples
    --------
    >>> import numpy as np
    >>> from groundstep.core import Record, ductility_spectrum
    >>> t = np.arange(0, 4, 0.01)
    >>> rec = Record(0.3 * np.sin(2 * np.pi * t) * np.exp(-t), dt=0.01, unit="g")
    >>> spec = ductility_spectrum(rec, [0.2, 0.5, 1.0], [1, 2, 4])
    >>> spec.reduction_factor.shape
    (3, 3)
    """
    return _ductility_spectrum(
        record, periods, ductilities, damping, hardening, method, max_step_ratio, tolerance, max_iterations
    )


def _ductility_spectrum(
    record, periods, ductilities, damping, hardening, method, max_step_ratio, tolerance, max_iterations,
    stats: dict | None = None,
) -> DuctilitySpectrum:  # fmt: skip
    """`ductility_spectrum`; fills `stats` (kernel time and oscillator-steps) when given."""
    record = _check_record(record)
    period_values = _validate.periods(periods, "periods")
    targets = _check_ductilities(ductilities)
    damping, alpha, resolved, ratio, relative_tolerance, iterations_allowed = _check_settings(
        damping, hardening, method, max_step_ratio, tolerance, max_iterations
    )

    substeps = substep_counts(record.dt, period_values, resolved, ratio)
    elastic = _elastic_forces(record, period_values, damping, resolved, ratio)
    if np.any(elastic <= 0.0):
        index = int(np.flatnonzero(elastic <= 0.0)[0])
        raise ValueError(
            f"the record produces no elastic force at `periods` index {index} "
            f"({period_values[index]!r} s); are all samples zero?"
        )
    if substeps.max() > 1:
        split = int(np.count_nonzero(substeps > 1))
        warnings.warn(
            f"record step {record.dt:g} s: {split} of {substeps.size} periods sub-stepped, up to "
            f"{substeps.max()} sub-steps (Δt/T <= {_limit_text(resolved, ratio)})",
            SubstepWarning, stacklevel=3,
        )
    shape = (targets.size, period_values.size)
    reduction = np.ones(shape)
    achieved = np.ones(shape)
    moving = period_values > 0.0
    achieved[:, ~moving] = np.nan
    search = targets > 1.0
    solver = _Solver(record, resolved, alpha, damping, relative_tolerance, iterations_allowed, stats)
    if moving.any() and search.any():
        lanes = (period_values[moving], elastic[moving], substeps[moving])
        found_r, found_mu = _search(solver, *lanes, targets[search])
        reduction[np.ix_(search, moving)] = found_r
        achieved[np.ix_(search, moving)] = found_mu
    if moving.any() and not search.all():
        # fy = F_el: 1 unless the oscillator peaks between samples (sub-stepped periods)
        at_elastic = solver.ductility(period_values[moving], elastic[moving], substeps[moving])
        achieved[np.ix_(~search, moving)] = at_elastic
    fy = elastic[None, :] / reduction
    omega = np.zeros(period_values.size)
    omega[moving] = 2.0 * np.pi / period_values[moving]
    with np.errstate(divide="ignore", invalid="ignore"):
        displacement = np.where(moving, achieved * fy / (omega * omega), 0.0)
    return DuctilitySpectrum(
        period_values, targets, damping, alpha, fy / STANDARD_GRAVITY, reduction, fy, displacement,
        achieved, elastic, substeps, resolved.name, resolved.beta, resolved.gamma, record.dt,
        math.nan if ratio is None else ratio,
    )  # fmt: skip


class _Solver:
    """Ductility of many (period, strength) oscillators of one record and settings."""

    def __init__(self, record, method, alpha, damping, relative_tolerance, max_iterations, stats):
        self.record, self.method, self.alpha, self.damping = record, method, alpha, damping
        self.relative_tolerance, self.max_iterations, self.stats = relative_tolerance, max_iterations, stats
        self.load = -record.accel

    def ductility(self, periods, fy, substeps):
        """μ = max|u|·k/fy for each lane (arrays of equal length)."""
        order = np.argsort(substeps, kind="stable")
        periods, fy, substeps = periods[order], fy[order], substeps[order]
        omega = 2.0 * np.pi / periods
        k, c = omega * omega, 2.0 * self.damping * omega
        accepted = self.relative_tolerance * (fy + self.record.pga)
        starts = _chunk_starts(substeps)
        peak, failed = np.empty(periods.size), np.empty(periods.size)
        began = time.perf_counter()
        _kernels.peaks(
            self.load, self.record.dt, self.method.beta, self.method.gamma, self.alpha, k, c, fy,
            accepted, substeps, starts, self.max_iterations, peak, failed,
        )  # fmt: skip
        if self.stats is not None:
            self.stats["kernel_seconds"] = self.stats.get("kernel_seconds", 0.0) + time.perf_counter() - began
            steps = int(np.sum(substeps)) * (self.record.n - 1)
            self.stats["oscillator_steps"] = self.stats.get("oscillator_steps", 0) + steps
        for lane in np.flatnonzero(failed):  # rare: repeat with step splitting
            peak[lane] = self._robust_peak(
                periods[lane], k[lane], c[lane], fy[lane], substeps[lane], accepted[lane]
            )
        mu = np.empty(periods.size)
        mu[order] = peak * k / fy
        return mu

    def _robust_peak(self, period, k, c, fy, substeps, accepted):
        n = self.record.n
        u, v, fs, e1, e2, e3 = (np.empty(n) for _ in range(6))
        info = np.zeros(_kernels.INFO_SIZE)
        _kernels.history(
            self.load, self.record.dt, int(substeps), k, c, fy, self.alpha, self.method.beta,
            self.method.gamma, accepted, self.max_iterations, _MAX_PIECES, u, v, fs, e1, e2, e3, info,
        )  # fmt: skip
        _raise_if_failed(info, period, fy, accepted)
        return float(np.max(np.abs(u)))


def _search(solver, periods, elastic, substeps, targets):
    """Smallest R (largest strength) reaching each target: grid stage, then Illinois."""
    n_t, n_p = targets.size, periods.size
    x_lo = np.zeros((n_t, n_p))  # ln R at the bracket ends; μ(R = 1) = 1
    f_lo = 1.0 - targets[:, None] * np.ones((1, n_p))
    x_hi = np.full((n_t, n_p), np.nan)
    f_hi = np.full((n_t, n_p), np.nan)
    start, top = 1.0, 2.0 * targets.max() + 1.0
    while True:
        open_ = np.isnan(x_hi)
        columns = np.flatnonzero(open_.any(axis=0))
        if columns.size == 0 or start >= _LARGEST_REDUCTION:
            break
        grid = np.geomspace(start, top, _GRID_CANDIDATES + 1)[1:]
        lanes_r = np.tile(grid, columns.size)
        lanes_p = np.repeat(columns, grid.size)
        mu = solver.ductility(periods[lanes_p], elastic[lanes_p] / lanes_r, substeps[lanes_p])
        mu = mu.reshape(columns.size, grid.size)
        for row in range(n_t):
            still = open_[row, columns]
            reached = mu >= targets[row]
            hit = reached.any(axis=1) & still
            first = np.argmax(reached, axis=1)
            cols = columns[hit]
            x_hi[row, cols] = np.log(grid[first[hit]])
            f_hi[row, cols] = mu[hit, first[hit]] - targets[row]
            before = first[hit] - 1
            inside = before >= 0
            x_lo[row, cols[inside]] = np.log(grid[before[inside]])
            f_lo[row, cols[inside]] = mu[hit, before][inside] - targets[row]
            miss = still & ~hit
            x_lo[row, columns[miss]] = np.log(grid[-1])
            f_lo[row, columns[miss]] = mu[miss, -1] - targets[row]
        start, top = top, top * 4.0
    reduction, achieved = _refine(solver, periods, elastic, substeps, targets, x_lo, f_lo, x_hi, f_hi)
    if np.isnan(reduction).any():
        warnings.warn(
            f"some target ductilities were not reached with reduction factors up to {_LARGEST_REDUCTION:g}; "
            "NaN returned there",
            RuntimeWarning, stacklevel=4,
        )
    return reduction, achieved


def _refine(solver, periods, elastic, substeps, targets, x_lo, f_lo, x_hi, f_hi):
    """Regula falsi with the Illinois modification on each bracket, all brackets per pass."""
    goal = np.broadcast_to(targets[:, None], x_lo.shape).ravel()
    column = np.broadcast_to(np.arange(periods.size)[None, :], x_lo.shape).ravel()
    xl, fl, xh, fh = (array.ravel().copy() for array in (x_lo, f_lo, x_hi, f_hi))
    side = np.zeros(goal.size)
    x_best = np.full(goal.size, np.nan)
    mu_best = np.full(goal.size, np.nan)
    active = ~np.isnan(xh)
    for _ in range(_SEARCH_PASSES):
        lanes = np.flatnonzero(active)
        if lanes.size == 0:
            break
        width = xh[lanes] - xl[lanes]
        x = xh[lanes] - fh[lanes] * width / (fh[lanes] - fl[lanes])
        outside = ~((x > xl[lanes]) & (x < xh[lanes]))  # also catches NaN
        x[outside] = 0.5 * (xl[lanes] + xh[lanes])[outside]
        cols = column[lanes]
        mu = solver.ductility(periods[cols], elastic[cols] / np.exp(x), substeps[cols])
        f = mu - goal[lanes]
        x_best[lanes], mu_best[lanes] = x, mu
        up = f >= 0.0
        hi_lanes, lo_lanes = lanes[up], lanes[~up]
        fl[hi_lanes[side[hi_lanes] > 0]] *= 0.5
        fh[lo_lanes[side[lo_lanes] < 0]] *= 0.5
        xh[hi_lanes], fh[hi_lanes], side[hi_lanes] = x[up], f[up], 1.0
        xl[lo_lanes], fl[lo_lanes], side[lo_lanes] = x[~up], f[~up], -1.0
        done = (np.abs(f) <= _SEARCH_RTOL * goal[lanes]) | (xh[lanes] - xl[lanes] <= _SEARCH_XTOL)
        active[lanes[done]] = False
    if active.any():
        worst = float(np.max(np.abs(mu_best[active] - goal[active]) / goal[active]))
        warnings.warn(
            f"constant-ductility search stopped after {_SEARCH_PASSES} passes for {int(active.sum())} "
            f"entries; largest relative ductility miss {worst:.2g} (see `achieved_ductility`)",
            RuntimeWarning, stacklevel=5,
        )
    return np.exp(x_best).reshape(x_lo.shape), mu_best.reshape(x_lo.shape)


def _chunk_starts(substeps: NDArray[np.int64]) -> NDArray[np.int64]:
    """Chunk boundaries: at most CHUNK lanes, one sub-step count per chunk (lanes sorted)."""
    starts = [0]
    n = substeps.size
    while starts[-1] < n:
        lo = starts[-1]
        same = int(np.searchsorted(substeps, substeps[lo], side="right"))
        starts.append(min(lo + _kernels.CHUNK, same))
    return np.array(starts, dtype=np.int64)


def _elastic_forces(record, periods, damping, method, ratio) -> NDArray[np.float64]:
    """Peak elastic force per unit mass ω²·SD (PGA at T = 0) from the linear engine."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", SubstepWarning)
        spectrum = elastic_spectrum(record, periods, [damping], method, max_step_ratio=ratio)
    return spectrum.psa[0]


def _raise_if_failed(info, period, fy, accepted) -> None:
    if info[_kernels.INFO_STATUS] == 0.0:
        return
    when = float(info[_kernels.INFO_FAIL_TIME])
    residual = float(info[_kernels.INFO_FAIL_RESIDUAL])
    raise ConvergenceError(
        f"Newton iterations did not converge at t = {when:.6g} s (period {period:g} s, yield force "
        f"{fy:.6g} m/s²): residual force {residual:.3g} m/s² per unit mass exceeds {accepted:.3g} "
        f"even with the step split into {_MAX_PIECES} pieces; raise `max_iterations`, loosen "
        "`tolerance` or lower `max_step_ratio`",
        when,
        residual,
    )


def _check_period(period: object) -> float:
    value = _validate.periods(period, "period")
    if value.size != 1:
        raise ValueError(f"`period` must be one number, got {value.size}; use ductility_spectrum for many")
    if value[0] == 0.0:
        raise ValueError(
            "`period` 0 is a rigid oscillator: it has no yield displacement, so its ductility is "
            "undefined; give a period > 0"
        )
    return float(value[0])


def _check_settings(damping, hardening, method, max_step_ratio, tolerance, max_iterations):
    """The settings shared by both public functions, checked in signature order."""
    return (
        float(_validate.dampings(damping, "damping")[0]), _check_hardening(hardening), _check_method(method),
        _check_ratio(max_step_ratio), _check_tolerance(tolerance), _check_iterations(max_iterations),
    )  # fmt: skip


def _check_hardening(hardening: object) -> float:
    alpha = _validate.as_float(hardening, "hardening")
    if alpha < 0.0:
        raise ValueError(
            f"`hardening` must be >= 0 (post-yield stiffness as a fraction of the elastic stiffness; "
            f"softening is not modelled), got {alpha!r}"
        )
    if alpha >= 1.0:
        hint = f"; {alpha:g} looks like a percentage: enter {alpha / 100:g}" if alpha <= 100.0 else ""
        raise ValueError(
            f"`hardening` must be < 1 (the post-yield stiffness must be below the elastic stiffness; "
            f"for a linear oscillator use linear_response), got {alpha!r}{hint}"
        )
    return alpha


def _check_method(method: object) -> Method:
    resolved = resolve_method(method)
    if not resolved.is_newmark:
        raise ValueError(
            "`method` 'exact' applies to linear oscillators only; a yielding oscillator needs an "
            "implicit Newmark method: use 'average' or 'linear'"
        )
    if resolved.beta <= 0.0:
        raise ValueError(
            f"`method` beta must be > 0 for the implicit yielding solver (beta 0 is explicit), "
            f"got {resolved.beta!r}"
        )
    return resolved


def _check_tolerance(tolerance: object) -> float:
    value = _validate.positive(tolerance, "tolerance")
    if value >= 0.01:
        raise ValueError(f"`tolerance` must be below 0.01 (a fraction of the reference force), got {value!r}")
    return value


def _check_iterations(max_iterations: object) -> int:
    if isinstance(max_iterations, bool) or not isinstance(max_iterations, (int, np.integer)):
        kind = type(max_iterations).__name__
        raise TypeError(f"`max_iterations` must be an integer, got {kind} {max_iterations!r}")
    if max_iterations < 1:
        raise ValueError(f"`max_iterations` must be >= 1, got {max_iterations!r}")
    return int(max_iterations)


def _check_strength(yield_coefficient: object, reduction_factor: object) -> tuple[float | None, float]:
    if yield_coefficient is not None and reduction_factor is not None:
        raise ValueError(
            "give exactly one of `yield_coefficient` and `reduction_factor`, not both "
            f"(got {yield_coefficient!r} and {reduction_factor!r})"
        )
    if yield_coefficient is None and reduction_factor is None:
        raise ValueError(
            "give the strength as `yield_coefficient` (fy/(m·g)) or `reduction_factor` "
            "(peak elastic force / fy); got neither"
        )
    if yield_coefficient is not None:
        return _validate.positive(yield_coefficient, "yield_coefficient"), math.nan
    return None, _validate.positive(reduction_factor, "reduction_factor")


def _check_ductilities(ductilities: ArrayLike) -> NDArray[np.float64]:
    values = _validate.as_vector(ductilities, "ductilities")
    low = np.flatnonzero(values < 1.0)
    if low.size:
        index = int(low[0])
        raise ValueError(
            f"`ductilities` must be >= 1 (peak over yield displacement); "
            f"index {index} holds {float(values[index])!r}"
        )
    return values
