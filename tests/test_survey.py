"""Tests of groundstep.addin.survey and ``groundstep batch``: the record-database batch."""

from __future__ import annotations

import csv
import doctest
import importlib
import json
import os
import signal
import subprocess
import sys
import time
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from groundstep.addin.cli import main
from groundstep.addin.common import CAUTION
from groundstep.addin.survey import (
    DASK_MISSING,
    MEASURE_UNITS,
    SPECTRUM_UNITS,
    RecordEntry,
    SurveySettings,
    read_manifest,
    read_result,
    read_settings,
    result_path,
    run_survey,
    scan_folder,
    table_columns,
)
from groundstep.core import (
    Record,
    bandpass,
    baseline_correct,
    ductility_spectrum,
    elastic_spectrum,
    ground_motion_measures,
    synthetic_record,
)

#: Small analyses keep the suite quick: 4 periods, 2 dampings, one target ductility.
SETTINGS = SurveySettings(periods=(0.1, 0.3, 1.0, 2.0), dampings=(0.02, 0.05), ductilities=(2.0,))
SURVEY_MODULES = ["plan", "settings", "task", "outputs", "table", "executors"]


def _write_record(path: Path, seed: int, duration: float = 4.0, dt: float = 0.01, pga: float = 0.3) -> np.ndarray:
    """An invented record (seeded synthetic accelerogram) as one value per line, in g, read back exactly."""
    samples = synthetic_record(duration, dt, pga=pga, unit="g", seed=seed).accel_in("g")
    path.write_text("\n".join(repr(float(v)) for v in samples) + "\n")  # repr round-trips float64 exactly
    return samples


def _database(folder: Path, count: int, duration: float = 4.0) -> Path:
    """`count` invented records and their manifest (paths relative to it)."""
    folder.mkdir(parents=True, exist_ok=True)
    lines = ["file,dt,unit,label"]
    for seed in range(count):
        _write_record(folder / f"rec{seed}.txt", seed, duration)
        lines.append(f"rec{seed}.txt,0.01,g,seed {seed}")
    manifest = folder / "records.csv"
    manifest.write_text("\n".join(lines) + "\n")
    return manifest


def _results(out: Path) -> dict[str, dict[str, str]]:
    with open(out / "results.csv", newline="") as handle:
        return {row["file"]: row for row in csv.DictReader(handle)}


def _components(out: Path, file: str) -> list:
    document = read_result(out, file)
    assert document is not None, file
    return document["components"]


@pytest.mark.parametrize("name", SURVEY_MODULES)
def test_docstring_examples_run(name):
    """The Examples sections of the survey modules run and print what they show."""
    module = importlib.import_module(f"groundstep.addin.survey.{name}")
    failures, _ = doctest.testmod(module, optionflags=doctest.NORMALIZE_WHITESPACE)
    assert failures == 0


def test_record_result_equals_the_core_api(tmp_path):
    """A record's JSON holds exactly what the core API gives for the same samples (same float64 arithmetic)."""
    samples = _write_record(tmp_path / "r.txt", seed=3)
    entries = [RecordEntry("r.txt", str(tmp_path / "r.txt"), "g", 0.01)]
    summary = run_survey(entries, SETTINGS, tmp_path / "out", workers=1)
    assert (summary.done, summary.failed) == (1, 0)
    (part,) = _components(tmp_path / "out", "r.txt")
    record = Record(samples, 0.01, "g")
    spectrum = elastic_spectrum(record, SETTINGS.periods, SETTINGS.dampings)
    ductility = ductility_spectrum(record, SETTINGS.periods, SETTINGS.ductilities, 0.05, "average")
    for q in SPECTRUM_UNITS:  # rtol 0: the batch calls the same functions on the same samples
        np.testing.assert_allclose(part["spectra"][q], getattr(spectrum, q), rtol=0, atol=0)
    np.testing.assert_allclose(part["ductility"]["reduction_factor"], ductility.reduction_factor, rtol=0, atol=0)
    assert part["measures"] == ground_motion_measures(record).to_dict()
    assert part["sha256"] == record.sha256()


def test_processing_is_applied_before_the_spectra(tmp_path):
    """--baseline and --bandpass run baseline_correct, then bandpass, and the JSON names both steps."""
    samples = _write_record(tmp_path / "r.txt", seed=4)
    settings = replace(SETTINGS, baseline=2, bandpass=(0.2, 20.0), ductilities=())
    run_survey([RecordEntry("r.txt", str(tmp_path / "r.txt"), "g", 0.01)], settings, tmp_path / "out", workers=1)
    (part,) = _components(tmp_path / "out", "r.txt")
    processed = bandpass(baseline_correct(Record(samples, 0.01, "g"), 2), 0.2, 20.0)
    expected = elastic_spectrum(processed, settings.periods, settings.dampings).psa
    np.testing.assert_allclose(part["spectra"]["psa"], expected, rtol=0, atol=0)  # same calls, same samples
    assert [step.split("(")[0] for step in part["processing"]] == ["baseline_correct", "bandpass"]
    assert part["samples"] == processed.n  # the band-pass keeps its zero pads


