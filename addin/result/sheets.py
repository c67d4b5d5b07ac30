"""The result workbook itself: its sheets, blocks, names and charts, described with ``layout.py``.

`result_layout` returns the description for given sizes and units; the
content (``content.py``) fills it, the writers (``offline.py``, ``live.py``)
and ``verify.py`` walk it.
"""

from __future__ import annotations

from groundstep.addin.common import CAUTION

from .layout import (
    FIXED3,
    FIXED4,
    GENERAL,
    INTEGER,
    SCIENTIFIC,
    TEXT,
    Chart,
    Column,
    Field,
    Fields,
    FormulaColumn,
    FormulaTable,
    Sheet,
    Table,
    WorkbookLayout,
)

__all__ = [
    "AUDIT",
    "BUILD_UP_ROWS",
    "DUCTILITY",
    "EXACT_TOLERANCE",
    "CHART_POINTS",
    "MEASURES",
    "MEASURE_FIELDS",
    "PEAKS",
    "RECORD",
    "RECORD_FIRST_ROW",
    "SPECTRA",
    "SUMMARY",
    "VERIFICATION",
    "VERIFY_TOLERANCE",
    "VERIFY_WINDOW",
    "YIELDING_TITLE",
    "damping_label",
    "picks_count",
    "picks_stride",
    "picks_text",
    "result_layout",
    "sample_picks",
]


SUMMARY, RECORD, SPECTRA, PEAKS, VERIFICATION, AUDIT = "Summary", "Record", "Spectra", "Peaks", "Verification", "Audit"
MEASURES = "Measures"
#: Most points a Fourier amplitude chart series holds: a longer spectrum is charted at
#: log-spaced picks of its table (the table keeps every frequency). A choice of ours: enough to
#: draw the curve on a log axis, few enough for spreadsheets to redraw quickly.
CHART_POINTS = 2000
#: The ground-motion measures of the Measures sheet, in order: (key of
#: ``groundstep.core.GroundMotionMeasures``, label, kind of unit, number format, definition and source).
#: Kind "instant" is a time of occurrence [s] (shifted with the time axis), "time" a duration or period [s].
MEASURE_FIELDS: tuple[tuple[str, str, str, str, str], ...] = (
    ("pga", "Peak ground acceleration PGA", "acceleration", SCIENTIFIC, "largest |a| at the samples"),
    ("pga_time", "  at time", "instant", FIXED3, "first sample where it occurs"),
    ("pgv", "Peak ground velocity PGV", "velocity", SCIENTIFIC,
     "velocity by the trapezoidal rule, exact for a(t) linear between samples, from rest"),
    ("pgv_time", "  at time", "instant", FIXED3, "first sample where it occurs"),
    ("pgd", "Peak ground displacement PGD", "length", SCIENTIFIC,
     "exact displacement of a(t) linear between samples, from rest"),
    ("pgd_time", "  at time", "instant", FIXED3, "first sample where it occurs"),
    ("arias_intensity", "Arias intensity I_A", "arias", SCIENTIFIC,
     "Arias (1970), in Seismic Design for Nuclear Power Plants, MIT Press: I_A = π/(2g)·∫a² dt"),
    ("d5_75", "Significant duration D5-75", "time", FIXED3,
     "Trifunac & Brady (1975), BSSA 65(3):581-626: 5 % to 75 % of I_A"),
    ("d5_75_start", "  from", "instant", FIXED3, "time of 5 % of I_A"),
    ("d5_75_end", "  to", "instant", FIXED3, "time of 75 % of I_A"),
    ("d5_95", "Significant duration D5-95", "time", FIXED3,
     "Trifunac & Brady (1975), BSSA 65(3):581-626: 5 % to 95 % of I_A"),
    ("d5_95_start", "  from", "instant", FIXED3, "time of 5 % of I_A"),
    ("d5_95_end", "  to", "instant", FIXED3, "time of 95 % of I_A"),
    ("cav", "Cumulative absolute velocity CAV", "velocity", SCIENTIFIC,
     "EPRI (1988) NP-5930: ∫|a| dt over the whole record (no threshold, no windows)"),
    ("bracketed_duration", "Bracketed duration", "time", FIXED3,
     "Bolt (1973), 5th World Conf. Earthquake Eng.: first to last |a| above the threshold"),
    ("bracketed_start", "  from", "instant", FIXED3, "first crossing of the threshold"),
    ("bracketed_end", "  to", "instant", FIXED3, "last crossing of the threshold"),
    ("bracket_threshold", "  threshold", "acceleration", SCIENTIFIC, "0.05 g, common practice"),
    ("mean_period", "Mean period Tm", "time", FIXED4,
     "Rathje, Abrahamson & Bray (1998), J. Geotech. Geoenviron. Eng. 124(2): FFT amplitudes, 0.25-20 Hz"),
    ("spectrum_intensity", "Spectrum intensity SI", "length", SCIENTIFIC,
     "Housner (1952), EERI symposium: ∫PSV dT from 0.1 s to 2.5 s at 5 % damping"),
    ("predominant_period", "Predominant period Tp", "time", FIXED4,
     "period of the largest 5 %-damped PSA among 160 periods, 0.02-5 s"),
)  # fmt: skip
#: Most rows of the build-up tables (the Record sheet's velocity and displacement, the Measures
#: sheet's Arias intensity): a longer record is listed at every k-th sample and the last, the
#: acceleration itself at every sample. A choice of ours: 4,000 points draw a smooth curve, and the
#: 40,000-sample workbook stays near 1 MB (those columns would be 60 % of it at every sample).
BUILD_UP_ROWS = 4001
#: The sheet of the constant-ductility spectrum (present when targets and periods are given).
DUCTILITY = "Ductility"
#: First data row of the Record table; the Verification steps start on the same row.
RECORD_FIRST_ROW = 9
#: Title of the Peaks sheet's table of yielding oscillators.
YIELDING_TITLE = "Yielding oscillators (bilinear hysteresis; strength fy = F_el / R)"
#: Relative tolerance of the Verification sheet: the same recurrence evaluated in another
#: order of floating-point operations; 2000 steps of a damped oscillator lose far fewer digits.
VERIFY_TOLERANCE = 1e-9
#: Samples the Verification sheet replays: the whole record up to this length (20 s at
#: 0.01 s, the demo record, is replayed whole), beyond it a window of this many samples
#: around the peaks, started from groundstep's state at its first sample (stated on the
#: sheet; ``verify`` recomputes it). About 2,000 formula rows keep a long record's workbook
#: small and quick to write, and a reviewer can still follow every row.
VERIFY_WINDOW = 2001
#: Relative difference of a spectrum's PSA from the exact piecewise-linear solution
#: (Nigam & Jennings 1969) above which the Spectra sheet flags the ordinate: the 1 %
#: the yielding results are held to (``core.defaults.DEFAULT_YIELDING_STEP_RATIO``).
EXACT_TOLERANCE = 0.01


