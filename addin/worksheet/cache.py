"""Bounded, thread-safe caches for the worksheet functions.

A sheet of 500 ``STEP_PEAK`` cells over one record hands Python the same
20,000 cells 500 times. The record is parsed once and kept under a digest of
the cells as received; each result is kept under the record's key plus the
oscillator and options, so recalculating an unchanged sheet computes nothing.

Keys are built from a SHA-256 digest of the cell values (exact: two ranges
share a key only when every cell is equal and of the same type, see
`digest` and `is_plain`), so a changed sample anywhere in the record gives a
new key. Each cache is a least-recently-used map of bounded length guarded
by a lock; a value is computed outside the lock, so two threads that miss on
the same key at the same moment may both compute it (same inputs, same
result), and neither blocks the other.

`CELLS` finds cells seen before without hashing them again: a cheap
fingerprint picks the candidates and a full comparison of the cells
confirms (`CellIndex`).

`ASKED` remembers which periods ``STEP_PEAK`` cells asked for, per damping
and method, so the first cell over a new (edited) record computes all of
them in one spectrum pass (see ``convert.peaks``).
"""

from __future__ import annotations

import dataclasses
import functools
import hashlib
import marshal
import pickle
import sys
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
RECORD_BYTES = 48 * 2**20
RESULT_BYTES = 32 * 2**20
HISTORY_BYTES = 64 * 2**20
#: Option readings kept by `OPTIONS` (a few small values each).
OPTION_CAPACITY = 1024
#: Cells kept by `CELLS` for the exact comparison (marshal bytes or an array copy).
CELL_CAPACITY = 2 * RECORD_CAPACITY
CELL_BYTES = 16 * 2**20


class _Bounded:
    """What both bounded stores share: their bounds, a lock, hit and miss counts, the bytes held."""

    def __init__(self, capacity: int, max_bytes: int | None) -> None:
        if capacity < 1:
            raise ValueError(f"`capacity` must be >= 1, got {capacity!r}")
        self.capacity = int(capacity)
        self.max_bytes = max_bytes
        self._bytes = 0
        self._lock = threading.Lock()
        self.hits = 0
        self.misses = 0

    @property
    def nbytes(self) -> int:
        """Bytes held (estimated for `LRUCache`, exact for `CellIndex`); at most `max_bytes`."""
        with self._lock:
            return self._bytes

    def __len__(self) -> int:
        with self._lock:
            return self._count()

    def _count(self) -> int:
        raise NotImplementedError


class LRUCache(_Bounded):
    """A least-recently-used map of bounded length, safe under concurrent calls.

    Parameters
    ----------
    capacity : int
        Most entries kept; the least recently used one is dropped beyond it.
    """

    def __init__(self, capacity: int, max_bytes: int | None = None) -> None:
        super().__init__(capacity, max_bytes)
        self._entries: OrderedDict[Hashable, Any] = OrderedDict()
        self._sizes: dict[Hashable, int] = {}

    def _count(self) -> int:
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
#: Option cells already read (units, quantity names as typed) -> what they gave (``convert``).
OPTIONS = LRUCache(OPTION_CAPACITY)


def size_of(value: Any, _depth: int = 0) -> int:
    """Estimated bytes of a cached value: numpy buffers, containers and dataclass fields, one level deep each.

    An estimate for the byte bound, not an exact count: array buffers
    dominate every cached value (records, histories), and small Python
    objects are counted by ``sys.getsizeof``.
    """
    kind: type = type(value)
    if kind in _ATOMS:
        return sys.getsizeof(value)
    if kind is np.ndarray:
        return int(value.nbytes) + 112  # 112: the array object itself (sys.getsizeof of an empty array)
    if _depth > 4:
        return sys.getsizeof(value)
    if isinstance(value, dict):
        return sys.getsizeof(value) + sum(size_of(k, _depth + 1) + size_of(v, _depth + 1) for k, v in value.items())
    if isinstance(value, (list, tuple)):
        return sys.getsizeof(value) + sum(size_of(item, _depth + 1) for item in value)
    if isinstance(value, np.ndarray):
        return int(value.nbytes) + 112
    names = _field_names(kind)
    if names is not None:
        return 64 + sum(size_of(getattr(value, name), _depth + 1) for name in names)
    return sys.getsizeof(value)


#: Types `size_of` counts by ``sys.getsizeof`` alone (no parts of their own to add).
_ATOMS = frozenset({float, int, bool, str, bytes, complex, type(None)})


@functools.lru_cache(maxsize=256)
def _field_names(kind: type) -> tuple[str, ...] | None:
    """The field names of a dataclass type (``dataclasses.fields`` costs microseconds a call), else None."""
    if not dataclasses.is_dataclass(kind):
        return None
    return tuple(field.name for field in dataclasses.fields(kind))


#: Cell values whose marshal bytes say their type (``bool`` is written apart from ``int``).
_PLAIN_SCALARS = frozenset({float, int, str, bool, type(None)})


