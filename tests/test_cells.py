"""Tests of groundstep.addin.worksheet.cells: spreadsheet cells to clean numbers.

Cells are shaped as Excel hands them to xlwings: a single cell as a scalar,
a range as a list of row lists, blank and error cells as None (or, with
xlwings' ``err_to_str``, as the error text), numbers typed into text cells
as strings. References are the values typed in, so comparisons are exact.
"""

from __future__ import annotations

import datetime

import numpy as np
import pytest

from groundstep.addin.worksheet import cells as _cells
from groundstep.addin.worksheet.cells import CellError
from groundstep.core.units import ACCELERATION_UNITS, LENGTH_UNITS

ACCEL = "the acceleration range"


def column(*cells):
    """A one-column range as Excel passes it (ndim=2): one list per row."""
    return [[cell] for cell in cells]


def test_column_with_header_and_trailing_blanks_gives_the_numbers():
    """Leading text headers and blank cells after the data are skipped."""
    cells = column(None, "Record A", "Accel [g]", 0.1, -0.2, 0.0, None, None, "")
    np.testing.assert_array_equal(_cells.numbers(cells, ACCEL), [0.1, -0.2, 0.0])


def test_row_flat_list_and_scalar_are_read_in_order():
    """A one-row range, a flat list and a single cell are read like a column."""
    np.testing.assert_array_equal(_cells.numbers([["a", 1.0, 2.0, None]], ACCEL), [1.0, 2.0])
    np.testing.assert_array_equal(_cells.numbers([1.0, 2.0, None], ACCEL), [1.0, 2.0])
    np.testing.assert_array_equal(_cells.numbers(3.5, ACCEL), [3.5])


def test_numbers_stored_as_text_and_percentage_text_are_numbers():
    """'0.25', ' 1e-3 ' and '5%' are read as 0.25, 0.001 and 0.05."""
    np.testing.assert_allclose(_cells.numbers(column("0.25", " 1e-3 ", "5%", 2), ACCEL), [0.25, 1e-3, 0.05, 2.0], rtol=1e-15)


@pytest.mark.parametrize(
    ("cells", "message"),
    [
        (column("h", 1.0, None, 2.0), "row 3 of the acceleration range is blank"),
        (column(1.0, "  ", 2.0), "row 2 of the acceleration range is blank"),
        (column(1.0, "n/a", 2.0), "row 2 of the acceleration range holds the text 'n/a', not a number"),
        (column(1.0, "#DIV/0!", 2.0), "row 2 of the acceleration range holds the error #DIV/0!"),
        (column("#N/A", 1.0, 2.0), "row 1 of the acceleration range holds the error #N/A"),
        (column(1.0, True, 2.0), "row 2 of the acceleration range holds TRUE, a Boolean, not a number"),
        (column(1.0, datetime.datetime(2024, 1, 2), 2.0),
         "row 2 of the acceleration range holds a date or time (2024-01-02 00:00:00), not a number"),
        (column(1.0, "0,5"), "row 2 of the acceleration range holds the text '0,5': write the number with a decimal point (0.5)"),
        (column(1.0, float("nan")), "row 2 of the acceleration range holds nan, not a finite number"),
        ([["t", "a"], [0.0, 1.0], [0.01, 2.0]],
         "the acceleration range must be one column or one row, got 3 rows x 2 columns; select a single column"),
        ([[1.0, None, 2.0]], "column 2 of the acceleration range is blank"),
        (column("Accel", None), "the acceleration range holds no numbers"),
    ],
)  # fmt: skip
def test_bad_cells_are_named_by_position(cells, message):
    """Each kind of bad cell gets a message naming its row (or column) in the range."""
    with pytest.raises(CellError) as caught:
        _cells.numbers(cells, ACCEL)
    assert str(caught.value) == message


def test_row_118_of_a_long_column():
    """A blank cell deep in a long column is named by its row in the range."""
    cells = column("Accel [g]", *np.linspace(-0.1, 0.1, 200).tolist())
    cells[117] = [None]
    with pytest.raises(CellError, match=r"^row 118 of the acceleration range is blank$"):
        _cells.numbers(cells, ACCEL)


