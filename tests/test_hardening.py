"""Hostile and absurd inputs: fuzzed worksheet functions and core API, plus one regression per defect class.

The fuzz tests run the "quick" hypothesis profile by default (150 examples
per target, tests/conftest.py); ``HYPOTHESIS_PROFILE=long`` or
``python benchmarks/fuzz_long.py`` runs 3,000 and prints the outcome table
of DEVELOPERS.md.
"""

from __future__ import annotations

import io
import os
import random
import signal
import subprocess
import sys
import threading
import time
import warnings
import zipfile
from pathlib import Path

import numpy as np
import openpyxl
import pytest
from fuzz_cases import classify_cell_result, classify_core_call, core_calls, worksheet_arguments
from hypothesis import given

from groundstep.addin import functions as sheet
from groundstep.addin.cli.main import main
from groundstep.addin.common import ERROR_PREFIX, as_text, remove_stale_temporaries, write_atomically
from groundstep.addin.result import guard
from groundstep.addin.result.render import Formula
from groundstep.addin.worksheet import cache
from groundstep.addin.worksheet.registry import FUNCTIONS
from groundstep.core import Record, collect_warnings, elastic_spectrum, inelastic_response, linear_response
from groundstep.core.budget import DEFAULT_MAX_WORK, LimitError, work_budget
from groundstep.core.synthetic import synthetic_record

ROOT = Path(__file__).resolve().parents[1]


# ---- fuzzing ------------------------------------------------------------------------------------


@pytest.mark.parametrize("name", sorted(FUNCTIONS))
def test_fuzzed_worksheet_calls_answer_or_explain(name):
    """Any cells a spreadsheet can pass give a finite answer or a STEP error naming the rule, never an escape."""

    @given(worksheet_arguments(name))
    def check(arguments):
        with warnings.catch_warnings():
            warnings.simplefilter("error")  # no RuntimeWarning may leak out of a worksheet function
            result = FUNCTIONS[name].function(*arguments)
        assert classify_cell_result(result) in {"answered", "message", "over budget"}, result

    check()


@given(core_calls())
def test_fuzzed_core_calls_raise_only_documented_errors(case):
    """Public core functions give finite results or ValueError/TypeError/ConvergenceError (finite residual)."""
    text, call = case

    def quiet():
        with collect_warnings():
            return call()

    assert classify_core_call(quiet) in {"answered", "message", "over budget"}, text


# ---- worksheet functions: regressions of the first campaign -------------------------------------

RECORD_CELLS = [[0.0], [0.1], [-0.2], [0.15], [0.0], [-0.05]]


def test_huge_integer_cell_is_named():
    """An integer beyond float64 in the time-step cell is named, not an 'unexpected OverflowError'."""
    result = sheet.STEP_PEAK(RECORD_CELLS, 10**400, "g", 0.5)
    assert result.startswith(ERROR_PREFIX) and "the time step holds an integer of 401 digits" in result


def test_tiny_step_and_period_give_a_message():
    """dt = 1e-9 s with T = 1e-9 s is answered or refused with a message, never a ZeroDivisionError."""
    result = sheet.STEP_PEAK(RECORD_CELLS, 1e-9, "g", 1e-9)
    assert classify_cell_result(result) in {"answered", "message"}, result


def test_history_with_absurd_step_is_refused():
    """STEP_HISTORY with dt = 1.7e308 s states the accepted range of the time step."""
    result = sheet.STEP_HISTORY(RECORD_CELLS, 1.7e308, "g", 0.5)
    assert isinstance(result, str) and "must lie in [1e-09, 1000] s" in result


def test_record_of_1e308_is_refused_in_a_cell():
    """A 20,000-sample record of 1e308 is refused with the bound, not answered PSV 0.0."""
    result = sheet.STEP_PEAK([[1e308]] * 20_000, 0.01, "g", 1.0, 0.05, "PSV")
    assert isinstance(result, str) and "1e+150 m/s²" in result


def test_ductility_spectrum_with_absurd_ductility_is_not_infinite():
    """A 1e300 target ductility gives a finite table or a message, never inf in a cell."""
    record = synthetic_record(2.0, 0.01, pga=0.3, seed=4)
    cells = [[float(v)] for v in record.accel_in("g")]
    result = sheet.STEP_DUCTILITY_SPECTRUM(cells, 0.01, "g", [[0.5]], [[1e300]])
    assert classify_cell_result(result) in {"answered", "message"}, result


