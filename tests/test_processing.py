"""Tests of baseline correction, band-pass filtering and history replay."""

from __future__ import annotations

import dataclasses
import doctest
import math

import numpy as np
import pytest
import scipy
import scipy.signal
from numpy.testing import assert_allclose

import groundstep.core.processing as processing_module
from groundstep.core import ProcessingStep, Record, synthetic_record
from groundstep.core.processing import ReplayWarning, bandpass, baseline_correct, replay_history


def _pulse_record(dt=0.01, length=20.0, frequency=1.5):
    """a = d'' for d = sin²(πt/L)·sin(ωt): velocity and displacement start and end at rest (no drift)."""
    t = np.arange(0.0, length + dt / 2, dt)
    k, omega = math.pi / length, 2 * math.pi * frequency
    w, w1, w2 = np.sin(k * t) ** 2, k * np.sin(2 * k * t), 2 * k * k * np.cos(2 * k * t)
    accel = w2 * np.sin(omega * t) + 2 * w1 * omega * np.cos(omega * t) - w * omega**2 * np.sin(omega * t)
    return Record(accel, dt, "m/s2", name="pulse")


def _steady_amplitude(samples, dt, frequency, window):
    """Amplitude of the `frequency` sinusoid in `samples[window]` by least squares on sin and cos."""
    t = np.arange(samples.size)[window] * dt
    basis = np.column_stack((np.sin(2 * np.pi * frequency * t), np.cos(2 * np.pi * frequency * t)))
    coefficients = np.linalg.lstsq(basis, samples[window], rcond=None)[0]
    return float(np.hypot(*coefficients))


def test_baseline_correction_leaves_a_drift_free_record_nearly_untouched():
    """A record already at rest at both ends changes by under 1e-6 of its PGA (orders 1-3)."""
    rec = _pulse_record()
    for order in (1, 2, 3):
        corrected = baseline_correct(rec, order)
        # its velocity is the derivative of a pulse vanishing with its slope at both ends, so its
        # projection onto t, t², t³ is small after integrating by parts (measured 1e-8 to 7e-8 of PGA);
        # 1e-6 of PGA is the bound we state
        assert np.abs(corrected.accel - rec.accel).max() < 1e-6 * rec.pga


def test_baseline_correction_removes_an_added_polynomial_drift():
    """Adding a0 + a1·t (inside the order-2 model) changes nothing in the corrected record (linearity of the fit)."""
    rec = synthetic_record(duration=20.0, dt=0.01, seed=6, unit="m/s2")
    t = rec.time
    drifted = Record(rec.accel + 0.03 - 0.004 * t, rec.dt, "m/s2")
    clean, fixed = baseline_correct(rec, 2), baseline_correct(drifted, 2)
    # least squares on two well-conditioned (Legendre) columns: round-off of 2001-term sums, 1e-10 of PGA
    assert_allclose(fixed.accel, clean.accel, rtol=0, atol=1e-10 * rec.pga)
    # the drift was there before: its displacement 0.03·t²/2 - 0.004·t³/6 = 0.667 m at t = 20 s (closed
    # form; the synthetic record itself ends at rest, per its docstring), integrated exactly (cubic rule)
    assert_allclose(drifted.ground_displacement()[-1], 0.03 * 20**2 / 2 - 0.004 * 20**3 / 6, atol=1e-6)


def test_corrected_velocity_is_the_least_squares_residual_on_t_and_t_squared():
    """For order 2 the fitted trend spans t and t² exactly; the residual of numpy lstsq on them is the new velocity."""
    rec = synthetic_record(duration=10.0, dt=0.01, seed=8, unit="m/s2")
    drifted = Record(rec.accel + 0.05, rec.dt, "m/s2")
    t = drifted.time
    v = drifted.ground_velocity()
    trend = np.column_stack((t, t * t))  # trapezoid of a linear acceleration is exact: v-basis t, t²/2
    residual = v - trend @ np.linalg.lstsq(trend, v, rcond=None)[0]
    corrected = baseline_correct(drifted, 2).ground_velocity()
    assert_allclose(corrected, residual, rtol=0, atol=1e-12 * np.abs(v).max())  # round-off of two fits
    assert_allclose(trend.T @ corrected, 0.0, atol=1e-9 * np.abs(trend.T @ v).max())  # orthogonal to the trend


