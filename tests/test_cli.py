"""Tests of the groundstep command line: commands, exit codes, messages, files."""

from __future__ import annotations

import csv
import hashlib
import importlib
import json
import os
import shutil
import subprocess
import sys
import warnings

import numpy as np
import openpyxl
import pytest
from numpy.testing import assert_allclose

from groundstep.addin import common as lay
from groundstep.addin.cli import main
from groundstep.core import Record, elastic_spectrum
from groundstep.core.synthetic import synthetic_record

COMMANDS = ["demo", "fill", "spectrum", "verify", "templates", "warm"]


def _run(*args, cwd=None):
    """`python -m groundstep.addin ARGS` in a subprocess."""
    return subprocess.run(
        [sys.executable, "-m", "groundstep.addin", *map(str, args)], capture_output=True, text=True, cwd=cwd, timeout=600
    )


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    """The demo workbook made end to end by `python -m groundstep.addin demo OUT`."""
    out = tmp_path_factory.mktemp("demo") / "demo.xlsx"
    result = _run("demo", out)
    return out, result


def test_demo_runs_end_to_end(demo):
    """demo exits 0, writes the workbook and prints where, the peak PSA and the caution."""
    out, result = demo
    assert result.returncode == 0, result.stderr
    assert out.is_file()
    assert f"wrote {out}" in result.stdout
    assert "largest PSA" in result.stdout and "PGA 0.3 g" in result.stdout
    assert lay.CAUTION in result.stdout
    book = openpyxl.load_workbook(out)
    assert "Kessel Flats" in str(book["Summary"]["B6"].value)  # the invented site
    # the invented structures carry invented reduction factors; the footbridge stays elastic only
    assert [row[0].value for row in book["Peaks"]["L5:L9"]] == [1.5, 4, 5, 2, None]
    assert [row[0].value for row in book["Peaks"]["A13:A16"]] == [
        "Pump house (1 storey, masonry)", "Control building (3 storeys, RC frame)", "Pipe rack (steel)",
        "Water tower (elevated tank)",
    ]  # fmt: skip
    assert "largest ductility demand" in result.stdout


def test_demo_refuses_to_overwrite_without_force(demo, capsys):
    """A second demo into the same file exits 2 with one line; --force replaces it."""
    out, _ = demo
    before = out.read_bytes()
    assert main(["demo", str(out)]) == 2
    err = capsys.readouterr().err
    assert err.strip().count("\n") == 0 and "exists; pass --force to replace it" in err
    assert out.read_bytes() == before
    assert main(["demo", str(out), "--force", "--seed", "7"]) == 0


@pytest.mark.parametrize("command", COMMANDS)
def test_help_everywhere(command, capsys):
    """`groundstep COMMAND --help` exits 0 and documents the exit codes and the caution."""
    with pytest.raises(SystemExit) as stop:
        main([command, "--help"])
    assert stop.value.code == 0
    text = capsys.readouterr().out
    assert "exit codes" in text and "Results support, not replace" in text


def test_top_level_help_lists_every_command(capsys):
    """`groundstep --help` names all six commands."""
    with pytest.raises(SystemExit):
        main(["--help"])
    text = capsys.readouterr().out
    assert all(command in text for command in COMMANDS)


def test_verify_exit_codes(demo, tmp_path, capsys):
    """verify: 0 on the fresh demo, 1 naming the block after one result cell changes, 2 for other files."""
    out, _ = demo
    assert main(["verify", str(out)]) == 0
    assert "checks match" in capsys.readouterr().out
    copy = tmp_path / "edited.xlsx"
    shutil.copy(out, copy)
    book = openpyxl.load_workbook(copy)
    book["Peaks"]["F6"].value = 123  # SA of the second oscillator
    book.save(copy)
    assert main(["verify", str(copy)]) == 1
    report = capsys.readouterr().out
    assert "MISMATCH  Peaks / Peak response of the oscillators: 1 of 60 cells differ; first: F6 holds 123, recomputed" in report
    yielding = tmp_path / "yielding.xlsx"
    shutil.copy(out, yielding)
    book = openpyxl.load_workbook(yielding)
    book["Peaks"]["H14"].value = 1.0  # ductility demand of the second yielding oscillator
    book.save(yielding)
    assert main(["verify", str(yielding)]) == 1
    report = capsys.readouterr().out
    assert "MISMATCH  Peaks / Yielding oscillators" in report and "first: H14 holds 1, recomputed" in report
    assert "1 of 21 checks do not match: Peaks / Yielding oscillators" in report  # 21: with the starting state and the build-up table
    other = tmp_path / "other.xlsx"
    openpyxl.Workbook().save(other)
    assert main(["verify", str(other)]) == 2
    assert "is not a groundstep result workbook" in capsys.readouterr().err
    assert main(["verify", str(tmp_path / "missing.xlsx")]) == 2


