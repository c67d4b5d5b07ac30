"""The template round trip and the command line's words (issue 9): T = 0, long records, review fields, messages."""

from __future__ import annotations

import datetime

import numpy as np
import openpyxl
import pytest

from groundstep.addin.cli import main
from groundstep.addin.package.names import INPUT_NAMES, RECORD_ROWS
from groundstep.addin.package.template import build_calculation_package
from groundstep.addin.result import sheets
from groundstep.addin.result.content import ReportSettings, build_report
from groundstep.addin.result.verify import verify_workbook
from groundstep.core import elastic_spectrum
from groundstep.core.synthetic import synthetic_record


def _cell(book, name):
    sheet, reference = INPUT_NAMES[name].replace("$", "").split("!")
    return book[sheet][reference.split(":")[0]]


def _package(tmp_path, record, **inputs):
    book = build_calculation_package()
    first = _cell(book, "input_record")
    for i, value in enumerate(record.accel_in("g").tolist(), start=1):
        book[first.parent.title].cell(row=first.row + i, column=first.column, value=value)
    _cell(book, "input_dt").value = record.dt
    _cell(book, "input_unit").value = "g"
    for name, value in inputs.items():
        _cell(book, name).value = value
    path = tmp_path / "package.xlsx"
    book.save(path)
    return path


def test_record_of_45000_samples_is_read_whole(tmp_path):
    """A 45,000-sample record pasted into the template is read whole (before: cut to 39,999)."""
    record = synthetic_record(449.99, 0.01, pga=0.2, seed=5)
    assert record.n == 45_000 < RECORD_ROWS
    source = _package(tmp_path, record)
    assert main(["fill", str(source), "--out", str(tmp_path / "out.xlsx"), "--periods", "0.1,2,4"]) == 0
    summary = openpyxl.load_workbook(tmp_path / "out.xlsx")["Summary"]
    samples = next(row[1].value for row in summary.iter_rows(min_row=11, max_row=20) if row[0].value == "Samples")
    assert samples == 45_000


def test_samples_below_the_record_range_are_refused(tmp_path, capsys):
    """A sample beyond the end of input_record stops fill with the row named, never a cut record."""
    record = synthetic_record(2.0, 0.01, pga=0.2, seed=5)
    source = _package(tmp_path, record)
    book = openpyxl.load_workbook(source)
    book["Record"].cell(row=RECORD_ROWS + 3, column=1, value=0.1)
    book.save(source)
    assert main(["fill", str(source), "--out", str(tmp_path / "out.xlsx")]) == 2
    assert f"Record!A{RECORD_ROWS + 3} holds a sample below the record range" in capsys.readouterr().err


def test_rigid_period_is_kept_and_left_out_of_the_log_charts():
    """T = 0 stays in the spectrum table with PSA = PGA; the logarithmic charts start at the next period."""
    record = synthetic_record(4.0, 0.01, pga=0.25, seed=8)
    report = build_report(record, ReportSettings(periods=(0.0, 0.1, 1.0), dampings=(0.05,)), command="test")
    table = report.content["spectra_table"]
    assert table["period"][0] == 0.0
    # closed form: a rigid oscillator moves with the ground, PSA = PGA
    assert table["psa_0"][0] == pytest.approx(record.pga / 9.80665, rel=1e-12)
    chart = report.layout.sheet(sheets.SPECTRA).charts[0]
    assert chart.skip_rows == 1


def test_project_number_checker_and_date_reach_summary_and_audit(tmp_path):
    """The template's project number, checker and date cells appear on the Summary and the Audit sheets."""
    record = synthetic_record(3.0, 0.01, pga=0.2, seed=5)
    source = _package(tmp_path, record, input_project_number="P-1234", input_checker="A. Reviewer",
                      input_date=datetime.datetime(2026, 3, 1))  # fmt: skip
    out = tmp_path / "out.xlsx"
    assert main(["fill", str(source), "--out", str(out), "--periods", "0.1,2,4"]) == 0
    book = openpyxl.load_workbook(out)
    values = {row[0].value: row[1].value for row in book["Summary"].iter_rows(min_row=5, max_row=7, min_col=5, max_col=6)}
    assert values == {"Project number": "P-1234", "Checked by": "A. Reviewer", "Date": "2026-03-01"}
    audit = [row[1].value for row in book["Audit"].iter_rows(min_row=4, max_row=14) if row[0].value.startswith("Project")]
    assert audit == ["P-1234 / A. Reviewer / 2026-03-01"]
    assert [c.line() for c in verify_workbook(out) if not c.ok] == []


def test_psa_is_shown_beside_its_difference_from_the_exact_solution():
    """Each ordinate carries PSA/PSA_exact - 1 (Nigam & Jennings 1969 via method='exact'), flagged above 1 %."""
    record = synthetic_record(4.0, 0.01, pga=0.25, seed=8)
    periods = (0.03, 0.1, 1.0)
    report = build_report(record, ReportSettings(periods=periods, dampings=(0.05,)), command="test")
    exact = elastic_spectrum(record, periods, [0.05], "exact")  # independent route: the core API
    newmark = elastic_spectrum(record, periods, [0.05], "average")
    expected = newmark.psa[0] / exact.psa[0] - 1.0
    column = report.content["spectra_table"]
    np.testing.assert_allclose(column["exact_0"], expected, rtol=1e-9, atol=1e-15)  # same kernels, same order
    assert column["exact_flag_0"] == ["yes" if abs(d) > sheets.EXACT_TOLERANCE else "" for d in expected]


