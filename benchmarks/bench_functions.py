"""Benchmark: recalculation storms of 500 STEP_PEAK cells over one 20,000-sample record.

Each cell hands Python the whole record range as xlwings passes a range
argument of ours (``ndim=2``: a fresh list of one-cell rows per call; a text
heading, 20,000 samples, 500 blank cells below).

Sheets:

* "5 quantities": 100 oscillators (periods 0.05-5 s, 5 % damping) x SD, SV,
  SA, PSV, PSA
* "500 periods": 500 oscillators (periods 0.05-5 s), PSA

Figures:

* cold:     caches emptied once, then the 500 calls (first recalculation ever)
* edited:   one sample of the record changed, the 500 calls again (the
            recalculation after an edit: the periods are remembered)
* warm:     the same 500 calls again (recalculation of an unchanged sheet)
* uncached: caches emptied before every call
* former:   the former code path, inlined here: digest by marshal version 4
            plus SHA-256, one `linear_response` per oscillator

and the record digest alone (former: marshal version 4, current: version 2),
beside the cheapest C-level pass over the same cells (``sum(map(len, ...))``),
which no exact key can beat. Figures are the best of several runs, measured
in this run. Run with ``python benchmarks/bench_functions.py``.
"""

from __future__ import annotations

import hashlib
import marshal
import platform
import time
import warnings

import numpy as np

from groundstep.addin.functions import STEP_PEAK
from groundstep.addin.worksheet import cache as _cache
from groundstep.addin.worksheet import cells as _cells
from groundstep.core import Record, __version__, linear_response

SAMPLES = 20_000
DT = 0.005  # s
REPEATS = 5
TARGET_WARM = 50e-6  # s per cached call
TARGET_COLD = 0.1  # s for a cold sheet of 500 cells

_ATTRIBUTE = {"SD": "peak_displacement", "SV": "peak_velocity", "SA": "peak_total_acceleration",
              "PSV": "pseudo_velocity", "PSA": "pseudo_acceleration"}  # fmt: skip


def invented_record(seed: int = 2024) -> list[list[object]]:
    """The record range as xlwings passes it: heading, samples [g], trailing blanks."""
    rng = np.random.default_rng(seed)
    t = np.arange(SAMPLES) * DT
    envelope = np.minimum(t / 5.0, 1.0) * np.exp(-np.maximum(t - 20.0, 0.0) / 15.0)
    accel = 0.15 * envelope * rng.standard_normal(SAMPLES)
    return [["Accel [g]"]] + [[float(a)] for a in accel] + [[None]] * 500


def sheets() -> dict[str, list[tuple[float, str]]]:
    few = np.geomspace(0.05, 5.0, 100)
    many = np.geomspace(0.05, 5.0, 500)
    return {
        "5 quantities": [(float(t), q) for t in few for q in ("SD", "SV", "SA", "PSV", "PSA")],
        "500 periods": [(float(t), "PSA") for t in many],
    }


def fresh(cells: list[list[object]]) -> list[list[object]]:
    """A new list of new rows with the same values: what xlwings builds for every call."""
    return [list(row) for row in cells]


def run(cells, cases, clear_each: bool = False) -> float:
    copies = [fresh(cells) for _ in range(8)]  # rotate a few fresh lists: no identity shared across calls
    start = time.perf_counter()
    for index, (period, quantity) in enumerate(cases):
        if clear_each:
            _cache.clear_all()
        value = STEP_PEAK(copies[index % 8], DT, "g", period, 0.05, quantity)
        if isinstance(value, str):
            raise RuntimeError(value)
    return time.perf_counter() - start


def former_digest(cells) -> bytes:
    """The record digest before this change: marshal (newest version) and SHA-256."""
    return hashlib.sha256(marshal.dumps(cells)).digest()


