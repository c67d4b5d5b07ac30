"""Tests of groundstep.core.scaling against closed forms, scipy's minimiser and the presets' rules."""

from __future__ import annotations

import doctest
import math

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.optimize import minimize_scalar

from groundstep.core import scaling as scaling_module
from groundstep.core.design import design_spectrum
from groundstep.core.scaling import scale_suite, suite_preset

PERIODS = np.geomspace(0.05, 5.0, 41)
TARGET = 0.8 / (1.0 + PERIODS)  # invented smooth target [g]
#: The factors are a mean, an exponential and one division: 1e-12 relative
#: covers their round-off.
RTOL = 1e-12


def _suite(seed: int, n_records: int = 11, spread: float = 0.3) -> np.ndarray:
    """Invented suite: the target times seeded log-normal scatter, shape (records, periods)."""
    rng = np.random.default_rng(seed)
    return TARGET * np.exp(rng.normal(0.0, spread, (n_records, PERIODS.size)))


def test_common_factor_meets_the_fraction_exactly_at_the_controlling_period():
    """After common scaling the smallest mean/target over the range is the fraction, at the reported period."""
    spectra = _suite(1)
    result = scale_suite(PERIODS, spectra, TARGET, (0.2, 2.0), rule="common", fraction=0.9)
    inside = (PERIODS >= 0.2) & (PERIODS <= 2.0)
    # independent route: scale every record by the factor and average
    scaled_mean = (result.factors[:, None] * spectra).mean(axis=0)
    ratio = scaled_mean[inside] / TARGET[inside]
    assert ratio.min() == pytest.approx(0.9, rel=RTOL)
    assert result.controlling_period == PERIODS[inside][np.argmin(ratio)]
    assert np.all(result.passes) and result.ok
    assert_allclose(result.factors, result.factors[0], rtol=0)  # one factor for all
    assert_allclose(result.ratio, scaled_mean / TARGET, rtol=RTOL)


@pytest.mark.parametrize("multiple", [0.25, 1.7, 3.0])
def test_least_squares_factor_of_a_constant_multiple_is_its_inverse(multiple):
    """A record spectrum equal to c·target gets the least-squares factor 1/c (closed form)."""
    spectra = np.vstack([multiple * TARGET, TARGET])
    result = scale_suite(PERIODS, spectra, TARGET, (0.1, 3.0), rule="least_squares", factor_limits=(0.1, 10.0))
    # ln f = mean(ln target - ln(c·target)) = -ln c exactly
    assert_allclose(result.factors, [1.0 / multiple, 1.0], rtol=RTOL)
    assert result.common_factor == 1.0
    assert_allclose(result.ratio, 1.0, rtol=RTOL)


def test_least_squares_matches_a_numerical_minimiser():
    """Per-record factors minimise Σ (ln target - ln f·S)² over the range (scipy.optimize.minimize_scalar)."""
    spectra = _suite(2, n_records=4, spread=0.5)
    result = scale_suite(PERIODS, spectra, TARGET, (0.2, 2.0), rule="least_squares", factor_limits=(0.01, 100.0))
    inside = (PERIODS >= 0.2) & (PERIODS <= 2.0)
    for record, factor in zip(spectra, result.factors):
        misfit = np.log(TARGET[inside]) - np.log(record[inside])
        found = minimize_scalar(lambda g, m=misfit: float(np.sum((m - g) ** 2)), bracket=(-1.0, 1.0), tol=1e-12)
        # Brent's method to tol 1e-12 in ln f: the minimum of a parabola is found to ~1e-8 in ln f
        assert math.log(factor) == pytest.approx(found.x, abs=1e-7)


def test_both_applies_a_common_factor_on_the_least_squares_factors():
    """Rule 'both': factors = least-squares factors × one common factor, and the minimum ratio is the fraction."""
    spectra = _suite(3)
    least = scale_suite(PERIODS, spectra, TARGET, (0.2, 2.0), rule="least_squares")
    both = scale_suite(PERIODS, spectra, TARGET, (0.2, 2.0), rule="both")
    assert_allclose(both.record_factors, least.factors, rtol=RTOL)
    assert_allclose(both.factors, least.factors * both.common_factor, rtol=RTOL)
    assert both.ratio[both.in_range].min() == pytest.approx(0.9, rel=RTOL)


def test_asce7_preset_needs_eleven_records():
    """ASCE/SEI 7-16 preset (§16.2.2, from memory: at least 11 records): 7 records are reported as a problem."""
    preset = suite_preset("ASCE7", 1.5)
    assert preset.period_range == (0.3, 3.0)  # 0.2T and 2.0T of §16.2.3.1 (from memory)
    result = scale_suite(PERIODS, _suite(4, n_records=7), TARGET, preset)
    assert not result.ok
    assert any("at least 11 records" in text for text in result.problems)
    assert "from memory" in result.clause and "16.2.3.2" in result.clause
    full = scale_suite(PERIODS, _suite(4, n_records=11), TARGET, preset)
    assert full.ok, full.problems


