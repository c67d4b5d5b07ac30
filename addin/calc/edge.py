"""Calc's argument conventions, converted at the edge so a STEP_ function answers as in Excel.

Every ``STEP_`` argument is declared ``any`` in the generated UNO interface,
so Calc accepts literals, single cells and ranges alike. What arrives
(checked in headless LibreOffice 7.4 by ``tests/test_calc_extension.py``):

* a range: a tuple of row tuples, blank cells as ``''``, numbers as float,
  text as str, Booleans as 1.0/0.0;
* a single cell or literal: a float or a str; a **blank cell arrives as
  0.0**, exactly like a cell holding 0; TRUE arrives as 1.0;
* an omitted argument (trailing, or ``;;`` in the middle): ``None``;
* an error value in an argument (``#N/A``): the function is not called,
  Calc shows the error itself.

Excel (xlwings) passes a blank cell as ``None`` and an omitted argument as
its default. `python_arguments` turns Calc's values into those, argument by
argument, by the rule `ARGUMENT_RULES` gives each argument name:

``"text"``, ``"flag"``
    0.0 is a blank cell (no valid text choice or flag is the number 0;
    FALSE is the default of every flag), so it becomes ``None``.
``"positive"``
    0 is never a valid value (time step, strength), so 0.0 becomes ``None``
    and the message is the blank-cell one.
``"zero_default"``
    0 is the default (hardening), so a blank cell and 0 give the same answer.
``"ambiguous"``
    0 is a valid value and blank must not silently become it (period,
    damping): a bare 0.0 is refused with a message saying how to enter 0
    (the text ``'0``, or the cell written as a one-cell range ``B7:B7``,
    which Calc passes with its blank visible).
``"range"``
    Ranges pass through (their blanks are ``''``, blank to the cell
    reader); a bare 0.0 is handled as ``"ambiguous"``.
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from typing import Any

from groundstep.addin.common import ERROR_PREFIX
from groundstep.addin.worksheet import functions as _functions  # noqa: F401 - declaring them fills FUNCTIONS
from groundstep.addin.worksheet.registry import FUNCTIONS, SheetFunction

__all__ = [
    "ARGUMENT_RULES",
    "IMPLEMENTATION_NAME",
    "INTERFACE_NAME",
    "MODULE_NAME",
    "calc_result",
    "call",
    "formula_name",
    "python_arguments",
    "sheet_name",
    "uno_name",
]

#: UNO module of the generated interface (IDL ``module org { module groundstep { module calc``).
MODULE_NAME = "org.groundstep.calc"
#: The generated interface: one method per STEP_ function.
INTERFACE_NAME = f"{MODULE_NAME}.XStepFunctions"
#: Implementation (and service) name of the component; Calc's internal function names start with it.
IMPLEMENTATION_NAME = f"{MODULE_NAME}.StepFunctions"

#: How a Calc value of each argument becomes the value Excel would pass (see the module notes).
ARGUMENT_RULES: dict[str, str] = {
    "accel": "range",
    "periods": "range",
    "dampings": "range",
    "ductilities": "range",
    "dt": "positive",
    "yield_coefficient": "positive",
    "reduction_factor": "positive",
    "unit": "text",
    "quantity": "text",
    "method": "text",
    "accel_unit_out": "text",
    "length_unit_out": "text",
    "headers": "flag",
    "hardening": "zero_default",
    "period": "ambiguous",
    "damping": "ambiguous",
    # record processing and measures (STEP_PROCESS, STEP_MEASURES, STEP_FOURIER)
    "measure": "text",
    "smoothing": "text",
    "keep_pads": "flag",
    "bracket_threshold": "positive",
    "baseline_order": "positive",  # orders start at 1; blank means no baseline correction
    "low_hz": "positive",  # blank: no high-pass corner
    "high_hz": "positive",  # blank: no low-pass corner
    "filter_order": "positive",
    "bandwidth": "positive",
    "taper": "ambiguous",  # 0 (no taper) is valid and differs from the default 0.05
    # design spectra, RotD and suite scaling (STEP_DESIGN_SPECTRUM, STEP_ROTD, STEP_SCALE)
    "standard": "text",
    "parameters": "range",
    "accel_x": "range",
    "accel_y": "range",
    "percentile": "range",  # RotD0 is valid: a bare 0 is refused as ambiguous, a range passes
    "record_spectra": "range",
    "target": "range",
    "rule": "text",
    "range_low": "ambiguous",  # 0 s (PGA) is a valid lower bound, and blank means "take the preset's"
    "range_high": "positive",
    "fraction": "positive",
    "preset": "text",
    "structure_period": "positive",
}

_WORD = re.compile(r"[A-Z][a-z0-9]*")


def uno_name(name: str) -> str:
    """The UNO method name of a worksheet function: ``STEP_PEAK`` -> ``stepPeak`` (UNO names have no ``_``)."""
    first, *rest = name.lower().split("_")
    return first + "".join(word.capitalize() for word in rest)


def sheet_name(method: str) -> str:
    """The worksheet name of a UNO method name: ``stepDuctilitySpectrum`` -> ``STEP_DUCTILITY_SPECTRUM``."""
    words = _WORD.findall(method[0].upper() + method[1:])
    if "".join(words) != method[0].upper() + method[1:]:
        raise ValueError(f"`method` {method!r} is not a camel-case UNO method name such as 'stepPeak'")
    return "_".join(word.upper() for word in words)


def formula_name(name: str) -> str:
    """The name Calc writes in ods and xlsx files for a worksheet function (its programmatic name)."""
    return f"{IMPLEMENTATION_NAME}.{uno_name(name)}".upper()


class _Refusal(ValueError):
    """A Calc value that cannot be given the meaning Excel would give it."""


def python_arguments(function: SheetFunction, values: Sequence[Any]) -> list[Any]:
    """The arguments Excel would pass for the cells Calc passed as `values` (see the module notes).

    Raises
    ------
    ValueError
        A bare 0 for an argument where blank and 0 cannot be told apart
        (the message says how to enter 0); more values than arguments.
    """
    if len(values) > len(function.arguments):
        raise _Refusal(f"{function.name} takes {len(function.arguments)} arguments, got {len(values)}")
    converted = []
    for argument, value in zip(function.arguments, values):
        if value is None:  # omitted: xlwings gives the function's default
            converted.append(argument.default)
            continue
        rule = ARGUMENT_RULES[argument.name]
        if isinstance(value, tuple) or not (isinstance(value, float) and value == 0.0):
            converted.append(value)
        elif rule in ("text", "flag", "positive"):
            converted.append(None)
        elif rule == "zero_default":
            converted.append(value)
        else:
            raise _Refusal(
                f"the {argument.name} is 0 or a blank cell: LibreOffice passes a blank cell as 0, so a bare 0 "
                f"is not read as a {argument.name} here; enter 0 as text ('0) or write the cell as a one-cell "
                "range such as B7:B7"
            )
    return converted


def calc_result(value: Any, spills: bool) -> Any:
    """A function's result as Calc takes it: floats and text; a table as a tuple of equal-length rows."""
    if not spills:
        return _cell(value[0][0] if isinstance(value, list) else value)
    rows = value if isinstance(value, list) else [[value]]
    width = max(len(row) for row in rows)
    return tuple(tuple(_cell(v) for v in row) + ("",) * (width - len(row)) for row in rows)


def call(name: str, values: Sequence[Any]) -> Any:
    """Call the worksheet function `name` with Calc's `values`; the result as Calc takes it."""
    function = FUNCTIONS[name]
    try:
        arguments = python_arguments(function, values)
    except _Refusal as refusal:
        return calc_result(f"{ERROR_PREFIX}{refusal}", function.spills)
    return calc_result(function.function(*arguments), function.spills)


def _cell(value: Any) -> float | str:
    if value is None:
        return ""
    if isinstance(value, str):
        return value
    return float(value)
