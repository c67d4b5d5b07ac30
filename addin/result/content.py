"""Content of the result workbook: settings in, every value the layout shows out.

`build_report` calls the ``groundstep.core`` API and returns the layout
(``sheets.result_layout``) with the values for each of its blocks, one small
function per block. The openpyxl writer, the xlwings writer and ``verify``
all use it, so a workbook and its re-check are computed the same way.
"""

from __future__ import annotations

import importlib.metadata
import math
import platform
import sys
from dataclasses import dataclass, field
from datetime import datetime, timezone
from typing import Any

import numpy as np

from groundstep.addin.common import CAUTION
from groundstep.core import (
    ElasticSpectrum,
    GroundMotionMeasures,
    InelasticResponse,
    LinearResponse,
    Record,
    __version__,
    bandpass,
    baseline_correct,
    collect_warnings,
    ductility_spectrum,
    elastic_spectrum,
    fourier_amplitude,
    ground_motion_measures,
    inelastic_response,
    linear_response,
)
from groundstep.core.checks import check_hardening, check_positive
from groundstep.core.defaults import (
    DEFAULT_DAMPING,
    DEFAULT_DAMPINGS,
    DEFAULT_STEP_RATIO,
    DEFAULT_TOLERANCE,
    DEFAULT_YIELDING_STEP_RATIO,
    default_periods,
)
from groundstep.core.methods import Method, resolve_method
from groundstep.core.plausibility import check_record
from groundstep.core.units import ACCELERATION_UNITS, STANDARD_GRAVITY, OutputUnits, output_units

from . import limits, sheets
from .layout import FORMAT_ID, WorkbookLayout
from .target import target_blocks, target_label, target_points, target_spectrum

__all__ = [
    "PROJECT_KEYS",
    "Oscillator",
    "Report",
    "ReportSettings",
    "build_report",
    "processed_record",
    "spectrum_table",
    "stored_record",
    "verification_window",
    "yielding_method",
    "yielding_step_ratio",
]

#: Largest h/T the Verification oscillator may have: at or below the default
#: sub-stepping limit, so the sheet replays exactly the steps groundstep takes.
_VERIFY_STEP_RATIO = DEFAULT_STEP_RATIO
#: Keys of the Summary sheet's project block, in order.
PROJECT_KEYS = ("project", "site", "structure", "engineer", "scenario", "project_number", "checker", "date")


def _default_periods() -> tuple[float, ...]:
    return tuple(float(p) for p in default_periods())


