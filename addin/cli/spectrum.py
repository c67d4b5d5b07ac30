"""``groundstep spectrum``: response spectra of text/CSV records to CSV, JSON or workbooks."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from groundstep.addin.common import CAUTION

from .common import EXIT_INPUT, EXIT_OK, UsageError, add_settings, refuse_existing, settings_from_options

__all__ = ["DEFAULT_WORKERS", "add", "run"]

#: Default parallel workers: this class of machine has two cores, shared.
DEFAULT_WORKERS = 2


def add(parser: argparse.ArgumentParser) -> None:
    """The command's arguments."""
    parser.add_argument("records", nargs="+", metavar="RECORD_FILE", help="text or CSV record files")
    parser.add_argument("--dt", type=float, metavar="SECONDS", help="time step [s]; needed without a time column")
    parser.add_argument("--unit", default=None, metavar="UNIT",
                        help="acceleration unit of the files: g, m/s2, cm/s2, gal, mm/s2, in/s2 or ft/s2 "
                             "(required: never assumed)")  # fmt: skip
    parser.add_argument("--time-column", choices=("auto", "yes", "no"), default="auto",
                        help="whether lines are 'time, acceleration' (default: auto-detect)")  # fmt: skip
    parser.add_argument("--format", choices=("csv", "json", "xlsx"), default="csv", help="output format (default csv)")
    parser.add_argument("--out-dir", default=".", metavar="DIR", help="output folder (default: current folder)")
    parser.add_argument("--workers", type=int, default=DEFAULT_WORKERS, metavar="N",
                        help=f"parallel worker processes (default {DEFAULT_WORKERS}; 1 runs in this process)")  # fmt: skip
    parser.add_argument("--force", action="store_true", help="replace existing outputs")
    parser.add_argument("--quiet", action="store_true", help="no progress display")
    add_settings(parser)


def run(args: argparse.Namespace, command_line: str) -> int:
    """Plan the outputs, run the jobs, report failures one line each."""
    from groundstep.core.units import ACCELERATION_UNITS

    from .spectrum_jobs import plan_outputs, run_batch

    if args.unit is None:  # a wrong unit scales every result: never assumed
        raise UsageError(f"give the acceleration unit of the files with --unit ({', '.join(ACCELERATION_UNITS)})")
    if args.workers < 1:
        raise UsageError(f"--workers must be >= 1, got {args.workers}")
    settings = settings_from_options(args)
    jobs = plan_outputs(args.records, Path(args.out_dir), args.format)
    refuse_existing([out for _, out in jobs], args.force)
    time_column = {"auto": None, "yes": True, "no": False}[args.time_column]
    failures = run_batch(
        jobs, settings, dt=args.dt, unit=args.unit, time_column=time_column, workers=args.workers,
        command=command_line, progress=not args.quiet,
    )  # fmt: skip
    for path, message in failures:
        print(f"groundstep spectrum: error: {path}: {message}", file=sys.stderr)
    done = len(jobs) - len(failures)
    print(f"{done} of {len(jobs)} records written to {args.out_dir} ({args.format}). {CAUTION}")
    return EXIT_INPUT if failures else EXIT_OK
