"""Plausibility notes of a record: time step, PGA for the unit, periods, drift (core.plausibility, issue 9)."""

from __future__ import annotations

import numpy as np
import pytest

from groundstep.addin.cli import main
from groundstep.addin.functions import STEP_CHECK
from groundstep.addin.result.content import ReportSettings, build_report
from groundstep.core import Record, baseline_correct
from groundstep.core.plausibility import TIME_STEP_RANGE, check_record
from groundstep.core.synthetic import synthetic_record


def _checks(findings):
    return [f.check for f in findings]


def test_ordinary_record_has_no_notes():
    """A 20 s synthetic record at 0.01 s, PGA 0.3 g, periods 0.05-10 s: nothing to note."""
    record = synthetic_record(20.0, 0.01, pga=0.3, seed=2)
    assert check_record(record, [0.0, 0.05, 1.0, 10.0]) == ()


@pytest.mark.parametrize(("dt", "hint"), [(5.0, "dt = 0.005 s"), (0.1, ""), (1e-6, "")])
def test_time_step_outside_usual_range(dt, hint):
    """dt = 5 s (meant 5 ms) is noted with the milliseconds reading; 0.1 s and 1 µs are noted too."""
    record = Record(np.sin(np.arange(400) * 0.3) * 0.1, dt, "g")
    found = [f for f in check_record(record) if f.check == "time_step"]
    assert len(found) == 1 and found[0].value == dt
    assert f"{TIME_STEP_RANGE[0]:g} to {TIME_STEP_RANGE[1]:g} s" in found[0].message and hint in found[0].message


def test_cm_per_s2_record_declared_as_g_suggests_the_unit():
    """A cm/s² record (PGA 336) declared as g is noted, suggesting cm/s2 (336 cm/s² = 0.34 g)."""
    values = synthetic_record(10.0, 0.01, pga=336.0, unit="cm/s2", seed=4).accel_in("cm/s2")
    found = check_record(Record(values, 0.01, "g"))
    assert _checks(found) == ["pga_unit"]
    assert "PGA 336 g is above the plausible" in found[0].message and "plausible in cm/s2" in found[0].message
    assert check_record(Record(values, 0.01, "cm/s2")) == ()  # the right unit: no note


def test_periods_beyond_the_record_and_below_two_dt():
    """Periods longer than the duration and shorter than 2·dt (Nyquist) are noted; T = 0 is not."""
    record = synthetic_record(4.0, 0.02, pga=0.2, seed=6)  # duration 3.98 s, 2·dt = 0.04 s
    found = check_record(record, [0.0, 0.03, 0.5, 5.0, 8.0])
    assert _checks(found) == ["period_beyond_record", "period_below_two_dt"]
    assert found[0].value == 8.0 and found[0].message.startswith("2 period(s) up to T = 8 s")
    assert found[1].value == 0.03


def test_drifting_record_suggests_baseline_correction():
    """An acceleration offset of 0.002 g makes velocity and displacement drift; the correction clears it."""
    record = synthetic_record(20.0, 0.01, pga=0.3, seed=1)
    shifted = Record(record.accel_in("g") + 0.002, 0.01, "g")
    found = check_record(shifted)
    assert _checks(found) == ["velocity_drift", "displacement_drift"]
    assert all("baseline_correct" in f.message for f in found)
    assert check_record(baseline_correct(shifted)) == ()


def test_step_check_worksheet_function():
    """STEP_CHECK spills (check, note) rows, or one 'none' row, from cells as a spreadsheet passes them."""
    column = [[v] for v in synthetic_record(10.0, 0.01, pga=0.3, seed=2).accel_in("g")]
    assert STEP_CHECK(column, 0.01, "g", None) == [["none", "no plausibility notes"]]
    rows = STEP_CHECK(column, 0.01, "g", [[0.01], [20.0]])
    assert [r[0] for r in rows] == ["period_beyond_record", "period_below_two_dt"]


def test_summary_sheet_lists_the_notes():
    """The result workbook's Summary carries the notes block (checked by verify)."""
    record = Record(synthetic_record(10.0, 0.01, pga=336.0, unit="cm/s2", seed=4).accel_in("cm/s2"), 0.01, "g")
    report = build_report(record, ReportSettings(periods=(0.1, 1.0)), command="test")
    assert report.content["findings"]["check"] == ["pga_unit"]
    block = next(b for b in report.layout.sheet("Summary").blocks if b.key == "findings")
    assert block.checked and block.rows == 1


def test_cli_prints_notes(tmp_path, capsys):
    """`groundstep spectrum` prints 'groundstep: note: FILE: ...' for a dt of 5 s."""
    (tmp_path / "rec.txt").write_text("\n".join(f"{v:.6f}" for v in np.sin(np.arange(300) * 0.2) * 0.1))
    assert main(["spectrum", str(tmp_path / "rec.txt"), "--dt", "5", "--unit", "g", "--out-dir", str(tmp_path),
                 "--quiet", "--workers", "1"]) == 0  # fmt: skip
    err = capsys.readouterr().err
    assert "groundstep: note: rec.txt: time step dt = 5 s is outside the usual" in err
