"""Ground acceleration records: a frozen value object and a text reader."""

from __future__ import annotations

import hashlib
import math
import os
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
from numpy.typing import NDArray

from . import _notices, _record_text, _validate
from . import budget as _budget
from .units import ACCELERATION_UNITS, normalise_unit

__all__ = ["ProcessingStep", "Record", "RecordTextWarning"]

#: Largest deviation of a time value from uniform spacing, as a fraction of
#: the step, still read as uniform (common practice; see ``_record_text``).
TIME_SPACING_TOLERANCE = _record_text.TIME_SPACING_TOLERANCE


#: Significant digits of the samples the record digest covers: what a
#: spreadsheet keeps of a number when it saves a file (15, the precision of
#: Excel and LibreOffice Calc cells).
DIGEST_SIGNIFICANT_DIGITS = 15


class RecordTextWarning(UserWarning):
    """Lines of a record file were skipped (non-numeric header lines)."""


@dataclass(frozen=True, slots=True)
class ProcessingStep:
    """One operation applied to a record (baseline correction, filtering, ...).

    Attributes
    ----------
    operation : str
        Name of the public function that made the new record, e.g. ``"bandpass"``.
    parameters : tuple of (str, object) pairs
        The arguments it was called with, in SI units, as ``(name, value)`` pairs.
    library : str
        Library and version that did the numerical work, e.g. ``"scipy 1.17.1"``.
    """

    operation: str
    parameters: tuple[tuple[str, object], ...] = ()
    library: str = ""

    def describe(self) -> str:
        """One line for audit sheets: ``bandpass(low_hz=0.1, high_hz=25) [scipy 1.17.1]``."""
        arguments = ", ".join(f"{name}={value!r}" for name, value in self.parameters)
        return f"{self.operation}({arguments})" + (f" [{self.library}]" if self.library else "")


