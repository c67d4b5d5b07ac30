"""Tests of Arias intensity and significant duration against closed forms."""

from __future__ import annotations

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose

from groundstep.core import Record
from groundstep.core.measures import arias_intensity, normalised_arias, significant_duration

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
    assert np.all(normalised_arias(Record(np.zeros(5), 0.01)) == 0.0)


def test_significant_duration_of_steady_shaking():
    """Constant |a| builds up linearly, so D(5-95 %) = 0.9 of the length (Trifunac & Brady 1975 definition)."""
    rec = Record(np.ones(1001), 0.01, "m/s2")
    assert_allclose(significant_duration(rec), 9.0, rtol=1e-12)
    assert_allclose(significant_duration(rec, 0.25, 0.75), 5.0, rtol=1e-12)
    with pytest.raises(ValueError, match="0 <= start < end <= 1"):
        significant_duration(rec, 0.9, 0.1)
