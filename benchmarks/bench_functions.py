"""Benchmark: STEP_PEAK calls over one 20,000-sample record, for each shape a range arrives in.

Shapes of the record range (a text heading, 20,000 samples [g], 500 blank
cells below, as a generous range is selected):

* list:  a fresh list of one-cell row lists per call, each float a fresh
         object (what xlwings passes for ``ndim=2``)
* tuple: a fresh tuple of one-cell row tuples, fresh floats (what the
         LibreOffice Calc edge passes)
* numpy: a fresh float64 array of the 20,000 samples (what xlwings builds
         when the argument is converted with ``np.array``; a range with a
         heading or blanks would give an object array instead)

Figures, each the best of several runs measured in this run:

1. The record key alone: the previous key (``marshal`` version 2 of the
   cells and SHA-256, every call) beside the current `cache.cell_digest`
   on a repeat (the cells' exact form compared in full with the kept one),
   and the floor of each shape: for lists and tuples the marshal pass
   alone (the exact form), a bare ``==`` with kept cells (C speed but not
   exact: ``True == 1.0``, ``0.0 == -0.0``) and ``sum(map(len, cells))``
   (the cheapest pass that visits every row); for arrays ``array_equal``.
2. One cached call (the same STEP_PEAK again): current, and the previous
   per-call path patched in (previous key, every option cell read again)
   in the same run; the ratio; the 50 us target.
3. Two sheets of 500 STEP_PEAK calls ("5 quantities": 100 periods x SD,
   SV, SA, PSV, PSA; "500 periods": PSA): cold (every cache empty, the
   first recalculation ever), edited (one sample changed, the periods are
   remembered), warm (unchanged), and the previous path's edited figure;
   the 0.1 s target.

Run with ``python benchmarks/bench_functions.py``.
"""

from __future__ import annotations

import hashlib
import marshal
import platform
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from typing import Any

import numpy as np
from _timing import best_of

from groundstep.addin.functions import STEP_PEAK
from groundstep.addin.worksheet import cache as _cache
from groundstep.addin.worksheet import convert as _convert
from groundstep.core import __version__

SAMPLES = 20_000
DT = 0.005  # s
REPEATS = 3
TARGET_WARM = 50e-6  # s per cached call
TARGET_COLD = 0.1  # s for a cold sheet of 500 cells


def invented_record(seed: int = 2024) -> list[list[object]]:
    """The record range as xlwings passes it: heading, samples [g], trailing blanks."""
    rng = np.random.default_rng(seed)
    t = np.arange(SAMPLES) * DT
    envelope = np.minimum(t / 5.0, 1.0) * np.exp(-np.maximum(t - 20.0, 0.0) / 15.0)
    accel = 0.15 * envelope * rng.standard_normal(SAMPLES)
    return [["Accel [g]"]] + [[float(a)] for a in accel] + [[None]] * 500


