"""Core's warnings: emitted through one helper, or collected as data per context.

`warn` is the one way core code issues a warning. Inside `collect_warnings`
the warning object is appended to the caller's list instead of going to the
`warnings` machinery, so nothing process-wide (filters, ``catch_warnings``,
its lock) is touched. The active list lives in a `contextvars.ContextVar`:
each thread, and each asyncio task, sees only its own.
"""

from __future__ import annotations

import warnings
from collections.abc import Iterator
from contextlib import contextmanager
from contextvars import ContextVar

__all__ = ["collect_warnings", "warn"]

_COLLECTOR: ContextVar[list[Warning] | None] = ContextVar("groundstep_core_warnings", default=None)


@contextmanager
def collect_warnings() -> Iterator[list[Warning]]:
    """Collect the warnings core issues in this context, instead of emitting them.

    Parameters
    ----------
    None

    Yields
    ------
    list of Warning
        Receives each warning object (`SubstepWarning`,
        `ConvergenceWarning`, `DuctilityTargetWarning`,
        `RecordTextWarning`, ...) in the order issued; ``str(w)`` is its
        message. Ignore the list to silence core's warnings.

    Returns
    -------
    context manager

    Notes
    -----
    Thread-safe without a lock: the list is held in a context variable, so
    two threads (or asyncio tasks) collecting at once each get their own,
    and a thread that does not collect still emits normally. Nothing is
    changed in the process-wide `warnings` filters. Warnings raised by
    other libraries (numpy, numba) are not collected. An inner
    ``collect_warnings`` takes the warnings of its block; the outer one
    does not see them.

    Examples
    --------
    >>> import numpy as np
    >>> from groundstep.core import Record, collect_warnings, linear_response
    >>> rec = Record(np.sin(np.arange(200) * 0.1), dt=0.02, unit="m/s2")
    >>> with collect_warnings() as caught:
    ...     res = linear_response(rec, period=0.05)
    >>> [type(w).__name__ for w in caught], res.substeps
    (['SubstepWarning'], 4)
    """
    caught: list[Warning] = []
    token = _COLLECTOR.set(caught)
    try:
        yield caught
    finally:
        _COLLECTOR.reset(token)


def warn(warning: Warning, stacklevel: int = 1) -> None:
    """Issue `warning`: into the active `collect_warnings` list, else through `warnings.warn`.

    `stacklevel` counts as in `warnings.warn`, from the caller of this helper.
    """
    caught = _COLLECTOR.get()
    if caught is not None:
        caught.append(warning)
        return
    warnings.warn(warning, stacklevel=stacklevel + 1)
