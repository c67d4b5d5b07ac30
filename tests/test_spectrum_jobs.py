"""Tests of groundstep.addin.cli.spectrum_jobs: the jobs of ``groundstep spectrum``."""

from __future__ import annotations

import csv
import json

import numpy as np
import pytest
from numpy.testing import assert_allclose

from groundstep.addin.cli.spectrum_jobs import plan_outputs, run_batch, spectrum_job
from groundstep.addin.result.content import ReportSettings
from groundstep.core import Record, elastic_spectrum

SETTINGS = ReportSettings(periods=(0.1, 0.5, 1.0, 2.0), dampings=(0.05,))


def _record_file(path, seed=1):
    samples = 0.2 * np.random.default_rng(seed).standard_normal(400)  # invented, seeded
    path.write_text("\n".join(f"{value:.6f}" for value in samples) + "\n")
    return np.array([float(f"{value:.6f}") for value in samples])


def test_plan_refuses_two_files_that_would_write_one_output(tmp_path):
    """a/x.txt and b/x.txt would both write x.spectrum.csv: refused before anything runs."""
    for folder in ("a", "b"):
        (tmp_path / folder).mkdir()
        (tmp_path / folder / "x.txt").write_text("0\n1\n")
    with pytest.raises(ValueError, match="would both write"):
        plan_outputs([str(tmp_path / "a/x.txt"), str(tmp_path / "b/x.txt")], tmp_path / "out", "csv")
    assert not (tmp_path / "out").exists()


def test_csv_job_equals_the_core_spectrum(tmp_path):
    """The CSV holds elastic_spectrum's PSA in the record's unit (g: PSA [m/s²] / 9.80665, CGPM 1901)."""
    samples = _record_file(tmp_path / "r.txt")
    (job,) = plan_outputs([str(tmp_path / "r.txt")], tmp_path / "out", "csv")
    spectrum_job(*job, SETTINGS, 0.01, "g", None, "test")
    with open(job[1], newline="") as stream:
        rows = list(csv.reader(stream))
    expected = elastic_spectrum(Record(samples, 0.01, "g"), SETTINGS.periods, SETTINGS.dampings).psa[0] / 9.80665
    psa = [float(row[3]) for row in rows[1:]]
    assert rows[0][3] == "PSA zeta=0.05 [g]"
    assert_allclose(psa, expected, rtol=1e-15)  # repr() round-trips a float exactly


def test_json_job_names_units_and_digest(tmp_path):
    """The JSON carries the settings, the units and the record's SHA-256."""
    samples = _record_file(tmp_path / "r.txt")
    (job,) = plan_outputs([str(tmp_path / "r.txt")], tmp_path / "out", "json")
    spectrum_job(*job, SETTINGS, 0.01, "cm/s2", None, "test")
    data = json.loads(job[1].read_text())
    assert data["units"] == {"sd": "cm", "psv": "cm/s", "psa": "cm/s2", "sa": "cm/s2"}
    assert data["sha256"] == Record(samples, 0.01, "cm/s2").sha256()
    assert data["periods"] == list(SETTINGS.periods)


def test_a_bad_file_does_not_stop_the_others(tmp_path):
    """One unreadable record is reported; the other is written."""
    _record_file(tmp_path / "good.txt")
    (tmp_path / "bad.txt").write_text("0.1\nnot a number\n")
    jobs = plan_outputs([str(tmp_path / "bad.txt"), str(tmp_path / "good.txt")], tmp_path / "out", "csv")
    failures = run_batch(jobs, SETTINGS, dt=0.01, unit="g", time_column=None, workers=1, command="t", progress=False)
    assert [path.endswith("bad.txt") for path, _ in failures] == [True]
    assert "line 2 is not numeric" in failures[0][1]
    assert (tmp_path / "out" / "good.spectrum.csv").is_file()
