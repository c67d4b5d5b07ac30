"""The ``groundstep`` command line: the parser and the dispatch to one module per command.

Commands: ``batch``, ``demo``, ``fill``, ``spectrum``, ``suite``, ``verify``,
``templates``, ``calc-extension``, ``warm``. Exit codes (also in
``groundstep --help``):

0  success (``verify``: every block matches)
1  ``verify``: at least one block does not match
2  bad command line or input: a file that cannot be read (for ``verify``:
   not readable as a groundstep result workbook), a bad cell or option, or
   an output that exists without ``--force`` (``batch``: any record failed)
3  internal error (a bug): rerun with ``--debug`` for the traceback
"""

from __future__ import annotations

import argparse
import shlex
import sys
import warnings
from collections.abc import Sequence
from types import ModuleType

from groundstep.addin.common import CAUTION

from . import batch, calc_extension, demo, fill, spectrum, suite, templates, verify, warm
from .common import EXIT_INPUT, EXIT_INTERNAL

__all__ = ["main"]

_EPILOG = f"""exit codes: 0 success; 1 verify found a mismatch; 2 bad command line or input
(for verify: not a groundstep result workbook; for batch: a record failed); 3 internal error (rerun with --debug).

{CAUTION}"""

#: name -> (module with add() and run(), one-line help, description)
_COMMANDS: dict[str, tuple[ModuleType, str, str]] = {
    "batch": (
        batch, "spectra and measures of a whole record database (local processes or Dask), resumable",
        "Run every record of a CSV manifest or a folder: elastic spectra, constant-ductility spectra and "
        "ground-motion measures, one JSON per record in DIR/records, the results manifest DIR/results.csv "
        "(status, message, hash, seconds) and the combined table DIR/spectra.csv. Re-running skips records "
        "done with the same settings. Exit 0 when every record is done, 2 when any failed.",
    ),
    "demo": (
        demo, "write the result workbook of the bundled, invented demo record",
        "Generate the invented demo record (seeded synthetic accelerogram) and write its result workbook.",
    ),
    "fill": (
        fill, "read a record and settings from a workbook; write a new result workbook",
        "Read the record and settings from an input workbook (named input cells of the calculation-package "
        "template, or --record SHEET!RANGE with --dt and --unit) and write a new result workbook. "
        "The input file is only read, never changed.",
    ),
    "spectrum": (
        spectrum, "response spectra of text/CSV records to CSV, JSON or workbooks",
        "Compute elastic response spectra of one or more text/CSV records (one acceleration per value, "
        "or 'time, acceleration' lines). Each RECORD_FILE gives OUT_DIR/NAME.spectrum.csv (or .json, .xlsx). "
        "Several files run in parallel worker processes; progress goes to stderr.",
    ),
    "suite": (
        suite, "spectra of a record suite scaled to a design or target spectrum, in a suite workbook",
        "Compute each record's spectra (RotD100, RotD50 and geometric mean for two components, PSA for one), "
        "scale the suite to the target (--target ASCE7:... / EN1998:... / --target-table) under a rule "
        "(--rule, --fraction, --preset with --period, or --range) and write a suite workbook: one sheet per "
        "record, a Scaling sheet with factors, controlling period, mean/target and pass/fail per period, a chart "
        "and an Audit sheet that 'groundstep verify' recomputes. Presets are from memory of the standards.",
    ),
    "verify": (
        verify, "recompute a result workbook and report per block",
        "Recompute every result block of a groundstep result workbook from its stored record and settings "
        "(a suite workbook: from its record files, digests checked), "
        "check the record's SHA-256, and print one line per block. Exit 0 when all match, 1 on any "
        "mismatch, 2 when the file is not readable as a groundstep result workbook.",
    ),
    "templates": (
        templates, "write the calculation-package workbook templates",
        "Write the workbook templates (worksheet functions, input cells) into DIR.",
    ),
    "calc-extension": (
        calc_extension, "build, install or remove the LibreOffice Calc extension (STEP_ functions in Calc)",
        "build OUT.oxt writes the extension; install [--profile DIR] checks that LibreOffice's Python can import "
        "groundstep and installs it for the current user or into a profile folder; remove [--profile DIR].",
    ),
    "warm": (
        warm, "compile the numerical kernels once (fills numba's on-disk cache)",
        "Call every compiled kernel once so later runs load machine code from the on-disk cache.",
    ),
}  # fmt: skip


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; return the exit code."""
    args_list = list(sys.argv[1:] if argv is None else argv)
    parser = _parser()
    args = parser.parse_args(args_list)
    if args.command is None:
        parser.print_help()
        return EXIT_INPUT
    command_line = "groundstep " + " ".join(shlex.quote(a) for a in args_list)
    try:
        with warnings.catch_warnings():
            warnings.showwarning = _one_line_warning
            return int(args.run(args, command_line))
    except KeyboardInterrupt:
        print("groundstep: interrupted", file=sys.stderr)
        return EXIT_INPUT
    except Exception as exc:  # noqa: BLE001 - one clear line unless --debug
        if args.debug:
            raise
        if isinstance(exc, (ValueError, TypeError, OSError)):  # NotAResultWorkbook is a ValueError
            print(f"groundstep {args.command}: error: {_text(exc)}", file=sys.stderr)
            return EXIT_INPUT
        print(
            f"groundstep {args.command}: internal error: {type(exc).__name__}: {exc} (rerun with --debug for the traceback)",
            file=sys.stderr,
        )
        return EXIT_INTERNAL


def _text(exc: BaseException) -> str:
    if isinstance(exc, FileNotFoundError) and exc.filename:
        return f"{exc.strerror}: {exc.filename}"
    return str(exc).splitlines()[0] if str(exc) else type(exc).__name__


def _one_line_warning(message, category, filename, lineno, file=None, line=None) -> None:  # noqa: ANN001
    print(f"groundstep: note: {message}", file=sys.stderr)


def _parser() -> argparse.ArgumentParser:
    from groundstep.core import __version__

    parser = argparse.ArgumentParser(
        prog="groundstep",
        description="Oscillator response to ground acceleration: result workbooks, spectra, checks.",
        epilog=_EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("--version", action="version", version=f"groundstep {__version__}")
    common = argparse.ArgumentParser(add_help=False)
    common.add_argument("--debug", action="store_true", help="show the full traceback of an error")
    parser.set_defaults(command=None, debug=False)
    sub = parser.add_subparsers(title="commands", metavar="COMMAND")
    for name, (module, help_text, description) in _COMMANDS.items():
        command = sub.add_parser(
            name, parents=[common], help=help_text, description=description, epilog=_EPILOG,
            formatter_class=argparse.RawDescriptionHelpFormatter,
        )  # fmt: skip
        command.set_defaults(command=name, run=module.run)
        module.add(command)
    return parser
