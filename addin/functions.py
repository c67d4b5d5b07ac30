"""The module xlwings loads: every ``STEP_`` worksheet function, importable from here.

Users' workbooks name ``groundstep.addin.functions`` on their
``xlwings.conf`` sheet (``UDF Modules``), so this module keeps that name;
the functions themselves are declared in ``groundstep.addin.worksheet`` (``functions.py``
and ``records.py``).
"""

from groundstep.addin.worksheet.functions import (
    CATEGORY,
    CAUTION,
    ERROR_PREFIX,
    STEP_ABOUT,
    STEP_DUCTILITY,
    STEP_DUCTILITY_SPECTRUM,
    STEP_HISTORY,
    STEP_PEAK,
    STEP_SPECTRUM,
)
from groundstep.addin.worksheet.records import STEP_FOURIER, STEP_MEASURES, STEP_PROCESS

__all__ = [
    "CATEGORY",
    "CAUTION",
    "ERROR_PREFIX",
    "STEP_ABOUT",
    "STEP_DUCTILITY",
    "STEP_DUCTILITY_SPECTRUM",
    "STEP_FOURIER",
    "STEP_HISTORY",
    "STEP_MEASURES",
    "STEP_PEAK",
    "STEP_PROCESS",
    "STEP_SPECTRUM",
]
