"""Running a batch: in this process, on a local process pool, or on a Dask distributed cluster.

`run_survey` plans the outputs, rebuilds the results manifest, hands one
task per record (`task.run_record`) to an executor and records each outcome
as it arrives. The executors are the standard library's
``concurrent.futures.ProcessPoolExecutor`` and Dask distributed's
``Client.get_executor()``; both give ``concurrent.futures`` futures, so one
loop drives either. No scheduling of our own: at most a window of
``2 x workers`` tasks is handed over at a time, so a Ctrl-C leaves little to
cancel and the memory of the driver stays flat for any number of records.
"""

from __future__ import annotations

import multiprocessing
import os
import signal
import time
from collections import deque
from collections.abc import Callable, Iterator, Sequence
from concurrent.futures import FIRST_COMPLETED, BrokenExecutor, Executor, Future, ProcessPoolExecutor, wait
from contextlib import AbstractContextManager, contextmanager
from dataclasses import dataclass, field
from pathlib import Path

from .outputs import ResultsManifest
from .plan import RecordEntry, result_name
from .settings import SurveySettings
from .table import write_table
from .task import RecordOutcome, one_numba_thread, run_record

__all__ = ["DASK_MISSING", "SurveySummary", "default_workers", "run_survey"]

#: The message when ``--scheduler`` is asked for without Dask distributed installed.
DASK_MISSING = 'running on a Dask cluster needs Dask distributed: pip install "groundstep[dask]"'


@dataclass(frozen=True, slots=True)
class SurveySummary:
    """How a batch ended.

    Attributes
    ----------
    total, done, skipped, failed : int
        Records planned, and rows of the results manifest by status.
    interrupted : bool
        Stopped by Ctrl-C before every record ran (re-run to resume).
    seconds : float
        Wall time [s].
    failures : tuple of (file, message)
        The failed records, in plan order.
    out_dir : Path
        The output folder (``results.csv``, ``spectra.csv``, ``records/``).
    """

    total: int
    done: int
    skipped: int
    failed: int
    interrupted: bool
    seconds: float
    failures: tuple[tuple[str, str], ...] = field(repr=False)
    out_dir: Path

    @property
    def ok(self) -> bool:
        """Every planned record is done or skipped."""
        return self.done + self.skipped == self.total


def default_workers() -> int:
    """One worker process per core (``os.cpu_count()``; 1 if unknown)."""
    return os.cpu_count() or 1


def run_survey(
    entries: Sequence[RecordEntry],
    settings: SurveySettings,
    out_dir: str | os.PathLike[str],
    *,
    workers: int | None = None,
    scheduler: str | None = None,
    pool: bool | None = None,
    on_outcome: Callable[[RecordOutcome, ResultsManifest], None] | None = None,
) -> SurveySummary:
    """Run every record of a batch and write its outputs; resume where a previous run stopped.

    Parameters
    ----------
    entries : sequence of RecordEntry
        The records (`read_manifest`, `scan_folder`).
    settings : SurveySettings
        What to compute for each.
    out_dir : path-like
        Output folder: ``records/NAME.json`` per record, ``results.csv``,
        ``spectra.csv``. A record whose result there has the same hash
        (record bytes + settings) is skipped.
    workers : int, optional
        Worker processes (default `default_workers`); with a scheduler,
        the worker count of ``"local"``.
    scheduler : str, optional
        ``None``: local processes. ``"local"``: a Dask ``LocalCluster`` on
        127.0.0.1 started for the run and closed after. Any other text:
        the address of a running Dask scheduler (``tcp://host:8786``).
    pool : bool, optional
        Local processes only: force a process pool (True) or this process
        (False). Default: this process when `workers` is 1.
    on_outcome : callable, optional
        Called with each outcome and the manifest after it is recorded
        (the progress display).

    Returns
    -------
    SurveySummary

    Raises
    ------
    ValueError
        Two records would write the same result file; `workers` < 1; Dask
        distributed missing (`DASK_MISSING`).
    """
    start = time.perf_counter()
    workers = default_workers() if workers is None else int(workers)
    if workers < 1:
        raise ValueError(f"`workers` must be >= 1; got {workers}")
    _refuse_shared_names(entries)
    manifest = ResultsManifest(out_dir, entries)
    manifest.write()  # rebuilt at start: rows of records no longer planned go
    tasks = [(entry, manifest.previous_hash(entry.file)) for entry in entries]
    state = _State()
    executor = _executor(workers, scheduler, pool)
    try:
        for outcome in _outcomes(executor, tasks, settings, state):
            manifest.record(outcome)
            if on_outcome is not None:
                on_outcome(outcome, manifest)
    except KeyboardInterrupt:
        state.interrupted = True
    write_table(out_dir, manifest.finished(), settings.ductilities)
    counts = manifest.counts()
    failures = tuple(manifest.failures())
    return SurveySummary(
        total=len(entries), done=counts["done"], skipped=counts["skipped"], failed=counts["failed"],
        interrupted=state.interrupted,
        seconds=time.perf_counter() - start, failures=failures, out_dir=Path(out_dir),
    )  # fmt: skip


