"""Compile every numba kernel once so later calls load from the on-disk cache.

numba compiles a kernel on its first call (seconds each) and, with
``cache=True``, stores the machine code beside the module. ``warm_up`` makes
those first calls on a tiny record, so the cost is paid once per install
(``groundstep warm``), not once per workbook. numba compiles on one thread,
so ``warm_up(processes=2)`` has a second interpreter compile the RotD,
constant-ductility and exact-map kernels at the same time (``groundstep
warm`` does).
"""

from __future__ import annotations

import importlib
import json
import os
import subprocess
import sys
import time
from collections.abc import Callable, Iterable

import numpy as np

from ._notices import collect_warnings

__all__ = ["warm_up"]

#: Functions (or single call labels) the second process of ``warm_up(processes=2)`` warms.
_SECOND = ("rotd_spectrum", "ductility_spectrum", "elastic_spectrum (exact)")
#: Of those, the ones whose first call also needs a kernel the first process compiles
#: (both run the Newmark spectrum's plan, `_kernels.peaks` and values): the second
#: process waits for the first one's signal before these, so no kernel is compiled twice.
_AFTER_SIGNAL = ("ductility_spectrum", "elastic_spectrum (exact)")
#: Functions the first process warms before it signals the second one (they compile those shared kernels).
_BEFORE_SIGNAL = ("elastic_spectrum (Newmark)",)
#: The kernel modules each function of the second process compiles: when every kernel of them
#: has an index file in numba's cache, the cache is taken as warm and no second process starts.
_SECOND_MODULES = {
    "rotd_spectrum": "_kernels_rotd",
    "ductility_spectrum": "_kernels_inelastic",
    "elastic_spectrum (exact)": "_coefficients",  # the exact maps; the Newmark ones are the first process's
}
#: Label suffix of the steps the second process ran.
SECOND_LABEL = " (second process)"
#: Longest wait for the second process [s]: far above a cold compile (seconds), so only a hung child meets it.
_SECOND_TIMEOUT = 900.0


def warm_up(only: Iterable[str] | None = None, processes: int = 1) -> dict[str, float]:
    """Call each public computation once on a tiny record; return seconds per step.

    Parameters
    ----------
    only : iterable of str, optional
        Names of the public functions to warm (``"elastic_spectrum"``,
        ``"linear_response"``, ``"inelastic_response"``,
        ``"ductility_spectrum"``, ``"rotd_spectrum"``); all of them by
        default. A command that never runs a constant-ductility spectrum
        skips loading its kernel.
    processes : {1, 2}, default 1
        With 2, a second Python interpreter makes the first calls of
        ``rotd_spectrum``, ``ductility_spectrum`` and the exact-method
        ``elastic_spectrum`` (when warmed) while this one makes the others, so a cold cache fills in about the time of the
        larger half. It waits for this process to compile the kernel both
        need (the elastic spectrum's) and then loads it from the cache. If
        the second process cannot start or fails, this process makes its
        calls instead. The kernels of the second process's calls are then on
        disk, not loaded in this process. No second process starts on a
        single CPU, or when numba's cache already holds those kernels.

    Core's warnings during the calls are collected and dropped
    (`collect_warnings`); no process-wide warning filter is changed.

    Returns
    -------
    dict
        Wall time [s] of each warm-up call, in call order, plus ``"total"``
        (wall time of the whole warm-up). A call that loads from a warm
        cache takes milliseconds; a cold one takes seconds. Calls the second
        process made are labelled with ``" (second process)"`` and follow
        this process's calls, in the order that process made them.

    Raises
    ------
    ValueError
        A name in `only` that is not one of the functions above, or
        `processes` not 1 or 2.

    Examples
    --------
    >>> from groundstep.core import warm_up
    >>> sorted(warm_up(only=["linear_response"]))
    ['linear_response', 'total']
    """
    if processes not in (1, 2):
        raise ValueError(f"`processes` must be 1 or 2, got {processes!r}")
    calls = _calls(only)
    start = time.perf_counter()
    second = [label for label in calls if _among(label, _SECOND)] if processes == 2 else []
    if second and (_usable_cpus() < 2 or _indexed({_SECOND_MODULES.get(label) or _SECOND_MODULES[_name(label)] for label in second})):
        second = []  # one CPU, or a warm cache (it loads in milliseconds): an interpreter would cost more
    child = _start_second(second) if second else None
    if child is None:
        return _run_calls(calls, start)
    process, signal = child
    mine = {label: call for label, call in calls.items() if label not in second}
    timings: dict[str, float] = {}
    try:
        timings.update(_run_calls({k: v for k, v in mine.items() if k in _BEFORE_SIGNAL}, start))
        _signal(signal)
        timings.update(_run_calls({k: v for k, v in mine.items() if k not in _BEFORE_SIGNAL}, start))
    except BaseException:
        process.kill()
        process.communicate()
        raise
    finally:
        _signal(signal)
    theirs = _second_timings(process, second)
    del timings["total"]
    if theirs is None:  # the second process failed: make its calls here
        timings.update(_run_calls({label: calls[label] for label in second}, start))
        del timings["total"]
    else:
        timings.update({label + SECOND_LABEL: seconds for label, seconds in theirs.items()})
    timings["total"] = time.perf_counter() - start
    return timings


