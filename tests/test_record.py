"""Tests of groundstep.core.record: the Record value object and the text reader."""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from numpy.testing import assert_allclose, assert_array_equal

from groundstep.core import STANDARD_GRAVITY, Record, RecordTextWarning


def test_standard_gravity_value():
    """Standard gravity is the CGPM 1901 value 9.80665 m/s² exactly."""
    assert STANDARD_GRAVITY == 9.80665  # 3rd CGPM (1901), exact by definition


@pytest.mark.parametrize(
    ("unit", "factor"),
    [
        ("g", 9.80665),  # CGPM 1901
        ("m/s2", 1.0),
        ("cm/s2", 0.01),
        ("gal", 0.01),  # 1 Gal = 1 cm/s² (SI brochure, non-SI units accepted)
        ("mm/s2", 0.001),
        ("in/s2", 0.0254),  # international inch, 1959
        ("ft/s2", 0.3048),  # international foot, 1959
        ("M/S^2", 1.0),
        ("cm/s²", 0.01),
    ],
)
def test_units_convert_to_si(unit, factor):
    """Each accepted unit (in any usual spelling) converts to m/s² by its defined factor."""
    record = Record([1.0, -2.0, 0.5], dt=0.01, unit=unit)
    assert_allclose(record.accel, np.array([1.0, -2.0, 0.5]) * factor, rtol=0, atol=0)


def test_attributes_and_time_axis():
    """n, time, duration and pga follow from the samples and dt."""
    record = Record([0.0, 0.3, -0.7, 0.1], dt=0.02, unit="m/s2")
    assert record.n == 4
    assert_allclose(record.time, [0.0, 0.02, 0.04, 0.06], rtol=0, atol=1e-15)
    assert record.duration == pytest.approx(0.06, rel=1e-15)
    assert record.pga == 0.7


def test_record_is_frozen_and_samples_read_only():
    """A Record cannot be changed after construction, nor can its sample array."""
    record = Record([0.0, 1.0], dt=0.01)
    with pytest.raises(AttributeError):
        record.dt = 0.02  # type: ignore[misc]
    with pytest.raises(ValueError, match="read-only"):
        record.accel[0] = 5.0


def test_accel_in_round_trips_the_unit():
    """accel_in(unit) returns the samples as given."""
    samples = [0.1, -0.25, 0.05]
    assert_allclose(Record(samples, 0.01, "gal").accel_in("gal"), samples, rtol=1e-15)
    assert_allclose(Record(samples, 0.01, "g").accel_in("m/s2"), np.array(samples) * 9.80665, rtol=1e-15)


def test_ground_motion_integration_is_exact_for_constant_acceleration():
    """Constant acceleration a gives v = a·t and d = a·t²/2 (closed form)."""
    a = 1.7
    record = Record(np.full(101, a), dt=0.01, unit="m/s2")
    t = record.time
    assert_allclose(record.ground_velocity(), a * t, rtol=1e-12, atol=1e-14)
    assert_allclose(record.ground_displacement(), 0.5 * a * t**2, rtol=1e-12, atol=1e-14)


def test_ground_displacement_is_exact_for_a_ramp():
    """Acceleration a = t (linear between samples) integrates to d = t³/6 (closed form)."""
    record = Record(np.arange(51) * 0.02, dt=0.02, unit="m/s2")
    t = record.time
    assert_allclose(record.ground_displacement(), t**3 / 6.0, rtol=1e-12, atol=1e-15)


def test_sha256_depends_on_samples_unit_and_dt():
    """The digest is stable for equal input and changes with any sample, the unit or dt."""
    base = Record([0.1, 0.2, 0.3], 0.01, "g").sha256()
    assert base == Record([0.1, 0.2, 0.3], 0.01, "g").sha256()
    assert len(base) == 64
    assert base != Record([0.1, 0.2, 0.3000001], 0.01, "g").sha256()
    assert base != Record([0.1, 0.2, 0.3], 0.02, "g").sha256()
    assert base != Record([0.1, 0.2, 0.3], 0.01, "m/s2").sha256()
    assert Record([-0.0, 0.2], 0.01).sha256() == Record([0.0, 0.2], 0.01).sha256()