class _State:
    """Shared between the driver loop and the executor: Ctrl-C seen."""

    def __init__(self) -> None:
        self.interrupted = False


#: An executor factory: a context manager giving (executor, window, numba threads per task).
_Factory = Callable[[], AbstractContextManager[tuple[Executor | None, int, int | None]]]


def _executor(workers: int, scheduler: str | None, pool: bool | None) -> _Factory:
    if scheduler is not None:
        return lambda: _dask(workers, scheduler)
    if pool is False or (pool is None and workers == 1):
        return _serial
    return lambda: _process_pool(workers)


@contextmanager
def _serial() -> Iterator[tuple[Executor | None, int, int | None]]:
    yield None, 1, None


@contextmanager
def _process_pool(workers: int) -> Iterator[tuple[Executor | None, int, int | None]]:
    # Workers are never forked from this process: it may already run numba's OpenMP threads, which a
    # fork would copy half-alive. The fork server (or a spawned interpreter) starts them clean.
    methods = multiprocessing.get_all_start_methods()
    context = multiprocessing.get_context("forkserver" if "forkserver" in methods else "spawn")
    executor = ProcessPoolExecutor(max_workers=workers, mp_context=context, initializer=_worker_start)
    try:
        yield executor, 2 * workers, None
    finally:
        executor.shutdown(wait=True, cancel_futures=True)


@contextmanager
def _dask(workers: int, scheduler: str) -> Iterator[tuple[Executor | None, int, int | None]]:
    try:
        from distributed import Client, LocalCluster
    except ImportError:
        raise ValueError(DASK_MISSING) from None
    cluster = None
    if scheduler == "local":
        cluster = LocalCluster(
            n_workers=workers, threads_per_worker=1, processes=True, host="127.0.0.1", dashboard_address=None
        )
        client = Client(cluster)
    else:
        client = Client(scheduler)
    try:
        threads = sum(client.nthreads().values()) or 1
        yield client.get_executor(pure=False), 2 * threads, 1
    finally:
        client.close()
        if cluster is not None:
            cluster.close()


def _worker_start() -> None:
    """Worker process start-up: one numba thread (N processes share N cores); Ctrl-C is the driver's."""
    one_numba_thread()
    signal.signal(signal.SIGINT, signal.SIG_IGN)


def _outcomes(
    factory: _Factory, tasks: Sequence[tuple[RecordEntry, str]], settings: SurveySettings, state: _State
) -> Iterator[RecordOutcome]:
    """Each task's outcome as it completes; a dead worker fails its records and a fresh pool goes on."""
    pending = deque(tasks)
    while pending:
        with factory() as (executor, window, threads):
            if executor is None:
                while pending:
                    entry, previous = pending.popleft()
                    yield run_record(entry, settings, previous)
                return
            running: dict[Future[RecordOutcome], RecordEntry] = {}
            broken = False
            while (pending or running) and not broken:
                while pending and len(running) < window and not state.interrupted:
                    entry, previous = pending.popleft()
                    running[executor.submit(run_record, entry, settings, previous, threads)] = entry
                if not running:
                    break
                try:
                    finished, _ = wait(running, return_when=FIRST_COMPLETED)
                except KeyboardInterrupt:  # stop handing out work; let the running records finish
                    state.interrupted = True
                    pending.clear()
                    for future in list(running):
                        if future.cancel():
                            del running[future]
                    continue
                for future in finished:
                    entry = running.pop(future)
                    try:
                        yield future.result()
                    except BrokenExecutor as exc:
                        broken = True
                        yield _lost(entry, exc)
                    except Exception as exc:  # noqa: BLE001 - a worker lost on a cluster fails its record only
                        yield _lost(entry, exc)
            for entry in running.values():  # the pool broke under them
                yield _lost(entry, None)
        if state.interrupted:
            return


def _lost(entry: RecordEntry, exc: BaseException | None) -> RecordOutcome:
    reason = f"{type(exc).__name__}: {str(exc).strip().splitlines()[0] if str(exc).strip() else ''}" if exc else ""
    message = "the worker process running this record died (out of memory?); re-run the batch to retry it"
    return RecordOutcome(entry.file, "failed", message + (f" ({reason})" if reason else ""), "", 0.0)


def _refuse_shared_names(entries: Sequence[RecordEntry]) -> None:
    seen: dict[str, str] = {}
    for entry in entries:
        name = result_name(entry.file)
        if name in seen:
            raise ValueError(f"records {seen[name]!r} and {entry.file!r} would both write records/{name}; rename one")
        seen[name] = entry.file