def _name(label: str) -> str:
    """The public function a call label warms ("elastic_spectrum (exact)" -> "elastic_spectrum")."""
    return label.split(" ")[0]


def _calls(only: Iterable[str] | None) -> dict[str, Callable[[], object]]:
    """The warm-up calls by label, in call order, limited to the functions in `only`."""
    from .linear import elastic_spectrum, linear_response
    from .record import Record

    record = Record(np.sin(np.linspace(0.0, 6.0, 64)), dt=0.02, unit="m/s2")
    long_record = Record(np.sin(np.linspace(0.0, 600.0, 20_001)), dt=0.02, unit="m/s2")
    calls: dict[str, Callable[[], object]] = {
        "elastic_spectrum (Newmark)": lambda: elastic_spectrum(record, [0.0, 0.01, 0.5], [0.05]),
        "elastic_spectrum (exact)": lambda: elastic_spectrum(record, [0.5], [0.05], method="exact"),
        # enough oscillator-steps (_kernels.SERIAL_WORK) to load the threaded kernel and its chunk balance too
        "elastic_spectrum (threaded)": lambda: elastic_spectrum(long_record, np.linspace(0.5, 5.0, 101), [0.05]),
        "linear_response": lambda: linear_response(record, 0.01),
    }
    try:  # the yielding engine, when installed
        inelastic = importlib.import_module(f"{__package__}.inelastic")
    except ImportError:
        inelastic = None
    if inelastic is not None:
        calls["inelastic_response"] = lambda: inelastic.inelastic_response(record, 0.5, reduction_factor=2.0)
        calls["ductility_spectrum"] = lambda: inelastic.ductility_spectrum(record, [0.3, 0.6], [1.0, 2.0])
    from .rotd import rotd_spectrum

    calls["rotd_spectrum"] = lambda: rotd_spectrum(record, record, [0.5])
    if only is not None:
        wanted = set(only)
        known = {_name(label) for label in calls}
        if not wanted <= known:
            raise ValueError(
                f"`only` names {sorted(wanted - known)}, which warm_up does not know; use some of {sorted(known)}"
            )
        calls = {label: call for label, call in calls.items() if _name(label) in wanted}
    return calls


def _run_calls(calls: dict[str, Callable[[], object]], start: float) -> dict[str, float]:
    """Make `calls` in order; seconds of each, and ``"total"`` since `start`."""
    timings: dict[str, float] = {}
    with collect_warnings():  # sub-steps of the tiny record are expected; nothing process-wide changes
        for label, call in calls.items():
            began = time.perf_counter()
            call()
            timings[label] = time.perf_counter() - began
    timings["total"] = time.perf_counter() - start
    return timings


def _usable_cpus() -> int:
    """CPUs this process may run on (its affinity where the system reports one)."""
    try:
        return len(os.sched_getaffinity(0))
    except AttributeError:  # not on every system
        return os.cpu_count() or 1


def _indexed(modules: set[str]) -> bool:
    """True when every cached kernel of `modules` has an index file in numba's cache (a warm cache).

    An index file that no longer matches the source only costs time: the
    kernel is then compiled in this process. Reads numba's cache locator
    (``_cache._cache_file._index_path``); if that changes, the answer is False.
    """
    from numba.core.dispatcher import Dispatcher

    for module_name in modules:
        module = importlib.import_module(f"{__package__}.{module_name}")
        for kernel in vars(module).values():
            if not isinstance(kernel, Dispatcher) or kernel.py_func.__module__ != module.__name__:
                continue
            if kernel.targetoptions.get("inline") == "always":
                continue  # compiled only inside its callers: no cache entry of its own
            try:
                index = kernel._cache._cache_file._index_path  # type: ignore[attr-defined]
            except AttributeError:
                return False
            if not os.path.exists(index):
                return False
    return True