@pytest.mark.parametrize(
    ("kwargs", "error", "message"),
    [
        ({"accel": [], "dt": 0.01}, ValueError, r"`accel` needs at least 2 values, got 0"),
        ({"accel": [0.1], "dt": 0.01}, ValueError, r"`accel` needs at least 2 values, got 1"),
        ({"accel": [0.1, np.nan, 0.2], "dt": 0.01}, ValueError, r"`accel` must be finite; index 1 holds nan"),
        ({"accel": [0.1, 0.2, np.inf], "dt": 0.01}, ValueError, r"index 2 holds inf"),
        ({"accel": [[0.1, 0.2]], "dt": 0.01}, ValueError, r"one-dimensional, got shape \(1, 2\)"),
        ({"accel": ["a", "b"], "dt": 0.01}, TypeError, r"`accel` must be numbers"),
        ({"accel": [0.1, 0.2], "dt": 0.0}, ValueError, r"`dt` must be > 0, got 0.0"),
        ({"accel": [0.1, 0.2], "dt": -0.01}, ValueError, r"`dt` must be > 0, got -0.01"),
        ({"accel": [0.1, 0.2], "dt": "0.01"}, TypeError, r"`dt` must be a number, got str"),
        ({"accel": [0.1, 0.2], "dt": 0.01, "unit": "furlong"}, ValueError, r"`unit` 'furlong' is not a known unit"),
        ({"accel": [0.1, 0.2], "dt": 0.01, "unit": 9.81}, TypeError, r"`unit` must be a unit name"),
    ],
)
def test_bad_record_input_is_named(kwargs, error, message):
    """Bad samples, dt or unit raise an error naming the argument, rule and value."""
    with pytest.raises(error, match=message):
        Record(**kwargs)


def test_from_text_single_column_with_header_is_reported():
    """Leading non-numeric lines are skipped, kept in .header and reported by a warning."""
    text = "Invented test record\nunits: g\n0.0\n0.1\n-0.2\n"
    with pytest.warns(RecordTextWarning, match="skipped 2 non-numeric header line"):
        record = Record.from_text(text, dt=0.005, unit="g")
    assert record.header == ("Invented test record", "units: g")
    assert_allclose(record.accel_in("g"), [0.0, 0.1, -0.2], rtol=1e-15)
    assert record.dt == 0.005


def test_from_text_several_values_per_line_are_read_row_wise(tmp_path):
    """Lines holding several samples are read left to right, top to bottom."""
    path = tmp_path / "rows.txt"
    path.write_text("1 2 3 4\n5 6 7 8\n9 10\n")
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        record = Record.from_text(path, dt=0.01, unit="gal")
    assert_allclose(record.accel_in("gal"), np.arange(1.0, 11.0), rtol=1e-15)  # one multiply and one divide by 0.01
    assert record.name == "rows.txt"


def test_from_text_time_column_gives_dt():
    """A 'time, acceleration' CSV gives dt from its uniformly spaced time column."""
    lines = ["time,accel"] + [f"{0.005 * i:.3f},{np.sin(i):.6f}" for i in range(200)]
    with pytest.warns(RecordTextWarning):
        record = Record.from_text("\n".join(lines), unit="m/s2")
    assert record.dt == pytest.approx(0.005, rel=1e-12)
    assert record.n == 200
    assert_allclose(record.accel, np.round(np.sin(np.arange(200)), 6), rtol=0, atol=0)


def test_from_text_semicolon_separated():
    """Semicolons separate fields as commas do."""
    record = Record.from_text("0;0.5\n0.01;-0.5\n0.02;0.25\n", unit="g")
    assert record.dt == pytest.approx(0.01)
    assert_allclose(record.accel_in("g"), [0.5, -0.5, 0.25])


