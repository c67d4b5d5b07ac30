"""Tests of the result workbook: its content (groundstep.addin.result.content) and the openpyxl writer."""

from __future__ import annotations

import math
import re
import warnings
import zipfile
from xml.etree import ElementTree

import numpy as np
import openpyxl
import pytest
from conftest import DAMPINGS, PERIODS
from numpy.testing import assert_allclose

from groundstep.addin import common as lay
from groundstep.addin.result import layout, sheets
from groundstep.addin.result.content import Oscillator, ReportSettings, build_report, stored_record
from groundstep.addin.result.offline import write_report
from groundstep.addin.result.verify import verify_workbook
from groundstep.core import STANDARD_GRAVITY, Record, elastic_spectrum, inelastic_response, linear_response
from groundstep.core.synthetic import synthetic_record

SHEETS = ["Summary", "Record", "Spectra", "Peaks", "Measures", "Verification", "Audit"]


def test_sheets_in_order_and_caution(made):
    """The seven sheets come in order; the Summary and Audit sheets carry the caution text."""
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
    rows = range(sheets.RECORD_FIRST_ROW, sheets.RECORD_FIRST_ROW + record.n)
    formulas = [ws.cell(row=r, column=9).value for r in rows]  # the u column (I)
    assert all(isinstance(f, str) and f.startswith("=") for f in formulas)
    assert f"I{sheets.RECORD_FIRST_ROW}" in formulas[1]  # row i uses row i-1
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
    assert {"Ground acceleration", "Pseudo-spectral acceleration", "Spectral displacement"} <= set(charts)
    log, series = charts["Pseudo-spectral acceleration"]
    assert log == "10"
    # 7 periods from row 5; column groups of 6 (SD, PSV, PSA, SA, PSA vs exact, flag) per damping
    assert series == [
        ("ζ = 0.02", "'Spectra'!$A$5:$A$11", "'Spectra'!$D$5:$D$11"),
        ("ζ = 0.05", "'Spectra'!$A$5:$A$11", "'Spectra'!$J$5:$J$11"),
    ]
    log, series = charts["Spectral displacement"]
    assert log == "10" and [y for _, _, y in series] == ["'Spectra'!$B$5:$B$11", "'Spectra'!$H$5:$H$11"]
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




def test_verification_period_must_not_need_substeps():
    """A Verification oscillator with h/T > 0.1 is refused with the bound in the message."""
    record = Record(np.sin(np.arange(100) * 0.3), 0.02, "m/s2")
    with pytest.raises(ValueError, match=r"needs T >= 0.2 s \(h/T <= 0.1\)"):
        build_report(record, ReportSettings(periods=(0.5, 1.0), verification_period=0.1))


def test_stored_record_survives_the_file(tmp_path):
    """Samples needing 17 digits are rounded to 15 so the file (or a spreadsheet's 15-digit save) gives them back."""
    record = Record(np.random.default_rng(3).standard_normal(300) * 0.1, 0.005, "in/s2")
    kept = stored_record(record)
    written = [float(f"{v:.16g}") for v in kept.accel_in("in/s2")]  # what openpyxl writes
    assert Record(written, 0.005, "in/s2").sha256() == kept.sha256()
    assert_allclose(kept.accel, record.accel, rtol=5e-15 + 2e-16 * 4, atol=0.0)  # half a 15th digit, plus round-off
    saved = [float(f"{v:.15g}") for v in kept.accel_in("in/s2")]  # what a spreadsheet keeps on save
    assert Record(saved, 0.005, "in/s2").accel.tobytes() == kept.accel.tobytes()
    exact = Record([0.125, -0.5, 0.25], 0.01, "g")  # short binary fractions need no rounding
    assert stored_record(exact) is exact
    assert not math.isnan(kept.pga)


# --- yielding oscillators ---------------------------------------------------------------------
# The yielding engine itself is checked in tests/test_inelastic.py against the Biggs (1964)
# step-load closed form, a scipy event-driven integration, energy balance, the bilinear envelope
# and second-order convergence; here the workbook must show exactly what that engine returns.


def _named(book, key):
    sheet, ref = book.defined_names[layout.NAME_PREFIX + key].attr_text.split("!")
    cells = book[sheet.strip("'")][ref.replace("$", "")]
    return [row[0].value for row in cells] if isinstance(cells, tuple) else cells.value


