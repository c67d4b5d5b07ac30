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

#: Every public module of the core (no leading underscore): each keeps runnable examples.
CORE_MODULES = sorted(
    f"groundstep.core.{path.stem}" for path in (ROOT / "core").glob("*.py") if not path.stem.startswith("_")
)
#: Public modules whose names are plain tables or result classes without an Examples section.
_NO_EXAMPLES = {"groundstep.core.defaults", "groundstep.core.results", "groundstep.core.inelastic_results"}
#: The adapter subpackages in import order: each may import only those after it (and core's public modules).
ADAPTER_LAYERS = ("cli", "survey", "calc", "live", "functions", "package", "result", "worksheet", "common")


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
    if name not in _NO_EXAMPLES:
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


def _imports(path: Path) -> list[str]:
    """Absolute names of the groundstep modules a file imports (relative imports resolved)."""
    import ast

    package = ["groundstep", path.parent.name if path.parent.name != "addin" else "addin"]
    if path.parent.parent.name == "addin":
        package = ["groundstep", "addin", path.parent.name]
    elif path.parent.name == "core":
        package = ["groundstep", "core"]
    found = []
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.ImportFrom):
            if node.level:
                base = package[: len(package) - node.level + 1]
                found.append(".".join(base + ([node.module] if node.module else [])))
            elif node.module:
                found.append(node.module)
        elif isinstance(node, ast.Import):
            found.extend(alias.name for alias in node.names)
    return [name for name in found if name.startswith("groundstep")]


def test_nothing_outside_core_imports_private_core_modules():
    """addin/ reaches the core through its public modules only (benchmarks may time private kernels)."""
    offenders = []
    for folder in ("addin",):
        for path in (ROOT / folder).rglob("*.py"):
            offenders += [f"{path.relative_to(ROOT)}: {name}" for name in _imports(path) if "groundstep.core._" in name]
    assert offenders == []


def test_adapter_layers_import_one_way():
    """Each addin subpackage imports only the layers below it (cli -> ... -> worksheet -> common): no cycles."""
    rank = {name: index for index, name in enumerate(ADAPTER_LAYERS)}
    wrong = []
    for path in (ROOT / "addin").rglob("*.py"):
        relative = path.relative_to(ROOT / "addin").parts
        layer = relative[0].removesuffix(".py")
        if layer not in rank:
            continue
        for name in _imports(path):
            parts = name.split(".")
            if parts[:2] != ["groundstep", "addin"] or len(parts) < 3:
                continue
            target = parts[2]
            if target in rank and target != layer and rank[target] < rank[layer]:
                wrong.append(f"{'/'.join(relative)} imports {name}")
    assert wrong == []


def test_core_public_names_are_one_list():
    """groundstep.core's __all__ is alphabetical and names exactly what its lazy loader knows."""
    core = importlib.import_module("groundstep.core")
    assert core.__all__ == sorted(core.__all__)
    assert set(core.__all__) == set(core._SOURCES) | {"__version__"}
    assert all(getattr(core, name) is not None for name in core.__all__)
