"""The Calc extension: generated parts, the argument edge, and real recalculation in headless LibreOffice.

The LibreOffice tests start one headless soffice on a throwaway profile
(module fixture), install the extension built from this checkout, type
``STEP_`` formulas as a user would (``;`` separators) and compare every cell
with the Python call on the same inputs. They skip without soffice, unless
GROUNDSTEP_REQUIRE_LIBREOFFICE=1 (CI), where they fail.
"""

from __future__ import annotations

import os
import re
import shutil
import site
import subprocess
import xml.etree.ElementTree as ET

import numpy as np
import openpyxl
import pytest

from groundstep.addin.calc import edge, extension
from groundstep.addin.calc.live import CalcWriter, calc_formula
from groundstep.addin.calc.template import CALC_TEMPLATE_FILE, build_calc_package, calc_formula_names
from groundstep.addin.cli import main
from groundstep.addin.common import ERROR_PREFIX
from groundstep.addin.functions import STEP_ABOUT, STEP_DUCTILITY, STEP_HISTORY, STEP_PEAK, STEP_SPECTRUM
from groundstep.addin.package.names import RECORD_ROWS
from groundstep.addin.result.layout import NAME_PREFIX
from groundstep.addin.worksheet.registry import FUNCTIONS
from groundstep.core.synthetic import synthetic_record

_OOR = "{http://openoffice.org/2001/registry}"


def test_uno_names_round_trip_without_underscores():
    """Every STEP_ name maps to a UNO method name without '_' and back (UNO names forbid '_')."""
    for name in FUNCTIONS:
        method = edge.uno_name(name)
        assert "_" not in method and edge.sheet_name(method) == name
    assert edge.uno_name("STEP_DUCTILITY_SPECTRUM") == "stepDuctilitySpectrum"


def test_idl_declares_every_function_with_its_arguments():
    """The generated IDL has one method per table entry, every argument `any`, tables as sequences."""
    text = extension.idl_text()
    for function in FUNCTIONS.values():
        match = re.search(rf"(\S.*?) {edge.uno_name(function.name)}\((.*?)\);", text)
        assert match, function.name
        assert match.group(1) == ("sequence< sequence< any > >" if function.spills else "any")
        assert match.group(2).count("[in] any ") == len(function.arguments)


def test_xcu_carries_names_and_help_of_the_table():
    """CalcAddIns.xcu gives each function its STEP_ display name, summary and every argument's help text."""
    root = ET.fromstring(extension.addins_xcu())
    nodes = root.find("node").find("node").find("node")
    assert len(nodes) == len(FUNCTIONS)
    for node, function in zip(nodes, FUNCTIONS.values()):
        props = {p.get(f"{_OOR}name"): p.find("value").text for p in node.findall("prop")}
        assert props["DisplayName"] == function.name and props["Description"] == function.summary
        parameters = node.find("node")
        assert [p.find("prop[@" + f"{_OOR}name='Description']").find("value").text for p in parameters] == [
            a.help for a in function.arguments
        ]


def test_every_argument_has_a_calc_rule():
    """ARGUMENT_RULES covers every argument of every function, so a new argument cannot skip the edge."""
    names = {a.name for f in FUNCTIONS.values() for a in f.arguments}
    assert names <= set(edge.ARGUMENT_RULES)


def test_edge_turns_calc_blanks_into_excel_blanks():
    """Omitted -> default, 0.0 in a text/flag/positive argument -> None (blank), range blanks stay ''."""
    peak = FUNCTIONS["STEP_PEAK"]
    record = (("",), (1.0,), (2.0,))
    got = edge.python_arguments(peak, (record, 0.01, "g", 0.5, None, 0.0, None, 0.0, 0.0))
    assert got == [record, 0.01, "g", 0.5, 0.05, None, "average", None, None]
    assert edge.python_arguments(peak, (record, 0.0, "g", 0.5))[1] is None  # a blank dt reads as blank