def test_baseline_correction_keeps_the_input_and_records_the_step():
    """The input samples stay as they were; the new record keeps unit and name and adds the step with numpy's version."""
    rec = Record(np.linspace(0.1, 0.2, 50), 0.02, "cm/s2", name="raw", header=("h",))
    before = rec.accel.copy()
    corrected = baseline_correct(rec, 2)
    assert np.array_equal(rec.accel, before) and rec.history == ()
    assert corrected.unit == "cm/s2" and corrected.name == "raw" and corrected.header == ("h",)
    assert corrected.history == (ProcessingStep("baseline_correct", (("order", 2),), f"numpy {np.__version__}"),)


def test_baseline_correction_refuses_bad_orders():
    """Order must be an integer 1-10 and below the sample count, with messages naming `order`."""
    rec = Record(np.ones(5), 0.01, "m/s2")
    with pytest.raises(ValueError, match="`order` must be >= 1, got 0"):
        baseline_correct(rec, 0)
    with pytest.raises(ValueError, match="`order` must be at most 10"):
        baseline_correct(rec, 11)
    with pytest.raises(ValueError, match="below the record's 5 samples"):
        baseline_correct(rec, 5)
    with pytest.raises(TypeError, match="`order` must be an integer"):
        baseline_correct(rec, 1.5)
    with pytest.raises(TypeError, match="`record` must be a groundstep Record"):
        baseline_correct(np.ones(5))


@pytest.mark.parametrize("frequency", [0.05, 0.1, 0.2, 1.0, 3.0, 10.0, 20.0, 40.0])
def test_bandpass_gain_matches_butterworth_squared(frequency):
    """Steady-state gain of a sine equals |H(f)|² of scipy's Butterworth (sosfreqz): the forward-backward response."""
    dt, low, high, order = 0.01, 0.2, 10.0, 4
    t = np.arange(0.0, 400.0, dt)
    rec = Record(np.sin(2 * np.pi * frequency * t), dt, "m/s2")
    filtered = bandpass(rec, low, high, order, keep_pads=False).accel
    sos = scipy.signal.butter(order, [low, high], btype="bandpass", output="sos", fs=1 / dt)  # reference design
    _, response = scipy.signal.sosfreqz(sos, [frequency], fs=1 / dt)
    expected = abs(response[0]) ** 2  # filtfilt applies H twice, once time-reversed: |H|², zero phase
    # window 150-250 s: the slowest pole (0.2 Hz, damping >= sin(π/8) = 0.38 for a 4th-order
    # Butterworth) has decayed by exp(-2π·0.2·0.38·150) ≈ e^-72 there; what remains is round-off
    measured = _steady_amplitude(filtered, dt, frequency, slice(15000, 25000))
    assert_allclose(measured, expected, rtol=1e-6, atol=1e-12)


def test_bandpass_gain_is_one_half_at_the_corners_and_one_mid_band():
    """|H|² = 1/2 at a Butterworth corner per pass, so the filtfilt amplitude gain is 1/2 there, 1 mid-band (closed form)."""
    dt = 0.01
    t = np.arange(0.0, 400.0, dt)
    for frequency, expected in ((0.2, 0.5), (10.0, 0.5), (1.4, 1.0)):
        rec = Record(np.cos(2 * np.pi * frequency * t), dt, "m/s2")
        measured = _steady_amplitude(bandpass(rec, 0.2, 10.0, keep_pads=False).accel, dt, frequency,
                                     slice(15000, 25000))  # fmt: skip
        # mid-band 1.4 Hz = sqrt(0.2·10): 1 - |H|² = 2e-11 for order 4 (sosfreqz); corners exact by design
        assert_allclose(measured, expected, rtol=1e-6)


def test_highpass_and_lowpass_corners():
    """With one corner None the filter is a high- or low-pass: gain 1/2 at its corner (Butterworth, closed form)."""
    dt = 0.01
    t = np.arange(0.0, 400.0, dt)
    for low, high, frequency in ((0.5, None, 0.5), (None, 5.0, 5.0)):
        rec = Record(np.sin(2 * np.pi * frequency * t), dt, "m/s2")
        filtered = bandpass(rec, low, high, keep_pads=False).accel
        assert_allclose(_steady_amplitude(filtered, dt, frequency, slice(15000, 25000)), 0.5, rtol=1e-6)


