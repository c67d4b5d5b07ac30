"""Benchmark of a fresh process: time to the first result, ``groundstep demo``, cold ``groundstep warm``.

Run: ``python benchmarks/bench_startup.py``. Each figure is the best of
several fresh interpreters started in this run (the machine is shared, so
compare the ratios printed here rather than figures from different runs).

"eager" re-creates in the same run what a fresh process paid before the
public names loaded lazily: every core module imported up front (scipy's
signal and FFT packages with them) and ``scipy.linalg`` imported, as numba's
BLAS probe used to do on the first kernel load. The ratio eager / lazy is the
saving, measured on the same machine at the same time.
"""

from __future__ import annotations

import os
import subprocess
import sys
import tempfile
import time

REPEATS = 5
#: Alternated rounds of the cold warm-up (each compiles every kernel: seconds).
COLD_ROUNDS = 2
FIRST_RESULT = (
    "import time; start = time.perf_counter()\n"
    "{prelude}"
    "import numpy as np\n"
    "from groundstep.core import Record, elastic_spectrum\n"
    "record = Record(np.sin(np.arange(2000) * 0.05), 0.01, 'g')\n"
    "elastic_spectrum(record, [0.5, 1.0, 2.0], [0.05])\n"
    "print(time.perf_counter() - start)\n"
)
EAGER = (
    "import scipy.linalg, scipy.signal, scipy.fft\n"
    "import groundstep.core.fourier, groundstep.core.processing, groundstep.core.inelastic, groundstep.core.measures\n"
)
#: Targets of issue 14 [s].
TARGETS = {"first result": 0.8, "demo": 1.5, "cold warm": 10.0}


def fresh(code: str, env: dict[str, str] | None = None) -> float:
    """Seconds printed by `code` in a new interpreter, or its wall time when it prints nothing."""
    began = time.perf_counter()
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True, env=env)
    wall = time.perf_counter() - began
    text = out.stdout.strip().splitlines()
    try:
        return float(text[-1])
    except (IndexError, ValueError):
        return wall


def best(code: str, repeats: int = REPEATS, env: dict[str, str] | None = None) -> float:
    return min(fresh(code, env) for _ in range(repeats))


def main() -> None:
    fresh(FIRST_RESULT.format(prelude=""))  # make sure the numba cache is warm
    lazy = best(FIRST_RESULT.format(prelude=""))
    eager = best(FIRST_RESULT.format(prelude=EAGER))
    print(f"fresh process to the first elastic_spectrum result, warm cache (best of {REPEATS}, in-process clock)")
    print(f"  now           {lazy:6.3f} s   target {TARGETS['first result']} s: ratio {lazy / TARGETS['first result']:4.2f}")
    print(f"  eager imports {eager:6.3f} s   eager / now {eager / lazy:4.2f}x")
    with tempfile.TemporaryDirectory() as folder:
        demo_code = ("import subprocess, sys, time; t = time.perf_counter(); "
                     f"subprocess.run([sys.executable, '-m', 'groundstep.addin', 'demo', {folder + '/d.xlsx'!r}, '--force'],"
                     " check=True, capture_output=True); print(time.perf_counter() - t)")
        demo = best(demo_code, repeats=3)
        print(f"groundstep demo in a fresh process (best of 3, wall): {demo:6.3f} s   "
              f"target {TARGETS['demo']} s: ratio {demo / TARGETS['demo']:4.2f}")
        warm_code = ("import subprocess, sys, time; t = time.perf_counter(); "
                     "subprocess.run([sys.executable, '-m', 'groundstep.addin', 'warm'], check=True, capture_output=True);"
                     " print(time.perf_counter() - t)")  # fmt: skip
        one_code = ("import subprocess, sys, time; t = time.perf_counter(); "
                    "subprocess.run([sys.executable, '-c', 'from groundstep.core import warm_up; warm_up()'], check=True,"
                    " capture_output=True); print(time.perf_counter() - t)")  # fmt: skip
        cold, one = float("inf"), float("inf")
        for round_ in range(COLD_ROUNDS):  # alternated, so both see the same machine load
            env = dict(os.environ, NUMBA_CACHE_DIR=os.path.join(folder, f"numba-cache-{round_}"))
            cold = min(cold, fresh(warm_code, env))
            env = dict(os.environ, NUMBA_CACHE_DIR=os.path.join(folder, f"numba-cache-one-{round_}"))
            one = min(one, fresh(one_code, env))
        again = best(warm_code, repeats=3, env=env)
        print(f"groundstep warm, cold numba cache (best of {COLD_ROUNDS}, wall): {cold:6.2f} s   "
              f"target {TARGETS['cold warm']} s: ratio {cold / TARGETS['cold warm']:4.2f}")
        print(f"  one process (warm_up(), alternated): {one:6.2f} s   one / two processes {one / cold:4.2f}x")
        print(f"  warm cache (best of 3): {again:5.2f} s   cold / warm {cold / again:4.1f}x")

if __name__ == "__main__":
    main()
