"""The ``STEP_`` worksheet functions of a record suite: design spectra, RotD spectra, suite scaling.

``STEP_DESIGN_SPECTRUM`` spills the design (or target) spectrum at a column
of periods; ``STEP_ROTD`` spills orientation-independent spectra of two
horizontal components; ``STEP_SCALE`` spills the scale factors of a suite of
record spectra against a target, the controlling period, the common factor
and a status line (``meets the rule`` or the first problem). Each hands off
to the public core API (`groundstep.core.design_spectrum`, `rotd_spectrum`,
`scale_suite`, `suite_preset`) and converts units only.

Arguments follow the order of every ``STEP_`` function: the inputs (record
cells, periods), then what to compute, then options and output units.
Positional only: xlwings refuses keyword-only parameters.
"""

from __future__ import annotations

from typing import Any

import numpy as np
from numpy.typing import NDArray

from groundstep.core import design_spectrum, rotd_spectrum, scale_suite, suite_preset
from groundstep.core.defaults import DEFAULT_DAMPING
from groundstep.core.units import ACCELERATION_UNITS

from . import cells, convert
from .cache import HISTORIES, RESULTS, digest
from .cells import CellError
from .convert import Cell
from .registry import ROTD_CHOICES, SCALING_RULE_NAMES, Quantity, worksheet_function

__all__ = ["STEP_DESIGN_SPECTRUM", "STEP_ROTD", "STEP_SCALE"]

#: Parameters of a standard that hold text (every other one is a number).
_TEXT_PARAMETERS = frozenset({"ground_type"})


@worksheet_function(spills=True, help={"periods": "design_periods", "accel_unit_out": "design_accel_unit_out"})
def STEP_DESIGN_SPECTRUM(
    periods: Cell,
    standard: Cell,
    parameters: Cell = None,
    accel_unit_out: Cell = "g",
    headers: Cell = False,
) -> Any:
    """Design (or target) spectrum Sa at the periods (spills one column): ASCE7, EN1998 or a table of your own."""
    grid = cells.periods(periods, "the periods range")
    name = cells.text(standard, "the standard")
    unit = cells.unit(accel_unit_out, "the output acceleration unit", ACCELERATION_UNITS, "g")
    given = _design_parameters(parameters, name)
    spectrum = RESULTS.get_or_compute(
        ("design", tuple(grid.tolist()), name.lower(), digest(parameters)),
        lambda: convert.quiet(design_spectrum, grid, name, **given),
    )
    column = [[value] for value in spectrum.sa_in(unit).tolist()]
    return [[f"Sa [{unit}] ({spectrum.edition})"], *column] if cells.flag(headers, "the headers option", False) else column


@worksheet_function(spills=True)
def STEP_ROTD(
    accel_x: Cell,
    accel_y: Cell,
    dt: Cell,
    unit: Cell,
    periods: Cell,
    damping: Cell = DEFAULT_DAMPING,
    percentile: Cell = 50,
    method: Cell = "average",
    accel_unit_out: Cell = None,
    headers: Cell = False,
) -> Any:
    """Orientation-independent spectrum of two components (spills): RotD50, RotD100, any RotDnn, or GM."""
    record_x, key_x = convert.record(accel_x, dt, unit)
    record_y, key_y = convert.record(accel_y, dt, unit)
    out = convert.units(record_x.unit, accel_unit_out, None)
    grid, ratio = cells.periods(periods, "the periods range"), cells.damping(damping, "the damping", DEFAULT_DAMPING)
    resolved = convert.method(method)
    spectrum = HISTORIES.get_or_compute(
        ("rotd", key_x, key_y, tuple(grid.tolist()), ratio, convert.method_key(resolved)),
        lambda: convert.quiet(rotd_spectrum, record_x, record_y, grid, ratio, resolved),
    )
    chosen = [_rotd_choice(cell) for cell in _choices(percentile)]
    columns = []
    for _name, value in chosen:
        values = spectrum.percentile(value) if isinstance(value, float) else getattr(spectrum, value.attribute)
        columns.append(_converted(values, value, out))
    body = np.column_stack(columns)
    if not cells.flag(headers, "the headers option", False):
        return body.tolist()
    names = [name for name, _ in chosen]
    return [["T [s]", *names], *([float(t), *row] for t, row in zip(grid.tolist(), body.tolist()))]


@worksheet_function(spills=True)
def STEP_SCALE(
    record_spectra: Cell,
    target: Cell,
    periods: Cell,
    rule: Cell = "common",
    range_low: Cell = None,
    range_high: Cell = None,
    fraction: Cell = None,
    preset: Cell = None,
    structure_period: Cell = None,
    headers: Cell = False,
) -> Any:
    """Scale factors of a suite against a target (spills): one per record, the controlling period, the common factor, a status."""
    grid = cells.periods(periods, "the periods range")
    spectra = _matrix(record_spectra, "the record spectra range", grid.size)
    wanted = cells.numbers(target, "the target range")
    chosen = SCALING_RULE_NAMES[convert.choice(rule, _RULE_CHOICES, "the rule").attribute]
    required = cells.number(fraction, "the fraction", None)
    bounds = _period_range(range_low, range_high, preset, structure_period)
    options: dict[str, Any] = {"rule": chosen} if required is None else {"rule": chosen, "fraction": required}
    result = RESULTS.get_or_compute(
        ("scale", digest([record_spectra, target, periods]), chosen, required, repr(bounds)),
        lambda: scale_suite(grid, spectra.T, wanted, bounds, **options),
    )
    status = "meets the rule" if result.ok else f"problem ({len(result.problems)}): {result.problems[0]}"
    values = [*result.factors.tolist(), result.controlling_period, result.common_factor, status]
    if not cells.flag(headers, "the headers option", False):
        return [[value] for value in values]
    labels = [f"factor of record {i}" for i in range(1, result.factors.size + 1)]
    labels += ["controlling period [s]", "common factor", result.clause]
    return [[label, value] for label, value in zip(labels, values)]


