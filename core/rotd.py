"""Orientation-independent spectra of a two-component record: RotD50, RotD100 and others.

Each oscillator's displacement under the two horizontal components is
computed once; by linearity its response to the motion turned by θ is
u(θ) = u_x·cosθ + u_y·sinθ, so the peaks over angles need no extra runs.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from . import _kernels, _kernels_rotd
from .checks import check_damping, check_periods, check_positive
from .defaults import DEFAULT_DAMPING, DEFAULT_STEP_RATIO
from .linear import _step_coefficients, _warn_grid_substeps
from .methods import resolve_method
from .record import Record

__all__ = ["DEFAULT_ANGLE_STEP", "RotDSpectrum", "rotd_spectrum"]

#: Step between the angles of rotation [degrees]: 1° over 0°-179° (180
#: angles) as in Boore (2010).
DEFAULT_ANGLE_STEP = 1.0
#: Oscillators per parallel chunk: half of ``_kernels.CHUNK``, so that even a
#: period grid without sub-steps gives both cores of a small machine work.
_CHUNK = _kernels.CHUNK // 2
#: Relative tolerance for the two records' time steps to count as equal.
_DT_TOLERANCE = 1e-9


@dataclass(frozen=True, slots=True, eq=False)
class RotDSpectrum:
    """Orientation-independent spectra of a record pair, returned by `rotd_spectrum`.

    Spectral values are pseudo-spectral accelerations PSA = ω²·SD [m/s²]
    (ground acceleration for T = 0); arrays over periods have shape
    (n_periods,).

    Attributes
    ----------
    periods : ndarray (n_periods,)
        T [s].
    damping : float
        ζ [-].
    percentiles : ndarray (n_percentiles,)
        The percentiles requested [%].
    values : ndarray (n_percentiles, n_periods)
        RotDnn for each requested percentile nn [m/s²].
    rotd100 : ndarray
        The largest PSA over all directions, ω²·max over t of
        sqrt(u_x² + u_y²): exact, not limited to the angle grid [m/s²].
    angle_rotd100 : ndarray
        Direction of RotD100, in [0, 180) degrees counter-clockwise from the
        x component towards y.
    psa_x, psa_y : ndarray
        PSA of each component as given [m/s²].
    geometric_mean : ndarray
        sqrt(psa_x·psa_y) [m/s²] (orientation-dependent; Boore et al. 2006).
    angles : ndarray (n_angles,)
        Angles of rotation θ [degrees], from 0 in steps of `angle_step`.
    peaks_by_angle : ndarray (n_periods, n_angles)
        PSA of the motion turned by each angle [m/s²].
    substeps : ndarray of int (n_periods,)
        Sub-steps per record step of each oscillator (peaks are read at every
        sub-step).
    method, beta, gamma, dt, max_step_ratio, angle_step
        Settings the spectra were computed with (angle_step in degrees).
    """

    periods: NDArray[np.float64]
    damping: float
    percentiles: NDArray[np.float64]
    values: NDArray[np.float64]
    rotd100: NDArray[np.float64]
    angle_rotd100: NDArray[np.float64]
    psa_x: NDArray[np.float64]
    psa_y: NDArray[np.float64]
    geometric_mean: NDArray[np.float64]
    angles: NDArray[np.float64]
    peaks_by_angle: NDArray[np.float64]
    substeps: NDArray[np.int64]
    method: str
    beta: float
    gamma: float
    dt: float
    max_step_ratio: float
    angle_step: float

    def __repr__(self) -> str:
        shown = ", ".join(f"{p:g}" for p in self.percentiles)
        return (
            f"RotDSpectrum(n_periods={self.periods.size}, damping={self.damping:g}, "
            f"percentiles=({shown}), angles={self.angles.size}, method={self.method!r})"
        )

    @property
    def rotd50(self) -> NDArray[np.float64]:
        """RotD50: median over the angles of the PSA of the turned motion [m/s²]."""
        return self.percentile(50.0)

    def percentile(self, p: float) -> NDArray[np.float64]:
        """RotDnn for any percentile `p` in [0, 100] [m/s²]; 100 gives the exact `rotd100`."""
        return _percentiles(self.peaks_by_angle, np.array([_check_percentile(p)]), self.rotd100)[0]


def rotd_spectrum(
    record_x: Record,
    record_y: Record,
    periods: ArrayLike,
    damping: float = DEFAULT_DAMPING,
    method: str | tuple[float, float] = "average",
    percentiles: ArrayLike = (50, 100),
    *,
    angle_step: float = DEFAULT_ANGLE_STEP,
    max_step_ratio: float | None = DEFAULT_STEP_RATIO,
) -> RotDSpectrum:
    """Orientation-independent spectra (RotD50, RotD100, ...) of two horizontal components.

    Parameters
    ----------
    record_x, record_y : Record
        The two horizontal components, at right angles, y counter-clockwise
        from x; same time step and number of samples.
    periods : array_like (n_periods,)
        Periods T [s], >= 0 (0 is a rigid oscillator).
    damping : float, default 0.05
        Ratio of critical damping ζ, in [0, 1).
    method : {"average", "linear", "exact"} or (beta, gamma), default "average"
        As in `linear_response`.
    percentiles : array_like, default (50, 100)
        Percentiles nn of the RotDnn values to report, each in [0, 100];
        any other one is available afterwards from ``.percentile(p)``.
    angle_step : float, default 1.0
        Step between the angles of rotation [degrees]; the angles are 0,
        step, ..., up to 180 - step (180 / step of them). It must divide 180.
    max_step_ratio : float or None, default 0.1
        As in `linear_response`: the same sub-step rule as `elastic_spectrum`.

    Returns
    -------
    RotDSpectrum
        ``.rotd50``, ``.rotd100``, ``.values``, ``.percentile(p)``,
        ``.angle_rotd100``, ``.geometric_mean``, ``.peaks_by_angle`` in SI
        units (PSA [m/s²]).

    Raises
    ------
    TypeError
        A record is not a Record; a number argument is not a number.
    ValueError
        The records differ in time step or in length (the samples of the
        two components must be simultaneous: trim them to the same window
        first); a bad period, damping, method, percentile or `angle_step`.

    Warns
    -----
    SubstepWarning
        When any oscillator needed sub-steps (counts in ``.substeps``).

    Notes
    -----
    For the motion turned by θ, ü_g(θ) = ü_x·cosθ + ü_y·sinθ, and linearity
    gives u(θ, t) = u_x(t)·cosθ + u_y(t)·sinθ. PSA(θ) = ω²·max_t |u(θ, t)|;
    RotDnn is the nn-th percentile of PSA(θ) over the angles (Boore 2010),
    computed with linear interpolation between ordered values (the median
    of 180 values is the mean of the 90th and 91st). RotD100 is
    ω²·max_t sqrt(u_x² + u_y²), the exact maximum over all directions, and
    `angle_rotd100` its direction. Peaks over angles come from the convex
    hull of the points (u_x, u_y) over every sub-step
    (``_kernels_rotd``), exactly equal to projecting every point. Peaks are
    read at every sub-step, as in `elastic_spectrum`. The geometric mean of
    the two components' PSA is the orientation-dependent measure of Boore
    et al. (2006).

    References
    ----------
    Boore, D. M., Watson-Lamprey, J., and Abrahamson, N. A. (2006).
    Orientation-independent measures of ground motion. Bulletin of the
    Seismological Society of America, 96(4A), 1502-1511.

    Boore, D. M. (2010). Orientation-independent, nongeometric-mean measures
    of seismic intensity from two horizontal components of motion. Bulletin
    of the Seismological Society of America, 100(4), 1830-1835.

    Examples
    --------
    >>> import numpy as np
    >>> from groundstep.core import Record
    >>> t = np.arange(0, 4, 0.01)
    >>> x = Record(np.sin(2 * np.pi * t), dt=0.01, unit="m/s2")
    >>> y = Record(np.zeros_like(t), dt=0.01, unit="m/s2")
    >>> spec = rotd_spectrum(x, y, [0.5, 1.0])
    >>> bool(np.allclose(spec.rotd100, spec.psa_x))  # one component: RotD100 is its PSA
    True
    >>> spec.angle_rotd100.tolist()
    [0.0, 0.0]
    """
    record_x = _check_record(record_x, "record_x")
    record_y = _check_record(record_y, "record_y")
    _check_pair(record_x, record_y)
    period_values = check_periods(periods, "periods")
    damping_value = check_damping(damping, "damping")
    resolved = resolve_method(method)
    ratio = None if max_step_ratio is None else check_positive(max_step_ratio, "max_step_ratio")
    wanted = _check_percentiles(percentiles)
    angles = _angle_grid(angle_step)

    moving = period_values > 0.0
    radians = np.deg2rad(angles)
    cosines, sines = np.cos(radians), np.sin(radians)
    peaks = np.empty((period_values.size, angles.size))
    extremes = np.empty((period_values.size, _kernels_rotd.N_EXTREMES))
    substeps = np.ones(period_values.size, dtype=np.int64)
    if moving.any():
        index = np.flatnonzero(moving)
        coef, substeps[index] = _step_coefficients(record_x.dt, period_values[index], np.full(index.size, damping_value),
                                                   resolved, ratio)  # fmt: skip
        order = np.argsort(substeps[index], kind="stable")  # chunks of equal sub-step count
        used = np.ascontiguousarray(substeps[index][order])
        found = np.empty((index.size, angles.size))
        found_extremes = np.empty((index.size, _kernels_rotd.N_EXTREMES))
        _kernels_rotd.rotd_peaks(-record_x.accel, -record_y.accel, np.ascontiguousarray(coef[:, order]), used,
                                 _kernels.chunk_starts(used, _CHUNK), cosines, sines, found, found_extremes)
        rows = index[order]
        omega2 = (2.0 * np.pi / period_values[rows]) ** 2  # PSA = ω²·SD
        peaks[rows] = found * omega2[:, None]
        found_extremes[:, :3] *= omega2[:, None]
        extremes[rows] = found_extremes
    if not moving.all():
        peaks[~moving], extremes[~moving] = _rigid_peaks(record_x.accel, record_y.accel, cosines, sines)
    _warn_grid_substeps(record_x.dt, substeps, "periods", resolved, ratio)  # the one wording of both engines

    psa_x, psa_y, rotd100 = extremes[:, 0], extremes[:, 1], extremes[:, 2]
    direction = np.degrees(np.arctan2(extremes[:, 4], extremes[:, 3])) % 180.0
    direction = np.where(direction >= 180.0, 0.0, direction)  # a tiny negative angle % 180 rounds to 180
    return RotDSpectrum(
        periods=period_values,
        damping=damping_value,
        percentiles=wanted,
        values=_percentiles(peaks, wanted, rotd100),
        rotd100=rotd100,
        angle_rotd100=direction,
        psa_x=psa_x,
        psa_y=psa_y,
        geometric_mean=np.sqrt(psa_x * psa_y),
        angles=angles,
        peaks_by_angle=peaks,
        substeps=substeps,
        method=resolved.name,
        beta=resolved.beta,
        gamma=resolved.gamma,
        dt=record_x.dt,
        max_step_ratio=math.nan if ratio is None else ratio,
        angle_step=float(angles[1] - angles[0]) if angles.size > 1 else 180.0,
    )


def _check_percentile(p: object) -> float:
    """One percentile in [0, 100] (a fraction such as 0.5 is not read as 50 %)."""
    if isinstance(p, bool) or not isinstance(p, (int, float, np.integer, np.floating)):
        raise TypeError(f"`percentile` must be a number in [0, 100], got {type(p).__name__} {p!r}")
    value = float(p)
    if not 0.0 <= value <= 100.0:
        raise ValueError(f"`percentile` must lie in [0, 100], got {value!r}; RotD50 is percentile 50")
    return value


def _check_percentiles(percentiles: ArrayLike) -> NDArray[np.float64]:
    try:
        values = np.array(percentiles, dtype=np.float64).reshape(-1)
    except (TypeError, ValueError) as exc:
        raise TypeError(f"`percentiles` must be numbers in [0, 100], got {percentiles!r:.80}") from exc
    if values.size == 0:
        raise ValueError("`percentiles` needs at least one value, e.g. (50, 100)")
    bad = np.flatnonzero(~((values >= 0.0) & (values <= 100.0)))
    if bad.size:
        index = int(bad[0])
        raise ValueError(
            f"`percentiles` must lie in [0, 100]; index {index} holds {float(values[index])!r} "
            "(RotD50 is percentile 50, not 0.5)"
        )
    return values


def _percentiles(peaks: NDArray[np.float64], wanted: NDArray[np.float64],
                 rotd100: NDArray[np.float64]) -> NDArray[np.float64]:  # fmt: skip
    """Rows of RotDnn for each percentile in `wanted`; 100 is the exact maximum `rotd100`."""
    out = np.percentile(peaks, wanted, axis=1)  # linear interpolation between ordered values
    out[wanted == 100.0] = rotd100
    return np.asarray(out, dtype=np.float64)


def _angle_grid(angle_step: object) -> NDArray[np.float64]:
    step = check_positive(angle_step, "angle_step")
    count = round(180.0 / step)
    if count < 1 or not math.isclose(count * step, 180.0, rel_tol=1e-9):
        raise ValueError(
            f"`angle_step` must divide 180° into a whole number of steps, got {step!r}; "
            "use for example 1, 2, 3, 5 or 10 degrees"
        )
    return np.arange(count, dtype=np.float64) * (180.0 / count)


def _check_record(record: object, argument: str) -> Record:
    if not isinstance(record, Record):
        raise TypeError(
            f"`{argument}` must be a groundstep Record, got {type(record).__name__}; "
            "build one with Record(accel, dt, unit) or Record.from_text(path, dt)"
        )
    return record


def _check_pair(record_x: Record, record_y: Record) -> None:
    if not math.isclose(record_x.dt, record_y.dt, rel_tol=_DT_TOLERANCE):
        raise ValueError(
            f"`record_x` and `record_y` must share one time step, got {record_x.dt!r} s and {record_y.dt!r} s; "
            "resample one component onto the other's samples first"
        )
    if record_x.n != record_y.n:
        raise ValueError(
            f"`record_x` and `record_y` must hold the same number of samples, got {record_x.n} and {record_y.n}; "
            "the two components must be simultaneous: trim both to the same time window first"
        )


def _rigid_peaks(accel_x: NDArray[np.float64], accel_y: NDArray[np.float64], cosines: NDArray[np.float64],
                 sines: NDArray[np.float64]) -> tuple[NDArray[np.float64], NDArray[np.float64]]:  # fmt: skip
    """Peaks by angle and extremes (as the kernel's) of a rigid oscillator: the ground motion itself.

    The acceleration is linear between samples, and so is its projection on
    any direction, so the samples hold every extreme.
    """
    peaks = np.array([np.max(np.abs(accel_x * c + accel_y * s)) for c, s in zip(cosines, sines)])
    radius = np.hypot(accel_x, accel_y)
    index = int(np.argmax(radius))
    extremes = np.array([np.max(np.abs(accel_x)), np.max(np.abs(accel_y)), radius[index],
                         accel_x[index], accel_y[index]])  # fmt: skip
    return peaks, extremes
