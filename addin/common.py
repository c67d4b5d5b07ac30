"""What every adapter shares: the caution text, the error prefix of cells, atomic file writing.

One home each: the worksheet functions, the workbooks, the templates and
the command line import these and never spell them out again.
"""

from __future__ import annotations

import contextlib
import glob
import os
import tempfile
import threading
import time
from collections.abc import Callable
from pathlib import Path

__all__ = ["CAUTION", "ERROR_PREFIX", "FORMULA_STARTS", "as_text", "remove_stale_temporaries", "write_atomically"]

#: Shown on every result workbook, template, by STEP_ABOUT and by the command line.
CAUTION = "Results support, not replace, engineering judgement; local codes and licensed practice govern."
#: Every error message a worksheet function returns to a cell starts with this text.
ERROR_PREFIX = "STEP error: "

#: First characters that make a spreadsheet read typed text as a formula or a number
#: (OWASP Foundation, "CSV Injection", owasp.org/www-community/attacks/CSV_Injection).
FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")

_UMASK_LOCK = threading.Lock()
_STARTED = time.time()  # about when this process started: older temporaries without a PID are stale


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
    remove_stale_temporaries(target)
    handle, name = tempfile.mkstemp(prefix=f".{target.name}.{os.getpid()}.", suffix=".tmp", dir=target.parent)
    os.close(handle)
    temporary = Path(name)
    try:
        os.chmod(temporary, 0o666 & ~_umask())  # mkstemp makes 0600; a new file normally gets 0666 & ~umask
        write(temporary)
        with open(temporary, "rb") as written:  # on disk before the rename, so a crash cannot leave it empty
            os.fsync(written.fileno())
        os.replace(temporary, target)
    finally:
        with contextlib.suppress(FileNotFoundError):
            temporary.unlink()
    return target


def remove_stale_temporaries(target: Path) -> list[Path]:
    """Delete temporary files of `target` left by a writer that was killed; return them.

    A temporary is ``.NAME.PID.RANDOM.tmp`` beside the target. It is stale
    when the process PID no longer runs, or, for a name without a readable
    PID, when it is older than this process. A temporary of a live writer is
    left alone, so two processes writing the same file do not disturb each
    other.
    """
    removed = []
    for candidate in target.parent.glob(f".{glob.escape(target.name)}.*.tmp"):
        pid_text = candidate.name[len(target.name) + 2 :].split(".", 1)[0]
        try:
            stale = not _running(int(pid_text))
        except ValueError:
            try:
                stale = candidate.stat().st_mtime < _STARTED
            except FileNotFoundError:
                continue
        if stale:
            with contextlib.suppress(FileNotFoundError):
                candidate.unlink()
                removed.append(candidate)
    return removed


def _running(pid: int) -> bool:
    """Whether process `pid` exists (signal 0 checks without sending anything)."""
    if pid == os.getpid():
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except (PermissionError, OSError):
        return True  # exists, owned by someone else (or cannot tell: keep the file)
    return True


def _umask() -> int:
    """The process umask (read by setting and restoring it, under a lock)."""
    with _UMASK_LOCK:
        current = os.umask(0o022)
        os.umask(current)
    return current

