"""Tests of the ground-motion measures against closed forms and independent computations."""

from __future__ import annotations

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.integrate import simpson

from groundstep.core import Record, elastic_spectrum, synthetic_record
from groundstep.core.measures import (
    PREDOMINANT_PERIODS,
    MeasureWarning,
    arias_intensity,
    ground_motion_measures,
    normalised_arias,
    significant_duration,
)

G = 9.80665  # m/s², standard gravity (3rd CGPM 1901)


def test_arias_of_a_sine_equals_closed_form():
    """∫₀^T (A sin ωt)² dt = A²T/2 over whole cycles, times π/(2g) (Arias 1970 definition)."""
    dt, amplitude = 0.001, 2.0
    t = np.arange(0.0, 4.0 + dt / 2, dt)
    rec = Record(amplitude * np.sin(2 * np.pi * t), dt, "m/s2")
    expected = math.pi / (2 * G) * amplitude**2 * 4.0 / 2
    # piecewise-linear interpolation of a sine at 1000 samples per cycle: error O((ωdt)²) ≈ 4e-5
    assert_allclose(arias_intensity(rec)[-1], expected, rtol=1e-4)


def test_arias_of_a_ramp_is_exact():
    """For a = t (linear), ∫₀^T t² dt = T³/3 exactly, since a is linear between samples."""
    t = np.linspace(0.0, 3.0, 7)
    rec = Record(t, 0.5, "m/s2")
    assert_allclose(arias_intensity(rec), math.pi / (2 * G) * t**3 / 3, rtol=1e-13)


def test_normalised_build_up_runs_from_zero_to_one_and_never_falls():
    """The normalised build-up is 0 at the start, 1 at the end and non-decreasing."""
    rec = Record(np.random.default_rng(1).standard_normal(500), 0.01, "g")
    h = normalised_arias(rec)
    assert h[0] == 0.0 and h[-1] == 1.0
    assert np.all(np.diff(h) >= 0.0)
    assert np.all(normalised_arias(Record(np.zeros(5), 0.01, "m/s2")) == 0.0)


def test_significant_duration_of_steady_shaking():
    """Constant |a| builds up linearly, so D(5-95 %) = 0.9 of the length (Trifunac & Brady 1975 definition)."""
    rec = Record(np.ones(1001), 0.01, "m/s2")
    assert_allclose(significant_duration(rec), 9.0, rtol=1e-12)
    assert_allclose(significant_duration(rec, 0.25, 0.75), 5.0, rtol=1e-12)
    with pytest.raises(ValueError, match="0 <= start < end <= 1"):
        significant_duration(rec, 0.9, 0.1)


# ---------------------------------------------------------------- ground_motion_measures

ISSUE_KEYS = {
    "pga", "pgv", "pgd", "arias_intensity", "d5_75", "d5_95", "cav", "bracketed_duration", "mean_period",
    "spectrum_intensity", "predominant_period", "pga_time", "pgv_time", "pgd_time", "d5_75_start",
    "d5_75_end", "d5_95_start", "d5_95_end", "bracketed_start", "bracketed_end",
}  # fmt: skip


def _whole_cycle_sine(amplitude=2.0, period=1.0, cycles=4, per_cycle=1000):
    dt = period / per_cycle
    t = np.arange(cycles * per_cycle + 1) * dt
    return Record(amplitude * np.sin(2 * np.pi * t / period), dt, "m/s2")


def test_measures_of_a_whole_cycle_sine_equal_closed_forms():
    """a = A sin(2πt/T), N whole cycles: Arias, CAV, PGA, PGV, PGD and their times match the closed forms."""
    amplitude, period, cycles = 2.0, 1.0, 4
    m = ground_motion_measures(_whole_cycle_sine(amplitude, period, cycles))
    omega = 2 * np.pi / period
    # Closed forms (our derivation), ω = 2π/T, starting from rest:
    # Arias: π/(2g)·∫(A sin ωt)² dt = π/(2g)·A²·N·T/2 (mean of sin² is 1/2 over whole cycles)
    # CAV: each half cycle ∫|A sin ωt| dt = 2A/ω = A·T/π; 2N half cycles give 2·A·N·T/π
    # v = (A/ω)(1 - cos ωt) >= 0: PGV = 2A/ω = A·T/π at t = T/2 (+ k·T)
    # d = (A/ω)(t - sin(ωt)/ω) rises monotonically: PGD = A·N·T/ω at t = N·T
    # Piecewise-linear a at 1000 samples per cycle: relative error about (ω·dt)²/12 = 3.3e-6, so rtol 1e-5.
    assert_allclose(m["arias_intensity"], math.pi / (2 * G) * amplitude**2 * cycles * period / 2, rtol=1e-5)
    assert_allclose(m["cav"], 2 * amplitude * cycles * period / math.pi, rtol=1e-5)
    assert_allclose(m["pgv"], amplitude * period / math.pi, rtol=1e-5)
    assert_allclose(m["pgd"], amplitude * cycles * period / omega, rtol=1e-5)
    assert_allclose(m["pga"], amplitude, rtol=1e-12)  # sampled at the crest t = T/4 (250 steps)
    # equal crests repeat every T/2 (PGA) and every T (PGV); round-off picks one of them
    assert_allclose((m["pga_time"] - period / 4) / (period / 2) % 1.0, 0.0, atol=1e-9)
    assert_allclose((m["pgv_time"] - period / 2) / period % 1.0, 0.0, atol=1e-9)
    assert_allclose(m["pgd_time"], cycles * period, rtol=1e-12)


