"""Content of the result workbook: settings in, every value the layout shows out.

One function, `build_report`, calls the ``groundstep.core`` API and returns the
layout (``layout.result_layout``) with the values for each of its blocks. The
openpyxl writer, the xlwings writer and ``verify`` all use it, so a workbook
and its re-check are computed the same way.
"""

from __future__ import annotations

import math
import platform
import sys
import warnings
from dataclasses import dataclass, field
from datetime import datetime, timezone
from typing import Any

import numpy as np

from groundstep.core import Record, __version__, elastic_spectrum, inelastic_response, linear_response, period_grid
from groundstep.core._methods import Method, resolve_method
from groundstep.core.inelastic import DEFAULT_TOLERANCE
from groundstep.core._units import ACCELERATION_UNITS, LENGTH_UNITS, MATCHING_LENGTH_UNIT
from groundstep.core.measures import arias_intensity, normalised_arias, significant_duration

from . import layout as lay

__all__ = [
    "DEFAULT_DAMPINGS",
    "Oscillator",
    "Report",
    "ReportSettings",
    "build_report",
    "default_periods",
    "spectrum_table",
    "stored_record",
    "yielding_method",
]

#: Spectrum dampings when none are given: 2 %, 5 % and 10 % of critical are the
#: values most often tabulated (common practice).
DEFAULT_DAMPINGS = (0.02, 0.05, 0.10)
#: Largest h/T the Verification oscillator may have: at or below the default
#: sub-stepping limit, so the sheet replays exactly the steps groundstep takes.
_VERIFY_STEP_RATIO = 0.1
PROJECT_KEYS = ("project", "site", "structure", "engineer", "scenario")


def default_periods() -> tuple[float, ...]:
    """80 log-spaced periods from 0.02 s to 10 s."""
    return tuple(float(p) for p in period_grid(0.02, 10.0, 80))


@dataclass(frozen=True, slots=True)
class Oscillator:
    """One of the engineer's oscillators: a label, period [s], damping ratio and optional strength.

    `reduction_factor` R = (peak elastic force) / fy [-], > 0: when given,
    the oscillator also appears in the Peaks sheet's yielding table
    (``groundstep.core.inelastic_response``); ``None`` keeps it elastic only.
    """

    label: str
    period: float
    damping: float = 0.05
    reduction_factor: float | None = None


@dataclass(frozen=True, slots=True)
class ReportSettings:
    """What to compute for a result workbook.

    Attributes
    ----------
    periods : tuple of float
        Spectrum periods [s], > 0.
    dampings : tuple of float
        Spectrum damping ratios.
    method : str or (beta, gamma)
        As in ``groundstep.core.elastic_spectrum``.
    max_step_ratio : float or None
        As in ``groundstep.core.elastic_spectrum``.
    oscillators : tuple of Oscillator
        The Peaks sheet's oscillators.
    verification_period, verification_damping : float or None, float
        The Verification sheet's oscillator; ``None`` picks the first
        oscillator with h/T <= 0.1, else 1 s (or 10·h if that is longer).
    project : tuple of (key, text)
        Summary fields (keys ``project``, ``site``, ``structure``,
        ``engineer``, ``scenario``).
    hardening : float
        Post-yield stiffness ratio α of the yielding oscillators, in [0, 1);
        0 (the default) is elastoplastic.
    """

    periods: tuple[float, ...] = field(default_factory=default_periods)
    dampings: tuple[float, ...] = DEFAULT_DAMPINGS
    method: Any = "average"
    max_step_ratio: float | None = 0.1
    oscillators: tuple[Oscillator, ...] = ()
    verification_period: float | None = None
    verification_damping: float = 0.05
    project: tuple[tuple[str, str], ...] = ()
    hardening: float = 0.0


@dataclass(frozen=True, slots=True)
class Report:
    """A layout and the values of its blocks (``content[block key][field or column key]``)."""

    layout: lay.WorkbookLayout
    content: dict[str, dict[str, Any]]
    headline: dict[str, Any]