def test_local_pool_and_dask_equal_a_serial_run(tmp_path):
    """2 local worker processes and a Dask LocalCluster on 127.0.0.1 give the serial run's numbers exactly."""
    pytest.importorskip("distributed")
    manifest = _database(tmp_path / "db", 4)
    entries = read_manifest(manifest)
    runs = {"serial": {"workers": 1}, "pool": {"workers": 2, "pool": True}, "dask": {"workers": 2, "scheduler": "local"}}
    for name, options in runs.items():
        summary = run_survey(entries, SETTINGS, tmp_path / name, **options)
        assert (summary.done, summary.failed) == (4, 0), name
    for entry in entries:
        serial = _components(tmp_path / "serial", entry.file)
        assert _components(tmp_path / "pool", entry.file) == serial  # == on floats: bit-for-bit
        assert _components(tmp_path / "dask", entry.file) == serial


def test_a_killed_batch_resumes_without_recomputing(tmp_path):
    """SIGKILL half-way: every file parses; the re-run skips the records done (same inode and mtime) and finishes."""
    manifest = _database(tmp_path / "db", 10, duration=30.0)
    out = tmp_path / "out"
    args = ["batch", str(manifest), "--out", str(out), "--workers", "1", "--periods", "0.1,3,30",
            "--dampings", "0.05", "--ductilities", "2,4,6", "--quiet"]  # fmt: skip
    command = [sys.executable, "-m", "groundstep.addin", *args]
    process = subprocess.Popen(command, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    try:
        deadline = time.monotonic() + 120.0  # a guard against a hung child, not a timing check
        while time.monotonic() < deadline and process.poll() is None:
            if (out / "results.csv").is_file() and sum(r["status"] == "done" for r in _results(out).values()) >= 3:
                break
            time.sleep(0.01)
        assert process.poll() is None, "the batch finished before it could be killed; give it more work"
        process.send_signal(signal.SIGKILL)
    finally:
        process.wait()
    done_before = {f for f, row in _results(out).items() if row["status"] == "done"}
    assert 3 <= len(done_before) < 10
    for path in (out / "records").glob("*.json"):
        json.loads(path.read_text())  # no half-written result: each parses
    stamps = {f: (result_path(out, f).stat().st_ino, result_path(out, f).stat().st_mtime_ns) for f in done_before}
    assert main(args) == 0
    rows = _results(out)
    assert {f for f, row in rows.items() if row["status"] == "skipped"} >= done_before
    assert all(row["status"] in ("done", "skipped") for row in rows.values()) and len(rows) == 10
    for f, stamp in stamps.items():
        assert (result_path(out, f).stat().st_ino, result_path(out, f).stat().st_mtime_ns) == stamp
    assert not list(out.rglob("*.tmp"))


def test_bad_records_are_isolated(tmp_path, capsys):
    """Unreadable, NaN, non-uniform time, implausible and motionless records fail alone, one line each; exit 2."""
    db = tmp_path / "db"
    manifest = _database(db, 2)
    (db / "nan.txt").write_text("0.1\nnan\n0.2\n")
    (db / "uneven.txt").write_text("0.0, 0.1\n0.01, 0.2\n0.03, 0.1\n0.04, 0.0\n")
    (db / "huge.txt").write_text("0.0\n50.0\n-20.0\n0.0\n")  # 50 g: beyond the 10 g plausibility limit
    (db / "still.txt").write_text("0\n0\n0\n0\n")
    (db / "binary.txt").write_bytes(bytes(range(256)))
    with open(manifest, "a") as handle:
        handle.write("missing.txt,0.01,g,\nnan.txt,0.01,g,\nuneven.txt,,g,\nhuge.txt,0.01,g,\n")
        handle.write("still.txt,0.01,g,\nbinary.txt,0.01,g,\n")
    assert main(["batch", str(manifest), "--out", str(tmp_path / "out"), "--workers", "1", "--periods", "0.1,1,3",
                 "--quiet"]) == 2  # fmt: skip
    rows = _results(tmp_path / "out")
    assert [rows[f"rec{i}.txt"]["status"] for i in range(2)] == ["done", "done"]
    expected = {"missing.txt": "cannot read", "nan.txt": "non-finite", "uneven.txt": "uniform",
                "huge.txt": "implausible", "still.txt": "no motion", "binary.txt": "no numeric"}  # fmt: skip
    for file, words in expected.items():
        assert rows[file]["status"] == "failed" and words in rows[file]["message"], (file, rows[file]["message"])
        assert "\n" not in rows[file]["message"]
    err = capsys.readouterr().err
    assert "failed: nan.txt" in err and "failed: huge.txt" in err
    assert "nan.txt: nan.txt" not in err  # the failure line names the record once


def test_combined_table_matches_the_record_files(tmp_path):
    """Each row of spectra.csv reads back to the JSON values of its record, damping and period (repr is exact)."""
    manifest = _database(tmp_path / "db", 2)
    run_survey(read_manifest(manifest), SETTINGS, tmp_path / "out", workers=1)
    with open(tmp_path / "out" / "spectra.csv", newline="") as handle:
        rows = list(csv.DictReader(handle))
    assert list(rows[0]) == table_columns(SETTINGS.ductilities)
    assert len(rows) == 2 * len(SETTINGS.dampings) * len(SETTINGS.periods)
    for row in rows:
        (part,) = _components(tmp_path / "out", row["file"])
        i = part["spectra"]["dampings"].index(float(row["damping [-]"]))
        j = part["spectra"]["periods"].index(float(row["period [s]"]))
        for q, unit in SPECTRUM_UNITS.items():
            assert float(row[f"{q} [{unit}]"]) == part["spectra"][q][i][j]
        for name, unit in MEASURE_UNITS.items():
            value = part["measures"][name]
            assert row[f"{name} [{unit}]"] == ("" if value is None else repr(value))
        cell = row["reduction_factor mu=2 [-]"]
        if float(row["damping [-]"]) == SETTINGS.ductility_damping:
            assert float(cell) == part["ductility"]["reduction_factor"][0][j]
        else:
            assert cell == ""  # no ductility spectrum at this damping


def test_every_measure_has_a_unit():
    """The unit table covers exactly the scalars GroundMotionMeasures.to_dict() returns."""
    record = synthetic_record(2.0, 0.01, seed=1)
    assert set(ground_motion_measures(record).to_dict()) == set(MEASURE_UNITS)


def test_changed_settings_or_bytes_recompute(tmp_path):
    """Same settings and bytes: skipped; another damping, or an edited record: computed again."""
    manifest = _database(tmp_path / "db", 2)
    entries, out = read_manifest(manifest), tmp_path / "out"
    run_survey(entries, SETTINGS, out, workers=1)
    assert run_survey(entries, SETTINGS, out, workers=1).skipped == 2
    assert run_survey(entries, replace(SETTINGS, dampings=(0.05,)), out, workers=1).done == 2
    _write_record(tmp_path / "db" / "rec1.txt", seed=99)
    summary = run_survey(entries, replace(SETTINGS, dampings=(0.05,)), out, workers=1)
    assert (summary.skipped, summary.done) == (1, 1)
    assert _results(out)["rec1.txt"]["status"] == "done"


def test_folder_mode_time_column_gives_its_own_dt(tmp_path):
    """In a folder, --dt applies to files without a time column; a 'time, acceleration' file keeps its spacing."""
    db = tmp_path / "db"
    db.mkdir()
    _write_record(db / "plain.txt", seed=1)
    samples = synthetic_record(2.0, 0.02, seed=2).accel_in("g")
    (db / "timed.csv").write_text("".join(f"{0.02 * i!r}, {float(v)!r}\n" for i, v in enumerate(samples)))
    entries = scan_folder(db, unit="g", dt=0.01, exclude=[db / "out"])
    run_survey(entries, replace(SETTINGS, ductilities=()), db / "out", workers=1)
    assert _components(db / "out", "plain.txt")[0]["dt"] == 0.01
    assert _components(db / "out", "timed.csv")[0]["dt"] == pytest.approx(0.02, rel=1e-12)  # spacing of printed times
    assert [e.file for e in scan_folder(db, unit="g", dt=0.01, exclude=[db / "out"])] == ["plain.txt", "timed.csv"]


def test_the_unit_is_never_assumed(tmp_path, capsys):
    """A folder without --unit, or a manifest row with a blank unit, is refused with exit 2 and the fix."""
    manifest = _database(tmp_path / "db", 1)
    assert main(["batch", str(tmp_path / "db"), "--out", str(tmp_path / "out"), "--dt", "0.01"]) == 2
    assert "--unit" in capsys.readouterr().err
    manifest.write_text("file,dt,unit\nrec0.txt,0.01,\n")
    with pytest.raises(ValueError, match=r"line 2: no unit for 'rec0.txt'.*never assumed"):
        read_manifest(manifest)
    assert read_manifest(manifest, unit="cm/s2")[0].unit == "cm/s2"


def test_manifest_rules(tmp_path):
    """A manifest needs a file column, knows only its columns and lists each record once."""
    path = tmp_path / "m.csv"
    path.write_text("name,dt\na.txt,0.01\n")
    with pytest.raises(ValueError, match="must name the columns"):
        read_manifest(path)
    path.write_text("file,dt,unit\na.txt,0.01,g\na.txt,0.02,g\n")
    with pytest.raises(ValueError, match="line 3: 'a.txt' is listed again"):
        read_manifest(path)
    path.write_text("file,dt,unit\na.txt,-1,g\n")
    with pytest.raises(ValueError, match="positive time step"):
        read_manifest(path)


def test_second_component_is_analysed_beside_the_first(tmp_path):
    """file_y gives a second component in the JSON and its own rows in the combined table."""
    db = tmp_path / "db"
    db.mkdir()
    _write_record(db / "n.txt", seed=5)
    east = _write_record(db / "e.txt", seed=6)
    (db / "m.csv").write_text("file,file_y,dt,unit,label\nn.txt,e.txt,0.01,g,pair\n")
    run_survey(read_manifest(db / "m.csv"), SETTINGS, tmp_path / "out", workers=1)
    x, y = _components(tmp_path / "out", "n.txt")
    assert (x["component"], y["component"]) == ("x", "y")
    expected = elastic_spectrum(Record(east, 0.01, "g"), SETTINGS.periods, SETTINGS.dampings).psa
    np.testing.assert_allclose(y["spectra"]["psa"], expected, rtol=0, atol=0)  # same call, same samples
    with open(tmp_path / "out" / "spectra.csv", newline="") as handle:
        assert {row["component"] for row in csv.DictReader(handle)} == {"x", "y"}


def test_settings_file_then_options_on_top(tmp_path, capsys):
    """The TOML file sets the analyses; an option given on the command line wins over it."""
    _database(tmp_path / "db", 1)
    toml = tmp_path / "s.toml"
    toml.write_text('periods = {shortest = 0.1, longest = 1.0, count = 3}\ndampings = [0.02]\nductilities = [2]\n'
                    'bandpass = {low = 0.2}\nmeasures = false\n')  # fmt: skip
    settings = read_settings(toml)
    assert settings.dampings == (0.02,) and settings.bandpass == (0.2, None) and not settings.measures
    code = main(["batch", str(tmp_path / "db" / "records.csv"), "--out", str(tmp_path / "out"), "--workers", "1",
                 "--settings", str(toml), "--dampings", "0.05", "--quiet"])  # fmt: skip
    assert code == 0
    out = capsys.readouterr().out
    assert CAUTION in out and "1 done" in out
    document = read_result(tmp_path / "out", "rec0.txt")
    assert document is not None
    assert document["settings"]["dampings"] == [0.05] and document["settings"]["ductilities"] == [2.0]
    assert document["components"][0]["measures"] is None
    toml.write_text("damping = 0.05\n")
    with pytest.raises(ValueError, match="unknown setting 'damping'"):
        read_settings(toml)


def test_settings_are_checked_before_anything_runs():
    """A damping given as a percentage, or a ductility below 1, is refused when the settings are built."""
    with pytest.raises(ValueError, match="damping"):
        SurveySettings(dampings=(5.0,))
    with pytest.raises(ValueError, match="ductilities"):
        SurveySettings(ductilities=(0.5,))


def test_missing_dask_names_the_extra(tmp_path, monkeypatch):
    """--scheduler without Dask distributed installed says: pip install "groundstep[dask]"."""
    monkeypatch.setitem(sys.modules, "distributed", None)  # import distributed now raises ImportError
    _database(tmp_path / "db", 1)
    entries = read_manifest(tmp_path / "db" / "records.csv")
    with pytest.raises(ValueError, match=r'pip install "groundstep\[dask\]"'):
        run_survey(entries, SETTINGS, tmp_path / "out", scheduler="local")
    assert "groundstep[dask]" in DASK_MISSING


def test_two_records_may_not_share_a_result_file(tmp_path):
    """a/b.txt and a__b.txt would both write records/a__b.txt.json: refused before anything runs."""
    entries = [RecordEntry("a/b.txt", "x", "g", 0.01), RecordEntry("a__b.txt", "y", "g", 0.01)]
    with pytest.raises(ValueError, match="would both write"):
        run_survey(entries, SETTINGS, tmp_path / "out", workers=1)


def test_results_manifest_columns(tmp_path):
    """results.csv has file, status, message, hash and seconds (and label, result) per record."""
    manifest = _database(tmp_path / "db", 1)
    run_survey(read_manifest(manifest), SETTINGS, tmp_path / "out", workers=1)
    with open(tmp_path / "out" / "results.csv", newline="") as handle:
        reader = csv.DictReader(handle)
        row = next(reader)
    assert {"file", "status", "message", "hash", "seconds"} <= set(reader.fieldnames or ())
    assert row["status"] == "done" and len(row["hash"]) == 64 and float(row["seconds"]) >= 0.0
    assert os.path.isfile(tmp_path / "out" / row["result"])
