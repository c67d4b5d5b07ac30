"""Benchmark: a recalculation storm of 500 STEP_PEAK cells over one 20,000-sample record.

The sheet is 100 oscillators (periods 0.05-5 s, 5 % damping) x 5 quantities
(SD, SV, SA, PSV, PSA), each cell handing Python the whole record range
(a text heading, 20,000 samples, 500 blank cells below) as Excel does.

* cold:     caches emptied once, then the 500 calls (first recalculation)
* warm:     the same 500 calls again (recalculation of an unchanged sheet)
* uncached: caches emptied before every call (what each cell would cost
            without the caches: parse the range, run the oscillator)

Figures are the best of several runs, measured in this run. Run with
``python benchmarks/bench_functions.py``.
"""

from __future__ import annotations

import platform
import time

import numpy as np

from groundstep.addin.functions import STEP_PEAK
from groundstep.addin.worksheet import cache as _cache
from groundstep.core import __version__

SAMPLES = 20_000
DT = 0.005  # s
REPEATS = 3


def invented_record() -> list[list[object]]:
    """The record range as Excel passes it: heading, samples [g], trailing blanks."""
    rng = np.random.default_rng(2024)
    t = np.arange(SAMPLES) * DT
    envelope = np.minimum(t / 5.0, 1.0) * np.exp(-np.maximum(t - 20.0, 0.0) / 15.0)
    accel = 0.15 * envelope * rng.standard_normal(SAMPLES)
    return [["Accel [g]"]] + [[float(a)] for a in accel] + [[None]] * 500


def sheet_calls(cells):
    periods = np.geomspace(0.05, 5.0, 100)
    return [(cells, DT, "g", float(t), 0.05, q) for t in periods for q in ("SD", "SV", "SA", "PSV", "PSA")]


def run(calls, clear_each: bool) -> float:
    start = time.perf_counter()
    for args in calls:
        if clear_each:
            _cache.clear_all()
        value = STEP_PEAK(*args)
        if isinstance(value, str):
            raise RuntimeError(value)
    return time.perf_counter() - start


def main() -> None:
    cells = invented_record()
    calls = sheet_calls(cells)
    STEP_PEAK(cells, DT, "g", 1.0, 0.05, "SD")  # load the compiled kernels before timing
    cold, warm, uncached = [], [], []
    for _ in range(REPEATS):
        _cache.clear_all()
        cold.append(run(calls, clear_each=False))
        warm.append(run(calls, clear_each=False))
        uncached.append(run(calls, clear_each=True))
    n = len(calls)
    best = {"cold": min(cold), "warm": min(warm), "uncached": min(uncached)}
    print(f"groundstep {__version__}, Python {platform.python_version()}, {platform.machine()}")
    print(f"{n} STEP_PEAK calls over one {SAMPLES}-sample record, best of {REPEATS} runs")
    for label, seconds in best.items():
        print(f"  {label:9s} {seconds:8.3f} s in all, {1e3 * seconds / n:8.3f} ms per call")
    print(f"  uncached / cold: {best['uncached'] / best['cold']:.1f}x   cold / warm: {best['cold'] / best['warm']:.1f}x")


if __name__ == "__main__":
    main()
