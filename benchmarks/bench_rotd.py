"""Benchmark of rotd_spectrum: wall time and ratio to one elastic spectrum per turned record.

Run: ``python benchmarks/bench_rotd.py``. Every figure is measured in this one
run (best of several repeats; shared machines swing by 2x, so compare the
ratios printed here rather than figures from different runs).

Workload: RotD50 and RotD100 at 5 % damping, 100 log-spaced periods, 180
angles (1° steps), on an invented 10,000-step pair (dt = 0.01 s, seeded
filtered noise under a rise-and-decay envelope).

1. Periods 0.01-10 s (``period_grid()``'s default grid): periods under
   0.1 s are sub-stepped (up to 10 sub-steps), and peaks are read at every
   sub-step in both routes.
2. Periods 0.1-10 s: no sub-steps.

The naive route turns the record by each angle and runs `elastic_spectrum`
on it (180 spectra), then takes percentiles over angles; it is the same
arithmetic without the linearity shortcut.

3. Threads against ``prange``: the shipped route runs one ``nogil`` kernel
   per chunk on Python threads that take chunks one at a time
   (``_jit.PART_THREADS.run_each``); the former route ran the same chunks in a
   numba ``prange`` loop under ``parallel_chunksize(1)``, re-created here
   around the same chunk kernel (compiled in this run, not cached).
   Alternated rounds with a pause before each call, best of each; the results
   must be bit for bit equal.
"""

from __future__ import annotations

import time
import warnings

import numba
import numpy as np
from _timing import best_of

from groundstep.core import Record, SubstepWarning, _kernels_rotd, elastic_spectrum, period_grid
from groundstep.core.rotd import rotd_spectrum

N_PERIODS = 100
N_STEPS = 10_000
N_ANGLES = 180
REPEATS = 7
NAIVE_REPEATS = 3


def invented_pair() -> tuple[Record, Record]:
    rng = np.random.default_rng(2027)
    t = np.arange(N_STEPS) * 0.01
    envelope = (t / 8.0) * np.exp(1.0 - t / 8.0)
    smooth = np.ones(5) / 5
    x = np.convolve(rng.normal(size=N_STEPS + 4), smooth, mode="valid") * envelope
    y = np.convolve(rng.normal(size=N_STEPS + 4), smooth, mode="valid") * envelope * 0.8
    return Record(0.1 * x, dt=0.01, unit="g"), Record(0.1 * y, dt=0.01, unit="g")


def naive(record_x: Record, record_y: Record, periods) -> np.ndarray:
    """One elastic spectrum per turned record; RotD50 and RotD100 over the 1° grid."""
    by_angle = np.empty((N_ANGLES, len(periods)))
    for angle in range(N_ANGLES):
        theta = np.radians(angle)
        turned = Record(record_x.accel * np.cos(theta) + record_y.accel * np.sin(theta), record_x.dt, unit="m/s2")
        by_angle[angle] = elastic_spectrum(turned, periods).psa[0]
    return np.percentile(by_angle, [50, 100], axis=0)


@numba.njit(parallel=True)
def _prange_peaks(load_x, load_y, coef, substeps, starts, cosines, sines, peaks, extremes):
    """The former parallel route: every chunk of `_kernels_rotd.rotd_chunk` in a prange loop."""
    for step in numba.prange(starts.shape[0] - 1):
        _kernels_rotd.rotd_chunk(load_x, load_y, coef, substeps, starts, cosines, sines, peaks, extremes, step)


def _former(*args) -> None:
    with numba.parallel_chunksize(1):  # as the former rotd_spectrum called it: threads take chunks one at a time
        _prange_peaks(*args)


#: Pause before each alternated call [s]: numba's OpenMP threads spin for a while after a prange
#: loop and would slow whichever route runs next.
_SETTLE = 0.3