@dataclass(frozen=True, slots=True)
class Oscillator:
    """One of the engineer's oscillators: a label, period [s], damping ratio and optional strength.

    `reduction_factor` R = (peak elastic force) / fy [-], > 0: when given,
    the oscillator also appears in the Peaks sheet's yielding table
    (``groundstep.core.inelastic_response``); ``None`` keeps it elastic only.
    """

    label: str
    period: float
    damping: float = DEFAULT_DAMPING
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
    baseline_order : int or None
        Degree of the velocity trend removed first
        (``groundstep.core.baseline_correct``); None: no baseline correction.
    low_hz, high_hz : float or None
        Corners [Hz] of the Butterworth band-pass applied next
        (``groundstep.core.bandpass``, its defaults otherwise: order 4,
        5 % taper, pads kept); both None: no filter, one None: a high- or
        low-pass.
    ductilities, yield_periods, yield_damping : tuple, tuple, float
        The constant-ductility spectrum of the Ductility sheet (the
        template's Yielding sheet): target ductilities (>= 1), periods [s]
        and damping ratio; no sheet when either tuple is empty.
    target_standard, target_parameters : str or None, tuple of (str, object)
        A design (or target) spectrum shown beside the record's on the
        Spectra sheet: ``groundstep.core.design_spectrum(periods,
        target_standard, **dict(target_parameters))`` (``"ASCE7"``,
        ``"EN1998"`` or ``"table"``; accelerations in g); None: no target.
    """

    periods: tuple[float, ...] = field(default_factory=_default_periods)
    dampings: tuple[float, ...] = DEFAULT_DAMPINGS
    method: Any = "average"
    max_step_ratio: float | None = DEFAULT_STEP_RATIO
    oscillators: tuple[Oscillator, ...] = ()
    verification_period: float | None = None
    verification_damping: float = DEFAULT_DAMPING
    project: tuple[tuple[str, str], ...] = ()
    hardening: float = 0.0
    baseline_order: int | None = None
    low_hz: float | None = None
    high_hz: float | None = None
    ductilities: tuple[float, ...] = ()
    yield_periods: tuple[float, ...] = ()
    yield_damping: float = DEFAULT_DAMPING
    target_standard: str | None = None
    target_parameters: tuple[tuple[str, Any], ...] = ()


@dataclass(frozen=True, slots=True)
class Report:
    """A layout and the values of its blocks (``content[block key][field or column key]``)."""

    layout: WorkbookLayout
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
    raw = stored_record(record)
    record = processed_record(raw, settings)
    steps = record.history[len(raw.history) :]
    _check_format_limits(record, raw.n if steps else 0, settings, command, source)
    out = output_units(record.unit)
    project = _project(settings)
    # sub-steps are shown per oscillator on the Peaks sheet; a yielding result is always converged
    with collect_warnings():
        spectrum = elastic_spectrum(record, settings.periods, settings.dampings, method,
                                    max_step_ratio=settings.max_step_ratio)  # fmt: skip
        # the self-check beside each ordinate: the exact piecewise-linear solution, peaks read as often
        exact = spectrum if method.name == "exact" else elastic_spectrum(
            record, settings.periods, settings.dampings, "exact", max_step_ratio=settings.max_step_ratio
        )
        peaks = [
            linear_response(record, o.period, o.damping, method, max_step_ratio=settings.max_step_ratio)
            for o in settings.oscillators
        ]
        yielding_oscillators, yielding = _yielding_responses(record, settings, method)
        ductility = _ductility_spectrum(record, settings, method)
        # measures warn of an all-zero record or a cut mean-period band; the values say so (NaN, 0)
        measures = ground_motion_measures(record)
        raw_measures = ground_motion_measures(raw) if steps else None
    shift = _time_shift(raw, record)
    fourier = _fourier_blocks(record, out)
    verification = _verification_oscillator(record, settings, method)
    replay = linear_response(record, *verification[:2], verification[2:], max_step_ratio=_VERIFY_STEP_RATIO)
    window = verification_window(replay)
    findings = _findings(record, settings)
    target, target_notes = target_spectrum(settings.target_standard, settings.target_parameters, spectrum.periods)
    layout = sheets.result_layout(
        record.n, spectrum.periods.size, tuple(float(d) for d in spectrum.dampings), len(peaks),
        out.acceleration, out.length, len(yielding), n_raw=raw.n if steps else 0,
        n_frequencies=len(fourier["fourier_table"]["frequency"]),
        n_chart_frequencies=len(fourier["fourier_chart_table"]["frequency"]), n_steps=len(steps),
        n_findings=len(findings["check"]),
        ductilities=tuple(float(d) for d in ductility.ductilities) if ductility is not None else (),
        n_ductility_periods=ductility.periods.size if ductility is not None else 0,
        n_rigid=int(np.argmax(spectrum.periods > 0.0)) if spectrum.periods.max() > 0.0 else spectrum.periods.size,
        verification_window=window,
        target_label=target_label(target), n_target_points=target_points(target),
    )  # fmt: skip
    table = spectrum_table(spectrum, out)
    content: dict[str, dict[str, Any]] = {
        "project": {key: project.get(key, "") for key in PROJECT_KEYS[:5]},
        "review": {key: project.get(key, "") for key in PROJECT_KEYS[5:]},
        "record_summary": _record_summary(raw, measures, out),
        "key_results": _key_results(spectrum, table),
        "check": {},
        "findings": findings,
        "record": {"record_unit": record.unit, "dt": record.dt, "unit_factor": ACCELERATION_UNITS[record.unit]},
        "record_table": _record_columns(record, shift),
        "motion_table": _motion_columns(record, out, shift),
        "measures": _measures_block(measures, "measure_", out, shift),
        "arias_table": _arias_columns(measures, shift),
        **fourier,
        "processing_table": {"step": [step.describe() for step in steps]},
        "spectra_table": _spectra_columns(table, spectrum, exact),
        "peaks_table": _peaks_table(settings.oscillators, peaks, out),
        "yielding_table": _yielding_table(yielding_oscillators, yielding, out, settings.hardening, method),
        **_verification_blocks(replay, window, *verification),
        "audit": {
            **_audit(raw, command, source, created),
            "reviewed": " / ".join(project.get(key, "") or "-" for key in PROJECT_KEYS[5:]),
        },
        "settings": _settings_block(settings, spectrum, method),
    }
    if raw_measures is not None:
        content["raw_table"] = _record_columns(raw, 0.0)
        content["raw_motion_table"] = _motion_columns(raw, out, 0.0)
        content["raw_measures"] = _measures_block(raw_measures, "raw_measure_", out, 0.0)
    if ductility is not None:
        content.update(_ductility_blocks(ductility, settings, method))
    if yielding:
        content["yielding_summary"] = _yielding_summary(yielding_oscillators, yielding, out)
    headline = _headline(record, spectrum, out, content, verification)
    if target is not None:
        content["spectra_table"]["target"] = target.sa_in(out.acceleration).tolist()
        content.update(target_blocks(settings.target_parameters, target, target_notes))
        headline["target"] = target.describe()
    return Report(layout, content, headline)


def _check_format_limits(record: Record, n_raw: int, settings: ReportSettings, command: str, source: str) -> None:
    """Refuse, before anything is computed, what the xlsx format cannot hold (``limits.py``)."""
    limits.check_samples(record.n, n_raw)
    texts = [("the record name", record.name), ("the command line", command), ("the record source", source)]
    limits.check_text(texts + [(f"the project field {key!r}", str(text)) for key, text in settings.project])
    n_periods = len(settings.periods)
    limits.check_layout(sheets.result_layout(
        record.n, n_periods, (0.0,) * len(settings.dampings), len(settings.oscillators), record.unit, "m",
        len(settings.oscillators), n_raw=n_raw, n_frequencies=record.n // 2,
        n_chart_frequencies=min(record.n // 2, sheets.CHART_POINTS), n_steps=2, n_findings=8,
        ductilities=(1.0,) * len(settings.ductilities), n_ductility_periods=len(settings.yield_periods),
    ))  # fmt: skip  # sizes known before computing (labels do not matter); Fourier rows n // 2 (rfft)


def _findings(record: Record, settings: ReportSettings) -> dict[str, list[str]]:
    """The plausibility notes of the record and every period the workbook uses; one "none" row when empty."""
    periods = [*settings.periods, *(o.period for o in settings.oscillators)]
    found = check_record(record, periods)
    if not found:
        return {"check": ["none"], "finding": ["no plausibility notes (time step, PGA for the unit, periods, drift)"]}
    return {"check": [f.check for f in found], "finding": [f.message for f in found]}


def _project(settings: ReportSettings) -> dict[str, str]:
    project = dict(settings.project)
    unknown = set(project) - set(PROJECT_KEYS)
    if unknown:
        raise ValueError(f"`project` keys must be among {PROJECT_KEYS}, got {sorted(unknown)}")
    return project


def processed_record(record: Record, settings: ReportSettings) -> Record:
    """`record` after the processing `settings` ask for: `baseline_correct`, then `bandpass`.

    Returns `record` itself when no processing is asked for. The core
    functions record each step in the new record's ``history``; ``verify``
    replays those steps from the record as read.
    """
    if settings.baseline_order is not None:
        record = baseline_correct(record, settings.baseline_order)
    if settings.low_hz is not None or settings.high_hz is not None:
        record = bandpass(record, settings.low_hz, settings.high_hz)
    return record


def _time_shift(raw: Record, record: Record) -> float:
    """Time [s] of the processed record's first sample on the raw record's time axis (0 or negative).

    `bandpass` keeps its zero pads, n_pad samples at each end, so the first
    sample as read is sample n_pad of the result (its documented layout);
    the sheets count time from that sample.
    """
    return -((record.n - raw.n) // 2) * record.dt


def _record_summary(raw: Record, measures: GroundMotionMeasures, out: OutputUnits) -> dict[str, Any]:
    """Name, samples and duration of the record as read; the peaks and Arias values of the one analysed."""
    return {
        "record_name": raw.name or "(unnamed)",
        "samples": raw.n,
        "duration": raw.duration,
        "pga": out.acceleration_from_si(measures.pga),
        "pgv": out.velocity_from_si(measures.pgv),
        "pgd": out.length_from_si(measures.pgd),
        "arias": measures.arias_intensity,
        "significant_duration": measures.d5_95,
    }


def _record_columns(record: Record, shift: float) -> dict[str, list[float]]:
    """Time [s] and acceleration (the record's unit) at every sample."""
    return {"time": (record.time + shift).tolist(), "accel": record.accel_in(record.unit).tolist()}


def _motion_columns(record: Record, out: OutputUnits, shift: float) -> dict[str, list[float]]:
    """Time, ground velocity and displacement at the samples of the build-up table (``sheets.sample_picks``)."""
    picks = np.asarray(sheets.sample_picks(record.n), dtype=np.intp)
    return {
        "time": (record.time[picks] + shift).tolist(),
        "velocity": np.asarray(out.velocity_from_si(record.ground_velocity()[picks])).tolist(),
        "displacement": np.asarray(out.length_from_si(record.ground_displacement()[picks])).tolist(),
    }


def _measures_block(measures: GroundMotionMeasures, prefix: str, out: OutputUnits, shift: float) -> dict[str, Any]:
    """The Measures sheet's fields in the report units, times of occurrence moved by `shift` [s]
    (NaN, e.g. the times of an all-zero record, left blank)."""
    values: dict[str, Any] = {}
    for key, _, kind, _, _ in sheets.MEASURE_FIELDS:
        value = float(measures[key] + shift if kind == "instant" else out.from_si(kind, measures[key]))
        values[prefix + key] = None if math.isnan(value) else value
    return values


def _arias_columns(measures: GroundMotionMeasures, shift: float) -> dict[str, list[Any]]:
    """I_A(t) / I_A at the samples of the build-up table, and again inside D5-95 only."""
    picks = np.asarray(sheets.sample_picks(measures.arias_build_up.size), dtype=np.intp)
    build_up = measures.arias_build_up[picks]
    time = picks * measures.dt  # the core's own times, from the first sample analysed
    inside = (time >= measures.d5_95_start) & (time <= measures.d5_95_end)  # all False when the times are NaN
    return {
        "time": (time + shift).tolist(),
        "build_up": build_up.tolist(),
        "within_d5_95": [value if flag else None for value, flag in zip(build_up.tolist(), inside.tolist())],
    }


def _fourier_blocks(record: Record, out: OutputUnits) -> dict[str, dict[str, list[float]]]:
    """The raw Fourier amplitude at every non-zero FFT frequency, and at most CHART_POINTS of them for the chart."""
    spectrum = fourier_amplitude(record)
    frequencies, amplitudes = spectrum.frequencies[1:], np.asarray(out.velocity_from_si(spectrum.amplitudes[1:]))
    picks = np.arange(frequencies.size)
    if frequencies.size > sheets.CHART_POINTS:  # log-spaced picks: a log axis needs the low end, not every bin
        picks = np.unique(np.rint(np.geomspace(1, frequencies.size, sheets.CHART_POINTS)).astype(int) - 1)
    return {
        "fourier_table": {"frequency": frequencies.tolist(), "amplitude": amplitudes.tolist()},
        "fourier_chart_table": {"frequency": frequencies[picks].tolist(), "amplitude": amplitudes[picks].tolist()},
    }


def _spectra_columns(table: dict[str, Any], spectrum: ElasticSpectrum, exact: ElasticSpectrum) -> dict[str, Any]:
    """The spectra, and beside each damping the relative difference of PSA from the exact solution, flagged."""
    columns: dict[str, Any] = {"period": table["periods"]}
    with np.errstate(divide="ignore", invalid="ignore"):
        difference = np.where(exact.psa > 0.0, spectrum.psa / exact.psa - 1.0, 0.0)
    for i in range(len(table["dampings"])):
        for quantity in ("sd", "psv", "psa", "sa"):
            columns[f"{quantity}_{i}"] = table[quantity][i]
        columns[f"exact_{i}"] = difference[i].tolist()
        columns[f"exact_flag_{i}"] = ["yes" if abs(d) > sheets.EXACT_TOLERANCE else "" for d in difference[i]]
    return columns


def _key_results(spectrum: ElasticSpectrum, table: dict[str, Any]) -> dict[str, list[float]]:
    keys = ("damping", "peak_psa", "peak_psa_period", "peak_sd", "peak_sd_period")
    found: dict[str, list[float]] = {k: [] for k in keys}
    for i, damping in enumerate(table["dampings"]):
        at_psa, at_sd = int(np.argmax(spectrum.psa[i])), int(np.argmax(spectrum.sd[i]))
        found["damping"].append(damping)
        found["peak_psa"].append(table["psa"][i][at_psa])
        found["peak_psa_period"].append(table["periods"][at_psa])
        found["peak_sd"].append(table["sd"][i][at_sd])
        found["peak_sd_period"].append(table["periods"][at_sd])
    return found


def _peaks_table(oscillators: tuple[Oscillator, ...], peaks: list[LinearResponse], out: OutputUnits) -> dict[str, list[Any]]:
    return {
        "label": [o.label for o in oscillators],
        "period": [float(o.period) for o in oscillators],
        "damping": [float(o.damping) for o in oscillators],
        "sd": [out.length_from_si(r.peak_displacement) for r in peaks],
        "sv": [out.velocity_from_si(r.peak_velocity) for r in peaks],
        "sa": [out.acceleration_from_si(r.peak_total_acceleration) for r in peaks],
        "psv": [out.velocity_from_si(r.pseudo_velocity) for r in peaks],
        "psa": [out.acceleration_from_si(r.pseudo_acceleration) for r in peaks],
        "time_sd": [r.time_of_peak_displacement for r in peaks],
        "time_sa": [r.time_of_peak_total_acceleration for r in peaks],
        "substeps": [r.substeps for r in peaks],
        "reduction_factor": [_reduction_factor(o) for o in oscillators],
    }


def verification_window(response: LinearResponse, length: int = sheets.VERIFY_WINDOW) -> tuple[int, int]:
    """(first step, steps) of the Verification sheet's replay of `response`.

    The whole record when it has at most `length` samples; otherwise
    `length` steps holding the peaks of u, u̇ and ü + ü_g (centred between
    the first and last of them), or centred on the peak of u when those
    peaks lie `length` steps or more apart.

    Parameters
    ----------
    response : LinearResponse
        The Verification oscillator's response (no sub-steps).
    length : int, default ``sheets.VERIFY_WINDOW``
        Most steps the sheet replays.

    Returns
    -------
    tuple of int
        First step (0 at the record's first sample) and number of steps.

    Examples
    --------
    >>> from groundstep.core import Record, linear_response
    >>> response = linear_response(Record([0.0, 1.0, 0.5, 0.0, 0.0], 0.01, "m/s2"), 1.0, 0.05)
    >>> verification_window(response, length=3)
    (0, 3)
    """
    n = response.time.size
    if n <= length:
        return 0, n
    peaks = [int(np.argmax(np.abs(h))) for h in (response.displacement, response.velocity, response.total_acceleration)]
    low, high = min(peaks), max(peaks)
    if high - low >= length:
        low = high = peaks[0]
    start = low - (length - 1 - (high - low)) // 2
    return min(max(start, 0), n - length), length


def _verification_blocks(
    replay: LinearResponse, window: tuple[int, int], period: float, damping: float, beta: float, gamma: float
) -> dict[str, dict[str, Any]]:
    start, rows = window
    steps = slice(start, start + rows)
    histories = {"u": replay.displacement, "v": replay.velocity, "t": replay.total_acceleration}
    peaks = {q: float(np.max(np.abs(h[steps]))) for q, h in histories.items()}
    whole = {"u": replay.peak_displacement, "v": replay.peak_velocity, "t": replay.peak_total_acceleration}
    inside = [name for q, name in (("u", "u"), ("v", "u̇"), ("t", "ü + ü_g")) if peaks[q] == whole[q]]
    return {
        "verification_inputs": {
            "verification_period": period,
            "verification_damping": damping,
            "verification_beta": beta,
            "verification_gamma": gamma,
            "verification_tolerance": sheets.VERIFY_TOLERANCE,
        },
        "verification_constants": {},
        "verification_check": {f"python_{q}": value for q, value in peaks.items()},
        "verification_start": {
            "verification_first_step": start,
            "verification_steps_replayed": rows,
            "verification_record_steps": int(replay.time.size),
            "verification_start_u": float(replay.displacement[start]),
            "verification_start_v": float(replay.velocity[start]),
            "verification_window": (", ".join(inside) if inside else "none") + " (of u, u̇, ü + ü_g)",
        },
        "verification_steps": {},
    }


def _audit(record: Record, command: str, source: str, created: str | None) -> dict[str, Any]:
    return {
        "format": FORMAT_ID,
        "created": created or datetime.now(timezone.utc).isoformat(timespec="seconds"),
        "command": command,
        "groundstep_version": __version__,
        "python_version": sys.version.split()[0],
        "library_versions": _library_versions(),
        "platform": platform.platform(),
        "record_sha256": record.sha256(),
        "record_source": source,
        "caution": CAUTION,
    }


def _settings_block(settings: ReportSettings, spectrum: ElasticSpectrum, method: Method) -> dict[str, Any]:
    periods = spectrum.periods
    return {
        "method": method.name,
        "method_description": method.describe(),
        "beta": None if not method.is_newmark else method.beta,
        "gamma": None if not method.is_newmark else method.gamma,
        "max_step_ratio": settings.max_step_ratio,
        "dampings": ", ".join(repr(float(d)) for d in spectrum.dampings),
        "period_grid": f"{periods.size} periods, {periods.min():g} s to {periods.max():g} s (listed on {sheets.SPECTRA})",
        "hardening": float(settings.hardening),
        "yielding_method": _yielding_text(settings.hardening, method)
        + f"; tolerance: residual <= {DEFAULT_TOLERANCE:g}·(fy/m + PGA); sub-steps as for the elastic table",
    }


def _yielding_summary(oscillators: list[Oscillator], results: list[InelasticResponse], out: OutputUnits) -> dict[str, Any]:
    worst = int(np.argmax([r.ductility for r in results]))
    return {
        "largest_ductility": results[worst].ductility,
        "largest_ductility_label": oscillators[worst].label,
        "largest_ductility_period": float(oscillators[worst].period),
        "largest_ductility_reduction_factor": float(oscillators[worst].reduction_factor or 0.0),
        "largest_ductility_peak_displacement": out.length_from_si(results[worst].peak_displacement),
    }


def _headline(
    record: Record, spectrum: ElasticSpectrum, out: OutputUnits, content: dict[str, dict[str, Any]],
    verification: tuple[float, float, float, float],
) -> dict[str, Any]:
    """The few numbers the command line prints after writing the workbook."""
    best = int(np.argmax(spectrum.psa.max(axis=0)))
    row = int(np.argmax(spectrum.psa[:, best]))
    headline = {
        "pga": out.acceleration_from_si(record.pga),
        "unit": out.acceleration,
        "peak_psa": float(out.acceleration_from_si(spectrum.psa[row, best])),
        "peak_psa_period": float(spectrum.periods[best]),
        "peak_psa_damping": float(spectrum.dampings[row]),
        "verification_period": verification[0],
        "verification_damping": verification[1],
        "significant_duration": content["record_summary"]["significant_duration"],
    }
    if "yielding_summary" in content:
        worst = content["yielding_summary"]
        headline.update(
            largest_ductility=worst["largest_ductility"],
            largest_ductility_label=worst["largest_ductility_label"],
            largest_ductility_reduction_factor=worst["largest_ductility_reduction_factor"],
        )
    return headline


def spectrum_table(spectrum: ElasticSpectrum, out: OutputUnits) -> dict[str, Any]:
    """Spectra as plain lists in the output units `out`: SD in its length unit, PSV in that per
    second, PSA and SA in its acceleration unit (``units`` names them)."""
    return {
        "periods": spectrum.periods.tolist(),
        "dampings": [float(d) for d in spectrum.dampings],
        "sd": np.asarray(out.length_from_si(spectrum.sd)).tolist(),
        "psv": np.asarray(out.velocity_from_si(spectrum.psv)).tolist(),
        "psa": np.asarray(out.acceleration_from_si(spectrum.psa)).tolist(),
        "sa": np.asarray(out.acceleration_from_si(spectrum.sa)).tolist(),
        "units": {"sd": out.length, "psv": out.velocity, "psa": out.acceleration, "sa": out.acceleration},
    }


def stored_record(record: Record) -> Record:
    """The record exactly as a workbook cell stores it: 15 significant digits.

    Spreadsheets keep 15 significant digits of a cell's number (Excel and
    LibreOffice Calc write no more when they save), and a sample in the
    record's unit may need 17; the record is rounded to 15 digits (in its own
    unit, negative zeros made positive) until that no longer changes it, so
    the Record sheet, the results computed here and the SHA-256 on the Audit
    sheet (also over 15 digits) describe the same samples, before and after
    another spreadsheet saves the file. A record read from text with at
    most 15 digits is returned as is.
    """
    current = record
    for _ in range(6):  # 2-3 rounds suffice in practice
        # + 0.0 turns -0.0 (written "-0", read back as 0) into 0.0
        written = [float(f"{value:.15g}") + 0.0 for value in current.accel_in(current.unit)]
        candidate = Record(np.asarray(written), record.dt, record.unit, name=record.name, header=record.header,
                           history=record.history)  # fmt: skip
        if candidate.accel.tobytes() == current.accel.tobytes():
            return current
        current = candidate
    raise RuntimeError("the record's samples do not settle when rounded to 15 digits")


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
    if oscillator.reduction_factor is None:
        return None
    return check_positive(oscillator.reduction_factor, f"oscillator {oscillator.label!r}: reduction factor R")


def _ductility_spectrum(record: Record, settings: ReportSettings, method: Method):
    """The Ductility sheet's constant-ductility spectrum, or None when no targets or periods are given."""
    if not settings.ductilities or not settings.yield_periods:
        return None
    return ductility_spectrum(
        record, settings.yield_periods, settings.ductilities, settings.yield_damping, yielding_method(method),
        hardening=settings.hardening, max_step_ratio=yielding_step_ratio(settings.max_step_ratio),
    )  # fmt: skip


def _ductility_blocks(spectrum, settings: ReportSettings, method: Method) -> dict[str, dict[str, Any]]:
    table: dict[str, Any] = {"period": spectrum.periods.tolist()}
    for i in range(spectrum.ductilities.size):
        table[f"cy_{i}"] = spectrum.yield_coefficient[i].tolist()
        table[f"r_{i}"] = spectrum.reduction_factor[i].tolist()
    return {
        "ductility_settings": {
            "ductilities": ", ".join(repr(float(d)) for d in spectrum.ductilities),
            "yield_damping": float(spectrum.damping),
            "ductility_method": _yielding_text(settings.hardening, method),
        },
        "ductility_table": table,
    }


def yielding_step_ratio(ratio: float | None) -> float | None:
    """Largest Δt/T of the yielding oscillators: the workbook's ratio, at most `DEFAULT_YIELDING_STEP_RATIO`.

    A yielding oscillator needs a finer step than an elastic one for 1 %
    accuracy (``groundstep.core.defaults``); None (sub-stepping off) stays off.
    """
    return None if ratio is None else min(float(ratio), DEFAULT_YIELDING_STEP_RATIO)


def _yielding_responses(record: Record, settings: ReportSettings, method: Method):
    """The oscillators that carry R, and their ``inelastic_response`` results."""
    check_hardening(settings.hardening, "hardening (post-yield stiffness ratio α)")
    used = yielding_method(method)
    chosen = [o for o in settings.oscillators if _reduction_factor(o) is not None]
    results = []
    for o in chosen:
        # R divides the elastic force the Peaks sheet shows (the workbook's step ratio); the yielding
        # oscillator itself steps at the finer yielding ratio for 1 % accuracy
        elastic = linear_response(record, o.period, o.damping, used, max_step_ratio=settings.max_step_ratio)
        coefficient = elastic.pseudo_acceleration / float(o.reduction_factor or 1.0) / STANDARD_GRAVITY
        results.append(inelastic_response(
            record, o.period, o.damping, method=used, yield_coefficient=coefficient,
            hardening=settings.hardening, max_step_ratio=yielding_step_ratio(settings.max_step_ratio),
        ))  # fmt: skip
    return chosen, results


def _yielding_text(hardening: float, method: Method) -> str:
    """One line naming the hysteresis and the integration method of the yielding table."""
    used = yielding_method(method)
    spring = "bilinear, elastoplastic (hardening α = 0)" if hardening == 0.0 else (
        f"bilinear, kinematic hardening α = {hardening:g}"
    )
    text = (
        f"{spring}; {used.describe()}, Newton-Raphson iterations on the residual force each step; "
        f"h/T <= {DEFAULT_YIELDING_STEP_RATIO:g} (1 % accuracy)"
    )
    if not (method.is_newmark and method.beta > 0.0):
        text += f" (the workbook's {method.name} method has no yielding form)"
    return text


def _yielding_table(oscillators, results, out: OutputUnits, hardening: float, method: Method) -> dict[str, list[Any]]:
    text = _yielding_text(hardening, method)
    return {
        "label": [o.label for o in oscillators],
        "period": [float(o.period) for o in oscillators],
        "damping": [float(o.damping) for o in oscillators],
        "reduction_factor": [float(o.reduction_factor) for o in oscillators],
        "yield_coefficient": [r.yield_coefficient for r in results],
        "yield_displacement": [out.length_from_si(r.yield_displacement) for r in results],
        "peak_displacement": [out.length_from_si(r.peak_displacement) for r in results],
        "ductility": [r.ductility for r in results],
        "residual_displacement": [out.length_from_si(r.residual_displacement) for r in results],
        "yield_excursions": [r.yield_excursions for r in results],
        "hysteretic_share": [r.hysteretic_energy / r.input_energy if r.input_energy > 0.0 else 0.0 for r in results],
        "energy_balance_error": [r.energy_balance_error for r in results],
        "method": [text] * len(results),
    }


def _library_versions() -> str:
    import numba
    import openpyxl

    scipy = importlib.metadata.version("scipy")  # its installed version, without importing scipy for it
    return f"{np.__version__} / {scipy} / {numba.__version__} / {openpyxl.__version__}"