def test_cell_messages_never_advise_max_step_ratio():
    """A stiff oscillator's refusal in a cell names what a cell user can do, not the `max_step_ratio` keyword."""
    result = sheet.STEP_PEAK(RECORD_CELLS, 0.01, "g", 1e-8, 0.05, "PSA", "exact")
    assert result.startswith(ERROR_PREFIX) and "sub-steps" in result and "max_step_ratio" not in result


def test_worksheet_budget_refuses_a_huge_call_with_advice():
    """A call beyond the worksheet budget is refused up front, naming the budget and the command line."""
    cells = [[0.01 * ((i * 7919) % 13 - 6)] for i in range(20_000)]
    periods = [[0.0011 + 1e-7 * i] for i in range(2_000)]  # 20,000 samples x 2,000 oscillators x ~90 sub-steps
    result = sheet.STEP_SPECTRUM(cells, 0.01, "g", periods)
    assert isinstance(result, str) and "work budget" in result and "command line" in result
    assert "max_step_ratio" not in result


def test_long_text_is_quoted_as_an_excerpt():
    """A 100,000-character text cell is quoted in at most a short excerpt."""
    result = sheet.STEP_PEAK(RECORD_CELLS, 0.01, "x" * 100_000, 0.5)
    assert result.startswith(ERROR_PREFIX) and len(result) < 400


# ---- core API -----------------------------------------------------------------------------------


def test_record_refuses_samples_beyond_the_bound():
    """Samples of 1e308 g are refused before conversion, with the 1e150 m/s² bound stated."""
    with pytest.raises(LimitError, match=r"beyond the bound of 1e\+150 m/s²"):
        Record([1e308, 0.0, 1.0], 0.01, "g")


@pytest.mark.parametrize("dt", [1e-300, 1e-10, 1e4, 1.7e308])
def test_record_refuses_time_steps_outside_the_range(dt):
    """dt outside [1e-9, 1e3] s is refused with the range (no ZeroDivisionError or overflow later)."""
    with pytest.raises(ValueError, match=r"`dt` must lie in \[1e-09, 1000\] s"):
        Record([0.0, 1.0], dt, "m/s2")


def test_initial_displacement_beyond_the_bound_is_refused():
    """An initial displacement of 1.7e308 m is refused, not integrated into NaN."""
    record = Record([0.0, 0.1, 0.0], 0.01, "g")
    with pytest.raises(ValueError, match=r"`initial_displacement` must be within ±1e\+150 m"):
        linear_response(record, 0.5, initial_displacement=1.7e308)


@pytest.mark.parametrize(
    ("keyword", "value", "pattern"),
    [("tolerance", 1e-300, r"`tolerance` must lie in \[1e-12, 0.01\)"),
     ("max_iterations", 10**6, r"`max_iterations` must be <= 100")],
)  # fmt: skip
def test_newton_settings_outside_a_sane_range_are_refused(keyword, value, pattern):
    """A tolerance float64 cannot reach and an iteration cap of a million are refused up front (no hang)."""
    record = synthetic_record(1.0, 0.01, pga=0.3, seed=3)
    with pytest.raises(ValueError, match=pattern):
        inelastic_response(record, 0.5, reduction_factor=2.0, **{keyword: value})


def test_work_budget_refuses_and_can_be_raised():
    """A spectrum beyond the budget states cost, budget and the way to raise it; raising it answers."""
    record = synthetic_record(2.0, 0.01, pga=0.3, seed=3)  # 201 samples x 10 oscillators x 1 sub-step = 2010
    with work_budget(1000.0), pytest.raises(LimitError, match=r"costs 2.01e\+03 .* beyond the work budget of 1e\+03"):
        elastic_spectrum(record, np.linspace(0.5, 2.0, 10))
    with work_budget(1e4):
        assert elastic_spectrum(record, np.linspace(0.5, 2.0, 10)).psa.shape == (1, 10)
    assert DEFAULT_MAX_WORK == 2e10


def test_work_budget_is_per_thread():
    """A budget set in one thread does not change another thread's."""
    from groundstep.core.budget import current_budget

    seen = []
    with work_budget(5.0):
        worker = threading.Thread(target=lambda: seen.append(current_budget()))
        worker.start()
        worker.join()
    assert seen == [DEFAULT_MAX_WORK]


