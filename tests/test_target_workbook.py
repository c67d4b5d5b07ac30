"""Tests of the design (target) spectrum in the result workbook: content, verify, fill and the CLI."""

from __future__ import annotations

import shutil
from pathlib import Path

import numpy as np
import openpyxl
import pytest
from numpy.testing import assert_allclose

from groundstep.addin.cli import main
from groundstep.addin.package.inputs import read_input_workbook
from groundstep.addin.result.content import ReportSettings, build_report
from groundstep.addin.result.offline import write_report
from groundstep.addin.result.verify import verify_workbook
from groundstep.core import Record, design_spectrum

TEMPLATE = Path(__file__).resolve().parents[1] / "workbook_templates" / "groundstep_calculation_package.xlsx"
ASCE7 = (("sds", 1.0), ("sd1", 0.6), ("tl", 8.0))
# one period in each branch of ASCE/SEI 7-16 §11.4.6 (T0 = 0.12 s, TS = 0.6 s, TL = 8 s)
PERIODS = (0.06, 0.3, 1.2, 10.0)


def _record(unit: str = "cm/s2") -> Record:
    """An invented record: a 2 Hz sine burst under a rise-and-decay envelope, 8 s at 0.01 s."""
    t = np.arange(800) * 0.01
    return Record(150.0 * (t / 2.0) * np.exp(1.0 - t / 2.0) * np.sin(2 * np.pi * 2.0 * t), 0.01, unit, name="burst")


def _settings(**changes) -> ReportSettings:
    given = {"periods": PERIODS, "dampings": (0.05,), "target_standard": "ASCE7", "target_parameters": ASCE7}
    return ReportSettings(**{**given, **changes})


def test_target_column_is_the_design_spectrum_in_the_record_unit():
    """The Spectra table's target column is design_spectrum's Sa [g] times g in the record's unit (cm/s2)."""
    report = build_report(_record(), _settings())
    column = np.asarray(report.content["spectra_table"]["target"])
    # hand-worked from ASCE/SEI 7-16 §11.4.6: SDS(0.4 + 0.6 T/T0), SDS, SD1/T, SD1·TL/T² [g]
    by_hand_g = np.array([1.0 * (0.4 + 0.6 * 0.06 / 0.12), 1.0, 0.6 / 1.2, 0.6 * 8.0 / 10.0**2])
    # 1 g = 980.665 cm/s² (standard gravity, CGPM 1901); rtol: float round-off of one product and quotient
    assert_allclose(column, by_hand_g * 980.665, rtol=1e-12)
    core = design_spectrum(PERIODS, "ASCE7", **dict(ASCE7)).sa_in("cm/s2")
    assert_allclose(column, core, rtol=1e-15)  # the same core values, only converted


def test_audit_names_the_edition_and_clause_and_the_chart_has_the_series():
    """The Audit block names ASCE/SEI 7-16 §11.4.6 and the PSA chart gets a target series (SD chart does not)."""
    report = build_report(_record(), _settings())
    assert report.content["target"]["target_description"].startswith("ASCE/SEI 7-16 §11.4.6")
    assert report.content["target"]["target_parameters"] == "sds=1.0, sd1=0.6, tl=8.0"
    charts = {c.key: c for s in report.layout.sheets for c in s.charts}
    assert [key for key, _ in charts["psa_chart"].series][-1] == "target"
    assert "target" not in [key for key, _ in charts["sd_chart"].series]


def test_no_target_leaves_the_workbook_as_before():
    """Without a target there is no target column, no series and no Audit block."""
    report = build_report(_record(), ReportSettings(periods=PERIODS, dampings=(0.05,)))
    assert "target" not in report.content and "target" not in report.content["spectra_table"]
    charts = {c.key: c for s in report.layout.sheets for c in s.charts}
    assert "target" not in [key for key, _ in charts["psa_chart"].series]


def _written(tmp_path, settings: ReportSettings) -> Path:
    path = tmp_path / "result.xlsx"
    write_report(build_report(_record(), settings), path)
    return path


def _edit(path: Path, name: str, value) -> None:
    """Replace the first cell of defined name gs_NAME with `value`."""
    book = openpyxl.load_workbook(path)
    sheet, reference = next(iter(book.defined_names[f"gs_{name}"].destinations))
    sheet_book = book[sheet]
    first = reference.replace("$", "").split(":")[0]
    sheet_book[first] = value
    book.save(path)


def test_verify_passes_with_a_target_and_fails_after_an_edited_target_cell(tmp_path):
    """verify rebuilds the target from the Audit sheet; an edited target Sa cell is a mismatch."""
    path = _written(tmp_path, _settings())
    assert all(check.ok for check in verify_workbook(path))
    _edit(path, "spectra_table_target", 123.0)
    bad = [c for c in verify_workbook(path) if not c.ok]
    assert [c.block for c in bad] == ["spectra_table"]


