"""The suite workbook: its sheets, blocks, names and chart, described with ``layout.py``.

A suite workbook (``groundstep suite``) holds one sheet of spectra per
record, a Scaling sheet (factors, controlling period, mean/target ratio and
pass/fail per period, the rule and its clause, problems, a chart of the
scaled spectra, their mean and the target) and an Audit sheet (the inputs,
versions and the caution). `suite_layout` returns the description for given
sizes; ``suite_content.py`` fills it; ``offline.py`` writes it and
``suite_verify.py`` recomputes it. Spectral accelerations are in g.
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
    Sheet,
    Table,
    WorkbookLayout,
)

__all__ = ["SCALING", "SUITE_AUDIT", "SUITE_FORMAT_ID", "record_sheet_name", "suite_layout"]

#: Stored on the suite workbook's Audit sheet; ``verify`` dispatches on it.
SUITE_FORMAT_ID = "groundstep-suite-workbook/1"
SCALING, SUITE_AUDIT = "Scaling", "Audit"


def record_sheet_name(index: int) -> str:
    """Sheet of the record at 0-based `index`: ``Record01``, ``Record02``, ... (labels go in the sheet).

    No spaces: the workbook's defined names then need no quoted sheet names.
    """
    return f"Record{index + 1:02d}"


def suite_layout(n_periods: int, n_chart_periods: int, components: tuple[int, ...], n_problems: int,
                 target_rows: int) -> WorkbookLayout:  # fmt: skip
    """The suite workbook's layout.

    Parameters
    ----------
    n_periods : int
        Periods of every spectrum table and of the ratio table.
    n_chart_periods : int
        Periods > 0 (the chart's log axis), rows of the scaled-spectra table.
    components : tuple of int
        1 or 2 for each record, in order.
    n_problems : int
        Rows of the problems table.
    target_rows : int
        Rows of the Audit sheet's target table (a table target; 0 for a standard's spectrum).
    """
    records = tuple(_record_sheet(i, n, n_periods) for i, n in enumerate(components))
    return WorkbookLayout((_scaling(n_periods, n_chart_periods, len(components), n_problems), *records,
                           _audit(len(components), target_rows)))  # fmt: skip


def _scaling(n_periods: int, n_chart: int, n_records: int, n_problems: int) -> Sheet:
    summary = Fields("scaling", "Suite scaling", 4, 1, (
        Field("rule", "Rule"),
        Field("clause", "Rule applied and its source", number_format=TEXT),
        Field("target_description", "Target spectrum", number_format=TEXT),
        Field("spectrum_used", "Record spectra compared with the target", number_format=TEXT),
        Field("records", "Records", number_format=INTEGER),
        Field("fraction", "Required mean / target", number_format=FIXED3),
        Field("range_low", "Period range from", "s", FIXED4),
        Field("range_high", "Period range to", "s", FIXED4),
        Field("controlling_period", "Controlling period", "s", FIXED4, "smallest mean/target relative to what is required"),
        Field("common_factor", "Common factor on top of the record factors", "-", FIXED4),
        Field("lowest_ratio", "Lowest mean / target in the range", "-", FIXED4),
        Field("verdict", "Outcome", number_format=TEXT),
    ), checked=True)  # fmt: skip
    factors = Table("factors_table", "Scale factors", 18, 1, (
        Column("label", "record", width=30.0),
        Column("sheet", "sheet", width=12.0),
        Column("spectrum", "spectrum scaled", width=18.0),
        Column("record_factor", "record factor", "-", FIXED4),
        Column("factor", "scale factor", "-", FIXED4),
    ), n_records, checked=True)  # fmt: skip
    problems_row = 18 + n_records + 3
    problems = Table("problems_table", "Problems (rules not met or not checked)", problems_row, 1,
                     (Column("problem", "problem", width=100.0),), n_problems, checked=True)  # fmt: skip
    ratio_row = problems_row + max(n_problems, 1) + 3
    ratio = Table("ratio_table", "Suite mean of the scaled spectra against the target", ratio_row, 1, (
        Column("period", "T", "s", FIXED4),
        Column("target", "target Sa", "g", SCIENTIFIC),
        Column("mean", "mean of scaled spectra", "g", SCIENTIFIC),
        Column("ratio", "mean / target", "-", FIXED4),
        Column("in_range", "in range"),
        Column("check", "check"),
    ), n_periods, checked=True)  # fmt: skip
    scaled = Table("scaled_table", "Scaled spectra (periods > 0, charted)", ratio_row, 8, (
        Column("period", "T", "s", FIXED4),
        Column("target", "target", "g", SCIENTIFIC),
        Column("mean", "suite mean", "g", SCIENTIFIC),
        *(Column(f"record_{i + 1}", f"record {i + 1} scaled", "g", SCIENTIFIC) for i in range(n_records)),
    ), n_chart, checked=True)  # fmt: skip
    series = (("target", "target"), ("mean", "suite mean"), *((f"record_{i + 1}", f"record {i + 1}") for i in range(n_records)))
    chart = Chart("scaled_chart", "Scaled spectra, their mean and the target", "scaled_table", "period", series,
                  "T [s]", "Sa [g]", 4, 8, log_x=True, log_y=True, width_cm=20.0, height_cm=11.0)  # fmt: skip
    return Sheet(SCALING, "Suite scaling against the target spectrum", (summary, factors, problems, ratio, scaled),
                 (chart,), note=CAUTION)  # fmt: skip


def _record_sheet(index: int, components: int, n_periods: int) -> Sheet:
    key = f"r{index + 1:02d}"
    fields = Fields(f"{key}_record", "Record", 4, 1, (
        Field(f"{key}_label", "Label", number_format=TEXT),
        Field(f"{key}_file_x", "File (first component)", number_format=TEXT),
        Field(f"{key}_file_y", "File (second component)", number_format=TEXT),
        Field(f"{key}_dt", "Time step", "s", GENERAL),
        Field(f"{key}_samples", "Samples", number_format=INTEGER),
        Field(f"{key}_factor", "Scale factor", "-", FIXED4),
    ), checked=True)  # fmt: skip
    if components == 2:
        columns: tuple[Column, ...] = (
            Column("period", "T", "s", FIXED4),
            Column("psa_x", "PSA first component", "g", SCIENTIFIC),
            Column("psa_y", "PSA second component", "g", SCIENTIFIC),
            Column("rotd50", "RotD50", "g", SCIENTIFIC),
            Column("rotd100", "RotD100", "g", SCIENTIFIC),
            Column("geometric_mean", "geometric mean", "g", SCIENTIFIC),
            Column("angle", "direction of RotD100", "degrees", FIXED3),
            Column("used", "spectrum scaled", "g", SCIENTIFIC),
            Column("scaled", "scaled", "g", SCIENTIFIC),
        )
        series: tuple[tuple[str, str], ...] = (("rotd100", "RotD100"), ("rotd50", "RotD50"), ("geometric_mean", "geometric mean"))
    else:
        columns = (
            Column("period", "T", "s", FIXED4),
            Column("psa", "PSA", "g", SCIENTIFIC),
            Column("used", "spectrum scaled", "g", SCIENTIFIC),
            Column("scaled", "scaled", "g", SCIENTIFIC),
        )
        series = (("psa", "PSA"),)
    table = Table(f"{key}_spectra", "Spectra (5 %-damped unless the Audit says otherwise)", 12, 1, columns, n_periods,
                  checked=True)  # fmt: skip
    chart = Chart(f"{key}_chart", "Spectra of the record", table.key, "period", (*series, ("scaled", "scaled")),
                  "T [s]", "Sa [g]", 4, len(columns) + 2)  # fmt: skip
    return Sheet(record_sheet_name(index), "Spectra of one record of the suite", (fields, table), (chart,))


def _audit(n_records: int, target_rows: int) -> Sheet:
    fields = Fields("suite_audit", "Audit", 4, 1, (
        Field("format", "Format", number_format=TEXT),
        Field("created", "Created (UTC)", number_format=TEXT),
        Field("command", "Command", number_format=TEXT),
        Field("groundstep_version", "groundstep version", number_format=TEXT),
        Field("python_version", "Python version", number_format=TEXT),
        Field("library_versions", "numpy / scipy / numba / openpyxl", number_format=TEXT),
        Field("platform", "Platform", number_format=TEXT),
        Field("caution", "Caution", number_format=TEXT),
        Field("presets_note", "About the presets", number_format=TEXT),
    ))  # fmt: skip
    inputs = Fields("suite_inputs", "Inputs (verify recomputes the workbook from these and the record files)", 15, 1, (
        Field("target_standard", "Target: standard", number_format=TEXT),
        Field("target_parameters", "Target: parameters", number_format=TEXT),
        Field("damping", "Damping ratio", "-", GENERAL),
        Field("method", "Integration method", number_format=TEXT),
        Field("spectrum", "Spectrum of two-component records scaled", number_format=TEXT),
        Field("rule_input", "Rule", number_format=TEXT),
        Field("fraction_input", "Fraction (blank: 0.9 or the preset's)", "-", GENERAL),
        Field("range_low_input", "Range from (blank with a preset)", "s", GENERAL),
        Field("range_high_input", "Range to (blank with a preset)", "s", GENERAL),
        Field("preset", "Preset", number_format=TEXT),
        Field("structure_period", "Structure period T", "s", GENERAL),
        Field("factor_limit_low", "Lowest factor accepted (common practice)", "-", GENERAL),
        Field("factor_limit_high", "Highest factor accepted (common practice)", "-", GENERAL),
    ))  # fmt: skip
    records = Table("records_input", "Records", 30, 1, (
        Column("label", "label", width=30.0),
        Column("file_x", "file (first component)", width=50.0),
        Column("file_y", "file (second component)", width=50.0),
        Column("dt", "dt", "s", GENERAL),
        Column("unit", "unit"),
        Column("sha256_x", "SHA-256 of the first component", width=66.0),
        Column("sha256_y", "SHA-256 of the second component", width=66.0),
    ), n_records)  # fmt: skip
    target = Table("target_input", "Target table (a target of your own)", 30 + n_records + 3, 1, (
        Column("period", "T", "s", GENERAL),
        Column("sa", "Sa", "g", GENERAL),
    ), target_rows)  # fmt: skip
    return Sheet(SUITE_AUDIT, "Audit: inputs, versions and caution", (fields, inputs, records, target))