def _kernel_arguments(record_x: Record, record_y: Record) -> tuple:
    """A small set of arguments of the kernel's types, to compile the prange route before timing it."""
    n = 1  # one oscillator: a chunk holds at most CHUNK
    coef = np.zeros((10, n))
    substeps = np.ones(n, dtype=np.int64)
    starts = np.array([0, n], dtype=np.int64)
    angles = np.zeros(1)
    return (record_x.accel[:2].copy(), record_y.accel[:2].copy(), coef, substeps, starts, angles, angles,
            np.empty((n, 1)), np.empty((n, _kernels_rotd.N_EXTREMES)))


def threads_against_prange(record_x: Record, record_y: Record, periods) -> tuple[float, float]:
    """Best wall time of rotd_spectrum with the shipped threads and with the former prange route, alternated."""
    shipped = _kernels_rotd.rotd_peaks
    best = {"threads": float("inf"), "prange": float("inf")}
    results = {}
    try:
        for _ in range(REPEATS):
            for name, route in (("threads", shipped), ("prange", _former)):
                _kernels_rotd.rotd_peaks = route
                time.sleep(_SETTLE)
                began = time.perf_counter()
                results[name] = rotd_spectrum(record_x, record_y, periods)
                best[name] = min(best[name], time.perf_counter() - began)
    finally:
        _kernels_rotd.rotd_peaks = shipped
    for field in ("peaks_by_angle", "rotd100", "angle_rotd100", "psa_x", "psa_y"):
        a, b = getattr(results["threads"], field), getattr(results["prange"], field)
        if not np.array_equal(a.view(np.uint64), b.view(np.uint64)):
            raise AssertionError(f"threads and prange differ in {field}")
    return best["threads"], best["prange"]


def main() -> None:
    warnings.simplefilter("ignore", SubstepWarning)
    record_x, record_y = invented_pair()
    print(f"rotd_spectrum: {N_PERIODS} periods x {N_ANGLES} angles, {N_STEPS:,}-step pair, best of {REPEATS}")
    for label, periods in (("0.01-10 s (sub-steps below 0.1 s)", period_grid(0.01, 10.0, N_PERIODS)),
                           ("0.1-10 s (no sub-steps)", period_grid(0.1, 10.0, N_PERIODS))):  # fmt: skip
        fast = rotd_spectrum(record_x, record_y, periods)  # compiles or loads the kernels
        slow = naive(record_x, record_y, periods)
        # the two routes agree to round-off (RotD100 of the fast route is the exact maximum, which
        # may exceed the 1° grid's by up to 1/cos(0.5°) - 1 = 4e-5)
        mismatch = max(float(np.max(np.abs(fast.rotd50 / slow[0] - 1))),
                       float(np.max(np.abs(fast.rotd100 / slow[1] - 1))))  # fmt: skip
        fast_time = best_of(lambda p=periods: rotd_spectrum(record_x, record_y, p), REPEATS)
        slow_time = best_of(lambda p=periods: naive(record_x, record_y, p), NAIVE_REPEATS)
        one_spectrum = best_of(lambda p=periods: elastic_spectrum(record_x, p), REPEATS)
        print(f"  periods {label}")
        print(f"    rotd_spectrum            {fast_time * 1e3:8.2f} ms"
              f"  ({fast_time / one_spectrum:.2f} x one elastic_spectrum of one component)")  # fmt: skip
        print(f"    one spectrum per angle   {slow_time * 1e3:8.2f} ms")
        print(f"    ratio                    {slow_time / fast_time:8.1f} x   (largest relative difference {mismatch:.1e})")
        _former(*_kernel_arguments(record_x, record_y))  # compiles the prange route (not cached)
        threads, former = threads_against_prange(record_x, record_y, periods)
        print(f"    threads {threads * 1e3:8.2f} ms   prange {former * 1e3:8.2f} ms   prange / threads "
              f"{former / threads:4.2f}   (alternated, best of {REPEATS}; bit for bit equal)")


if __name__ == "__main__":
    main()
