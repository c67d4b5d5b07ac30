"""Tests that the documentation stays true: README's commands, docstring examples, caution text."""

from __future__ import annotations

import doctest
import importlib
import inspect
import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
CAUTION = "Results support, not replace, engineering judgement; local codes and licensed practice govern."

CORE_MODULES = [
    "groundstep.core.record",
    "groundstep.core.linear",
    "groundstep.core._units",
    "groundstep.core.synthetic",
    "groundstep.core.measures",
]


def _readme_block(marker: str) -> str:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    match = re.search(rf"<!-- {marker} -->\s*```(?:bash|sh)?\n(.*?)```", text, re.S)
    assert match, f"README.md has no fenced block after <!-- {marker} -->"
    return match.group(1).strip()


def test_ci_runs_readme_test_command():
    """.ci/run ends with exactly the test command README gives."""
    command = _readme_block("test-command").splitlines()[-1]
    ci_lines = [line.strip() for line in (ROOT / ".ci" / "run").read_text().splitlines() if line.strip()]
    assert ci_lines[-1] == command


def test_readme_starts_with_the_job_and_shows_the_caution():
    """README opens with a paragraph on the job and carries the caution text."""
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    assert CAUTION in text
    first_paragraph = text.split("\n\n")[1]
    assert "engineer" in first_paragraph and "spreadsheet" in first_paragraph


@pytest.mark.parametrize("name", CORE_MODULES)
def test_docstring_examples_run(name):
    """Every Examples section in the public core modules runs and prints what it shows."""
    module = importlib.import_module(name)
    failures, attempted = doctest.testmod(module, optionflags=doctest.NORMALIZE_WHITESPACE)
    assert failures == 0
    if name != "groundstep.core._units":
        assert attempted > 0


def test_public_core_functions_are_documented():
    """Each name in groundstep.core.__all__ that is a function or class has a numpydoc docstring."""
    core = importlib.import_module("groundstep.core")
    for name in core.__all__:
        item = getattr(core, name)
        if inspect.isfunction(item):
            doc = inspect.getdoc(item) or ""
            assert "Parameters" in doc or not inspect.signature(item).parameters, name
            assert "Returns" in doc or "Examples" in doc, name
        elif inspect.isclass(item):
            assert inspect.getdoc(item), name


def test_core_imports_no_spreadsheet_library():
    """core/ never imports openpyxl or xlwings (design rule: addin/ adapts spreadsheets)."""
    for path in (ROOT / "core").rglob("*.py"):
        source = path.read_text(encoding="utf-8")
        assert not re.search(r"^\s*(import|from)\s+(openpyxl|xlwings)\b", source, re.M), path