def former_run(cells, cases, records: dict, results: dict) -> float:
    """The former STEP_PEAK path: digest every call, one linear_response per oscillator."""
    copies = [fresh(cells) for _ in range(8)]
    start = time.perf_counter()
    for index, (period, quantity) in enumerate(cases):
        cells = copies[index % 8]
        key = former_digest(cells)
        if key not in records:
            records[key] = Record(_cells.numbers(cells, "the acceleration range", min_count=2), DT, "g")
        if (key, period) not in results:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                response = linear_response(records[key], period, 0.05)
            results[(key, period)] = {a: getattr(response, a) for a in _ATTRIBUTE.values()}
        _ = results[(key, period)][_ATTRIBUTE[quantity]] / 9.80665
    return time.perf_counter() - start




def main() -> None:
    cells, edited = invented_record(), invented_record()
    edited[1 + SAMPLES // 2] = [float(edited[1 + SAMPLES // 2][0]) + 1e-6]
    print(f"groundstep {__version__}, Python {platform.python_version()}, {platform.machine()}")
    STEP_PEAK(cells, DT, "g", 1.0, 0.05, "SD")  # load the compiled kernels before timing
    linear_response(Record([0.0, 1.0, 0.0], DT), 1.0)

    figures = {"former": [], "current": [], "floor": []}
    for _ in range(40):  # alternated, each on a fresh copy: the float objects shared, as in xlwings' conversion
        for label, call in (("former", former_digest), ("current", _cache.digest), ("floor", lambda c: sum(map(len, c)))):
            copy = fresh(cells)
            start = time.perf_counter()
            call(copy)
            figures[label].append(time.perf_counter() - start)
    low = {label: min(values) for label, values in figures.items()}
    print(f"record digest of {len(cells)} cells (a fresh list per call), best of 40 alternated:")
    print(f"  former (marshal v4 + SHA-256) {1e6 * low['former']:6.0f} us   current (marshal v2 + SHA-256) "
          f"{1e6 * low['current']:6.0f} us   former / current {low['former'] / low['current']:.2f}x")
    print(f"  cheapest C-level pass over the cells, sum(map(len, cells)): {1e6 * low['floor']:6.0f} us "
          f"({low['floor'] / TARGET_WARM:.1f}x the {1e6 * TARGET_WARM:.0f} us target by itself)")

    for name, cases in sheets().items():
        n = len(cases)
        figures: dict[str, list[float]] = {"cold": [], "edited": [], "warm": [], "former cold": [], "former warm": []}
        for _ in range(REPEATS):
            _cache.clear_all()
            figures["cold"].append(run(cells, cases))
            figures["edited"].append(run(edited, cases))
            figures["warm"].append(run(edited, cases))
            records: dict = {}
            results: dict = {}
            figures["former cold"].append(former_run(cells, cases, records, results))
            figures["former warm"].append(former_run(cells, cases, records, results))
        uncached = min(run(cells, cases[:50], clear_each=True) for _ in range(3)) * n / 50
        low = {label: min(values) for label, values in figures.items()}
        print(f"sheet '{name}': {n} STEP_PEAK calls, best of {REPEATS} runs")
        for label, seconds in low.items():
            print(f"  {label:12s} {seconds:8.4f} s in all, {1e6 * seconds / n:8.1f} us per call")
        print(f"  uncached     {uncached:8.4f} s in all (50 calls scaled to {n})")
        compute = {label: low[label] - low[warm] for label, warm in
                   (("cold", "warm"), ("edited", "warm"), ("former cold", "former warm"))}  # fmt: skip
        print(f"  computing alone (minus the warm figure): cold {compute['cold']:.3f} s, edited {compute['edited']:.3f} s, "
              f"former {compute['former cold']:.3f} s")
        print(f"  former cold / cold {low['former cold'] / low['cold']:.1f}x, former cold / edited "
              f"{low['former cold'] / low['edited']:.1f}x, former warm / warm {low['former warm'] / low['warm']:.2f}x")
        print(f"  targets: cold {low['cold']:.3f} s (<= {TARGET_COLD} s: {'met' if low['cold'] <= TARGET_COLD else 'missed'}), "
              f"warm {1e6 * low['warm'] / n:.0f} us per call (<= {1e6 * TARGET_WARM:.0f} us: "
              f"{'met' if low['warm'] / n <= TARGET_WARM else 'missed'})")


if __name__ == "__main__":
    main()
