"""What every command shares: exit codes, the usage error, settings options, output checks, the headline."""

from __future__ import annotations

import argparse
import sys
from collections.abc import Sequence
from dataclasses import replace
from pathlib import Path
from typing import Any

from groundstep.addin.common import CAUTION
from groundstep.addin.result.content import Oscillator, ReportSettings
from groundstep.addin.result.sheets import SPECTRA
from groundstep.core import period_grid
from groundstep.core.checks import check_damping, check_hardening, check_integer, check_period, check_positive
from groundstep.core.defaults import DEFAULT_DAMPING

__all__ = [
    "EXIT_INPUT",
    "EXIT_INTERNAL",
    "EXIT_MISMATCH",
    "EXIT_OK",
    "UsageError",
    "add_processing_options",
    "add_settings",
    "add_spectrum_options",
    "add_target_options",
    "floats",
    "print_headline",
    "print_notes",
    "refuse_existing",
    "settings_from_options",
    "target_from_options",
]

EXIT_OK, EXIT_MISMATCH, EXIT_INPUT, EXIT_INTERNAL = 0, 1, 2, 3


class UsageError(ValueError):
    """A bad option combination, reported as an input error."""


def add_spectrum_options(g: argparse._ArgumentGroup) -> None:
    """--periods, --dampings, --method, --max-step-ratio: the options every computing command shares."""
    g.add_argument("--periods", metavar="SHORTEST,LONGEST,COUNT", default=None,
                   help="log-spaced spectrum periods [s] (default 0.02,10,80)")  # fmt: skip
    g.add_argument("--dampings", metavar="LIST", default=None, help="damping ratios, e.g. 0.02,0.05,0.1 (default)")
    g.add_argument("--method", default=None, metavar="NAME",
                   help="average (default), linear, exact, or BETA,GAMMA")  # fmt: skip
    g.add_argument("--max-step-ratio", type=float, default=None, metavar="RATIO",
                   help="largest h/T before a step is sub-divided (default 0.1)")  # fmt: skip


def add_processing_options(g: argparse._ArgumentGroup) -> None:
    """--baseline and --bandpass: record processing before any analysis."""
    g.add_argument("--baseline", type=int, default=None, metavar="ORDER",
                   help="remove the least-squares velocity trend of this degree first (1 to 10; 2 is usual)")  # fmt: skip
    g.add_argument("--bandpass", default=None, metavar="LOW,HIGH",
                   help="then a zero-phase Butterworth filter with corners LOW and HIGH [Hz]; leave one out "
                        "for a high-pass (0.1,) or a low-pass (,25)")  # fmt: skip


def add_settings(p: argparse.ArgumentParser) -> None:
    """The settings options of the workbook and spectrum commands."""
    g = p.add_argument_group("spectrum settings")
    add_spectrum_options(g)
    add_processing_options(g)
    if p.prog.split()[-1] != "spectrum":  # the workbook commands add oscillators
        g.add_argument("--oscillator", action="append", default=None, metavar="LABEL:PERIOD[:DAMPING[:R]]",
                       help="an oscillator for the Peaks sheet (repeatable); with a strength reduction factor R "
                            "it also appears in the yielding table (damping default 0.05)")  # fmt: skip
        g.add_argument("--hardening", type=float, default=None, metavar="ALPHA",
                       help="post-yield stiffness ratio of the yielding oscillators, in [0, 1) (default 0: elastoplastic)")  # fmt: skip
        add_target_options(g)
        g.add_argument("--verification-period", type=float, default=None, metavar="SECONDS",
                       help="period of the Verification sheet's oscillator (h/T <= 0.1)")  # fmt: skip


