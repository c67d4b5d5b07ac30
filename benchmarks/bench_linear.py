"""Benchmark of the linear engine: ns per oscillator-step, ratio to plain numpy, first-call time.

Run: ``python benchmarks/bench_linear.py``. Every figure is measured in this
one run (best of several repeats; shared machines swing by 2x, so compare the
ratios printed here rather than figures from different runs).

Workload: elastic_spectrum of 500 log-spaced periods, one damping (5 %), on
a 20,000-step invented record (dt = 0.01 s, seeded filtered noise).

1. Periods 0.1-10 s: Δt/T <= 0.1 everywhere, so one oscillator-step is one
   record step of one oscillator; the numpy loop does the same work.
2. Periods 0.01-10 s: periods under 0.1 s are sub-stepped (up to 10
   sub-steps) and their peaks read at every sub-step; figures are given per
   record oscillator-step and per computed oscillator-sub-step.
"""

from __future__ import annotations

import os
import subprocess
import sys
import tempfile
import warnings

import numpy as np
from _timing import best_of

from groundstep.core import Record, SubstepWarning, _kernels, elastic_spectrum, linear_response, period_grid
from groundstep.core.linear import _step_coefficients
from groundstep.core.methods import resolve_method

N_PERIODS = 500
N_STEPS = 20_000
REPEATS = 5


def invented_record() -> Record:
    rng = np.random.default_rng(2026)
    noise = np.convolve(rng.normal(size=N_STEPS + 4), np.ones(5) / 5, mode="valid")
    return Record(0.1 * noise, dt=0.01, unit="g")


def numpy_loop(load, coef):
    """The same recurrence and three peaks as the kernel: a numpy loop over time,
    vectorised across oscillators."""
    a = [coef[i].copy() for i in range(10)]
    u = np.zeros(coef.shape[1])
    v = np.zeros(coef.shape[1])
    pu = np.zeros_like(u)
    pv = np.zeros_like(u)
    pa = np.zeros_like(u)
    for i in range(load.size - 1):
        p0, p1 = load[i], load[i + 1]
        u, v = a[0] * u + a[1] * v + a[4] * p0 + a[5] * p1, a[2] * u + a[3] * v + a[6] * p0 + a[7] * p1
        np.maximum(pu, np.abs(u), out=pu)
        np.maximum(pv, np.abs(v), out=pv)
        np.maximum(pa, np.abs(a[8] * v + a[9] * u), out=pa)
    return np.array([pu, pv, pa])


def first_call_seconds(cache_dir: str) -> float:
    """Wall time of the first elastic_spectrum call in a fresh interpreter."""
    code = (
        "import time, warnings, numpy as np;"
        "from groundstep.core import Record, elastic_spectrum;"
        "r = Record(np.sin(np.arange(2000) * 0.05), 0.01, 'g');"
        "warnings.simplefilter('ignore');"
        "t = time.perf_counter();"
        "elastic_spectrum(r, [0.005, 0.5, 2.0], [0.05]);"
        "elastic_spectrum(r, [0.5], [0.05], method='exact');"
        "print(time.perf_counter() - t)"
    )
    env = dict(os.environ, NUMBA_CACHE_DIR=cache_dir)
    out = subprocess.run([sys.executable, "-c", code], env=env, capture_output=True, text=True, check=True)
    return float(out.stdout.strip())