def _start_second(labels: list[str]) -> tuple[subprocess.Popen[str], list[int]] | None:
    """Start the second interpreter on `labels`; its process and the write end of its signal pipe.

    None when it cannot start (this process then makes those calls).
    """
    read, write = os.pipe()
    code = f"from {__package__} import _warm; _warm._second_process({read}, {json.dumps(labels)!r})"
    try:
        process = subprocess.Popen([sys.executable, "-c", code], stdin=subprocess.DEVNULL, stdout=subprocess.PIPE,
                                   stderr=subprocess.PIPE, text=True, pass_fds=(read,))  # fmt: skip
    except OSError:
        os.close(read)
        os.close(write)
        return None
    os.close(read)
    return process, [write]


def _signal(signal: list[int]) -> None:
    """Tell the second process the shared kernels are on disk (closing the pipe); later calls do nothing."""
    if signal:
        os.close(signal.pop())


def _second_timings(process: subprocess.Popen[str], labels: list[str]) -> dict[str, float] | None:
    """The second process's seconds per call, or None when it failed or did not make every call."""
    try:
        out, _ = process.communicate(timeout=_SECOND_TIMEOUT)
    except subprocess.TimeoutExpired:
        process.kill()
        process.communicate()
        return None
    if process.returncode != 0:
        return None
    try:
        timings = json.loads(out.strip().splitlines()[-1])
    except (IndexError, ValueError):
        return None
    if not isinstance(timings, dict) or sorted(timings) != sorted(labels):
        return None
    return {label: float(seconds) for label, seconds in timings.items()}


def _second_process(signal: int, labels_text: str) -> None:
    """The second interpreter of ``warm_up(processes=2)``: make the calls `labels_text` names, print JSON timings.

    Calls that need no kernel of the first process come first; calls of `_AFTER_SIGNAL` wait until the first process closes the pipe
    `signal` (its shared kernels are then in the cache).
    """
    labels = json.loads(labels_text)
    calls = _calls({_name(label) for label in labels})
    timings: dict[str, float] = {}
    start = time.perf_counter()
    prepared: dict[str, float] = {}
    for label in sorted(labels, key=lambda label: _among(label, _AFTER_SIGNAL)):
        if signal >= 0 and _among(label, _AFTER_SIGNAL):
            for other in labels:  # compile what needs no shared kernel while the first process works
                if _name(other) in _PREPARE:
                    began = time.perf_counter()
                    with collect_warnings():
                        _PREPARE[_name(other)]()
                    prepared[other] = time.perf_counter() - began
            with os.fdopen(signal, "rb") as pipe:
                pipe.read()  # returns when the first process closes its end
            signal = -1
        timings.update(_run_calls({label: calls[label]}, start))
        del timings["total"]
    print(json.dumps({label: seconds + prepared.get(label, 0.0) for label, seconds in timings.items()}))  # in call order


def _among(label: str, group: tuple[str, ...]) -> bool:
    """True when `group` names the call `label` or its public function."""
    return label in group or _name(label) in group


def _yielding_kernels() -> None:
    """Compile the constant-ductility search's own kernels without an elastic spectrum.

    `ductility_spectrum` first runs `elastic_spectrum` (the first process
    compiles its kernels), then the yielding search. This runs the search's
    solver on a tiny record with given strengths, so the yielding spectrum
    kernel and the elastic lead-in's kernels are compiled while the first
    process compiles the elastic ones; the real call after the signal then
    loads everything from the cache. The arguments have the types
    `ductility_spectrum` passes (float64 arrays, int64 sub-steps, the
    settings as `_check_settings` returns them for the defaults), so the
    compiled signatures are the ones it later looks up
    (tests/test_cli.py checks that nothing is compiled afterwards).
    """
    import inspect

    from . import inelastic
    from ._ductility_search import Solver
    from .record import Record

    defaults = inspect.signature(inelastic.ductility_spectrum).parameters
    settings = [defaults[name].default for name in ("damping", "hardening", "method", "max_step_ratio", "tolerance", "max_iterations")]
    damping, alpha, method, _, tolerance, iterations = inelastic._check_settings(*settings)
    record = Record(np.sin(np.linspace(0.0, 6.0, 64)), dt=0.02, unit="m/s2")
    periods = np.array([0.3, 0.6])
    substeps = np.array([4, 2], dtype=np.int64)  # any counts: only the kernels' argument types matter here
    solver = Solver(record, method, alpha, damping, tolerance, iterations, None, periods, substeps)
    solver.ductility(periods, np.array([0.5, 0.5]), substeps)  # strengths [m/s²] below the record's peak: it yields


#: Per function of `_AFTER_SIGNAL`: compiles its kernels that need none of the first process's, before the wait.
_PREPARE: dict[str, Callable[[], None]] = {"ductility_spectrum": _yielding_kernels}
