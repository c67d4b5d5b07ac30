"""Tests of the result workbook (openpyxl writer), its layout and the verify module."""

from __future__ import annotations

import math
import re
import shutil
import warnings
import zipfile
from xml.etree import ElementTree

import numpy as np
import openpyxl
import pytest
from numpy.testing import assert_allclose

from groundstep.addin import layout as lay
from groundstep.addin.report import Oscillator, ReportSettings, build_report, stored_record
from groundstep.addin.verify import NotAResultWorkbook, verify_workbook
from groundstep.addin.workbook import write_report
from groundstep.core import Record, elastic_spectrum, linear_response
from groundstep.core.synthetic import synthetic_record

SHEETS = ["Summary", "Record", "Spectra", "Peaks", "Verification", "Audit"]
PERIODS = (0.05, 0.1, 0.2, 0.5, 1.0, 2.0, 5.0)
DAMPINGS = (0.02, 0.05)


@pytest.fixture(scope="module")
def made(tmp_path_factory):
    """A small result workbook: 3 s record in cm/s², 7 periods, 2 dampings, 2 oscillators."""
    record = synthetic_record(3.0, 0.01, pga=250.0, unit="cm/s2", seed=21, name="workbook test")
    settings = ReportSettings(
        periods=PERIODS,
        dampings=DAMPINGS,
        oscillators=(Oscillator("short", 0.3, 0.05), Oscillator("long", 1.5, 0.02)),
        project=(("project", "=HYPERLINK(\"x\")"), ("site", "invented site")),
    )
    report = build_report(record, settings, command="groundstep test")
    path = write_report(report, tmp_path_factory.mktemp("wb") / "result.xlsx")
    return record, settings, report, path


def test_sheets_in_order_and_caution(made):
    """The six sheets come in order; the Summary and Audit sheets carry the caution text."""
    _, _, _, path = made
    book = openpyxl.load_workbook(path)
    assert book.sheetnames == SHEETS
    assert book["Summary"]["A2"].value == lay.CAUTION
    sheet, ref = book.defined_names["gs_caution"].attr_text.split("!")
    assert book[sheet][ref.replace("$", "")].value == lay.CAUTION


def test_summary_shows_the_caution_cell(made):
    """The caution stands on the Summary sheet itself (project rule 5)."""
    _, _, _, path = made
    values = [c.value for row in openpyxl.load_workbook(path)["Summary"].iter_rows() for c in row]
    assert lay.CAUTION in values


def test_user_text_starting_with_equals_is_text(made):
    """A project field typed as '=...' is stored as text, not run as a formula."""
    _, _, _, path = made
    cell = openpyxl.load_workbook(path)["Summary"]["B5"]
    assert cell.data_type == "s" and cell.value == ' =HYPERLINK("x")'


def test_spectra_equal_the_core_api(made):
    """Spectra cells equal groundstep.core.elastic_spectrum, converted to cm/s² and cm."""
    record, _, _, path = made
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        spectrum = elastic_spectrum(stored_record(record), PERIODS, DAMPINGS)
    book = openpyxl.load_workbook(path)
    names = book.defined_names
    for i in range(len(DAMPINGS)):
        for quantity, factor in (("psa", 100.0), ("sd", 100.0), ("sa", 100.0), ("psv", 100.0)):
            sheet, ref = names[f"gs_spectra_table_{quantity}_{i}"].attr_text.split("!")
            stored = [row[0].value for row in book[sheet][ref.replace("$", "")]]
            # the file keeps 16 significant digits (openpyxl): 1e-15 relative
            assert_allclose(stored, getattr(spectrum, quantity)[i] * factor, rtol=1e-15)


def test_verification_sheet_holds_the_recurrence_as_formulas(made):
    """Every record step has a formula row; the Python peak equals linear_response with the sheet's β, γ."""
    record, _, report, path = made
    ws = openpyxl.load_workbook(path)["Verification"]
    rows = range(lay.RECORD_FIRST_ROW, lay.RECORD_FIRST_ROW + record.n)
    formulas = [ws.cell(row=r, column=9).value for r in rows]  # the u column (I)
    assert all(isinstance(f, str) and f.startswith("=") for f in formulas)
    assert f"I{lay.RECORD_FIRST_ROW}" in formulas[1]  # row i uses row i-1
    inputs = report.content["verification_inputs"]
    assert (inputs["verification_beta"], inputs["verification_gamma"]) == (0.25, 0.5)
    direct = linear_response(stored_record(record), inputs["verification_period"], inputs["verification_damping"])
    assert direct.substeps == 1
    assert report.content["verification_check"]["python_u"] == direct.peak_displacement


def _charts(path):
    """(title, log base of the x axis, [(series title, x formula, y formula)]) of every chart part."""
    ns = {"c": "http://schemas.openxmlformats.org/drawingml/2006/chart",
          "a": "http://schemas.openxmlformats.org/drawingml/2006/main"}  # fmt: skip
    found = []
    with zipfile.ZipFile(path) as package:
        names = sorted(n for n in package.namelist() if re.fullmatch(r"xl/charts/chart\d+\.xml", n))
        assert not [n for n in package.namelist() if n.startswith("xl/media/")]  # no pictures
        for name in names:
            root = ElementTree.fromstring(package.read(name))
            scatter = root.find(".//c:plotArea/c:scatterChart", ns)
            assert scatter is not None, name
            title = "".join(t.text for t in root.findall("./c:chart/c:title//a:t", ns))
            log = root.find(".//c:valAx/c:scaling/c:logBase", ns)
            series = [
                (s.findtext("./c:tx/c:v", namespaces=ns), s.findtext("./c:xVal//c:f", namespaces=ns),
                 s.findtext("./c:yVal//c:f", namespaces=ns))
                for s in scatter.findall("./c:ser", ns)
            ]  # fmt: skip
            found.append((title, None if log is None else log.get("val"), series))
    return found


