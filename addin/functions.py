"""The module xlwings loads: every ``STEP_`` worksheet function, importable from here.

Users' workbooks name ``groundstep.addin.functions`` on their
``xlwings.conf`` sheet (``UDF Modules``), so this module keeps that name;
the functions themselves are declared in ``groundstep.addin.worksheet`` (``functions.py``
``records.py`` and ``suite.py``).
"""

from groundstep.addin.worksheet.functions import (
    CATEGORY,
    CAUTION,
    ERROR_PREFIX,
    STEP_ABOUT,
    STEP_CHECK,
    STEP_DUCTILITY,
    STEP_DUCTILITY_SPECTRUM,
    STEP_HISTORY,
    STEP_PEAK,
    STEP_SPECTRUM,
)
from groundstep.addin.worksheet.records import STEP_FOURIER, STEP_MEASURES, STEP_PROCESS
from groundstep.addin.worksheet.suite import STEP_DESIGN_SPECTRUM, STEP_ROTD, STEP_SCALE

__all__ = [
    "CATEGORY",
    "CAUTION",
    "ERROR_PREFIX",
    "STEP_ABOUT",
    "STEP_CHECK",
    "STEP_DESIGN_SPECTRUM",
    "STEP_DUCTILITY",
    "STEP_DUCTILITY_SPECTRUM",
    "STEP_FOURIER",
    "STEP_HISTORY",
    "STEP_MEASURES",
    "STEP_PEAK",
    "STEP_PROCESS",
    "STEP_ROTD",
    "STEP_SCALE",
    "STEP_SPECTRUM",
]