def damping_label(damping: float) -> str:
    """Text for one damping ratio in headers and series titles."""
    return f"ζ = {damping:g}"


def result_layout(
    n_samples: int,
    n_periods: int,
    dampings: tuple[float, ...],
    n_oscillators: int,
    unit: str,
    length_unit: str,
    n_yielding: int = 0,
    *,
    n_raw: int = 0,
    n_frequencies: int = 0,
    n_chart_frequencies: int = 0,
    n_steps: int = 0,
    n_findings: int = 1,
    n_rigid: int = 0,
    ductilities: tuple[float, ...] = (),
    n_ductility_periods: int = 0,
    verification_window: tuple[int, int] | None = None,
    target_label: str = "",
    n_target_points: int = 0,
) -> WorkbookLayout:
    """The result workbook's layout for the given sizes and units.

    Parameters
    ----------
    n_samples, n_periods, n_oscillators : int
        Record samples, spectrum periods and Peaks oscillators.
    dampings : tuple of float
        Spectrum dampings (one column group and one chart series each).
    unit, length_unit : str
        Acceleration unit of the record and the matching length unit, shown
        in headers.
    n_yielding : int, default 0
        Oscillators that carry a strength reduction factor R: rows of the
        yielding table on the Peaks sheet (title and header only when 0;
        the Summary's yielding block appears only when > 0).
    n_raw : int, default 0
        Samples of the record as read when it was processed (its own table,
        charts and measures appear beside the processed ones); 0 without
        processing.
    n_frequencies, n_chart_frequencies : int, default 0
        Rows of the Measures sheet's Fourier table (non-zero FFT
        frequencies) and of its chart table (at most `CHART_POINTS`).
    n_steps : int, default 0
        Processing steps listed on the Audit sheet.
    ductilities, n_ductility_periods : tuple of float, int
        Targets and periods of the Ductility sheet's constant-ductility
        spectrum; the sheet is left out when either is empty.
    n_rigid : int, default 0
        Leading spectrum periods equal to 0 (rigid: PSA = PGA): kept in the
        table, left out of the charts (a logarithmic axis cannot show 0).
    target_label : str, default ""
        The document of a design (or target) spectrum (e.g. ``"ASCE/SEI
        7-16"``): a target Sa column ends the Spectra table, the PSA chart
        gets its series and the Audit sheet its block; "" for none.
    n_target_points : int, default 0
        Points of a user-defined target table, listed on the Audit sheet.
    n_findings : int, default 1
        Rows of the Summary's plausibility notes (``core.plausibility``; one
        row saying "none" when there is nothing to note).
    verification_window : (int, int), optional
        (first step, steps) the Verification sheet replays, steps counted
        from 0 at the record's first sample; default the whole record.
    """
    velocity_unit = f"{length_unit}/s"
    return WorkbookLayout(
        (
            _summary(dampings, unit, length_unit, velocity_unit, n_yielding, n_findings),
            _record(n_samples, unit, length_unit, velocity_unit, n_raw),
            _spectra(n_periods, dampings, unit, length_unit, velocity_unit, n_rigid, target_label),
            _peaks(n_oscillators, unit, length_unit, velocity_unit, n_yielding),
            *((_ductility(ductilities, n_ductility_periods),) if ductilities and n_ductility_periods else ()),
            _measures(n_samples, unit, length_unit, velocity_unit, n_raw > 0, n_frequencies, n_chart_frequencies),
            _verification(n_samples, verification_window or (0, n_samples)),
            _audit(n_steps, target_label, n_target_points),
        )
    )


