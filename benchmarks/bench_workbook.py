"""Wall times of the result workbook: build, write, verify, and a LibreOffice round trip.

Run: python benchmarks/bench_workbook.py
Prints the best of several runs of each step for the demo record (2001
samples, 80 periods x 3 dampings, 5 oscillators) and their ratios.
"""

from __future__ import annotations

import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from _timing import best_of

from groundstep.addin.cli import main
from groundstep.addin.result.verify import verify_workbook

RUNS = 3


def main_bench() -> None:
    folder = Path(tempfile.mkdtemp(prefix="gs-bench-"))
    out = folder / "demo.xlsx"
    demo = best_of(lambda: main(["demo", str(out), "--force"]), RUNS)
    check = best_of(lambda: verify_workbook(out), RUNS)
    cold = time.perf_counter()
    subprocess.run([sys.executable, "-m", "groundstep.addin", "demo", str(folder / "cli.xlsx")], check=True,
                   capture_output=True)  # fmt: skip
    process = time.perf_counter() - cold
    print(f"demo (in process, best of {RUNS}):        {demo:7.3f} s")
    print(f"demo (fresh python process, one run):  {process:7.3f} s")
    print(f"verify (best of {RUNS}):                   {check:7.3f} s   ratio verify/demo {check / demo:5.2f}")
    soffice = shutil.which("soffice")
    if soffice:
        def round_trip():
            with tempfile.TemporaryDirectory() as profile:
                subprocess.run([soffice, f"-env:UserInstallation={Path(profile).as_uri()}", "--headless",
                                "--convert-to", "xlsx", "--outdir", str(folder / "calc"), str(out)],
                               check=True, capture_output=True)  # fmt: skip
        trip = best_of(round_trip, RUNS)
        print(f"LibreOffice recalculation round trip:  {trip:7.3f} s   ratio to demo {trip / demo:5.2f}")
    else:
        print("LibreOffice not installed: round trip not measured")
    shutil.rmtree(folder)


if __name__ == "__main__":
    main_bench()
