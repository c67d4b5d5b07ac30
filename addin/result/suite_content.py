"""Content of the suite workbook: records and settings in, every value of ``suite_sheets`` out.

`build_suite` computes each record's spectra (`groundstep.core.rotd_spectrum`
for two components, `elastic_spectrum` for one), the target
(`design_spectrum`) and the scaling (`scale_suite`, with `suite_preset` when
one is named), and returns a `content.Report` that ``offline.write_report``
writes and ``suite_verify`` recomputes. Spectral accelerations are in g.
"""

from __future__ import annotations

import platform
import sys
from dataclasses import dataclass
from datetime import datetime, timezone
from typing import Any

import numpy as np
from numpy.typing import NDArray

from groundstep.addin.common import CAUTION
from groundstep.core import (
    DesignSpectrum,
    Record,
    __version__,
    collect_warnings,
    design_spectrum,
    elastic_spectrum,
    rotd_spectrum,
    scale_suite,
    suite_preset,
)
from groundstep.core.units import ACCELERATION_UNITS

from . import suite_sheets
from .content import Report
from .target import parameters_text

__all__ = ["PRESETS_NOTE", "SUITE_SPECTRA", "SuiteRecord", "SuiteSettings", "build_suite", "parameters_text"]

#: Which spectrum of a two-component record is scaled: option value -> (attribute of RotDSpectrum, name).
SUITE_SPECTRA: dict[str, tuple[str, str]] = {
    "rotd100": ("rotd100", "RotD100"),
    "rotd50": ("rotd50", "RotD50"),
    "gm": ("geometric_mean", "geometric mean"),
}
#: Said beside every preset: the clauses are written from memory of the standards.
PRESETS_NOTE = (
    "Design spectra and suite presets follow ASCE/SEI 7-16 and EN 1998-1:2004 as written from memory of the "
    "standards (EN 1998 table values are the recommended ones; a National Annex may differ). The governing code "
    "and licensed practice decide."
)
_G = ACCELERATION_UNITS["g"]  # m/s² per g


@dataclass(frozen=True, slots=True)
class SuiteRecord:
    """One record of the suite: a label, its file(s) and one or two components (same dt and length)."""

    label: str
    file_x: str
    record_x: Record
    file_y: str = ""
    record_y: Record | None = None


@dataclass(frozen=True, slots=True)
class SuiteSettings:
    """What to compute for a suite workbook.

    Attributes
    ----------
    target_standard : str
        ``"ASCE7"``, ``"EN1998"`` or ``"table"`` (`groundstep.core.design_spectrum`).
    target_parameters : tuple of (str, object)
        Its parameters; for ``"table"``, ``periods_table`` [s] and ``sa_table`` [g] as tuples.
    periods : tuple of float
        Periods of every spectrum [s].
    damping : float
        Damping ratio of the spectra.
    method : str
        Integration method (as in `elastic_spectrum`).
    spectrum : str
        Key of `SUITE_SPECTRA`: what a two-component record is scaled on.
    rule : str
        As in `scale_suite`.
    fraction : float or None
        Required mean / target; None: 0.9, or the preset's.
    period_range : (float, float) or None
        The range [s] when no preset is named.
    preset : str or None
        ``"ASCE7"`` or ``"EN1998"`` (`suite_preset`), with `structure_period`.
    structure_period : float or None
        Fundamental period T [s] of the structure.
    factor_limits : (float, float)
        Factors outside are reported (common practice).
    """

    target_standard: str
    target_parameters: tuple[tuple[str, Any], ...]
    periods: tuple[float, ...]
    damping: float = 0.05
    method: str = "average"
    spectrum: str = "rotd100"
    rule: str = "common"
    fraction: float | None = None
    period_range: tuple[float, float] | None = None
    preset: str | None = None
    structure_period: float | None = None
    factor_limits: tuple[float, float] = (0.25, 4.0)


