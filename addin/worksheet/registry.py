"""The one table of worksheet functions: names, arguments, help texts and the quantities they return.

Every ``STEP_`` function is declared once, with `worksheet_function`, in
``functions.py``, ``records.py`` or ``suite.py``. The decorator records it in `FUNCTIONS` (name, summary,
arguments with their help text, whether it spills) and applies the xlwings
decorators from that same record, so the help Excel shows, the README table
and any other spreadsheet binding are generated from one place.

Help texts for an argument live in `ARGUMENT_HELP` under the argument's
name; a function whose argument means something else names the entry
(``help={"quantity": "peak_quantity"}``).
"""

from __future__ import annotations

import functools
import inspect
import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any, NamedTuple

import numpy as np
import xlwings as xw

from groundstep.addin.common import ERROR_PREFIX
from groundstep.core import ConvergenceError
from groundstep.core.budget import DEFAULT_MAX_WORK, LimitError, work_budget

from .cells import CellError

__all__ = [
    "ARGUMENT_HELP",
    "CATEGORY",
    "DUCTILITY_QUANTITIES",
    "DUCTILITY_SPECTRUM_QUANTITIES",
    "FUNCTIONS",
    "MEASURE_QUANTITIES",
    "PEAK_QUANTITIES",
    "ROTD_CHOICES",
    "SCALING_RULE_NAMES",
    "SPECTRUM_QUANTITIES",
    "Argument",
    "Quantity",
    "WORKSHEET_MAX_WORK",
    "SheetFunction",
    "worksheet_function",
]

#: Category the functions are listed under in the spreadsheet's function wizard.
CATEGORY = "groundstep"

