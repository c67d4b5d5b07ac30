"""The files a batch writes: one JSON result per record and the results manifest ``results.csv``.

Every file is written through ``groundstep.addin.common.write_atomically``
(a temporary file in the same folder, then one rename), so a reader, or a
batch killed at any moment, sees either the previous file or the whole
new one. The per-record JSON files are the truth; ``results.csv`` is
rewritten after every completed record from what is known, and a resumed
batch takes each record's previous hash from its manifest row or, when the
batch died between the two writes, from the JSON file itself.
"""

from __future__ import annotations

import csv
import io
import json
import os
from collections.abc import Iterable, Sequence
from pathlib import Path
from typing import Any

from groundstep.addin.common import write_atomically

from .plan import RecordEntry, result_name
from .task import RecordOutcome

__all__ = [
    "RECORDS_FOLDER",
    "RESULTS_COLUMNS",
    "RESULTS_FILE",
    "ResultsManifest",
    "read_result",
    "result_path",
    "write_result",
    "write_text",
]

#: The results manifest, inside the output folder.
RESULTS_FILE = "results.csv"
#: Folder of the per-record JSON files, inside the output folder.
RECORDS_FOLDER = "records"
#: Columns of ``results.csv``.
RESULTS_COLUMNS = ("file", "label", "status", "message", "hash", "seconds", "result")


def result_path(out_dir: str | os.PathLike[str], file: str) -> Path:
    """Where the result JSON of record `file` goes: ``OUT/records/NAME.json`` (`result_name`)."""
    return Path(out_dir) / RECORDS_FOLDER / result_name(file)


def write_text(path: str | os.PathLike[str], text: str) -> Path:
    """Write `text` (UTF-8) to `path` atomically, replacing it."""

    def write(temporary: Path) -> None:
        temporary.write_text(text, encoding="utf-8", newline="")

    return write_atomically(path, write, force=True)


def write_result(out_dir: str | os.PathLike[str], payload: dict[str, Any]) -> Path:
    """Write one record's result document atomically; return its path."""
    return write_text(result_path(out_dir, payload["file"]), json.dumps(payload, indent=1, allow_nan=False))


def read_result(out_dir: str | os.PathLike[str], file: str) -> dict[str, Any] | None:
    """The result document of `file`, or None when there is none (or it does not parse)."""
    try:
        with open(result_path(out_dir, file), encoding="utf-8") as handle:
            document = json.load(handle)
    except (OSError, ValueError):
        return None
    return document if isinstance(document, dict) else None


class ResultsManifest:
    """The rows of ``results.csv``, one per record of the plan, in plan order.

    Parameters
    ----------
    out_dir : path-like
        The batch's output folder (created with its ``records`` folder).
    entries : sequence of RecordEntry
        The plan. Rows of a previous run for these records are kept until
        this run replaces them; rows of records no longer planned are dropped.
    """

    def __init__(self, out_dir: str | os.PathLike[str], entries: Sequence[RecordEntry]) -> None:
        self.out_dir = Path(out_dir)
        (self.out_dir / RECORDS_FOLDER).mkdir(parents=True, exist_ok=True)
        for folder in (self.out_dir, self.out_dir / RECORDS_FOLDER):  # left by a batch killed mid-write
            for stale in folder.glob(".*.tmp"):
                stale.unlink(missing_ok=True)
        self.path = self.out_dir / RESULTS_FILE
        self._order = [entry.file for entry in entries]
        self._labels = {entry.file: entry.label for entry in entries}
        previous = _read_rows(self.path)
        self.rows: dict[str, dict[str, str]] = {file: previous[file] for file in self._order if file in previous}

    def previous_hash(self, file: str) -> str:
        """Hash of the result already written for `file`, or "" (then it is computed)."""
        row = self.rows.get(file)
        if row and row.get("status") in ("done", "skipped") and row.get("hash") and result_path(self.out_dir, file).is_file():
            return row["hash"]
        document = read_result(self.out_dir, file)  # written, but the batch died before the manifest
        return str(document.get("hash", "")) if document else ""

    def record(self, outcome: RecordOutcome) -> None:
        """Write the outcome's result document (if any), then its manifest row; rewrite the manifest."""
        if outcome.payload is not None:
            write_result(self.out_dir, outcome.payload)
        self.rows[outcome.file] = {
            "file": outcome.file,
            "label": self._labels.get(outcome.file, ""),
            "status": outcome.status,
            "message": outcome.message,
            "hash": outcome.hash,
            "seconds": f"{outcome.seconds:.3f}",
            "result": f"{RECORDS_FOLDER}/{result_name(outcome.file)}" if outcome.status != "failed" else "",
        }
        self.write()

    def write(self) -> None:
        """Rewrite ``results.csv`` atomically (rows in plan order)."""
        buffer = io.StringIO()
        writer = csv.DictWriter(buffer, RESULTS_COLUMNS, lineterminator="\n", extrasaction="ignore")
        writer.writeheader()
        writer.writerows(self.rows[file] for file in self._order if file in self.rows)
        write_text(self.path, buffer.getvalue())

    def counts(self) -> dict[str, int]:
        """Rows by status."""
        counts = {"done": 0, "skipped": 0, "failed": 0}
        for row in self.rows.values():
            counts[row["status"]] = counts.get(row["status"], 0) + 1
        return counts

    def failures(self) -> list[tuple[str, str]]:
        """(file, message) of the rows ``failed``, in plan order."""
        return [(file, self.rows[file]["message"]) for file in self._order if self.rows.get(file, {}).get("status") == "failed"]

    def finished(self) -> Iterable[str]:
        """Files whose row is ``done`` or ``skipped``, in plan order."""
        return [file for file in self._order if self.rows.get(file, {}).get("status") in ("done", "skipped")]


def _read_rows(path: Path) -> dict[str, dict[str, str]]:
    try:
        with open(path, encoding="utf-8", newline="") as handle:
            return {row["file"]: row for row in csv.DictReader(handle) if row.get("file")}
    except (OSError, ValueError, KeyError, csv.Error):
        return {}