# ---- untrusted workbooks ------------------------------------------------------------------------


def _input_workbook(path: Path, values) -> None:
    book = openpyxl.Workbook()
    book.active.title = "Record"
    for row, value in enumerate(values, start=2):
        book.active.cell(row=row, column=2, value=value)
    book.save(path)


def test_zip_bomb_is_refused_before_parsing(tmp_path, capsys):
    """A sheet part inflating 1000 to 1 is refused by fill and verify with exit 2 and one line."""
    bomb = tmp_path / "bomb.xlsx"
    _input_workbook(bomb, [0.1, 0.2])
    with zipfile.ZipFile(bomb, "a", zipfile.ZIP_DEFLATED) as archive:
        archive.writestr("xl/worksheets/sheet9.xml", b" " * (50 * 2**20))  # 50 MiB of blanks -> ~50 kB
    for argv in (["fill", str(bomb), "--out", str(tmp_path / "o.xlsx"), "--record", "Record!B2:B3", "--dt", "0.01"],
                 ["verify", str(bomb)]):  # fmt: skip
        assert main(argv) == 2
        err = capsys.readouterr().err.strip()
        assert "compressed" in err and "to 1" in err and len(err.splitlines()) == 1


def test_package_rows_beyond_the_format_are_refused(tmp_path):
    """A sheet part declaring more rows than the xlsx format holds is refused by the streaming count."""
    path = tmp_path / "rows.xlsx"
    _input_workbook(path, [0.1, 0.2])
    with zipfile.ZipFile(path, "a", zipfile.ZIP_STORED) as archive:
        archive.writestr("xl/worksheets/sheet9.xml", b"<row>" * 200)
    with pytest.raises(guard.UnsafeWorkbook, match="more than 100 rows"):
        guard.check_package(path, guard.PackageLimits(max_rows=100))


def test_openpyxl_parses_through_defusedxml(tmp_path, capsys):
    """openpyxl uses defusedxml, and a workbook declaring an entity is refused with exit 2, not 'internal error'."""
    assert openpyxl.DEFUSEDXML is True
    path = tmp_path / "entity.xlsx"
    _input_workbook(path, [0.1, 0.2])
    with zipfile.ZipFile(path) as archive:
        parts = {name: archive.read(name) for name in archive.namelist()}
    parts["xl/workbook.xml"] = parts["xl/workbook.xml"].replace(
        b"?>", b'?><!DOCTYPE x [<!ENTITY a "aaaaaaaaaa"><!ENTITY b "&a;&a;&a;&a;&a;">]>', 1
    )
    with zipfile.ZipFile(path, "w") as archive:
        for name, data in parts.items():
            archive.writestr(name, data)
    assert main(["verify", str(path)]) == 2
    assert "internal error" not in capsys.readouterr().err
    assert main(["fill", str(path), "--out", str(tmp_path / "o.xlsx"), "--record", "Record!B2:B3", "--dt", "0.01"]) == 2


def test_formula_without_saved_value_asks_to_open_and_save(tmp_path, capsys):
    """Formula cells a program wrote without values get a message to calculate and save the file first."""
    path = tmp_path / "formulas.xlsx"
    _input_workbook(path, [0.1, "=B2*2", "=B2*3"])
    assert main(["fill", str(path), "--out", str(tmp_path / "o.xlsx"), "--record", "Record!B2:B4", "--dt", "0.01", "--unit", "g"]) == 2
    assert "open the file in a spreadsheet" in capsys.readouterr().err


def test_whole_column_range_reads_only_the_used_area(tmp_path, capsys):
    """fill --record Record!B2:B1048576 reads the used rows only, and the input keeps bytes and mtime."""
    path = tmp_path / "input.xlsx"
    record = synthetic_record(2.0, 0.01, pga=0.2, seed=8)
    _input_workbook(path, [float(v) for v in record.accel_in("g")])
    before, stamp = path.read_bytes(), os.stat(path).st_mtime_ns
    out = tmp_path / "out.xlsx"
    code = main(["fill", str(path), "--out", str(out), "--record", "Record!B2:B1048576", "--dt", "0.01", "--unit", "g",
                 "--periods", "0.1,2,5", "--dampings", "0.05"])  # fmt: skip
    assert code == 0, capsys.readouterr().err
    assert path.read_bytes() == before and os.stat(path).st_mtime_ns == stamp
    assert openpyxl.load_workbook(out)["Record"].max_row < 1000