def settings_from_options(args: argparse.Namespace, base: ReportSettings | None = None) -> ReportSettings:
    """ReportSettings from the options, on top of `base`."""
    base = base or ReportSettings()
    changes: dict[str, Any] = {}
    if args.periods:
        parts = floats(args.periods, "--periods")
        if len(parts) != 3:
            raise UsageError(f"--periods {args.periods!r}: give SHORTEST,LONGEST,COUNT, e.g. 0.02,10,80")
        count = check_integer(parts[2], f"--periods {args.periods!r}: COUNT", minimum=2)
        changes["periods"] = tuple(float(p) for p in period_grid(parts[0], parts[1], count))
    if args.dampings:
        changes["dampings"] = tuple(
            check_damping(value, f"--dampings {args.dampings!r}") for value in floats(args.dampings, "--dampings", percent=True)
        )
    if args.method:
        changes["method"] = tuple(floats(args.method, "--method")) if "," in args.method else args.method
    if args.max_step_ratio is not None:
        changes["max_step_ratio"] = args.max_step_ratio
    if getattr(args, "oscillator", None):
        oscillators = []
        for text in args.oscillator:
            label, *numbers = text.split(":")
            if any(not part.strip() for part in numbers[:2]):  # LABEL:PERIOD::R is not allowed: say the damping
                numbers = []
            values = floats(",".join(numbers), f"--oscillator {label.strip()!r}:", percent=True)
            if not label.strip() or len(values) not in (1, 2, 3) or len(numbers) != len(values):
                raise UsageError(
                    f"--oscillator {text!r}: give LABEL:PERIOD, LABEL:PERIOD:DAMPING or LABEL:PERIOD:DAMPING:R"
                )
            check_period(values[0], f"--oscillator {text!r}: PERIOD")
            if len(values) >= 2:
                check_damping(values[1], f"--oscillator {text!r}: DAMPING")
            if len(values) == 3:
                check_positive(values[2], f"--oscillator {text!r}: the reduction factor R")
            damping = values[1] if len(values) >= 2 else DEFAULT_DAMPING
            oscillators.append(Oscillator(label.strip(), values[0], damping, values[2] if len(values) == 3 else None))
        changes["oscillators"] = tuple(oscillators)
    if getattr(args, "hardening", None) is not None:
        changes["hardening"] = check_hardening(args.hardening, "--hardening")
    if getattr(args, "baseline", None) is not None:
        changes["baseline_order"] = check_integer(args.baseline, "--baseline", minimum=1)
    if getattr(args, "bandpass", None):
        changes["low_hz"], changes["high_hz"] = _corners(args.bandpass)
    if getattr(args, "verification_period", None) is not None:
        changes["verification_period"] = args.verification_period
    target = target_from_options(args)
    if target is not None:
        changes["target_standard"], changes["target_parameters"] = target
    return replace(base, **changes)


def add_target_options(parser: Any, *, required: bool = False) -> None:
    """--target STANDARD:NAME=VALUE,... and --target-table CSV (one of the two; `required` for the suite)."""
    target = parser.add_mutually_exclusive_group(required=required)
    target.add_argument("--target", metavar="STANDARD:NAME=VALUE,...",
                        help="design spectrum: ASCE7:sds=1.0,sd1=0.6,tl=8 or EN1998:ag=0.25,ground_type=C"
                             "[,spectrum_type=1,importance_factor=1,damping=0.05] (accelerations in g)")  # fmt: skip
    target.add_argument("--target-table", metavar="CSV", help="a target of your own: lines 'period [s], Sa [g]'")


def target_from_options(args: argparse.Namespace) -> tuple[str, tuple[tuple[str, Any], ...]] | None:
    """(standard, parameters) for ``groundstep.core.design_spectrum`` from --target or --target-table; None without.

    ``--target ASCE7:sds=1.0,sd1=0.6,tl=8`` gives ``("ASCE7", (("sds", 1.0), ...))``
    (names lower-cased, values as int, float or text); ``--target-table FILE`` reads
    ``period, Sa`` lines (``;`` also separates; only the first line may be a header)
    into ``("table", (("periods_table", ...), ("sa_table", ...)))``.
    """
    if getattr(args, "target_table", None):
        try:
            text = Path(args.target_table).read_text(encoding="utf-8")
        except OSError as exc:
            raise UsageError(f"--target-table {args.target_table!r} cannot be read ({exc.strerror or exc})") from None
        rows = [line.replace(";", ",").split(",") for line in text.splitlines()]
        pairs = []
        for number, row in enumerate(rows, start=1):
            if not any(cell.strip() for cell in row):
                continue
            try:
                pairs.append((float(row[0]), float(row[1])))
            except (ValueError, IndexError):
                if pairs or number > 1:  # only the first line may be a header
                    raise UsageError(f"--target-table line {number}: expected 'period, Sa', got {','.join(row)!r}") from None
        return "table", (("periods_table", tuple(p for p, _ in pairs)), ("sa_table", tuple(s for _, s in pairs)))
    if not getattr(args, "target", None):
        return None
    standard, colon, text = args.target.partition(":")
    if not colon or not standard.strip():
        raise UsageError(f"--target {args.target!r}: give STANDARD:NAME=VALUE,..., e.g. ASCE7:sds=1.0,sd1=0.6,tl=8")
    parameters = []
    for item in filter(None, (part.strip() for part in text.split(","))):
        name, equals, value = item.partition("=")
        if not equals:
            raise UsageError(f"--target {args.target!r}: {item!r} is not NAME=VALUE")
        parameters.append((name.strip().lower(), _value(value.strip())))
    return standard.strip(), tuple(parameters)


