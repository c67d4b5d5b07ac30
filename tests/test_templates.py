"""Tests of groundstep.addin.templates and the committed workbook_templates/.

The committed files must be what the code generates (cells, formulas, array
ranges, defined names; not bytes, since openpyxl stamps the time). Every
STEP_ formula in a template is evaluated: its references are resolved from a
copy of the template whose input area is filled with an invented,
code-generated record, the Python worksheet function is called with values
shaped as Excel passes them, and the result is compared with the
``groundstep.core`` API called directly (the reference).
"""

from __future__ import annotations

import inspect
import os
import re
import shutil
import subprocess
from pathlib import Path

import numpy as np
import openpyxl
import pytest
from openpyxl.utils import range_boundaries
from openpyxl.worksheet.formula import ArrayFormula

from groundstep.addin import functions
from groundstep.addin.package import template as templates
from groundstep.addin.worksheet import cache as _cache
from groundstep.core import Record, __version__, elastic_spectrum, linear_response
from groundstep.core.units import ACCELERATION_UNITS, LENGTH_UNITS

COMMITTED = Path(__file__).resolve().parents[1] / "workbook_templates"
# Same core computation on the same samples; only unit divisions differ.
RTOL = 1e-12
DT = 0.01
UNIT = "cm/s2"  # the record is typed in cm/s2: results come back in cm/s2, cm and cm/s


def invented_record(n: int = 1000, seed: int = 11) -> np.ndarray:
    """Acceleration [cm/s2]: a seeded noise burst under a rise-and-decay envelope plus a 2.2 Hz pulse."""
    t = np.arange(n) * DT
    rng = np.random.default_rng(seed)
    envelope = (t / 2.0) * np.exp(1.0 - t / 2.0)
    return 150.0 * envelope * (rng.standard_normal(n) * 0.6 + np.sin(2 * np.pi * 2.2 * t))


SAMPLES = invented_record()
RECORD = Record(SAMPLES, DT, UNIT)


def cells_of(book):
    """Every cell's value, with array formulas as (range, text), and the defined names."""
    found = {}
    for sheet in book.worksheets:
        for row in sheet.iter_rows():
            for cell in row:
                value = cell.value
                if isinstance(value, ArrayFormula):
                    value = ("array", value.ref, value.text)
                if value is not None:
                    found[(sheet.title, cell.coordinate)] = value
    names = {name: defined.attr_text for name, defined in book.defined_names.items()}
    return book.sheetnames, found, names


@pytest.mark.parametrize("name", templates.TEMPLATE_FILES)
def test_committed_templates_match_the_generator(tmp_path, name):
    """Regenerated templates equal the committed ones cell by cell, formula by formula."""
    written = templates.write_templates(tmp_path)
    assert [path.name for path in written] == list(templates.TEMPLATE_FILES)
    assert not list(tmp_path.glob(".*.tmp"))  # no temporary file left behind
    fresh = cells_of(openpyxl.load_workbook(tmp_path / name))
    committed = cells_of(openpyxl.load_workbook(COMMITTED / name))
    assert fresh == committed, "run: python -m groundstep.addin.package.template workbook_templates"


def test_template_structure():
    """The xlwings.conf sheet names our module; every sheet shows the caution; input names exist."""
    book = openpyxl.load_workbook(COMMITTED / templates.TEMPLATE_FILES[0])
    conf = book["xlwings.conf"]
    assert (conf["A1"].value, conf["B1"].value, conf["A2"].value) == ("UDF Modules", "groundstep.addin.functions", None)
    for sheet in ("Input", "Record", "Spectrum", "Peaks", "Yielding"):
        assert any(cell.value == functions.CAUTION for row in book[sheet].iter_rows() for cell in row), sheet
    assert {name for name in book.defined_names} == set(templates.INPUT_NAMES)


def _formulas(book):
    """Every formula (array formulas with their range), spelled case-insensitively."""
    found = {}
    for where, value in cells_of(book)[1].items():
        if isinstance(value, tuple):
            found[where] = (value[1], value[2].lower().replace("true()", "true"))
        elif isinstance(value, str) and value.startswith("="):
            found[where] = (None, value.lower().replace("true()", "true"))
    return found