def _summary(dampings, unit, length_unit, velocity_unit, n_yielding, n_findings) -> Sheet:
    project = Fields(
        "project", "Scenario and project", 4, 1,
        (
            Field("project", "Project"),
            Field("site", "Site"),
            Field("structure", "Structures"),
            Field("engineer", "Prepared by"),
            Field("scenario", "Scenario"),
        ),
    )  # fmt: skip
    review = Fields(
        "review", "Calculation record", 4, 5,
        (Field("project_number", "Project number"), Field("checker", "Checked by"), Field("date", "Date")),
    )  # fmt: skip
    record = Fields(
        "record_summary", "Record", 11, 1,
        (
            Field("record_name", "Record"),
            Field("samples", "Samples", "", INTEGER),
            Field("duration", "Duration", "s", FIXED3),
            Field("pga", "Peak ground acceleration", unit, SCIENTIFIC),
            Field("pgv", "Peak ground velocity", velocity_unit, SCIENTIFIC),
            Field("pgd", "Peak ground displacement", length_unit, SCIENTIFIC),
            Field("arias", "Arias intensity (Arias 1970)", "m/s", SCIENTIFIC),
            Field("significant_duration", "Significant duration 5-95 % (Trifunac & Brady 1975)", "s", FIXED3),
        ),
        checked=True,
    )  # fmt: skip
    key = Table(
        "key_results", "Key results per damping", 21, 1,
        (
            Column("damping", "Damping ratio", "", FIXED4),
            Column("peak_psa", "Largest PSA", unit, SCIENTIFIC),
            Column("peak_psa_period", "at period", "s", FIXED4),
            Column("peak_sd", "Largest SD", length_unit, SCIENTIFIC),
            Column("peak_sd_period", "at period", "s", FIXED4),
        ),
        len(dampings),
        checked=True,
    )  # fmt: skip
    check = Fields(
        "check", "Check", 24 + len(dampings), 1,
        (Field("check_status", "Verification sheet (formulas replaying the recurrence)"),),
        formulas=(("check_status", f"={VERIFICATION}!{{verification_overall}}"),),
    )  # fmt: skip
    blocks: tuple[Fields | Table | FormulaTable, ...] = (project, review, record, key, check)
    if n_yielding:
        yielding = Fields(
            "yielding_summary", f"Yielding oscillators ({PEAKS} sheet)", 27 + len(dampings), 1,
            (
                Field("largest_ductility", "Largest ductility demand μ = max|u| / u_y", "-", FIXED3),
                Field("largest_ductility_label", "Oscillator"),
                Field("largest_ductility_period", "Period", "s", FIXED4),
                Field("largest_ductility_reduction_factor", "Strength reduction factor R", "-", FIXED3),
                Field("largest_ductility_peak_displacement", "Peak displacement", length_unit, SCIENTIFIC),
            ),
            checked=True,
        )  # fmt: skip
        blocks += (yielding,)
    findings = Table(
        "findings", "Plausibility notes (warnings, not errors; groundstep.core.plausibility)",
        27 + len(dampings) + (7 if n_yielding else 0), 1,
        (Column("check", "Check", "", TEXT, 22.0), Column("finding", "Note", "", TEXT, 100.0)),
        max(n_findings, 1),
        checked=True,
    )  # fmt: skip
    blocks += (findings,)
    return Sheet(SUMMARY, "groundstep result workbook", blocks, note=CAUTION)