def test_bandpass_pads_and_records_the_step():
    """Kept pads add ceil(1.5·order/(f_low·dt)) samples at each end (Boore 2005 rule, from memory); the step names scipy."""
    rec = synthetic_record(duration=20.0, dt=0.01, seed=2)
    filtered = bandpass(rec, 0.1, 25.0, 4)
    pad = math.ceil(1.5 * 4 / (0.1 * 0.01))  # 6000 samples = 60 s at each end
    assert filtered.n == rec.n + 2 * pad
    trimmed = bandpass(rec, 0.1, 25.0, 4, keep_pads=False)
    assert trimmed.n == rec.n
    assert np.array_equal(trimmed.accel, filtered.accel[pad : pad + rec.n])
    assert filtered.history[-1] == ProcessingStep(
        "bandpass",
        (("low_hz", 0.1), ("high_hz", 25.0), ("order", 4), ("taper", 0.05), ("keep_pads", True)),
        f"scipy {scipy.__version__}",
    )
    assert filtered.unit == rec.unit and filtered.name == rec.name


def test_bandpass_refuses_bad_corners_and_orders():
    """Corners outside (0, Nyquist) name the Nyquist frequency; both None, crossed corners, odd order are refused."""
    rec = Record(np.ones(100), 0.01, "m/s2")  # Nyquist 50 Hz
    with pytest.raises(ValueError, match=r"`high_hz` must lie between 0 and the Nyquist frequency 50 Hz"):
        bandpass(rec, 0.1, 60.0)
    with pytest.raises(ValueError, match=r"`low_hz` must lie between 0 and the Nyquist frequency 50 Hz"):
        bandpass(rec, 50.0, None)
    with pytest.raises(ValueError, match="`low_hz` must be > 0"):
        bandpass(rec, 0.0, 10.0)
    with pytest.raises(ValueError, match="both None"):
        bandpass(rec, None, None)
    with pytest.raises(ValueError, match="`low_hz` must be below `high_hz`"):
        bandpass(rec, 10.0, 1.0)
    with pytest.raises(ValueError, match="`order` must be even .* got 3; use 4"):
        bandpass(rec, 0.1, 10.0, 3)
    with pytest.raises(ValueError, match="`order` must be >= 2"):
        bandpass(rec, 0.1, 10.0, 0)
    with pytest.raises(ValueError, match="`taper` must be a fraction in"):
        bandpass(rec, 0.1, 10.0, taper=5.0)


def test_replay_reproduces_processed_samples_bit_for_bit():
    """Replaying the history on the raw record gives the very same samples (np.array_equal, no tolerance)."""
    raw = synthetic_record(duration=15.0, dt=0.005, seed=9)
    processed = bandpass(baseline_correct(raw, 3), 0.15, 30.0, 6, taper=0.1)
    again = replay_history(raw, processed.history)
    assert np.array_equal(again.accel, processed.accel)
    assert again.history == processed.history and again.dt == processed.dt


def test_replay_refuses_unknown_steps_and_warns_on_other_versions():
    """An unknown operation or argument is a ValueError; another library version gives a ReplayWarning."""
    raw = Record(np.sin(np.arange(300) * 0.1), 0.01, "m/s2")
    with pytest.raises(ValueError, match="index 0: unknown operation 'smooth'; this version can replay bandpass"):
        replay_history(raw, [ProcessingStep("smooth", ())])
    with pytest.raises(ValueError, match="index 0: baseline_correct\\(degree=2\\) does not match"):
        replay_history(raw, [ProcessingStep("baseline_correct", (("degree", 2),))])
    with pytest.raises(TypeError, match="index 0 is str"):
        replay_history(raw, ["bandpass"])
    step = dataclasses.replace(baseline_correct(raw).history[-1], library="numpy 0.1")
    with pytest.warns(ReplayWarning, match="recorded with numpy 0.1"):
        replay_history(raw, [step])


def test_processing_docstring_examples_run():
    """The Examples sections of groundstep.core.processing run and print what they show."""
    failures, attempted = doctest.testmod(processing_module, optionflags=doctest.NORMALIZE_WHITESPACE)
    assert failures == 0 and attempted > 0