@pytest.mark.parametrize("position", [3, 4])
def test_edge_refuses_a_bare_zero_period_or_damping(position):
    """A bare 0 period or damping (blank cell or 0) is refused with the way to enter 0; '0' text is 0."""
    values = [((1.0,), (2.0,)), 0.01, "g", 0.5, 0.05]
    values[position] = 0.0
    result = edge.call("STEP_PEAK", values)
    assert result.startswith(ERROR_PREFIX) and "blank cell" in result and "'0" in result
    values[position] = "0"
    assert isinstance(edge.call("STEP_PEAK", values), float)


def test_excel_formulas_become_calc_api_formulas():
    """Sheet references and argument separators are rewritten; text inside quotes is kept."""
    assert calc_formula('=IF(Verification!$B$5>0,"a,b!",MAX(Record!A9:A20))') == (
        '=IF($Verification.$B$5>0;"a,b!";MAX($Record.A9:A20))'
    )
    assert calc_formula("='My sheet'!B2") == "=$'My sheet'.B2"


def test_calc_template_uses_the_names_calc_resolves():
    """Every STEP_ formula of the Calc template names the function by its programmatic name, longest first."""
    assert calc_formula_names("=STEP_DUCTILITY_SPECTRUM(A1)+STEP_DUCTILITY(B1)") == (
        f"={edge.formula_name('STEP_DUCTILITY_SPECTRUM')}(A1)+{edge.formula_name('STEP_DUCTILITY')}(B1)"
    )
    book = build_calc_package()
    texts = [getattr(c.value, "text", c.value) for ws in book.worksheets for row in ws.iter_rows() for c in row]
    formulas = [t for t in texts if isinstance(t, str) and t.startswith("=")]
    assert not any("STEP_" in t for t in formulas)
    assert sum("ORG.GROUNDSTEP.CALC.STEPFUNCTIONS." in t for t in formulas) > 90


# ----------------------------------------------------------------------------- real LibreOffice


def _soffice() -> str:
    found = shutil.which("soffice")
    try:
        if found:
            from groundstep.addin.calc.office import import_uno

            import_uno()
            extension.find_unoidl_write()
            return found
        reason = "LibreOffice (soffice) is not installed"
    except Exception as exc:  # noqa: BLE001 - missing python3-uno or libreoffice-dev
        reason = str(exc)
    if os.environ.get("GROUNDSTEP_REQUIRE_LIBREOFFICE") == "1":
        pytest.fail(f"GROUNDSTEP_REQUIRE_LIBREOFFICE=1 but {reason}")
    pytest.skip(f"{reason}; install libreoffice-calc python3-uno libreoffice-dev to run these checks")


@pytest.fixture(scope="module")
def office(tmp_path_factory):
    """One headless LibreOffice on a fresh profile with the extension of this checkout installed."""
    _soffice()
    from groundstep.addin.calc.office import Office

    folder = tmp_path_factory.mktemp("calc")
    with Office(folder / "profile") as running:
        # an extension with a Python macro installs only where LibreOffice has its Python script provider
        macro = _SCRIPT_PROVIDER in running.context.ServiceManager.getAvailableServiceNames()
        oxt = extension.build_extension(folder / "groundstep.oxt", site.getsitepackages(), macro=macro)
        running.add_extension(oxt)
        yield running


_RECORD = synthetic_record(4.0, 0.01, pga=0.25, unit="g", seed=5)
_SCRIPT_PROVIDER = "com.sun.star.script.provider.ScriptProviderForPython"