def small_calls(record: Record) -> None:
    """One oscillator end to end, and a small spectrum on one thread against the parallel kernel."""
    short = Record(record.accel[:2000], dt=record.dt, unit="m/s2")
    linear_response(short, 1.0)
    repeat = 2000
    seconds = best_of(lambda: [linear_response(short, 1.0) for _ in range(repeat)], REPEATS) / repeat
    print(f"3. linear_response, one oscillator, 2,000 samples, end to end: {seconds * 1e6:6.1f} us "
          f"(target 30 us: ratio {seconds / 30e-6:4.2f})")
    periods = period_grid(0.1, 10.0, 20)
    coef, used = _step_coefficients(short.dt, periods, np.full(20, 0.05), resolve_method("average"), 0.1)
    starts = _kernels.chunk_starts(used)
    zeros, out, load = np.zeros(20), np.empty((3, 20)), -short.accel
    timings = {}
    for label, kernel in (("one thread", _kernels.peaks_serial), ("parallel", _kernels.peaks)):
        kernel(load, coef, used, starts, zeros, zeros, out)
        timings[label] = best_of(lambda k=kernel: [k(load, coef, used, starts, zeros, zeros, out) for _ in range(50)], REPEATS) / 50
    print(f"   20 periods x 2,000 steps (below the serial threshold of {_kernels.SERIAL_WORK:,} oscillator-steps): "
          f"one thread {timings['one thread'] * 1e6:.0f} us, parallel {timings['parallel'] * 1e6:.0f} us "
          f"(parallel / one thread {timings['parallel'] / timings['one thread']:.1f}x)")


def main() -> None:
    record = invented_record()
    warnings.simplefilter("ignore", SubstepWarning)
    steps_per_oscillator = record.n - 1
    print(f"elastic_spectrum: {N_PERIODS} periods x 1 damping x {steps_per_oscillator} record steps "
          f"on {os.cpu_count()} cores (best of {REPEATS})")

    periods = period_grid(0.1, 10.0, N_PERIODS)
    steps = N_PERIODS * steps_per_oscillator
    print("1. periods 0.1-10 s (no sub-steps)")
    timings = {}
    for method in ("average", "linear", "exact"):
        elastic_spectrum(record, periods, 0.05, method)  # compile or load from cache
        seconds = best_of(lambda m=method: elastic_spectrum(record, periods, 0.05, m), REPEATS)
        timings[method] = seconds
        print(f"  {method:8s} {seconds * 1e3:8.2f} ms   {seconds / steps * 1e9:6.3f} ns per oscillator-step")

    coef, _ = _step_coefficients(record.dt, periods, np.full(N_PERIODS, 0.05), resolve_method("average"), 0.1)
    load = -record.accel
    reference = numpy_loop(load, coef)
    spectrum = elastic_spectrum(record, periods, 0.05, "average")
    agreement = np.max(np.abs(reference[0] - spectrum.sd[0]) / spectrum.sd[0])
    numpy_seconds = best_of(lambda: numpy_loop(load, coef), 2)
    print(f"  numpy loop over time, vectorised across oscillators: {numpy_seconds * 1e3:.0f} ms   "
          f"{numpy_seconds / steps * 1e9:.2f} ns per oscillator-step (SD agrees to {agreement:.1e})")
    for method, seconds in timings.items():
        print(f"  speed-up of compiled {method} over the numpy loop: {numpy_seconds / seconds:6.1f}x")

    periods = period_grid(0.01, 10.0, N_PERIODS)
    print("2. periods 0.01-10 s (short periods sub-stepped, peaks read at every sub-step)")
    for method in ("average", "exact"):
        spectrum = elastic_spectrum(record, periods, 0.05, method)
        sub_steps = int(spectrum.substeps.sum()) * steps_per_oscillator
        seconds = best_of(lambda m=method: elastic_spectrum(record, periods, 0.05, m), REPEATS)
        print(f"  {method:8s} {seconds * 1e3:8.2f} ms   {seconds / steps * 1e9:6.3f} ns per record oscillator-step, "
              f"{seconds / sub_steps * 1e9:6.3f} ns per oscillator-sub-step "
              f"({sub_steps / steps:.2f} sub-steps per record step on average)")

    small_calls(record)

    with tempfile.TemporaryDirectory() as cache_dir:
        cold = first_call_seconds(cache_dir)
        warm = min(first_call_seconds(cache_dir) for _ in range(3))
    print(f"first call in a new process: cold numba cache {cold:.2f} s, warm cache {warm:.2f} s "
          f"(`groundstep warm` fills the cache once per install)")


if __name__ == "__main__":
    main()
