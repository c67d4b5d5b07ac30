"""Yielding oscillators: response histories, ductility demand, constant-ductility spectra."""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike, NDArray

from . import _kernels_inelastic as _kernels
from . import _notices, _validate
from . import budget as _budget
from ._ductility_search import MAX_PIECES as _MAX_PIECES
from ._ductility_search import Solver as _Solver
from ._ductility_search import raise_if_failed as _raise_if_failed
from ._ductility_search import search as _search
from .checks import (
    check_damping,
    check_ductilities,
    check_hardening,
    check_integer,
    check_method,
    check_period,
    check_periods,
    check_strength,
)
from .defaults import (
    DEFAULT_DAMPING,
    DEFAULT_MAX_ITERATIONS,
    DEFAULT_TOLERANCE,
    DEFAULT_YIELDING_STEP_RATIO,
)
from .inelastic_results import (
    ConvergenceError,
    ConvergenceWarning,
    DuctilitySpectrum,
    InelasticResponse,
)
from .linear import (  # one source
    _check_ratio,
    _check_record,
    _warn_grid_substeps,
    _warn_substeps,
    elastic_spectrum,
    linear_response,
)
from .methods import Method, substep_counts
from .record import Record
from .units import STANDARD_GRAVITY

__all__ = [
    "ConvergenceError",
    "ConvergenceWarning",
    "DEFAULT_MAX_ITERATIONS",
    "DEFAULT_TOLERANCE",
    "ductility_spectrum",
    "inelastic_response",
]