@pytest.fixture(scope="module")
def typed(office):
    """A new sheet: the record in A2:A401 (heading in A1), inputs in C, typed STEP_ formulas in E."""
    document = office.new_spreadsheet()
    sheet = document.Sheets.getByIndex(0)
    samples = [float(v) for v in _RECORD.accel_in("g")]
    sheet.getCellRangeByName(f"A1:A{len(samples) + 1}").setDataArray((("accel [g]",), *((v,) for v in samples)))
    sheet.getCellRangeByName("C1:C5").setDataArray(((0.01,), ("g",), (0.5,), (0.05,), (4.0,)))  # C6, C7 blank
    record = [["accel [g]"], *([v] for v in samples)]
    rng = f"A1:A{len(samples) + 1}"
    cases = {  # formula as typed -> the Python call with what Excel passes for the same cells
        "E1": (f'=STEP_PEAK({rng};C1;C2;C3;C4)', lambda: STEP_PEAK(record, 0.01, "g", 0.5, 0.05)),
        "E2": (f'=STEP_PEAK({rng};C1;C2;C3;C4;"SD";"exact")', lambda: STEP_PEAK(record, 0.01, "g", 0.5, 0.05, "SD", "exact")),
        "E3": (f'=STEP_PEAK({rng};C1;C2;1.5;0.02;"PSV";"linear";"m/s2";"cm")',
               lambda: STEP_PEAK(record, 0.01, "g", 1.5, 0.02, "PSV", "linear", "m/s2", "cm")),
        "E4": (f'=STEP_PEAK({rng};C1;C2;C3;C4;"SA";;C6;C7)', lambda: STEP_PEAK(record, 0.01, "g", 0.5, 0.05, "SA", "average", None, None)),
        "E5": (f'=STEP_PEAK({rng};C1;C2;C3)', lambda: STEP_PEAK(record, 0.01, "g", 0.5)),
        "E6": (f'=STEP_DUCTILITY({rng};C1;C2;C3;C4;;C5)', lambda: STEP_DUCTILITY(record, 0.01, "g", 0.5, 0.05, None, 4.0)),
        "E7": (f'=STEP_DUCTILITY({rng};C1;C2;C3;C4;0.2;;0.05;"residual displacement")',
               lambda: STEP_DUCTILITY(record, 0.01, "g", 0.5, 0.05, 0.2, None, 0.05, "residual displacement")),
        "E8": (f'=STEP_PEAK({rng};C1;"furlongs";C3;C4)', lambda: STEP_PEAK(record, 0.01, "furlongs", 0.5, 0.05)),
        "E9": (f'=STEP_PEAK({rng};C1;C2;C3;5)', lambda: STEP_PEAK(record, 0.01, "g", 0.5, 5)),
        "E10": (f'=STEP_PEAK({rng};C1;C2;C3;C7:C7)', lambda: STEP_PEAK(record, 0.01, "g", 0.5, None)),
        "E11": (f'=STEP_PEAK({rng};C1;C2;C3;"0")', lambda: STEP_PEAK(record, 0.01, "g", 0.5, 0.0)),
    }
    for address, (formula, _) in cases.items():
        sheet.getCellRangeByName(address).setFormula(formula)
    arrays = {
        "G1:I6": (f'=STEP_SPECTRUM({rng};C1;C2;K1:K5;L1:M1;"PSA";;;;TRUE())',
                  lambda: STEP_SPECTRUM(record, 0.01, "g", [[0.0], [0.1], [0.5], [1.0], [2.0]], [[0.02, 0.05]], "PSA",
                                        "average", None, None, True)),
        "O1:R401": (f"=STEP_HISTORY({rng};C1;C2;C3;C4)", lambda: STEP_HISTORY(record, 0.01, "g", 0.5, 0.05)),
        "T1:U13": ('=STEP_ABOUT(C1;C2;C3;"linear")', lambda: STEP_ABOUT(0.01, "g", 0.5, "linear")),
    }
    sheet.getCellRangeByName("K1:K5").setDataArray(((0.0,), (0.1,), (0.5,), (1.0,), (2.0,)))
    sheet.getCellRangeByName("L1:M1").setDataArray(((0.02, 0.05),))
    for address, (formula, _) in arrays.items():
        sheet.getCellRangeByName(address).setArrayFormula(formula)
    document.calculateAll()
    yield sheet, cases, arrays
    document.close(True)


def test_typed_formulas_equal_python_bit_for_bit(typed):
    """Every typed STEP_ cell (numbers, error texts, blank cells) equals the Python call exactly."""
    sheet, cases, _ = typed
    for address, (formula, python) in cases.items():
        cell = sheet.getCellRangeByName(address)
        expected = python()
        if isinstance(expected, str):
            assert cell.getString() == expected, (address, formula)
        else:  # both sides are the same float64 from the same code: equal, not just close
            assert cell.getValue() == expected and cell.getError() == 0, (address, formula, cell.getString())


