"""``groundstep verify``: recompute a result workbook and report per block."""

from __future__ import annotations

import argparse

from .common import EXIT_MISMATCH, EXIT_OK

__all__ = ["add", "run"]


def add(parser: argparse.ArgumentParser) -> None:
    """The command's arguments."""
    parser.add_argument("workbook", metavar="WORKBOOK.xlsx")


def run(args: argparse.Namespace, command_line: str) -> int:
    """Print one line per checked block; exit 1 on any mismatch."""
    from groundstep.addin.result.verify import verify_workbook

    checks = verify_workbook(args.workbook)
    print(f"groundstep verify {args.workbook}")
    for check in checks:
        print("  " + check.line())
    bad = [c for c in checks if not c.ok]
    if bad:
        print(f"{len(bad)} of {len(checks)} checks do not match: " + ", ".join(f"{c.sheet} / {c.title}" for c in bad))
        return EXIT_MISMATCH
    print(f"all {len(checks)} checks match.")
    return EXIT_OK