def _value(text: str) -> Any:
    for kind in (int, float):
        try:
            return kind(text)
        except ValueError:
            pass
    return text


def _corners(text: str) -> tuple[float | None, float | None]:
    """``LOW,HIGH`` of --bandpass; an empty side is None (a high- or low-pass)."""
    parts = text.split(",")
    if len(parts) != 2 or not any(part.strip() for part in parts):
        raise UsageError(f"--bandpass {text!r}: give LOW,HIGH in Hz, e.g. 0.1,25 (or 0.1, for a high-pass)")
    low, high = (floats(part, "--bandpass")[0] if part.strip() else None for part in parts)
    return low, high


def floats(text: str, option: str, *, percent: bool = False) -> list[float]:
    """Comma-separated numbers; with `percent`, ``5%`` is 0.05 (as a damping cell reads it)."""
    found = []
    for part in (item.strip() for item in text.split(",")):
        if not part:
            continue
        scale = 1.0
        if percent and part.endswith("%"):
            part, scale = part[:-1].strip(), 0.01
        try:
            found.append(float(part) * scale)
        except ValueError:
            raise UsageError(f"{option} {text!r}: expected comma-separated numbers; {part!r} is not a number"
                             + (" (e.g. 0.05 or 5%)" if percent else "")) from None  # fmt: skip
    return found


def refuse_existing(paths: Sequence[Path], force: bool) -> None:
    if force:
        return
    existing = [str(p) for p in paths if p.exists()]
    if existing:
        more = f" (and {len(existing) - 1} more)" if len(existing) > 1 else ""
        raise FileExistsError(f"output {existing[0]!r}{more} exists; pass --force to replace it")


def print_headline(out: Path, report: Any, seconds: float) -> None:
    h = report.headline
    s = report.content["record_summary"]
    print(f"wrote {out} in {seconds:.1f} s")
    analysed = len(report.content["record_table"]["time"])
    padded = f" ({analysed} after processing, zero pads included)" if analysed != s["samples"] else ""
    print(f"  record: {s['record_name']}, {s['samples']} samples{padded}, {s['duration']:.2f} s, "
          f"PGA {h['pga']:.4g} {h['unit']}")  # fmt: skip
    for step in report.content.get("processing_table", {}).get("step", []):
        print(f"  processed: {step}")
    print(f"  significant duration (5-95 % Arias): {h['significant_duration']:.2f} s")
    print(
        f"  largest PSA: {h['peak_psa']:.4g} {h['unit']} at T = {h['peak_psa_period']:.3g} s "
        f"(damping {h['peak_psa_damping']:g})"
    )
    if "largest_ductility" in h:
        print(
            f"  largest ductility demand: {h['largest_ductility']:.3g} ({h['largest_ductility_label']}, "
            f"R = {h['largest_ductility_reduction_factor']:g}; yielding table on the Peaks sheet)"
        )
    if "target" in h:
        print(f"  target spectrum on the {SPECTRA} chart: {h['target']}")
    window = report.content.get("verification_start", {})
    first, rows = window.get("verification_first_step", 0), window.get("verification_steps_replayed")
    total = window.get("verification_record_steps")
    replayed = (
        "every step written as formulas"
        if rows is None or total is None or rows >= total
        else f"record steps {first}-{first + rows - 1} of 0-{total - 1} (a window around the peaks) written as formulas"
    )
    print(
        f"  Verification sheet: T = {h['verification_period']:g} s, damping {h['verification_damping']:g}, "
        f"{replayed} (open in a spreadsheet; check with 'groundstep verify')"
    )
    print(f"  {CAUTION}")
    print_notes(report.content.get("findings", {}))


def print_notes(findings: dict[str, list[str]], prefix: str = "") -> None:
    """The plausibility notes as ``groundstep: note: ...`` lines on stderr (none for the "none" row)."""
    for check, message in zip(findings.get("check", []), findings.get("finding", [])):
        if check != "none":
            print(f"groundstep: note: {prefix}{message}", file=sys.stderr)