def test_array_formulas_equal_python_bit_for_bit(typed):
    """Spilling STEP_ blocks typed as array formulas equal the Python tables cell by cell."""
    sheet, _, arrays = typed
    for address, (_formula, python) in arrays.items():
        got = sheet.getCellRangeByName(address).getDataArray()
        expected = python()
        assert len(got) == len(expected), address
        for row_got, row_expected in zip(got, expected):
            assert list(row_got[: len(row_expected)]) == [float(v) if not isinstance(v, str) else v for v in row_expected]


def test_blank_cells_behave_as_documented(typed):
    """Blank output-unit cells read as blank; a blank damping (as C7:C7) gives Excel's message; bare 0 is refused."""
    sheet, _, _ = typed
    sheet.getCellRangeByName("E20").setFormula("=STEP_PEAK(A1:A401;C1;C2;C3;C7)")  # C7 is blank
    sheet.getCellRangeByName("E21").setFormula("=STEP_PEAK(A1:A401;C1;C2;C7;C4)")
    refused = sheet.getCellRangeByName("E20").getString()
    assert refused.startswith(ERROR_PREFIX + "the damping is 0 or a blank cell"), refused
    assert sheet.getCellRangeByName("E21").getString().startswith(ERROR_PREFIX + "the period is 0 or a blank cell")
    assert sheet.getCellRangeByName("E10").getString() == ERROR_PREFIX + "the damping is blank"


def test_calc_resolves_the_name_it_writes(office, tmp_path):
    """Calc saves an add-in formula under its programmatic name in xlsx and ods, the name the template uses."""
    document = office.new_spreadsheet()
    sheet = document.Sheets.getByIndex(0)
    sheet.getCellRangeByName("A1:A3").setDataArray(((0.1,), (-0.2,), (0.05,)))
    sheet.getCellRangeByName("B1").setFormula('=STEP_PEAK(A1:A3;0.01;"g";0.3;0.05)')
    office.save(document, tmp_path / "saved.xlsx", "Calc Office Open XML")
    document.close(True)
    written = openpyxl.load_workbook(tmp_path / "saved.xlsx").active["B1"].value
    assert written.startswith("=" + edge.formula_name("STEP_PEAK") + "(")


def test_calc_template_opens_with_working_formulas(office, tmp_path):
    """The Calc template with a record pasted: every STEP_ cell calculates and equals the Python call."""
    assert main(["templates", str(tmp_path)]) == 0
    book = openpyxl.load_workbook(tmp_path / CALC_TEMPLATE_FILE)
    samples = [float(v) for v in _RECORD.accel_in("g")]
    for row, value in enumerate(samples, start=2):
        book["Record"].cell(row, 1, value)
    book["Input"]["B15"], book["Input"]["B16"] = 0.01, "g"
    book.save(tmp_path / "filled.xlsx")
    document = office.open(tmp_path / "filled.xlsx")
    document.calculateAll()
    peaks = document.Sheets.getByName("Peaks")
    # the Python call gets the cells as Calc holds them: LibreOffice's reading of 17-digit text in the
    # xlsx can differ from Python's in the last bit, which the results then carry
    # the whole named range (the template's STEP_ cells get it clipped to the used rows: same answer)
    held = document.Sheets.getByName("Record").getCellRangeByName(f"A1:A{RECORD_ROWS + 1}").getDataArray()
    record = [[v if v != "" else None] for (v,) in held]
    compared = 0
    quantities = ("SD", "PSV", "PSA", "SA", "SD time", "substeps")
    for row in range(7, 19):
        period, damping = peaks.getCellByPosition(0, row - 1).getValue(), peaks.getCellByPosition(1, row - 1).getValue()
        for offset, quantity in enumerate(quantities):
            got = peaks.getCellByPosition(2 + offset, row - 1).getValue()
            assert got == STEP_PEAK(record, 0.01, "g", period, damping, quantity, "average"), (row, quantity)
            compared += 1
        got = peaks.getCellByPosition(9, row - 1).getValue()
        assert got == STEP_DUCTILITY(record, 0.01, "g", period, damping, None, 4.0, 0, "ductility", "average")
        compared += 1
    document.close(True)
    assert compared == 84


