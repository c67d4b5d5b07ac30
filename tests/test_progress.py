"""The shared progress display of ``groundstep spectrum`` and ``groundstep batch``."""

from __future__ import annotations

import io

import pytest

from groundstep.addin.cli import progress as progress_module
from groundstep.addin.cli.progress import Progress, clock


@pytest.mark.parametrize(
    ("seconds", "text"),
    [(0.0, "0:00"), (59.4, "0:59"), (61.0, "1:01"), (3725.0, "1:02:05"), (float("nan"), "?")],
)
def test_clock_formats_minutes_and_hours(seconds: float, text: str) -> None:
    """3725 s = 1 h 2 min 5 s (arithmetic); NaN, before any rate is known, shows as '?'."""
    assert clock(seconds) == text


def test_log_line_per_item_counts_statuses(monkeypatch: pytest.MonkeyPatch) -> None:
    """Off a terminal each finished item gets one line with running counts, in the declared status order."""
    stream = io.StringIO()
    monkeypatch.setattr(progress_module.sys, "stderr", stream)
    bar = Progress(3, True, "records", ("done", "skipped", "failed"))
    bar.step("a.txt", "done")
    bar.step("b.txt", "failed", "line 4: not a number")
    bar.step("c.txt", "skipped")
    bar.close()
    lines = stream.getvalue().splitlines()
    assert len(lines) == 3
    assert lines[0].startswith("[1/3: 1 done, 0 skipped, 0 failed; ")
    assert lines[1].startswith("[2/3: 1 done, 0 skipped, 1 failed; ")
    assert lines[1].endswith("] b.txt: failed: line 4: not a number")
    assert lines[2].endswith("] c.txt: skipped")
    assert "records/s" in lines[2] and lines[2].split("] ")[0].endswith("0:00 left")
    assert bar.counts == {"done": 1, "skipped": 1, "failed": 1}


def test_quiet_counts_without_writing(monkeypatch: pytest.MonkeyPatch) -> None:
    """--quiet keeps the counts (the command's summary uses them) and writes nothing."""
    stream = io.StringIO()
    monkeypatch.setattr(progress_module.sys, "stderr", stream)
    bar = Progress(2, False, "files")
    bar.step("x.csv", "done")
    bar.step("y.csv", "retried")
    bar.close()
    assert stream.getvalue() == ""
    assert bar.counts == {"done": 1, "failed": 0, "retried": 1}
    assert bar.finished == 2
