"""Reading record texts: decimal commas, blank lines, layout, the time column's dt, the unit (issue 9)."""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose

from groundstep.core import Record, RecordTextWarning


def test_decimal_comma_one_value_per_line_is_read_as_one_sample():
    """'0,20409' one per line is one sample 0.20409, not two (before: 0 and 20409, PGA 2e4 g)."""
    record = Record.from_text("0,20409\n-0,1\n0,05\n", dt=0.01, unit="g")
    # reference: the values as written; rtol: one multiply and one divide by 9.80665 (round-off)
    assert_allclose(record.accel_in("g"), [0.20409, -0.1, 0.05], rtol=1e-15)


def test_decimal_comma_with_semicolons_and_time_column():
    """';'-separated fields with decimal commas give time and acceleration."""
    record = Record.from_text("0,00;0,5\n0,01;-0,5\n0,02;0,25\n", unit="g")
    assert record.dt == 0.01  # the column prints two decimals: the step is 0.01 exactly
    assert_allclose(record.accel_in("g"), [0.5, -0.5, 0.25], rtol=1e-15)  # one multiply and one divide


def test_decimal_commas_separated_by_tabs_are_read():
    """Tab-separated decimal-comma values are read row-wise."""
    record = Record.from_text("0,1\t0,2\n-0,3\t0,4\n", dt=0.01, unit="m/s2", time_column=False)
    assert_allclose(record.accel, [0.1, 0.2, -0.3, 0.4], rtol=1e-15)


@pytest.mark.parametrize(
    ("text", "message"),
    [
        ("0.1\n0,2\n", r"line 2 holds 2 value\(s\) but the first data line \(line 1\) holds 1"),
        ("0,1;0.2\n0,3;0,4\n", r"line 1 field '0.2' cannot be read with ',' as the decimal mark"),
        ("0,1,2\n0,3,4\n", r"line 1 field '0,1,2' is ambiguous"),
    ],
)
def test_mixed_decimal_marks_are_refused_naming_the_line(text, message):
    """A file that mixes decimal marks is refused with the line, never read as something else."""
    with pytest.raises(ValueError, match=message):
        Record.from_text(text, dt=0.01, unit="g")


def test_increasing_decimal_comma_values_are_refused_as_ambiguous():
    """'0,5 / 1,3 / 2,1' may be integer 'time,accel' lines: refused, naming both fixes."""
    with pytest.raises(ValueError, match=r"only increase, as a time column would.*time_column=True.*time_column=False"):
        Record.from_text("0,5\n1,3\n2,1\n", dt=0.01, unit="g")
    record = Record.from_text("0,5\n1,3\n2,1\n", unit="g", time_column=True)
    assert record.dt == 1.0 and record.n == 3


def test_blank_line_inside_data_is_refused_like_a_blank_cell():
    """A blank line between samples is refused naming it; blank lines after the data are dropped."""
    with pytest.raises(ValueError, match=r"line 3 is blank inside the data \(data goes on at line 4\)"):
        Record.from_text("0.1\n0.2\n\n0.3\n", dt=0.01, unit="g")
    assert Record.from_text("0.1\n0.2\n0.3\n\n\n", dt=0.01, unit="g").n == 3


def test_several_values_per_line_need_one_layout():
    """Rows of 3, then 2, then 3 values are refused; a shorter last line is accepted."""
    with pytest.raises(ValueError, match=r"line 2 holds 2 value\(s\) but the first data line \(line 1\) holds 3"):
        Record.from_text("1 2 3\n4 5\n6 7 8\n", dt=0.01, unit="g")
    assert Record.from_text("1 2 3\n4 5 6\n7\n", dt=0.01, unit="g").n == 7


def test_dt_from_time_column_is_the_printed_step():
    """A 0.02 s column of 500 lines gives dt = 0.02 exactly (before: 0.019999999999999997)."""
    lines = [f"{0.02 * i:.2f},{np.sin(i):.5f}" for i in range(500)]
    record = Record.from_text("\n".join(lines), unit="g")
    assert record.dt == 0.02  # the column prints 2 decimals; (9.98 - 0)/499 rounds to 0.02
    lines = [f"{0.005 * i:.6E} {np.sin(i):.5f}" for i in range(300)]
    assert Record.from_text("\n".join(lines), unit="g").dt == 0.005  # 6 decimals of mantissa, exponent -3


def test_unit_is_never_assumed():
    """Without a unit the reader refuses and names where to give it."""
    with pytest.raises(ValueError, match=r"the acceleration unit is not given; pass unit=\.\.\."):
        Record.from_text("0.1\n0.2\n", dt=0.01)
    with pytest.raises(ValueError, match=r"pass --unit \(g, "):
        Record.from_text("0.1\n0.2\n", dt=0.01, option_names={"unit": "--unit"})


def test_messages_use_the_callers_option_names():
    """A command line passes its own option spellings; messages then say --dt and --time-column."""
    names = {"dt": "--dt", "give_dt": "pass --dt SECONDS", "time_column": "--time-column yes"}
    with pytest.raises(ValueError, match=r"--dt is required .*pass --dt SECONDS, or --time-column yes"):
        Record.from_text("0.1\n0.2\n", unit="g", option_names=names)
    with pytest.raises(ValueError, match=r"--dt 0.01 disagrees with the time column, which is spaced 0.02 s"):
        Record.from_text("0.00 1\n0.02 2\n0.04 3\n", dt=0.01, unit="g", option_names=names)


def test_header_with_decimal_comma_data_is_reported():
    """A header above decimal-comma data is skipped and reported as before."""
    with pytest.warns(RecordTextWarning, match="skipped 1 non-numeric header line"):
        record = Record.from_text("Beschleunigung [g]\n0,1\n-0,2\n0,15\n", dt=0.01, unit="g")
    assert_allclose(record.accel_in("g"), [0.1, -0.2, 0.15], rtol=1e-15)
