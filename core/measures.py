"""Intensity measures of a ground acceleration record.

Small functions on a `Record`; SI units (m, s). No spreadsheet library is
imported here.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import NDArray

from ._units import STANDARD_GRAVITY
from .record import Record

__all__ = ["arias_intensity", "normalised_arias", "significant_duration"]


def arias_intensity(record: Record) -> NDArray[np.float64]:
    """Build-up of the Arias intensity over the record [m/s].

    Parameters
    ----------
    record : Record
        Ground acceleration a(t).

    Returns
    -------
    ndarray (n,)
        I_A(t_i) = π/(2g)·∫₀^t_i a(t)² dt [m/s], 0 at the first sample; the
        last value is the record's Arias intensity.

    Raises
    ------
    TypeError
        `record` is not a Record.

    Notes
    -----
    The acceleration is taken linear between samples, as everywhere in
    groundstep, so each step contributes exactly
    dt/3·(a_i² + a_i·a_{i+1} + a_{i+1}²). g = 9.80665 m/s².

    References
    ----------
    Arias, A. (1970). A measure of earthquake intensity. In R. J. Hansen
    (Ed.), Seismic Design for Nuclear Power Plants (pp. 438-483). MIT Press,
    Cambridge, Massachusetts.

    Examples
    --------
    >>> rec = Record([1.0, 1.0, 1.0], dt=0.5, unit="m/s2")
    >>> arias_intensity(rec) * 2 * 9.80665 / np.pi
    array([0. , 0.5, 1. ])
    """
    _check(record)
    a = record.accel
    pieces = record.dt / 3.0 * (a[:-1] ** 2 + a[:-1] * a[1:] + a[1:] ** 2)
    build_up = np.empty_like(a)
    build_up[0] = 0.0
    np.cumsum(pieces, out=build_up[1:])
    return build_up * (math.pi / (2.0 * STANDARD_GRAVITY))


def normalised_arias(record: Record) -> NDArray[np.float64]:
    """Arias intensity build-up divided by its final value (0 to 1) [-].

    A record of zeros gives zeros. See `arias_intensity` (Arias 1970).

    Parameters
    ----------
    record : Record
        Ground acceleration.

    Returns
    -------
    ndarray, shape (n,)
        I_A(t) / I_A(end), rising from 0 to 1 [-].

    References
    ----------
    Arias, A. (1970). A measure of earthquake intensity. In R. J. Hansen (ed.),
    Seismic Design for Nuclear Power Plants, MIT Press, 438-483.

    Examples
    --------
    >>> normalised_arias(Record([0.0, 1.0, 1.0], dt=1.0, unit="m/s2"))
    array([0.  , 0.25, 1.  ])
    """
    build_up = arias_intensity(record)
    final = build_up[-1]
    return build_up / final if final > 0.0 else np.zeros_like(build_up)


def significant_duration(record: Record, start: float = 0.05, end: float = 0.95) -> float:
    """Time [s] between the `start` and `end` fractions of the Arias intensity.

    Parameters
    ----------
    record : Record
    start, end : float, default 0.05 and 0.95
        Fractions of the final Arias intensity, 0 <= start < end <= 1.

    Returns
    -------
    float
        t(end) - t(start) [s], each time found by linear interpolation of the
        normalised build-up; 0 for a record of zeros.

    Raises
    ------
    ValueError
        Fractions out of order or outside [0, 1].

    References
    ----------
    Trifunac, M. D., and Brady, A. G. (1975). A study on the duration of
    strong earthquake ground motion. Bulletin of the Seismological Society
    of America, 65(3), 581-626.

    Examples
    --------
    >>> round(significant_duration(Record(np.ones(101), dt=0.1, unit="m/s2")), 6)
    9.0
    """
    if not (0.0 <= start < end <= 1.0):
        raise ValueError(f"`start` and `end` must satisfy 0 <= start < end <= 1, got {start!r} and {end!r}")
    fraction = normalised_arias(record)
    if fraction[-1] == 0.0:
        return 0.0
    # the build-up never decreases; interpolate on its strictly rising part
    rising = np.concatenate(([True], np.diff(fraction) > 0.0))
    times = np.interp([start, end], fraction[rising], record.time[rising])
    return float(times[1] - times[0])


def _check(record: object) -> None:
    if not isinstance(record, Record):
        raise TypeError(f"`record` must be a groundstep Record, got {type(record).__name__}")