def test_calc_writer_fills_a_live_document(office):
    """The demo's result sheets written over UNO by CalcWriter recalculate in Calc to a passing check."""
    from groundstep.addin.cli.demo import DEMO_STRUCTURES
    from groundstep.addin.result.content import Oscillator, ReportSettings, build_report
    from groundstep.addin.result.render import render

    report = build_report(_RECORD, ReportSettings(oscillators=tuple(Oscillator(*s) for s in DEMO_STRUCTURES[:2])))
    document = office.new_spreadsheet()
    titles = {sheet.name: sheet.title for sheet in report.layout.sheets}
    render(report.layout, report.content, CalcWriter(document, titles))
    document.calculateAll()
    names = document.NamedRanges
    overall = names.getByName(NAME_PREFIX + "verification_overall").getReferredCells().getCellByPosition(0, 0)
    assert overall.getString() == "pass"
    document.close(True)


def test_gnumeric_and_libreoffice_agree_with_python(tmp_path):
    """The demo workbook recalculated by Gnumeric and by LibreOffice: formula peaks equal Python's to 1e-12."""
    _soffice()
    if shutil.which("ssconvert") is None:
        if os.environ.get("GROUNDSTEP_REQUIRE_LIBREOFFICE") == "1":
            pytest.fail("GROUNDSTEP_REQUIRE_LIBREOFFICE=1 but ssconvert (Debian: gnumeric) is missing")
        pytest.skip("Gnumeric's ssconvert is not installed (Debian: gnumeric)")
    from test_libreoffice import _name, recalculate

    assert main(["demo", str(tmp_path / "demo.xlsx")]) == 0
    by_libreoffice = openpyxl.load_workbook(recalculate(tmp_path / "demo.xlsx", tmp_path / "lo"), data_only=True)
    gnumeric = tmp_path / "gnumeric.xlsx"
    done = subprocess.run(["ssconvert", "--recalc", str(tmp_path / "demo.xlsx"), str(gnumeric)],
                          capture_output=True, text=True, timeout=300)  # fmt: skip
    assert done.returncode == 0, done.stderr
    by_gnumeric = openpyxl.load_workbook(gnumeric, data_only=True)
    for quantity in "uvt":
        python = _name(by_libreoffice, f"python_{quantity}").value
        for book in (by_libreoffice, by_gnumeric):
            # the brief's 1e-12: both run the same Newmark (1959) recurrence in float64 over 2000 steps
            np.testing.assert_allclose(_name(book, f"formula_{quantity}").value, python, rtol=1e-12)
    steps_lo = [r[0].value for r in _name(by_libreoffice, "verification_steps_u")]
    steps_gn = [r[0].value for r in _name(by_gnumeric, "verification_steps_u")]
    peak = max(abs(v) for v in steps_lo)
    # column by column: LibreOffice snaps nearly-equal subtractions to 0, Gnumeric does not, so compare
    # against the peak (1e-12 of it) rather than each value's own size
    np.testing.assert_allclose(steps_gn, steps_lo, rtol=0, atol=1e-12 * peak)


def test_excel_cells_turns_calc_blanks_into_none():
    """Calc's getDataArray rows become xlwings' 2-D lists: '' -> None, numbers and text kept."""
    from groundstep.addin.calc.live import excel_cells

    assert excel_cells((("", 0.0), ("g", 1.5))) == [[None, 0.0], ["g", 1.5]]  # 0.0 is a value, not a blank


def _filled_template(tmp_path):
    book = build_calc_package()
    for row, value in enumerate((float(v) for v in _RECORD.accel_in("g")), start=2):
        book["Record"].cell(row, 1, value)
    book["Input"]["B15"], book["Input"]["B16"] = 0.01, "g"
    book.save(tmp_path / "filled.xlsx")
    return tmp_path / "filled.xlsx"