def _core_yielding(record, settings):
    """inelastic_response for each oscillator that has R, as the workbook should show it."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        found = []
        for o in settings.oscillators:
            if o.reduction_factor is None:
                continue
            # R divides the elastic force at the workbook's step ratio (the Peaks sheet's PSA);
            # the yielding oscillator steps at the yielding default ratio (0.02)
            elastic = linear_response(stored_record(record), o.period, o.damping, max_step_ratio=settings.max_step_ratio)
            cy = elastic.pseudo_acceleration / o.reduction_factor / STANDARD_GRAVITY
            found.append((o, inelastic_response(stored_record(record), o.period, o.damping, yield_coefficient=cy)))
        return found


def test_yielding_table_equals_the_core_api(made):
    """Every yielding cell equals groundstep.core.inelastic_response (lengths in cm, the record's unit)."""
    record, settings, _, path = made
    book = openpyxl.load_workbook(path)
    expected = _core_yielding(record, settings)
    assert _named(book, "yielding_table_label") == ["short", "mid"]  # "long" has no R
    columns = {
        "period": lambda o, r: o.period,
        "damping": lambda o, r: o.damping,
        "reduction_factor": lambda o, r: o.reduction_factor,
        "yield_coefficient": lambda o, r: r.yield_coefficient,
        "yield_displacement": lambda o, r: r.yield_displacement * 100.0,
        "peak_displacement": lambda o, r: r.peak_displacement * 100.0,
        "ductility": lambda o, r: r.ductility,
        "residual_displacement": lambda o, r: r.residual_displacement * 100.0,
        "hysteretic_share": lambda o, r: r.hysteretic_energy / r.input_energy,
        "energy_balance_error": lambda o, r: r.energy_balance_error,
    }
    for key, value in columns.items():
        # the file keeps 16 significant digits (openpyxl): 1e-15 relative
        assert_allclose(_named(book, f"yielding_table_{key}"), [value(o, r) for o, r in expected], rtol=1e-15, err_msg=key)
    assert _named(book, "yielding_table_yield_excursions") == [r.yield_excursions for _, r in expected]
    assert all(r.ductility > 1.0 for _, r in expected)  # both really yield for this record
    for text in _named(book, "yielding_table_method"):
        assert "elastoplastic (hardening α = 0)" in text and "average acceleration" in text and "Newton" in text


def test_yielding_table_agrees_with_the_elastic_table(made):
    """Identities across the Peaks sheet: Cy·g·R = PSA of the same oscillator; max|u| = μ·u_y; u_y = Cy·g/ω²."""
    _, _, _, path = made
    book = openpyxl.load_workbook(path)
    psa = dict(zip(_named(book, "peaks_table_label"), _named(book, "peaks_table_psa")))  # cm/s²
    labels = _named(book, "yielding_table_label")
    cy = np.array(_named(book, "yielding_table_yield_coefficient"))
    factor = np.array(_named(book, "yielding_table_reduction_factor"))
    period = np.array(_named(book, "yielding_table_period"))
    # R is defined on the peak elastic force ω²·SD = PSA of the same oscillator (same method, sub-steps)
    assert_allclose(cy * STANDARD_GRAVITY * 100.0 * factor, [psa[label] for label in labels], rtol=1e-13)
    u_y = np.array(_named(book, "yielding_table_yield_displacement"))
    assert_allclose(u_y, cy * STANDARD_GRAVITY * 100.0 / (2 * np.pi / period) ** 2, rtol=1e-13)  # u_y = fy/k
    mu = np.array(_named(book, "yielding_table_ductility"))
    assert_allclose(_named(book, "yielding_table_peak_displacement"), mu * u_y, rtol=1e-13)
    # the elastic table shows R beside each oscillator, blank for the elastic-only one
    assert _named(book, "peaks_table_reduction_factor") == [3, None, 2]


def test_summary_shows_the_largest_ductility(made):
    """The Summary's yielding block names the oscillator with the largest ductility demand."""
    record, settings, _, path = made
    book = openpyxl.load_workbook(path)
    expected = _core_yielding(record, settings)
    worst_oscillator, worst = max(expected, key=lambda item: item[1].ductility)
    assert_allclose(_named(book, "largest_ductility"), worst.ductility, rtol=1e-15)
    assert _named(book, "largest_ductility_label") == worst_oscillator.label
    assert _named(book, "largest_ductility_reduction_factor") == worst_oscillator.reduction_factor
    assert_allclose(_named(book, "largest_ductility_peak_displacement"), worst.peak_displacement * 100.0, rtol=1e-15)


def test_audit_names_the_yielding_settings(made):
    """The Audit sheet gives the hardening ratio and the hysteresis and method of the yielding block."""
    _, _, _, path = made
    book = openpyxl.load_workbook(path)
    assert _named(book, "hardening") == 0
    text = _named(book, "yielding_method")
    assert "bilinear, elastoplastic" in text and "beta = 0.25, gamma = 0.5" in text and "Newton-Raphson" in text


def test_no_reduction_factor_gives_an_empty_yielding_table(tmp_path):
    """Without R the yielding table has a title and header only, the Summary no yielding block; verify passes."""
    record = synthetic_record(2.0, 0.01, pga=0.2, seed=5)
    settings = ReportSettings(periods=(0.2, 1.0), dampings=(0.05,), oscillators=(Oscillator("frame", 0.5),))
    report = build_report(record, settings)
    assert "yielding_summary" not in report.content and "largest_ductility" not in report.headline
    path = write_report(report, tmp_path / "elastic.xlsx")
    book = openpyxl.load_workbook(path)
    assert not [name for name in book.defined_names if name.startswith("gs_yielding_table")]
    assert "none (no oscillator has a reduction factor R)" in book["Peaks"]["A7"].value
    assert book["Peaks"]["A8"].value == "Oscillator" and book["Peaks"]["A9"].value is None
    assert all(c.ok for c in verify_workbook(path))


@pytest.mark.parametrize(
    ("method", "used", "note"),
    [("linear", "linear", False), ("exact", "average", True), ((0.3, 0.6), (0.3, 0.6), False)],
)


def test_yielding_method_follows_the_workbook_method(method, used, note):
    """Yielding oscillators use the workbook's implicit Newmark method; 'exact' falls back to average acceleration."""
    record = synthetic_record(2.0, 0.01, pga=0.3, seed=6)
    settings = ReportSettings(periods=(0.2, 1.0), dampings=(0.05,), method=method,
                              oscillators=(Oscillator("frame", 0.5, 0.05, 3.0),))  # fmt: skip
    report = build_report(record, settings)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        direct = inelastic_response(stored_record(record), 0.5, 0.05, reduction_factor=3.0, method=used)
    assert report.content["yielding_table"]["ductility"] == [direct.ductility]
    text = report.content["yielding_table"]["method"][0]
    assert ("has no yielding form" in text) == note


def test_hardening_setting_reaches_the_core_and_survives_verify(tmp_path):
    """A hardening ratio in the settings is used, written on the Audit sheet and read back by verify."""
    record = synthetic_record(2.0, 0.01, pga=0.3, seed=6)
    settings = ReportSettings(periods=(0.2, 1.0), dampings=(0.05,), hardening=0.05,
                              oscillators=(Oscillator("frame", 0.5, 0.05, 4.0),))  # fmt: skip
    report = build_report(record, settings)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        direct = inelastic_response(stored_record(record), 0.5, 0.05, reduction_factor=4.0, hardening=0.05)
    assert report.content["yielding_table"]["residual_displacement"] == [direct.residual_displacement]
    assert "kinematic hardening α = 0.05" in report.content["yielding_table"]["method"][0]
    path = write_report(report, tmp_path / "hardening.xlsx")
    assert all(c.ok for c in verify_workbook(path))
    book = openpyxl.load_workbook(path)
    _, ref = book.defined_names["gs_hardening"].attr_text.split("!")
    book["Audit"][ref.replace("$", "")].value = 0.0
    book.save(tmp_path / "edited.xlsx")
    assert "yielding_table" in {c.block for c in verify_workbook(tmp_path / "edited.xlsx") if not c.ok}


@pytest.mark.parametrize(
    ("changes", "match"),
    [
        ({"oscillators": (Oscillator("tank", 1.0, 0.02, 0.0),)}, r"oscillator 'tank': reduction factor R must be > 0, got 0.0"),
        ({"oscillators": (Oscillator("tank", 1.0, 0.02, float("nan")),)}, r"oscillator 'tank': reduction factor R .* got nan"),
        ({"hardening": 1.0}, r"hardening \(post-yield stiffness ratio α\) must be a post-yield stiffness ratio in \[0, 1\).*got 1.0"),
    ],
)
def test_bad_yielding_settings_are_named(changes, match):
    """A reduction factor <= 0 or NaN names the oscillator; a hardening outside [0, 1) names the setting."""
    record = synthetic_record(1.0, 0.01, pga=0.2, seed=1)
    with pytest.raises(ValueError, match=match):
        build_report(record, ReportSettings(periods=(0.5, 1.0), dampings=(0.05,), **changes))
