"""numba's decorators, imported so that loading the first kernel stays quick.

Private layer. When numba loads its first compiled function it imports its
array-math registry, which probes for a BLAS by importing ``scipy.linalg``
(about 0.5 s on a 2-core machine, measured by benchmarks/bench_startup.py).
The kernels here call no BLAS routine, so that registry is imported once,
up front, with ``scipy.linalg`` marked absent for the moment of the probe:
numba then records that it has no BLAS, which only makes its own
``np.convolve``/``np.correlate`` use a plain loop (same results). A process
that imported ``scipy.linalg`` or numba's registry already is left as it is.
"""

from __future__ import annotations

import sys


def _import_array_math_without_blas_probe() -> None:
    if "numba.np.arraymath" in sys.modules or "scipy.linalg" in sys.modules:
        return
    sys.modules["scipy.linalg"] = None  # type: ignore[assignment]  # makes `import scipy.linalg` fail
    try:
        import numba.np.arraymath  # noqa: F401
    finally:
        if sys.modules.get("scipy.linalg", 0) is None:
            del sys.modules["scipy.linalg"]


_import_array_math_without_blas_probe()

from numba import get_num_threads, njit, prange  # noqa: E402

__all__ = ["get_num_threads", "njit", "prange"]
