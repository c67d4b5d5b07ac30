"""Benchmark: the Calc template recalculated in headless LibreOffice with the groundstep extension.

The Calc template (``groundstep templates``) is filled with an invented
2,000-sample record and opened in a private headless LibreOffice with the
extension of this checkout installed, in one run as shipped (the record
column down to its last non-blank row handed over as one row,
``calc.template.CALC_RECORD_ARGUMENT``) and with the record argument as
the plain column (``CALC_RECORD``, the template before). ``--whole`` adds
the template before that: every STEP_ cell given the whole record column
(``package.names.RECORD_ROWS`` + 1 rows; about 15 s a recalculation).

* first recalc:     ``calculateAll`` right after opening (caches empty on the
                    first repeat only: the component's caches live in soffice)
* unchanged recalc: ``calculateAll`` again (every call a cache hit): the
                    per-call cost of the extension
* edit dt:          the time step cell set to a value no repeat used before,
                    then ``calculate`` (the dirty cells, what auto-calculation
                    recalculates after an edit; both timed): every STEP_ result
                    recomputed. The target figure.
* edit dt + calculateAll: the same edit, then every cell recalculated (the
                    figure before; it adds an unchanged recalculation)
* edit a sample:    one record sample set to a new value, then ``calculate``
                    (the used-rows cell and every STEP_ cell recomputed)
* Python, direct:   the same calls (same cell values) made from Python,
                    cold cache and warm cache

Figures are the best of several runs, measured in this run. Run with
``python benchmarks/bench_calc.py [REPEATS] [--whole]`` (needs soffice,
python3-uno and unoidl-write).
"""

from __future__ import annotations

import itertools
import site
import sys
import tempfile
import time
from pathlib import Path

from openpyxl.worksheet.formula import ArrayFormula

from groundstep.addin.calc.extension import build_extension
from groundstep.addin.calc.office import Office
from groundstep.addin.calc.template import CALC_RECORD, CALC_RECORD_ARGUMENT, build_calc_package
from groundstep.addin.functions import STEP_DUCTILITY, STEP_DUCTILITY_SPECTRUM, STEP_PEAK, STEP_SPECTRUM
from groundstep.addin.package.names import RECORD_ROWS
from groundstep.addin.worksheet import cache
from groundstep.core.synthetic import synthetic_record

REPEATS = 3
_QUANTITIES = ("SD", "PSV", "PSA", "SA", "SD time", "substeps")


def _python_calls(record, dt, periods, grids):
    spectrum_periods, dampings, yield_periods, ductilities = grids
    for quantity in ("PSA", "SD", "PSV"):
        STEP_SPECTRUM(record, dt, "g", spectrum_periods, dampings, quantity, "average", None, None, True)
    STEP_DUCTILITY_SPECTRUM(record, dt, "g", yield_periods, ductilities, 0.05, 0.0, "yield coefficient", "average",
                            None, None, True)  # fmt: skip
    for period, damping in periods:
        for quantity in _QUANTITIES:
            STEP_PEAK(record, dt, "g", period, damping, quantity, "average", None, None)
        for quantity in ("ductility", "yield coefficient"):
            STEP_DUCTILITY(record, dt, "g", period, damping, None, 4.0, 0.0, quantity, "average", None, None)
    return len(periods) * 8 + 4


#: Record argument of each variant measured: as shipped, the plain used-rows column, the whole column.
VARIANTS = {"row": CALC_RECORD_ARGUMENT, "column": CALC_RECORD, "whole": "input_record"}
_LABELS = {"row": "used rows as one row (now)", "column": "used rows as a column", "whole": "whole column"}


def _filled(work: Path, record, variant: str) -> Path:
    """The Calc template with `record` pasted and the record argument of `variant` (`VARIANTS`)."""
    book = build_calc_package()
    if variant != "row":
        for sheet in book.worksheets:
            for row in sheet.iter_rows():
                for cell in row:
                    if isinstance(cell.value, ArrayFormula):
                        text = cell.value.text.replace(CALC_RECORD_ARGUMENT, VARIANTS[variant])
                        cell.value = ArrayFormula(cell.value.ref, text)
                    elif isinstance(cell.value, str) and CALC_RECORD_ARGUMENT in cell.value:
                        cell.value = cell.value.replace(CALC_RECORD_ARGUMENT, VARIANTS[variant])
    for row, value in enumerate(record.accel_in("g"), start=2):
        book["Record"].cell(row, 1, float(value))
    book["Input"]["B15"], book["Input"]["B16"] = 0.01, "g"
    path = work / f"{variant}.xlsx"
    book.save(path)
    return path


