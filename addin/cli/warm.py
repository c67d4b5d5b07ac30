"""``groundstep warm``: compile the numerical kernels once (fills numba's on-disk cache)."""

from __future__ import annotations

import argparse

from .common import EXIT_OK

__all__ = ["add", "run"]


def add(parser: argparse.ArgumentParser) -> None:
    """The command takes no arguments of its own."""


def run(args: argparse.Namespace, command_line: str) -> int:
    """Call every kernel once, in two processes, and print how long each first call took."""
    from groundstep.core import warm_up

    timings = warm_up(processes=2)  # numba compiles on one thread: a second interpreter uses the second core
    for label, seconds in timings.items():
        if label != "total":
            print(f"  {label:<50s} {seconds:8.3f} s")
    print(f"first calls took {timings['total']:.3f} s in all, wall time (milliseconds each once the cache is warm)")
    return EXIT_OK