def test_template_survives_libreoffice(tmp_path):
    """Real spreadsheet software opens the template and keeps its sheets, names, formulas and array ranges."""
    soffice = shutil.which("soffice") or shutil.which("libreoffice")
    if soffice is None:
        if os.environ.get("GROUNDSTEP_REQUIRE_LIBREOFFICE") == "1":  # set by .ci/run: a skip would hide a gap
            pytest.fail("GROUNDSTEP_REQUIRE_LIBREOFFICE=1 but soffice is not installed (Debian: libreoffice-calc)")
        pytest.skip("LibreOffice (soffice) is not installed; install libreoffice-calc to run this check")
    name = templates.TEMPLATE_FILES[0]
    profile = (tmp_path / "profile").as_uri()  # a profile of its own, so parallel runs do not collide
    subprocess.run(
        [soffice, f"-env:UserInstallation={profile}", "--headless", "--convert-to", "xlsx",
         "--outdir", str(tmp_path / "out"), str(COMMITTED / name)],
        check=True, capture_output=True, timeout=180,
    )  # fmt: skip
    original = openpyxl.load_workbook(COMMITTED / name)
    saved = openpyxl.load_workbook(tmp_path / "out" / name)
    assert saved.sheetnames == original.sheetnames
    assert {n: d.attr_text for n, d in saved.defined_names.items()} == cells_of(original)[2]
    assert _formulas(saved) == _formulas(original)
    assert (saved["xlwings.conf"]["A1"].value, saved["xlwings.conf"]["B1"].value) == ("UDF Modules", templates.UDF_MODULE)


# ----------------------------------------------------------------------------- formula evaluation

_REFERENCE = re.compile(r"^(?:(?P<sheet>[A-Za-z_.][\w.]*)!)?(?P<range>\$?[A-Z]{1,3}\$?\d+(?::\$?[A-Z]{1,3}\$?\d+)?)$")


def filled_template():
    """The committed template with the invented record and settings typed in."""
    book = openpyxl.load_workbook(COMMITTED / templates.TEMPLATE_FILES[0])
    record = book["Record"]
    record["A2"] = "Station Q, component 1 [cm/s2]"  # a pasted heading: skipped
    for row, value in enumerate(SAMPLES, start=3):
        record.cell(row, 1, float(value))
    for name, value in (("input_dt", DT), ("input_unit", UNIT), ("input_record_name", "Q-1"), ("input_project", "Depot")):
        sheet, cell = templates.INPUT_NAMES[name].split("!")
        book[sheet][cell.replace("$", "")] = value
    return book


def split_arguments(text):
    """Top-level comma-separated arguments of a formula call (quotes respected)."""
    parts, depth, quoted, current = [], 0, False, ""
    for char in text:
        if char == '"':
            quoted = not quoted
        if not quoted and char in "()":
            depth += 1 if char == "(" else -1
        if char == "," and depth == 0 and not quoted:
            parts.append(current)
            current = ""
        else:
            current += char
    return [*parts, current]


def _as_excel(value):
    """Excel hands every number over as a double."""
    return float(value) if isinstance(value, (int, float)) and not isinstance(value, bool) else value


def cell_value(book, sheet, coordinate):
    return _as_excel(book[sheet][coordinate].value)


def resolve(book, sheet, text):
    """A formula argument as Excel passes it: a scalar, a list of row lists, or 'missing'."""
    text = text.strip()
    if text == "":
        return inspect.Parameter.empty
    if text.startswith('"'):
        return text[1:-1]
    if text in ("TRUE", "FALSE"):
        return text == "TRUE"
    try:
        return float(text)
    except ValueError:
        pass
    if text in templates.INPUT_NAMES:
        return resolve(book, sheet, templates.INPUT_NAMES[text])
    match = _REFERENCE.match(text)
    assert match, f"the test cannot read the formula argument {text!r}"
    read = book.__dict__.setdefault("_ranges_read", {})  # the record range is read once, not once per formula
    key = (match["sheet"] or sheet, match["range"].replace("$", ""))
    if key not in read:
        low_column, low_row, high_column, high_row = range_boundaries(key[1])
        block = book[key[0]].iter_rows(low_row, high_row, low_column, high_column, values_only=True)
        read[key] = [[_as_excel(value) for value in row] for row in block]
    rows = read[key]
    return rows[0][0] if len(rows) == 1 and len(rows[0]) == 1 else rows


def step_formulas(book):
    """(sheet, anchor, shape, function name, arguments text) of every STEP_ formula."""
    for sheet in book.worksheets:
        for row in sheet.iter_rows():
            for cell in row:
                value = cell.value
                shape = (1, 1)
                if isinstance(value, ArrayFormula):
                    low_column, low_row, high_column, high_row = range_boundaries(value.ref)
                    shape = (high_row - low_row + 1, high_column - low_column + 1)
                    value = value.text
                if isinstance(value, str) and value.startswith("=STEP_"):
                    match = re.fullmatch(r"=(STEP_[A-Z_]+)\((.*)\)", value)
                    assert match, value
                    yield sheet.title, cell.coordinate, shape, match[1], match[2]


def call(book, sheet, name, arguments):
    """Call the Python worksheet function as xlwings would: missing arguments take their defaults."""
    function = getattr(functions, name)
    parameters = list(inspect.signature(function).parameters.values())
    values = [resolve(book, sheet, text) for text in split_arguments(arguments)]
    assert len(values) <= len(parameters)
    values = [p.default if v is inspect.Parameter.empty else v for v, p in zip(values, parameters)]
    return function(*values), dict(zip((p.name for p in parameters), values))