def build_suite(records: list[SuiteRecord], settings: SuiteSettings, *, command: str = "",
                created: str | None = None) -> Report:  # fmt: skip
    """Compute every value of the suite workbook.

    Parameters
    ----------
    records : list of SuiteRecord
        At least one.
    settings : SuiteSettings
    command : str
        The command line (Audit sheet).
    created : str, optional
        ISO time stamp; now (UTC) by default.

    Returns
    -------
    Report
        ``headline`` holds the `SuiteScaling` result (``"scaling"``) and the seconds spent on spectra.

    Raises
    ------
    ValueError, TypeError
        From the core API: bad periods, damping, target parameters, rule, fraction or range.
    """
    if not records:
        raise ValueError("`records` is empty; a suite needs at least one record")
    if settings.spectrum not in SUITE_SPECTRA:
        raise ValueError(f"`spectrum` {settings.spectrum!r} is not known; use one of {', '.join(SUITE_SPECTRA)}")
    periods = np.asarray(settings.periods, dtype=np.float64)
    target = design_spectrum(periods, settings.target_standard, **dict(settings.target_parameters))
    with collect_warnings():  # sub-steps are the core's own business; the tables show the values
        spectra = [_record_spectra(r, periods, settings) for r in records]
    used = np.array([s["used"] for s in spectra])
    bounds: Any = (suite_preset(settings.preset, settings.structure_period or 0.0) if settings.preset
                   else settings.period_range)  # fmt: skip
    if bounds is None:
        raise ValueError("give a period range or a preset with the structure period")
    options: dict[str, Any] = {"factor_limits": settings.factor_limits}
    if settings.fraction is not None:
        options["fraction"] = settings.fraction
    scaling = scale_suite(periods, used, target.sa, bounds, settings.rule, **options)
    names = [_used_name(r, settings) for r in records]
    layout = suite_sheets.suite_layout(periods.size, int((periods > 0).sum()), tuple(1 if r.record_y is None else 2 for r in records),
                                       len(scaling.problems), _table_rows(settings))  # fmt: skip
    content: dict[str, dict[str, Any]] = {
        "scaling": _scaling_fields(scaling, target, names, len(records)),
        "factors_table": {
            "label": [r.label for r in records],
            "sheet": [suite_sheets.record_sheet_name(i) for i in range(len(records))],
            "spectrum": names,
            "record_factor": scaling.record_factors.tolist(),
            "factor": scaling.factors.tolist(),
        },
        "problems_table": {"problem": list(scaling.problems)},
        "ratio_table": _ratio_columns(scaling, target.sa, used),
        "scaled_table": _scaled_columns(scaling, target.sa, used),
        "suite_audit": _audit(command, created),
        "suite_inputs": _inputs(settings),
        "records_input": _records_input(records),
        "target_input": _target_input(settings),
    }
    for index, (record, values) in enumerate(zip(records, spectra)):
        key = f"r{index + 1:02d}"
        factor = float(scaling.factors[index])
        content[f"{key}_record"] = {
            f"{key}_label": record.label, f"{key}_file_x": record.file_x, f"{key}_file_y": record.file_y,
            f"{key}_dt": record.record_x.dt, f"{key}_samples": record.record_x.n, f"{key}_factor": factor,
        }  # fmt: skip
        content[f"{key}_spectra"] = {**{k: v.tolist() for k, v in values.items()}, "period": periods.tolist(),
                                     "scaled": (factor * values["used"]).tolist()}  # fmt: skip
    return Report(layout, content, {"scaling": scaling, "target": target})


def _record_spectra(record: SuiteRecord, periods: NDArray[np.float64], settings: SuiteSettings) -> dict[str, NDArray[np.float64]]:
    """Spectra of one record in g: PSA (one component) or PSA x/y, RotD50, RotD100, GM, angle (two)."""
    if record.record_y is None:
        psa = elastic_spectrum(record.record_x, periods, settings.damping, settings.method).psa[0] / _G
        return {"psa": psa, "used": psa}
    rotd = rotd_spectrum(record.record_x, record.record_y, periods, settings.damping, settings.method)
    values = {
        "psa_x": rotd.psa_x / _G, "psa_y": rotd.psa_y / _G, "rotd50": rotd.rotd50 / _G, "rotd100": rotd.rotd100 / _G,
        "geometric_mean": rotd.geometric_mean / _G, "angle": rotd.angle_rotd100,
    }  # fmt: skip
    return {**values, "used": values[SUITE_SPECTRA[settings.spectrum][0]]}