def _input_book(path, record, header="accel [g]"):
    book = openpyxl.Workbook()
    ws = book.active
    ws.title = "Ground motion"
    ws["A1"], ws["B1"] = "time", header
    for i, value in enumerate(record.accel_in(record.unit).tolist(), start=2):
        ws.cell(row=i, column=1, value=(i - 2) * record.dt)
        ws.cell(row=i, column=2, value=value)
    book.save(path)
    return f"'Ground motion'!B1:B{record.n + 20}"  # generous range: header and trailing blanks are skipped


def test_fill_with_record_option_leaves_input_byte_identical(tmp_path, capsys):
    """fill reads SHEET!RANGE, writes a verifiable workbook, and the input file keeps its exact bytes."""
    record = synthetic_record(3.0, 0.01, pga=0.2, seed=12)
    source = tmp_path / "input.xlsx"
    reference = _input_book(source, record)
    digest = hashlib.sha256(source.read_bytes()).hexdigest()
    stamp = os.stat(source).st_mtime_ns
    out = tmp_path / "out.xlsx"
    code = main(["fill", str(source), "--out", str(out), "--record", reference, "--dt", "0.01", "--unit", "g",
                 "--dampings", "0.05", "--periods", "0.1,4,12", "--oscillator", "tank:0.9:0.02",
                 "--oscillator", "frame:0.5:0.05:4"])  # fmt: skip
    assert code == 0, capsys.readouterr().err
    assert hashlib.sha256(source.read_bytes()).hexdigest() == digest
    assert os.stat(source).st_mtime_ns == stamp
    assert main(["verify", str(out)]) == 0
    book = openpyxl.load_workbook(out)
    assert book["Peaks"]["A5"].value == "tank"
    # 2 oscillators: the yielding table's title on row 8, its one row (frame, R = 4) on row 10
    assert [c.value for c in book["Peaks"][10][:4]] == ["frame", 0.5, 0.05, 4]
    assert "input.xlsx 'Ground motion'!B1" in book["Audit"]["B12"].value or "Ground motion" in str(
        [c.value for c in book["Audit"]["B"]]
    )


def test_fill_says_which_steps_the_verification_sheet_replays(tmp_path, capsys):
    """A record longer than the 2,000-step window: the summary names the replayed steps, not 'every step'."""
    record = synthetic_record(30.0, 0.01, pga=0.2, seed=5)  # 3,001 samples: record steps 0-3000
    source = tmp_path / "long.xlsx"
    reference = _input_book(source, record)
    code = main(["fill", str(source), "--out", str(tmp_path / "o.xlsx"), "--record", reference, "--dt", "0.01",
                 "--unit", "g", "--periods", "0.2,2,5"])  # fmt: skip
    out = capsys.readouterr().out
    assert code == 0
    line = next(line for line in out.splitlines() if "Verification sheet" in line)
    assert "every step" not in line and " of 0-3000 (a window around the peaks)" in line, line
    first, last = (int(v) for v in line.split("record steps ")[1].split(" of ")[0].split("-"))
    assert last - first == 2000  # the window: VERIFY_WINDOW steps past its first row


def test_fill_reads_named_input_cells(tmp_path, capsys):
    """With gs_in_* defined names in the input workbook, fill needs no record options."""
    from openpyxl.workbook.defined_name import DefinedName

    record = synthetic_record(2.0, 0.02, pga=150.0, unit="cm/s2", seed=2)
    source = tmp_path / "named.xlsx"
    _input_book(source, record)
    book = openpyxl.load_workbook(source)
    ws = book["Ground motion"]
    ws["D1"], ws["D2"] = 0.02, "gal"
    for name, ref in (("gs_in_record", f"$B$1:$B${record.n + 1}"), ("gs_in_dt", "$D$1"), ("gs_in_unit", "$D$2")):
        book.defined_names[name] = DefinedName(name, attr_text=f"'Ground motion'!{ref}")
    book.save(source)
    out = tmp_path / "out.xlsx"
    assert main(["fill", str(source), "--out", str(out), "--periods", "0.2,2,5"]) == 0, capsys.readouterr().err
    result = openpyxl.load_workbook(out)
    assert result["Record"]["B4"].value == "gal"


