"""The combined table of a batch: every record's spectra and measures in one CSV, built from the JSON files."""

from __future__ import annotations

import csv
import io
import os
from collections.abc import Iterable
from pathlib import Path
from typing import Any

from .outputs import read_result, write_text
from .task import MEASURE_UNITS, SPECTRUM_UNITS

__all__ = ["TABLE_FILE", "combined_rows", "table_columns", "write_table"]

#: The combined table, inside the output folder.
TABLE_FILE = "spectra.csv"


def table_columns(ductilities: Iterable[float]) -> list[str]:
    """Column names of the combined table for target ductilities `ductilities`.

    Examples
    --------
    >>> table_columns([2.0])[:6]
    ['file', 'label', 'component', 'damping [-]', 'period [s]', 'sd [m]']
    """
    columns = ["file", "label", "component", "damping [-]", "period [s]"]
    columns += [f"{q} [{unit}]" for q, unit in SPECTRUM_UNITS.items()]
    for mu in ductilities:
        columns += [f"yield_coefficient mu={mu:g} [-]", f"reduction_factor mu={mu:g} [-]",
                    f"yield_pseudo_acceleration mu={mu:g} [m/s2]"]  # fmt: skip
    columns += [f"{name} [{unit}]" for name, unit in MEASURE_UNITS.items()]
    return columns


def combined_rows(document: dict[str, Any]) -> list[list[Any]]:
    """Rows of one result document: one per component × damping × period, measures repeated on each.

    A damping of the constant-ductility spectra that is not among the
    elastic dampings gets rows of its own, with the elastic columns blank;
    rows of other dampings leave the ductility columns blank. Missing
    values (None in the JSON) stay blank.
    """
    ductilities = document["settings"]["ductilities"]
    rows: list[list[Any]] = []
    for part in document["components"]:
        spectra, ductility, measures = part["spectra"], part["ductility"], part["measures"] or {}
        dampings = list(spectra["dampings"])
        if ductility is not None and ductility["damping"] not in dampings:
            dampings.append(ductility["damping"])
        for damping in dampings:
            i = spectra["dampings"].index(damping) if damping in spectra["dampings"] else None
            for j, period in enumerate(spectra["periods"]):
                row: list[Any] = [document["file"], document["label"], part["component"], damping, period]
                row += [None if i is None else spectra[q][i][j] for q in SPECTRUM_UNITS]
                for k in range(len(ductilities)):
                    if ductility is not None and damping == ductility["damping"]:
                        row += [ductility[q][k][j] for q in ("yield_coefficient", "reduction_factor", "yield_pseudo_acceleration")]
                    else:
                        row += [None, None, None]
                row += [measures.get(name) for name in MEASURE_UNITS]
                rows.append(row)
    return rows


def write_table(out_dir: str | os.PathLike[str], files: Iterable[str], ductilities: Iterable[float]) -> Path:
    """Write ``OUT/spectra.csv`` from the result JSON files of `files`, atomically; return its path.

    Numbers are written with ``repr`` (shortest text that reads back to the
    same float64), so the table holds exactly the values of the JSON files.
    """
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(table_columns(ductilities))
    for file in files:
        document = read_result(out_dir, file)
        if document is None:
            continue
        writer.writerows([_cell(value) for value in row] for row in combined_rows(document))
    return write_text(Path(out_dir) / TABLE_FILE, buffer.getvalue())


def _cell(value: Any) -> str:
    if value is None:
        return ""
    return repr(value) if isinstance(value, float) else str(value)
