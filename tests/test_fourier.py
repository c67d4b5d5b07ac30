"""Tests of the Fourier amplitude spectrum and its Konno-Ohmachi smoothing."""

from __future__ import annotations

import doctest
import math

import numpy as np
import pytest
from numpy.testing import assert_allclose

import groundstep.core.fourier as fourier_module
from groundstep.core import Record, synthetic_record
from groundstep.core.fourier import fourier_amplitude


def _brute_konno_ohmachi(frequencies, values, centre, b):
    """Konno & Ohmachi (1998) window average at one centre, written term by term with math.sin."""
    weights = []
    for f in frequencies:
        x = b * math.log10(f / centre)
        weights.append(1.0 if x == 0.0 else (math.sin(x) / x) ** 4)
    weights = np.array(weights)
    return float(np.sum(weights * values) / np.sum(weights))


@pytest.mark.parametrize("n", [1000, 1001])
def test_parseval_identity(n):
    """dt·Σa² = Δf·Σ w·A² with w = 1 at 0 Hz (and Nyquist for even n), 2 elsewhere (scipy.fft rfft conventions)."""
    dt = 0.01
    rec = Record(np.random.default_rng(n).standard_normal(n), dt, "m/s2")
    spectrum = fourier_amplitude(rec)
    weights = np.full(spectrum.amplitudes.size, 2.0)
    weights[0] = 1.0
    if n % 2 == 0:
        weights[-1] = 1.0
    # Parseval for the DFT: Σx² = (1/n)·Σ|X|² over all n bins; times dt, with A = |X|·dt and
    # Δf = 1/(n·dt): dt·Σx² = Δf·ΣA²; the one-sided sum counts each conjugate pair twice.
    # Round-off of n = 1000 sums: rtol 1e-12
    assert_allclose(dt * np.sum(rec.accel**2), np.sum(weights * spectrum.amplitudes**2) / (n * dt), rtol=1e-12)
    assert_allclose(spectrum.frequencies, np.arange(n // 2 + 1) / (n * dt), rtol=1e-15)


def test_pure_sine_amplitude_at_its_frequency():
    """A sine of whole cycles on a bin has |A(f0)| = amplitude·n·dt/2 and nothing elsewhere (DFT of a sinusoid)."""
    n, dt, f0, amplitude = 2000, 0.005, 4.0, 3.0  # 4 Hz = bin 40 of 1/(n·dt) = 0.1 Hz
    t = np.arange(n) * dt
    spectrum = fourier_amplitude(Record(amplitude * np.sin(2 * np.pi * f0 * t), dt, "m/s2"))
    k = int(round(f0 * n * dt))
    # closed form: X_k = -i·A·n/2 for sin on bin k; "duration" here is the DFT length n·dt
    assert_allclose(spectrum.amplitudes[k], amplitude * n * dt / 2, rtol=1e-12)
    others = np.delete(spectrum.amplitudes, k)
    assert others.max() < 1e-10 * spectrum.amplitudes[k]  # leakage is round-off only


@pytest.mark.parametrize("n", [1001, 20_001])
def test_smoothing_a_flat_spectrum_keeps_it_flat(n):
    """A unit impulse has |A(f)| = 1 at every f; the normalised window average keeps 1 (short and long records)."""
    dt = 0.01
    impulse = np.zeros(n)
    impulse[0] = 1.0 / dt  # ∫a dt = 1 m/s: flat amplitude 1 m/s (DFT of a delta)
    spectrum = fourier_amplitude(Record(impulse, dt, "m/s2"), "konno-ohmachi")
    assert_allclose(spectrum.amplitudes, 1.0, rtol=1e-12)  # weights sum to themselves: round-off only


def test_smoothing_equals_a_term_by_term_window_average():
    """Smoothed values equal the Konno-Ohmachi formula summed term by term at every FFT frequency (short record)."""
    rec = synthetic_record(duration=5.11, dt=0.01, seed=4)  # 512 samples: evaluated at every bin
    raw = fourier_amplitude(rec)
    smoothed = fourier_amplitude(rec, "konno-ohmachi", bandwidth=20.0)
    assert_allclose(smoothed.frequencies, raw.frequencies[1:], rtol=0)  # 0 Hz left out: window undefined there
    expected = [_brute_konno_ohmachi(raw.frequencies[1:], raw.amplitudes[1:], fc, 20.0) for fc in smoothed.frequencies]
    # the same sums in another order: round-off, rtol 1e-10
    assert_allclose(smoothed.amplitudes, expected, rtol=1e-10)
    assert smoothed.smoothing == "Konno-Ohmachi, b = 20 (Konno & Ohmachi 1998, BSSA 88(1):228-241)"


def test_long_record_is_smoothed_on_log_spaced_centres():
    """Over 2048 bins: log-spaced centres π/(8b) decades apart, each the full term-by-term average."""
    rec = synthetic_record(duration=99.99, dt=0.01, seed=5)  # 10,000 samples, 5000 non-zero bins
    raw = fourier_amplitude(rec)
    smoothed = fourier_amplitude(rec, "konno-ohmachi")
    steps = np.diff(np.log10(smoothed.frequencies))
    assert_allclose(steps, steps[0], rtol=1e-9)
    assert steps[0] <= math.pi / (8 * 40.0)
    assert_allclose(smoothed.frequencies[[0, -1]], raw.frequencies[[1, -1]], rtol=1e-12)
    assert "log-spaced frequencies" in smoothed.smoothing
    picks = [0, 37, 150, smoothed.frequencies.size - 1]
    expected = [_brute_konno_ohmachi(raw.frequencies[1:], raw.amplitudes[1:], smoothed.frequencies[i], 40.0)
                for i in picks]  # fmt: skip
    assert_allclose(smoothed.amplitudes[picks], expected, rtol=1e-10)  # round-off of 5000-term sums


def test_fourier_refuses_bad_arguments():
    """Non-Record and non-string are TypeErrors; an unknown window or bandwidth <= 0 are ValueErrors."""
    rec = Record(np.ones(8), 0.01, "m/s2")
    with pytest.raises(TypeError, match="`record` must be a groundstep Record"):
        fourier_amplitude(np.ones(8))
    with pytest.raises(TypeError, match="`smoothing` must be None or 'konno-ohmachi', got int"):
        fourier_amplitude(rec, 3)
    with pytest.raises(ValueError, match="`smoothing` must be None or 'konno-ohmachi', got 'hann'"):
        fourier_amplitude(rec, "hann")
    with pytest.raises(ValueError, match="`bandwidth` must be > 0"):
        fourier_amplitude(rec, "konno-ohmachi", bandwidth=0.0)


def test_fourier_docstring_examples_run():
    """The Examples sections of groundstep.core.fourier run and print what they show."""
    failures, attempted = doctest.testmod(fourier_module, optionflags=doctest.NORMALIZE_WHITESPACE)
    assert failures == 0 and attempted > 0
