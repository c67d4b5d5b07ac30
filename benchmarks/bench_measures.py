"""Benchmark of the ground-motion measures and of record processing on a 100,000-sample record.

Run: ``python benchmarks/bench_measures.py``. Every figure is measured in this
one run (best of several repeats; shared machines swing by 2x, so compare the
ratios printed here rather than figures from different runs).

Workload: an invented record (seeded synthetic accelerogram, 100,000 samples)
at dt = 0.005 s (500 s) and at dt = 0.01 s (1000 s). Targets: 20 ms for
`ground_motion_measures`, 20 ms for baseline correction plus band-pass.
The split shows where the time goes: the one 5 %-damped spectrum of 160
periods behind the spectrum intensity and the predominant period is most of it.
"""

from __future__ import annotations

import time
import warnings

import numpy as np

from groundstep.core import Record, SubstepWarning, elastic_spectrum, synthetic_record
from groundstep.core.fourier import fourier_amplitude
from groundstep.core.measures import PREDOMINANT_PERIODS, arias_intensity, ground_motion_measures
from groundstep.core.processing import bandpass, baseline_correct

N_SAMPLES = 100_000
REPEATS = 15
TARGET_MS = 20.0


def best_ms(function, repeats=REPEATS):
    """Best wall time of `repeats` calls [ms]."""
    return best_of({"only": function}, repeats)["only"]


def best_of(functions, repeats=REPEATS):
    """Best wall time [ms] of each function, called in turn in every round (noise hits them alike)."""
    best = dict.fromkeys(functions, float("inf"))
    for _ in range(repeats):
        for name, function in functions.items():
            start = time.perf_counter()
            function()
            best[name] = min(best[name], time.perf_counter() - start)
    return {name: seconds * 1e3 for name, seconds in best.items()}


def spectrum_only(record: Record) -> None:
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", SubstepWarning)
        elastic_spectrum(record, PREDOMINANT_PERIODS, 0.05, "exact")


def run(dt: float) -> None:
    """Print the figures for one 100,000-sample record of step `dt` [s]."""
    record = synthetic_record(duration=(N_SAMPLES - 1) * dt, dt=dt, seed=2026, name="invented")
    assert record.n == N_SAMPLES
    ground_motion_measures(record)  # first call: numba cache load
    figures = best_of({
        "total": lambda: ground_motion_measures(record),
        "spectrum (160 periods, 5 %, exact)": lambda: spectrum_only(record),
        "Fourier amplitude (mean period)": lambda: fourier_amplitude(record),
        "velocity + displacement": lambda: (record.ground_velocity(), record.ground_displacement()),
        "Arias build-up": lambda: arias_intensity(record),
    })  # fmt: skip
    total = figures.pop("total")
    split = figures
    print(f"ground_motion_measures, {N_SAMPLES:,} samples, dt = {dt:g} s: {total:.2f} ms "
          f"(target {TARGET_MS:g} ms, {total / TARGET_MS:.2f} of it)")  # fmt: skip
    for name, ms in split.items():
        print(f"    {name:<38s} {ms:6.2f} ms  ({ms / total:5.1%})")
    rest = total - sum(split.values())
    print(f"    {'not itemised (total minus the above)':<38s} {rest:6.2f} ms  ({rest / total:5.1%})")

    processing = best_of({
        "baseline": lambda: baseline_correct(record, 2),
        "filtered": lambda: bandpass(record, 0.1, 25.0, 4, keep_pads=False),
        "both": lambda: bandpass(baseline_correct(record, 2), 0.1, 25.0, 4, keep_pads=False),
        "padded": lambda: bandpass(record, 0.1, 25.0, 4),
    })  # fmt: skip
    baseline, filtered, both, padded = (processing[key] for key in ("baseline", "filtered", "both", "padded"))
    print(f"processing, dt = {dt:g} s: baseline_correct(order 2) {baseline:.2f} ms, "
          f"bandpass(0.1-25 Hz, order 4) {filtered:.2f} ms, both {both:.2f} ms "
          f"(target {TARGET_MS:g} ms, {both / TARGET_MS:.2f} of it); bandpass keeping pads {padded:.2f} ms")  # fmt: skip
    raw_name = "Fourier amplitude (mean period)"
    smooth = best_ms(lambda: fourier_amplitude(record, "konno-ohmachi"), repeats=3)
    print(f"Konno-Ohmachi smoothing (b = 40), dt = {dt:g} s: {smooth:.1f} ms "
          f"({smooth / split[raw_name]:.0f}x the raw spectrum)")  # fmt: skip
    print()


def main() -> None:
    for dt in (0.005, 0.01):
        run(dt)
    small = np.random.default_rng(1).standard_normal(2_000)
    record = Record(small, 0.01, "m/s2")
    ground_motion_measures(record)
    print(f"ground_motion_measures, 2,000 samples: {best_ms(lambda: ground_motion_measures(record)):.2f} ms")


if __name__ == "__main__":
    main()