#: Help text of every argument, by name (or by the entry a function names instead).
ARGUMENT_HELP: dict[str, str] = {
    "accel": "Ground acceleration: one column (or row) of cells; text headers above and blank cells below are skipped.",
    "dt": "Time step of the record [s].",
    "unit": "Unit of the acceleration cells: g, m/s2, cm/s2, gal, mm/s2, in/s2 or ft/s2.",
    "period": "Natural period T of the oscillator [s]; 0 is a rigid oscillator.",
    "periods": "Periods T [s]: one column or row of cells; they become the rows of the table.",
    "damping": "Ratio of critical damping, e.g. 0.05 or 5% (not 5). Omitted: 0.05.",
    "dampings": "Ratios of critical damping: one cell, row or column; they become the columns of the table. Omitted: 0.05.",
    "peak_quantity": "SD, SV, SA, PSV, PSA (default), SD time, SV time or SA time [s] (time of the peak), or substeps.",
    "spectrum_quantity": "SD, SV, SA, PSV or PSA (default).",
    "method": "average (default), linear or exact; or a two-cell range holding Newmark beta and gamma.",
    "accel_unit_out": "Unit of returned accelerations: g, m/s2, cm/s2, gal, mm/s2, in/s2 or ft/s2. Blank: the record's unit.",
    "length_unit_out": "Length unit of returned displacements and velocities (m, cm, mm, in, ft). Blank: matches the record's unit.",
    "check_periods": "Periods T [s] the record will be used for (optional): checked against the record's length and 2·dt.",
    "headers": "TRUE adds a header row (and for tables a header column) with names and units. Default FALSE.",
    "yield_coefficient": "Yield strength over weight, Fy/(m g). Give this or reduction_factor.",
    "reduction_factor": "Strength reduction factor R = elastic strength / yield strength. Give this or yield_coefficient.",
    "hardening": "Post-yield stiffness over initial stiffness, in [0, 1). Default 0 (elastic-perfectly-plastic).",
    "ductility_quantity": (
        "ductility (default), peak displacement, yield displacement, residual displacement, hysteretic energy, "
        "yield coefficient, reduction factor, peak displacement time [s], yield excursions or substeps."
    ),
    "ductilities": "Target ductilities (>= 1): one column or row; they become the columns of the table.",
    "ductility_spectrum_quantity": (
        "yield coefficient (default), reduction factor, yield PSA, peak displacement or achieved ductility. "
        "An unreachable target shows 'not reached'."
    ),
    "inelastic_method": "average (default) or linear; or a two-cell range holding Newmark beta and gamma.",
    "about_dt": "Optional time step [s]: with a period, reports the sub-steps used.",
    "about_unit": "Optional record unit: reports the units results come back in.",
    "about_period": "Optional period [s]: with a time step, reports the sub-steps used.",
    "measure": (
        "PGA (default), PGV, PGD, Arias intensity, D5-75, D5-95, CAV, bracketed duration, mean period, "
        "spectrum intensity, predominant period, a time such as PGV time or D5-95 start; or a range of names (spills)."
    ),
    "bracket_threshold": "Acceleration level of the bracketed duration, in the record's unit. Blank: 0.05 g.",
    "smoothing": "Blank: the raw amplitudes at every FFT frequency; konno-ohmachi: smoothed (Konno & Ohmachi 1998).",
    "bandwidth": "Bandwidth coefficient b of the Konno-Ohmachi window, > 0 (larger smooths less). Blank: 40.",
    "baseline_order": "Degree of the velocity trend removed by least squares, 1 to 10 (2 is usual). Blank: none.",
    "low_hz": "Low corner of the Butterworth filter [Hz] (high-pass part). Blank: no high-pass.",
    "high_hz": "High corner of the Butterworth filter [Hz] (low-pass part), below 1/(2 dt). Blank: no low-pass.",
    "filter_order": "Order of one pass of the Butterworth filter, even and >= 2 (run forward and back). Blank: 4.",
    "taper": "Fraction of the record inside the cosine taper before filtering, half at each end. Blank: 0.05.",
    "keep_pads": "TRUE (default) keeps the zero pads added before filtering, so the result is longer than the record.",
    # design spectra, orientation-independent spectra and suite scaling (suite.py)
    "design_periods": "Periods T [s]: one column or row of cells (>= 0; > 0 for a table target).",
    "standard": "ASCE7 (ASCE/SEI 7-16 §11.4.6), EN1998 (EN 1998-1:2004 §3.2.2.2) or table (a target of your own).",
    "parameters": (
        "Two columns: name and value, e.g. sds 1.0 / sd1 0.6 / tl 8 (ASCE7) or ag 0.25 / ground_type C / "
        "spectrum_type 1 / importance_factor 1 / damping 0.05 (EN1998); for table: period [s] and Sa [g] rows."
    ),
    "design_accel_unit_out": "Unit of the returned spectral accelerations (g, m/s2, cm/s2, ...). Blank: g.",
    "accel_x": "First horizontal component: one column of cells (same time step and length as the second).",
    "accel_y": "Second horizontal component, at right angles to the first: one column of cells.",
    "percentile": "RotD percentile 0-100 (50 default, 100 the maximum direction), or GM (geometric mean); a row spills columns.",
    "record_spectra": "Spectra of the records: one column per record, one row per period (text headers above are skipped).",
    "target": "Target spectrum at the same periods and in the same unit: one column.",
    "rule": "common (default: one factor for the suite), least squares (one per record, log fit) or both.",
    "range_low": "Shortest period of the range the rule applies over [s]. Blank with a preset: 0.2 T.",
    "range_high": "Longest period of the range [s]. Blank with a preset: 2.0 T.",
    "fraction": "Least suite mean / target required over the range, in (0, 1]. Blank: 0.9 (the preset's).",
    "preset": "Optional: ASCE7 (ASCE/SEI 7-16 §16.2.3.2) or EN1998 (EN 1998-1:2004 §3.2.3.1.2), from memory of the clauses.",
    "structure_period": "Fundamental period T of the structure [s]; with a preset it sets the range 0.2 T to 2.0 T.",
}

#: Arguments that take a range of cells (passed as a two-dimensional list, error cells as text).
RANGE_ARGUMENTS = frozenset(
    {"accel", "periods", "dampings", "ductilities", "measure", "parameters", "accel_x", "accel_y", "percentile",
     "record_spectra", "target"}
)  # fmt: skip


class Quantity(NamedTuple):
    """One choice of a ``quantity`` argument: display name, result attribute, kind of unit."""

    name: str
    attribute: str
    kind: str  # "length", "velocity", "acceleration", "energy", "time", "count", "ratio" or "arias" (m/s)


