"""Frozen result objects of the linear engine. They hold values, no numerics."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

__all__ = ["ElasticSpectrum", "LinearResponse"]


@dataclass(frozen=True, slots=True, eq=False)
class LinearResponse:
    """Response of one linear oscillator, returned by `linear_response`.

    Histories are at the record's sample times; peaks are max |·| over every
    sub-step (the samples themselves when no sub-steps were needed), and
    each ``time_of_peak_*`` is the first time [s] it occurs.

    Attributes
    ----------
    period, damping : float
        T [s] and ζ [-].
    method : str
        ``"average"``, ``"linear"``, ``"newmark"`` or ``"exact"``.
    beta, gamma : float
        Newmark parameters (NaN for ``"exact"``).
    dt : float
        Record time step [s].
    substeps : int
        Sub-steps per record step (1 when none were needed); peaks are read
        at every sub-step.
    time, displacement, velocity, total_acceleration : ndarray (n,)
        t [s], relative u [m], relative u̇ [m/s], ü + ü_g [m/s²].
    peak_displacement, peak_velocity, peak_total_acceleration : float
        SD [m], SV [m/s], SA [m/s²].
    pseudo_velocity, pseudo_acceleration : float
        PSV = ω·SD [m/s], PSA = ω²·SD [m/s²] (PSA = SA and PSV = 0 for T = 0).
    """

    period: float
    damping: float
    method: str
    beta: float
    gamma: float
    dt: float
    substeps: int
    time: NDArray[np.float64]
    displacement: NDArray[np.float64]
    velocity: NDArray[np.float64]
    total_acceleration: NDArray[np.float64]
    peak_displacement: float
    peak_velocity: float
    peak_total_acceleration: float
    time_of_peak_displacement: float
    time_of_peak_velocity: float
    time_of_peak_total_acceleration: float
    pseudo_velocity: float
    pseudo_acceleration: float


@dataclass(frozen=True, slots=True, eq=False)
class ElasticSpectrum:
    """Elastic response spectra, returned by `elastic_spectrum`.

    Every 2-D array has shape (len(dampings), len(periods)); SI units.

    Attributes
    ----------
    periods : ndarray (n_periods,)
        T [s].
    dampings : ndarray (n_dampings,)
        ζ [-].
    sd, sv, sa : ndarray
        Peak relative displacement [m], relative velocity [m/s] and total
        acceleration [m/s²].
    psv, psa : ndarray
        ω·SD [m/s] and ω²·SD [m/s²] (0 and SA at T = 0).
    substeps : ndarray of int
        Sub-steps per record step used for each oscillator.
    method, beta, gamma, dt, max_step_ratio
        Settings the spectra were computed with.
    """

    periods: NDArray[np.float64]
    dampings: NDArray[np.float64]
    sd: NDArray[np.float64]
    sv: NDArray[np.float64]
    sa: NDArray[np.float64]
    psv: NDArray[np.float64]
    psa: NDArray[np.float64]
    substeps: NDArray[np.int64]
    method: str
    beta: float
    gamma: float
    dt: float
    max_step_ratio: float