#: The rule names as `convert.choice` matches them (attribute: the key of SCALING_RULE_NAMES).
_RULE_CHOICES = {name: Quantity(name, name, "ratio") for name in SCALING_RULE_NAMES}


def _design_parameters(value: Cell, standard: str) -> dict[str, Any]:
    """Keyword arguments of `design_spectrum` from a two-column range (name, value; or period, Sa rows)."""
    rows = [row if isinstance(row, list) else [row] for row in (value if isinstance(value, list) else [[value]])]
    rows = [row for row in rows if any(not _blank(cell) for cell in row)]
    if any(len(row) != 2 for row in rows):
        raise CellError(f"the parameters range must be two columns (name and value), got rows of {len(rows[0])} cells")
    if standard.strip().lower() == "table":
        numeric = [row for row in rows if not all(isinstance(c, str) and not _numberlike(c) for c in row)]
        table = _matrix(numeric, "the parameters range (period and Sa rows)", len(numeric)) if numeric else None
        if table is None:
            raise CellError("the parameters range of a table target is blank; give period [s] and Sa [g] rows")
        return {"periods_table": table[:, 0], "sa_table": table[:, 1]}
    given: dict[str, Any] = {}
    for index, (name, cell) in enumerate(rows, start=1):
        key = cells.text(name, f"row {index} of the parameters range (the name)").strip().lower()
        what = f"row {index} of the parameters range ({key})"
        if key in _TEXT_PARAMETERS:
            given[key] = cells.text(cell, what) if isinstance(cell, str) else cells.number(cell, what)
        else:
            given[key] = cells.number(cell, what)
    return given


def _choices(value: Cell) -> list[Cell]:
    """The cells of a one-cell, one-row or one-column range, blanks dropped."""
    if not isinstance(value, list):
        return [value]
    found = [cell for row in value for cell in (row if isinstance(row, list) else [row]) if not _blank(cell)]
    if not found:
        raise CellError("the percentile range is blank; give 50, 100, another percentile or GM")
    return found


def _rotd_choice(cell: Cell) -> tuple[str, Any]:
    """(header, percentile as float or a ROTD_CHOICES entry) of one percentile cell."""
    if isinstance(cell, str) and not _numberlike(cell):
        quantity = convert.choice(cell, ROTD_CHOICES, "the percentile")
        return quantity.name, quantity
    p = cells.number(cell, "the percentile", 50.0)
    if not 0.0 <= p <= 100.0:
        raise CellError(f"the percentile must be in [0, 100] (or GM), got {p:g}")
    return f"RotD{p:g}", p


def _converted(values: NDArray[np.float64], choice: Any, out: Any) -> NDArray[np.float64]:
    kind = "acceleration" if isinstance(choice, float) else choice.kind
    return np.asarray(convert.to_unit(values, kind, out), dtype=np.float64)


def _period_range(low: Cell, high: Cell, preset: Cell, period: Cell) -> Any:
    """(low, high) [s] from the cells, or the preset of a standard for the structure's period."""
    standard = cells.text(preset, "the preset", None)
    if standard is None:
        bounds = (cells.nonnegative(low, "the range low period"), cells.positive(high, "the range high period", "s"))
        if bounds[0] >= bounds[1]:
            raise CellError(f"the range low period ({bounds[0]:g} s) must be below the high one ({bounds[1]:g} s)")
        return bounds
    if not (_blank(low) and _blank(high)):
        raise CellError("give either a preset (with the structure period) or the range low and high periods, not both")
    return suite_preset(standard, cells.positive(period, "the structure period", "s"))


def _matrix(value: Cell, what: str, n_rows: int) -> NDArray[np.float64]:
    """Numbers of a rectangular range (rows of cells): leading text rows skipped, trailing blank rows dropped."""
    rows = [row if isinstance(row, list) else [row] for row in (value if isinstance(value, list) else [[value]])]
    while rows and all(_blank(c) or (isinstance(c, str) and not _numberlike(c)) for c in rows[0]):
        rows = rows[1:]
    while rows and all(_blank(c) for c in rows[-1]):
        rows = rows[:-1]
    if len(rows) != n_rows:
        raise CellError(f"{what} has {len(rows)} rows of numbers; it needs one row per period ({n_rows})")
    width = max(len(row) for row in rows)
    found = np.empty((len(rows), width))
    for i, row in enumerate(rows, start=1):
        for j in range(width):
            cell = row[j] if j < len(row) else None
            found[i - 1, j] = cells.number(cell, f"row {i}, column {j + 1} of {what}")
    return found


def _blank(cell: Cell) -> bool:
    return cell is None or (isinstance(cell, str) and not cell.strip())


def _numberlike(text: str) -> bool:
    try:
        cells.number(text, "a cell")
    except CellError:
        return False
    return True