def inelastic_response(
    record: Record,
    period: float,
    damping: float = DEFAULT_DAMPING,
    method: str | tuple[float, float] | Method = "average",
    *,
    yield_coefficient: float | None = None,
    reduction_factor: float | None = None,
    hardening: float = 0.0,
    max_step_ratio: float | None = DEFAULT_YIELDING_STEP_RATIO,
    tolerance: float = DEFAULT_TOLERANCE,
    max_iterations: int = DEFAULT_MAX_ITERATIONS,
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
    method : {"average", "linear"} or (beta, gamma), default "average"
        Newmark average acceleration (β = 1/4, γ = 1/2), linear acceleration
        (β = 1/6, γ = 1/2) or another implicit pair (β > 0).
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
    max_step_ratio : float or None, default 0.02
        Largest Δt/T; longer record steps are split into equal sub-steps
        with the excitation linear in between, as in `linear_response`.
        The default (`DEFAULT_YIELDING_STEP_RATIO`) is five times tighter
        than the elastic one so that ductility, peak and residual
        displacement and hysteretic energy stay within 1 % of the converged
        solution; the ratio used is reported as ``max_step_ratio``.
    tolerance : float, default 1e-9
        Newton iterations stop when |R| <= tolerance·(fy/m + max|ü_g|), R the
        residual force per unit mass [m/s²]; in (0, 0.01).
    max_iterations : int, default 20
        Newton iterations per step before the step is split and repeated.
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
    u_y = fy/k, the peak read at every sub-step (as if the record had been
    resampled linearly onto the sub-step grid), as is the elastic peak force
    that `reduction_factor` divides.

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
    period = check_period(period, "period", rigid=False)
    damping, alpha, resolved, ratio, relative_tolerance, iterations_allowed = _check_settings(
        damping, hardening, method, max_step_ratio, tolerance, max_iterations
    )
    coefficient, reduction = check_strength(yield_coefficient, reduction_factor)

    substeps = int(substep_counts(record.dt, np.array([period]), resolved, ratio)[0])
    _budget.check_work(
        record.n * substeps * (1.0 + _budget.YIELDING_WEIGHT),
        f"a yielding response of {record.n} samples x {substeps} sub-steps",
    )
    with _notices.collect_warnings():  # the SubstepWarning is reported once, below
        linear = linear_response(record, period, damping, resolved, max_step_ratio=ratio)
    elastic_force = linear.pseudo_acceleration
    if coefficient is not None:
        fy = coefficient * STANDARD_GRAVITY
    else:
        assert reduction is not None  # check_strength returns exactly one
        if elastic_force <= 0.0:
            raise ValueError(
                "`reduction_factor` cannot set a strength: the record produces no elastic force "
                "(are all samples zero?); give `yield_coefficient` instead"
            )
        fy = elastic_force / reduction
    _check_yield_force(fy, elastic_force)
    _warn_substeps(period, record.dt, substeps, resolved, ratio)

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
        _notices.warn(
            ConvergenceWarning(
                f"period {period:g} s: {retried} steps did not converge in {iterations_allowed} Newton "
                f"iterations and were split into up to {int(info[_kernels.INFO_PIECES])} pieces"
            ),
            stacklevel=2,
        )

    kinetic = 0.5 * v * v
    strain = fs * fs / (2.0 * k)
    hysteretic = e_spring - strain
    imbalance = np.max(np.abs(e_input - (kinetic + e_damping + e_spring)))
    scale = np.max(np.abs(e_input))
    balance_error = float(imbalance / scale) if scale > 0.0 else 0.0
    peak = float(info[_kernels.INFO_PEAK])  # read at every sub-step, as the elastic force is
    yield_displacement = fy / k
    return InelasticResponse(
        period=period, damping=damping, hardening=alpha, method=resolved, dt=record.dt, substeps=substeps,
        yield_pseudo_acceleration=fy, yield_coefficient=fy / STANDARD_GRAVITY,
        reduction_factor=elastic_force / fy, elastic_pseudo_acceleration=elastic_force,
        time=record.time, displacement=u, velocity=v, total_acceleration=-(c * v + fs), restoring_force=fs,
        peak_displacement=peak, time_of_peak_displacement=float(info[_kernels.INFO_PEAK_TIME]),
        yield_displacement=yield_displacement, ductility=peak / yield_displacement,
        residual_displacement=float(u[-1] - fs[-1] / k), yield_excursions=int(info[_kernels.INFO_EXCURSIONS]),
        input_energy=float(e_input[-1]), kinetic_energy=float(kinetic[-1]), damping_energy=float(e_damping[-1]),
        strain_energy=float(strain[-1]), hysteretic_energy=float(hysteretic[-1]),
        input_energy_history=e_input if energy_histories else None,
        kinetic_energy_history=kinetic if energy_histories else None,
        damping_energy_history=e_damping if energy_histories else None,
        strain_energy_history=strain if energy_histories else None,
        hysteretic_energy_history=hysteretic if energy_histories else None,
        energy_balance_error=balance_error, iterations=int(info[_kernels.INFO_ITERATIONS]), converged=True,
        retried_steps=retried, tolerance=accepted, max_step_ratio=math.nan if ratio is None else ratio,
    )  # fmt: skip


def ductility_spectrum(
    record: Record,
    periods: ArrayLike,
    ductilities: ArrayLike,
    damping: float = DEFAULT_DAMPING,
    method: str | tuple[float, float] | Method = "average",
    *,
    hardening: float = 0.0,
    max_step_ratio: float | None = DEFAULT_YIELDING_STEP_RATIO,
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
    method : {"average", "linear"} or (beta, gamma), default "average"
        As in `inelastic_response`.
    hardening : float, default 0
        Post-yield stiffness ratio α, in [0, 1).
    max_step_ratio, tolerance, max_iterations
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
    DuctilityTargetWarning
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
    μ there: 1 to round-off, since the yielding and the elastic peaks are
    both read at every sub-step, between the samples at sub-stepped periods). At T = 0 the limit T → 0 is returned: fy = m·PGA,
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
        record, periods, ductilities, damping, method, hardening, max_step_ratio, tolerance, max_iterations
    )


