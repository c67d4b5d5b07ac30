"""Record processing: baseline correction, band-pass filtering and replay of a processing history.

Every function returns a new `Record` and leaves its input untouched; the
new record's ``history`` ends with a `ProcessingStep` naming the function,
its arguments and the library that did the numerical work, so
`replay_history` can recompute the record from the raw one. SI units (m, s,
Hz). No spreadsheet library is imported here.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterable

import numpy as np
from numpy.polynomial import legendre
from numpy.typing import NDArray

from . import _notices
from .checks import check_integer, check_positive
from .record import ProcessingStep, Record

__all__ = ["MAX_BASELINE_ORDER", "PAD_FACTOR", "ReplayWarning", "bandpass", "baseline_correct", "replay_history"]

#: Highest polynomial degree `baseline_correct` fits. A baseline is a slow
#: trend; higher degrees start to follow the shaking itself.
MAX_BASELINE_ORDER = 10

#: Zero pad at each end of a filtered record, in units of order/f_c [s]:
#: T_pad = 1.5·order/f_c, the rule Boore (2005) quotes for acausal
#: Butterworth filters (from memory; common practice), applied here at each
#: end, the more generous reading.
PAD_FACTOR = 1.5


class ReplayWarning(UserWarning):
    """A history step was recorded with another library version; samples may differ in the last digits."""


def baseline_correct(record: Record, order: int = 2) -> Record:
    """Remove the least-squares polynomial trend of the ground velocity [m/s²].

    Parameters
    ----------
    record : Record
        Ground acceleration a(t) [m/s²].
    order : int, default 2
        Degree of the velocity trend removed, 1 to 10: 1 removes a constant
        acceleration offset, 2 an offset and a linear drift of the
        acceleration.

    Returns
    -------
    Record
        a(t) - P'(t), same dt, unit, name and header; ``history`` gains
        ``ProcessingStep("baseline_correct", (("order", order),), "numpy X.Y.Z")``.

    Raises
    ------
    TypeError
        `record` is not a Record; `order` is not an integer.
    ValueError
        `order` outside 1 to 10, or not fewer than the record's samples.

    Notes
    -----
    Fitting target: the ground velocity v(t), not the acceleration. A
    baseline offset of the acceleration is invisible among the shaking but
    turns into a linear velocity trend and a quadratic displacement drift
    (Boore 2001), so the trend is fitted where it shows: P(t) of degree
    `order` with P(0) = 0 (the record starts from rest) is fitted to v(t) at
    every sample by least squares, and its derivative P'(t), of degree
    order - 1, is subtracted from a(t). The fit is made in the record's own
    integration rule: the basis functions are Legendre polynomials of the
    scaled time 2t/t_end - 1 (well conditioned) taken as accelerations and
    integrated by `Record.ground_velocity`, so the corrected velocity is
    exactly the least-squares residual v - P (to round-off) and holds no
    trend of degree <= `order`. The displacement of that residual may still
    wander; a high-pass filter (`bandpass`) is the tool for long-period
    noise.

    References
    ----------
    Boore, D. M. (2001). Effect of baseline corrections on displacements and
    response spectra for several recordings of the 1999 Chi-Chi, Taiwan,
    earthquake. Bulletin of the Seismological Society of America, 91(5),
    1199-1211.

    Examples
    --------
    >>> rec = Record(np.full(101, 0.2), dt=0.01, unit="m/s2")  # a constant offset
    >>> corrected = baseline_correct(rec, order=1)
    >>> float(np.abs(corrected.accel).max()) < 1e-12
    True
    >>> corrected.history[-1].describe().startswith("baseline_correct(order=1) [numpy")
    True
    """
    _check_record(record)
    degree = check_integer(order, "order", 1)
    if degree > MAX_BASELINE_ORDER:
        raise ValueError(
            f"`order` must be at most {MAX_BASELINE_ORDER} (a baseline is a slow trend), got {degree}"
        )
    if degree >= record.n:
        raise ValueError(
            f"`order` must be below the record's {record.n} samples to fit a trend, got {degree}"
        )
    scaled = np.linspace(-1.0, 1.0, record.n)
    basis = legendre.legvander(scaled, degree - 1)  # accelerations, shape (n, order)
    velocities = np.column_stack(
        [Record(column, record.dt, "m/s2", accel_is_si=True).ground_velocity() for column in basis.T]
    )
    coefficients = np.linalg.lstsq(velocities, record.ground_velocity(), rcond=None)[0]
    step = ProcessingStep("baseline_correct", (("order", degree),), f"numpy {np.__version__}")
    return _new_record(record, record.accel - basis @ coefficients, step)


def bandpass(
    record: Record,
    low_hz: float | None,
    high_hz: float | None,
    order: int = 4,
    *,
    taper: float = 0.05,
    keep_pads: bool = True,
) -> Record:
    """Zero-phase Butterworth band-pass (or high- or low-pass) filter of the acceleration.

    Parameters
    ----------
    record : Record
        Ground acceleration a(t) [m/s²].
    low_hz : float or None
        Low corner f_low [Hz] (high-pass part); ``None`` for a low-pass.
    high_hz : float or None
        High corner f_high [Hz] (low-pass part); ``None`` for a high-pass.
        At least one corner is given; each lies strictly between 0 and the
        Nyquist frequency 1/(2·dt), and f_low < f_high.
    order : int, default 4
        Order of the Butterworth filter of one pass, even and >= 2. The
        filter runs forward and backward, so the effective order is 2·order.
    taper : float, default 0.05
        Keyword only. Fraction of the record inside the cosine (Tukey)
        taper, half at each end (0.05: 2.5 % of the length at each end;
        common practice). 0 turns the taper off.
    keep_pads : bool, default True
        Keyword only. Keep the zero pads in the returned record (Boore 2005
        recommends it: the filtered motion starts before the first sample,
        and velocity, displacement and response computed from the trimmed
        record would not match the filtered one). ``False`` returns the
        samples at the original times only.

    Returns
    -------
    Record
        Filtered acceleration [m/s²], same dt, unit, name and header. With
        `keep_pads` it holds n + 2·n_pad samples and its time 0 is the start
        of the front pad, n_pad·dt before the first original sample.
        ``history`` gains ``ProcessingStep("bandpass", (("low_hz", ...),
        ("high_hz", ...), ("order", ...), ("taper", ...), ("keep_pads", ...)),
        "scipy X.Y.Z")``.

    Raises
    ------
    TypeError
        `record` is not a Record; a corner is not a number or None; `order`
        is not an integer; `keep_pads` is not a bool.
    ValueError
        Both corners None; a corner outside (0, Nyquist) (the message names
        the Nyquist frequency); f_low >= f_high; `order` odd or < 2; `taper`
        outside [0, 1].

    Notes
    -----
    1. Taper: a(t) times ``scipy.signal.windows.tukey(n, taper)``.
    2. Zero pad at each end: n_pad = ceil(1.5·order / (f_c·dt)) samples,
       f_c the low corner (the high corner for a low-pass); ``PAD_FACTOR``
       (Boore 2005; from memory, common practice).
    3. ``scipy.signal.butter(order, corners, btype, output="sos", fs=1/dt)``
       applied with ``scipy.signal.sosfiltfilt(..., padtype=None)``: forward
       then backward, so the phase cancels and the gain is |H(f)|². At a
       corner |H|² = 1/2 for one pass, so the amplitude gain after both is
       1/2 (power 1/4, -6 dB).

    References
    ----------
    Boore, D. M. (2005). On pads and filters: processing strong-motion data.
    Bulletin of the Seismological Society of America, 95(2), 745-750.

    Butterworth, S. (1930). On the theory of filter amplifiers. Experimental
    Wireless and the Wireless Engineer, 7, 536-541.

    Examples
    --------
    >>> t = np.arange(2000) * 0.01
    >>> rec = Record(np.sin(2 * np.pi * 2.0 * t), dt=0.01, unit="m/s2")
    >>> filtered = bandpass(rec, 0.5, 10.0, keep_pads=False)
    >>> round(float(np.abs(filtered.accel[500:1500]).max()), 2)  # 2 Hz is mid-band: gain 1
    1.0
    """
    _check_record(record)
    nyquist = 0.5 / record.dt
    low = _corner(low_hz, "low_hz", nyquist, record.dt)
    high = _corner(high_hz, "high_hz", nyquist, record.dt)
    if low is None and high is None:
        raise ValueError("`low_hz` and `high_hz` are both None: give a low corner, a high corner or both")
    if low is not None and high is not None and not low < high:
        raise ValueError(f"`low_hz` must be below `high_hz`, got {low!r} and {high!r} Hz")
    poles = check_integer(order, "order", 2)
    if poles % 2:
        raise ValueError(
            f"`order` must be even (each pass then factors into whole second-order sections), got {poles}; "
            f"use {poles + 1}"
        )
    fraction = _fraction(taper, "taper")
    if not isinstance(keep_pads, (bool, np.bool_)):
        raise TypeError(f"`keep_pads` must be True or False, got {type(keep_pads).__name__} {keep_pads!r}")
    if low is not None and high is not None:
        corners: float | list[float] = [low, high]
        kind = "bandpass"
    elif low is not None:
        corners, kind = low, "highpass"
    else:
        assert high is not None
        corners, kind = high, "lowpass"
    pad_corner = low if low is not None else high
    assert pad_corner is not None
    n_pad = math.ceil(PAD_FACTOR * poles / (pad_corner * record.dt) * (1.0 - 1e-12))
    import scipy
    import scipy.signal  # imported when first used: a process that never filters never loads it

    tapered = record.accel * scipy.signal.windows.tukey(record.n, fraction)
    padded = np.concatenate((np.zeros(n_pad), tapered, np.zeros(n_pad)))
    sos = scipy.signal.butter(poles, corners, btype=kind, output="sos", fs=1.0 / record.dt)
    filtered = scipy.signal.sosfiltfilt(sos, padded, padtype=None)
    samples = filtered if keep_pads else filtered[n_pad : n_pad + record.n]
    parameters = (("low_hz", low), ("high_hz", high), ("order", poles), ("taper", fraction),
                  ("keep_pads", bool(keep_pads)))  # fmt: skip
    step = ProcessingStep("bandpass", parameters, f"scipy {scipy.__version__}")
    return _new_record(record, samples, step)


def replay_history(record: Record, history: Iterable[ProcessingStep]) -> Record:
    """Apply recorded processing steps to a record again, oldest first.

    Parameters
    ----------
    record : Record
        The record the steps start from, usually the raw one as read.
    history : iterable of ProcessingStep
        The steps to apply, e.g. ``processed.history[len(raw.history):]``.
        Each names a function of this module (``"baseline_correct"``,
        ``"bandpass"``) and the arguments it was called with.

    Returns
    -------
    Record
        The record after every step. The same steps with the same library
        versions give the same samples, bit for bit.

    Raises
    ------
    TypeError
        `record` is not a Record, or a step is not a ProcessingStep.
    ValueError
        A step names an unknown operation or arguments that operation does
        not take (the step's index is given), or an argument is refused by
        the operation itself.

    Warns
    -----
    ReplayWarning
        A step was recorded with another library version than the one
        installed; the samples may then differ in the last digits.

    Examples
    --------
    >>> raw = Record(np.sin(np.arange(500) * 0.1) + 0.01, dt=0.01, unit="m/s2")
    >>> processed = bandpass(baseline_correct(raw), 0.2, None)
    >>> again = replay_history(raw, processed.history)
    >>> bool(np.array_equal(again.accel, processed.accel))
    True
    """
    _check_record(record)
    for index, step in enumerate(history):
        if not isinstance(step, ProcessingStep):
            raise TypeError(f"`history` must hold ProcessingStep entries; index {index} is {type(step).__name__}")
        operation = _OPERATIONS.get(step.operation)
        if operation is None:
            raise ValueError(
                f"`history` index {index}: unknown operation {step.operation!r}; "
                f"this version can replay {', '.join(sorted(_OPERATIONS))}"
            )
        function, library = operation
        if step.library and step.library != library():
            _notices.warn(
                ReplayWarning(
                    f"`history` index {index} ({step.operation}) was recorded with {step.library}; "
                    f"replaying with {library()}, so samples may differ in the last digits"
                ),
                stacklevel=2,
            )
        arguments = dict(step.parameters)
        try:
            record = function(record, **arguments)
        except TypeError as exc:
            if "unexpected keyword argument" not in str(exc) and "missing" not in str(exc):
                raise
            raise ValueError(
                f"`history` index {index}: {step.describe()} does not match the arguments of "
                f"{step.operation}: {exc}"
            ) from None
    return record


_OPERATIONS: dict[str, tuple[Callable[..., Record], Callable[[], str]]] = {
    "bandpass": (bandpass, lambda: f"scipy {_scipy_version()}"),
    "baseline_correct": (baseline_correct, lambda: f"numpy {np.__version__}"),
}


def _check_record(record: object) -> None:
    if not isinstance(record, Record):
        raise TypeError(
            f"`record` must be a groundstep Record, got {type(record).__name__}; "
            "build one with Record(accel, dt, unit) or Record.from_text(path, dt)"
        )


def _corner(value: object, argument: str, nyquist: float, dt: float) -> float | None:
    """A corner frequency [Hz] strictly between 0 and the Nyquist frequency, or None."""
    if value is None:
        return None
    corner = check_positive(value, argument)
    if not corner < nyquist:
        raise ValueError(
            f"`{argument}` must lie between 0 and the Nyquist frequency {nyquist:g} Hz (1/(2·dt) for "
            f"dt = {dt:g} s), got {corner!r} Hz; lower it, or leave it None"
        )
    return corner


def _fraction(value: object, argument: str) -> float:
    """A number in [0, 1]."""
    if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)):
        raise TypeError(f"`{argument}` must be a number in [0, 1], got {type(value).__name__} {value!r}")
    number = float(value)
    if not 0.0 <= number <= 1.0:
        raise ValueError(f"`{argument}` must be a fraction in [0, 1], got {number!r}; 0.05 tapers 2.5 % at each end")
    return number


def _new_record(record: Record, samples: NDArray[np.float64], step: ProcessingStep) -> Record:
    """A Record of SI `samples` that keeps `record`'s dt, unit, name and header and adds `step`."""
    return Record(
        samples,
        record.dt,
        unit=record.unit,
        name=record.name,
        header=record.header,
        history=record.history + (step,),
        accel_is_si=True,
    )


def _scipy_version() -> str:
    import scipy

    return str(scipy.__version__)