def build_report(
    record: Record,
    settings: ReportSettings,
    *,
    command: str = "",
    source: str = "",
    created: str | None = None,
) -> Report:
    """Compute every value of the result workbook for `record`.

    Parameters
    ----------
    record : Record
        The ground acceleration.
    settings : ReportSettings
    command : str
        The command line that made the workbook (Audit sheet).
    source : str
        Where the record came from (Audit sheet).
    created : str, optional
        ISO time stamp; now (UTC) by default.

    Returns
    -------
    Report

    Raises
    ------
    ValueError
        A Verification oscillator whose h/T exceeds 0.1, a reduction factor
        that is not a number > 0 (naming the oscillator), bad periods,
        dampings, hardening or method (message from the core API).
    ConvergenceError
        A yielding oscillator's step did not converge (from
        ``inelastic_response``; the message names the time).
    """
    method = resolve_method(settings.method)
    record = stored_record(record)
    unit = record.unit
    length_unit = MATCHING_LENGTH_UNIT[unit]
    to_unit = 1.0 / ACCELERATION_UNITS[unit]
    to_length = 1.0 / LENGTH_UNITS[length_unit]
    periods = np.asarray(settings.periods, dtype=np.float64)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # sub-steps are shown per oscillator on the Peaks sheet
        spectrum = elastic_spectrum(
            record, periods, settings.dampings, method, max_step_ratio=settings.max_step_ratio
        )
        peaks = [
            linear_response(record, o.period, o.damping, method, max_step_ratio=settings.max_step_ratio)
            for o in settings.oscillators
        ]
    yielding_oscillators, yielding = _yielding_responses(record, settings, method)
    check_period, check_damping, beta, gamma = _verification_oscillator(record, settings, method)
    check = linear_response(record, check_period, check_damping, (beta, gamma), max_step_ratio=_VERIFY_STEP_RATIO)
    layout = lay.result_layout(
        record.n, periods.size, tuple(float(d) for d in spectrum.dampings), len(peaks), unit, length_unit,
        len(yielding),
    )  # fmt: skip

    table = spectrum_table(record, spectrum)
    spectra: dict[str, Any] = {"period": table["periods"]}
    key_results: dict[str, list[float]] = {k: [] for k in ("damping", "peak_psa", "peak_psa_period", "peak_sd", "peak_sd_period")}
    for i, damping in enumerate(table["dampings"]):
        for quantity in ("sd", "psv", "psa", "sa"):
            spectra[f"{quantity}_{i}"] = table[quantity][i]
        at_psa, at_sd = int(np.argmax(spectrum.psa[i])), int(np.argmax(spectrum.sd[i]))
        key_results["damping"].append(damping)
        key_results["peak_psa"].append(table["psa"][i][at_psa])
        key_results["peak_psa_period"].append(table["periods"][at_psa])
        key_results["peak_sd"].append(table["sd"][i][at_sd])
        key_results["peak_sd_period"].append(table["periods"][at_sd])

    project = dict(settings.project)
    unknown = set(project) - set(PROJECT_KEYS)
    if unknown:
        raise ValueError(f"`project` keys must be among {PROJECT_KEYS}, got {sorted(unknown)}")
    arias = arias_intensity(record)
    versions = _library_versions()
    content: dict[str, dict[str, Any]] = {
        "project": {key: project.get(key, "") for key in PROJECT_KEYS},
        "record_summary": {
            "record_name": record.name or "(unnamed)",
            "samples": record.n,
            "duration": record.duration,
            "pga": record.pga * to_unit,
            "pgv": float(np.max(np.abs(record.ground_velocity()))) * to_length,
            "pgd": float(np.max(np.abs(record.ground_displacement()))) * to_length,
            "arias": float(arias[-1]),
            "significant_duration": significant_duration(record),
        },
        "key_results": key_results,
        "check": {},
        "record": {"record_unit": unit, "dt": record.dt, "unit_factor": ACCELERATION_UNITS[unit]},
        "record_table": {
            "time": record.time.tolist(),
            "accel": record.accel_in(unit).tolist(),
            "arias": normalised_arias(record).tolist(),
        },
        "spectra_table": spectra,
        "peaks_table": {
            "label": [o.label for o in settings.oscillators],
            "period": [float(o.period) for o in settings.oscillators],
            "damping": [float(o.damping) for o in settings.oscillators],
            "sd": [r.peak_displacement * to_length for r in peaks],
            "sv": [r.peak_velocity * to_length for r in peaks],
            "sa": [r.peak_total_acceleration * to_unit for r in peaks],
            "psv": [r.pseudo_velocity * to_length for r in peaks],
            "psa": [r.pseudo_acceleration * to_unit for r in peaks],
            "time_sd": [r.time_of_peak_displacement for r in peaks],
            "time_sa": [r.time_of_peak_total_acceleration for r in peaks],
            "substeps": [r.substeps for r in peaks],
            "reduction_factor": [_reduction_factor(o) for o in settings.oscillators],
        },
        "yielding_table": _yielding_table(yielding_oscillators, yielding, to_length, settings.hardening, method),
        "verification_inputs": {
            "verification_period": check_period,
            "verification_damping": check_damping,
            "verification_beta": beta,
            "verification_gamma": gamma,
            "verification_tolerance": lay.VERIFY_TOLERANCE,
        },
        "verification_constants": {},
        "verification_check": {
            "python_u": check.peak_displacement,
            "python_v": check.peak_velocity,
            "python_t": check.peak_total_acceleration,
        },
        "verification_steps": {},
        "audit": {
            "format": lay.FORMAT_ID,
            "created": created or datetime.now(timezone.utc).isoformat(timespec="seconds"),
            "command": command,
            "groundstep_version": __version__,
            "python_version": sys.version.split()[0],
            "library_versions": versions,
            "platform": platform.platform(),
            "record_sha256": record.sha256(),
            "record_source": source,
            "caution": lay.CAUTION,
        },
        "settings": {
            "method": method.name,
            "method_description": method.describe(),
            "beta": None if not method.is_newmark else method.beta,
            "gamma": None if not method.is_newmark else method.gamma,
            "max_step_ratio": settings.max_step_ratio,
            "dampings": ", ".join(repr(float(d)) for d in spectrum.dampings),
            "period_grid": f"{periods.size} periods, {periods.min():g} s to {periods.max():g} s (listed on {lay.SPECTRA})",
            "hardening": float(settings.hardening),
            "yielding_method": _yielding_text(settings.hardening, method)
            + f"; tolerance: residual <= {DEFAULT_TOLERANCE:g}·(fy/m + PGA); sub-steps as for the elastic table",
        },
    }
    headline_ductility: dict[str, Any] = {}
    if yielding:
        worst = int(np.argmax([r.ductility for r in yielding]))
        content["yielding_summary"] = {
            "largest_ductility": yielding[worst].ductility,
            "largest_ductility_label": yielding_oscillators[worst].label,
            "largest_ductility_period": float(yielding_oscillators[worst].period),
            "largest_ductility_reduction_factor": float(yielding_oscillators[worst].reduction_factor),
            "largest_ductility_peak_displacement": yielding[worst].peak_displacement * to_length,
        }
        headline_ductility = {
            "largest_ductility": yielding[worst].ductility,
            "largest_ductility_label": yielding_oscillators[worst].label,
            "largest_ductility_reduction_factor": float(yielding_oscillators[worst].reduction_factor),
        }
    best = int(np.argmax(spectrum.psa.max(axis=0)))
    row = int(np.argmax(spectrum.psa[:, best]))
    headline = {
        "pga": record.pga * to_unit,
        "unit": unit,
        "peak_psa": float(spectrum.psa[row, best] * to_unit),
        "peak_psa_period": float(spectrum.periods[best]),
        "peak_psa_damping": float(spectrum.dampings[row]),
        "verification_period": check_period,
        "verification_damping": check_damping,
        "significant_duration": content["record_summary"]["significant_duration"],
        **headline_ductility,
    }
    return Report(layout, content, headline)