def digest(cells: Any) -> bytes:
    """The SHA-256 digest of cell values as the spreadsheet passed them.

    Exact for plain cells (`is_plain`): two plain ranges share a digest only
    when every cell is equal and of the same type (1 and 1.0, the text "1"
    and the number 1, NaN and a blank all differ). Plain cells are written
    by ``marshal`` version 2, which tags every value with its type and
    writes floats as their 8 bytes; version 2 keeps no back-references,
    which makes it 2-3x faster than the newest version on a 20,000-cell
    column (benchmarks/bench_functions.py prints both).

    A numpy array is digested from its dtype, shape and bytes. Cells marshal
    refuses (dates) go through ``pickle``. Other cells that are not plain
    (numpy scalars, bytes) are written by marshal as raw bytes without their
    type, so two of them may share a digest: store an entry under this
    digest only for plain cells, else under `strict_digest` (as
    ``convert.record`` does).

    SHA-256 rather than BLAKE2b: processors with SHA extensions hash it about
    twice as fast.
    """
    if isinstance(cells, np.ndarray) and cells.dtype != object:
        header = f"a{cells.dtype.str}{cells.shape}|".encode()
        return hashlib.sha256(header + np.ascontiguousarray(cells).tobytes()).digest()
    try:
        payload = marshal.dumps(cells, 2)
    except ValueError:
        return strict_digest(cells)
    return _marshal_digest(payload)


def _marshal_digest(payload: bytes) -> bytes:
    """SHA-256 of ``b"m"`` and the marshal bytes of plain cells (`digest`, `cell_digest`), without a joined copy."""
    hasher = hashlib.sha256(b"m")
    hasher.update(payload)
    return hasher.digest()


def strict_digest(cells: Any) -> bytes:
    """The SHA-256 digest of the cells' pickle: exact for any cells pickle writes (slower than `digest`)."""
    return hashlib.sha256(b"p" + pickle.dumps(cells, protocol=pickle.HIGHEST_PROTOCOL)).digest()


def is_plain(cells: Any) -> bool:
    """Whether `digest` of these cells is exact: lists/tuples of floats, ints, text, Booleans and blanks.

    A numpy array that does not hold Python objects is plain too (its dtype
    and shape are digested). This walks every cell: call it only when an
    entry is about to be stored, never on the lookup path.
    """
    if isinstance(cells, np.ndarray):
        return cells.dtype != object
    if type(cells) not in (list, tuple):
        return type(cells) in _PLAIN_SCALARS
    kinds = set(map(type, cells))
    if kinds <= _PLAIN_SCALARS:
        return True
    if not kinds <= _PLAIN_SCALARS | {list, tuple}:
        return False
    return all(type(row) in _PLAIN_SCALARS or is_plain(row) for row in cells)