def test_minimum_count():
    """Too few numbers are reported with the count found."""
    with pytest.raises(CellError, match=r"holds 1 number\(s\); at least 2 are needed"):
        _cells.numbers(column("a", 1.0), ACCEL, min_count=2)


def test_single_number_rules():
    """One-cell arguments: blanks, defaults, ranges of one cell, several cells."""
    assert _cells.number([[0.02]], "the time step") == 0.02
    assert _cells.number(None, "the hardening", 0.0) == 0.0
    assert _cells.number("2.5", "the period") == 2.5
    with pytest.raises(CellError, match=r"^the time step is blank$"):
        _cells.number(None, "the time step")
    with pytest.raises(CellError, match=r"^the time step must be one cell, got a range of 2 cells$"):
        _cells.number([[0.01], [0.02]], "the time step")
    with pytest.raises(CellError, match=r"^the time step must be > 0 s, got 0$"):
        _cells.positive(0.0, "the time step", "s")
    with pytest.raises(CellError, match=r"^the period must be >= 0, got -1$"):
        _cells.nonnegative(-1, "the period")


@pytest.mark.parametrize(
    ("cell", "message"),
    [
        (5, "the damping 5 looks like a percentage: enter 0.05 or 5%"),
        (1, "the damping 1 looks like a percentage: enter 0.01 or 1%"),
        (150, "the damping must be a ratio of critical damping in [0, 1), got 150"),
        (-0.02, "the damping must be >= 0, got -0.02"),
        (False, "the damping holds FALSE, a Boolean, not a number"),
        (None, "the damping is blank"),
    ],
)
def test_damping_messages(cell, message):
    """A damping ratio typed as a percentage number gets a hint with both fixes."""
    with pytest.raises(CellError) as caught:
        _cells.damping(cell, "the damping")
    assert str(caught.value) == message


def test_damping_percent_text_and_ranges():
    """'5%' is 0.05; a dampings range names the cell that looks like a percentage."""
    assert _cells.damping("5%", "the damping") == pytest.approx(0.05, rel=1e-15)
    np.testing.assert_allclose(_cells.dampings([["2%", 0.05, 0.1]], "the dampings range"), [0.02, 0.05, 0.1], rtol=1e-15)
    with pytest.raises(CellError, match=r"^column 2 of the dampings range: 5 looks like a percentage: enter 0.05 or 5%$"):
        _cells.dampings([[0.02, 5]], "the dampings range")


def test_periods_must_not_be_negative():
    """A negative period is named by its row."""
    with pytest.raises(CellError, match=r"^row 3 of the periods range holds -1; periods must be >= 0 s$"):
        _cells.periods(column("T [s]", 0.5, -1.0), "the periods range")


def test_units_text_flags_and_methods():
    """Unit spellings normalise through the core unit table; flags and methods read as typed."""
    assert _cells.unit(" M/S^2 ", "the record unit", ACCELERATION_UNITS) == "m/s2"
    assert _cells.unit(None, "the output length unit", LENGTH_UNITS, None) is None
    with pytest.raises(CellError, match=r"^the record unit 'furlong/s2' is not a known unit; use one of g, m/s2"):
        _cells.unit("furlong/s2", "the record unit", ACCELERATION_UNITS)
    with pytest.raises(CellError, match=r"^the record unit is blank; enter one of g, m/s2"):
        _cells.unit(None, "the record unit", ACCELERATION_UNITS)
    with pytest.raises(CellError, match=r"^the record unit must be text, got 9.81$"):
        _cells.unit(9.81, "the record unit", ACCELERATION_UNITS)
    assert _cells.flag(True, "the headers option", False) is True
    assert _cells.flag(0.0, "the headers option", True) is False
    assert _cells.flag("yes", "the headers option", False) is True
    assert _cells.flag(None, "the headers option", True) is True
    with pytest.raises(CellError, match=r"^the headers option must be TRUE or FALSE, got 'maybe'$"):
        _cells.flag("maybe", "the headers option", False)
    assert _cells.method(None, "the method", "average") == "average"
    assert _cells.method(" Linear ", "the method", "average") == "linear"
    assert _cells.method([[0.25, 0.5]], "the method", "average") == (0.25, 0.5)
