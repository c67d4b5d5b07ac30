"""Results of the yielding engine: frozen value objects (no numerics) and its error and warnings.

Fields are keyword-only and the repr is one line, as in ``results.py``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from .methods import Method
from .results import MethodParameters, _span

__all__ = [
    "ConvergenceError",
    "ConvergenceWarning",
    "DuctilitySpectrum",
    "DuctilityTargetWarning",
    "InelasticResponse",
]


class ConvergenceError(RuntimeError):
    """A step's Newton iterations did not converge even after splitting it.

    Attributes ``time`` [s] and ``residual`` [m/s², per unit mass] locate the
    failure.
    """

    def __init__(self, message: str, time: float, residual: float) -> None:
        super().__init__(message)
        self.time = time
        self.residual = residual
        #: The message without the advice on keywords, and advice for spreadsheet users
        #: (see `groundstep.core.budget.LimitError`, which carries the same two).
        self.fact = message
        self.cell_advice = ""


class ConvergenceWarning(UserWarning):
    """Steps were split into smaller pieces so that Newton's method converged."""


class DuctilityTargetWarning(RuntimeWarning):
    """A target ductility was not reached: NaN returned, or the search stopped short of its tolerance.

    `ductility_spectrum` issues it; ``achieved_ductility`` shows what was reached.
    """


@dataclass(frozen=True, slots=True, eq=False, kw_only=True)
class InelasticResponse(MethodParameters):
    """Response of one yielding oscillator, returned by `inelastic_response`.

    Forces are per unit mass [m/s²]; energies per unit mass [m²/s²] in the
    relative formulation (the oscillator's motion relative to the ground).
    Histories are at the record's sample times.

    Attributes
    ----------
    period, damping, hardening : float
        T [s], ζ [-] and α [-] (post-yield stiffness α·k).
    method : Method
        ``"average"``, ``"linear"`` or ``"newmark"`` (``method.describe()``
        for reports); `beta` and `gamma` are its parameters (read-only
        properties).
    dt : float
        Record time step [s].
    substeps : int
        Sub-steps per record step from the Δt/T limit (1 when none).
    yield_pseudo_acceleration : float
        Yield strength per unit mass fy/m [m/s²] (the name `DuctilitySpectrum`
        uses too).
    yield_coefficient : float
        fy/(m·g) [-], g = 9.80665 m/s².
    reduction_factor : float
        R = (peak elastic force of the same oscillator) / fy [-]; below 1 the
        oscillator stays elastic.
    elastic_pseudo_acceleration : float
        Peak elastic force per unit mass ω²·SD [m/s²] of the same oscillator
        kept linear (same method and sub-steps): its PSA.
    time, displacement, velocity, total_acceleration, restoring_force : ndarray (n,)
        t [s], relative u [m], relative u̇ [m/s], ü + ü_g = -(c·u̇ + fs)
        [m/s²] and fs [m/s²].
    peak_displacement : float
        max |u| [m], read at every sub-step (between samples when the record
        step was sub-divided).
    time_of_peak_displacement : float
        First time [s] of the peak (a sub-step time).
    yield_displacement : float
        u_y = fy/k [m].
    ductility : float
        μ = max |u| / u_y [-] (below 1 when the oscillator stays elastic).
    residual_displacement : float
        u - fs/k at the end of the record [m]: where the oscillator comes to
        rest if it then unloads elastically (its permanent set).
    yield_excursions : int
        Entries into a yielding branch (each start of yielding in either
        direction).
    input_energy, kinetic_energy, damping_energy, strain_energy, hysteretic_energy : float
        At the end of the record [m²/s²]: E_I = -∫ü_g du, E_K = u̇²/2,
        E_D = ∫c·u̇ du, E_S = fs²/(2k) (recoverable), E_H = ∫fs du - E_S.
    input_energy_history, kinetic_energy_history, damping_energy_history,
    strain_energy_history, hysteretic_energy_history : ndarray (n,) or None
        The same at every sample when ``energy_histories=True``, else None.
    energy_balance_error : float
        max over samples of |E_I - (E_K + E_D + E_S + E_H)| divided by
        max over samples of |E_I| (0 for a record with no input) [-].
    iterations : int
        Newton iterations (tangent solves) in all.
    converged : bool
        Every step met the residual tolerance. Always True on a returned
        result: a step that cannot be made to converge raises
        `ConvergenceError` instead.
    retried_steps : int
        Sub-steps that had to be split into smaller pieces to converge.
    tolerance : float
        Accepted residual |R| [m/s²] (the relative tolerance times the
        reference force).
    max_step_ratio : float
        The largest Δt/T the sub-steps kept (NaN when sub-stepping was off);
        the default 0.02 keeps the yielding results within 1 % of the
        converged solution (``groundstep.core.defaults.DEFAULT_YIELDING_STEP_RATIO``).
    """

    period: float
    damping: float
    hardening: float
    method: Method
    dt: float
    substeps: int
    yield_pseudo_acceleration: float
    yield_coefficient: float
    reduction_factor: float
    elastic_pseudo_acceleration: float
    time: NDArray[np.float64]
    displacement: NDArray[np.float64]
    velocity: NDArray[np.float64]
    total_acceleration: NDArray[np.float64]
    restoring_force: NDArray[np.float64]
    peak_displacement: float
    time_of_peak_displacement: float
    yield_displacement: float
    ductility: float
    residual_displacement: float
    yield_excursions: int
    input_energy: float
    kinetic_energy: float
    damping_energy: float
    strain_energy: float
    hysteretic_energy: float
    input_energy_history: NDArray[np.float64] | None
    kinetic_energy_history: NDArray[np.float64] | None
    damping_energy_history: NDArray[np.float64] | None
    strain_energy_history: NDArray[np.float64] | None
    hysteretic_energy_history: NDArray[np.float64] | None
    energy_balance_error: float
    iterations: int
    converged: bool
    retried_steps: int
    tolerance: float
    max_step_ratio: float = math.nan


    def __repr__(self) -> str:
        return (
            f"InelasticResponse(period={self.period:g} s, damping={self.damping:g}, "
            f"hardening={self.hardening:g}, method={self.method.name!r}, n={self.time.size}, "
            f"substeps={self.substeps}, R={self.reduction_factor:.4g}, "
            f"yield_coefficient={self.yield_coefficient:.4g}, ductility={self.ductility:.4g}, "
            f"peak_displacement={self.peak_displacement:.4g} m, yield_excursions={self.yield_excursions})"
        )


