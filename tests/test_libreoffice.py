"""Result workbooks recalculated by real spreadsheet software (LibreOffice Calc, headless).

Each workbook is converted xlsx -> xlsx by ``soffice --headless --convert-to``,
which loads it, calculates every formula and saves the values; openpyxl
reads them back. Each run gets its own fresh LibreOffice profile folder.
Without soffice these tests skip, unless GROUNDSTEP_REQUIRE_LIBREOFFICE=1
(set in CI), where a missing soffice fails them.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import tempfile
import warnings
from pathlib import Path

import numpy as np
import openpyxl
import pytest

from groundstep.addin.cli import main
from groundstep.addin.result import layout, sheets
from groundstep.addin.result.content import stored_record
from groundstep.core import Record, linear_response
from groundstep.core.synthetic import synthetic_record

#: Recalculate every formula on load, whatever the file carries (LibreOffice setting
#: Formula/Load/OOXMLRecalcMode: 0 = always).
_PROFILE_SETTINGS = """<?xml version="1.0" encoding="UTF-8"?>
<oor:items xmlns:oor="http://openoffice.org/2001/registry" xmlns:xs="http://www.w3.org/2001/XMLSchema"
 xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance">
<item oor:path="/org.openoffice.Office.Calc/Formula/Load"><prop oor:name="OOXMLRecalcMode" oor:op="fuse"><value>0</value></prop></item>
</oor:items>
"""
#: Spellings of error values in cells written by Excel or LibreOffice.
_ERRORS = ("#NULL!", "#DIV/0!", "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#N/A", "Err:")


def _soffice() -> str:
    found = shutil.which("soffice") or shutil.which("libreoffice")
    if found:
        return found
    if os.environ.get("GROUNDSTEP_REQUIRE_LIBREOFFICE") == "1":
        pytest.fail("GROUNDSTEP_REQUIRE_LIBREOFFICE=1 but soffice is not installed (Debian: libreoffice-calc)")
    pytest.skip("LibreOffice (soffice) is not installed; install libreoffice-calc to run these checks")


def recalculate(path: Path, out_dir: Path) -> Path:
    """Open `path` in headless LibreOffice with a fresh profile, recalculate, save as xlsx in `out_dir`."""
    soffice = _soffice()
    with tempfile.TemporaryDirectory(prefix="gs-lo-profile-") as profile:
        user = Path(profile) / "user"
        user.mkdir()
        (user / "registrymodifications.xcu").write_text(_PROFILE_SETTINGS, encoding="utf-8")
        out_dir.mkdir(parents=True, exist_ok=True)
        result = subprocess.run(
            [soffice, f"-env:UserInstallation={Path(profile).as_uri()}", "--headless", "--norestore",
             "--convert-to", "xlsx", "--outdir", str(out_dir), str(path)],
            capture_output=True, text=True, timeout=300,
        )  # fmt: skip
    converted = out_dir / path.name
    assert result.returncode == 0 and converted.is_file(), result.stdout + result.stderr
    return converted


def _name(book, key):
    sheet, ref = book.defined_names[layout.NAME_PREFIX + key].attr_text.split("!")
    return book[sheet.strip("'")][ref.replace("$", "")]


@pytest.fixture(scope="module")
def workbooks(tmp_path_factory):
    """The demo workbook, a fill output and a spectrum workbook, each as written and as recalculated."""
    folder = tmp_path_factory.mktemp("lo")
    _soffice()
    made = {}
    assert main(["demo", str(folder / "demo.xlsx")]) == 0
    made["demo"] = folder / "demo.xlsx"

    record = synthetic_record(4.0, 0.02, pga=1.2, unit="m/s2", seed=8)
    source = openpyxl.Workbook()
    source.active.title = "Data"
    source.active.append(["time [s]", "accel [m/s2]"])
    for t, a in zip(record.time, record.accel_in("m/s2")):
        source.active.append([float(t), float(a)])
    source.save(folder / "input.xlsx")
    assert main(["fill", str(folder / "input.xlsx"), "--out", str(folder / "fill.xlsx"), "--record",
                 f"Data!B1:B{record.n + 1}", "--dt", "0.02", "--unit", "m/s2", "--method", "linear",
                 "--oscillator", "mast:0.7:0.03:3"]) == 0  # fmt: skip
    made["fill"] = folder / "fill.xlsx"

    long = synthetic_record(15.0, 0.005, pga=1.5, unit="m/s2", seed=11)  # 3001 samples: a 2000-step window
    source = openpyxl.Workbook()
    source.active.title = "Data"
    for a in long.accel_in("m/s2"):
        source.active.append([float(a)])
    source.save(folder / "long_input.xlsx")
    assert main(["fill", str(folder / "long_input.xlsx"), "--out", str(folder / "long.xlsx"), "--record",
                 f"Data!A1:A{long.n}", "--dt", "0.005", "--unit", "m/s2"]) == 0  # fmt: skip
    made["long"] = folder / "long.xlsx"

    text = folder / "rec.txt"
    np.savetxt(text, synthetic_record(5.0, 0.005, pga=0.15, seed=3).accel_in("g"), fmt="%.7g")
    assert main(["spectrum", str(text), "--dt", "0.005", "--unit", "g", "--format", "xlsx", "--out-dir", str(folder), "--quiet"]) == 0
    made["spectrum"] = folder / "rec.spectrum.xlsx"
    return {key: (path, recalculate(path, folder / "calc")) for key, path in made.items()}


@pytest.mark.parametrize("key", ["demo", "fill", "spectrum", "long"])
def test_formula_peaks_equal_python_peaks(workbooks, key):
    """LibreOffice's formula peaks equal groundstep's to 1e-9 relative and the pass cells say pass."""
    _, calculated = workbooks[key]
    book = openpyxl.load_workbook(calculated, data_only=True)
    for quantity in "uvt":
        by_formula = _name(book, f"formula_{quantity}").value
        by_python = _name(book, f"python_{quantity}").value
        assert isinstance(by_formula, float), (quantity, by_formula)
        # the brief's tolerance; both sides run the same Newmark recurrence (Newmark 1959)
        assert abs(by_formula - by_python) <= 1e-9 * abs(by_python), quantity
    assert _name(book, "verification_overall").value == "pass"
    assert _name(book, "check_status").value == "pass"  # the Summary cell that shows it


@pytest.mark.parametrize("key", ["demo", "fill", "spectrum"])
def test_no_cell_shows_an_error(workbooks, key):
    """After LibreOffice recalculates, no cell of any sheet holds an error value, and every formula has a value."""
    written, calculated = workbooks[key]
    formulas = openpyxl.load_workbook(written)
    values = openpyxl.load_workbook(calculated, data_only=True)
    checked = 0
    for ws in formulas.worksheets:
        for row in ws.iter_rows():
            for cell in row:
                value = values[ws.title].cell(row=cell.row, column=cell.column).value
                if isinstance(value, str):
                    assert not value.startswith(_ERRORS), f"{ws.title}!{cell.coordinate} shows {value}"
                if isinstance(cell.value, str) and cell.value.startswith("="):
                    assert value is not None, f"{ws.title}!{cell.coordinate} was not calculated"
                    checked += 1
    assert checked > 1000


def test_recalculated_history_matches_linear_response(workbooks):
    """The sheet's u column, step by step, equals linear_response's displacement history over its steps (demo)."""
    written, calculated = workbooks["demo"]
    book = openpyxl.load_workbook(calculated, data_only=True)
    period = _name(book, "verification_period").value
    damping = _name(book, "verification_damping").value
    samples = [row[0].value for row in _name(book, "record_table_accel")]
    record = stored_record(Record(samples, _name(book, "dt").value, _name(book, "record_unit").value))
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # no sub-steps may be needed
        direct = linear_response(record, period, damping, "average")
    column = [row[0].value for row in _name(book, "verification_steps_u")]
    start, rows = _name(book, "verification_first_step").value, _name(book, "verification_steps_replayed").value
    # LibreOffice stores 15 significant digits; 1e-9 of the peak bounds round-off over 2000 steps
    np.testing.assert_allclose(column, direct.displacement[start:start + rows], rtol=0,
                               atol=1e-9 * direct.peak_displacement)  # fmt: skip


def test_reviewer_changes_reach_the_pass_cell(workbooks, tmp_path):
    """Editing the Verification period makes LibreOffice's recalculated pass cell say FAIL (it is live)."""
    written, _ = workbooks["demo"]
    copy = tmp_path / "edited.xlsx"
    book = openpyxl.load_workbook(written)
    _name(book, "verification_period").value = _name(book, "verification_period").value * 1.01
    book.save(copy)
    recalculated = openpyxl.load_workbook(recalculate(copy, tmp_path / "calc"), data_only=True)
    assert _name(recalculated, "verification_overall").value == "FAIL"


