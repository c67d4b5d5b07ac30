"""``groundstep templates``: write the calculation-package workbook templates."""

from __future__ import annotations

import argparse
from pathlib import Path

from .common import EXIT_OK

__all__ = ["add", "run"]


def add(parser: argparse.ArgumentParser) -> None:
    """The command's arguments."""
    parser.add_argument("directory", metavar="DIR")


def run(args: argparse.Namespace, command_line: str) -> int:
    """Write every template into DIR (created if missing): Excel's and the one for LibreOffice Calc."""
    from groundstep.addin.calc.template import write_calc_template
    from groundstep.addin.package.template import write_templates

    for path in [*write_templates(Path(args.directory)), write_calc_template(Path(args.directory))]:
        print(f"wrote {path}")
    return EXIT_OK
