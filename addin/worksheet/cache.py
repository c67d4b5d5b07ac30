"""Bounded, thread-safe caches for the worksheet functions.

A sheet of 500 ``STEP_PEAK`` cells over one record hands Python the same
20,000 cells 500 times. The record is parsed once and kept under a digest of
the cells as received; each result is kept under the record's key plus the
oscillator and options, so recalculating an unchanged sheet computes nothing.

Keys are built from a SHA-256 digest of the marshalled cell values (exact:
two ranges share a key only when every cell is equal and of the same type),
so a changed sample anywhere in the record gives a new key. Each cache is a
least-recently-used map of bounded length guarded by a lock; a value is
computed outside the lock, so two threads that miss on the same key at the
same moment may both compute it (same inputs, same result), and neither
blocks the other.
"""

from __future__ import annotations

import hashlib
import marshal
import pickle
import threading
from collections import OrderedDict
from collections.abc import Callable, Hashable
from typing import Any, TypeVar

import numpy as np

_T = TypeVar("_T")

#: Parsed records kept. A 20,000-sample record takes 160 kB.
RECORD_CAPACITY = 16
#: Peak values, spectra and other small results kept.
RESULT_CAPACITY = 4096
#: Full response histories kept (each holds four columns of the record length).
HISTORY_CAPACITY = 4
#: Most bytes each cache holds (numpy data and Python objects, estimated by `size_of`);
#: together at most 160 MiB however large the records.
RECORD_BYTES = 64 * 2**20
RESULT_BYTES = 32 * 2**20
HISTORY_BYTES = 64 * 2**20


class LRUCache:
    """A least-recently-used map of bounded length, safe under concurrent calls.

    Parameters
    ----------
    capacity : int
        Most entries kept; the least recently used one is dropped beyond it.
    """

    def __init__(self, capacity: int, max_bytes: int | None = None) -> None:
        if capacity < 1:
            raise ValueError(f"`capacity` must be >= 1, got {capacity!r}")
        self.capacity = int(capacity)
        self.max_bytes = max_bytes
        self._entries: OrderedDict[Hashable, Any] = OrderedDict()
        self._sizes: dict[Hashable, int] = {}
        self._bytes = 0
        self._lock = threading.Lock()
        self.hits = 0
        self.misses = 0

    @property
    def nbytes(self) -> int:
        """Estimated bytes held (`size_of` of each value); at most `max_bytes`."""
        with self._lock:
            return self._bytes

    def __len__(self) -> int:
        with self._lock:
            return len(self._entries)

    def get_or_compute(self, key: Hashable, compute: Callable[[], _T]) -> _T:
        """Return the value stored under `key`, computing and storing it on a miss.

        An exception raised by `compute` propagates and nothing is stored.
        """
        with self._lock:
            if key in self._entries:
                self._entries.move_to_end(key)
                self.hits += 1
                return self._entries[key]
            self.misses += 1
        value = compute()
        size = size_of(value)
        if self.max_bytes is not None and size > self.max_bytes:
            return value  # larger than the whole cache: handed back, not kept
        with self._lock:
            if key in self._entries:
                self._bytes -= self._sizes[key]
            self._entries[key] = value
            self._sizes[key] = size
            self._bytes += size
            self._entries.move_to_end(key)
            while len(self._entries) > self.capacity or (self.max_bytes is not None and self._bytes > self.max_bytes):
                dropped, _ = self._entries.popitem(last=False)
                self._bytes -= self._sizes.pop(dropped)
        return value

    def clear(self) -> None:
        """Drop every entry and zero the counters."""
        with self._lock:
            self._entries.clear()
            self._sizes.clear()
            self._bytes = 0
            self.hits = 0
            self.misses = 0


RECORDS = LRUCache(RECORD_CAPACITY, RECORD_BYTES)
RESULTS = LRUCache(RESULT_CAPACITY, RESULT_BYTES)
HISTORIES = LRUCache(HISTORY_CAPACITY, HISTORY_BYTES)


def size_of(value: Any, _depth: int = 0) -> int:
    """Estimated bytes of a cached value: numpy buffers, containers and dataclass fields, one level deep each.

    An estimate for the byte bound, not an exact count: array buffers
    dominate every cached value (records, histories), and small Python
    objects are counted by ``sys.getsizeof``.
    """
    import dataclasses
    import sys

    if isinstance(value, np.ndarray):
        return int(value.nbytes) + 112  # 112: the array object itself (sys.getsizeof of an empty array)
    if _depth > 4:
        return sys.getsizeof(value)
    if isinstance(value, dict):
        return sys.getsizeof(value) + sum(size_of(k, _depth + 1) + size_of(v, _depth + 1) for k, v in value.items())
    if isinstance(value, (list, tuple)):
        return sys.getsizeof(value) + sum(size_of(item, _depth + 1) for item in value)
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return 64 + sum(size_of(getattr(value, f.name), _depth + 1) for f in dataclasses.fields(value))
    return sys.getsizeof(value)


def digest(cells: Any) -> bytes:
    """The SHA-256 digest of cell values as the spreadsheet passed them.

    SHA-256 rather than BLAKE2b: processors with SHA extensions hash it about
    twice as fast (measured by benchmarks/bench_functions.py's warm figure).

    Values ``marshal`` can write (numbers, text, None, Booleans, lists) are
    hashed from its bytes; anything else (dates) from ``pickle``.
    """
    try:
        payload = marshal.dumps(cells)
    except ValueError:
        payload = pickle.dumps(cells, protocol=pickle.HIGHEST_PROTOCOL)
    return hashlib.sha256(payload).digest()


def clear_all() -> None:
    """Empty every cache (the benchmark's cold start; tests that count parses)."""
    for cache in (RECORDS, RESULTS, HISTORIES):
        cache.clear()