def test_fill_document_equals_the_file_writer(office, tmp_path):
    """The Calc template filled over UNO, saved as xlsx: groundstep verify matches every checked block."""
    from groundstep.addin.calc.live import fill_document, named_cells
    from groundstep.addin.package.inputs import read_input_workbook
    from groundstep.addin.result.content import build_report
    from groundstep.addin.result.render import CellRecorder, block_cells, render
    from groundstep.addin.result.verify import verify_workbook

    source = _filled_template(tmp_path)
    document = office.open(source)
    record_cells = named_cells(document, "input_record")
    assert len(record_cells) == _RECORD.n + 1  # clipped to the used rows of the 200,001-row range
    result = office.new_spreadsheet()
    report = fill_document(document, target=result)
    result.calculateAll()
    office.save(result, tmp_path / "result.xlsx", "Calc Office Open XML")
    document.close(True)
    result.close(True)
    checks = verify_workbook(tmp_path / "result.xlsx")
    assert all(check.ok for check in checks), [c.line() for c in checks if not c.ok]
    assert sum(check.cells for check in checks) > 5000 and checks[-1].message.endswith("'pass'")
    # the openpyxl route (groundstep fill's reader and the file writer's layout) on the same file
    record, settings, _ = read_input_workbook(source)
    by_file, by_calc = CellRecorder(), CellRecorder()
    expected_report = build_report(record, settings)
    render(expected_report.layout, expected_report.content, by_file)
    render(report.layout, report.content, by_calc)
    compared = 0
    for sheet in report.layout.sheets:
        for block in (b for b in sheet.blocks if getattr(b, "checked", False)):
            for row, column in block_cells(sheet, block):
                got, expected = by_calc.cells.get((sheet.name, row, column)), by_file.cells.get((sheet.name, row, column))
                if isinstance(expected, float):
                    # verify's 1e-9 relative: LibreOffice's parse of the 17-digit record text may differ from
                    # Python's in the last bit; no absolute floor (abs=1e-300 only lets exact zeros match)
                    assert got == pytest.approx(expected, rel=1e-9, abs=1e-300), (sheet.name, row, column)
                elif not (sheet.name == "Audit" or block.key.startswith("record")):  # source label and title differ
                    assert got == expected, (sheet.name, row, column)
                compared += 1
    assert compared > 5000


def test_fill_document_refuses_a_template_sheet_of_a_result_name(office, tmp_path):
    """Filling the template into itself stops at its own Record sheet instead of overwriting it."""
    from groundstep.addin.calc.live import fill_document

    document = office.open(_filled_template(tmp_path))
    with pytest.raises(ValueError, match="already has a sheet 'Record' that groundstep did not write"):
        fill_document(document)
    document.close(True)


def test_fill_document_names_a_blank_time_step(office, tmp_path):
    """A blank time-step cell in the Calc document gives the file reader's message, not a 0 s time step."""
    from groundstep.addin.calc.live import fill_document
    from groundstep.addin.package.inputs import InputError

    document = office.open(_filled_template(tmp_path))
    document.Sheets.getByName("Input").getCellRangeByName("B15").setString("")
    with pytest.raises(InputError, match="time-step cell"):
        fill_document(document, target=office.new_spreadsheet())
    document.close(True)


def test_cli_fill_stores_a_copy_and_leaves_the_input(tmp_path):
    """`calc-extension fill` writes an .ods and an .xlsx result; the input's bytes are unchanged."""
    _soffice()
    source = _filled_template(tmp_path)
    before = source.read_bytes()
    assert main(["calc-extension", "fill", str(source), "--out", str(tmp_path / "result.xlsx")]) == 0
    assert source.read_bytes() == before
    assert main(["verify", str(tmp_path / "result.xlsx")]) == 0
    assert main(["calc-extension", "fill", str(source), "--out", str(tmp_path / "result.csv")]) == 2


