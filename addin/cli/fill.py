"""``groundstep fill``: read a record and settings from a workbook, write a new result workbook."""

from __future__ import annotations

import argparse
import time
from pathlib import Path

from .common import EXIT_OK, UsageError, add_settings, print_headline, refuse_existing, settings_from_options

__all__ = ["add", "run"]


def add(parser: argparse.ArgumentParser) -> None:
    """The command's arguments."""
    parser.add_argument("input", metavar="INPUT.xlsx", help="the input workbook (left untouched)")
    parser.add_argument("--out", required=True, metavar="OUTPUT.xlsx", help="the new result workbook")
    parser.add_argument("--record", metavar="SHEET!RANGE", help="acceleration column, e.g. Input!B2:B4001")
    parser.add_argument("--dt", type=float, metavar="SECONDS", help="time step [s] (overrides the workbook)")
    parser.add_argument("--unit", metavar="UNIT", help="acceleration unit: g, m/s2, cm/s2, gal, mm/s2, in/s2, ft/s2")
    parser.add_argument("--force", action="store_true", help="replace OUTPUT.xlsx if it exists")
    add_settings(parser)


def run(args: argparse.Namespace, command_line: str) -> int:
    """Read the input workbook (never written), compute, write the result workbook."""
    from groundstep.addin.package.inputs import read_input_workbook
    from groundstep.addin.result.content import build_report
    from groundstep.addin.result.offline import write_report

    started = time.perf_counter()
    source, out = Path(args.input), Path(args.out)
    if out.resolve() == source.resolve():
        raise UsageError("--out names the input workbook; the input is never overwritten: choose another file")
    refuse_existing([out], args.force)
    record, settings, label = read_input_workbook(source, record=args.record, dt=args.dt, unit=args.unit)
    report = build_report(record, settings_from_options(args, settings), command=command_line, source=label)
    write_report(report, out, force=args.force)
    print_headline(out, report, time.perf_counter() - started)
    return EXIT_OK
