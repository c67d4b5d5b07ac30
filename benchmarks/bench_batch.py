"""Throughput of ``groundstep batch`` (groundstep.addin.survey.run_survey), measured in one run.

Prints, for a local pool of 1 and of 2 worker processes and for a Dask
LocalCluster of 2 workers on 127.0.0.1, on the same invented records:
- wall time, records per second and oscillator-steps per second (nominal:
  steps x periods x (dampings + target ductilities); the ductility search
  steps each target several times, so the real count is higher);
- the same rate between the first and the last completed record (start-up
  of the pool or cluster left out);
- scaling efficiency of 2 workers (rate 2 / (2 x rate 1)) and the overhead of
  Dask against the local pool of the same size.

Targets (issue 15): >= 85 % efficiency on 2 workers; Dask overhead <= 15 %.
One run of each (a full run takes minutes); the shared 2-core machine swings,
so compare the ratios printed together.

Run: python benchmarks/bench_batch.py [RECORDS]   (default 200 records of 4,000-20,000 steps)
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

import numpy as np

from groundstep.addin.survey import RecordEntry, SurveySettings, run_survey
from groundstep.core import period_grid, synthetic_record, warm_up

DT = 0.005  # s
SETTINGS = SurveySettings(periods=tuple(period_grid(0.05, 5.0, 100)), dampings=(0.02, 0.05, 0.10), ductilities=(2.0, 4.0))


def _records(folder: Path, count: int) -> tuple[list[RecordEntry], int]:
    """`count` invented records (seeded synthetic accelerograms) of 4,000 to 20,000 steps; total steps."""
    rng = np.random.default_rng(15)
    entries, steps = [], 0
    for seed, n in enumerate(rng.integers(4000, 20001, count)):
        record = synthetic_record(float(n) * DT, DT, pga=0.3, seed=seed)
        path = folder / f"r{seed:04d}.txt"
        path.write_text("\n".join(repr(float(v)) for v in record.accel_in("g")) + "\n")
        entries.append(RecordEntry(path.name, str(path), "g", DT))
        steps += record.n - 1
    return entries, steps


def _run(entries: list[RecordEntry], out: Path, **options: object) -> tuple[float, float]:
    """Wall time [s] and time from the first to the last completed record [s]."""
    stamps: list[float] = []
    start = time.perf_counter()
    summary = run_survey(entries, SETTINGS, out, on_outcome=lambda o, m: stamps.append(time.perf_counter()), **options)  # type: ignore[arg-type]
    wall = time.perf_counter() - start
    assert summary.done == len(entries), summary
    return wall, stamps[-1] - stamps[0]


def main() -> None:
    count = int(sys.argv[1]) if len(sys.argv) > 1 else 200
    warm_up()
    with tempfile.TemporaryDirectory() as folder:
        entries, steps = _records(Path(folder), count)
        oscillator_steps = steps * len(SETTINGS.periods) * (len(SETTINGS.dampings) + len(SETTINGS.ductilities))
        print(f"{count} records, {steps:,} steps in all; {len(SETTINGS.periods)} periods x "
              f"{len(SETTINGS.dampings)} dampings + ductilities {SETTINGS.ductilities}; measures on")  # fmt: skip
        runs = {"pool, 1 worker": {"workers": 1, "pool": True}, "pool, 2 workers": {"workers": 2, "pool": True}}
        try:
            import distributed  # noqa: F401

            runs["Dask LocalCluster, 2 workers"] = {"workers": 2, "scheduler": "local"}
        except ImportError:
            print('Dask distributed not installed (pip install "groundstep[dask]"): its run is left out')
        rates: dict[str, tuple[float, float]] = {}
        for name, options in runs.items():
            wall, steady = _run(entries, Path(folder) / name.replace(" ", "_").replace(",", ""), **options)
            rate, steady_rate = count / wall, (count - 1) / steady
            rates[name] = (rate, steady_rate)
            print(f"{name:<30} {wall:7.1f} s  {rate:6.2f} records/s  {oscillator_steps / wall / 1e6:8.1f} M osc-steps/s"
                  f"   (first to last record: {steady_rate:6.2f} records/s)")  # fmt: skip
        one, two = rates["pool, 1 worker"], rates["pool, 2 workers"]
        print(f"scaling efficiency, 2 workers: {two[0] / (2 * one[0]):.0%} wall, {two[1] / (2 * one[1]):.0%} first to last"
              " (target >= 85 %)")  # fmt: skip
        if "Dask LocalCluster, 2 workers" in rates:
            dask = rates["Dask LocalCluster, 2 workers"]
            print(f"Dask overhead against the pool of 2: {two[0] / dask[0] - 1:+.0%} wall (cluster start and close "
                  f"included), {two[1] / dask[1] - 1:+.0%} first to last (target <= 15 %)")  # fmt: skip


if __name__ == "__main__":
    main()