def test_calc_template_clipped_record_gives_the_whole_range_answer(office, tmp_path):
    """A stray text cell below the record, after blank rows: the clipped STEP_ cell gives the whole range's error.

    The template hands the record over as one row, so the message names the cell as a column
    (calc.template.RECORD_POSITION, which the Record sheet's note states).
    """
    from groundstep.addin.calc.template import RECORD_POSITION, USED_ROWS_CELL

    document = office.open(_filled_template(tmp_path))
    record_sheet = document.Sheets.getByName("Record")
    stray_row = _RECORD.n + 10  # rows n+2 .. n+9 stay blank
    record_sheet.getCellRangeByName(f"A{stray_row}").setString("end")
    document.calculateAll()
    assert record_sheet.getCellRangeByName(USED_ROWS_CELL).getValue() == stray_row
    held = record_sheet.getCellRangeByName(f"A1:A{RECORD_ROWS + 1}").getDataArray()
    record = [[v if v != "" else None] for (v,) in held]
    peaks = document.Sheets.getByName("Peaks")
    period, damping = peaks.getCellByPosition(0, 6).getValue(), peaks.getCellByPosition(1, 6).getValue()
    expected = STEP_PEAK(record, 0.01, "g", period, damping, "SD", "average")
    assert expected == f"{ERROR_PREFIX}row {_RECORD.n + 2} of the acceleration range is blank"
    assert peaks.getCellByPosition(2, 6).getString() == expected.replace("row", "column", 1)
    assert record_sheet.getCellRangeByName("B1").getString().endswith(RECORD_POSITION)
    document.close(True)


def test_calc_template_passes_an_error_in_the_record_on(office, tmp_path):
    """An error value in a record cell (=NA(), =1/0) reaches the template's STEP_ cells as that error."""
    document = office.open(_filled_template(tmp_path))
    record_sheet = document.Sheets.getByName("Record")
    peaks = document.Sheets.getByName("Peaks")
    # LibreOffice's error codes (formula/errorcodes.hxx): 32767 is #N/A, 532 is #DIV/0!
    for formula, code in (("=NA()", 32767), ("=1/0", 532)):
        record_sheet.getCellRangeByName("A300").setFormula(formula)
        document.calculateAll()
        for column in (2, 9):  # a STEP_PEAK and a STEP_DUCTILITY cell
            assert peaks.getCellByPosition(column, 6).getError() == code, (formula, column)
    record_sheet.getCellRangeByName("A300").setValue(0.01)
    document.calculateAll()
    assert peaks.getCellByPosition(2, 6).getError() == 0
    document.close(True)


# ----------------------------------------------------------------------------- the fill_results macro


def test_extension_ships_the_fill_macro():
    """The manifest names the macro folder as a framework script; the macro file exports fill_results."""
    from groundstep.addin.calc import macro

    root = ET.fromstring(extension.manifest_xml())
    entries = {e.get("{http://openoffice.org/2001/manifest}full-path"): e.get("{http://openoffice.org/2001/manifest}media-type")
               for e in root}  # fmt: skip
    assert entries[f"{macro.MACRO_FOLDER}/"] == "application/vnd.sun.star.framework-script"
    namespace: dict = {}
    exec(compile(macro.macro_source(["/nowhere"]), macro.MACRO_FILE, "exec"), namespace)  # defines, runs nothing
    assert [f.__name__ for f in namespace["g_exportedScripts"]] == [macro.MACRO_NAME]
    assert namespace["SITE_FOLDERS"] == ["/nowhere"]
    # the scripting framework's URI syntax: package|folder|file$function (LibreOffice's pythonscript.py)
    assert macro.script_uri() == (
        "vnd.sun.star.script:groundstep.oxt|python|groundstep_fill.py$fill_results"
        "?language=Python&location=user:uno_packages"
    )


class _ScriptContext:
    """What the script provider hands a macro as XSCRIPTCONTEXT: the document and the desktop."""

    def __init__(self, document, desktop):
        self.document, self.desktop, self.opened = document, desktop, []

    def getDocument(self):  # noqa: N802 - the UNO method name
        return self.document

    def getDesktop(self):  # noqa: N802 - the UNO method name
        return _RecordingDesktop(self.desktop, self.opened)


