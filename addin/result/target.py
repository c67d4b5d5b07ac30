"""The design (or target) spectrum of a result workbook: computed, described, stored and read back.

``content.build_report`` calls `target_spectrum` when the settings name a
target; the Spectra table gets its Sa column (in the record's unit), the PSA
chart one more series, and the Audit sheet the standard, its parameters and
the edition and clause (`target_blocks`). ``verify`` rebuilds the target from
those cells (`parameters_from_text`, and the ``target_input`` table of a
user-defined target) with ``groundstep.core.design_spectrum``.
"""

from __future__ import annotations

import ast
from typing import Any

import numpy as np

from groundstep.core import DesignSpectrum, collect_warnings, design_spectrum

__all__ = ["parameters_from_text", "parameters_text", "target_blocks", "target_label", "target_points", "target_spectrum"]


def target_spectrum(
    standard: str | None, parameters: tuple[tuple[str, Any], ...], periods: Any
) -> tuple[DesignSpectrum | None, list[str]]:
    """``design_spectrum(periods, standard, **parameters)`` and its warnings as text; (None, []) without a standard.

    Raises
    ------
    TypeError, ValueError
        From ``groundstep.core.design_spectrum``: an unknown standard, a
        missing or bad parameter, a period outside a target table.
    """
    if standard is None:
        return None, []
    with collect_warnings() as found:
        target = design_spectrum(np.asarray(periods, dtype=float), standard, **dict(parameters))
    return target, [str(w) for w in found]


def target_label(target: DesignSpectrum | None) -> str:
    """The series title and column header of the target: its document (``"ASCE/SEI 7-16"``); "" without."""
    return "" if target is None else target.edition


def target_points(target: DesignSpectrum | None) -> int:
    """Rows of the Audit sheet's target table: the points of a user-defined table, else 0."""
    if target is None or target.standard != "table":
        return 0
    return int(target.parameter("points"))  # type: ignore[call-overload]


def parameters_text(parameters: tuple[tuple[str, Any], ...]) -> str:
    """``name=value, ...`` (values as Python literals; the tables of a user-defined target left out)."""
    return ", ".join(f"{name}={value!r}" for name, value in parameters if not isinstance(value, (tuple, list)))


def parameters_from_text(text: str) -> tuple[tuple[str, Any], ...]:
    """`parameters_text` read back.

    Raises
    ------
    ValueError
        Not ``name=value, ...`` with Python literals (the message quotes it).
    """
    try:
        tree = ast.parse(f"f({text})", mode="eval").body
        if not isinstance(tree, ast.Call) or tree.args or any(k.arg is None for k in tree.keywords):
            raise ValueError("not name=value, ...")
        return tuple((str(k.arg), ast.literal_eval(k.value)) for k in tree.keywords)
    except (SyntaxError, ValueError) as exc:
        raise ValueError(f"target parameters {text!r} are not name=value, ... with numbers or quoted text ({exc})") from None


def target_blocks(
    parameters: tuple[tuple[str, Any], ...], target: DesignSpectrum, notes: list[str]
) -> dict[str, dict[str, Any]]:
    """The Audit sheet's target block (and table, for a user-defined target)."""
    blocks: dict[str, dict[str, Any]] = {
        "target": {
            "target_standard": target.standard,
            "target_parameters": parameters_text(parameters),
            "target_description": target.describe(),
            "target_notes": "; ".join(notes) or "none",
        }
    }
    if target.standard == "table":
        given = dict(parameters)
        blocks["target_input"] = {"period": [float(v) for v in given["periods_table"]],
                                  "sa": [float(v) for v in given["sa_table"]]}  # fmt: skip
    return blocks