def test_fill_reports_a_bad_cell_in_one_line(tmp_path, capsys):
    """An interior text cell in the record range exits 2 with a one-line message naming the row."""
    record = synthetic_record(1.0, 0.01, seed=1)
    source = tmp_path / "bad.xlsx"
    reference = _input_book(source, record)
    book = openpyxl.load_workbook(source)
    book["Ground motion"]["B30"] = "n/a"
    book.save(source)
    out = tmp_path / "o.xlsx"
    assert main(["fill", str(source), "--out", str(out), "--record", reference, "--dt", "0.01", "--unit", "g"]) == 2
    err = capsys.readouterr().err.strip()
    assert err == "groundstep fill: error: row 30 of the acceleration range holds the text 'n/a', not a number"
    assert not out.exists()


def test_fill_never_assumes_the_record_unit(tmp_path, capsys):
    """Without a unit cell or --unit, fill stops (a wrong unit would scale every result)."""
    source = tmp_path / "no_unit.xlsx"
    reference = _input_book(source, synthetic_record(1.0, 0.01, seed=1))
    assert main(["fill", str(source), "--out", str(tmp_path / "o.xlsx"), "--record", reference, "--dt", "0.01"]) == 2
    err = capsys.readouterr().err.strip()
    assert err == ("groundstep fill: error: the record unit is not given: fill the unit cell (input_unit) "
                   "or pass --unit (g, m/s2, cm/s2, gal, mm/s2, in/s2, ft/s2)")


def test_fill_refuses_to_write_over_its_input(tmp_path, capsys):
    """--out equal to the input is refused (exit 2); the input is never overwritten."""
    source = tmp_path / "in.xlsx"
    _input_book(source, synthetic_record(1.0, 0.01, seed=1))
    before = source.read_bytes()
    assert main(["fill", str(source), "--out", str(source), "--force", "--record", "'Ground motion'!B1:B90", "--dt", "0.01"]) == 2
    assert "the input is never overwritten" in capsys.readouterr().err
    assert source.read_bytes() == before


def test_debug_shows_the_traceback(tmp_path):
    """Without --debug an error is one line; with --debug the traceback is printed."""
    missing = tmp_path / "nope.xlsx"
    plain = _run("fill", missing, "--out", tmp_path / "o.xlsx")
    assert plain.returncode == 2 and "Traceback" not in plain.stderr
    assert plain.stderr.strip() == f"groundstep fill: error: input workbook {str(missing)!r} does not exist"
    debug = _run("fill", missing, "--out", tmp_path / "o.xlsx", "--debug")
    assert debug.returncode != 0 and "Traceback" in debug.stderr


def test_spectrum_many_files_in_parallel(tmp_path):
    """Two workers write one CSV and JSON per file equal to elastic_spectrum; progress goes to stderr."""
    files = []
    for seed in range(3):
        path = tmp_path / f"rec{seed}.txt"
        np.savetxt(path, synthetic_record(3.0, 0.01, pga=0.1, seed=seed).accel_in("g"), fmt="%.8g")
        files.append(path)
    (tmp_path / "bad.txt").write_text("1\n2\nthree\n")
    out_dir = tmp_path / "out"
    out_dir.mkdir()
    result = _run("spectrum", *files, tmp_path / "bad.txt", "--dt", "0.01", "--unit", "g", "--out-dir", out_dir,
                  "--workers", "2", "--dampings", "0.02,0.05", "--periods", "0.05,5,20")  # fmt: skip
    assert result.returncode == 2  # one bad file
    assert "bad.txt: line 3 is not numeric" in result.stderr
    assert "[4/4: 3 done, 1 failed; " in result.stderr  # progress, one line per file when stderr is not a terminal
    assert "3 of 4 records written" in result.stdout
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        record = Record.from_text(files[1], 0.01, "g")
        spectrum = elastic_spectrum(record, np.geomspace(0.05, 5, 20), [0.02, 0.05])
    rows = list(csv.reader((out_dir / "rec1.spectrum.csv").open()))
    assert rows[0][:5] == ["period [s]", "SD zeta=0.02 [m]", "PSV zeta=0.02 [m/s]", "PSA zeta=0.02 [g]", "SA zeta=0.02 [g]"]
    table = np.array(rows[1:], dtype=float)
    # values are written with repr (17 digits): equal to the core API within rounding of the period grid
    assert_allclose(table[:, 7], spectrum.psa[1] / 9.80665, rtol=1e-12)
    json_run = _run("spectrum", files[0], "--dt", "0.01", "--unit", "g", "--out-dir", out_dir, "--format", "json", "--quiet")
    # only plausibility notes on stderr: the 3 s record is shorter than the longest periods
    assert json_run.returncode == 0
    assert all(line.startswith("groundstep: note: rec0.txt: ") for line in json_run.stderr.splitlines())
    data = json.loads((out_dir / "rec0.spectrum.json").read_text())
    assert data["units"] == {"sd": "m", "psv": "m/s", "psa": "g", "sa": "g"} and data["caution"] == lay.CAUTION
    again = _run("spectrum", files[0], "--dt", "0.01", "--unit", "g", "--out-dir", out_dir, "--format", "json")
    assert again.returncode == 2 and "exists; pass --force" in again.stderr