def _record(n_samples, unit, length_unit, velocity_unit, n_raw) -> Sheet:
    fields = Fields(
        "record", "Ground acceleration record", 3, 1,
        (
            Field("record_unit", "Acceleration unit", "", TEXT),
            Field("dt", "Time step", "s", GENERAL),
            Field("unit_factor", "Unit to m/s² factor", "m/s² per unit", GENERAL),
        ),
    )  # fmt: skip

    def samples(key: str, title: str, column: int, rows: int, checked: bool) -> Table:
        return Table(key, title, RECORD_FIRST_ROW - 2, column,
                     (Column("time", "Time", "s", FIXED3, 10.0), Column("accel", "Acceleration", unit, GENERAL, 16.0)),
                     rows, checked=checked)  # fmt: skip

    def motion(key: str, column: int, rows: int, what: str) -> Table:
        return Table(key, f"Ground velocity and displacement{what}: {picks_text(rows)}", RECORD_FIRST_ROW - 2, column,
                     (Column("time", "Time", "s", FIXED3, 10.0),
                      Column("velocity", "Velocity", velocity_unit, SCIENTIFIC, 14.0),
                      Column("displacement", "Displacement", length_unit, SCIENTIFIC, 14.0)),
                     picks_count(rows), checked=True)  # fmt: skip

    processed = n_raw > 0
    title = "Processed samples (every result is computed from these)" if processed else "Samples"
    blocks: tuple[Fields | Table | FormulaTable, ...] = (
        fields, samples("record_table", title, 1, n_samples, True), motion("motion_table", 4, n_samples, ""),
    )  # fmt: skip
    prefix = "Processed ground" if processed else "Ground"
    charts = _record_charts("record_table", "motion_table", prefix, 16 if processed else 8,
                            unit, length_unit, velocity_unit)  # fmt: skip
    note = f"Velocity and displacement: {picks_text(n_samples)} (the acceleration at every sample in columns A:B)."
    if processed:
        blocks += (
            samples("raw_table", "Record as read (before processing; verify replays the processing from it)", 8,
                    n_raw, False),
            motion("raw_motion_table", 11, n_raw, " as read"),
        )  # fmt: skip
        charts += _record_charts("raw_table", "raw_motion_table", "As read: ground", 26, unit, length_unit,
                                 velocity_unit)  # fmt: skip
        note = ("Processed as listed on the Audit sheet. A band-pass record keeps its zero pads (Boore 2005): "
                "times count from the first sample as read, so the front pad has negative times. "
                f"Velocity and displacement: {picks_text(n_samples)} of the processed record, "
                f"{picks_text(n_raw)} as read (the acceleration at every sample in columns A:B and H:I).")  # fmt: skip
    return Sheet(RECORD, "Ground acceleration record", blocks, charts, note=note)


