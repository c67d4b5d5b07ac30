"""Frozen result objects of the linear engine. They hold values, no numerics.

Fields are keyword-only (results are built from named fields) and the repr
is one line: shapes, settings and the key peaks, never the arrays.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from .methods import Method

__all__ = ["ElasticSpectrum", "LinearResponse", "MethodParameters"]


class MethodParameters:
    """Newmark β and γ of a result's `method` as read-only properties (NaN for the exact method).

    A base without slots of its own, shared by every result object that
    carries a `method`.
    """

    __slots__ = ()
    method: Method

    @property
    def beta(self) -> float:
        """Newmark β of `method` (NaN for the exact method)."""
        return self.method.beta

    @property
    def gamma(self) -> float:
        """Newmark γ of `method` (NaN for the exact method)."""
        return self.method.gamma


@dataclass(frozen=True, slots=True, eq=False, kw_only=True)
class LinearResponse(MethodParameters):
    """Response of one linear oscillator, returned by `linear_response`.

    Histories are at the record's sample times; peaks are max |·| over every
    sub-step (the samples themselves when no sub-steps were needed), and
    each ``time_of_peak_*`` is the first time [s] it occurs.

    Attributes
    ----------
    period, damping : float
        T [s] and ζ [-].
    method : Method
        The integration method (``method.name``, ``method.describe()``; it
        equals its name, ``method == "exact"``).
    beta, gamma : float
        Newmark parameters of `method` (NaN for ``"exact"``); read-only
        properties.
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
    method: Method
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


    def __repr__(self) -> str:
        return (
            f"LinearResponse(period={self.period:g} s, damping={self.damping:g}, method={self.method.name!r}, "
            f"n={self.time.size}, substeps={self.substeps}, SD={self.peak_displacement:.4g} m, "
            f"SV={self.peak_velocity:.4g} m/s, SA={self.peak_total_acceleration:.4g} m/s², "
            f"PSA={self.pseudo_acceleration:.4g} m/s²)"
        )


@dataclass(frozen=True, slots=True, eq=False, kw_only=True)
class ElasticSpectrum(MethodParameters):
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
    method : Method
        The integration method; `beta` and `gamma` are its parameters
        (read-only properties).
    dt, max_step_ratio : float
        Record step [s] and the Δt/T limit used (NaN when turned off).
    """

    periods: NDArray[np.float64]
    dampings: NDArray[np.float64]
    sd: NDArray[np.float64]
    sv: NDArray[np.float64]
    sa: NDArray[np.float64]
    psv: NDArray[np.float64]
    psa: NDArray[np.float64]
    substeps: NDArray[np.int64]
    method: Method
    dt: float
    max_step_ratio: float


    def __repr__(self) -> str:
        n_d, n_p = self.psa.shape
        text = (
            f"ElasticSpectrum({n_d} dampings × {n_p} periods, T {_span(self.periods)} s, "
            f"ζ {_span(self.dampings)}, method={self.method.name!r}, dt={self.dt:g} s"
        )
        if self.psa.size:
            i, j = np.unravel_index(int(np.argmax(self.psa)), self.psa.shape)
            text += (
                f", max PSA={self.psa[i, j]:.4g} m/s² at T={self.periods[j]:g} s, ζ={self.dampings[i]:g}"
            )
        return text + ")"


def _span(values: NDArray[np.float64]) -> str:
    """'0.02-10' for a range of values, '0.05' for one value ('' for none)."""
    if values.size == 0:
        return ""
    low, high = float(np.min(values)), float(np.max(values))
    return f"{low:g}" if low == high else f"{low:g}-{high:g}"