@dataclass(frozen=True, slots=True, eq=False)
class Record:
    """A uniformly sampled ground acceleration history.

    Parameters
    ----------
    accel : array_like, shape (n,)
        Acceleration samples in `unit`; at least two, all finite.
    dt : float
        Time step [s], > 0.
    unit : str, default ``"g"``
        Unit of `accel`: ``"g"`` (9.80665 m/s²), ``"m/s2"``, ``"cm/s2"``
        (alias ``"gal"``), ``"mm/s2"``, ``"in/s2"`` or ``"ft/s2"``.
    name : str, optional
        Label for reports.
    header : tuple of str, optional
        Header lines of the text the record was read from.
    history : tuple of ProcessingStep, optional
        What was done to the samples since they were read, oldest first.
    accel_is_si : bool, default False
        Keyword only. ``True`` when `accel` already holds m/s² (the record's
        own ``accel`` attribute); `unit` then only names the unit results are
        reported in. `dataclasses.replace` passes it on, so
        ``replace(record, dt=...)`` keeps the samples as they are.

    Attributes
    ----------
    accel : ndarray, shape (n,)
        Acceleration [m/s²] (read-only).
    dt : float
        Time step [s].
    unit : str
        The unit the samples were given in (normalised spelling).
    n, time, duration
        Sample count, sample times [s] starting at 0, and (n - 1)·dt [s].

    Examples
    --------
    >>> rec = Record([0.0, 0.1, -0.05, 0.0], dt=0.01, unit="g")
    >>> round(rec.pga, 4)  # 0.1 g in m/s²
    0.9807
    """

    accel: NDArray[np.float64]
    dt: float
    unit: str = "g"
    name: str = ""
    header: tuple[str, ...] = field(default=(), repr=False)
    history: tuple[ProcessingStep, ...] = field(default=(), repr=False)
    accel_is_si: bool = field(default=False, repr=False, kw_only=True)

    def __post_init__(self) -> None:
        unit = normalise_unit(self.unit, ACCELERATION_UNITS)
        samples = _validate.as_vector(self.accel, "accel", min_size=2)
        dt = _budget.check_dt(_validate.positive(self.dt, "dt"))
        factor = 1.0 if self.accel_is_si else ACCELERATION_UNITS[unit]
        _budget.check_samples(samples, factor)  # before converting: the product stays finite
        si = samples if self.accel_is_si else samples * factor
        si.flags.writeable = False
        history = tuple(self.history)
        for index, step in enumerate(history):
            if not isinstance(step, ProcessingStep):
                raise TypeError(
                    f"`history` must hold ProcessingStep entries; index {index} is {type(step).__name__}"
                )
        object.__setattr__(self, "history", history)
        # from here on the stored samples are m/s²: replace() must not convert them again
        object.__setattr__(self, "accel_is_si", True)
        object.__setattr__(self, "accel", si)
        object.__setattr__(self, "dt", dt)
        object.__setattr__(self, "unit", unit)
        object.__setattr__(self, "name", str(self.name))
        object.__setattr__(self, "header", tuple(str(line) for line in self.header))

    def __repr__(self) -> str:
        label = f"{self.name!r}, " if self.name else ""
        return f"Record({label}n={self.n}, dt={self.dt!r}, unit={self.unit!r}, pga={self.pga:.4g} m/s²)"

    @property
    def n(self) -> int:
        """Number of samples."""
        return int(self.accel.shape[0])

    @property
    def time(self) -> NDArray[np.float64]:
        """Sample times [s], starting at 0."""
        return np.arange(self.n, dtype=np.float64) * self.dt

    @property
    def duration(self) -> float:
        """(n - 1)·dt [s]."""
        return (self.n - 1) * self.dt

    @property
    def pga(self) -> float:
        """Peak ground acceleration max|a| [m/s²]."""
        return float(np.max(np.abs(self.accel)))

    def accel_in(self, unit: str) -> NDArray[np.float64]:
        """Acceleration samples converted to `unit` (any name of the unit table)."""
        return self.accel / ACCELERATION_UNITS[normalise_unit(unit, ACCELERATION_UNITS)]

    def ground_velocity(self) -> NDArray[np.float64]:
        """Ground velocity [m/s] for acceleration linear between samples, from rest.

        Notes
        -----
        v[i+1] = v[i] + dt·(a[i] + a[i+1])/2 (trapezoidal rule, exact for
        piecewise-linear acceleration).
        """
        a = self.accel
        velocity = np.empty_like(a)
        velocity[0] = 0.0
        np.cumsum(0.5 * self.dt * (a[1:] + a[:-1]), out=velocity[1:])
        return velocity

    def ground_displacement(self) -> NDArray[np.float64]:
        """Ground displacement [m] for acceleration linear between samples, from rest.

        Notes
        -----
        d[i+1] = d[i] + dt·v[i] + dt²·(a[i]/3 + a[i+1]/6), the exact integral of
        a piecewise-linear acceleration.
        """
        a = self.accel
        v = self.ground_velocity()
        dt = self.dt
        displacement = np.empty_like(a)
        displacement[0] = 0.0
        np.cumsum(dt * v[:-1] + dt * dt * (a[:-1] / 3.0 + a[1:] / 6.0), out=displacement[1:])
        return displacement

    def sha256(self) -> str:
        """SHA-256 hex digest of the samples (in the record's own unit) and of dt, to 15 digits.

        The digest covers the float64 little-endian bytes of
        ``accel_in(unit)`` with each sample rounded to
        `DIGEST_SIGNIFICANT_DIGITS` significant digits, then the unit name and
        dt rounded the same way. Spreadsheets store 15 significant digits
        (Excel and LibreOffice Calc both write a cell's number with 15), so a
        workbook that another spreadsheet opened and saved unchanged gives the
        same digest as the one written with every digit.
        """
        digest = hashlib.sha256()
        samples = _round_significant(self.accel_in(self.unit)) + 0.0  # + 0.0: -0.0 and 0.0 give one digest
        digest.update(np.ascontiguousarray(samples, dtype="<f8").tobytes())
        dt = float(_round_significant(np.array([self.dt]))[0])
        digest.update(f"|{self.unit}|{dt!r}".encode())
        return digest.hexdigest()

    @classmethod
    def from_text(
        cls,
        source: str | os.PathLike[str],
        dt: float | None = None,
        unit: str | None = None,
        *,
        time_column: bool | None = None,
        name: str | None = None,
        option_names: Mapping[str, str] | None = None,
    ) -> Record:
        """Read a record from plain numeric text or CSV.

        Parameters
        ----------
        source : str or path-like
            A path to a file, or the text itself (a string holding a line
            break is read as text).
        dt : float, optional
            Time step [s]. Required unless the text has a time column; when
            both are given they must agree.
        unit : str
            Unit of the acceleration values (required: a wrong unit scales
            every result, so none is assumed).
        time_column : bool, optional
            ``True``: every data line is ``time, acceleration``. ``False``:
            every number is an acceleration sample, read row-wise (several
            per line allowed). ``None`` (default): a time column is assumed
            when every data line holds exactly two numbers and the first
            column strictly increases (an acceleration column never does);
            its spacing must then be uniform, and a given `dt` must agree.
        name : str, optional
            Label; defaults to the file name.
        option_names : mapping, optional
            How messages name `dt`, `unit` and `time_column`, for callers
            whose users give them otherwise, e.g. ``{"dt": "--dt"}`` in a
            command line. Keys ``dt``, ``give_dt``, ``unit``, ``time_column``,
            ``no_time_column``.

        Returns
        -------
        Record

        Raises
        ------
        ValueError
            No unit; no numbers found; a non-numeric line after the data
            began, or a blank line inside the data (its line number is given);
            lines of different layout; a decimal mark that cannot be told from
            a separator; a time column that is not uniformly spaced (first
            offending line); a `dt` that disagrees with the time column.

        Warns
        -----
        RecordTextWarning
            When leading non-numeric (header) lines were skipped; they are
            kept in ``Record.header``.

        Notes
        -----
        Separators are commas, semicolons, tabs or blanks. Decimal commas
        (``0,20409``) are read when the file has no ``.`` and its fields are
        separated by blanks or tabs, or when ``;`` separates the fields; a
        mixture is refused naming the line. Several values per line are read
        only when every line holds as many as the first (the last may hold
        fewer). A time column is accepted as uniform when every time lies
        within ``TIME_SPACING_TOLERANCE``·dt of t0 + i·dt; dt is its mean
        step rounded to the decimals the column prints (``0.02``, not
        ``0.019999999999999997``).

        Examples
        --------
        >>> Record.from_text("0,0\\n0,1\\n-0,05\\n", dt=0.01, unit="g").accel_in("g").tolist()
        [0.0, 0.1, -0.05]
        >>> Record.from_text("0.00,0.0\\n0.02,0.1\\n0.04,0.0\\n", unit="g").dt
        0.02
        """
        names = dict(option_names or {})
        words = _record_text.Words(
            dt=names.get("dt", "`dt`"),
            give_dt=names.get("give_dt", "pass dt=..."),
            time_column=names.get("time_column", "time_column=True"),
            no_time_column=names.get("no_time_column", "time_column=False"),
        )
        text, label = _read_source(source)
        if unit is None:
            raise ValueError(
                f"{label}: the acceleration unit is not given; pass {names.get('unit', 'unit=...')} "
                f"({', '.join(ACCELERATION_UNITS)}): a wrong unit scales every result, so none is assumed"
            )
        parsed = _record_text.parse(text, label, time_column, words)
        rows, line_numbers = parsed.rows, parsed.line_numbers
        widths = {len(row) for row in rows}
        if time_column is None:
            time_column = widths == {2} and len(rows) >= 2 and _looks_like_time([row[0] for row in rows])
        if time_column:
            if widths != {2}:
                bad = next(i for i, row in enumerate(rows) if len(row) != 2)
                raise ValueError(
                    f"{label}: line {line_numbers[bad]} holds {len(rows[bad])} numbers; "
                    "a time column needs exactly 'time, acceleration' on every line"
                )
            table = np.array(rows, dtype=np.float64)
            step = _record_text.uniform_step(table[:, 0], [f[0] for f in parsed.fields], line_numbers, label)
            if dt is not None and not math.isclose(float(dt), step, rel_tol=1e-6):
                raise ValueError(
                    f"{label}: {words.dt} {dt!r} disagrees with the time column, which is spaced {step!r} s; "
                    f"leave out {words.dt} (the time column gives it) or check the file"
                )
            samples = table[:, 1]
            dt = step
        else:
            if dt is None:
                raise ValueError(
                    f"{label}: {words.dt} is required when the text has no time column "
                    f"({words.give_dt}, or {words.time_column} for 'time, acceleration' lines)"
                )
            samples = np.array([value for row in rows for value in row], dtype=np.float64)
        header = parsed.header
        if header:
            _notices.warn(
                RecordTextWarning(
                    f"{label}: skipped {len(header)} non-numeric header line(s): {header[0][:60]!r}"
                    + (" ..." if len(header) > 1 else "")
                ),
                stacklevel=2,
            )
        return cls(samples, dt, unit, name=label if name is None else name, header=tuple(header))