def test_cav_integrates_exactly_across_a_zero_crossing():
    """a from 1 to -1 over one step: |a| is two triangles of area dt/4 each (EPRI 1988 plain CAV, exact)."""
    m = ground_motion_measures(Record([1.0, -1.0, -1.0], 0.02, "m/s2"), bracket_threshold=0.5)
    # closed form: 2·(1/2·1·dt/2) + 1·dt = 1.5·dt with dt = 0.02 s; only round-off differs
    assert_allclose(m["cav"], 0.03, rtol=1e-15)


def test_bracketed_duration_of_a_sine_with_threshold_half_its_amplitude():
    """|A sin ωt| first exceeds A/2 at T/12 and last at N·T - T/12 (Bolt 1973 definition)."""
    amplitude, period, cycles = 2.0, 1.0, 4
    m = ground_motion_measures(_whole_cycle_sine(amplitude, period, cycles), bracket_threshold=amplitude / 2)
    # sin(ωt) = 1/2 at ωt = π/6, i.e. t = T/12; linear interpolation of a between samples moves the
    # crossing by about A(ω·dt)²/8 / (A·ω·cos 30°) ≈ 1e-6·T, so atol 1e-5 s
    assert_allclose(m["bracketed_start"], period / 12, atol=1e-5)
    assert_allclose(m["bracketed_end"], cycles * period - period / 12, atol=1e-5)
    assert_allclose(m["bracketed_duration"], cycles * period - period / 6, atol=2e-5)


def test_bracketed_duration_is_zero_when_never_exceeded():
    """A record under the default 0.05 g threshold has bracketed duration 0 and NaN start and end."""
    rec = Record(0.04 * np.sin(np.arange(2000) * 0.05), 0.01, "g")  # peak 0.04 g < 0.05 g (common practice level)
    m = ground_motion_measures(rec)
    assert m["bracketed_duration"] == 0.0
    assert math.isnan(m["bracketed_start"]) and math.isnan(m["bracketed_end"])
    assert m["bracket_threshold"] == 0.05 * G


def test_d5_95_of_stationary_noise_is_nine_tenths_of_the_length():
    """Constant-envelope white noise builds Arias intensity at a steady rate: D5-95 ≈ 0.9·duration (Trifunac & Brady 1975)."""
    rec = Record(np.random.default_rng(7).standard_normal(100_001), 0.01, "m/s2")
    m = ground_motion_measures(rec)
    length = rec.duration
    # For n iid Gaussian samples the build-up fraction at p deviates from p by about sqrt(2p(1-p)/n)
    # (variance of a² is 2σ⁴): 1e-3 of the length at p = 0.05 and 0.95 for n = 1e5. atol 1e-2 of the
    # length is 7 standard deviations of the difference.
    assert_allclose(m["d5_95"], 0.9 * length, atol=1e-2 * length)
    assert_allclose(m["d5_75"], 0.7 * length, atol=1e-2 * length)
    assert_allclose(m["d5_95_start"], 0.05 * length, atol=1e-2 * length)
    assert_allclose(m["d5_95_end"] - m["d5_95_start"], m["d5_95"], rtol=1e-12)
    assert_allclose(m["d5_95"], significant_duration(rec), rtol=1e-12)  # the same definition by the old route
    assert_allclose(m.arias_build_up, normalised_arias(rec), rtol=1e-15)


def test_mean_period_of_two_bin_centred_sines():
    """Two sines on FFT bins: Tm = (A1²/f1 + A2²/f2)/(A1² + A2²) (Rathje et al. 1998 definition)."""
    n, dt = 4000, 0.01  # bins every 1/(n·dt) = 0.025 Hz
    t = np.arange(n) * dt
    f1, f2, a1, a2 = 1.0, 5.0, 3.0, 1.0  # both on bins, inside 0.25-20 Hz
    rec = Record(a1 * np.sin(2 * np.pi * f1 * t) + a2 * np.sin(2 * np.pi * f2 * t), dt, "m/s2")
    expected = (a1**2 / f1 + a2**2 / f2) / (a1**2 + a2**2)
    # a bin-centred sine of whole cycles has |X| = A·n/2 at its bin and round-off (1e-13 relative) elsewhere
    assert_allclose(ground_motion_measures(rec)["mean_period"], expected, rtol=1e-9)


