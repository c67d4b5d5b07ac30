"""Tests of the synthetic accelerogram generator against its stochastic model."""

from __future__ import annotations

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import integrate, signal

from groundstep.core import Record
from groundstep.core.synthetic import (
    filtered_noise,
    jennings_envelope,
    kanai_tajimi_psd,
    synthetic_record,
)


def test_envelope_matches_its_closed_form():
    """The envelope is (t/t1)², then 1, then exp(-c(t - t2)) (Jennings, Housner & Tsai 1968)."""
    t1, strong, c = 2.0, 3.0, 0.4
    t = np.array([0.0, 0.5, 1.0, 2.0, 3.5, 5.0, 6.0, 10.0])
    expected = [0.0, 0.0625, 0.25, 1.0, 1.0, 1.0, math.exp(-0.4), math.exp(-0.4 * 5.0)]
    # closed form of the piecewise definition; rounding only
    assert_allclose(jennings_envelope(t, t1, strong, c), expected, rtol=1e-14, atol=0.0)


def test_envelope_rejects_bad_parameters():
    """A non-positive rise time is refused with the argument named."""
    with pytest.raises(ValueError, match="`rise_time` must be > 0, got -1.0"):
        jennings_envelope([0.0], rise_time=-1.0)
    with pytest.raises(ValueError, match="`strong_duration` must be >= 0 s"):
        jennings_envelope([0.0], strong_duration=-2.0)


def test_kanai_tajimi_variance_closed_form():
    """∫S dω over all ω equals π·S0·ω_g·(1 + 4ζ_g²)/(2ζ_g) (Kanai-Tajimi variance, closed form from memory)."""
    fg, zg, s0 = 2.0, 0.4, 0.7
    omega_g = 2.0 * math.pi * fg
    closed = math.pi * s0 * omega_g * (1.0 + 4.0 * zg * zg) / (2.0 * zg)

    def psd(w):
        return kanai_tajimi_psd(w / (2.0 * math.pi), fg, zg, None, intensity=s0)

    numeric = 2.0 * integrate.quad(psd, 0.0, np.inf, limit=400)[0]
    # quad's own error estimate is far below 1e-8 for this smooth rational function
    assert_allclose(numeric, closed, rtol=1e-8)


def test_clough_penzien_removes_zero_frequency():
    """The high-pass factor makes S(0) = 0 and leaves S → KT at high frequency (Clough & Penzien 1975)."""
    f = np.array([0.0, 50.0])
    with_hp = kanai_tajimi_psd(f, 2.5, 0.6, 0.25, 0.6)
    without = kanai_tajimi_psd(f, 2.5, 0.6, None)
    assert with_hp[0] == 0.0
    # |H_CP|² = ω⁴/((ω_f² - ω²)² + 4ζ_f²ω_f²ω²) → 1 for ω ≫ ω_f; at 200·ω_f it is 1 within 1e-4
    assert_allclose(with_hp[1], without[1], rtol=1e-4)


def test_filtered_noise_spectrum_matches_the_model():
    """Welch's estimate (scipy.signal.welch) of stationary filtered noise follows 4π·S(2πf)."""
    dt, n = 0.01, 2**18
    x = filtered_noise(n, dt, 2.5, 0.6, 0.25, 0.6, intensity=0.02, seed=11)
    f, estimate = signal.welch(x, fs=1.0 / dt, nperseg=1024)
    band = (f >= 0.5) & (f <= 25.0)
    model = 4.0 * math.pi * kanai_tajimi_psd(f[band], 2.5, 0.6, 0.25, 0.6, intensity=0.02)
    ratio = estimate[band] / model
    # ~511 overlapping Hann segments: each bin scatters by ~1/sqrt(256) ≈ 6 %, the band mean by < 1 %;
    # 3 % on the mean and 30 % (5 sigma) on any bin are statistical bounds, not tuning
    assert abs(ratio.mean() - 1.0) < 0.03
    assert np.max(np.abs(ratio - 1.0)) < 0.30


def test_filtered_noise_variance_matches_band_limited_integral():
    """The sample variance equals ∫S dω over |ω| < π/dt (scipy.integrate.quad)."""
    dt, n = 0.01, 2**18
    x = filtered_noise(n, dt, 2.5, 0.6, None, intensity=1.0, seed=5)
    nyquist = math.pi / dt
    band = 2.0 * integrate.quad(lambda w: kanai_tajimi_psd(w / (2 * math.pi), 2.5, 0.6, None), 0, nyquist, limit=400)[0]
    # correlation time ~ 1/(ζ_g·ω_g) ≈ 0.1 s over 2600 s of samples: standard error ≈ 1 %; allow 4 %
    assert_allclose(np.var(x), band, rtol=0.04)


def test_same_seed_same_record_other_seed_other_record():
    """Records are reproducible by seed and differ between seeds."""
    a = synthetic_record(10.0, 0.01, seed=4)
    b = synthetic_record(10.0, 0.01, seed=4)
    c = synthetic_record(10.0, 0.01, seed=5)
    assert a.sha256() == b.sha256()
    assert a.sha256() != c.sha256()
    np.testing.assert_array_equal(a.accel, b.accel)


def test_record_is_scaled_baseline_corrected_and_enveloped():
    """PGA equals the target; ground velocity and displacement end at zero; quiet before the build-up."""
    rec = synthetic_record(20.0, 0.01, pga=0.25, unit="g", seed=2)
    assert isinstance(rec, Record)
    assert rec.n == 2001 and rec.unit == "g"
    assert_allclose(np.max(np.abs(rec.accel_in("g"))), 0.25, rtol=1e-12)  # scaling is exact up to rounding
    velocity, displacement = rec.ground_velocity(), rec.ground_displacement()
    # the correction solves for zero end values exactly; 1e-9 of the peaks leaves room for rounding only
    assert abs(velocity[-1]) < 1e-9 * np.max(np.abs(velocity))
    assert abs(displacement[-1]) < 1e-9 * np.max(np.abs(displacement))
    assert rec.accel[0] == 0.0  # e(0) = 0 multiplies both the noise and the correction
    early = np.max(np.abs(rec.accel[:20]))  # t < 0.2 s: e <= (0.2/2)² = 0.01
    assert early < 0.05 * rec.pga


def test_synthetic_record_rejects_bad_input():
    """Bad arguments get messages naming them and the value."""
    with pytest.raises(ValueError, match="`pga` must be > 0, got 0.0"):
        synthetic_record(pga=0.0)
    with pytest.raises(ValueError, match="gives 3 samples"):
        synthetic_record(duration=0.02, dt=0.01)
    with pytest.raises(ValueError, match="`ground_damping` must be > 0"):
        synthetic_record(ground_damping=0.0)
