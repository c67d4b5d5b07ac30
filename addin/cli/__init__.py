"""The ``groundstep`` command line: ``main`` and one module per command."""

from .main import main

__all__ = ["main"]