def picks_stride(n_samples: int) -> int:
    """k of the build-up tables: every k-th sample (and the last), so they hold at most `BUILD_UP_ROWS` rows."""
    return max(1, -(-(n_samples - 1) // (BUILD_UP_ROWS - 1))) if n_samples > BUILD_UP_ROWS else 1


def sample_picks(n_samples: int) -> list[int]:
    """The samples (0-based) a build-up table lists: 0, k, 2k, ... and the last one."""
    stride = picks_stride(n_samples)
    picks = list(range(0, n_samples, stride))
    if picks and picks[-1] != n_samples - 1:
        picks.append(n_samples - 1)
    return picks


def picks_count(n_samples: int) -> int:
    """Rows of a build-up table of a record of `n_samples` samples."""
    return len(sample_picks(n_samples))


def picks_text(n_samples: int) -> str:
    """What a build-up table lists, for its title and the sheet's note."""
    stride = picks_stride(n_samples)
    if stride == 1:
        return "every sample"
    suffix = "th" if 10 <= stride % 100 <= 20 else {1: "st", 2: "nd", 3: "rd"}.get(stride % 10, "th")
    return f"every {stride}{suffix} sample and the last ({picks_count(n_samples):,} of {n_samples:,})"


def _record_charts(table: str, motion: str, prefix: str, column: int, unit, length_unit, velocity_unit) -> tuple[Chart, ...]:
    """Acceleration (every sample), velocity and displacement (the build-up table) against time, stacked in `column`."""
    quantities = ((table, "accel", "acceleration", unit), (motion, "velocity", "velocity", velocity_unit),
                  (motion, "displacement", "displacement", length_unit))  # fmt: skip
    return tuple(
        Chart(
            f"{source}_{key}_chart", f"{prefix} {name}", source, "time", ((key, name),),
            "Time [s]", f"{name.capitalize()} [{axis}]", 3 + 19 * index, column,
        )
        for index, (source, key, name, axis) in enumerate(quantities)
    )  # fmt: skip


def _measures(n_samples, unit, length_unit, velocity_unit, processed, n_frequencies, n_chart_frequencies) -> Sheet:
    units = {"acceleration": unit, "velocity": velocity_unit, "length": length_unit, "time": "s", "instant": "s",
             "arias": "m/s"}  # fmt: skip

    def fields(prefix: str, with_source: bool) -> tuple[Field, ...]:
        return tuple(
            Field(f"{prefix}{key}", label, units[kind], number_format, source if with_source else "")
            for key, label, kind, number_format, source in MEASURE_FIELDS
        )

    title = "Ground-motion measures" + (" of the processed record" if processed else "")
    measures: tuple[Fields | Table | FormulaTable, ...] = (
        Fields("measures", title, 3, 1, fields("measure_", True), checked=True),
    )
    if processed:
        measures += (Fields("raw_measures", "Of the record as read (before processing)", 3, 6,
                            fields("raw_measure_", False), checked=True),)  # fmt: skip
    top = 5 + len(MEASURE_FIELDS) + 2
    tables: tuple[Fields | Table | FormulaTable, ...] = (
        Table(
            "arias_table", f"Arias intensity build-up (Arias 1970): {picks_text(n_samples)}", top, 1,
            (
                Column("time", "Time", "s", FIXED3, 10.0),
                Column("build_up", "I_A(t) / I_A", "-", FIXED4, 14.0),
                Column("within_d5_95", "Within D5-95 (blank outside)", "-", FIXED4, 14.0),
            ),
            picks_count(n_samples), checked=True,
        ),
        Table(
            "fourier_table", "Fourier amplitude |A(f)| = |FFT|·dt (no smoothing; f = 0 left out)", top, 5,
            (Column("frequency", "Frequency", "Hz", SCIENTIFIC, 14.0),
             Column("amplitude", "Fourier amplitude", velocity_unit, SCIENTIFIC, 16.0)),
            n_frequencies, checked=True,
        ),
        Table(
            "fourier_chart_table",
            f"Chart points: every frequency up to {CHART_POINTS}, else log-spaced picks of the table at left",
            top, 8,
            (Column("frequency", "Frequency", "Hz", SCIENTIFIC, 14.0),
             Column("amplitude", "Fourier amplitude", velocity_unit, SCIENTIFIC, 16.0)),
            n_chart_frequencies, checked=True,
        ),
    )  # fmt: skip
    blocks = tables + measures  # the fields come last so that their label column keeps its width
    right = 11
    charts = (
        Chart(
            "arias_chart", "Arias intensity build-up, D5-95 marked", "arias_table", "time",
            (("build_up", "I_A(t) / I_A"), ("within_d5_95", "D5-95 interval")),
            "Time [s]", "I_A(t) / I_A [-]", 3, right,
        ),
        Chart(
            "fourier_chart", "Fourier amplitude", "fourier_chart_table", "frequency",
            (("amplitude", "|A(f)|"),),
            "Frequency [Hz] (logarithmic)", f"Fourier amplitude [{velocity_unit}] (logarithmic)", 22, right,
            log_x=True, log_y=True,
        ),
    )  # fmt: skip
    note = ("Times count from the first sample as read (the front pad of a filtered record has negative times). "
            f"Velocities and lengths in {velocity_unit} and {length_unit}, matching the record's unit; "
            "Arias intensity in m/s.")  # fmt: skip
    return Sheet(MEASURES, "Ground-motion measures", blocks, charts, note=note)


def _spectra(n_periods, dampings, unit, length_unit, velocity_unit, n_rigid=0, target_label="") -> Sheet:
    columns = [Column("period", "Period", "s", FIXED4, 10.0)]
    for index, damping in enumerate(dampings):
        label = damping_label(damping)
        columns += [
            Column(f"sd_{index}", f"SD {label}", length_unit, SCIENTIFIC, 17.0),
            Column(f"psv_{index}", f"PSV {label}", velocity_unit, SCIENTIFIC, 17.0),
            Column(f"psa_{index}", f"PSA {label}", unit, SCIENTIFIC, 17.0),
            Column(f"sa_{index}", f"SA {label}", unit, SCIENTIFIC, 17.0),
            Column(f"exact_{index}", f"PSA vs exact (Nigam & Jennings 1969) {label}", "-", SCIENTIFIC, 17.0),
            Column(f"exact_flag_{index}", f"Above {EXACT_TOLERANCE:.0%}?", "", TEXT, 10.0),
        ]
    target = ((("target", f"Target: {target_label}"),) if target_label else ())
    if target_label:  # last, so the damping columns keep their places
        columns.append(Column("target", f"Target Sa, {target_label} ({AUDIT} sheet)", unit, SCIENTIFIC, 17.0))
    table = Table("spectra_table", "Elastic response spectra", 3, 1, tuple(columns), n_periods, checked=True)
    right = len(columns) + 2
    charts = tuple(
        Chart(
            f"{quantity}_chart", title, "spectra_table", "period",
            tuple((f"{quantity}_{i}", damping_label(d)) for i, d in enumerate(dampings))
            + (target if quantity == "psa" else ()),
            "Period [s] (logarithmic)", axis, 3 + offset, right, log_x=True, skip_rows=n_rigid,
        )
        for quantity, title, axis, offset in (
            ("psa", "Pseudo-spectral acceleration", f"PSA [{unit}]", 0),
            ("sd", "Spectral displacement", f"SD [{length_unit}]", 19),
        )
    )  # fmt: skip
    return Sheet(SPECTRA, "Elastic response spectra", (table,), charts)


def _ductility(ductilities, n_periods) -> Sheet:
    settings = Fields(
        "ductility_settings", "Constant-ductility spectrum (the template's Yielding sheet)", 3, 1,
        (
            Field("ductilities", "Target ductilities μ", "", TEXT),
            Field("yield_damping", "Damping ratio ζ", "", FIXED4),
            Field("ductility_method", "Hysteresis and method", "", TEXT),
        ),
    )  # fmt: skip
    columns = [Column("period", "Period", "s", FIXED4, 10.0)]
    for index, target in enumerate(ductilities):
        columns += [
            Column(f"cy_{index}", f"Yield coefficient Cy, μ = {target:g}", "-", SCIENTIFIC, 16.0),
            Column(f"r_{index}", f"Reduction factor R, μ = {target:g}", "-", SCIENTIFIC, 16.0),
        ]
    table = Table(
        "ductility_table", "Largest strength reaching each target ductility (Cy = fy / (m·g), R = F_el / fy)",
        8, 1, tuple(columns), n_periods, checked=True,
    )  # fmt: skip
    return Sheet(DUCTILITY, "Constant-ductility spectrum", (settings, table))


def _peaks(n_oscillators, unit, length_unit, velocity_unit, n_yielding) -> Sheet:
    table = Table(
        "peaks_table", "Peak response of the oscillators", 3, 1,
        (
            Column("label", "Oscillator", "", GENERAL, 22.0),
            Column("period", "Period", "s", FIXED4),
            Column("damping", "Damping ratio", "", FIXED4),
            Column("sd", "SD", length_unit, SCIENTIFIC),
            Column("sv", "SV", velocity_unit, SCIENTIFIC),
            Column("sa", "SA", unit, SCIENTIFIC),
            Column("psv", "PSV", velocity_unit, SCIENTIFIC),
            Column("psa", "PSA", unit, SCIENTIFIC),
            Column("time_sd", "Time of SD", "s", FIXED3),
            Column("time_sa", "Time of SA", "s", FIXED3),
            Column("substeps", "Sub-steps per step", "", INTEGER),
            Column("reduction_factor", "Reduction factor R (blank: elastic only)", "", FIXED3, 16.0),
        ),
        n_oscillators,
        checked=True,
    )  # fmt: skip
    title = YIELDING_TITLE if n_yielding else f"{YIELDING_TITLE}: none (no oscillator has a reduction factor R)"
    yielding = Table(
        "yielding_table", title, n_oscillators + 6, 1,
        (
            Column("label", "Oscillator", "", GENERAL, 22.0),
            Column("period", "Period", "s", FIXED4),
            Column("damping", "Damping ratio", "", FIXED4),
            Column("reduction_factor", "Reduction factor R = F_el / fy", "", FIXED3),
            Column("yield_coefficient", "Yield coefficient fy / (m·g)", "", FIXED4),
            Column("yield_displacement", "Yield displacement u_y", length_unit, SCIENTIFIC),
            Column("peak_displacement", "Peak displacement max|u|", length_unit, SCIENTIFIC),
            Column("ductility", "Ductility demand μ", "", FIXED3),
            Column("residual_displacement", "Residual displacement", length_unit, SCIENTIFIC),
            Column("yield_excursions", "Yield excursions", "", INTEGER),
            Column("hysteretic_share", "Hysteretic energy share E_H / E_I", "", FIXED4),
            Column("energy_balance_error", "Energy-balance error", "", SCIENTIFIC, 16.0),
            Column("method", "Hysteresis and method", "", TEXT, 60.0),
        ),
        n_yielding,
        checked=True,
    )  # fmt: skip
    return Sheet(PEAKS, "Peak response of the oscillators", (table, yielding))


def _verification(n_samples: int, window: tuple[int, int]) -> Sheet:
    inputs = Fields(
        "verification_inputs", "Oscillator (input cells)", 3, 1,
        (
            Field("verification_period", "Period T", "s", FIXED4),
            Field("verification_damping", "Damping ratio ζ", "", FIXED4),
            Field("verification_beta", "Newmark β", "", GENERAL),
            Field("verification_gamma", "Newmark γ", "", GENERAL),
            Field("verification_dt", "Time step h (from the Record sheet)", "s", GENERAL),
            Field("verification_factor", "Unit to m/s² (from the Record sheet)", "", GENERAL),
            Field("verification_tolerance", "Relative tolerance of the check", "", GENERAL),
        ),
        formulas=(
            ("verification_dt", f"={RECORD}!{{dt}}"),
            ("verification_factor", f"={RECORD}!{{unit_factor}}"),
        ),
        checked=True,  # a changed β, γ, tolerance or formula is a mismatch (the period and damping are read back)
    )  # fmt: skip
    constants = Fields(
        "verification_constants", "Newmark constants (Newmark 1959)", 12, 1,
        (
            Field("omega", "ω = 2π/T", "rad/s", GENERAL),
            Field("c", "c = 2ζω (per unit mass)", "1/s", GENERAL),
            Field("k", "k = ω² (per unit mass)", "1/s²", GENERAL),
            Field("denominator", "D = 1 + γhc + βh²k", "", GENERAL),
            Field("step_ratio", "h/T (no sub-steps: ≤ 0.1)", "", FIXED4),
        ),
        formulas=(
            ("omega", "=2*PI()/{verification_period}"),
            ("c", "=2*{verification_damping}*{omega}"),
            ("k", "={omega}^2"),
            ("denominator", "=1+{verification_gamma}*{verification_dt}*{c}"
                            "+{verification_beta}*{verification_dt}^2*{k}"),
            ("step_ratio", "={verification_dt}/{verification_period}"),
        ),
        checked=True,
    )  # fmt: skip
    peak = "=MAX(MAX({{verification_steps.{0}}}),-MIN({{verification_steps.{0}}}))"
    rel = "=ABS({{formula_{0}}}-{{python_{0}}})/MAX(ABS({{python_{0}}}),1E-300)"
    check_fields, check_formulas = [], []
    quantities = (("u", "u", "Peak |u| over the replayed steps", "m"),
                  ("v", "v", "Peak |u̇| over the replayed steps", "m/s"),
                  ("t", "total", "Peak |ü + ü_g| over the replayed steps", "m/s²"))  # fmt: skip
    for quantity, column, label, si_unit in quantities:
        check_fields += [
            Field(f"formula_{quantity}", f"{label} by formula", si_unit, SCIENTIFIC),
            Field(f"python_{quantity}", f"{label} by groundstep", si_unit, SCIENTIFIC),
            Field(f"rel_{quantity}", "relative difference", "", SCIENTIFIC),
        ]
        check_formulas += [(f"formula_{quantity}", peak.format(column)), (f"rel_{quantity}", rel.format(quantity))]
    check_fields.append(Field("verification_overall", "All within the tolerance"))
    within = ",".join(f"{{rel_{q}}}<={{verification_tolerance}}" for q in "uvt")
    check_formulas.append(("verification_overall", f'=IF(AND({within}),"pass","FAIL")'))
    check = Fields(
        "verification_check", "Check", 19, 1, tuple(check_fields), checked=True, formulas=tuple(check_formulas)
    )  # the python_* values are checked by verify; formula cells are not
    start, rows = window
    start_state = Fields(
        "verification_start", "Starting state (by groundstep; verify recomputes it)", 31, 1,
        (
            Field("verification_first_step", "First step replayed (0: the record's first sample, at rest)", "",
                  INTEGER),
            Field("verification_steps_replayed", "Steps replayed", "", INTEGER),
            Field("verification_record_steps", "Steps in the record", "", INTEGER),
            Field("verification_start_u", "u at the first step replayed", "m", GENERAL),
            Field("verification_start_v", "u̇ at the first step replayed", "m/s", GENERAL),
            Field("verification_window", "Record peaks (by groundstep) inside the replayed steps", "", TEXT),
        ),
        checked=True,
    )  # fmt: skip
    a_prev = "{a}{q}"
    predictor_u = "{u}{q}+{verification_dt}*{v}{q}+{verification_dt}^2*(0.5-{verification_beta})*" + a_prev
    predictor_v = "{v}{q}+{verification_dt}*(1-{verification_gamma})*" + a_prev
    steps = FormulaTable(
        "verification_steps", "Every step of the recurrence (SI units; row i uses row i-1)", RECORD_FIRST_ROW - 2, 6,
        (
            FormulaColumn("time", "Time", f"={RECORD}!A{{rr}}", f"={RECORD}!A{{rr}}", "s", FIXED3, 9.0),
            FormulaColumn("ag", "ü_g", f"={RECORD}!B{{rr}}*{{verification_factor}}",
                          f"={RECORD}!B{{rr}}*{{verification_factor}}", "m/s²", SCIENTIFIC),
            FormulaColumn("a", "ü (relative)", "=-{ag}{r}-{c}*{v}{r}-{k}*{u}{r}",
                          "=(-{ag}{r}-{k}*(" + predictor_u + ")-{c}*(" + predictor_v + "))/{denominator}",
                          "m/s²", SCIENTIFIC),
            FormulaColumn("u", "u", "={verification_start_u}",
                          "={u}{q}+{verification_dt}*{v}{q}+{verification_dt}^2*((0.5-{verification_beta})*{a}{q}"
                          "+{verification_beta}*{a}{r})", "m", SCIENTIFIC),
            FormulaColumn("v", "u̇", "={verification_start_v}",
                          "={v}{q}+{verification_dt}*((1-{verification_gamma})*{a}{q}+{verification_gamma}*{a}{r})",
                          "m/s", SCIENTIFIC),
            FormulaColumn("total", "ü + ü_g = -(c·u̇ + k·u)", "=-({c}*{v}{r}+{k}*{u}{r})",
                          "=-({c}*{v}{r}+{k}*{u}{r})", "m/s²", SCIENTIFIC),
        ),
        rows,
        source_sheet=RECORD,
        source="record_table",
        source_start=start,
    )  # fmt: skip
    note = (f"Replays record steps {start}-{start + rows - 1} of 0-{n_samples - 1} (the whole record)"
            if rows == n_samples else
            f"Replays record steps {start}-{start + rows - 1} of 0-{n_samples - 1} (a window of {rows} "
            f"around the peaks), from groundstep's state at step {start} (the Starting state block)")  # fmt: skip
    return Sheet(VERIFICATION, "Verification: one oscillator replayed by formulas",
                 (inputs, constants, check, start_state, steps), note=note)  # fmt: skip


def _audit(n_steps: int, target_label: str = "", n_target_points: int = 0) -> Sheet:
    fields = Fields(
        "audit", "Provenance", 3, 1,
        (
            Field("format", "Workbook format", "", TEXT),
            Field("created", "Created (UTC)", "", TEXT),
            Field("command", "Command line", "", TEXT),
            Field("groundstep_version", "groundstep", "", TEXT),
            Field("python_version", "Python", "", TEXT),
            Field("library_versions", "numpy / scipy / numba / openpyxl", "", TEXT),
            Field("platform", "Platform", "", TEXT),
            Field(
                "record_sha256",
                "Record SHA-256 (samples as read, on the Record sheet, rounded to 15 significant digits as "
                "spreadsheets store them; unit; dt). verify compares numbers to 1e-9 relative",
                "", TEXT,
            ),
            Field("record_source", "Record source", "", TEXT),
            Field("reviewed", "Project number / checked by / date", "", TEXT),
            Field("caution", "Caution", "", TEXT),
        ),
    )  # fmt: skip
    settings = Fields(
        "settings", "Method and settings", 15, 1,
        (
            Field("method", "Method", "", TEXT),
            Field("method_description", "Method description", "", TEXT),
            Field("beta", "β", "", GENERAL),
            Field("gamma", "γ", "", GENERAL),
            Field("max_step_ratio", "Largest h/T before sub-stepping (blank: off)", "", GENERAL),
            Field("dampings", "Spectrum dampings", "", TEXT),
            Field("period_grid", "Spectrum periods", "", TEXT),
            Field("hardening", "Yielding oscillators: post-yield stiffness ratio α (0: elastoplastic)", "", GENERAL),
            Field("yielding_method", "Yielding oscillators: hysteresis and method", "", TEXT),
        ),
    )  # fmt: skip
    title = "Record processing, oldest first (verify replays it)" if n_steps else "Record processing: none"
    processing = Table(
        "processing_table", title, 27, 1, (Column("step", "Step: operation(arguments) [library]", "", TEXT, 46.0),),
        n_steps, checked=True,
    )  # fmt: skip
    blocks: tuple[Fields | Table | FormulaTable, ...] = (fields, settings, processing)
    if target_label:
        blocks += _target_blocks(30 + n_steps, n_target_points)
    return Sheet(AUDIT, "Audit trail", blocks)


def _target_blocks(row: int, n_points: int) -> tuple[Fields | Table, ...]:
    """The Audit sheet's design (target) spectrum below the processing lines; verify rebuilds it from these."""
    fields = Fields(
        "target", "Design (target) spectrum on the Spectra sheet (verify rebuilds it from these cells)", row, 1,
        (
            Field("target_standard", "Standard (groundstep.core.design_spectrum)", "", TEXT),
            Field("target_parameters", "Parameters (accelerations in g, periods in s)", "", TEXT),
            Field("target_description", "Edition, clause and derived values", "", TEXT),
            Field("target_notes", "Notes", "", TEXT),
        ),
        checked=True,
    )  # fmt: skip
    if not n_points:
        return (fields,)
    table = Table(
        "target_input", "User-defined target (log-log interpolation)", row + 7, 1,
        (Column("period", "Period", "s", GENERAL), Column("sa", "Sa", "g", GENERAL)), n_points,
    )  # fmt: skip
    return (fields, table)
