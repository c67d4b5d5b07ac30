"""The timing rule every benchmark uses: the best of several runs.

Shared machines swing by 2x, so a benchmark reports the fastest of a few
runs and compares figures measured in the same run. Scripts in this folder
import it as ``from _timing import best_of`` (the folder is on the path when
a script runs as ``python benchmarks/NAME.py``).
"""

from __future__ import annotations

import time
from collections.abc import Callable

__all__ = ["best_of"]


def best_of(call: Callable[[], object], repeats: int) -> float:
    """Fastest wall time [s] of `repeats` calls of `call`."""
    best = float("inf")
    for _ in range(repeats):
        start = time.perf_counter()
        call()
        best = min(best, time.perf_counter() - start)
    return best
