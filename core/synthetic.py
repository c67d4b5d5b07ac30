"""Seeded synthetic ground acceleration from a published stochastic model.

Stationary white noise is shaped by the Kanai–Tajimi soil filter (Kanai
1957; Tajimi 1960), optionally times the Clough–Penzien high-pass filter
(Clough & Penzien 1975) that removes the energy near zero frequency, then
multiplied by the deterministic time envelope of Jennings, Housner & Tsai
(1968). A baseline correction makes the ground velocity and displacement end
at zero, and the result is scaled to a chosen peak ground acceleration.

No spreadsheet library is imported here.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike, NDArray

from . import _validate
from .record import Record
from .units import ACCELERATION_UNITS, normalise_unit

__all__ = [
    "filtered_noise",
    "jennings_envelope",
    "kanai_tajimi_psd",
    "synthetic_record",
]


def kanai_tajimi_psd(
    frequency: ArrayLike,
    ground_frequency: float = 2.5,
    ground_damping: float = 0.6,
    highpass_frequency: float | None = 0.25,
    highpass_damping: float = 0.6,
    intensity: float = 1.0,
) -> NDArray[np.float64]:
    """Two-sided power spectral density of filtered white noise, per rad/s.

    Parameters
    ----------
    frequency : array_like
        Frequencies f [Hz] (ω = 2πf).
    ground_frequency : float, default 2.5
        Soil-filter frequency f_g [Hz], > 0.
    ground_damping : float, default 0.6
        Soil-filter damping ratio ζ_g, > 0.
    highpass_frequency : float or None, default 0.25
        Clough–Penzien corner f_f [Hz]; ``None`` leaves the Kanai–Tajimi
        filter alone.
    highpass_damping : float, default 0.6
        Clough–Penzien damping ratio ζ_f, > 0.
    intensity : float, default 1
        Two-sided white-noise intensity S₀ [(m/s²)²/(rad/s)].

    Returns
    -------
    ndarray
        S(ω) = S₀·|H_KT(ω)|²·|H_CP(ω)|² [(m/s²)²/(rad/s)], same shape as
        `frequency`.

    Notes
    -----
    With ω_g = 2πf_g and ω_f = 2πf_f::

        |H_KT|² = (ω_g⁴ + 4ζ_g²ω_g²ω²) / ((ω_g² - ω²)² + 4ζ_g²ω_g²ω²)
        |H_CP|² = ω⁴ / ((ω_f² - ω²)² + 4ζ_f²ω_f²ω²)

    The one-sided density per hertz, as `scipy.signal.welch` estimates it,
    is 4π·S(2πf).

    References
    ----------
    Kanai, K. (1957). Semi-empirical formula for the seismic characteristics
    of the ground. Bulletin of the Earthquake Research Institute, University
    of Tokyo, 35, 309-325.

    Tajimi, H. (1960). A statistical method of determining the maximum
    response of a building structure during an earthquake. Proceedings of the
    2nd World Conference on Earthquake Engineering, Tokyo, 2, 781-798.

    Clough, R. W., and Penzien, J. (1975). Dynamics of Structures.
    McGraw-Hill, New York.

    Examples
    --------
    >>> float(kanai_tajimi_psd(0.0, highpass_frequency=None))
    1.0
    """
    return intensity * _gain_squared(
        2.0 * np.pi * np.asarray(frequency, dtype=np.float64),
        *_filter_parameters(ground_frequency, ground_damping, highpass_frequency, highpass_damping),
    )


def jennings_envelope(
    time: ArrayLike, rise_time: float = 2.0, strong_duration: float = 6.0, decay: float = 0.35
) -> NDArray[np.float64]:
    """Deterministic intensity envelope of Jennings, Housner & Tsai (1968).

    Parameters
    ----------
    time : array_like
        Times t [s], >= 0.
    rise_time : float, default 2.0
        t₁ [s], > 0: end of the quadratic build-up.
    strong_duration : float, default 6.0
        t₂ - t₁ [s], >= 0: length of the constant strong phase.
    decay : float, default 0.35
        c [1/s], > 0: rate of the exponential decay after t₂.

    Returns
    -------
    ndarray
        e(t) in [0, 1].

    Notes
    -----
    e(t) = (t/t₁)² for t < t₁; 1 for t₁ <= t <= t₂; exp(-c·(t - t₂)) after.

    References
    ----------
    Jennings, P. C., Housner, G. W., and Tsai, N. C. (1968). Simulated
    earthquake motions. Report, Earthquake Engineering Research Laboratory,
    California Institute of Technology, Pasadena.

    Examples
    --------
    >>> jennings_envelope([0.0, 1.0, 2.0, 5.0], rise_time=2.0, strong_duration=3.0)
    array([0.  , 0.25, 1.  , 1.  ])
    """
    t = np.asarray(time, dtype=np.float64)
    t1 = _validate.positive(rise_time, "rise_time")
    strong = _validate.as_float(strong_duration, "strong_duration")
    if strong < 0.0:
        raise ValueError(f"`strong_duration` must be >= 0 s, got {strong!r}")
    c = _validate.positive(decay, "decay")
    t2 = t1 + strong
    rising = np.clip(t / t1, 0.0, None) ** 2
    # exp argument clipped at 0 so the unused branch never overflows
    falling = np.exp(-c * np.clip(t - t2, 0.0, None))
    return np.where(t < t1, rising, np.where(t <= t2, 1.0, falling))


def filtered_noise(
    n: int,
    dt: float,
    ground_frequency: float = 2.5,
    ground_damping: float = 0.6,
    highpass_frequency: float | None = 0.25,
    highpass_damping: float = 0.6,
    intensity: float = 1.0,
    seed: int | np.random.Generator | None = 0,
) -> NDArray[np.float64]:
    """Stationary Gaussian samples whose spectral density is `kanai_tajimi_psd`.

    Parameters
    ----------
    n : int
        Number of samples, >= 2.
    dt : float
        Time step [s], > 0.
    ground_frequency, ground_damping, highpass_frequency, highpass_damping, intensity
        As in `kanai_tajimi_psd`.
    seed : int, numpy Generator or None, default 0
        Seed of ``numpy.random.default_rng``; the same seed gives the same
        samples.

    Returns
    -------
    ndarray (n,)
        Acceleration [m/s²] with two-sided density S(ω) up to the Nyquist
        frequency π/dt.

    Notes
    -----
    Discrete white noise of variance 2π·S₀/dt has two-sided density S₀ per
    rad/s up to the Nyquist frequency; its discrete Fourier transform is
    multiplied by the filter's complex gain H_KT(ω)·H_CP(ω) and transformed
    back. The product is a circular convolution, so the output is exactly
    stationary over the `n` samples.

    References
    ----------
    See `kanai_tajimi_psd`.
    """
    if isinstance(n, bool) or not isinstance(n, (int, np.integer)) or n < 2:
        raise ValueError(f"`n` must be an integer >= 2, got {n!r}")
    step = _validate.positive(dt, "dt")
    level = _validate.positive(intensity, "intensity")
    parameters = _filter_parameters(ground_frequency, ground_damping, highpass_frequency, highpass_damping)
    rng = seed if isinstance(seed, np.random.Generator) else np.random.default_rng(seed)
    noise = rng.standard_normal(int(n)) * math.sqrt(2.0 * math.pi * level / step)
    omega = 2.0 * np.pi * np.fft.rfftfreq(int(n), step)
    return np.fft.irfft(np.fft.rfft(noise) * _gain(omega, *parameters), int(n))


def synthetic_record(
    duration: float = 20.0,
    dt: float = 0.01,
    *,
    pga: float = 0.3,
    unit: str = "g",
    seed: int = 0,
    ground_frequency: float = 2.5,
    ground_damping: float = 0.6,
    highpass_frequency: float | None = 0.25,
    highpass_damping: float = 0.6,
    rise_time: float = 2.0,
    strong_duration: float = 6.0,
    decay: float = 0.35,
    name: str = "",
) -> Record:
    """A seeded synthetic accelerogram: enveloped filtered white noise.

    Parameters
    ----------
    duration : float, default 20
        Record length [s]; the record holds round(duration/dt) + 1 samples.
    dt : float, default 0.01
        Time step [s].
    pga : float, default 0.3
        Peak ground acceleration after scaling, in `unit`, > 0.
    unit : str, default ``"g"``
        Unit of the returned record's samples.
    seed : int, default 0
        Random seed; equal seeds give equal records.
    ground_frequency, ground_damping, highpass_frequency, highpass_damping
        Filter parameters as in `kanai_tajimi_psd` [Hz] and [-].
    rise_time, strong_duration, decay
        Envelope parameters as in `jennings_envelope` [s], [s], [1/s].
    name : str, optional
        Record label; defaults to a description of the seed.

    Returns
    -------
    Record
        Ground velocity and displacement end at zero (to round-off).

    Raises
    ------
    ValueError
        Non-positive duration, dt or pga; fewer than 8 samples; bad filter
        or envelope parameters (message names the argument).

    Notes
    -----
    1. x(t): `filtered_noise` with the given filters (stationary).
    2. a(t) = e(t)·x(t) with e from `jennings_envelope`.
    3. Baseline: a ← a - e(t)·(c₀ + c₁·t/T_d), with c₀, c₁ solved so that the
       ground velocity and displacement at the last sample are zero, both
       integrated as in ``Record.ground_velocity`` and
       ``Record.ground_displacement`` (acceleration linear between samples).
       The correction vanishes where the envelope does, so the record still
       starts at rest.
    4. a is scaled so that max|a| = `pga`.

    References
    ----------
    Kanai (1957); Tajimi (1960); Clough & Penzien (1975): see
    `kanai_tajimi_psd`. Jennings, Housner & Tsai (1968): see
    `jennings_envelope`.

    Examples
    --------
    >>> rec = synthetic_record(duration=10.0, dt=0.01, pga=0.2, seed=3)
    >>> round(float(np.max(np.abs(rec.accel_in("g")))), 9)
    0.2
    """
    total = _validate.positive(duration, "duration")
    step = _validate.positive(dt, "dt")
    peak = _validate.positive(pga, "pga")
    unit = normalise_unit(unit, ACCELERATION_UNITS)
    n = round(total / step) + 1
    if n < 8:
        raise ValueError(f"`duration` {total!r} s at `dt` {step!r} s gives {n} samples; at least 8 are needed")
    time = np.arange(n) * step
    envelope = jennings_envelope(time, rise_time, strong_duration, decay)
    noise = filtered_noise(
        n, step, ground_frequency, ground_damping, highpass_frequency, highpass_damping, 1.0, seed
    )
    accel = envelope * noise
    shapes = np.vstack([envelope, envelope * time / time[-1]])
    ends = np.array([_end_state(shape, step) for shape in shapes]).T  # rows: velocity, displacement
    accel = accel - np.linalg.solve(ends, _end_state(accel, step)) @ shapes
    accel *= peak / np.max(np.abs(accel))
    label = name or f"synthetic (Kanai-Tajimi, seed {seed})"
    return Record(accel, step, unit, name=label)


def _end_state(accel: NDArray[np.float64], dt: float) -> tuple[float, float]:
    """Ground velocity and displacement at the last sample, as Record integrates them."""
    record = Record(accel, dt, "m/s2")
    return float(record.ground_velocity()[-1]), float(record.ground_displacement()[-1])


def _filter_parameters(
    ground_frequency: float, ground_damping: float, highpass_frequency: float | None, highpass_damping: float
) -> tuple[float, float, float | None, float]:
    omega_g = 2.0 * math.pi * _validate.positive(ground_frequency, "ground_frequency")
    zeta_g = _validate.positive(ground_damping, "ground_damping")
    zeta_f = _validate.positive(highpass_damping, "highpass_damping")
    omega_f = None
    if highpass_frequency is not None:
        omega_f = 2.0 * math.pi * _validate.positive(highpass_frequency, "highpass_frequency")
    return omega_g, zeta_g, omega_f, zeta_f


def _gain(omega, omega_g, zeta_g, omega_f, zeta_f):
    """Complex gain H_KT(ω)·H_CP(ω) of the two filters."""
    kanai = (omega_g**2 + 2j * zeta_g * omega_g * omega) / (omega_g**2 - omega**2 + 2j * zeta_g * omega_g * omega)
    if omega_f is None:
        return kanai
    return kanai * (-(omega**2)) / (omega_f**2 - omega**2 + 2j * zeta_f * omega_f * omega)


def _gain_squared(omega, omega_g, zeta_g, omega_f, zeta_f):
    return np.abs(_gain(omega, omega_g, zeta_g, omega_f, zeta_f)) ** 2