def test_charts_are_native_scatter_charts_with_log_period_axis(made):
    """Spectra carries PSA and SD scatter charts, one series per damping, log10 period axis (chart XML)."""
    _, _, _, path = made
    charts = {title: (log, series) for title, log, series in _charts(path)}
    assert set(charts) == {"Ground acceleration", "Pseudo-spectral acceleration", "Spectral displacement"}
    log, series = charts["Pseudo-spectral acceleration"]
    assert log == "10"
    # 7 periods from row 5; column groups of 4 (SD, PSV, PSA, SA) per damping after the period column
    assert series == [
        ("ζ = 0.02", "'Spectra'!$A$5:$A$11", "'Spectra'!$D$5:$D$11"),
        ("ζ = 0.05", "'Spectra'!$A$5:$A$11", "'Spectra'!$H$5:$H$11"),
    ]
    log, series = charts["Spectral displacement"]
    assert log == "10" and [y for _, _, y in series] == ["'Spectra'!$B$5:$B$11", "'Spectra'!$F$5:$F$11"]
    log, series = charts["Ground acceleration"]
    assert log is None and series[0][2] == "'Record'!$B$9:$B$309"


def test_existing_output_needs_force(made, tmp_path):
    """An existing file is not replaced without force; with force it is, and no temporary file remains."""
    _, _, report, _ = made
    target = tmp_path / "out.xlsx"
    target.write_bytes(b"keep me")
    with pytest.raises(FileExistsError, match="exists; pass --force"):
        write_report(report, target)
    assert target.read_bytes() == b"keep me"
    write_report(report, target, force=True)
    assert zipfile.is_zipfile(target)
    assert [p.name for p in tmp_path.iterdir()] == ["out.xlsx"]


def test_verify_passes_on_a_fresh_workbook(made):
    """verify recomputes every checked block and finds them all equal."""
    _, _, _, path = made
    checks = verify_workbook(path)
    assert all(c.ok for c in checks), [c.line() for c in checks if not c.ok]
    assert {c.block for c in checks} >= {"record_sha256", "spectra_table", "peaks_table", "verification_steps"}


@pytest.mark.parametrize(
    ("sheet", "cell", "block"),
    [("Spectra", "D7", "spectra_table"), ("Peaks", "D5", "peaks_table"), ("Summary", "B15", "record_summary")],
)
def test_verify_names_the_block_with_a_changed_cell(made, tmp_path, sheet, cell, block):
    """Changing one result cell (in a copy, with openpyxl) makes verify fail that block only."""
    _, _, _, path = made
    copy = tmp_path / "edited.xlsx"
    shutil.copy(path, copy)
    book = openpyxl.load_workbook(copy)
    book[sheet][cell].value = book[sheet][cell].value * 1.001
    book.save(copy)
    bad = [c for c in verify_workbook(copy) if not c.ok]
    assert [c.block for c in bad] == [block]
    assert f"{cell} holds" in bad[0].message


def test_verify_detects_an_edited_record_sample(made, tmp_path):
    """Changing one acceleration sample breaks the SHA-256 check."""
    _, _, _, path = made
    copy = tmp_path / "edited.xlsx"
    shutil.copy(path, copy)
    book = openpyxl.load_workbook(copy)
    book["Record"]["B50"].value = 1.0
    book.save(copy)
    bad = {c.block for c in verify_workbook(copy) if not c.ok}
    assert "record_sha256" in bad


def test_verify_refuses_other_files(tmp_path):
    """A text file and a workbook without our format mark raise NotAResultWorkbook."""
    text = tmp_path / "notes.xlsx"
    text.write_text("hello")
    with pytest.raises(NotAResultWorkbook, match="cannot be opened as an .xlsx"):
        verify_workbook(text)
    other = tmp_path / "other.xlsx"
    openpyxl.Workbook().save(other)
    with pytest.raises(NotAResultWorkbook, match="is not a groundstep result workbook"):
        verify_workbook(other)


def test_verification_period_must_not_need_substeps():
    """A Verification oscillator with h/T > 0.1 is refused with the bound in the message."""
    record = Record(np.sin(np.arange(100) * 0.3), 0.02, "m/s2")
    with pytest.raises(ValueError, match=r"needs T >= 0.2 s \(h/T <= 0.1\)"):
        build_report(record, ReportSettings(periods=(0.5, 1.0), verification_period=0.1))


def test_stored_record_survives_the_file(tmp_path):
    """Samples needing 17 digits are rounded once so the file gives back the same record and SHA-256."""
    record = Record(np.random.default_rng(3).standard_normal(300) * 0.1, 0.005, "in/s2")
    kept = stored_record(record)
    written = [float(f"{v:.16g}") for v in kept.accel_in("in/s2")]  # what openpyxl writes
    assert Record(written, 0.005, "in/s2").sha256() == kept.sha256()
    assert_allclose(kept.accel, record.accel, rtol=2e-16 * 4, atol=0.0)  # a few units of the last place
    exact = Record([0.125, -0.5, 0.25], 0.01, "g")  # short binary fractions need no rounding
    assert stored_record(exact) is exact
    assert not math.isnan(kept.pga)
