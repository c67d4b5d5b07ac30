"""The Verification sheet's window: a long record replays 2,000 steps from groundstep's stated state."""

from __future__ import annotations

import openpyxl
import pytest

from groundstep.addin.result import sheets
from groundstep.addin.result.content import ReportSettings, build_report, stored_record, verification_window
from groundstep.addin.result.offline import write_report
from groundstep.addin.result.verify import verify_workbook
from groundstep.core import Record, linear_response
from groundstep.core.synthetic import synthetic_record


@pytest.fixture(scope="module")
def long_report():
    """A 3001-sample record (longer than the window) and its report."""
    record = stored_record(synthetic_record(15.0, 0.005, pga=1.5, unit="m/s2", seed=11))
    return record, build_report(record, ReportSettings(periods=(0.1, 1.0), dampings=(0.05,)), command="test")


def test_short_record_is_replayed_whole():
    """A record of at most VERIFY_WINDOW samples is replayed from its first sample, at rest."""
    response = linear_response(Record([0.0, 1.0, -0.5, 0.25, 0.0], 0.01, "m/s2"), 1.0, 0.05)
    assert verification_window(response) == (0, 5)


def test_window_holds_the_record_peaks(long_report):
    """Beyond VERIFY_WINDOW samples the window holds the peaks linear_response finds over the whole record."""
    record, report = long_report
    inputs = report.content["verification_inputs"]
    direct = linear_response(record, inputs["verification_period"], inputs["verification_damping"])
    start = report.content["verification_start"]
    assert start["verification_steps_replayed"] == sheets.VERIFY_WINDOW and start["verification_first_step"] > 0
    check = report.content["verification_check"]
    # the window's peaks are the whole record's (same computation, so exactly equal)
    assert (check["python_u"], check["python_v"], check["python_t"]) == (
        direct.peak_displacement, direct.peak_velocity, direct.peak_total_acceleration)  # fmt: skip
    first = start["verification_first_step"]
    assert (start["verification_start_u"], start["verification_start_v"]) == (
        direct.displacement[first], direct.velocity[first])  # fmt: skip


def test_window_formulas_start_from_the_stated_state(long_report, tmp_path):
    """The first replayed row reads the Record row of the window's first step and the starting-state cells."""
    _, report = long_report
    path = write_report(report, tmp_path / "long.xlsx")
    ws = openpyxl.load_workbook(path)[sheets.VERIFICATION]
    first = report.content["verification_start"]["verification_first_step"]
    row = sheets.RECORD_FIRST_ROW
    assert ws.cell(row=row, column=6).value == f"={sheets.RECORD}!A{row + first}"
    assert ws.cell(row=row, column=9).value == "=$B$35"  # u: the Starting state block's u cell
    assert ws.cell(row=row + sheets.VERIFY_WINDOW, column=9).value is None  # no row past the window


def test_verify_catches_an_edited_starting_state(long_report, tmp_path):
    """Changing the stated starting u makes verify report a mismatch of the Starting state block."""
    _, report = long_report
    path = write_report(report, tmp_path / "long.xlsx")
    assert [c.line() for c in verify_workbook(path) if not c.ok] == []
    book = openpyxl.load_workbook(path)
    book[sheets.VERIFICATION]["B35"] = book[sheets.VERIFICATION]["B35"].value * 1.001
    book.save(tmp_path / "edited.xlsx")
    bad = [c.block for c in verify_workbook(tmp_path / "edited.xlsx") if not c.ok]
    assert bad == ["verification_start"]