def test_warm_reports_first_call_time(capsys):
    """warm calls the kernels once and prints the time it took."""
    assert main(["warm"]) == 0
    out = capsys.readouterr().out
    assert "first calls took" in out and "elastic_spectrum" in out


#: A fresh interpreter that warms every kernel and prints numba's cache counts per kernel (hits, misses).
_CACHE_PROBE = """
import json, sys
from numba.core.dispatcher import Dispatcher
from groundstep.core import warm_up
warm_up()
kernels = {}
for module in list(sys.modules.values()):
    if getattr(module, "__name__", "").startswith("groundstep."):
        for kernel in vars(module).values():
            if isinstance(kernel, Dispatcher):
                kernels[kernel.py_func.__module__ + "." + kernel.__name__] = kernel
print(json.dumps({name: [sum(k.stats.cache_hits.values()), sum(k.stats.cache_misses.values())]
                  for name, k in kernels.items()}))
"""


def test_two_process_warm_leaves_nothing_to_compile(tmp_path):
    """warm on an empty numba cache (two processes) stores every kernel: a fresh process's warm-up compiles none."""
    env = dict(os.environ, NUMBA_CACHE_DIR=str(tmp_path / "numba-cache"))
    warm = subprocess.run([sys.executable, "-m", "groundstep.addin", "warm"], capture_output=True, text=True,
                          env=env, timeout=900)  # fmt: skip
    assert warm.returncode == 0, warm.stderr
    assert "rotd_spectrum (second process)" in warm.stdout, warm.stdout
    assert "ductility_spectrum (second process)" in warm.stdout, warm.stdout
    probe = subprocess.run([sys.executable, "-c", _CACHE_PROBE], capture_output=True, text=True, env=env, timeout=900)
    assert probe.returncode == 0, probe.stderr
    counts = json.loads(probe.stdout.strip().splitlines()[-1])
    # numba's dispatcher statistics: a miss is a compile, a hit a load from the on-disk cache
    assert {name: c for name, c in counts.items() if c[1]} == {}
    loaded = {name.rsplit(".", 1)[0] for name, (hits, _) in counts.items() if hits}
    assert {"groundstep.core._kernels", "groundstep.core._kernels_rotd", "groundstep.core._kernels_inelastic"} <= loaded


_PREPARED_PROBE = """
import json, warnings
import numpy as np
from groundstep.core import _warm, _kernels_inelastic as kernels, Record, ductility_spectrum, elastic_spectrum
_warm._yielding_kernels()
record = Record(np.sin(np.linspace(0.0, 6.0, 64)), dt=0.02, unit="m/s2")
elastic_spectrum(record, [0.3], [0.05])
names = ("peaks", "elastic_trace", "safe_blocks")
before = {name: len(getattr(kernels, name).signatures) for name in names}
warnings.simplefilter("ignore")
ductility_spectrum(record, [0.3, 0.6], [1.0, 2.0])
print(json.dumps([before, {name: len(getattr(kernels, name).signatures) for name in names}]))
"""


def test_second_process_prepares_the_signatures_ductility_spectrum_uses(tmp_path):
    """The yielding kernels compiled before the wait are the ones ductility_spectrum then calls (no new signature)."""
    env = dict(os.environ, NUMBA_CACHE_DIR=str(tmp_path / "numba-cache"))
    probe = subprocess.run([sys.executable, "-c", _PREPARED_PROBE], capture_output=True, text=True, env=env, timeout=900)
    assert probe.returncode == 0, probe.stderr
    before, after = json.loads(probe.stdout.strip().splitlines()[-1])
    assert before == after == {"peaks": 1, "elastic_trace": 1, "safe_blocks": 1}