def edited(cells: list[list[object]]) -> list[list[object]]:
    """The same range with one sample changed by 1e-6 g."""
    changed = [list(row) for row in cells]
    changed[1 + SAMPLES // 2] = [float(changed[1 + SAMPLES // 2][0]) + 1e-6]  # type: ignore[arg-type]
    return changed


def _fresh_float(value: object) -> object:
    return value * 1.0 if type(value) is float else value  # a new float object of the same bits


#: shape -> a function making a fresh copy of the range in that shape, as a spreadsheet hands it over
SHAPES: dict[str, Callable[[list[list[object]]], Any]] = {
    "list": lambda cells: [[_fresh_float(v) for v in row] for row in cells],
    "tuple": lambda cells: tuple(tuple(_fresh_float(v) for v in row) for row in cells),
    "numpy": lambda cells: np.array([row[0] for row in cells[1 : 1 + SAMPLES]], dtype=np.float64),
}


def sheets() -> dict[str, list[tuple[float, str]]]:
    few = np.geomspace(0.05, 5.0, 100)
    many = np.geomspace(0.05, 5.0, 500)
    return {
        "5 quantities": [(float(t), q) for t in few for q in ("SD", "SV", "SA", "PSV", "PSA")],
        "500 periods": [(float(t), "PSA") for t in many],
    }


def previous_key(cells: Any) -> bytes:
    """The record key before this change: marshal version 2 of the cells and SHA-256, on every call."""
    if isinstance(cells, np.ndarray):
        return _cache.digest(cells)
    return hashlib.sha256(b"m" + marshal.dumps(cells, 2)).digest()


@contextmanager
def previous_path() -> Iterator[None]:
    """Patch in the previous per-call work: the key hashed every call, every option cell read again."""
    saved = _cache.cell_digest, _convert._remembered
    _cache.cell_digest = previous_key
    _convert._remembered = lambda key, read: read()
    try:
        yield
    finally:
        _cache.cell_digest, _convert._remembered = saved


def run(copies: list[Any], cases: list[tuple[float, str]]) -> float:
    """Wall time [s] of the calls of one sheet, rotating a few fresh copies of the range."""
    import time

    start = time.perf_counter()
    for index, (period, quantity) in enumerate(cases):
        value = STEP_PEAK(copies[index % len(copies)], DT, "g", period, 0.05, quantity)
        if isinstance(value, str):
            raise RuntimeError(value)
    return time.perf_counter() - start


def key_figures(shape: str, cells: list[list[object]]) -> None:
    make = SHAPES[shape]
    kept = make(cells)
    _cache.clear_all()
    _cache.cell_digest(kept)  # the first sight keeps the exact form
    copies = [make(cells) for _ in range(8)]
    figures: dict[str, Callable[[Any], object]] = {
        "previous (hash every call)": previous_key,
        "current (compare with kept)": _cache.cell_digest,
    }
    if shape == "numpy":
        figures["floor: array_equal"] = lambda c: np.array_equal(c.view(np.uint64), kept.view(np.uint64))
    else:
        figures["floor: marshal pass alone"] = lambda c: marshal.dumps(c, 2)
        figures["not exact: bare == with kept"] = lambda c: c == kept
        figures["floor: sum(map(len, cells))"] = lambda c: sum(map(len, c))
    low = {label: min(best_of(lambda call=call, copy=copy: call(copy), 1) for _ in range(6) for copy in copies[:4])
           for label, call in figures.items()}  # fmt: skip
    assert _cache.cell_digest(copies[0]) == _cache.digest(copies[0])  # the same key, found without hashing
    base = low["previous (hash every call)"]
    print(f"  record key of the {shape} range:")
    for label, seconds in low.items():
        print(f"    {label:30s} {1e6 * seconds:7.1f} us   previous / this {base / seconds:5.2f}x")


def cached_call(shape: str, cells: list[list[object]]) -> tuple[float, float]:
    make = SHAPES[shape]
    copies = [make(cells) for _ in range(8)]
    cases = [(1.0, "PSA")] * 200
    results = {}
    for label, context in (("current", None), ("previous", previous_path)):
        _cache.clear_all()
        run(copies, cases[:1])
        if context is None:
            results[label] = min(run(copies, cases) for _ in range(REPEATS)) / len(cases)
        else:
            with context():
                results[label] = min(run(copies, cases) for _ in range(REPEATS)) / len(cases)
    return results["current"], results["previous"]


def sheet_figures(shape: str, cells: list[list[object]], changed: list[list[object]]) -> None:
    make = SHAPES[shape]
    first, second = [make(cells) for _ in range(4)], [make(changed) for _ in range(4)]
    for name, cases in sheets().items():
        figures: dict[str, list[float]] = {"cold": [], "edited": [], "warm": [], "previous cold": [], "previous edited": []}
        for _ in range(REPEATS):
            _cache.clear_all()
            figures["cold"].append(run(first, cases))
            figures["edited"].append(run(second, cases))
            figures["warm"].append(run(second, cases))
            _cache.clear_all()
            with previous_path():
                figures["previous cold"].append(run(first, cases))
                figures["previous edited"].append(run(second, cases))
        low = {label: min(values) for label, values in figures.items()}
        verdict = "met" if low["cold"] <= TARGET_COLD else "missed"
        print(f"  sheet '{name}' ({len(cases)} calls, {shape}): cold {low['cold']:.3f} s ({verdict}, target "
              f"{TARGET_COLD} s), edited {low['edited']:.3f} s, warm {low['warm']:.3f} s")
        print(f"    previous path: cold {low['previous cold']:.3f} s = {low['previous cold'] / low['cold']:.1f}x, "
              f"edited {low['previous edited']:.3f} s = {low['previous edited'] / low['edited']:.1f}x")


def main() -> None:
    cells = invented_record()
    changed = edited(cells)
    print(f"groundstep {__version__}, Python {platform.python_version()}, {platform.machine()}; best of {REPEATS} "
          "runs unless said")  # fmt: skip
    STEP_PEAK(cells, DT, "g", 1.0, 0.05, "SD")  # load the compiled kernels before timing
    for shape in SHAPES:
        print(f"{shape} of {SAMPLES:,} samples:")
        key_figures(shape, cells)
        current, previous = cached_call(shape, cells)
        verdict = "met" if current <= TARGET_WARM else "missed"
        print(f"  cached STEP_PEAK call: {1e6 * current:.1f} us ({verdict}, target {1e6 * TARGET_WARM:.0f} us; "
              f"{current / TARGET_WARM:.1f}x it), previous path {1e6 * previous:.1f} us = {previous / current:.1f}x")
        sheet_figures(shape, cells, changed)


if __name__ == "__main__":
    main()
