"""Wall time of ``groundstep suite``: 11 two-component records of 8,000 steps, 100 periods.

Run: python benchmarks/bench_suite.py
Prints the best of several runs (after one warm-up run) of the whole command
(reading 22 text files, RotD spectra, scaling, writing the workbook) and its
split: record reading, spectra and scaling (``build_suite``), workbook
writing (``write_report``); then ``groundstep verify`` of the result. Target:
the whole command under 2 s after warm-up. Records are invented
(``groundstep.core.synthetic_record``, seeds 1-22).
"""

from __future__ import annotations

import contextlib
import io
import tempfile
from pathlib import Path

import numpy as np
from _timing import best_of

from groundstep.addin.cli import main
from groundstep.addin.result.offline import write_report
from groundstep.addin.result.suite_content import SuiteRecord, SuiteSettings, build_suite
from groundstep.addin.result.verify import verify_workbook
from groundstep.core import Record, period_grid, synthetic_record

RUNS = 3
RECORDS, STEPS, DT, PERIODS = 11, 8000, 0.01, 100
TARGET_SECONDS = 2.0


def main_bench() -> None:
    folder = Path(tempfile.mkdtemp(prefix="gs-bench-suite-"))
    pairs = []
    for i in range(RECORDS):
        paths = []
        for c in (0, 1):
            record = synthetic_record(STEPS * DT, DT, pga=0.3, unit="g", seed=2 * i + c + 1)
            path = folder / f"r{i:02d}{'xy'[c]}.txt"
            np.savetxt(path, record.accel_in("g")[:STEPS])
            paths.append(str(path))
        pairs.append(paths)
    out = folder / "suite.xlsx"
    args = ["suite", *(",".join(p) for p in pairs), "--unit", "g", "--dt", str(DT), "--target",
            "ASCE7:sds=1.0,sd1=0.6,tl=8", "--period", "1.0", "--periods", f"0.02,10,{PERIODS}", "--out", str(out), "--force"]

    def command() -> None:
        with contextlib.redirect_stdout(io.StringIO()):
            assert main(args) == 0

    command()  # warm-up: numba kernels load from the cache, imports done
    whole = best_of(command, RUNS)
    records = []

    def read() -> None:
        records.clear()
        for i, (x, y) in enumerate(pairs):
            records.append(SuiteRecord(f"r{i}", x, Record.from_text(x, DT, "g"), y, Record.from_text(y, DT, "g")))

    reading = best_of(read, RUNS)
    settings = SuiteSettings("ASCE7", (("sds", 1.0), ("sd1", 0.6), ("tl", 8.0)),
                             tuple(float(p) for p in period_grid(0.02, 10.0, PERIODS)), preset="ASCE7", structure_period=1.0)
    reports = []
    spectra = best_of(lambda: reports.append(build_suite(records, settings)), RUNS)
    writing = best_of(lambda: write_report(reports[-1], folder / "split.xlsx", force=True), RUNS)
    check = best_of(lambda: verify_workbook(out), RUNS)
    print(f"groundstep suite: {RECORDS} two-component records x {STEPS} steps, {PERIODS} periods (best of {RUNS})")
    print(f"  whole command      {whole:6.3f} s   (target < {TARGET_SECONDS:g} s: {whole / TARGET_SECONDS:.2f} of it)")
    print(f"  reading 22 files   {reading:6.3f} s   ({reading / whole:.0%})")
    print(f"  spectra + scaling  {spectra:6.3f} s   ({spectra / whole:.0%})")
    print(f"  workbook writing   {writing:6.3f} s   ({writing / whole:.0%})")
    print(f"  verify             {check:6.3f} s   ({check / whole:.2f} x the command)")


if __name__ == "__main__":
    main_bench()
