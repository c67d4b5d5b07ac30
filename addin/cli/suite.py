"""``groundstep suite``: spectra of a record suite, scaled to a target, in one suite workbook."""

from __future__ import annotations

import argparse
import time
from pathlib import Path
from typing import Any

from groundstep.addin.common import CAUTION

from .common import EXIT_OK, UsageError, add_target_options, floats, refuse_existing, target_from_options

__all__ = ["add", "run"]


def add(parser: argparse.ArgumentParser) -> None:
    """The command's arguments."""
    parser.add_argument("records", nargs="*", metavar="RECORD",
                        help="a record file, or FILE_X,FILE_Y for two horizontal components (or use --manifest)")  # fmt: skip
    parser.add_argument("--manifest", metavar="CSV", help="CSV manifest with columns file, dt, unit, file_y, label")
    parser.add_argument("--out", default="groundstep-suite.xlsx", metavar="OUT.xlsx", help="the suite workbook")
    parser.add_argument("--dt", type=float, default=None, help="time step [s] of files without a time column")
    parser.add_argument("--unit", default=None, help="acceleration unit of the records (g, m/s2, cm/s2, ...)")
    add_target_options(parser, required=True)
    parser.add_argument("--preset", choices=("ASCE7", "EN1998"), default=None,
                        help="the standard's suite rule (range 0.2T-2T, 90 %%, fewest records); needs --period")  # fmt: skip
    parser.add_argument("--period", type=float, default=None, metavar="T",
                        help="fundamental period of the structure [s] (the preset's range)")  # fmt: skip
    parser.add_argument("--range", default=None, metavar="LOW,HIGH", help="period range [s] without a preset")
    parser.add_argument("--rule", choices=("common", "least_squares", "both"), default="common",
                        help="common factor (default), per-record least squares, or both")  # fmt: skip
    parser.add_argument("--fraction", type=float, default=None, help="least mean/target over the range (default 0.9)")
    parser.add_argument("--spectrum", choices=("rotd100", "rotd50", "gm"), default="rotd100",
                        help="spectrum of two-component records that is scaled (default rotd100)")  # fmt: skip
    parser.add_argument("--periods", default="0.02,10,100", metavar="SHORTEST,LONGEST,COUNT",
                        help="log-spaced periods [s] (default 0.02,10,100; with EN1998 period 0 is added)")  # fmt: skip
    parser.add_argument("--damping", type=float, default=0.05, help="damping ratio of the spectra (default 0.05)")
    parser.add_argument("--force", action="store_true", help="replace OUT.xlsx if it exists")


def run(args: argparse.Namespace, command_line: str) -> int:
    """Read the records, compute, write the suite workbook, print the outcome and the caution."""
    from groundstep.addin.result.offline import write_report
    from groundstep.addin.result.suite_content import SuiteSettings, build_suite

    started = time.perf_counter()
    out = Path(args.out)
    refuse_existing([out], args.force)
    records = _records(args)
    target = _target(args)
    settings = SuiteSettings(
        target_standard=target[0], target_parameters=target[1], periods=_periods(args),
        damping=args.damping, spectrum=args.spectrum, rule=args.rule, fraction=args.fraction,
        period_range=_range(args), preset=_preset(args), structure_period=args.period,
    )  # fmt: skip
    report = build_suite(records, settings, command=command_line)
    computed = time.perf_counter()
    write_report(report, out, force=args.force)
    scaling = report.headline["scaling"]
    print(f"wrote {out} in {time.perf_counter() - started:.1f} s (spectra and scaling {computed - started:.1f} s)")
    print(f"  target: {report.headline['target'].describe()}")
    print(f"  rule: {scaling.clause}")
    for record, factor in zip(records, scaling.factors):
        print(f"  {record.label}: factor {factor:.4g}")
    print(f"  controlling period {scaling.controlling_period:g} s; lowest mean/target {scaling.ratio[scaling.in_range].min():.4g}")
    for problem in scaling.problems:
        print(f"  problem: {problem}")
    print("  meets the rule" if scaling.ok else f"  does NOT meet the rule ({len(scaling.problems)} problem(s))")
    print("  presets and design spectra are from memory of the standards; the governing code and licensed practice decide")
    print(f"  {CAUTION}")
    return EXIT_OK


def _records(args: argparse.Namespace) -> list[Any]:
    from groundstep.addin.result.suite_content import SuiteRecord
    from groundstep.addin.survey.plan import read_manifest
    from groundstep.core import Record

    if bool(args.records) == bool(args.manifest):
        raise UsageError("give the record files or --manifest CSV (one of the two)")
    if args.manifest:
        rows = [(e.label or Path(e.file).stem, e.path, e.path_y or "", e.dt, e.unit)
                for e in read_manifest(args.manifest, unit=args.unit, dt=args.dt)]  # fmt: skip
    else:
        if args.unit is None:
            raise UsageError("give --unit: a wrong unit scales every result, so it is never assumed")
        rows = []
        for text in args.records:
            x, _, y = text.partition(",")
            rows.append((Path(x).stem, str(Path(x).resolve()), str(Path(y).resolve()) if y else "", args.dt, args.unit))
    found = []
    for label, x, y, dt, unit in rows:
        record_x = Record.from_text(x, dt, unit, name=label)
        record_y = Record.from_text(y, dt, unit, name=label) if y else None
        found.append(SuiteRecord(label, x, record_x, y, record_y))
    return found


def _target(args: argparse.Namespace) -> tuple[str, tuple[tuple[str, Any], ...]]:
    found = target_from_options(args)
    if found is None:  # argparse requires one of the two; kept for callers building args by hand
        raise UsageError("give --target STANDARD:NAME=VALUE,... or --target-table CSV")
    return found


def _periods(args: argparse.Namespace) -> tuple[float, ...]:
    from groundstep.core import period_grid

    parts = floats(args.periods, "--periods")
    if len(parts) != 3 or not float(parts[2]).is_integer():
        raise UsageError(f"--periods {args.periods!r}: give SHORTEST,LONGEST,COUNT, e.g. 0.02,10,100")
    grid = tuple(float(p) for p in period_grid(parts[0], parts[1], int(parts[2])))
    return (0.0, *grid) if _preset(args) == "EN1998" else grid  # EN 1998's zero-period check needs PGA


def _preset(args: argparse.Namespace) -> str | None:
    if args.range:
        if args.preset:
            raise UsageError("give --preset with --period, or --range LOW,HIGH, not both")
        return None
    if args.period is None:
        raise UsageError("give --period T (with --preset, or a target from ASCE7 or EN1998) or --range LOW,HIGH")
    if args.preset:
        return str(args.preset)
    standard = _target(args)[0].upper()
    if standard not in ("ASCE7", "EN1998"):
        raise UsageError("a table target has no preset: give --preset ASCE7|EN1998 with --period, or --range LOW,HIGH")
    return standard


def _range(args: argparse.Namespace) -> tuple[float, float] | None:
    if not args.range:
        return None
    parts = floats(args.range, "--range")
    if len(parts) != 2:
        raise UsageError(f"--range {args.range!r}: give LOW,HIGH in s, e.g. 0.2,2.0")
    return parts[0], parts[1]