# quantity as typed (matched ignoring case, "_" and "-") -> Quantity
PEAK_QUANTITIES: dict[str, Quantity] = {
    "SD": Quantity("SD", "peak_displacement", "length"),
    "SV": Quantity("SV", "peak_velocity", "velocity"),
    "SA": Quantity("SA", "peak_total_acceleration", "acceleration"),
    "PSV": Quantity("PSV", "pseudo_velocity", "velocity"),
    "PSA": Quantity("PSA", "pseudo_acceleration", "acceleration"),
    "SD time": Quantity("time of SD", "time_of_peak_displacement", "time"),
    "SV time": Quantity("time of SV", "time_of_peak_velocity", "time"),
    "SA time": Quantity("time of SA", "time_of_peak_total_acceleration", "time"),
    "substeps": Quantity("sub-steps", "substeps", "count"),
}
SPECTRUM_QUANTITIES: dict[str, Quantity] = {
    "SD": Quantity("SD", "sd", "length"),
    "SV": Quantity("SV", "sv", "velocity"),
    "SA": Quantity("SA", "sa", "acceleration"),
    "PSV": Quantity("PSV", "psv", "velocity"),
    "PSA": Quantity("PSA", "psa", "acceleration"),
}
DUCTILITY_QUANTITIES: dict[str, Quantity] = {
    "ductility": Quantity("ductility", "ductility", "ratio"),
    "peak displacement": Quantity("peak displacement", "peak_displacement", "length"),
    "yield displacement": Quantity("yield displacement", "yield_displacement", "length"),
    "residual displacement": Quantity("residual displacement", "residual_displacement", "length"),
    "hysteretic energy": Quantity("hysteretic energy per unit mass", "hysteretic_energy", "energy"),
    "yield coefficient": Quantity("yield coefficient", "yield_coefficient", "ratio"),
    "reduction factor": Quantity("reduction factor", "reduction_factor", "ratio"),
    "peak displacement time": Quantity("time of peak displacement", "time_of_peak_displacement", "time"),
    "yield excursions": Quantity("yield excursions", "yield_excursions", "count"),
    "substeps": Quantity("sub-steps", "substeps", "count"),
}
DUCTILITY_SPECTRUM_QUANTITIES: dict[str, Quantity] = {
    "yield coefficient": Quantity("yield coefficient", "yield_coefficient", "ratio"),
    "reduction factor": Quantity("reduction factor", "reduction_factor", "ratio"),
    "yield PSA": Quantity("yield PSA", "yield_pseudo_acceleration", "acceleration"),
    "peak displacement": Quantity("peak displacement", "peak_displacement", "length"),
    "achieved ductility": Quantity("achieved ductility", "achieved_ductility", "ratio"),
}

# percentile cell as typed (besides a number 0-100) -> attribute of groundstep.core.RotDSpectrum
ROTD_CHOICES: dict[str, Quantity] = {
    "GM": Quantity("geometric mean", "geometric_mean", "acceleration"),
    "PSA x": Quantity("PSA x", "psa_x", "acceleration"),
    "PSA y": Quantity("PSA y", "psa_y", "acceleration"),
    "angle": Quantity("direction of RotD100 [degrees]", "angle_rotd100", "ratio"),
}

# rule as typed (matched ignoring case, "_" and "-") -> rule of groundstep.core.scale_suite
SCALING_RULE_NAMES: dict[str, str] = {"common": "common", "least squares": "least_squares", "both": "both"}

# measure as typed -> Quantity; the attribute is the key of groundstep.core.ground_motion_measures,
# which also matches ("pgv_time" is "PGV time" once "_" and case are ignored)
MEASURE_QUANTITIES: dict[str, Quantity] = {
    "PGA": Quantity("PGA", "pga", "acceleration"),
    "PGA time": Quantity("time of PGA", "pga_time", "time"),
    "PGV": Quantity("PGV", "pgv", "velocity"),
    "PGV time": Quantity("time of PGV", "pgv_time", "time"),
    "PGD": Quantity("PGD", "pgd", "length"),
    "PGD time": Quantity("time of PGD", "pgd_time", "time"),
    "Arias intensity": Quantity("Arias intensity", "arias_intensity", "arias"),
    "D5-75": Quantity("D5-75", "d5_75", "time"),
    "D5-75 start": Quantity("D5-75 start", "d5_75_start", "time"),
    "D5-75 end": Quantity("D5-75 end", "d5_75_end", "time"),
    "D5-95": Quantity("D5-95", "d5_95", "time"),
    "D5-95 start": Quantity("D5-95 start", "d5_95_start", "time"),
    "D5-95 end": Quantity("D5-95 end", "d5_95_end", "time"),
    "CAV": Quantity("CAV", "cav", "velocity"),
    "bracketed duration": Quantity("bracketed duration", "bracketed_duration", "time"),
    "bracketed start": Quantity("bracketed start", "bracketed_start", "time"),
    "bracketed end": Quantity("bracketed end", "bracketed_end", "time"),
    "bracket threshold": Quantity("bracket threshold", "bracket_threshold", "acceleration"),
    "mean period": Quantity("mean period", "mean_period", "time"),
    "spectrum intensity": Quantity("spectrum intensity", "spectrum_intensity", "length"),
    "predominant period": Quantity("predominant period", "predominant_period", "time"),
}


@dataclass(frozen=True, slots=True)
class Argument:
    """One positional argument of a worksheet function."""

    name: str
    help: str
    default: Any
    required: bool
    is_range: bool


@dataclass(frozen=True, slots=True)
class SheetFunction:
    """One worksheet function as every spreadsheet binding sees it."""

    name: str
    summary: str
    arguments: tuple[Argument, ...]
    spills: bool
    function: Callable[..., Any]


