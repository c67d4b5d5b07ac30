"""Fixtures shared by the result-workbook tests (content, writer, verify)."""

from __future__ import annotations

import os

import pytest
from hypothesis import HealthCheck, settings

from groundstep.addin.result.content import Oscillator, ReportSettings, build_report
from groundstep.addin.result.offline import write_report
from groundstep.core.synthetic import synthetic_record

# Fuzz budgets: "quick" (the default, CI) and "long" (HYPOTHESIS_PROFILE=long, or benchmarks/fuzz_long.py).
settings.register_profile("quick", max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
settings.register_profile("long", max_examples=3000, deadline=None, suppress_health_check=[HealthCheck.too_slow])
settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE", "quick"))

PERIODS = (0.05, 0.1, 0.2, 0.5, 1.0, 2.0, 5.0)
DAMPINGS = (0.02, 0.05)


@pytest.fixture(scope="module")
def made(tmp_path_factory):
    """A small result workbook: 3 s record in cm/s², 7 periods, 2 dampings, 3 oscillators (2 with R)."""
    record = synthetic_record(3.0, 0.01, pga=250.0, unit="cm/s2", seed=21, name="workbook test")
    settings = ReportSettings(
        periods=PERIODS,
        dampings=DAMPINGS,
        oscillators=(
            Oscillator("short", 0.3, 0.05, 3.0),
            Oscillator("long", 1.5, 0.02),
            Oscillator("mid", 0.8, 0.05, 2.0),
        ),
        project=(("project", "=HYPERLINK(\"x\")"), ("site", "invented site")),
    )
    report = build_report(record, settings, command="groundstep test")
    path = write_report(report, tmp_path_factory.mktemp("wb") / "result.xlsx")
    return record, settings, report, path