#: Largest record text read [bytes]: 64 MiB, about 7 million samples, read in a few
#: hundred MB of memory. A longer record is cut or decimated before reading.
MAX_TEXT_BYTES = 64 * 2**20


def _read_source(source: str | os.PathLike[str]) -> tuple[str, str]:
    if isinstance(source, str) and ("\n" in source or "\r" in source):
        if len(source) > MAX_TEXT_BYTES:
            raise ValueError(f"the record text holds {len(source)} characters, more than {MAX_TEXT_BYTES}; cut it")
        return source, "text"
    path = Path(source)
    if not path.is_file():
        if path.is_dir():
            raise ValueError(f"`source` {str(source)[:200]!r} is a folder; pass the path of a text file in it")
        if path.exists():
            raise ValueError(
                f"`source` {str(source)[:200]!r} is not a regular file (a named pipe, socket or device); "
                "copy the record into a file"
            )
        raise ValueError(f"`source` {str(source)[:200]!r} is not a file (pass a path, or text holding line breaks)")
    size = path.stat().st_size
    if size > MAX_TEXT_BYTES:
        raise ValueError(
            f"{path.name}: {size / 2**20:.0f} MiB, more than the {MAX_TEXT_BYTES / 2**20:.0f} MiB a record text "
            "may hold; cut the record or decimate it before reading"
        )
    raw = path.read_bytes()
    if raw.startswith((b"\xff\xfe", b"\xfe\xff")) or raw[:4096].count(b"\x00") > len(raw[:4096]) // 4:
        raise ValueError(
            f"{path.name}: the file looks UTF-16 encoded (byte-order mark or NUL bytes); save it as UTF-8 "
            "or plain text, or read it with open(path, encoding='utf-16').read() and pass the text"
        )
    return raw.decode("utf-8-sig", errors="replace"), path.name


def _looks_like_time(values: list[float]) -> bool:
    """True when `values` strictly increase: a time column (spacing is checked later)."""
    return bool(np.all(np.diff(np.asarray(values, dtype=np.float64)) > 0.0))


def _round_significant(values: NDArray[np.float64]) -> NDArray[np.float64]:
    """Each value rounded to `DIGEST_SIGNIFICANT_DIGITS` significant digits (decimal, as printed)."""
    text = np.char.mod(f"%.{DIGEST_SIGNIFICANT_DIGITS - 1}e", np.asarray(values, dtype=np.float64))
    return text.astype(np.float64)
