"""What every adapter shares: the caution text, the error prefix of cells, atomic file writing.

One home each: the worksheet functions, the workbooks, the templates and
the command line import these and never spell them out again.
"""

from __future__ import annotations

import contextlib
import os
import tempfile
import threading
from collections.abc import Callable
from pathlib import Path

__all__ = ["CAUTION", "ERROR_PREFIX", "FORMULA_STARTS", "as_text", "write_atomically"]

#: Shown on every result workbook, template, by STEP_ABOUT and by the command line.
CAUTION = "Results support, not replace, engineering judgement; local codes and licensed practice govern."
#: Every error message a worksheet function returns to a cell starts with this text.
ERROR_PREFIX = "STEP error: "

#: First characters that make a spreadsheet read typed text as a formula or a number
#: (OWASP Foundation, "CSV Injection", owasp.org/www-community/attacks/CSV_Injection).
FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")

_UMASK_LOCK = threading.Lock()


def as_text(value: object) -> object:
    """`value` unchanged unless it is text a spreadsheet would read as a formula: then quote-prefixed.

    A leading apostrophe makes Excel and LibreOffice store what follows as
    text (the apostrophe itself is not shown). Numbers, None and text with
    any other first character pass unchanged. Callers that write formulas of
    their own do not pass them through here.

    Examples
    --------
    >>> as_text("=HYPERLINK(1)"), as_text("site A"), as_text(-1.5)
    ("'=HYPERLINK(1)", 'site A', -1.5)
    """
    if isinstance(value, str) and value.startswith(FORMULA_STARTS):
        return "'" + value
    return value


def write_atomically(
    path: str | os.PathLike[str], write: Callable[[Path], None], *, force: bool = False
) -> Path:
    """Write a file through `write(temporary_path)`, then move it onto `path` in one step.

    The temporary file lies in the target's folder (so the move is a rename
    on the same file system), carries the permissions the user's umask gives
    a new file, and is removed if `write` fails. A reader therefore sees
    either the old file or the whole new one.

    Parameters
    ----------
    path : path-like
        The file to write; its folder must exist.
    write : callable
        Called with the temporary path; writes the whole file there.
    force : bool, default False
        Replace an existing file.

    Returns
    -------
    Path
        `path`.

    Raises
    ------
    FileExistsError
        `path` exists and `force` is false.
    FileNotFoundError
        The folder of `path` does not exist.
    """
    target = Path(path)
    if target.exists() and not force:
        raise FileExistsError(f"output {str(target)!r} exists; pass --force to replace it")
    if not target.parent.is_dir():
        raise FileNotFoundError(f"output folder {str(target.parent)!r} does not exist")
    handle, name = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=target.parent)
    os.close(handle)
    temporary = Path(name)
    try:
        os.chmod(temporary, 0o666 & ~_umask())  # mkstemp makes 0600; a new file normally gets 0666 & ~umask
        write(temporary)
        os.replace(temporary, target)
    finally:
        with contextlib.suppress(FileNotFoundError):
            temporary.unlink()
    return target


def _umask() -> int:
    """The process umask (read by setting and restoring it, under a lock)."""
    with _UMASK_LOCK:
        current = os.umask(0o022)
        os.umask(current)
    return current

