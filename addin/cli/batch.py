"""``groundstep batch``: spectra and measures of a whole record database, resumable, on local processes or Dask."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from groundstep.addin.common import CAUTION
from groundstep.addin.result.content import ReportSettings
from groundstep.addin.survey import (
    RESULTS_FILE,
    TABLE_FILE,
    RecordOutcome,
    ResultsManifest,
    SurveySettings,
    default_workers,
    read_manifest,
    read_settings,
    run_survey,
    scan_folder,
)

from .common import (
    EXIT_INPUT,
    EXIT_OK,
    UsageError,
    add_processing_options,
    add_spectrum_options,
    floats,
    settings_from_options,
)
from .progress import Progress

__all__ = ["add", "run"]

#: Failed records listed one line each at the end; the rest are in results.csv.
_LISTED_FAILURES = 20


def add(parser: argparse.ArgumentParser) -> None:
    """The command's arguments."""
    parser.add_argument("source", metavar="MANIFEST_OR_FOLDER",
                        help="a CSV manifest (columns file, dt, unit, optional file_y, label; paths relative "
                             "to it) or a folder of record files")  # fmt: skip
    parser.add_argument("--out", required=True, metavar="DIR",
                        help="output folder: records/NAME.json, results.csv, spectra.csv (re-running resumes)")  # fmt: skip
    parser.add_argument("--workers", type=int, default=None, metavar="N",
                        help=f"worker processes (default: one per core, here {default_workers()}; 1 runs in this "
                             "process); with --scheduler local, the Dask workers")  # fmt: skip
    parser.add_argument("--scheduler", default=None, metavar="ADDRESS",
                        help="run on the Dask distributed scheduler at ADDRESS (tcp://host:8786), or 'local' "
                             "for a Dask cluster on this machine started for the run")  # fmt: skip
    parser.add_argument("--dt", type=float, default=None, metavar="SECONDS",
                        help="time step [s] of the records without a time column (a time column gives its own)")  # fmt: skip
    parser.add_argument("--unit", default=None, metavar="UNIT",
                        help="acceleration unit of the records: g, m/s2, cm/s2, gal, mm/s2, in/s2 or ft/s2 "
                             "(a folder needs it; a manifest's blank unit cells take it; never assumed)")  # fmt: skip
    parser.add_argument("--pattern", default="*", metavar="GLOB",
                        help="folder only: which files are records (default '*'; '**/*.txt' walks subfolders)")  # fmt: skip
    parser.add_argument("--quiet", action="store_true", help="no progress display")
    g = parser.add_argument_group("analyses (a --settings file, then these options on top)")
    g.add_argument("--settings", default=None, metavar="FILE.toml",
                   help="TOML file with any of: periods, dampings, method, max_step_ratio, ductilities, "
                        "ductility_damping, hardening, baseline, bandpass, measures")  # fmt: skip
    add_spectrum_options(g)
    g.add_argument("--ductilities", default=None, metavar="LIST",
                   help="target ductilities of constant-ductility spectra, e.g. 2,4 (default: none)")  # fmt: skip
    g.add_argument("--ductility-damping", type=float, default=None, metavar="RATIO",
                   help="damping ratio of the constant-ductility spectra (default 0.05)")  # fmt: skip
    g.add_argument("--hardening", type=float, default=None, metavar="ALPHA",
                   help="post-yield stiffness ratio of the yielding oscillators, in [0, 1) (default 0)")  # fmt: skip
    add_processing_options(g)
    g.add_argument("--no-measures", action="store_true", help="leave out the ground-motion measures")


def run(args: argparse.Namespace, command_line: str) -> int:
    """Plan the records, run them, print the summary and the caution."""
    if args.workers is not None and args.workers < 1:
        raise UsageError(f"--workers must be >= 1, got {args.workers}")
    settings = _settings(args)
    source, out = Path(args.source), Path(args.out)
    if out.exists() and not out.is_dir():
        raise FileExistsError(f"output folder {str(out)!r} is a file")
    if source.is_dir():
        entries = scan_folder(source, unit=args.unit, dt=args.dt, pattern=args.pattern, exclude=[out])
    elif source.is_file():
        entries = read_manifest(source, unit=args.unit, dt=args.dt)
    else:
        raise FileNotFoundError(f"manifest or folder {args.source!r} does not exist")
    progress = Progress(len(entries), not args.quiet, "records", ("done", "skipped", "failed"))

    def show(outcome: RecordOutcome, manifest: ResultsManifest) -> None:
        progress.step(outcome.file, outcome.status, outcome.message)

    summary = run_survey(entries, settings, out, workers=args.workers, scheduler=args.scheduler, on_outcome=show)
    progress.close()
    for file, message in summary.failures[:_LISTED_FAILURES]:
        print(f"groundstep batch: failed: {file}: {message}", file=sys.stderr)
    if len(summary.failures) > _LISTED_FAILURES:
        print(f"groundstep batch: ... {len(summary.failures) - _LISTED_FAILURES} more failures in {out / RESULTS_FILE}",
              file=sys.stderr)  # fmt: skip
    print(
        f"{summary.done} done, {summary.skipped} skipped (already done), {summary.failed} failed of "
        f"{summary.total} records in {summary.seconds:.1f} s; {out / RESULTS_FILE}, {out / TABLE_FILE}"
    )
    if summary.interrupted:
        print("groundstep batch: interrupted; run the same command again to resume", file=sys.stderr)
    print(CAUTION)
    return EXIT_INPUT if summary.failures or summary.interrupted else EXIT_OK


def _settings(args: argparse.Namespace) -> SurveySettings:
    """The settings file (if any), then the options on top."""
    base = read_settings(args.settings) if args.settings else SurveySettings()
    common = settings_from_options(  # the options the spectrum command shares, parsed by the same rule
        args, ReportSettings(periods=base.periods, dampings=base.dampings, method=base.method,
                             max_step_ratio=base.max_step_ratio, hardening=base.hardening),
    )  # fmt: skip
    changes: dict[str, object] = {
        "periods": common.periods, "dampings": common.dampings, "method": common.method,
        "max_step_ratio": common.max_step_ratio, "hardening": common.hardening,
    }  # fmt: skip
    if args.ductilities is not None:
        changes["ductilities"] = tuple(floats(args.ductilities, "--ductilities"))
    if args.ductility_damping is not None:
        changes["ductility_damping"] = args.ductility_damping
    if args.baseline is not None:
        changes["baseline"] = args.baseline
    if args.bandpass is not None:
        parts = [part.strip() for part in args.bandpass.split(",")]
        if len(parts) != 2:
            raise UsageError(f"--bandpass {args.bandpass!r}: give LOW,HIGH [Hz], e.g. 0.1,25 (or 0.1, for a high-pass)")
        corners = [floats(part, "--bandpass")[0] if part else None for part in parts]
        changes["bandpass"] = (corners[0], corners[1])
    if args.no_measures:
        changes["measures"] = False
    fields = {name: getattr(base, name) for name in SurveySettings.__dataclass_fields__}
    return SurveySettings(**{**fields, **changes})