def numbers_in(rows):
    return np.array([row[0] for row in rows if isinstance(row[0], float)])


_KIND = {"SD": ("sd", "peak_displacement", "length"), "SV": ("sv", "peak_velocity", "length"),
         "PSV": ("psv", "pseudo_velocity", "length"), "SA": ("sa", "peak_total_acceleration", "accel"),
         "PSA": ("psa", "pseudo_acceleration", "accel")}  # fmt: skip
# the record is in cm/s2: accelerations back in cm/s2, lengths in cm (core/_units.py MATCHING_LENGTH_UNIT)
_FACTOR = {"accel": ACCELERATION_UNITS["cm/s2"], "length": LENGTH_UNITS["cm"]}


def reference_value(name, args):
    """The core API's answer for one evaluated formula (the reference)."""
    if name == "STEP_PEAK":
        quantity = args["quantity"]
        response = linear_response(RECORD, args["period"], args["damping"], args["method"])
        if quantity == "SD time":
            return response.time_of_peak_displacement
        if quantity == "substeps":
            return response.substeps
        _, attribute, kind = _KIND[quantity]
        return getattr(response, attribute) / _FACTOR[kind]
    if name == "STEP_SPECTRUM":
        periods = numbers_in(args["periods"])
        dampings = np.array(args["dampings"][0])
        spectrum = elastic_spectrum(RECORD, periods, dampings, args["method"])
        attribute, _, kind = _KIND[args["quantity"]]
        body = getattr(spectrum, attribute).T / _FACTOR[kind]
        return [["corner", *dampings]] + [[t, *row] for t, row in zip(periods, body)]
    if name == "STEP_DUCTILITY":
        from groundstep.core import inelastic_response

        result = inelastic_response(
            RECORD, args["period"], args["damping"], reduction_factor=args["reduction_factor"],
            hardening=args["hardening"], method=args["method"],
        )  # fmt: skip
        return getattr(result, args["quantity"].replace(" ", "_"))
    if name == "STEP_DUCTILITY_SPECTRUM":
        from groundstep.core import ductility_spectrum

        periods = numbers_in(args["periods"])
        ductilities = np.array(args["ductilities"][0])
        spectrum = ductility_spectrum(
            RECORD, periods, ductilities, args["damping"], method=args["method"], hardening=args["hardening"]
        )
        body = np.asarray(spectrum.yield_coefficient).T
        return [["corner", *ductilities]] + [[t, *row] for t, row in zip(periods, body)]
    raise AssertionError(f"no reference for {name}")


@pytest.mark.filterwarnings("ignore::groundstep.core.SubstepWarning")  # the references sub-step too
def test_every_step_formula_in_the_template_equals_the_core():
    """Each STEP_ formula, evaluated on a filled-in copy, fits its cells and equals the core API."""
    _cache.clear_all()
    book = filled_template()
    seen = {}
    for sheet, anchor, shape, name, arguments in step_formulas(book):
        result, args = call(book, sheet, name, arguments)
        where = f"{sheet}!{anchor} {name}"
        if shape == (1, 1):
            assert not isinstance(result, str), f"{where}: {result}"
            np.testing.assert_allclose(result, reference_value(name, args), rtol=RTOL, err_msg=where)
        else:
            assert isinstance(result, list), f"{where}: {result}"
            assert (len(result), len(result[0])) == shape, f"{where}: spill does not fit its array range"
            if name == "STEP_ABOUT":
                about = dict(result)
                assert about["groundstep version"] == __version__ and about["caution"] == functions.CAUTION
                assert about["accelerations returned in"] == "cm/s2" and about["displacements returned in"] == "cm"
                period = cell_value(book, "Spectrum", "A8")
                substeps = linear_response(RECORD, period, 0.05).substeps
                assert about[f"sub-steps per record step at T = {period:g} s"] == substeps
            else:
                expected = reference_value(name, args)
                assert result[0][1:] == expected[0][1:], where
                np.testing.assert_allclose(np.array(result[1:]), np.array(expected[1:]), rtol=RTOL, err_msg=where)
        seen[name] = seen.get(name, 0) + 1
    # 72 peak cells, 3 spectrum blocks, 24 ductility cells, 1 ductility spectrum, 1 about block
    assert seen == {"STEP_ABOUT": 1, "STEP_SPECTRUM": 3, "STEP_PEAK": 72, "STEP_DUCTILITY": 24, "STEP_DUCTILITY_SPECTRUM": 1}


def test_empty_template_cells_explain_what_is_missing():
    """Opened before the record and settings are filled in, a STEP_ cell says what is missing."""
    book = openpyxl.load_workbook(COMMITTED / templates.TEMPLATE_FILES[0])
    sheet, anchor, _, name, arguments = next(f for f in step_formulas(book) if f[3] == "STEP_PEAK")
    result, _ = call(book, sheet, name, arguments)
    assert result == functions.ERROR_PREFIX + "the time step is blank"