#: Every worksheet function, in declaration order.
FUNCTIONS: dict[str, SheetFunction] = {}


def worksheet_function(
    *, spills: bool = False, help: dict[str, str] | None = None
) -> Callable[[Callable[..., Any]], Callable[..., Any]]:
    """Declare a worksheet function: record it in `FUNCTIONS`, guard it, decorate it for xlwings.

    Parameters
    ----------
    spills : bool
        The function returns a table (rows of cells) rather than one value.
    help : dict, optional
        Argument name -> key of `ARGUMENT_HELP` where it differs from the name.

    The function keeps every parameter positional (xlwings refuses
    keyword-only ones) and its docstring's first line is the summary Excel
    shows. Failures come back as one cell of text starting with
    ``ERROR_PREFIX``.
    """
    entries = help or {}

    def declare(function: Callable[..., Any]) -> Callable[..., Any]:
        parameters = inspect.signature(function).parameters.values()
        arguments = tuple(
            Argument(
                p.name,
                ARGUMENT_HELP[entries.get(p.name, p.name)],
                None if p.default is inspect.Parameter.empty else p.default,
                p.default is inspect.Parameter.empty,
                p.name in RANGE_ARGUMENTS,
            )
            for p in parameters
        )
        summary = (function.__doc__ or "").strip().splitlines()[0]
        guarded = _guard(function)
        decorated: Callable[..., Any] = guarded
        for argument in reversed(arguments):
            options: dict[str, Any] = {"doc": argument.help}
            if argument.is_range:
                options.update(ndim=2, err_to_str=True)
            decorated = xw.arg(argument.name, **options)(decorated)
        decorated = xw.func(category=CATEGORY)(decorated)
        FUNCTIONS[function.__name__] = SheetFunction(function.__name__, summary, arguments, spills, decorated)
        return decorated

    return declare


def _guard(function: Callable[..., Any]) -> Callable[..., Any]:
    """Return failures, and results that are not finite numbers, as one cell of text starting with ERROR_PREFIX.

    The call runs under the worksheet work budget (`WORKSHEET_MAX_WORK`) with
    numpy's floating-point errors raised rather than warned, so an overflow
    anywhere becomes a message naming the function instead of a warning
    printed to the console.
    """
    name = function.__name__

    @functools.wraps(function)
    def guarded(*args: Any) -> Any:
        try:
            with work_budget(WORKSHEET_MAX_WORK), np.errstate(over="raise", divide="raise", invalid="raise", under="ignore"):
                result = function(*args)
        except LimitError as exc:
            return f"{ERROR_PREFIX}{exc.fact}; {exc.cell_advice or _CELL_BUDGET_ADVICE}"
        except ConvergenceError as exc:
            return f"{ERROR_PREFIX}{exc.fact}" + (f"; {exc.cell_advice}" if exc.cell_advice else "")
        except (CellError, ValueError, TypeError) as exc:
            return f"{ERROR_PREFIX}{exc}"
        except (OverflowError, ZeroDivisionError, FloatingPointError) as exc:
            return (
                f"{ERROR_PREFIX}{name}: the arguments lead outside the range of floating-point numbers ({exc}); "
                "check the units and magnitudes of the cells (time step in seconds, record unit)"
            )
        except Exception as exc:  # noqa: BLE001 - a cell must never see a traceback
            return f"{ERROR_PREFIX}unexpected {type(exc).__name__}: {exc} (please report this)"
        return _finite(result, name)

    return guarded


#: Largest cost one worksheet call may take [oscillator-sub-steps]: a tenth of the
#: core's default, a few seconds of work, so that one cell never freezes a sheet.
WORKSHEET_MAX_WORK = DEFAULT_MAX_WORK / 10.0

_CELL_BUDGET_ADVICE = (
    "a single cell is limited to this; shorten the record range, use fewer periods, "
    "or run the groundstep command line (fill) for a request this large"
)


def _finite(result: Any, name: str) -> Any:
    """`result` unchanged when every number in it is finite; else a message naming where."""
    if isinstance(result, float):
        if math.isfinite(result):
            return result
        return f"{ERROR_PREFIX}{name} gave {result!r}, not a finite number; check the magnitudes of the cells"
    if isinstance(result, list):
        for i, line in enumerate(result):
            for j, value in enumerate(line if isinstance(line, list) else [line]):
                if isinstance(value, float) and not math.isfinite(value):
                    where = f"row {i + 1}, column {j + 1}" if isinstance(line, list) else f"entry {i + 1}"
                    return (
                        f"{ERROR_PREFIX}{name} gave {value!r} at {where} of its table, not a finite number; "
                        "check the magnitudes of the cells"
                    )
    return result
