"""``groundstep calc-extension``: build, install or remove the LibreOffice Calc extension; fill a document in Calc."""

from __future__ import annotations

import argparse
import site

from .common import EXIT_INPUT, EXIT_OK

__all__ = ["add", "run"]


def add(parser: argparse.ArgumentParser) -> None:
    """The command's arguments: an action and its options."""
    actions = parser.add_subparsers(title="actions", dest="action", metavar="ACTION", required=True)
    build = actions.add_parser("build", help="write the extension (.oxt)")
    build.add_argument("out", metavar="OUT.oxt")
    build.add_argument("--site", action="append", metavar="DIR",
                       help="site folder LibreOffice's Python adds to import groundstep (repeatable; "
                            "default: this Python's site-packages)")  # fmt: skip
    build.add_argument("--force", action="store_true", help="replace OUT.oxt if it exists")
    build.add_argument("--no-macro", action="store_true",
                       help="leave out the fill_results macro (for a LibreOffice without its Python script provider)")  # fmt: skip
    for name, text in (("install", "check LibreOffice's Python, then install the extension"),
                       ("remove", "remove the extension")):  # fmt: skip
        action = actions.add_parser(name, help=text)
        action.add_argument("--profile", metavar="DIR", help="LibreOffice user profile folder (default: the user's own)")
        if name == "install":
            action.add_argument("--python-env", metavar="DIR",
                                help="virtual environment made from LibreOffice's Python that holds groundstep")  # fmt: skip
    fill = actions.add_parser("fill", help="fill the result sheets of a filled-in template in headless LibreOffice")
    fill.add_argument("document", metavar="DOCUMENT.xlsx", help="the filled-in template (opened read-only)")
    fill.add_argument("--out", required=True, metavar="RESULT.ods|.xlsx", help="the new result document")
    fill.add_argument("--force", action="store_true", help="replace the result document if it exists")


def run(args: argparse.Namespace, command_line: str) -> int:
    """Run the chosen action; problems come back as one line with the fix."""
    from groundstep.addin.calc import install
    from groundstep.addin.calc.extension import build_extension
    from groundstep.addin.calc.office import OfficeError

    try:
        if args.action == "fill":
            from groundstep.addin.calc.live import fill_file

            report = fill_file(args.document, args.out, force=args.force, command=command_line)
            print(f"wrote {args.out}: {len(report.layout.sheets)} result sheets")
        elif args.action == "build":
            folders = args.site or site.getsitepackages()
            print(f"wrote {build_extension(args.out, folders, force=args.force, macro=not args.no_macro)}")
        elif args.action == "install":
            print(install.install(args.profile, args.python_env))
        else:
            print(install.remove(args.profile))
    except (install.InstallError, OfficeError) as exc:
        print(f"groundstep calc-extension {args.action}: {exc}")
        return EXIT_INPUT
    return EXIT_OK