# ---- formula injection --------------------------------------------------------------------------

HOSTILE_TITLES = ("=HYPERLINK(\"x\")", "+1+2", "-3+4", "@SUM(A1)", "\tcmd", "\rcmd")


def test_text_from_inputs_is_written_as_text(tmp_path):
    """Project texts starting with = + - @ tab CR are text cells; the layout's own formulas stay formulas."""
    from groundstep.addin.result.content import PROJECT_KEYS, Oscillator, ReportSettings, build_report
    from groundstep.addin.result.offline import write_report

    record = synthetic_record(1.0, 0.01, pga=0.2, seed=5, name="=cmd|'/c calc'!A0")
    settings = ReportSettings(
        periods=(0.2, 1.0), dampings=(0.05,),
        oscillators=(Oscillator("-frame", 0.5, 0.05), Oscillator(HOSTILE_TITLES[-1], 1.0, 0.05)),
        project=tuple(zip(PROJECT_KEYS, HOSTILE_TITLES[:-1])),
    )  # fmt: skip
    with collect_warnings():
        path = write_report(build_report(record, settings, command="test"), tmp_path / "r.xlsx")
    book = openpyxl.load_workbook(path)
    kinds = {}
    for ws in book.worksheets:
        for row in ws.iter_rows():
            for cell in row:
                if isinstance(cell.value, str):
                    kinds.setdefault(cell.data_type, []).append(cell.value)
    assert not any(v.lstrip().startswith(("=cmd", "=HYPERLINK", "+1", "@SUM")) for v in kinds.get("f", []))
    assert any(v.startswith("=MAX(") for v in kinds["f"])  # the Verification sheet's own formulas
    assert {"+1+2", "-3+4", "@SUM(A1)", "-frame"} <= set(kinds["s"])


def test_live_and_csv_text_is_quote_prefixed():
    """Text for the live writer and CSV starting with a formula character gets Excel's quote prefix; numbers stay."""
    assert [as_text(t) for t in HOSTILE_TITLES] == ["'" + t for t in HOSTILE_TITLES]
    assert as_text(-1.5) == -1.5 and as_text("site A") == "site A"
    assert isinstance(Formula("=1"), str) and as_text(Formula("=1")) == "'=1"  # writers never pass Formula here


# ---- bounded memory and clear limits --------------------------------------------------------------


def test_record_text_limits_have_clear_messages(tmp_path):
    """UTF-16 text gets an encoding hint; a folder and a named pipe are named as such; a long line is cut."""
    utf16 = tmp_path / "u16.txt"
    utf16.write_text("0.1\n0.2\n0.3\n", encoding="utf-16")
    with pytest.raises(ValueError, match="looks UTF-16 encoded"):
        Record.from_text(utf16, dt=0.01)
    with pytest.raises(ValueError, match="is a folder"):
        Record.from_text(tmp_path, dt=0.01)
    pipe = tmp_path / "pipe"
    os.mkfifo(pipe)
    with pytest.raises(ValueError, match="named pipe"):
        Record.from_text(pipe, dt=0.01)
    with pytest.raises(ValueError) as caught:
        Record.from_text("0.1\n0.2\n" + "x" * 1_000_000 + "\n", dt=0.01)
    assert len(str(caught.value)) < 300


# ---- no data loss -------------------------------------------------------------------------------


def test_stale_temporaries_of_dead_writers_are_removed(tmp_path):
    """A temporary of a process that no longer runs is removed; one of a running process is kept."""
    target = tmp_path / "out.xlsx"
    dead = subprocess.run([sys.executable, "-c", "import os; print(os.getpid())"], capture_output=True, text=True)
    stale = tmp_path / f".out.xlsx.{dead.stdout.strip()}.abc123.tmp"
    alive = tmp_path / f".out.xlsx.{os.getppid()}.def456.tmp"
    stale.write_bytes(b"partial")
    alive.write_bytes(b"in progress")
    write_atomically(target, lambda p: p.write_bytes(b"new"))
    assert target.read_bytes() == b"new" and not stale.exists() and alive.exists()


