"""Compile every numba kernel once so later calls load from the on-disk cache.

numba compiles a kernel on its first call (seconds each) and, with
``cache=True``, stores the machine code beside the module. ``warm_up`` makes
those first calls on a tiny record, so the cost is paid once per install
(``groundstep warm``), not once per workbook.
"""

from __future__ import annotations

import importlib
import time
from collections.abc import Callable, Iterable

import numpy as np

from ._notices import collect_warnings

__all__ = ["warm_up"]


def warm_up(only: Iterable[str] | None = None) -> dict[str, float]:
    """Call each public computation once on a tiny record; return seconds per step.

    Parameters
    ----------
    only : iterable of str, optional
        Names of the public functions to warm (``"elastic_spectrum"``,
        ``"linear_response"``, ``"inelastic_response"``,
        ``"ductility_spectrum"``); all of them by default. A command that
        never runs a constant-ductility spectrum skips loading its kernel.

    Core's warnings during the calls are collected and dropped
    (`collect_warnings`); no process-wide warning filter is changed.

    Returns
    -------
    dict
        Wall time [s] of each warm-up call, in call order, plus ``"total"``.
        A call that loads from a warm cache takes milliseconds; a cold one
        takes seconds.

    Raises
    ------
    ValueError
        A name in `only` that is not one of the functions above.

    Examples
    --------
    >>> from groundstep.core import warm_up
    >>> sorted(warm_up(only=["linear_response"]))
    ['linear_response', 'total']
    """
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
        known = {label.split(" ")[0] for label in calls}
        if not wanted <= known:
            raise ValueError(
                f"`only` names {sorted(wanted - known)}, which warm_up does not know; use some of {sorted(known)}"
            )
        calls = {label: call for label, call in calls.items() if label.split(" ")[0] in wanted}
    timings: dict[str, float] = {}
    with collect_warnings():  # sub-steps of the tiny record are expected; nothing process-wide changes
        start = time.perf_counter()
        for label, call in calls.items():
            began = time.perf_counter()
            call()
            timings[label] = time.perf_counter() - began
        timings["total"] = time.perf_counter() - start
    return timings