def test_en1998_preset_lifts_the_zero_period_mean_to_the_target():
    """EN 1998-1:2004 §3.2.3.1.2(4)b (from memory): with T = 0 given, the mean PGA reaches ag·S."""
    periods = np.concatenate([[0.0], PERIODS[PERIODS <= 4.0]])  # eq. 3.5 ends at 4 s
    target = design_spectrum(periods, "EN1998", ag=0.25, ground_type="B")
    # records strong in the range but weak at T = 0, so the zero-period rule controls
    spectra = np.tile(target.sa * 1.2, (3, 1))
    spectra[:, 0] = target.sa[0] * 0.5
    result = scale_suite(periods, spectra, target, suite_preset("EN1998", 0.6))
    assert result.controlling_period == 0.0
    # the mean at T = 0 must equal the target there: 0.5·F = 1, so F = 2
    assert result.common_factor == pytest.approx(2.0, rel=RTOL)
    assert result.ok, result.problems


def test_en1998_preset_without_zero_period_reports_the_unchecked_rule():
    """Without period 0 the zero-period rule of EN 1998 is reported as not checked."""
    result = scale_suite(PERIODS, _suite(5, n_records=3), TARGET, suite_preset("EN1998", 0.6))
    assert not result.ok
    assert any("not checked" in text for text in result.problems)


def test_factors_outside_limits_and_unit_mix_up_are_reported():
    """Spectra in m/s² against a target in g give factors near 1/9.81, reported with a unit hint."""
    spectra = _suite(6) * 9.80665
    result = scale_suite(PERIODS, spectra, TARGET, (0.2, 2.0))
    assert not result.ok
    assert any("outside 0.25-4" in text and "m/s²" in text for text in result.problems)


def test_range_beyond_the_periods_is_reported():
    """A period range reaching past the period grid is a problem, not a silent partial check."""
    result = scale_suite(PERIODS, _suite(7), TARGET, (1.0, 8.0))
    assert any("reaches past the periods given" in text for text in result.problems)


def test_design_spectrum_target_equals_its_values():
    """A DesignSpectrum target gives the same factors as its .sa array."""
    target = design_spectrum(PERIODS, "ASCE7", sds=1.0, sd1=0.6, tl=8.0)
    spectra = target.sa * np.exp(np.random.default_rng(8).normal(0.0, 0.2, (11, PERIODS.size)))
    first = scale_suite(PERIODS, spectra, target, (0.2, 2.0))
    second = scale_suite(PERIODS, spectra, target.sa, (0.2, 2.0))
    assert_allclose(first.factors, second.factors, rtol=0)


@pytest.mark.parametrize(
    ("kwargs", "error", "match"),
    [
        ({"rule": "median"}, ValueError, "use one of 'least_squares', 'common', 'both'"),
        ({"fraction": 90}, ValueError, "looks like a percentage: enter 0.9"),
        ({"period_range": (6.0, 8.0)}, ValueError, "holds none of the periods"),
        ({"period_range": 1.0}, TypeError, "`period_range` must be a"),
        ({"period_range": suite_preset("ASCE7", 1.0), "fraction": 0.8}, ValueError, "contradicts"),
        ({"spectra": np.ones((3, 5))}, ValueError, "must have shape"),
        ({"spectra": np.zeros((3, PERIODS.size))}, ValueError, "`spectra` must be > 0 inside"),
        ({"target": design_spectrum([0.1, 1.0], "ASCE7", sds=1, sd1=0.5, tl=8)}, ValueError, "other periods"),
        ({"factor_limits": (4.0, 0.25)}, ValueError, "high > low"),
    ],
)
def test_bad_input_is_refused(kwargs, error, match):
    """Unknown rule, percentage fraction, empty range, wrong shapes or non-positive spectra raise with a message."""
    arguments = {"spectra": _suite(9, n_records=3), "target": TARGET, "period_range": (0.2, 2.0)}
    arguments.update(kwargs)
    with pytest.raises(error, match=match):
        scale_suite(PERIODS, **arguments)


def test_unknown_preset_is_refused():
    """suite_preset names the accepted standards for an unknown one."""
    with pytest.raises(ValueError, match="use 'ASCE7' or 'EN1998'"):
        suite_preset("NZS1170", 1.0)


def test_docstring_examples_run():
    """The Examples sections of groundstep.core.scaling run and print what they show."""
    failures, attempted = doctest.testmod(scaling_module, optionflags=doctest.NORMALIZE_WHITESPACE)
    assert failures == 0 and attempted > 0
