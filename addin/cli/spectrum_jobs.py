"""The jobs of ``groundstep spectrum``: many record files, parallel worker processes, a progress display.

Each job reads one text/CSV record (``Record.from_text``), computes its
elastic spectra and writes CSV, JSON or a result workbook. Jobs run in
``concurrent.futures`` worker processes (each limited to one numba thread,
so N workers use N cores); a failed file is reported and the others go on.
"""

from __future__ import annotations

import csv
import io
import json
import sys
from collections.abc import Sequence
from concurrent.futures import ProcessPoolExecutor, as_completed
from pathlib import Path

from groundstep.addin.common import CAUTION, as_text, write_atomically
from groundstep.addin.result.content import ReportSettings
from groundstep.addin.survey.task import one_numba_thread

from .progress import Progress

__all__ = ["OPTION_NAMES", "plan_outputs", "run_batch", "spectrum_job"]

#: How record-reading messages name the arguments on this command line.
OPTION_NAMES = {
    "dt": "--dt",
    "give_dt": "pass --dt SECONDS",
    "unit": "--unit",
    "time_column": "--time-column yes",
    "no_time_column": "--time-column no",
}


def plan_outputs(records: Sequence[str], out_dir: Path, fmt: str) -> list[tuple[Path, Path]]:
    """(input, output) pairs: ``OUT_DIR/STEM.spectrum.FMT``; duplicate stems are refused.

    The output folder is created (with its parents) once every record file is found.
    """
    if out_dir.exists() and not out_dir.is_dir():
        raise FileExistsError(f"output folder {str(out_dir)!r} is a file")
    jobs: list[tuple[Path, Path]] = []
    seen: dict[Path, Path] = {}
    for name in records:
        source = Path(name)
        if not source.is_file():
            raise FileNotFoundError(f"record file {name!r} does not exist")
        target = out_dir / f"{source.stem}.spectrum.{fmt}"
        if target in seen:
            raise ValueError(f"{name!r} and {str(seen[target])!r} would both write {str(target)!r}; rename one")
        seen[target] = source
        jobs.append((source, target))
    out_dir.mkdir(parents=True, exist_ok=True)
    return jobs


def spectrum_job(
    source: Path, target: Path, settings: ReportSettings, dt: float | None, unit: str, time_column: bool | None, command: str
) -> str:
    """Read one record, compute, write `target`; return a one-line summary."""
    from groundstep.addin.result.content import build_report, processed_record, spectrum_table
    from groundstep.addin.result.offline import write_report
    from groundstep.core import Record, collect_warnings, elastic_spectrum
    from groundstep.core.plausibility import check_record
    from groundstep.core.units import output_units

    with collect_warnings():
        record = Record.from_text(source, dt, unit, time_column=time_column, option_names=OPTION_NAMES)
        for finding in check_record(record, settings.periods):
            print(f"groundstep: note: {source.name}: {finding}", file=sys.stderr)
        if target.suffix == ".xlsx":
            report = build_report(record, settings, command=command, source=source.name)
            write_report(report, target, force=True)
            h = report.headline
            return f"PGA {h['pga']:.4g} {h['unit']}, largest PSA {h['peak_psa']:.4g} {h['unit']} at {h['peak_psa_period']:.3g} s"
        raw_steps = len(record.history)
        record = processed_record(record, settings)  # as the workbook does: baseline, then band-pass
        spectrum = elastic_spectrum(
            record, settings.periods, settings.dampings, settings.method, max_step_ratio=settings.max_step_ratio
        )
    out = output_units(record.unit)
    table = spectrum_table(spectrum, out)
    if target.suffix == ".json":
        text = json.dumps(
            {
                "record": record.name,
                "unit": record.unit,
                "dt": record.dt,
                "samples": record.n,
                "sha256": record.sha256(),
                "method": spectrum.method.name,
                "beta": spectrum.method.beta if spectrum.method.is_newmark else None,
                "gamma": spectrum.method.gamma if spectrum.method.is_newmark else None,
                "max_step_ratio": settings.max_step_ratio,
                "processing": [step.describe() for step in record.history[raw_steps:]],
                "units": table["units"],
                "periods": table["periods"],
                "dampings": table["dampings"],
                **{q: table[q] for q in ("sd", "psv", "psa", "sa")},
                "caution": CAUTION,
            },
            indent=1,
        )
    else:
        buffer = io.StringIO()
        writer = csv.writer(buffer, lineterminator="\n")
        for step in record.history[raw_steps:]:  # the processing, one comment line per step, above the table
            buffer.write(f"# processing: {step.describe()}\n")
        header = ["period [s]"]
        for damping in table["dampings"]:
            header += [f"{q.upper()} zeta={damping:g} [{table['units'][q]}]" for q in ("sd", "psv", "psa", "sa")]
        writer.writerow([as_text(cell) for cell in header])  # text cells can never start a formula
        for j, period in enumerate(table["periods"]):
            row = [repr(period)]
            for i in range(len(table["dampings"])):
                row += [repr(table[q][i][j]) for q in ("sd", "psv", "psa", "sa")]
            writer.writerow(row)
        text = buffer.getvalue()
    _write_text_atomically(target, text)
    best = max(max(row) for row in table["psa"])
    return f"PGA {out.acceleration_from_si(record.pga):.4g} {out.acceleration}, largest PSA {best:.4g} {out.acceleration}"


def run_batch(
    jobs: Sequence[tuple[Path, Path]],
    settings: ReportSettings,
    *,
    dt: float | None,
    unit: str,
    time_column: bool | None,
    workers: int,
    command: str,
    progress: bool = True,
) -> list[tuple[str, str]]:
    """Run every job; return (input, error message) of the failures."""
    bar = Progress(len(jobs), progress, "files")
    failures: list[tuple[str, str]] = []
    if workers == 1 or len(jobs) == 1:
        for source, target in jobs:
            try:
                summary = spectrum_job(source, target, settings, dt, unit, time_column, command)
                bar.step(source.name, "done", summary)
            except (ValueError, TypeError, OSError) as exc:
                failures.append((str(source), str(exc)))
                bar.step(source.name, "failed", str(exc))
        bar.close()
        return failures
    with ProcessPoolExecutor(max_workers=min(workers, len(jobs)), initializer=one_numba_thread) as pool:
        futures = {
            pool.submit(spectrum_job, source, target, settings, dt, unit, time_column, command): source
            for source, target in jobs
        }
        for future in as_completed(futures):
            source = futures[future]
            try:
                bar.step(source.name, "done", future.result())
            except (ValueError, TypeError, OSError) as exc:
                failures.append((str(source), str(exc)))
                bar.step(source.name, "failed", str(exc))
    bar.close()
    return failures


def _write_text_atomically(target: Path, text: str) -> None:
    def write(path: Path) -> None:
        path.write_text(text, encoding="utf-8", newline="")

    write_atomically(target, write, force=True)