@dataclass(frozen=True, slots=True, eq=False, kw_only=True)
class DuctilitySpectrum(MethodParameters):
    """Constant-ductility spectra, returned by `ductility_spectrum`.

    Every 2-D array has shape (len(ductilities), len(periods)); SI units,
    forces per unit mass.

    Attributes
    ----------
    periods : ndarray (n_periods,)
        T [s].
    ductilities : ndarray (n_ductilities,)
        Target ductilities μ [-].
    damping, hardening : float
        ζ [-] and α [-].
    yield_coefficient : ndarray
        fy/(m·g) [-] giving each target ductility (the largest such strength).
    reduction_factor : ndarray
        R = (peak elastic force) / fy [-]; 1 for μ = 1.
    yield_pseudo_acceleration : ndarray
        fy/m [m/s²]; for μ = 1 it equals the elastic PSA.
    peak_displacement : ndarray
        Inelastic displacement demand μ_achieved · fy/k [m].
    achieved_ductility : ndarray
        Ductility of the oscillator at the returned strength [-] (the target
        to within the search tolerance); NaN at T = 0. For μ = 1 it can
        differ from 1 by round-off only: both the elastic peak and the
        yielding oscillator's peak are read at every sub-step.
    elastic_pseudo_acceleration : ndarray (n_periods,)
        Peak elastic force per unit mass ω²·SD [m/s²] (PGA at T = 0).
    substeps : ndarray of int (n_periods,)
        Sub-steps per record step used for each period.
    method : Method
        The integration method; `beta` and `gamma` are its parameters
        (read-only properties).
    dt, max_step_ratio : float
        Record step [s] and the Δt/T limit used (NaN when turned off).
    """

    periods: NDArray[np.float64]
    ductilities: NDArray[np.float64]
    damping: float
    hardening: float
    yield_coefficient: NDArray[np.float64]
    reduction_factor: NDArray[np.float64]
    yield_pseudo_acceleration: NDArray[np.float64]
    peak_displacement: NDArray[np.float64]
    achieved_ductility: NDArray[np.float64]
    elastic_pseudo_acceleration: NDArray[np.float64]
    substeps: NDArray[np.int64]
    method: Method
    dt: float
    max_step_ratio: float


    def __repr__(self) -> str:
        n_mu, n_p = self.reduction_factor.shape
        finite = self.reduction_factor[np.isfinite(self.reduction_factor)]
        return (
            f"DuctilitySpectrum({n_mu} ductilities × {n_p} periods, T {_span(self.periods)} s, "
            f"μ {_span(self.ductilities)}, damping={self.damping:g}, hardening={self.hardening:g}, "
            f"method={self.method.name!r}, R {_span(finite)}"
            + (f", {self.reduction_factor.size - finite.size} not reached" if finite.size < self.reduction_factor.size else "")
            + ")"
        )
