"""Tests of groundstep.core.methods: method names, Method values, sub-step counts."""

from __future__ import annotations

import doctest
import math

import numpy as np
import pytest

from groundstep.core import methods
from groundstep.core.methods import (
    MAX_SUBSTEPS,
    METHODS,
    Method,
    resolve_method,
    substep_counts,
)


def test_docstring_examples_run():
    """The Examples of the methods module run and print what they show."""
    failures, attempted = doctest.testmod(methods, optionflags=doctest.NORMALIZE_WHITESPACE)
    assert failures == 0 and attempted > 0


def test_presets_are_newmark_1959_pairs():
    """Average acceleration is β = 1/4, γ = 1/2; linear acceleration β = 1/6, γ = 1/2 (Newmark 1959)."""
    assert (METHODS["average"].beta, METHODS["average"].gamma) == (0.25, 0.5)
    assert (METHODS["linear"].beta, METHODS["linear"].gamma) == (1 / 6, 0.5)
    assert resolve_method((0.25, 0.5)) is METHODS["average"]
    assert resolve_method(" Linear ") is METHODS["linear"]
    other = resolve_method((0.3, 0.6))
    assert other.name == "newmark" and other.is_newmark


def test_method_equals_its_name_and_hashes_like_it():
    """A Method equals its name (as a numpy dtype does) and another Method with the same fields."""
    exact = resolve_method("exact")
    assert exact == "exact" and exact == Method("exact", math.nan, math.nan)
    assert METHODS["average"] != "linear" and METHODS["average"] != METHODS["linear"]
    assert Method("newmark", 0.3, 0.6) == Method("newmark", 0.3, 0.6) != Method("newmark", 0.3, 0.7)
    assert {METHODS["average"]: 1}["average"] == 1  # equal objects hash alike
    assert str(METHODS["linear"]) == "linear"


def test_repr_and_describe_are_one_line():
    """repr shows the name and parameters; describe() names the method and its source."""
    assert repr(METHODS["average"]) == "Method('average', beta=0.25, gamma=0.5)"
    assert repr(METHODS["exact"]) == "Method('exact')"
    assert "Nigam & Jennings 1969" in METHODS["exact"].describe()
    assert METHODS["average"].describe() == "average acceleration (Newmark 1959), beta = 0.25, gamma = 0.5"


def test_substep_counts_by_hand():
    """s = ceil(dt / (ratio·T)), 1 for T = 0 and when no limit applies (worked by hand)."""
    average = METHODS["average"]
    # dt = 0.02 s, ratio 0.1: T = 0.05 s needs 0.02/0.005 = 4; T = 0.07 s needs ceil(2.857) = 3;
    # T = 0.2 s needs exactly 1 (ratio on the limit)
    counts = substep_counts(0.02, [0.0, 0.05, 0.07, 0.2], average, 0.1)
    assert counts.tolist() == [1, 4, 3, 1] and counts.dtype == np.int64
    assert substep_counts(0.02, [0.05], average, None).tolist() == [1]  # unconditionally stable
    # linear acceleration keeps h/T <= √3/π ≈ 0.5513 even with the ratio off (Newmark 1959):
    # T = 0.02 s at dt = 0.02 s needs ceil(1/0.5513) = 2
    assert substep_counts(0.02, [0.02], METHODS["linear"], None).tolist() == [2]


def test_too_many_substeps_is_refused():
    """More than MAX_SUBSTEPS sub-steps is refused, pointing to a rigid oscillator."""
    assert MAX_SUBSTEPS == 10_000
    with pytest.raises(ValueError, match=r"period 1e-06 s would need 1e\+05 sub-steps .* use period 0"):
        substep_counts(0.01, [0.5, 1e-6], METHODS["average"], 0.1)