def spectrum_table(record: Record, spectrum) -> dict[str, Any]:
    """Spectra as plain lists in the record's units: SD in the matching length unit, PSV in it per
    second, PSA and SA in the record's acceleration unit (``units`` names them)."""
    unit = record.unit
    length_unit = MATCHING_LENGTH_UNIT[unit]
    to_unit = 1.0 / ACCELERATION_UNITS[unit]
    to_length = 1.0 / LENGTH_UNITS[length_unit]
    return {
        "periods": spectrum.periods.tolist(),
        "dampings": [float(d) for d in spectrum.dampings],
        "sd": (spectrum.sd * to_length).tolist(),
        "psv": (spectrum.psv * to_length).tolist(),
        "psa": (spectrum.psa * to_unit).tolist(),
        "sa": (spectrum.sa * to_unit).tolist(),
        "units": {"sd": length_unit, "psv": f"{length_unit}/s", "psa": unit, "sa": unit},
    }


def stored_record(record: Record) -> Record:
    """The record exactly as a workbook cell stores it.

    Spreadsheet files keep 15 to 16 significant digits, and a sample in the
    record's unit may need 17; the record is rounded to 16 digits (in its own
    unit, negative zeros made positive) until that no longer changes it, so the Record sheet, the results
    computed here and the SHA-256 on the Audit sheet all describe the same
    samples. A record read from text (at most 15 digits) is returned as is.
    """
    current = record
    for _ in range(6):  # 2-3 rounds suffice in practice
        # + 0.0 turns -0.0 (written "-0", read back as 0) into 0.0
        written = [float(f"{value:.16g}") + 0.0 for value in current.accel_in(current.unit)]
        candidate = Record(written, record.dt, record.unit, name=record.name, header=record.header)
        if candidate.accel.tobytes() == current.accel.tobytes():
            return current
        current = candidate
    raise RuntimeError("the record's samples do not settle when rounded to 16 digits")


