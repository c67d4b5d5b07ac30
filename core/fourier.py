"""Fourier amplitude spectrum of a ground acceleration record, with optional smoothing.

SI units (m, s, Hz). No spreadsheet library is imported here.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from .checks import check_positive
from .record import Record

__all__ = ["FourierAmplitude", "KONNO_OHMACHI", "fourier_amplitude"]

#: Name of the one smoothing window offered, as `fourier_amplitude` accepts it.
KONNO_OHMACHI = "konno-ohmachi"

#: Up to this many non-zero frequencies the smoothed spectrum is evaluated at
#: every FFT frequency; above it, on a log-spaced set (see `fourier_amplitude`).
_FULL_SMOOTHING_LIMIT = 2048

#: Log-spaced centre frequencies per half width of the window's main lobe on a
#: long record. The main lobe of the Konno-Ohmachi window spans
#: b·log10(f/fc) in [-π, π]; 8 centres per half lobe sample the smoothed curve
#: finely (a choice of ours, checked against the full evaluation in the tests).
_CENTRES_PER_HALF_LOBE = 8

#: Window values evaluated per block when smoothing (bounds the memory use to about 32 MB).
_BLOCK_ELEMENTS = 4_000_000

_KONNO_OHMACHI_REFERENCE = "Konno & Ohmachi 1998, BSSA 88(1):228-241"


@dataclass(frozen=True, slots=True, eq=False)
class FourierAmplitude:
    """Fourier amplitude spectrum, returned by `fourier_amplitude`.

    Attributes
    ----------
    frequencies : ndarray (m,)
        Frequencies [Hz], rising.
    amplitudes : ndarray (m,)
        Fourier amplitude |A(f)| [m/s] of the acceleration in m/s².
    smoothing : str or None
        ``None`` for the raw spectrum, else the window and its parameter in words.
    dt : float
        Time step of the record [s].
    n : int
        Number of record samples transformed (no padding).
    """

    frequencies: NDArray[np.float64]
    amplitudes: NDArray[np.float64]
    smoothing: str | None
    dt: float
    n: int

    def __repr__(self) -> str:
        how = "raw" if self.smoothing is None else self.smoothing
        return (
            f"FourierAmplitude({self.frequencies.size} frequencies "
            f"{self.frequencies[0]:.4g}-{self.frequencies[-1]:.4g} Hz, {how})"
        )


def fourier_amplitude(record: Record, smoothing: str | None = None, *, bandwidth: float = 40.0) -> FourierAmplitude:
    """One-sided Fourier amplitude spectrum of the ground acceleration [m/s].

    Parameters
    ----------
    record : Record
        Ground acceleration a(t) [m/s²], n samples at step dt [s].
    smoothing : {None, "konno-ohmachi"}, default None
        ``None``: the raw amplitudes at the n//2 + 1 FFT frequencies
        k/(n·dt), k = 0 ... n//2. ``"konno-ohmachi"``: smoothed by the
        Konno & Ohmachi (1998) window (see Notes).
    bandwidth : float, default 40
        Keyword only. Bandwidth coefficient b of the Konno-Ohmachi window,
        > 0; larger b smooths less. 40 is the value Konno & Ohmachi (1998)
        used.

    Returns
    -------
    FourierAmplitude
        ``.frequencies`` [Hz], ``.amplitudes`` [m/s], ``.smoothing``
        (``None`` or e.g. ``"Konno-Ohmachi, b = 40 (Konno & Ohmachi 1998,
        BSSA 88(1):228-241)"``).

    Raises
    ------
    TypeError
        `record` is not a Record; `smoothing` is not a string or None.
    ValueError
        Unknown smoothing name; `bandwidth` not > 0.

    Notes
    -----
    Raw spectrum: A_k = |X_k|·dt with X = ``numpy.fft.rfft`` of the n
    samples (no padding, no taper), which approximates the continuous
    transform |∫ a(t) e^(-2πift) dt| at f_k = k/(n·dt). Parseval's identity
    then reads dt·Σ a_j² = Δf·Σ w_k A_k² with Δf = 1/(n·dt), w = 1 at
    f = 0 (and at the Nyquist frequency when n is even), 2 elsewhere.

    Smoothed spectrum: S(fc) = Σ_k W(f_k, fc)·A_k / Σ_k W(f_k, fc), summed
    over every non-zero FFT frequency, with the window
    W = [sin(b·log10(f/fc)) / (b·log10(f/fc))]⁴ (W = 1 at f = fc).
    The window is not defined at f = 0, so the zero-frequency bin is left
    out of the sums and of the output. When the record has more than 2048
    non-zero FFT frequencies, S is evaluated on a log-spaced set of centre
    frequencies from 1/(n·dt) to the Nyquist frequency, 8 per half main
    lobe (log10 step π/(8·b), 0.0098 decade for b = 40), instead of at every
    FFT frequency; the sums still run over every FFT frequency.

    References
    ----------
    Konno, K., and Ohmachi, T. (1998). Ground-motion characteristics
    estimated from spectral ratio between horizontal and vertical
    components of microtremor. Bulletin of the Seismological Society of
    America, 88(1), 228-241.

    Examples
    --------
    >>> t = np.arange(100) * 0.01
    >>> spectrum = fourier_amplitude(Record(np.sin(2 * np.pi * 5.0 * t), 0.01, "m/s2"))
    >>> round(float(spectrum.frequencies[5]), 6), round(float(spectrum.amplitudes[5]), 6)  # A·n·dt/2
    (5.0, 0.5)
    """
    if not isinstance(record, Record):
        raise TypeError(f"`record` must be a groundstep Record, got {type(record).__name__}")
    if smoothing is not None and not isinstance(smoothing, str):
        raise TypeError(f"`smoothing` must be None or {KONNO_OHMACHI!r}, got {type(smoothing).__name__}")
    b = check_positive(bandwidth, "bandwidth")
    if smoothing is not None and smoothing.strip().lower() != KONNO_OHMACHI:
        raise ValueError(f"`smoothing` must be None or {KONNO_OHMACHI!r}, got {smoothing!r}")
    n, dt = record.n, record.dt
    # numpy's pocketfft: the same transform as scipy.fft, without importing scipy (0.15-0.6 s) for it
    frequencies = np.asarray(np.fft.rfftfreq(n, dt), dtype=np.float64)
    amplitudes = np.asarray(np.abs(np.fft.rfft(record.accel)) * dt, dtype=np.float64)
    if smoothing is None:
        return FourierAmplitude(frequencies, amplitudes, None, dt, n)
    nonzero, values = frequencies[1:], amplitudes[1:]
    if nonzero.size <= _FULL_SMOOTHING_LIMIT:
        centres = nonzero
    else:
        step = math.pi / (_CENTRES_PER_HALF_LOBE * b)  # log10 step of the centres
        count = int(math.ceil(math.log10(nonzero[-1] / nonzero[0]) / step)) + 1
        centres = np.geomspace(nonzero[0], nonzero[-1], count)
    smoothed = _konno_ohmachi(nonzero, values, centres, b)
    text = f"Konno-Ohmachi, b = {b:g} ({_KONNO_OHMACHI_REFERENCE})"
    if centres is not nonzero:
        text += f", on {centres.size} log-spaced frequencies"
    return FourierAmplitude(centres, smoothed, text, dt, n)


def _konno_ohmachi(
    frequencies: NDArray[np.float64], values: NDArray[np.float64], centres: NDArray[np.float64], b: float
) -> NDArray[np.float64]:
    """Σ W·values / Σ W at each centre; every frequency and centre > 0 (Konno & Ohmachi 1998)."""
    log_f = np.log10(frequencies)
    log_c = np.log10(centres)
    out = np.empty(centres.size)
    rows = max(1, _BLOCK_ELEMENTS // frequencies.size)
    for start in range(0, centres.size, rows):
        block = slice(start, start + rows)
        # np.sinc(x/π) = sin(x)/x, equal to 1 at x = 0 (guarded inside numpy)
        window = np.sinc((b / math.pi) * (log_f[np.newaxis, :] - log_c[block, np.newaxis]))
        window *= window
        window *= window
        out[block] = (window @ values) / window.sum(axis=1)
    return out
