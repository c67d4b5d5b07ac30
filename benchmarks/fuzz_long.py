"""The long fuzzing campaign: 3,000 hostile calls per target, counted by outcome.

Run ``python benchmarks/fuzz_long.py [EXAMPLES]``. For each worksheet
function and for the core API it draws EXAMPLES cases (default 3,000) from
the strategies of ``tests/fuzz_cases.py`` and prints one Markdown table row
per target: cases, answered, clear message, escaped exception, non-finite,
over budget, and the total and slowest wall time. The table in
DEVELOPERS.md is this output. ``HYPOTHESIS_PROFILE=long python -m pytest
tests/test_hardening.py`` runs the same cases as assertions.
"""

from __future__ import annotations

import collections
import sys
import time
import warnings
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))

from fuzz_cases import (  # noqa: E402 - the strategies live beside the tests
    OUTCOMES,
    classify_cell_result,
    classify_core_call,
    core_calls,
    worksheet_arguments,
)
from hypothesis import HealthCheck, given, settings  # noqa: E402

from groundstep.addin import functions  # noqa: E402, F401 - fills the function table (every STEP_ module)
from groundstep.addin.worksheet.registry import FUNCTIONS  # noqa: E402
from groundstep.core import collect_warnings  # noqa: E402


def _campaign(strategy, run_one, examples: int) -> tuple[collections.Counter, float, float]:
    counts: collections.Counter = collections.Counter()
    times = [0.0, 0.0]

    @settings(max_examples=examples, deadline=None, database=None, suppress_health_check=list(HealthCheck))
    @given(strategy)
    def case(value):
        start = time.perf_counter()
        with warnings.catch_warnings():
            warnings.simplefilter("error", RuntimeWarning)
            try:
                outcome = run_one(value)
            except Exception:  # noqa: BLE001 - a warning turned error escaped: count it
                outcome = "escaped"
        spent = time.perf_counter() - start
        times[0] += spent
        times[1] = max(times[1], spent)
        counts[outcome] += 1

    case()
    return counts, times[0], times[1]


def _core(value) -> str:
    _, call = value

    def quiet():
        with collect_warnings():
            return call()

    return classify_core_call(quiet)


def main(examples: int) -> None:
    print(f"| target | cases | {' | '.join(OUTCOMES)} | total time [s] | slowest [s] |")
    print("| --- | ---: | " + " | ".join("---:" for _ in OUTCOMES) + " | ---: | ---: |")
    targets = [(name, worksheet_arguments(name), lambda a, n=name: classify_cell_result(FUNCTIONS[n].function(*a)))
               for name in FUNCTIONS]  # fmt: skip
    targets.append(("core API (Record, linear, spectrum, yielding, ductility)", core_calls(), _core))
    for name, strategy, run_one in targets:
        counts, total, slowest = _campaign(strategy, run_one, examples)
        cells = " | ".join(str(counts.get(o, 0)) for o in OUTCOMES)
        print(f"| {name} | {sum(counts.values())} | {cells} | {total:.1f} | {slowest:.2f} |", flush=True)


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 3000)