class CellIndex(_Bounded):
    """Cells seen before -> their `digest`, found by a fingerprint and confirmed by a full comparison.

    Hashing 20,000 cells costs more than comparing them with cells kept
    from an earlier call, so a repeated range is looked up in two steps:

    1. a fingerprint of a few bytes (the length of the cells' exact form and
       a few slices of it) selects the entries that may match;
    2. the exact form of the new cells is compared in full, at C speed,
       with the form kept for each candidate; only an equal form is a hit.

    The exact form is the one `digest` hashes: ``marshal`` version 2 bytes
    for lists and tuples (exact for plain cells only, so `remember` is
    called for plain cells only) and, for a numpy array that does not hold
    Python objects, its dtype, shape and bytes (compared as unsigned
    integers, so -0.0 and 0.0, and NaNs of different bits, differ). A hit
    is therefore exact: never a stale one. Arrays of Python objects and
    cells marshal refuses have no exact form here (`form` gives None).

    Parameters
    ----------
    capacity : int
        Most entries kept; the least recently used one is dropped beyond it.
    max_bytes : int
        Most bytes of kept forms.
    """

    def __init__(self, capacity: int = CELL_CAPACITY, max_bytes: int = CELL_BYTES) -> None:
        super().__init__(capacity, int(max_bytes))
        self._limit = int(max_bytes)  # `max_bytes`, typed as the int it always is here
        # fingerprint -> [(form, digest), ...]; the order is the use order of fingerprints
        self._entries: OrderedDict[Hashable, list[tuple[Any, bytes]]] = OrderedDict()
        self._forms = 0

    def _count(self) -> int:
        return self._forms

    @staticmethod
    def form(cells: Any) -> tuple[Hashable, Any] | None:
        """(fingerprint, exact form) of cells, or None when they have no exact form here."""
        if isinstance(cells, np.ndarray):
            if cells.dtype == object or cells.size == 0:
                return None
            flat = np.ascontiguousarray(cells).reshape(-1)
            size = flat.dtype.itemsize
            flat = flat.view(f"u{size}") if size in (1, 2, 4, 8) else flat.view(np.uint8)
            count = flat.size
            picks = flat[[0, count // 3, count // 2, (2 * count) // 3, count - 1]].tobytes()
            return ("a", cells.dtype.str, cells.shape, picks), flat
        if type(cells) not in (list, tuple):
            return None
        try:
            payload = marshal.dumps(cells, 2)
        except ValueError:
            return None
        n = len(payload)
        middle = n // 2
        return ("m", n, payload[:48], payload[middle : middle + 48], payload[-48:]), payload

    def find(self, fingerprint: Hashable, exact: Any) -> bytes | None:
        """The digest kept for cells of this exact form, or None."""
        with self._lock:
            candidates = self._entries.get(fingerprint)
            if candidates is not None:
                self._entries.move_to_end(fingerprint)
                candidates = list(candidates)
        for kept, digest_ in candidates or ():
            if _same_form(exact, kept):
                self.hits += 1
                return digest_
        self.misses += 1
        return None

    def remember(self, fingerprint: Hashable, exact: Any, digest_: bytes) -> None:
        """Keep the exact form of plain cells (`is_plain`) with their digest."""
        kept = exact.copy() if isinstance(exact, np.ndarray) else exact  # the caller's array may change later
        size = kept.nbytes if isinstance(kept, np.ndarray) else len(kept)
        if size > self._limit:
            return
        with self._lock:
            entries = self._entries.setdefault(fingerprint, [])
            entries.append((kept, digest_))
            self._entries.move_to_end(fingerprint)
            self._forms += 1
            self._bytes += size
            while self._forms > self.capacity or self._bytes > self._limit:
                oldest = next(iter(self._entries))
                dropped = self._entries[oldest].pop(0)
                if not self._entries[oldest]:
                    del self._entries[oldest]
                self._forms -= 1
                self._bytes -= dropped[0].nbytes if isinstance(dropped[0], np.ndarray) else len(dropped[0])

    def clear(self) -> None:
        """Forget every entry and zero the counters."""
        with self._lock:
            self._entries.clear()
            self._forms = self._bytes = self.hits = self.misses = 0


def _same_form(new: Any, kept: Any) -> bool:
    """Two exact forms (marshal bytes, or flat unsigned-integer views of arrays) equal in full."""
    if isinstance(new, np.ndarray):
        return isinstance(kept, np.ndarray) and new.dtype == kept.dtype and bool(np.array_equal(new, kept))
    return new == kept


CELLS = CellIndex()


def cell_digest(cells: Any) -> bytes | None:
    """`digest` of cells when it is exact for them (`is_plain`), else None; a repeat is found in `CELLS`.

    The result is the same bytes as ``digest(cells)``: only the work
    differs (a full comparison with kept cells instead of SHA-256).
    """
    found = CELLS.form(cells)
    if found is None:
        return digest(cells) if is_plain(cells) else None
    fingerprint, exact = found
    kept = CELLS.find(fingerprint, exact)
    if kept is not None:
        return kept
    if not is_plain(cells):
        return None
    made = digest(cells) if isinstance(cells, np.ndarray) else _marshal_digest(exact)
    CELLS.remember(fingerprint, exact, made)
    return made


class PeriodMemory:
    """The periods asked per setting (damping, method), and which records each setting has seen.

    ``STEP_PEAK`` cells arrive one at a time, so a sheet's first
    recalculation cannot know the periods to come; when the record changes,
    the next recalculation asks the same periods again. The first cell of a
    setting over a record not seen before is handed every period remembered
    for that setting, to compute in one spectrum pass.

    Parameters
    ----------
    periods : int
        Most recently asked periods kept per setting.
    settings : int
        Settings kept.
    records : int
        (record, setting) pairs remembered as seen.
    """

    def __init__(self, periods: int = 2048, settings: int = 64, records: int = 1024) -> None:
        self.limits = (int(periods), int(settings), int(records))
        self._asked: OrderedDict[Hashable, OrderedDict[float, None]] = OrderedDict()
        self._seen: OrderedDict[Hashable, None] = OrderedDict()
        self._lock = threading.Lock()

    def batch(self, record_key: Hashable, setting: Hashable, period: float) -> tuple[float, ...]:
        """`period` first, then (on the first call for this record and setting) every period remembered."""
        most_periods, most_settings, most_records = self.limits
        with self._lock:
            asked = self._asked.setdefault(setting, OrderedDict())
            self._asked.move_to_end(setting)
            pair = (record_key, setting)
            first = pair not in self._seen
            self._seen[pair] = None
            self._seen.move_to_end(pair)
            others = tuple(p for p in asked if p != period) if first else ()
            asked[period] = None
            asked.move_to_end(period)
            for store, most in ((asked, most_periods), (self._asked, most_settings), (self._seen, most_records)):
                while len(store) > most:
                    store.popitem(last=False)
        return (period, *others)

    def clear(self) -> None:
        """Forget every period and record."""
        with self._lock:
            self._asked.clear()
            self._seen.clear()


ASKED = PeriodMemory()


def clear_all() -> None:
    """Empty every cache (the benchmark's cold start; tests that count parses)."""
    for cache in (RECORDS, RESULTS, HISTORIES, OPTIONS):
        cache.clear()
    CELLS.clear()
    ASKED.clear()