def _used_name(record: SuiteRecord, settings: SuiteSettings) -> str:
    return SUITE_SPECTRA[settings.spectrum][1] if record.record_y is not None else "PSA (one component)"


def _scaling_fields(scaling: Any, target: DesignSpectrum, names: list[str], n_records: int) -> dict[str, Any]:
    low, high = scaling.period_range
    return {
        "rule": scaling.rule,
        "clause": scaling.clause,
        "target_description": target.describe(),
        "spectrum_used": ", ".join(sorted(set(names))),
        "records": n_records,
        "fraction": scaling.fraction,
        "range_low": low,
        "range_high": high,
        "controlling_period": scaling.controlling_period,
        "common_factor": scaling.common_factor,
        "lowest_ratio": float(np.min(scaling.ratio[scaling.in_range])),
        "verdict": "meets the rule" if scaling.ok else f"does not meet the rule: {len(scaling.problems)} problem(s) listed below",
    }


def _ratio_columns(scaling: Any, target: NDArray[np.float64], used: NDArray[np.float64]) -> dict[str, list[Any]]:
    mean = (scaling.factors[:, None] * used).mean(axis=0)
    checks = iter(scaling.passes.tolist())
    return {
        "period": scaling.periods.tolist(),
        "target": target.tolist(),
        "mean": mean.tolist(),
        "ratio": scaling.ratio.tolist(),
        "in_range": ["yes" if inside else "no" for inside in scaling.in_range.tolist()],
        "check": [("pass" if next(checks) else "FAIL") if inside else "" for inside in scaling.in_range.tolist()],
    }


def _scaled_columns(scaling: Any, target: NDArray[np.float64], used: NDArray[np.float64]) -> dict[str, list[float]]:
    positive = scaling.periods > 0.0
    scaled = scaling.factors[:, None] * used
    columns = {"period": scaling.periods[positive].tolist(), "target": target[positive].tolist(),
               "mean": scaled.mean(axis=0)[positive].tolist()}  # fmt: skip
    columns.update({f"record_{i + 1}": row[positive].tolist() for i, row in enumerate(scaled)})
    return columns


def _audit(command: str, created: str | None) -> dict[str, Any]:
    import numba
    import openpyxl
    import scipy

    return {
        "format": suite_sheets.SUITE_FORMAT_ID,
        "created": created or datetime.now(timezone.utc).isoformat(timespec="seconds"),
        "command": command,
        "groundstep_version": __version__,
        "python_version": sys.version.split()[0],
        "library_versions": f"{np.__version__} / {scipy.__version__} / {numba.__version__} / {openpyxl.__version__}",
        "platform": platform.platform(),
        "caution": CAUTION,
        "presets_note": PRESETS_NOTE,
    }


def _inputs(settings: SuiteSettings) -> dict[str, Any]:
    low, high = settings.period_range if settings.period_range else (None, None)
    return {
        "target_standard": settings.target_standard,
        "target_parameters": parameters_text(settings.target_parameters),
        "damping": settings.damping,
        "method": settings.method,
        "spectrum": settings.spectrum,
        "rule_input": settings.rule,
        "fraction_input": settings.fraction,
        "range_low_input": low,
        "range_high_input": high,
        "preset": settings.preset or "",
        "structure_period": settings.structure_period,
        "factor_limit_low": settings.factor_limits[0],
        "factor_limit_high": settings.factor_limits[1],
    }


def _records_input(records: list[SuiteRecord]) -> dict[str, list[Any]]:
    return {
        "label": [r.label for r in records],
        "file_x": [r.file_x for r in records],
        "file_y": [r.file_y for r in records],
        "dt": [r.record_x.dt for r in records],
        "unit": [r.record_x.unit for r in records],
        "sha256_x": [r.record_x.sha256() for r in records],
        "sha256_y": [r.record_y.sha256() if r.record_y is not None else "" for r in records],
    }


def _table_rows(settings: SuiteSettings) -> int:
    return len(dict(settings.target_parameters).get("periods_table", ())) if settings.target_standard == "table" else 0


def _target_input(settings: SuiteSettings) -> dict[str, list[float]]:
    if not _table_rows(settings):
        return {}
    given = dict(settings.target_parameters)
    return {"period": [float(v) for v in given["periods_table"]], "sa": [float(v) for v in given["sa_table"]]}