@pytest.mark.parametrize("key", ["demo", "fill"])
def test_yielding_block_survives_recalculation(workbooks, key):
    """After LibreOffice loads, recalculates and saves, the yielding table and its Summary line keep their values."""
    written, calculated = workbooks[key]
    before = openpyxl.load_workbook(written)
    after = openpyxl.load_workbook(calculated, data_only=True)
    columns = ("label", "reduction_factor", "yield_coefficient", "peak_displacement", "ductility",
               "residual_displacement", "yield_excursions", "hysteretic_share", "energy_balance_error", "method")  # fmt: skip
    for column in columns:
        old = [row[0].value for row in _name(before, f"yielding_table_{column}")]
        new = [row[0].value for row in _name(after, f"yielding_table_{column}")]
        assert old and len(new) == len(old), column
        if isinstance(old[0], str):
            assert new == old, column
        else:
            # LibreOffice keeps 15 significant digits of a stored number: 1e-14 relative
            np.testing.assert_allclose(new, old, rtol=1e-14, err_msg=column)
    assert _name(after, "largest_ductility").value == pytest.approx(_name(before, "largest_ductility").value, rel=1e-14)


@pytest.mark.parametrize("key", ["demo", "fill", "spectrum", "long"])
def test_workbook_saved_by_libreoffice_still_verifies(workbooks, key):
    """A result workbook opened and saved by LibreOffice Calc (15 significant digits) verifies (before: digest mismatch)."""
    from groundstep.addin.result.verify import verify_workbook

    _, saved = workbooks[key]
    assert [check.line() for check in verify_workbook(saved) if not check.ok] == []


def test_window_replay_matches_linear_response(workbooks):
    """A record longer than the window: the sheet's u column equals linear_response's history over the window."""
    _, calculated = workbooks["long"]
    book = openpyxl.load_workbook(calculated, data_only=True)
    start = _name(book, "verification_first_step").value
    rows = _name(book, "verification_steps_replayed").value
    samples = [row[0].value for row in _name(book, "record_table_accel")]
    assert start > 0 and rows == sheets.VERIFY_WINDOW and len(samples) == 3001  # the window is used, not the whole record
    record = stored_record(Record(samples, _name(book, "dt").value, _name(book, "record_unit").value))
    direct = linear_response(record, _name(book, "verification_period").value,
                             _name(book, "verification_damping").value, "average")  # fmt: skip
    column = [row[0].value for row in _name(book, "verification_steps_u")]
    # LibreOffice stores 15 significant digits; 1e-9 of the peak bounds round-off over 2000 steps
    np.testing.assert_allclose(column, direct.displacement[start:start + rows], rtol=0, atol=1e-9 * direct.peak_displacement)
