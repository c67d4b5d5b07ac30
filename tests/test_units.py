"""Tests of groundstep.core.units: the unit table and the one SI-to-output converter."""

from __future__ import annotations

import doctest

import numpy as np
import pytest
from numpy.testing import assert_allclose

from groundstep.core import units
from groundstep.core.units import (
    ACCELERATION_UNITS,
    LENGTH_UNITS,
    VELOCITY_UNITS,
    OutputUnits,
    normalise_unit,
    output_units,
    to_si,
)

# Every factor below is a definition: g = 9.80665 m/s² (3rd CGPM, 1901),
# 1 in = 0.0254 m and 1 ft = 0.3048 m (international yard and pound, 1959),
# 1 Gal = 1 cm/s² (CGS unit). Conversions of exact decimal factors are
# correctly rounded, so 1 ulp (rtol 2.3e-16) is the tolerance where one applies.
ULP = 2.3e-16


def test_docstring_examples_run():
    """The Examples of the units module run and print what they show."""
    failures, attempted = doctest.testmod(units, optionflags=doctest.NORMALIZE_WHITESPACE)
    assert failures == 0 and attempted > 0


def test_acceleration_from_si_hand_values():
    """1 m/s² = 100 cm/s² = 100 Gal = 1000 mm/s² = 1/9.80665 g = 1/0.0254 in/s² (definitions)."""
    expected = {"m/s2": 1.0, "cm/s2": 100.0, "gal": 100.0, "mm/s2": 1000.0, "g": 1 / 9.80665,
                "in/s2": 1 / 0.0254, "ft/s2": 1 / 0.3048}  # fmt: skip
    for unit, value in expected.items():
        assert output_units(unit).acceleration_from_si(1.0) == pytest.approx(value, rel=ULP), unit


def test_matching_length_velocity_and_energy_units():
    """Lengths follow the record's unit (metre for g); velocity is length/s, energy length²/s²."""
    assert output_units("g") == OutputUnits("g", "m", "m/s", "m2/s2")
    assert output_units("gal") == OutputUnits("gal", "cm", "cm/s", "cm2/s2")
    assert output_units("in/s2") == OutputUnits("in/s2", "in", "in/s", "in2/s2")
    cm = output_units("cm/s2")
    # 1 m = 100 cm; 1 m/s = 100 cm/s; 1 m²/s² = 10⁴ cm²/s² (definitions)
    assert cm.length_from_si(1.0) == pytest.approx(100.0, rel=ULP)
    assert cm.velocity_from_si(1.0) == pytest.approx(100.0, rel=ULP)
    assert cm.energy_from_si(1.0) == pytest.approx(1e4, rel=ULP)
    inch = output_units("in/s2")
    # 1 m²/s² = (1/0.0254)² in²/s² ≈ 1550.0031 in²/s² (definition of the inch)
    assert inch.energy_from_si(1.0) == pytest.approx(1550.0031000062, rel=1e-12)


def test_overrides_and_spellings():
    """Acceleration and length can be chosen apart from the record; any usual spelling is accepted."""
    chosen = output_units("M/S²", acceleration="g", length="mm")
    assert (chosen.acceleration, chosen.length, chosen.velocity, chosen.energy) == ("g", "mm", "mm/s", "mm2/s2")
    # 9.80665 m/s² is 1 g; 0.5 m is 500 mm (definitions)
    assert chosen.acceleration_from_si(9.80665) == pytest.approx(1.0, rel=ULP)
    assert chosen.length_from_si(0.5) == pytest.approx(500.0, rel=ULP)


def test_converters_take_arrays_and_round_trip_to_si():
    """Arrays come back as arrays; value_in_unit × to_si(unit) returns the SI value (identity)."""
    si = np.array([0.1, -2.0, 3.5])
    for unit in ACCELERATION_UNITS:
        converted = output_units(unit).acceleration_from_si(si)
        assert isinstance(converted, np.ndarray)
        # one division and one multiplication: at most 2 ulp apart
        assert_allclose(converted * to_si(unit, ACCELERATION_UNITS), si, rtol=4.5e-16)
    for length in LENGTH_UNITS:
        units_ = output_units("m/s2", length=length)
        assert_allclose(units_.velocity_from_si(si) * VELOCITY_UNITS[units_.velocity], si, rtol=4.5e-16)
    assert isinstance(output_units("g").length_from_si(2.0), float)


def test_bad_units_are_named():
    """An unknown or non-text unit names the argument and lists the accepted names."""
    with pytest.raises(ValueError, match=r"`record_unit` 'furlong' is not a known unit; use one of 'g'"):
        output_units("furlong")
    with pytest.raises(ValueError, match=r"`length` 'g' is not a known unit; use one of 'm'"):
        output_units("g", length="g")
    with pytest.raises(TypeError, match=r"`acceleration` must be a unit name"):
        output_units("g", acceleration=9.81)  # type: ignore[arg-type]
    with pytest.raises(ValueError, match=r"`energy` must be 'm2/s2' for length 'm'"):
        OutputUnits("g", "m", "m/s", "cm2/s2")
    assert normalise_unit("Gals", ACCELERATION_UNITS) == "gal"