def _calc_figures(office: Office, path: Path, steps, samples) -> dict[str, float]:
    """One open of `path`: first, unchanged, edits of the time step and of one record sample [s]."""
    figures: dict[str, float] = {}
    document = office.open(path)
    inputs, record = document.Sheets.getByName("Input"), document.Sheets.getByName("Record")
    result = document.Sheets.getByName("Peaks").getCellRangeByName("C7")  # an SD cell

    def timed(name: str, edit=None, recalc=document.calculate) -> None:
        before = result.getValue()
        started = time.perf_counter()  # with auto-calculation on, the edit itself may recalculate
        if edit is not None:
            edit()
        recalc()
        figures[name] = min(figures.get(name, 1e9), time.perf_counter() - started)
        if edit is not None and result.getValue() == before:
            raise RuntimeError(f"{name}: the STEP_ cells did not recalculate")

    timed("first", recalc=document.calculateAll)  # the component's caches live in soffice: cold on the first open
    timed("unchanged", recalc=document.calculateAll)  # every call a cache hit
    for _ in range(2):  # a time step, a sample never seen before: no cached result
        timed("edit", lambda: inputs.getCellRangeByName("B15").setValue(next(steps)))
        timed("edit, full", lambda: inputs.getCellRangeByName("B15").setValue(next(steps)), document.calculateAll)
        timed("sample", lambda: record.getCellRangeByName("A300").setValue(next(samples)))
    document.close(True)
    return figures


def main() -> None:
    """Print first, unchanged and edit-and-recalc times in Calc beside the direct Python calls."""
    numbers = [a for a in sys.argv[1:] if a.isdigit()]
    repeats = int(numbers[0]) if numbers else REPEATS
    variants = ("row", "column", "whole") if "--whole" in sys.argv else ("row", "column")
    work = Path(tempfile.mkdtemp(prefix="gs-bench-calc-"))
    record = synthetic_record(20.0, 0.01, pga=0.3, unit="g", seed=11)
    paths = {variant: _filled(work, record, variant) for variant in variants}
    oxt = build_extension(work / "groundstep.oxt", site.getsitepackages(), macro=False)  # the functions only
    steps = (0.0101 + 1e-6 * k for k in itertools.count())
    samples = (0.05 + 1e-4 * k for k in itertools.count())
    with Office(work / "profile") as office:
        office.add_extension(oxt)
        figures: dict[str, dict[str, float]] = {}
        for _ in range(repeats):  # variants alternate, so a busy spell of the machine hits both
            for variant, path in paths.items():
                once = _calc_figures(office, path, steps, samples)
                figures[variant] = {k: min(v, figures.get(variant, {}).get(k, 1e9)) for k, v in once.items()}
        document = office.open(paths["row"])
        held = document.Sheets.getByName("Record").getCellRangeByName(f"A1:A{RECORD_ROWS + 1}").getDataArray()
        peaks = document.Sheets.getByName("Peaks").getCellRangeByName("A7:B18").getDataArray()
        grids = tuple(
            document.Sheets.getByName(sheet).getCellRangeByName(cells).getDataArray()
            for sheet, cells in (("Spectrum", "A7:A47"), ("Spectrum", "B5:D5"), ("Yielding", "A7:A26"),
                                 ("Yielding", "B5:E5"))
        )  # fmt: skip
        document.close(True)
    cells = tuple(held)  # the whole range as Calc hands it to the component
    used = tuple(held[: record.n + 1])  # heading and samples: what the clipped template hands it
    direct: dict[str, float] = {}
    for _ in range(repeats):
        for key, given in (("", cells), ("used ", used)):
            cache.clear_all()
            started = time.perf_counter()
            calls = _python_calls(given, 0.0103, peaks, grids)
            direct[key + "cold"] = min(direct.get(key + "cold", 1e9), time.perf_counter() - started)
            started = time.perf_counter()
            _python_calls(given, 0.0103, peaks, grids)
            direct[key + "warm"] = min(direct.get(key + "warm", 1e9), time.perf_counter() - started)
    print(f"Calc template, {record.n} samples, record column of {RECORD_ROWS + 1:,} rows; best of {repeats}")
    for variant in variants:
        f = figures[variant]
        print(f"  {_LABELS[variant]:27s} first {f['first']:7.3f} s  unchanged {f['unchanged']:7.3f} s  "
              f"edit dt {f['edit']:7.3f} s  edit dt + calculateAll {f['edit, full']:7.3f} s  "
              f"edit a sample {f['sample']:7.3f} s")  # fmt: skip
    for key, label in (("", "the whole range"), ("used ", "the used rows")):
        print(f"  Python, the same {calls} calls on {label}, cold {direct[key + 'cold']:8.3f} s, warm "
              f"{direct[key + 'warm']:8.4f} s ({direct[key + 'warm'] / calls * 1e3:.3f} ms a call)")  # fmt: skip
    reference = direct["used cold"]
    for variant in variants:
        f = figures[variant]
        print(f"  {_LABELS[variant]} / Python cold on the used rows: edit dt {f['edit'] / reference:.2f}, "
              f"edit dt + calculateAll {f['edit, full'] / reference:.2f}, edit a sample {f['sample'] / reference:.2f}")
    print(f"  edit dt, column / row: {figures['column']['edit'] / figures['row']['edit']:.2f}x")


if __name__ == "__main__":
    main()