@pytest.mark.parametrize(
    ("argv", "message"),
    [
        (["--oscillator", "mast:0.7:5"], "--oscillator 'mast:0.7:5': DAMPING must be a ratio"),
        (["--oscillator", "mast:-1"], "--oscillator 'mast:-1': PERIOD must be >= 0 s"),
        (["--oscillator", "mast:abc"], "--oscillator 'mast': 'abc': expected comma-separated numbers"),
    ],
)
def test_oscillator_errors_name_the_oscillator(tmp_path, capsys, argv, message):
    """A bad --oscillator value is refused naming the oscillator as typed."""
    assert main(["demo", str(tmp_path / "d.xlsx"), *argv]) == 2
    assert message in capsys.readouterr().err


def test_dampings_accept_percent_as_cells_do(tmp_path):
    """`--dampings 5%,2%` gives 0.05 and 0.02 (before: 'expected comma-separated numbers')."""
    assert main(["demo", str(tmp_path / "d.xlsx"), "--dampings", "5%,2%"]) == 0
    assert [c.line() for c in verify_workbook(tmp_path / "d.xlsx") if not c.ok] == []
    book = openpyxl.load_workbook(tmp_path / "d.xlsx")
    sheet, reference = book.defined_names["gs_dampings"].attr_text.split("!")
    assert book[sheet.strip("'")][reference.replace("$", "")].value == "0.05, 0.02"


def test_spectrum_messages_use_the_option_names(tmp_path, capsys):
    """Without a time column the CLI asks for --dt and --time-column, not dt= or time_column=True."""
    (tmp_path / "rec.txt").write_text("0.1\n0.2\n-0.1\n")
    assert main(["spectrum", str(tmp_path / "rec.txt"), "--unit", "g", "--out-dir", str(tmp_path), "--quiet", "--workers", "1"]) == 2
    err = capsys.readouterr().err
    assert "--dt is required when the text has no time column (pass --dt SECONDS, or --time-column yes" in err
    assert "dt=" not in err and "time_column" not in err


def test_time_column_and_dt_that_disagree_name_both(tmp_path, capsys):
    """A 0.02 s time column with --dt 0.01 is an error naming both (before: silently used one)."""
    (tmp_path / "tc.csv").write_text("\n".join(f"{0.02 * i:.2f},{np.sin(i):.4f}" for i in range(50)))
    assert main(["spectrum", str(tmp_path / "tc.csv"), "--unit", "g", "--dt", "0.01", "--out-dir", str(tmp_path), "--quiet", "--workers", "1"]) == 2
    assert "--dt 0.01 disagrees with the time column, which is spaced 0.02 s" in capsys.readouterr().err


def test_empty_dt_cell_is_called_empty(tmp_path, capsys):
    """A blank dt cell of the template says 'empty', not 'no named cell'."""
    record = synthetic_record(2.0, 0.01, pga=0.2, seed=5)
    source = _package(tmp_path, record, input_dt=None)
    assert main(["fill", str(source), "--out", str(tmp_path / "out.xlsx")]) == 2
    err = capsys.readouterr().err
    assert "the time-step cell (input_dt) is empty" in err and "no named" not in err


def test_yielding_sheet_of_the_template_is_filled_and_verified(tmp_path):
    """fill writes the template's constant-ductility spectrum (Ductility sheet); verify recomputes and guards it."""
    from groundstep.core import collect_warnings, ductility_spectrum

    record = synthetic_record(5.0, 0.01, pga=0.3, seed=9)
    source = _package(tmp_path, record)
    out = tmp_path / "out.xlsx"
    assert main(["fill", str(source), "--out", str(out), "--periods", "0.1,2,4"]) == 0
    book = openpyxl.load_workbook(out)
    assert "Ductility" in book.sheetnames
    template = build_calculation_package()
    periods = [c.value for c in template["Yielding"]["A"][6:26]]
    targets = [c.value for c in template["Yielding"][5][1:5]]
    with collect_warnings():  # independent route: the core API with the template's inputs
        expected = ductility_spectrum(record, periods, targets, 0.05, "average")
    sheet, reference = book.defined_names["gs_ductility_table_cy_1"].attr_text.split("!")
    stored = [row[0].value for row in book[sheet.strip("'")][reference.replace("$", "")]]
    np.testing.assert_allclose(stored, expected.yield_coefficient[1], rtol=1e-12)  # the same search, same record
    assert [c.line() for c in verify_workbook(out) if not c.ok] == []
    book["Ductility"][reference.replace("$", "").split(":")[0]].value = stored[0] * 1.01
    book.save(tmp_path / "edited.xlsx")
    assert [c.block for c in verify_workbook(tmp_path / "edited.xlsx") if not c.ok] == ["ductility_table"]
