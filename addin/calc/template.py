"""The calculation-package template for LibreOffice Calc: the Excel template with Calc's function names.

On xlsx import LibreOffice 7.4 resolves an add-in function only by the
name it writes itself when it saves one (its programmatic name,
``ORG.GROUNDSTEP.CALC.STEPFUNCTIONS.STEPPEAK``; checked by
``tests/test_calc_extension.py``), so the Excel template's ``STEP_PEAK(``
cells show ``#NAME?`` in Calc. `build_calc_package` is the same workbook
(``package.template.build_calculation_package``) with every ``STEP_`` name
in a formula replaced by that name; Calc shows and accepts ``STEP_PEAK``
once the file is open. Excel cannot use this file (and Calc cannot use the
Excel one): ``groundstep templates DIR`` writes both.
"""

from __future__ import annotations

import os
import re
from pathlib import Path

from openpyxl import Workbook
from openpyxl.worksheet.formula import ArrayFormula

from groundstep.addin.common import write_atomically
from groundstep.addin.package.template import build_calculation_package
from groundstep.addin.worksheet.registry import FUNCTIONS

from .edge import formula_name

__all__ = ["CALC_TEMPLATE_FILE", "build_calc_package", "calc_formula_names", "write_calc_template"]

#: File name of the Calc template `write_calc_template` writes.
CALC_TEMPLATE_FILE = "groundstep_calculation_package_calc.xlsx"

_NOTE = (
    "Fill the yellow cells and paste the record on the Record sheet. This file is for LibreOffice Calc with "
    "the groundstep extension (groundstep calc-extension install; see README); Excel uses "
    "groundstep_calculation_package.xlsx."
)


def calc_formula_names(formula: str) -> str:
    """`formula` with every ``STEP_NAME(`` replaced by the name Calc resolves on import."""
    names = sorted(FUNCTIONS, key=len, reverse=True)  # STEP_DUCTILITY_SPECTRUM before STEP_DUCTILITY
    pattern = re.compile(r"\b(" + "|".join(map(re.escape, names)) + r")\(")
    return pattern.sub(lambda match: formula_name(match.group(1)) + "(", formula)


def build_calc_package() -> Workbook:
    """The Calc template as an openpyxl Workbook (not saved)."""
    book = build_calculation_package()
    for sheet in book.worksheets:
        for row in sheet.iter_rows():
            for cell in row:
                if isinstance(cell.value, ArrayFormula):
                    cell.value = ArrayFormula(cell.value.ref, calc_formula_names(cell.value.text))
                elif isinstance(cell.value, str) and cell.value.startswith("="):
                    cell.value = calc_formula_names(cell.value)
    book["Input"]["A3"] = _NOTE
    return book


def write_calc_template(directory: str | os.PathLike[str]) -> Path:
    """Write the Calc template into `directory` (created if missing, atomically); return its path."""
    target = Path(directory)
    target.mkdir(parents=True, exist_ok=True)
    return write_atomically(target / CALC_TEMPLATE_FILE, build_calc_package().save, force=True)
