"""One progress display for the commands that run many items (``spectrum`` over files, ``batch`` over records).

On a terminal it is one updating line on stderr: a bar, counts by status,
the rate and the time left. Otherwise (a log file, CI) it writes one line
per finished item, so a log keeps what became of each.
"""

from __future__ import annotations

import sys
import time

__all__ = ["Progress", "clock"]

_BAR = 24  # characters of the bar on a terminal


class Progress:
    """Counts of finished items by status, with the rate and the time left.

    Parameters
    ----------
    total : int
        Items the run will finish.
    enabled : bool
        False (``--quiet``) counts but shows nothing.
    noun : str
        What an item is, plural ("files", "records"), for the rate.
    statuses : tuple of str
        The statuses shown, in order; a status met but not listed is added.
    """

    def __init__(self, total: int, enabled: bool, noun: str, statuses: tuple[str, ...] = ("done", "failed")) -> None:
        self.total, self.enabled, self.noun = total, enabled, noun
        self.tty = enabled and sys.stderr.isatty()
        self.counts = dict.fromkeys(statuses, 0)
        self.start = time.perf_counter()

    @property
    def finished(self) -> int:
        return sum(self.counts.values())

    def step(self, name: str, status: str, message: str = "") -> None:
        """Count one finished item; ``message`` is shown on its own line off a terminal."""
        self.counts[status] = self.counts.get(status, 0) + 1
        if not self.enabled:
            return
        finished = self.finished
        elapsed = time.perf_counter() - self.start
        rate = finished / elapsed if elapsed > 0 else 0.0
        left = (self.total - finished) / rate if rate > 0 else float("nan")
        counts = ", ".join(f"{n} {status}" for status, n in self.counts.items())
        line = f"{finished}/{self.total}: {counts}; {rate:.3g} {self.noun}/s, {clock(left)} left"
        if self.tty:
            filled = int(_BAR * finished / self.total) if self.total else _BAR
            sys.stderr.write(f"\r[{'#' * filled}{'.' * (_BAR - filled)}] {line:<90}")
        else:
            detail = f": {message}" if message else ""
            sys.stderr.write(f"[{line}] {name}: {status}{detail}\n")
        sys.stderr.flush()

    def close(self) -> None:
        """End the updating line on a terminal."""
        if self.tty:
            sys.stderr.write("\n")
            sys.stderr.flush()


def clock(seconds: float) -> str:
    """``m:ss`` or ``h:mm:ss``; ``?`` before a rate is known (NaN)."""
    if seconds != seconds:  # NaN: no rate yet
        return "?"
    minutes, secs = divmod(int(round(seconds)), 60)
    hours, minutes = divmod(minutes, 60)
    return f"{hours}:{minutes:02d}:{secs:02d}" if hours else f"{minutes}:{secs:02d}"