def test_warm_up_makes_the_second_process_calls_itself_when_that_process_fails(monkeypatch):
    """warm_up(processes=2) whose second interpreter exits with an error makes those calls in this process."""
    from groundstep.core import _warm

    monkeypatch.setattr(_warm, "_indexed", lambda modules: False)  # as on a cold cache: start the second process
    monkeypatch.setattr(sys, "executable", shutil.which("false") or "/bin/false")  # an interpreter that fails
    timings = _warm.warm_up(only=["elastic_spectrum", "rotd_spectrum"], processes=2)
    # the second process's calls (the exact maps, RotD) follow this process's own, as when it runs them
    assert list(timings) == ["elastic_spectrum (Newmark)", "elastic_spectrum (threaded)", "elastic_spectrum (exact)",
                             "rotd_spectrum", "total"]  # fmt: skip
    with pytest.raises(ValueError, match="`processes` must be 1 or 2, got 3"):
        _warm.warm_up(processes=3)


def test_warm_up_starts_no_second_process_on_one_cpu(monkeypatch):
    """warm_up(processes=2) on a single CPU makes every call in this process (a second one would only compete)."""
    from groundstep.core import _warm

    monkeypatch.setattr(_warm, "_indexed", lambda modules: False)  # as on a cold cache
    monkeypatch.setattr(_warm, "_usable_cpus", lambda: 1)
    assert list(_warm.warm_up(only=["rotd_spectrum"], processes=2)) == ["rotd_spectrum", "total"]


def test_templates_command_writes_templates(tmp_path, capsys):
    """templates DIR writes the calculation-package templates (module of the worksheet-functions work)."""
    importlib.import_module("groundstep.addin.package.template")
    assert main(["templates", str(tmp_path / "t")]) == 0
    assert any(p.suffix in (".xlsx", ".xlsm") for p in (tmp_path / "t").iterdir())


@pytest.mark.parametrize(
    ("value", "message"),
    [
        ("tank:1.0:0.02:0", "--oscillator 'tank:1.0:0.02:0': the reduction factor R must be > 0, got 0"),
        ("tank:1.0::3", "--oscillator 'tank:1.0::3': give LABEL:PERIOD, LABEL:PERIOD:DAMPING or LABEL:PERIOD:DAMPING:R"),
        ("tank:1:0.02:3:9", "give LABEL:PERIOD, LABEL:PERIOD:DAMPING or LABEL:PERIOD:DAMPING:R"),
    ],
)
def test_bad_oscillator_option_is_one_line(value, message, tmp_path, capsys):
    """A bad --oscillator (R <= 0, a missing damping before R, too many parts) exits 2 naming the option."""
    assert main(["demo", str(tmp_path / "d.xlsx"), "--oscillator", value]) == 2
    err = capsys.readouterr().err
    assert message in err and err.strip().count("\n") == 0
    assert not (tmp_path / "d.xlsx").exists()


def test_bad_option_values_are_one_line(capsys, tmp_path):
    """Malformed --periods and --workers give exit 2 with the option named."""
    path = tmp_path / "r.txt"
    path.write_text("0\n1\n0\n")
    assert main(["spectrum", str(path), "--dt", "0.01", "--unit", "g", "--periods", "1,2", "--out-dir", str(tmp_path)]) == 2
    assert "--periods '1,2': give SHORTEST,LONGEST,COUNT" in capsys.readouterr().err
    assert main(["spectrum", str(path), "--dt", "0.01", "--unit", "g", "--workers", "0"]) == 2
    assert "--workers must be >= 1, got 0" in capsys.readouterr().err


def test_spectrum_never_assumes_the_unit(capsys, tmp_path):
    """Without --unit, spectrum stops and names the option (a cm/s2 file once came out as PGA 336 g)."""
    path = tmp_path / "r.txt"
    path.write_text("0\n1\n0\n")
    assert main(["spectrum", str(path), "--dt", "0.01", "--out-dir", str(tmp_path)]) == 2
    err = capsys.readouterr().err
    assert "give the acceleration unit of the files with --unit" in err
    assert not (tmp_path / "r.spectrum.csv").exists()


