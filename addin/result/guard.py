"""Checks on an untrusted .xlsx package before openpyxl parses it.

An .xlsx file is a zip archive of XML parts. A hostile or broken one can
inflate to gigabytes (a "zip bomb"), hold millions of parts, or declare a
sheet of a million rows of nothing. `check_package` reads only the zip's
central directory and streams each sheet part through a counter, so it
refuses such a file within a second and in bounded memory, with a message
saying which limit it passed. The XML itself is parsed later by openpyxl,
which uses ``defusedxml`` (a dependency) to refuse entity expansion and
external entities; macros (``vbaProject.bin``) are never run, only ignored.

Examples
--------
>>> from groundstep.addin.result.guard import LIMITS
>>> LIMITS.max_rows
1048576
"""

from __future__ import annotations

import os
import zipfile
from dataclasses import dataclass
from pathlib import Path

__all__ = ["LIMITS", "PackageLimits", "UnsafeWorkbook", "check_package"]


class UnsafeWorkbook(ValueError):
    """A workbook package passes a size limit, or is no zip package at all."""


@dataclass(frozen=True, slots=True)
class PackageLimits:
    """The limits `check_package` applies (sizes in bytes)."""

    #: Largest total uncompressed size of all parts: 256 MiB, far above a 10⁶-row record sheet (about 60 MB).
    max_total: int = 256 * 2**20
    #: Largest uncompressed size of one part.
    max_part: int = 200 * 2**20
    #: Largest ratio of uncompressed to compressed size of a part beyond 1 MiB. XML of
    #: numbers deflates about 5-20 to 1; a bomb does 1000 to 1 (common practice puts the line near 100).
    max_ratio: float = 200.0
    #: Most parts in the package (a workbook of many sheets and charts has a few hundred).
    max_parts: int = 10_000
    #: Most rows of one sheet: the format's own limit (ECMA-376 / Excel: 1,048,576 rows).
    max_rows: int = 1_048_576


LIMITS = PackageLimits()

_CHUNK = 1 << 20


def check_package(path: str | os.PathLike[str], limits: PackageLimits = LIMITS) -> None:
    """Refuse a workbook package beyond `limits` before any XML of it is parsed.

    Parameters
    ----------
    path : path-like
        The .xlsx (or .xlsm) file.
    limits : PackageLimits, optional
        The limits; `LIMITS` by default.

    Raises
    ------
    UnsafeWorkbook
        Not a zip package; too many parts; a part or the whole beyond its
        uncompressed size; a compression ratio beyond `max_ratio`; a sheet
        with more rows than `max_rows` (counted by a streaming scan of its
        ``<row`` tags, so the count stops as soon as it passes).
    """
    file = Path(path)
    try:
        archive = zipfile.ZipFile(file)
    except (zipfile.BadZipFile, OSError) as exc:
        raise UnsafeWorkbook(f"{file.name!r} cannot be opened as an .xlsx workbook (not a zip archive: {exc})") from None
    with archive:
        entries = archive.infolist()
        if len(entries) > limits.max_parts:
            raise UnsafeWorkbook(f"{file.name!r} holds {len(entries)} parts, more than {limits.max_parts}; refused")
        total = sum(entry.file_size for entry in entries)
        if total > limits.max_total:
            raise UnsafeWorkbook(
                f"{file.name!r} would inflate to {total / 2**20:.0f} MiB, more than {limits.max_total / 2**20:.0f} MiB; "
                "refused (save a smaller workbook or read the record from a text file)"
            )
        for entry in entries:
            _check_entry(file.name, entry, limits)
        for entry in entries:
            if entry.filename.startswith("xl/worksheets/") and entry.filename.endswith(".xml"):
                _check_rows(file.name, archive, entry, limits)


def _check_entry(name: str, entry: zipfile.ZipInfo, limits: PackageLimits) -> None:
    if entry.file_size > limits.max_part:
        raise UnsafeWorkbook(
            f"{name!r}: part {entry.filename} would inflate to {entry.file_size / 2**20:.0f} MiB, "
            f"more than {limits.max_part / 2**20:.0f} MiB; refused"
        )
    if entry.file_size > _CHUNK and entry.file_size > limits.max_ratio * max(entry.compress_size, 1):
        ratio = entry.file_size / max(entry.compress_size, 1)
        raise UnsafeWorkbook(
            f"{name!r}: part {entry.filename} is compressed {ratio:.0f} to 1, more than {limits.max_ratio:.0f} to 1 "
            "(a zip bomb, or a sheet of mostly empty space); refused"
        )


def _check_rows(name: str, archive: zipfile.ZipFile, entry: zipfile.ZipInfo, limits: PackageLimits) -> None:
    """Count ``<row`` tags of a sheet part in chunks; the sizes read are those the directory declared."""
    rows = 0
    carry = b""
    read = 0
    with archive.open(entry) as stream:
        while chunk := stream.read(_CHUNK):
            read += len(chunk)
            if read > entry.file_size:  # a directory that lies about the size
                raise UnsafeWorkbook(f"{name!r}: part {entry.filename} inflates beyond its declared size; refused")
            data = carry + chunk
            # a tag split across two chunks is seen whole in `data`; the last 4 bytes (shorter
            # than a tag) carry over, so no tag is counted twice
            rows += data.count(b"<row ") + data.count(b"<row>")
            carry = data[-4:]
            if rows > limits.max_rows:
                raise UnsafeWorkbook(
                    f"{name!r}: sheet part {entry.filename} holds more than {limits.max_rows} rows, the format's limit; refused"
                )