def test_sigkill_while_writing_leaves_old_or_new_file(tmp_path):
    """Killing `groundstep demo` at random moments leaves no broken output; the next clean run succeeds."""
    out = tmp_path / "demo.xlsx"
    command = [sys.executable, "-c", "import sys; from groundstep.addin.cli import main; sys.exit(main())",
               "demo", str(out), "--force", "--periods", "0.1,2,20"]  # fmt: skip
    assert subprocess.run(command, capture_output=True).returncode == 0
    first = out.read_bytes()
    chooser = random.Random(10)  # seeded: the same kill moments every run
    killed_while_writing = 0
    for _ in range(4):
        earlier = set(tmp_path.glob(".demo.xlsx.*.tmp"))  # left by writers killed before this one
        process = subprocess.Popen(command, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        deadline = time.monotonic() + 60.0
        while process.poll() is None and not list(tmp_path.glob(".demo.xlsx.*.tmp")) and time.monotonic() < deadline:
            time.sleep(0.005)  # wait for the writer's temporary: the kill lands while the file is being written
        # the sheet writer takes tens of milliseconds on this small demo: kill within that window
        time.sleep(chooser.uniform(0.0, 0.01))
        before = set(tmp_path.glob(".demo.xlsx.*.tmp"))
        process.send_signal(signal.SIGKILL)
        process.wait()
        killed_while_writing += bool(set(tmp_path.glob(".demo.xlsx.*.tmp")) & before - earlier)  # its own temporary stays
        with zipfile.ZipFile(io.BytesIO(out.read_bytes())) as archive:  # old or new, and whole
            assert archive.testzip() is None
    assert killed_while_writing >= 1  # the test did kill writers mid-file (a killed writer leaves its temporary) ...
    assert subprocess.run(command, capture_output=True).returncode == 0
    assert out.read_bytes()[:2] == first[:2] == b"PK"
    assert not list(tmp_path.glob(".demo.xlsx.*.tmp"))  # ... which the next run removes
    assert remove_stale_temporaries(out) == []


# ---- concurrency and cache memory ---------------------------------------------------------------


def test_eight_threads_give_the_serial_answers():
    """STEP_PEAK from 8 threads on 8 different records equals the serial results; caches stay in bounds."""
    records = [[[float(v)] for v in synthetic_record(4.0, 0.01, pga=0.3, seed=s).accel_in("g")] for s in range(8)]
    cache.clear_all()
    serial = [sheet.STEP_PEAK(r, 0.01, "g", 0.5) for r in records]
    cache.clear_all()
    found = [None] * 8

    def work(index):
        for _ in range(5):
            found[index] = sheet.STEP_PEAK(records[index], 0.01, "g", 0.5)

    threads = [threading.Thread(target=work, args=(i,)) for i in range(8)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert found == serial and all(isinstance(v, float) for v in serial)
    for store in (cache.RECORDS, cache.RESULTS, cache.HISTORIES):
        assert store.max_bytes is not None and store.nbytes <= store.max_bytes


def test_cache_is_bounded_by_bytes():
    """A cache with room for 100 entries but 1 MB keeps at most two 400 kB arrays."""
    store = cache.LRUCache(100, max_bytes=1_000_000)
    for key in range(10):
        store.get_or_compute(key, lambda: np.zeros(50_000))  # 400 kB each
    assert len(store) == 2 and store.nbytes <= 1_000_000


@pytest.mark.parametrize(
    ("call", "pattern"),
    [
        (lambda r: elastic_spectrum(r, [0.05], max_step_ratio=5e-324), r"`max_step_ratio` must be >= 1e-09"),
        (lambda r: inelastic_response(Record([-1.83e-124] * 3, 0.02, "g"), 0.05, reduction_factor=1e300),
         r"yield force per unit mass .* not a positive"),  # 3.6e-123 m/s² / 1e300 underflows to 0
        (lambda r: linear_response(r, 0.3, 0.02, (1e-300, 0.5)), r"beta must be >= 1e-06"),
    ],
)
def test_long_campaign_findings_are_refused(call, pattern):
    """Cases the 3,000-example campaign found (underflowing ratio, strength, beta) are refused with the bound."""
    record = Record([-2.36, 0.02, 2.4, -1.0, 0.5], 0.01, "m/s2")
    with pytest.raises(ValueError, match=pattern):
        call(record)
