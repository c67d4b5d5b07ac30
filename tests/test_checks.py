"""Tests of groundstep.core.checks and groundstep.core.defaults: one rule, one wording, any label."""

from __future__ import annotations

import doctest
import inspect

import numpy as np
import pytest
from numpy.testing import assert_allclose

from groundstep.core import (
    Record,
    checks,
    defaults,
    inelastic_response,
    linear,
    linear_response,
)
from groundstep.core.checks import (
    check_damping,
    check_dampings,
    check_ductilities,
    check_hardening,
    check_integer,
    check_method,
    check_period,
    check_periods,
    check_positive,
    check_strength,
    percentage_hint,
)


@pytest.mark.parametrize("module", [checks, defaults])
def test_docstring_examples_run(module):
    """The Examples of checks and defaults run and print what they show."""
    failures, attempted = doctest.testmod(module, optionflags=doctest.NORMALIZE_WHITESPACE)
    assert failures == 0 and attempted > 0


def test_percentage_hint_is_one_text():
    """Values from 1 to 100 get the hint "5 looks like a percentage: enter 0.05"; others none."""
    assert percentage_hint(5) == "5 looks like a percentage: enter 0.05"
    assert percentage_hint(100) == "100 looks like a percentage: enter 1"
    assert percentage_hint(0.5) == "" and percentage_hint(250) == ""


def test_labels_name_arguments_or_cells():
    """An argument name appears in backticks, any other label (a cell) as given."""
    with pytest.raises(ValueError, match=r"^`damping` must be a ratio .* got 5.0; 5 looks like a percentage"):
        check_damping(5)
    with pytest.raises(ValueError, match=r"^cell Input!C7 must be a ratio .* got 5.0; 5 looks like a percentage"):
        check_damping(5, "cell Input!C7")
    with pytest.raises(ValueError, match=r"^damping \(argument 5\) must be >= 0; got -0.1"):
        check_damping(-0.1, "damping (argument 5)")


def test_vectors_name_the_index():
    """A bad entry of a vector is named by its index."""
    with pytest.raises(ValueError, match=r"`dampings` .*; index 1 holds 20.0; 20 looks like a percentage: enter 0.2"):
        check_dampings([0.05, 20.0])
    with pytest.raises(ValueError, match=r"`periods` must be >= 0 s; index 2 holds -1.0"):
        check_periods([0.1, 0.0, -1.0])
    with pytest.raises(ValueError, match=r"`ductilities` must be >= 1 .*; index 0 holds 0.5"):
        check_ductilities([0.5, 2.0])
    assert_allclose(check_dampings(0.05), [0.05], rtol=0)  # a scalar becomes a vector


def test_period_rules():
    """A period is one number >= 0; the yielding engine refuses 0 (no yield displacement)."""
    assert check_period(0.0) == 0.0
    with pytest.raises(ValueError, match=r"`period` must be one number, got 2"):
        check_period([0.1, 0.2])
    with pytest.raises(ValueError, match=r"`period` 0 is a rigid oscillator"):
        check_period(0.0, rigid=False)


def test_hardening_range_is_written_once():
    """Hardening lies in HARDENING_RANGE = [0, 1); the message quotes that range and the hint."""
    assert defaults.HARDENING_RANGE == (0.0, 1.0)
    assert check_hardening(0.0) == 0.0
    for bad in (-0.1, 1.0, 5.0):
        with pytest.raises(ValueError, match=r"`hardening` must be a post-yield stiffness ratio in \[0, 1\)"):
            check_hardening(bad)
    with pytest.raises(ValueError, match=r"got 5.0; 5 looks like a percentage: enter 0.05"):
        check_hardening(5.0)


def test_strength_rules():
    """Exactly one of yield coefficient and R, each > 0; R alone is checked with its one message."""
    assert check_strength(0.2, None) == (0.2, None)
    assert check_strength(None, 4) == (None, 4.0)
    with pytest.raises(ValueError, match=r"exactly one of `yield_coefficient` and `reduction_factor`"):
        check_strength(0.2, 4.0)
    with pytest.raises(ValueError, match=r"got neither"):
        check_strength(None, None)
    with pytest.raises(ValueError, match=r"^row 3 R must be > 0, got 0.0 \(R = peak elastic force / yield strength"):
        check_strength(None, 0.0, labels=("row 3 Cy", "row 3 R"))
    with pytest.raises(TypeError, match=r"`reduction_factor` must be a number"):
        check_strength(None, "4")