def test_fill_reads_the_calculation_package_template(tmp_path, capsys):
    """A filled-in copy of the template (its named input cells) gives a verifiable result workbook."""
    templates = importlib.import_module("groundstep.addin.package.template")
    record = synthetic_record(4.0, 0.01, pga=0.25, seed=31)
    book = templates.build_calculation_package()

    def cell(name):
        sheet, ref = templates.INPUT_NAMES[name].split("!")
        return book[sheet][ref.replace("$", "").split(":")[0]]

    cell("input_dt").value = 0.01
    cell("input_unit").value = "g"
    cell("input_record_name").value = "paste test"
    cell("input_project").value = "Pier 4 retrofit (invented)"
    r_cells = book["Peaks"]["I7:I18"]  # input_peak_reduction_factors, beside the template's 12 periods
    assert templates.INPUT_NAMES["input_peak_reduction_factors"] == "Peaks!$I$7:$I$18"
    r_cells[1][0].value = None  # the second oscillator (0.2 s) stays elastic only
    r_cells[2][0].value = 2.5
    first = cell("input_record")
    for i, value in enumerate(record.accel_in("g").tolist(), start=1):
        book[first.parent.title].cell(row=first.row + i, column=first.column, value=value)
    source = tmp_path / "package.xlsx"
    book.save(source)
    digest = hashlib.sha256(source.read_bytes()).hexdigest()
    out = tmp_path / "result.xlsx"
    assert main(["fill", str(source), "--out", str(out)]) == 0, capsys.readouterr().err
    assert hashlib.sha256(source.read_bytes()).hexdigest() == digest
    assert main(["verify", str(out)]) == 0
    result = openpyxl.load_workbook(out)
    assert result["Summary"]["B5"].value == "Pier 4 retrofit (invented)"
    assert result["Summary"]["B12"].value == "paste test"
    periods = [row[0].value for row in result["Spectra"]["A5:A45"]]  # the template's 41 periods, T = 0 kept
    assert periods[0] == 0 and periods[1] == 0.02 and len(periods) == 41
    # T = 0 is a rigid oscillator: PSA = PGA (closed form: u = 0 relative, total acceleration = ground's)
    psa_at_zero = next(c for c in result["Spectra"][4] if result["Spectra"].cell(4, c.column).value and
                       str(result["Spectra"].cell(4, c.column).value).startswith("PSA")).column  # fmt: skip
    assert result["Spectra"].cell(5, psa_at_zero).value == pytest.approx(np.max(np.abs(record.accel_in("g"))), rel=1e-15)
    # R read from the filled template: 12 oscillators, 11 with R (the template's 4 except the two edits)
    names = result.defined_names
    sheet, ref = names["gs_yielding_table_reduction_factor"].attr_text.split("!")
    factors = [row[0].value for row in result[sheet.strip("'")][ref.replace("$", "")]]
    assert factors == [4, 2.5] + [4] * 9
    sheet, ref = names["gs_yielding_table_period"].attr_text.split("!")
    assert [row[0].value for row in result[sheet.strip("'")][ref.replace("$", "")]][:2] == [0.1, 0.3]


def test_fill_reports_a_bad_reduction_factor_cell(tmp_path, capsys):
    """A text or negative R cell (gs_in_oscillator_reduction_factors) exits 2 naming its row."""
    from openpyxl.workbook.defined_name import DefinedName

    record = synthetic_record(1.0, 0.01, pga=0.2, seed=3)
    for bad, message in (("four", "row 2 of the oscillator reduction factors holds the text 'four', not a number"),
                         (-2.0, "row 2 of the oscillator reduction factors holds -2; R = peak elastic force / yield "
                                "force must be > 0 (leave the cell blank for an elastic-only oscillator)")):  # fmt: skip
        source = tmp_path / "named.xlsx"
        _input_book(source, record)
        book = openpyxl.load_workbook(source)
        ws = book["Ground motion"]
        ws["D1"], ws["E1"], ws["D2"], ws["E2"], ws["D3"] = "T [s]", "R", 0.5, bad, 1.0
        for name, ref in (("gs_in_oscillator_periods", "$D$1:$D$3"), ("gs_in_oscillator_reduction_factors", "$E$1:$E$3")):
            book.defined_names[name] = DefinedName(name, attr_text=f"'Ground motion'!{ref}")
        book.save(source)
        code = main(["fill", str(source), "--out", str(tmp_path / "o.xlsx"), "--record", "'Ground motion'!B1:B200",
                     "--dt", "0.01", "--unit", "g", "--periods", "0.2,2,5"])  # fmt: skip
        assert code == 2
        assert capsys.readouterr().err.strip() == f"groundstep fill: error: {message}"