class _RecordingDesktop:
    def __init__(self, desktop, opened):
        self.desktop, self.opened = desktop, opened

    def loadComponentFromURL(self, *args):  # noqa: N802 - the UNO method name
        from groundstep.addin.calc.office import property_values

        url, frame, flags, _ = args
        component = self.desktop.loadComponentFromURL(url, frame, flags, property_values(Hidden=True))
        self.opened.append(component)
        return component


def _run_macro(document, desktop):
    """The shipped macro file run as the script provider runs it: its own module, XSCRIPTCONTEXT injected."""
    from groundstep.addin.calc import macro

    context = _ScriptContext(document, desktop)
    namespace = {"XSCRIPTCONTEXT": context}
    exec(compile(macro.macro_source(site.getsitepackages()), macro.MACRO_FILE, "exec"), namespace)
    return namespace[macro.MACRO_NAME](), context.opened


def test_fill_macro_fills_a_new_document_that_verifies(office, tmp_path):
    """fill_results on the open filled template: a new document with the result sheets; verify passes."""
    from groundstep.addin.result.verify import verify_workbook

    document = office.open(_filled_template(tmp_path))
    message, opened = _run_macro(document, office.desktop)
    assert len(opened) == 1 and message == f"filled {opened[0].Sheets.getCount()} result sheets into a new document"
    assert not document.Sheets.hasByName("Verification")  # the template itself is left as it was
    office.save(opened[0], tmp_path / "result.xlsx", "Calc Office Open XML")
    opened[0].close(True)
    document.close(True)
    checks = verify_workbook(tmp_path / "result.xlsx")
    assert all(check.ok for check in checks), [c.line() for c in checks if not c.ok]
    assert checks[-1].message.endswith("'pass'")


def test_fill_macro_names_a_bad_cell_and_leaves_no_document(office, tmp_path):
    """A blank time-step cell: the macro returns the reader's message and closes the new document."""
    from groundstep.addin.calc.macro import REFUSAL

    document = office.open(_filled_template(tmp_path))
    document.Sheets.getByName("Input").getCellRangeByName("B15").setString("")
    before = _component_count(office.desktop)
    message, opened = _run_macro(document, office.desktop)
    assert message.startswith(REFUSAL) and "time-step cell" in message, message
    assert len(opened) == 1 and _component_count(office.desktop) == before  # opened, then closed again
    document.close(True)


def test_fill_macro_runs_through_the_script_provider(office, tmp_path):
    """The installed extension's macro, invoked by its script URI from the document's script provider."""
    from groundstep.addin.calc.macro import script_uri

    if _SCRIPT_PROVIDER not in office.context.ServiceManager.getAvailableServiceNames():
        pytest.skip("LibreOffice's Python script provider is not installed (Debian: libreoffice-script-provider-python)")
    document = office.open(_filled_template(tmp_path))
    before = _component_count(office.desktop)
    script = document.getScriptProvider().getScript(script_uri())
    result, _, _ = script.invoke((), (), ())
    assert result.startswith("filled ") and result.endswith(" result sheets into a new document"), result
    assert _component_count(office.desktop) == before + 1
    document.close(True)


def _component_count(desktop) -> int:
    components = desktop.getComponents().createEnumeration()
    count = 0
    while components.hasMoreElements():
        components.nextElement()
        count += 1
    return count


def test_install_into_a_profile_says_whether_the_macro_came_along(tmp_path):
    """install --profile: the extension is installed; without LibreOffice's script provider, minus the macro, said so."""
    _soffice()
    from groundstep.addin.calc import install
    from groundstep.addin.calc.office import Office

    said = install.install(profile=tmp_path / "profile")
    with Office(tmp_path / "profile") as running:
        assert extension.EXTENSION_ID in running.extensions()
        provider = _SCRIPT_PROVIDER in running.context.ServiceManager.getAvailableServiceNames()
    assert said.startswith(f"installed {extension.EXTENSION_ID} into the profile")
    assert ("without the fill_results macro" in said) is not provider, said
    if not provider:
        assert "libreoffice-script-provider-python" in said