def test_mean_period_against_a_direct_fourier_sum():
    """Tm from a DFT summed term by term (no FFT) over 0.25-20 Hz equals the measure (Rathje et al. 1998)."""
    n, dt = 640, 0.02
    rec = synthetic_record(duration=(n - 1) * dt, dt=dt, seed=3, unit="m/s2")
    k = np.arange(n // 2 + 1)
    f = k / (n * dt)
    dft = np.exp(-2j * np.pi * np.outer(k, np.arange(n)) / n) @ rec.accel  # definition of the DFT
    c2 = (np.abs(dft) * dt) ** 2
    band = (f >= 0.25) & (f <= 20.0)
    expected = np.sum(c2[band] / f[band]) / np.sum(c2[band])
    # the FFT and the direct sum agree to round-off of an n = 640 sum (about 1e-13)
    assert_allclose(ground_motion_measures(rec)["mean_period"], expected, rtol=1e-10)


def test_mean_period_warns_when_the_nyquist_frequency_cuts_the_band():
    """dt = 0.04 s (Nyquist 12.5 Hz) cannot reach 20 Hz: a MeasureWarning says which band was used."""
    rec = synthetic_record(duration=20.0, dt=0.04, seed=1)
    with pytest.warns(MeasureWarning, match="Nyquist frequency 12.5 Hz cuts the mean-period band"):
        ground_motion_measures(rec)


@pytest.mark.parametrize("seed,ground_frequency", [(0, 0.7), (1, 1.5), (2, 2.5), (3, 4.0), (4, 8.0), (7, 0.7)])
def test_spectrum_intensity_against_a_dense_simpson_integral(seed, ground_frequency):
    """SI on its 144-period grid is within 0.1 % of ∫PSV dT by Simpson's rule on 4001 periods (Housner 1952)."""
    rec = synthetic_record(duration=30.0, dt=0.01, seed=seed, ground_frequency=ground_frequency, ground_damping=0.3)
    dense = np.geomspace(0.1, 2.5, 4001)
    psv = elastic_spectrum(rec, dense, 0.05, "exact").psv[0]  # Δt/T <= 0.1 for T >= 0.1 s: no sub-steps
    reference = simpson(psv, x=dense)  # scipy.integrate: independent quadrature on a 28x denser grid
    # 0.1 % is the accuracy the docstring states for the grid
    assert_allclose(ground_motion_measures(rec)["spectrum_intensity"], reference, rtol=1e-3)


def test_predominant_period_of_a_long_harmonic_is_its_period():
    """A 40-cycle sine of period 0.5 s drives the 5 %-damped spectrum to resonance at 0.5 s (steady state)."""
    period = 0.5
    t = np.arange(0.0, 40 * period, 0.005)
    rec = Record(np.sin(2 * np.pi * t / period), 0.005, "m/s2")
    found = ground_motion_measures(rec)["predominant_period"]
    # steady-state PSA of a damped oscillator peaks at T_f·sqrt(1 - 2ζ²) ≈ 0.9975·T_f (closed form);
    # the grid is 2.3 % apart there, so the answer is one of the two grid periods around 0.5 s
    # (which one wins is decided by the finite duration)
    below = PREDOMINANT_PERIODS[PREDOMINANT_PERIODS <= period].max()
    above = PREDOMINANT_PERIODS[PREDOMINANT_PERIODS > period].min()
    assert found in (below, above)


def test_measures_result_has_the_named_keys_and_mapping_access():
    """to_dict holds every named measure of the issue plus the threshold; [] reads one; a wrong key names them all."""
    m = ground_motion_measures(synthetic_record(duration=10.0, dt=0.01, seed=2))
    assert set(m.to_dict()) == ISSUE_KEYS | {"bracket_threshold"}
    assert tuple(m.keys()) == tuple(m.to_dict())
    assert m["pga"] == m.pga
    assert "GroundMotionMeasures(pga=" in repr(m) and "array" not in repr(m)
    with pytest.raises(KeyError, match="no measure named 'PGA'; the names are pga, pga_time"):
        m["PGA"]


def test_measures_refuse_a_non_record_and_a_bad_threshold():
    """A list is not a Record (TypeError); a threshold <= 0 is a ValueError naming the argument."""
    with pytest.raises(TypeError, match="`record` must be a groundstep Record, got list"):
        ground_motion_measures([0.0, 1.0])
    with pytest.raises(ValueError, match="`bracket_threshold` must be > 0"):
        ground_motion_measures(Record([0.0, 1.0], 0.01, "m/s2"), bracket_threshold=0.0)


def test_measures_of_a_record_of_zeros_warn_and_give_nan():
    """All zeros: peaks and durations 0, their times and both periods NaN, with a MeasureWarning."""
    with pytest.warns(MeasureWarning, match="holds only zeros"):
        m = ground_motion_measures(Record(np.zeros(100), 0.01, "m/s2"))
    assert m["pga"] == m["d5_95"] == m["cav"] == m["spectrum_intensity"] == 0.0
    assert math.isnan(m["mean_period"]) and math.isnan(m["predominant_period"]) and math.isnan(m["d5_95_start"])