def test_from_text_non_uniform_time_names_first_offending_line():
    """A gap in the time column is reported at its own line number."""
    text = "t a\n0.00 1\n0.01 2\n0.02 3\n0.04 4\n0.05 5\n0.06 6\n"
    with pytest.raises(ValueError, match=r"not uniformly spaced: line 5 has t = 0.04"):
        Record.from_text(text, unit="g")


def test_from_text_dt_must_agree_with_time_column():
    """An explicit dt that contradicts the time column is refused."""
    with pytest.raises(ValueError, match=r"`dt` 0.02 disagrees with the time column"):
        Record.from_text("0 1\n0.01 2\n0.02 3\n", dt=0.02, unit="g", time_column=True)


@pytest.mark.parametrize(
    ("text", "kwargs", "message"),
    [
        ("header only\n", {"dt": 0.01}, r"no numeric lines found"),
        ("1\n2\nbad line\n3\n", {"dt": 0.01}, r"line 3 is not numeric \('bad line'\)"),
        ("1\n2\n3\n", {}, r"`dt` is required when the text has no time column"),
        ("1\n2\nnan\n", {"dt": 0.01}, r"line 3 holds a non-finite value 'nan'"),
        ("0 1\n0.01 2 3\n", {"time_column": True}, r"line 2 holds 3 value\(s\) but the first data line"),
    ],
)
def test_from_text_bad_input(text, kwargs, message):
    """Malformed text raises a ValueError naming the line and the rule."""
    with pytest.raises(ValueError, match=message):
        Record.from_text(text, unit="g", **kwargs)


def test_from_text_missing_file():
    """A path that is not a file is named in the message."""
    with pytest.raises(ValueError, match=r"'no_such_file.txt' is not a file"):
        Record.from_text("no_such_file.txt", dt=0.01, unit="g")


def test_two_columns_of_samples_are_read_row_wise():
    """Two numbers a line whose first column does not increase are two samples (row-wise)."""
    record = Record.from_text("0.1 0.2\n0.3 0.4\n-0.2 0.1\n", dt=0.01, unit="g")
    assert_array_equal(record.accel_in("g"), [0.1, 0.2, 0.3, 0.4, -0.2, 0.1])


def test_time_column_is_recognised_even_with_dt_given():
    """A 'time, acceleration' file passed with a matching dt is not read as samples."""
    lines = ["time_s,accel_g"] + [f"{0.01 * i:.2f},{0.1 * np.sin(i):.6f}" for i in range(50)]
    with pytest.warns(RecordTextWarning):
        record = Record.from_text("\n".join(lines), dt=0.01, unit="g")
    assert record.n == 50
    assert_allclose(record.accel_in("g"), np.round(0.1 * np.sin(np.arange(50)), 6), rtol=1e-15)
    assert Record.from_text("\n".join(lines[1:]), dt=0.01, unit="g", time_column=False).n == 100


def test_dataclasses_replace_keeps_samples():
    """dataclasses.replace(record, dt=...) keeps the samples; it once multiplied them by g again."""
    import dataclasses

    record = Record([0.1, -0.2, 0.05], dt=0.01, unit="g")
    changed = dataclasses.replace(record, dt=0.02)
    # the samples are the same physical values: 0.1 g = 0.980665 m/s² (g = 9.80665 m/s², CGPM 1901)
    np.testing.assert_array_equal(changed.accel, record.accel)
    assert changed.unit == "g" and changed.dt == 0.02
    np.testing.assert_allclose(changed.accel_in("g"), [0.1, -0.2, 0.05], rtol=1e-15)


def test_history_holds_processing_steps_only():
    """A record's processing history accepts ProcessingStep entries and names a wrong one by index."""
    from groundstep.core import ProcessingStep

    step = ProcessingStep("baseline_correct", (("order", 2),), "numpy 2")
    record = Record([0.0, 1.0, 0.0], dt=0.01, unit="m/s2", history=(step,))
    assert record.history == (step,)
    assert step.describe() == "baseline_correct(order=2) [numpy 2]"
    with pytest.raises(TypeError, match="index 0 is str"):
        Record([0.0, 1.0, 0.0], dt=0.01, unit="m/s2", history=("filtered",))
