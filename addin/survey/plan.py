"""Which records a batch runs: a CSV manifest, or every matching file of a folder.

A manifest is CSV with a header line naming its columns: ``file`` (path
relative to the manifest), ``dt`` [s], ``unit``, and optionally ``file_y``
(the second horizontal component) and ``label``. A blank ``dt`` means the
file's time column gives the step; a blank ``unit`` takes the command's
``--unit``, and without one the row is refused: a wrong unit scales every
result, so it is never assumed.
"""

from __future__ import annotations

import csv
import math
import os
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path, PurePosixPath

from groundstep.core.units import ACCELERATION_UNITS, normalise_unit

__all__ = ["MANIFEST_COLUMNS", "RecordEntry", "read_manifest", "result_name", "scan_folder"]

#: The columns a manifest may hold; ``file`` is required.
MANIFEST_COLUMNS = ("file", "dt", "unit", "file_y", "label")


@dataclass(frozen=True, slots=True)
class RecordEntry:
    """One record of a batch: where its files are and how to read them.

    Attributes
    ----------
    file : str
        The name that identifies the record in every output: the path as the
        manifest gives it (folder mode: relative to the folder), with ``/``.
    path : str
        Absolute path of the (first) component's file.
    unit : str
        Acceleration unit of the values.
    dt : float or None
        Time step [s]; ``None`` when the file's time column gives it.
    dt_fallback : bool
        Folder mode: `dt` applies only to files without a time column; a
        file with one uses its own spacing.
    path_y : str or None
        Absolute path of the second component's file, if any.
    label : str
        Free text carried into the outputs.
    """

    file: str
    path: str
    unit: str
    dt: float | None = None
    dt_fallback: bool = False
    path_y: str | None = None
    label: str = ""


def result_name(file: str) -> str:
    """File name of a record's result JSON: its `file` with ``/`` as ``__`` and ``..`` as ``up``.

    Examples
    --------
    >>> result_name("north/rec 1.txt")
    'north__rec 1.txt.json'
    """
    parts = ["up" if part == ".." else part for part in PurePosixPath(file).parts if part not in ("/", ".")]
    return "__".join(parts) + ".json"


def read_manifest(path: str | os.PathLike[str], *, unit: str | None = None, dt: float | None = None) -> list[RecordEntry]:
    """Read a CSV manifest of records (`MANIFEST_COLUMNS`).

    Parameters
    ----------
    path : path-like
        The manifest; record paths in it are relative to its folder.
    unit : str, optional
        Unit of the rows whose ``unit`` cell is blank.
    dt : float, optional
        Time step [s] of the rows whose ``dt`` cell is blank (those rows'
        files may still carry a time column, which then gives the step).

    Returns
    -------
    list of RecordEntry
        In the manifest's order.

    Raises
    ------
    ValueError
        No ``file`` column, an unknown column, a blank unit without `unit`,
        a dt that is not a positive number, an unknown unit, or two rows
        with the same file (the line is named).
    """
    source = Path(path)
    base = source.resolve().parent
    with open(source, encoding="utf-8-sig", newline="") as handle:
        rows = list(csv.reader(handle))
    rows = [row for row in rows if any(cell.strip() for cell in row)]
    if not rows:
        raise ValueError(f"manifest {source.name!r} is empty; its first line names the columns ({', '.join(MANIFEST_COLUMNS)})")
    header = [cell.strip().lower() for cell in rows[0]]
    unknown = [name for name in header if name not in MANIFEST_COLUMNS]
    if "file" not in header or unknown:
        raise ValueError(
            f"manifest {source.name!r}: the first line must name the columns {', '.join(MANIFEST_COLUMNS)} "
            f"(file required); got {', '.join(header)}"
        )
    entries: list[RecordEntry] = []
    seen: dict[str, int] = {}
    for number, row in enumerate(rows[1:], start=2):
        cells = dict(zip(header, (cell.strip() for cell in row)))
        where = f"manifest {source.name!r} line {number}"
        file = PurePosixPath(cells.get("file", "").replace("\\", "/")).as_posix()
        if not cells.get("file"):
            raise ValueError(f"{where}: the `file` cell is blank")
        if file in seen:
            raise ValueError(f"{where}: {file!r} is listed again (first on line {seen[file]}); list each record once")
        seen[file] = number
        row_unit = cells.get("unit") or unit
        if not row_unit:
            raise ValueError(
                f"{where}: no unit for {file!r}; fill the `unit` column or pass --unit "
                f"({', '.join(ACCELERATION_UNITS)}): a wrong unit scales every result, so it is never assumed"
            )
        row_dt = _step(cells.get("dt", ""), where) if cells.get("dt") else dt
        file_y = cells.get("file_y") or None
        entries.append(
            RecordEntry(
                file=file,
                path=str(base / file),
                unit=_unit(row_unit, where),
                dt=row_dt,
                dt_fallback=not cells.get("dt"),
                path_y=None if file_y is None else str(base / file_y.replace("\\", "/")),
                label=cells.get("label", ""),
            )
        )
    return entries


def scan_folder(
    folder: str | os.PathLike[str],
    *,
    unit: str | None,
    dt: float | None,
    pattern: str = "*",
    exclude: Sequence[str | os.PathLike[str]] = (),
) -> list[RecordEntry]:
    """Every file of `folder` matching `pattern`, as records with one unit and dt rule.

    Parameters
    ----------
    folder : path-like
        The folder of record files.
    unit : str
        Acceleration unit of every file (required: never assumed).
    dt : float or None
        Time step [s] of the files without a time column; a file with one
        uses its own spacing.
    pattern : str, default ``"*"``
        Glob pattern relative to `folder` (``"**/*.txt"`` walks subfolders).
    exclude : sequence of path-like
        Folders whose files are left out (the batch's own output folder).

    Returns
    -------
    list of RecordEntry
        Sorted by file name; hidden files (leading ``.``) are left out.

    Raises
    ------
    ValueError
        No unit, an unknown unit, a bad dt, or no matching file.
    """
    root = Path(folder).resolve()
    if unit is None:
        raise ValueError(
            f"give the acceleration unit of the files with --unit ({', '.join(ACCELERATION_UNITS)}): "
            "a wrong unit scales every result, so it is never assumed"
        )
    where = f"folder {str(folder)!r}"
    unit = _unit(unit, where)
    if dt is not None:
        dt = _step(repr(dt), where)
    skip = [Path(p).resolve() for p in exclude]
    entries = []
    for path in sorted(root.glob(pattern)):
        relative = path.relative_to(root)
        if not path.is_file() or any(part.startswith(".") for part in relative.parts):
            continue
        if any(path.is_relative_to(folder_out) for folder_out in skip):
            continue
        entries.append(RecordEntry(file=relative.as_posix(), path=str(path), unit=unit, dt=dt, dt_fallback=True))
    if not entries:
        raise ValueError(f"{where} holds no file matching {pattern!r}")
    return entries


def _unit(text: str, where: str) -> str:
    try:
        return normalise_unit(text, ACCELERATION_UNITS)
    except (ValueError, TypeError) as exc:
        raise ValueError(f"{where}: {exc}") from None


def _step(text: str, where: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise ValueError(f"{where}: `dt` {text!r} is not a number; give the time step in seconds") from None
    if not (math.isfinite(value) and value > 0.0):
        raise ValueError(f"{where}: `dt` must be a positive time step [s]; got {text!r}")
    return value
