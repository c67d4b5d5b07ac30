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

import os
import sys
import threading
from collections.abc import Callable
from typing import Any


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

__all__ = ["PART_THREADS", "get_num_threads", "njit", "prange"]


class _PartThreads:
    """Python threads that run a ``nogil`` kernel's parts beside the calling thread.

    A kernel compiled with ``parallel=True`` costs numba's parallel compiler
    seconds to build on a cold cache (10 s for the spectrum kernel on the
    2-core machine, measured with ``warm_up``); a plain ``nogil`` kernel that
    runs one part of the work, called from a few threads, compiles like any
    serial kernel and runs the same machine code per chunk. The pool is made
    on first use and again in a forked child (a fork copies no threads).
    """

    def __init__(self) -> None:
        self._pool: Any = None
        self._workers = 0  # threads of `_pool` besides the caller's
        self._pid = -1
        self._lock = threading.Lock()

    def _pool_for(self, workers: int) -> Any:
        """The pool, made (again) when missing, inherited through a fork, or smaller than `workers`."""
        with self._lock:
            if self._pool is None or self._pid != os.getpid() or self._workers < workers:
                from concurrent.futures import ThreadPoolExecutor

                if self._pool is not None and self._pid == os.getpid():  # too small: let its threads end
                    self._pool.shutdown(wait=False)
                self._pool = ThreadPoolExecutor(max_workers=workers, thread_name_prefix="groundstep-kernel")
                self._workers, self._pid = workers, os.getpid()
            return self._pool

    def run(self, kernel: Callable[..., None], args: tuple[Any, ...], parts: int) -> None:
        """``kernel(*args, part)`` for part 0 .. parts-1; part 0 on this thread; re-raises a part's error."""
        if parts <= 1:
            kernel(*args, 0)
            return
        pool = self._pool_for(parts - 1)
        others = [pool.submit(kernel, *args, part) for part in range(1, parts)]
        kernel(*args, 0)
        for other in others:
            other.result()

    def run_each(self, kernel: Callable[..., None], args: tuple[Any, ...], count: int, threads: int) -> None:
        """``kernel(*args, index)`` for index 0 .. count-1, taken one at a time, in order, by `threads` threads.

        This thread is one of them. For work whose cost per index is not
        known in advance (a fixed share per thread, as `run` gives, can leave
        one thread with the heavy items): each thread takes the next index
        when it finishes one. After an error no further index is handed out;
        the first error is raised once every thread has stopped.
        """
        threads = max(1, min(threads, count))
        if threads == 1:
            for index in range(count):
                kernel(*args, index)
            return
        pool = self._pool_for(threads - 1)
        indices = iter(range(count))
        lock = threading.Lock()
        failed: list[BaseException] = []

        def take() -> None:
            while True:
                with lock:
                    index = None if failed else next(indices, None)
                if index is None:
                    return
                try:
                    kernel(*args, index)
                except BaseException as error:
                    with lock:
                        failed.append(error)
                    return

        others = [pool.submit(take) for _ in range(threads - 1)]
        take()
        for other in others:
            other.result()
        if failed:
            raise failed[0]


#: The one pool of kernel threads of this process.
PART_THREADS = _PartThreads()