def test_integer_and_positive():
    """Integers may arrive as whole floats (spreadsheet cells); fractions and other kinds are refused."""
    assert check_integer(20.0, "max_iterations", 1) == 20 and check_integer(np.int64(3), "count") == 3
    with pytest.raises(TypeError, match=r"`max_iterations` must be an integer, got float 2.5"):
        check_integer(2.5, "max_iterations")
    with pytest.raises(TypeError, match=r"must be an integer, got bool True"):
        check_integer(True, "count")
    with pytest.raises(ValueError, match=r"`count` must be >= 2, got 1"):
        check_integer(1, "count", 2)
    assert check_positive(0.01, "dt") == 0.01
    with pytest.raises(ValueError, match=r"`dt` must be > 0, got 0.0"):
        check_positive(0, "dt")


def test_method_rules():
    """Beta 0 is refused by both engines (the step is implicit); 'exact' by the yielding engine only."""
    assert check_method("exact").name == "exact"
    with pytest.raises(ValueError, match=r"`method` beta must be > 0: the Newmark step is implicit"):
        check_method((0.0, 0.5))
    with pytest.raises(ValueError, match=r"'exact' applies to linear oscillators only"):
        check_method("exact", yielding=True)


def test_core_uses_the_same_rules():
    """Core's public functions raise the checks' messages (one wording in the whole library)."""
    record = Record(np.sin(np.arange(100) * 0.1), 0.01, "m/s2")
    with pytest.raises(ValueError, match=r"`hardening` must be a post-yield stiffness ratio in \[0, 1\)"):
        inelastic_response(record, 0.5, reduction_factor=2.0, hardening=1.0)
    with pytest.raises(ValueError, match=r"`damping` must be a ratio .* 5 looks like a percentage"):
        linear_response(record, 0.5, 5.0)
    with pytest.raises(ValueError, match=r"`method` beta must be > 0"):
        linear_response(record, 0.5, 0.05, (0.0, 0.5))


def test_defaults_have_one_home():
    """The defaults are the published common-practice values, and the engines use them."""
    # 5 % damping, spectra at 2, 5, 10 %, Δt/T <= 0.1 (common practice)
    assert defaults.DEFAULT_DAMPING == 0.05 and defaults.DEFAULT_DAMPINGS == (0.02, 0.05, 0.10)
    assert defaults.DEFAULT_STEP_RATIO == 0.1 and linear.DEFAULT_STEP_RATIO is defaults.DEFAULT_STEP_RATIO
    grid = defaults.default_periods()
    assert grid.size == 80 and grid[0] == 0.02 and grid[-1] == 10.0
    # log-spaced: equal ratios ln(10/0.02)/79 between neighbours (definition of the grid)
    assert_allclose(np.diff(np.log(grid)), np.log(500.0) / 79, rtol=1e-12)
    assert inspect.signature(linear_response).parameters["damping"].default == defaults.DEFAULT_DAMPING
    tolerance = inspect.signature(inelastic_response).parameters["tolerance"].default
    assert tolerance == defaults.DEFAULT_TOLERANCE == 1e-9


def test_long_vectors_name_the_index_as_short_ones_do():
    """Past the short-input path (more than 16 entries) the same rules name the same index, in the same order."""
    dampings = np.full(30, 0.05)
    dampings[18] = 20.0
    with pytest.raises(ValueError, match=r"`dampings` .*; index 18 holds 20.0; 20 looks like a percentage: enter 0.2"):
        check_dampings(dampings)
    periods = np.linspace(0.1, 3.0, 40)
    periods[25], periods[31] = -1.0, np.nan
    with pytest.raises(ValueError, match=r"`periods` must be finite; index 31 holds nan$"):  # finiteness is checked first
        check_periods(periods)
    periods[31] = 1e7
    with pytest.raises(ValueError, match=r"`periods` must be >= 0 s; index 25 holds -1.0"):
        check_periods(periods)
    periods[25] = 0.5
    with pytest.raises(ValueError, match=r"`periods` must be 0 \(rigid\) or lie in .*; index 31 holds 10000000.0"):
        check_periods(periods)
    for size in (3, 30):  # both paths
        with pytest.raises(ValueError, match=rf"`dampings` must be finite; index 1 holds inf \({size - 1} non-finite"):
            check_dampings([0.05] + [np.inf] * (size - 1))
        assert_allclose(check_periods(np.zeros(size)), np.zeros(size), rtol=0)  # rigid periods pass
        assert_allclose(check_dampings(np.full(size, 0.999)), np.full(size, 0.999), rtol=0)
