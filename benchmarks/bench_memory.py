"""Benchmark: peak memory of `elastic_spectrum` on 10^6 steps x 500 periods.

Target (issue 14): the peak stays within 1.5x the record's own size above
the import baseline, i.e. the call's temporaries stay under half a record.

Two measurements, both printed as a multiple of the record's size (8 MB):

* tracemalloc, in this process: numpy reports its data allocations to
  tracemalloc, so the traced peak during the call is the record-length
  temporaries (the record itself already exists). The former path (the
  kernel handed a negated copy of the record) is run beside the current one
  in the same run, and the two results are checked equal bit for bit.
* the resident set, in a fresh interpreter per path: the import baseline
  is taken after importing groundstep and loading both compiled spectrum
  kernels (serial and parallel) on a small record. The record is built
  (``accel_is_si=True``: no unit conversion; ``Record`` still copies its
  input, so building it peaks at 2x, printed apart), the high-water mark
  is reset (``/proc/self/clear_refs``, Linux) and read after the spectrum
  (``VmHWM``): record + temporaries + whatever the threads touch.
  ``resource.getrusage`` maxrss is printed too, but it is the whole
  process's peak (imports included) and the reset does not reach it.

Run with ``python benchmarks/bench_memory.py``.
"""

from __future__ import annotations

import json
import platform
import subprocess
import sys
import tracemalloc

import numpy as np

from groundstep.core import Record, __version__, elastic_spectrum

STEPS = 1_000_000
PERIODS = 500
DT = 0.01  # s; periods 0.1-10 s keep dt/T <= 0.1: no sub-steps
TARGET = 1.5  # peak above the import baseline, in record sizes

CHILD = r"""
import json, resource, sys, warnings
import numpy as np
from groundstep.core import Record, elastic_spectrum
from groundstep.core import _kernels
from groundstep.core.linear import _step_coefficients
from groundstep.core.methods import resolve_method

steps, count, dt, path = int(sys.argv[1]), int(sys.argv[2]), float(sys.argv[3]), sys.argv[4]
periods = np.geomspace(0.1, 10.0, count)

def former(record):
    method = resolve_method("average")
    coef, used = _step_coefficients(record.dt, periods, np.full(count, 0.05), method, 0.1)
    out = np.empty((3, count))
    zeros = np.zeros(count)
    _kernels.spectrum_peaks(-record.accel, coef, used, _kernels.chunk_starts(used), zeros, zeros, out)
    return out

run = former if path == "former" else (lambda record: elastic_spectrum(record, periods, 0.05))
small = Record(np.sin(np.arange(5_000) * 0.01), dt, "m/s2")
with warnings.catch_warnings():
    warnings.simplefilter("ignore")
    elastic_spectrum(small, periods[:10], 0.05)  # serial kernel
    elastic_spectrum(small, np.geomspace(0.1, 10.0, 1_000), 0.05)  # parallel kernel (above SERIAL_WORK)
    former(small)
def status(field):  # [KiB] from /proc/self/status: VmRSS now, VmHWM the high-water mark
    with open("/proc/self/status") as handle:
        return int(next(line for line in handle if line.startswith(field)).split()[1])

def reset_high_water():  # Linux: set VmHWM back to the current resident size
    with open("/proc/self/clear_refs", "w") as handle:
        handle.write("5")

reset_high_water()
baseline = status("VmRSS")
accel = np.random.default_rng(7).standard_normal(steps)  # m/s2, the record's own 8 MB
record = Record(accel, dt, "m/s2", accel_is_si=True)  # Record keeps its own copy
del accel
built_peak, after_record = status("VmHWM"), status("VmRSS")
reset_high_water()
run(record)
print(json.dumps({"baseline": baseline, "built_peak": built_peak, "after_record": after_record,
                  "call_peak": status("VmHWM"),
                  "maxrss": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss}))
"""


def traced_peak(call) -> int:
    """Peak bytes traced during `call()` above what was traced before it."""
    tracemalloc.start()
    tracemalloc.reset_peak()
    before = tracemalloc.get_traced_memory()[0]
    call()
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    return peak - before


def former_path(record: Record, periods: np.ndarray) -> np.ndarray:
    """The kernel as elastic_spectrum called it before: on a negated copy of the record."""
    from groundstep.core import _kernels
    from groundstep.core.linear import _step_coefficients
    from groundstep.core.methods import resolve_method

    coef, used = _step_coefficients(record.dt, periods, np.full(periods.size, 0.05), resolve_method("average"), 0.1)
    out = np.empty((3, periods.size))
    zeros = np.zeros(periods.size)
    _kernels.spectrum_peaks(-record.accel, coef, used, _kernels.chunk_starts(used), zeros, zeros, out)
    return out


def fresh(path: str) -> dict[str, int]:
    done = subprocess.run(
        [sys.executable, "-c", CHILD, str(STEPS), str(PERIODS), str(DT), path],
        capture_output=True, text=True, check=True,
    )  # fmt: skip
    return json.loads(done.stdout.strip().splitlines()[-1])


def main() -> None:
    periods = np.geomspace(0.1, 10.0, PERIODS)
    record = Record(np.random.default_rng(7).standard_normal(STEPS), DT, "m/s2", accel_is_si=True)
    size = record.accel.nbytes
    elastic_spectrum(record, periods[:4], 0.05)  # load the compiled kernels before tracing
    former_path(record, periods[:4])
    spectrum = elastic_spectrum(record, periods, 0.05)
    old = former_path(record, periods)
    same = all(np.array_equal(getattr(spectrum, row)[0], old[i]) for i, row in enumerate(("sd", "sv", "sa")))

    now = traced_peak(lambda: elastic_spectrum(record, periods, 0.05))
    before = traced_peak(lambda: former_path(record, periods))
    print(f"groundstep {__version__}, Python {platform.python_version()}, {platform.machine()}")
    print(f"elastic_spectrum, {STEPS:,} steps x {PERIODS} periods; record {size / 1e6:.1f} MB; target <= {TARGET}x record")
    print(f"  results of the two paths equal bit for bit: {same}")
    print("  tracemalloc, temporaries during the call (record already built):")
    print(f"    former (negated copy)  {before / 1e6:7.2f} MB = {before / size:.2f}x record -> peak {1 + before / size:.2f}x")
    print(f"    current                {now / 1e6:7.2f} MB = {now / size:.2f}x record -> peak {1 + now / size:.2f}x")
    print("  resident set in a fresh interpreter, above the import baseline (kernels loaded), KiB from /proc:")
    for path in ("former", "current"):
        kib = fresh(path)
        record_only = (kib["after_record"] - kib["baseline"]) * 1024
        building = (kib["built_peak"] - kib["baseline"]) * 1024
        call = (kib["call_peak"] - kib["baseline"]) * 1024
        verdict = "meets" if call <= TARGET * size else "misses"
        print(f"    {path:8s} record resident {record_only / size:.2f}x (Record(...) itself peaks at {building / size:.2f}x), "
              f"peak during the call {call / size:.2f}x record: {verdict} the target; "
              f"process maxrss {kib['maxrss'] / 1024:.0f} MB")

if __name__ == "__main__":
    main()
