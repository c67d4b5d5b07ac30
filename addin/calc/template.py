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

Calc hands a range argument to an add-in cell by cell, so every ``STEP_``
cell given the whole 200,001-row ``input_record`` would cost the whole
range on each call. In this template the record argument of each
``STEP_`` call is `CALC_RECORD_ARGUMENT`: the record column from row 1
down to the last non-blank row (`CALC_RECORD`; one cell, `USED_ROWS_CELL`
on the Record sheet, finds it once per change of the record), handed over
as one row (``TRANSPOSE``). The rows left out are blank, and the record
reader drops trailing blanks anyway (``worksheet.cells.numbers``), so
every number is the one the whole range gives; an empty column gives
``INDEX(...;0)``, the whole range again.

Why one row: LibreOffice's Python bridge turns each row of a range into a
tuple of its own, and for a 2,001-cell column that conversion is most of
a call's cost; one row of 2,001 cells converts 2-5x faster
(``benchmarks/bench_calc.py`` measures both templates in one run). Two
things follow, both pinned by ``tests/test_calc_extension.py``: a message
about a record cell names it as ``column k of the acceleration range``
(k is its Record-sheet row; the Record sheet's note says so, `RECORD_POSITION`),
and an error value in the record (``#N/A``) reaches each ``STEP_`` cell as
that error (a plain range argument shows Calc's ``Err:504`` instead).
"""

from __future__ import annotations

import os
import re
from pathlib import Path

from openpyxl import Workbook
from openpyxl.worksheet.formula import ArrayFormula

from groundstep.addin.common import write_atomically
from groundstep.addin.package.names import RECORD_ROWS
from groundstep.addin.package.template import build_calculation_package
from groundstep.addin.worksheet.registry import FUNCTIONS

from .edge import formula_name

__all__ = [
    "CALC_RECORD",
    "CALC_RECORD_ARGUMENT",
    "CALC_TEMPLATE_FILE",
    "RECORD_POSITION",
    "USED_ROWS_CELL",
    "build_calc_package",
    "calc_formula_names",
    "write_calc_template",
]

#: File name of the Calc template `write_calc_template` writes.
CALC_TEMPLATE_FILE = "groundstep_calculation_package_calc.xlsx"

#: Record-sheet cell holding the last non-blank row of the record column (0 when it is empty).
USED_ROWS_CELL = "D1"
_COLUMN = f"Record!$A$1:$A${RECORD_ROWS + 1}"
#: The record column of the Calc template: rows 1 to the last non-blank one.
CALC_RECORD = f"Record!$A$1:INDEX({_COLUMN},Record!${USED_ROWS_CELL[0]}${USED_ROWS_CELL[1:]})"
#: The record argument of every STEP_ call in the Calc template: `CALC_RECORD` as one row (see the module notes).
CALC_RECORD_ARGUMENT = f"TRANSPOSE({CALC_RECORD})"
_USED_ROWS = f'=SUMPRODUCT(MAX(({_COLUMN}<>"")*ROW({_COLUMN})))'
_FIRST_RECORD_ARGUMENT = re.compile(r"(STEPFUNCTIONS\.STEP[A-Z]*\()input_record([,)])")

#: How the Record sheet's note names a record cell in messages: Excel's template, and this one (module notes).
_EXCEL_POSITION = "'row k of the acceleration range' means sheet row k."
RECORD_POSITION = (
    "'column k of the acceleration range' means sheet row k (the STEP_ cells get the record as one row)."
)
_NOTE = (
    "Fill the yellow cells and paste the record on the Record sheet. This file is for LibreOffice Calc with "
    "the groundstep extension (groundstep calc-extension install; see README); Excel uses "
    "groundstep_calculation_package.xlsx."
)


def calc_formula_names(formula: str) -> str:
    """`formula` with every ``STEP_NAME(`` replaced by the name Calc resolves on import."""
    names = sorted(FUNCTIONS, key=len, reverse=True)  # STEP_DUCTILITY_SPECTRUM before STEP_DUCTILITY
    pattern = re.compile(r"\b(" + "|".join(map(re.escape, names)) + r")\(")
    renamed = pattern.sub(lambda match: formula_name(match.group(1)) + "(", formula)
    return _FIRST_RECORD_ARGUMENT.sub(lambda match: match.group(1) + CALC_RECORD_ARGUMENT + match.group(2), renamed)


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
    record = book["Record"]
    record[USED_ROWS_CELL] = _USED_ROWS
    record["C1"] = "last used row (for the STEP_ cells)"
    if _EXCEL_POSITION not in str(record["B1"].value):
        raise RuntimeError(f"the Record sheet's note no longer says {_EXCEL_POSITION}; update calc.template")
    record["B1"] = str(record["B1"].value).replace(_EXCEL_POSITION, RECORD_POSITION)
    return book


def write_calc_template(directory: str | os.PathLike[str]) -> Path:
    """Write the Calc template into `directory` (created if missing, atomically); return its path."""
    target = Path(directory)
    target.mkdir(parents=True, exist_ok=True)
    return write_atomically(target / CALC_TEMPLATE_FILE, build_calc_package().save, force=True)