def _verification_oscillator(record: Record, settings: ReportSettings, method) -> tuple[float, float, float, float]:
    beta, gamma = (method.beta, method.gamma) if method.is_newmark else (0.25, 0.5)
    period = settings.verification_period
    damping = float(settings.verification_damping)
    limit = record.dt / _VERIFY_STEP_RATIO
    if period is None:
        usable = [o for o in settings.oscillators if o.period >= limit]
        if usable:
            period, damping = float(usable[0].period), float(usable[0].damping)
        else:
            period = max(1.0, limit)
    period = float(period)
    if not period >= limit * (1.0 - 1e-12):
        raise ValueError(
            f"verification period {period!r} s is too short for the record step {record.dt!r} s: "
            f"the sheet replays whole steps without sub-steps, so it needs T >= {limit:g} s (h/T <= 0.1)"
        )
    if not 0.0 <= damping < 1.0 or math.isnan(damping):
        raise ValueError(f"verification damping must be a ratio in [0, 1), got {damping!r}")
    return period, damping, float(beta), float(gamma)


def yielding_method(method: Method) -> Method:
    """The integration method of the yielding oscillators for workbook method `method`.

    The workbook's own method when it is an implicit Newmark pair (β > 0),
    which ``inelastic_response`` accepts; else (the exact method, explicit
    β = 0) average acceleration.
    """
    if method.is_newmark and method.beta > 0.0:
        return method
    return resolve_method("average")


def _reduction_factor(oscillator: Oscillator) -> float | None:
    value = oscillator.reduction_factor
    if value is None:
        return None
    if isinstance(value, bool) or not isinstance(value, (int, float, np.floating, np.integer)):
        raise TypeError(f"oscillator {oscillator.label!r}: reduction factor R must be a number, got {value!r}")
    if not (math.isfinite(value) and value > 0.0):
        raise ValueError(f"oscillator {oscillator.label!r}: reduction factor R must be a number > 0, got {value!r}")
    return float(value)


def _yielding_responses(record: Record, settings: ReportSettings, method: Method):
    """The oscillators that carry R, and their ``inelastic_response`` results."""
    hardening = settings.hardening
    if isinstance(hardening, bool) or not isinstance(hardening, (int, float)) or not 0.0 <= hardening < 1.0:
        raise ValueError(f"hardening (post-yield stiffness ratio α) must be a number in [0, 1), got {hardening!r}")
    used = yielding_method(method)
    chosen = [o for o in settings.oscillators if _reduction_factor(o) is not None]
    results = []
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # sub-steps are shown per oscillator; a result is always converged
        for o in chosen:
            results.append(
                inelastic_response(
                    record, o.period, o.damping, reduction_factor=float(o.reduction_factor),
                    hardening=settings.hardening, method=(used.beta, used.gamma),
                    max_step_ratio=settings.max_step_ratio,
                )
            )  # fmt: skip
    return chosen, results


def _yielding_text(hardening: float, method: Method) -> str:
    """One line naming the hysteresis and the integration method of the yielding table."""
    used = yielding_method(method)
    spring = "bilinear, elastoplastic (hardening α = 0)" if hardening == 0.0 else (
        f"bilinear, kinematic hardening α = {hardening:g}"
    )
    text = f"{spring}; {used.describe()}, Newton-Raphson iterations on the residual force each step"
    if not (method.is_newmark and method.beta > 0.0):
        text += f" (the workbook's {method.name} method has no yielding form)"
    return text


def _yielding_table(oscillators, results, to_length: float, hardening: float, method: Method) -> dict[str, list[Any]]:
    text = _yielding_text(hardening, method)
    return {
        "label": [o.label for o in oscillators],
        "period": [float(o.period) for o in oscillators],
        "damping": [float(o.damping) for o in oscillators],
        "reduction_factor": [float(o.reduction_factor) for o in oscillators],
        "yield_coefficient": [r.yield_coefficient for r in results],
        "yield_displacement": [r.yield_displacement * to_length for r in results],
        "peak_displacement": [r.peak_displacement * to_length for r in results],
        "ductility": [r.ductility for r in results],
        "residual_displacement": [r.residual_displacement * to_length for r in results],
        "yield_excursions": [r.yield_excursions for r in results],
        "hysteretic_share": [r.hysteretic_energy / r.input_energy if r.input_energy > 0.0 else 0.0 for r in results],
        "energy_balance_error": [r.energy_balance_error for r in results],
        "method": [text] * len(results),
    }


def _library_versions() -> str:
    import numba
    import openpyxl
    import scipy

    return f"{np.__version__} / {scipy.__version__} / {numba.__version__} / {openpyxl.__version__}"