def _ductility_spectrum(
    record, periods, ductilities, damping, method, hardening, max_step_ratio, tolerance, max_iterations,
    stats: dict | None = None,
) -> DuctilitySpectrum:  # fmt: skip
    """`ductility_spectrum`; fills `stats` (kernel time and oscillator-steps) when given."""
    record = _check_record(record)
    period_values = check_periods(periods, "periods")
    targets = check_ductilities(ductilities, "ductilities")
    damping, alpha, resolved, ratio, relative_tolerance, iterations_allowed = _check_settings(
        damping, hardening, method, max_step_ratio, tolerance, max_iterations
    )

    substeps = substep_counts(record.dt, period_values, resolved, ratio)
    runs = 1.0 + _budget.YIELDING_WEIGHT * _budget.DUCTILITY_RUNS_PER_TARGET * targets.size
    _budget.check_work(
        record.n * float(substeps[period_values > 0.0].sum()) * runs,
        f"a ductility spectrum of {record.n} samples x {period_values.size} periods x {targets.size} "
        f"ductilities x {float(substeps.mean()):.3g} sub-steps on average",
    )
    elastic = _elastic_forces(record, period_values, damping, resolved, ratio)
    if np.any(elastic <= 0.0):
        index = int(np.flatnonzero(elastic <= 0.0)[0])
        raise ValueError(
            f"the record produces no elastic force at `periods` index {index} "
            f"({period_values[index]!r} s); are all samples zero?"
        )
    _warn_grid_substeps(record.dt, substeps, "periods", resolved, ratio, stacklevel=4)
    shape = (targets.size, period_values.size)
    reduction = np.ones(shape)
    achieved = np.ones(shape)
    moving = period_values > 0.0
    achieved[:, ~moving] = np.nan
    search = targets > 1.0
    solver = _Solver(
        record, resolved, alpha, damping, relative_tolerance, iterations_allowed, stats,
        period_values[moving], substeps[moving],
    )  # fmt: skip
    if moving.any() and search.any():
        lanes = (period_values[moving], elastic[moving], substeps[moving])
        found_r, found_mu = _search(solver, *lanes, targets[search])
        reduction[np.ix_(search, moving)] = found_r
        achieved[np.ix_(search, moving)] = found_mu
    if moving.any() and not search.all():
        # fy = F_el: μ = 1 to round-off (both peaks are read at every sub-step)
        at_elastic = solver.ductility(period_values[moving], elastic[moving], substeps[moving])
        achieved[np.ix_(~search, moving)] = at_elastic
    fy = elastic[None, :] / reduction
    omega = np.zeros(period_values.size)
    omega[moving] = 2.0 * np.pi / period_values[moving]
    with np.errstate(divide="ignore", invalid="ignore"):
        displacement = np.where(moving, achieved * fy / (omega * omega), 0.0)
    return DuctilitySpectrum(
        periods=period_values, ductilities=targets, damping=damping, hardening=alpha,
        yield_coefficient=fy / STANDARD_GRAVITY, reduction_factor=reduction, yield_pseudo_acceleration=fy,
        peak_displacement=displacement, achieved_ductility=achieved, elastic_pseudo_acceleration=elastic,
        substeps=substeps, method=resolved, dt=record.dt, max_step_ratio=math.nan if ratio is None else ratio,
    )  # fmt: skip


def _elastic_forces(record, periods, damping, method, ratio) -> NDArray[np.float64]:
    """Peak elastic force per unit mass ω²·SD (PGA at T = 0) from the linear engine."""
    with _notices.collect_warnings():  # ductility_spectrum reports the sub-steps once
        spectrum = elastic_spectrum(record, periods, [damping], method, max_step_ratio=ratio)
    return spectrum.psa[0]


def _check_settings(damping, hardening, method, max_step_ratio, tolerance, max_iterations):
    """The settings shared by both public functions, checked in signature order."""
    return (
        check_damping(damping, "damping"), check_hardening(hardening, "hardening"),
        check_method(method, "method", yielding=True), _check_ratio(max_step_ratio),
        _check_tolerance(tolerance),
        _budget.check_iterations(check_integer(max_iterations, "max_iterations", 1)),
    )  # fmt: skip


def _check_yield_force(fy: float, elastic_force: float) -> None:
    """Refuse a yield force [m/s²] that underflows to 0 or whose ratio to the elastic force leaves float64."""
    if not fy > 0.0 or (elastic_force > 0.0 and not math.isfinite(elastic_force / max(fy, 1e-300))):
        raise _budget.LimitError(
            f"the yield force per unit mass {fy:.3g} m/s² (elastic force {elastic_force:.3g} m/s²) is not a positive "
            "float64 the engine can divide by",
            "give a reduction factor or yield coefficient of physical size (R of 1 to 100 is common practice)",
            "give a reduction factor or yield coefficient of physical size (R of 1 to 100 is common practice)",
        )


def _check_tolerance(tolerance: object) -> float:
    return _budget.check_tolerance(_validate.positive(tolerance, "tolerance"))