def test_verify_fails_after_an_edited_target_parameter(tmp_path):
    """An edited parameter on the Audit sheet changes the rebuilt target, so the Spectra table no longer matches."""
    path = _written(tmp_path, _settings())
    _edit(path, "target_parameters", "sds=1.2, sd1=0.6, tl=8.0")
    bad = {c.block for c in verify_workbook(path) if not c.ok}
    assert bad == {"spectra_table", "target"}  # the column and the derived values (T0, TS) of the description


def test_verify_rebuilds_a_user_table_target(tmp_path):
    """A table target is listed on the Audit sheet and rebuilt from it; its column is log-log interpolated."""
    table = (("periods_table", (0.05, 1.0, 20.0)), ("sa_table", (0.4, 0.8, 0.02)))
    path = _written(tmp_path, _settings(target_standard="table", target_parameters=table))
    assert all(check.ok for check in verify_workbook(path))
    book = openpyxl.load_workbook(path)
    sheet, reference = next(iter(book.defined_names["gs_spectra_table_target"].destinations))
    column = [row[0].value for row in book[sheet][reference.replace("$", "")]]
    # log-log straight line between (0.05 s, 0.4 g) and (1 s, 0.8 g): Sa = 0.4·(T/0.05)^(ln 2 / ln 20) at 0.3 s
    by_hand = 0.4 * (0.3 / 0.05) ** (np.log(2.0) / np.log(20.0)) * 980.665
    assert_allclose(column[1], by_hand, rtol=1e-12)  # round-off of exp/log only
    _edit(path, "target_input_sa", 0.5)
    assert {c.block for c in verify_workbook(path) if not c.ok} == {"spectra_table"}


def _template_input(tmp_path, standard, rows=(), table=()) -> Path:
    """A copy of the committed template with an invented record and the given Target sheet entries."""
    path = tmp_path / "input.xlsx"
    shutil.copy(TEMPLATE, path)
    book = openpyxl.load_workbook(path)
    record = book["Record"]
    for row, value in enumerate(_record().accel_in("cm/s2"), start=2):
        record.cell(row, 1, float(value))
    book["Input"]["B15"], book["Input"]["B16"] = 0.01, "cm/s2"
    target = book["Target"]
    target["B5"] = standard
    for row, (name, value) in enumerate(rows, start=8):
        target.cell(row, 1, name), target.cell(row, 2, value)
    for row, (period, sa) in enumerate(table, start=8):
        target.cell(row, 4, period), target.cell(row, 5, sa)
    book.save(path)
    return path


def test_fill_reads_the_templates_target_cells(tmp_path):
    """The template's Target sheet (standard, name/value rows) reaches ReportSettings; text values stay text."""
    rows = (("ag", 0.25), ("ground_type", "C"), ("spectrum_type", 1))
    _, settings, _ = read_input_workbook(_template_input(tmp_path, "EN1998", rows))
    assert settings.target_standard == "EN1998"
    assert settings.target_parameters == (("ag", 0.25), ("ground_type", "C"), ("spectrum_type", 1.0))


def test_fill_reads_the_templates_target_table(tmp_path):
    """Standard 'table' takes the period and Sa columns of the Target sheet, blank rows left out."""
    _, settings, _ = read_input_workbook(_template_input(tmp_path, "table", table=((0.01, 0.3), (4.0, 0.1))))
    assert settings.target_parameters == (("periods_table", (0.01, 4.0)), ("sa_table", (0.3, 0.1)))


def test_fill_names_a_parameter_without_a_value(tmp_path):
    """A target parameter row with a name and no value is refused, naming the row and the parameter."""
    with pytest.raises(ValueError, match=r"row 2 of the target parameters names 'sd1' but has no value"):
        read_input_workbook(_template_input(tmp_path, "ASCE7", (("sds", 1.0), ("sd1", None))))


def test_demo_target_option_reaches_the_audit_sheet(tmp_path, capsys):
    """`groundstep demo --target ASCE7:...` writes the standard, parameters and clause on the Audit sheet."""
    out = tmp_path / "d.xlsx"
    assert main(["demo", "--target", "ASCE7:sds=1.0,sd1=0.6,tl=8", "--periods", "0.05,4,12", str(out)]) == 0
    assert "ASCE/SEI 7-16 §11.4.6" in capsys.readouterr().out
    book = openpyxl.load_workbook(out)

    def value(name):
        sheet, reference = next(iter(book.defined_names[f"gs_{name}"].destinations))
        return book[sheet][reference.replace("$", "")].value

    assert value("target_standard") == "ASCE7" and value("target_parameters") == "sds=1.0, sd1=0.6, tl=8"
    assert value("target_description").startswith("ASCE/SEI 7-16 §11.4.6")


def test_a_bad_target_option_is_an_input_error(tmp_path, capsys):
    """A --target without STANDARD: is refused as an input error (exit 2) with the form to use."""
    assert main(["demo", "--target", "sds=1.0", str(tmp_path / "d.xlsx")]) == 2
    assert "give STANDARD:NAME=VALUE" in capsys.readouterr().err
