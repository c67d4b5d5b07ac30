"""Benchmark: the Calc template recalculated in headless LibreOffice with the groundstep extension.

The Calc template (``groundstep templates``) is filled with an invented
2,000-sample record and opened in a private headless LibreOffice with the
extension of this checkout installed. Every STEP_ cell receives the whole
record range (``package.names.RECORD_ROWS`` + 1 rows), as Calc passes it.

* first recalc:     ``calculateAll`` right after opening (caches empty)
* unchanged recalc: ``calculateAll`` again (every call a cache hit): the
                    per-call cost of the extension
* edit and recalc:  the time step cell changed, then ``calculateAll``
                    (every result recomputed)
* Python, direct:   the same calls (same cell values) made from Python,
                    cold cache and warm cache

Figures are the best of several runs, measured in this run. Run with
``python benchmarks/bench_calc.py`` (needs soffice, python3-uno and
unoidl-write).
"""

from __future__ import annotations

import site
import tempfile
import time
from pathlib import Path

from groundstep.addin.calc.extension import build_extension
from groundstep.addin.calc.office import Office
from groundstep.addin.calc.template import build_calc_package
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


def main() -> None:
    """Print first, unchanged and edit-and-recalc times in Calc beside the direct Python calls."""
    work = Path(tempfile.mkdtemp(prefix="gs-bench-calc-"))
    record = synthetic_record(20.0, 0.01, pga=0.3, unit="g", seed=11)
    book = build_calc_package()
    for row, value in enumerate(record.accel_in("g"), start=2):
        book["Record"].cell(row, 1, float(value))
    book["Input"]["B15"], book["Input"]["B16"] = 0.01, "g"
    book.save(work / "filled.xlsx")
    oxt = build_extension(work / "groundstep.oxt", site.getsitepackages())
    with Office(work / "profile") as office:
        office.add_extension(oxt)
        figures: dict[str, float] = {}
        for _ in range(REPEATS):
            document = office.open(work / "filled.xlsx")
            started = time.perf_counter()
            document.calculateAll()  # the component's caches live in soffice: cold only on the first run
            figures["first"] = min(figures.get("first", 1e9), time.perf_counter() - started)
            started = time.perf_counter()
            document.calculateAll()
            figures["unchanged"] = min(figures.get("unchanged", 1e9), time.perf_counter() - started)
            for dt in (0.0101, 0.0102):
                document.Sheets.getByName("Input").getCellRangeByName("B15").setValue(dt)
                started = time.perf_counter()
                document.calculateAll()
                figures["edit"] = min(figures.get("edit", 1e9), time.perf_counter() - started)
            held = document.Sheets.getByName("Record").getCellRangeByName(f"A1:A{RECORD_ROWS + 1}").getDataArray()
            peaks = document.Sheets.getByName("Peaks").getCellRangeByName("A7:B18").getDataArray()
            grids = tuple(
                document.Sheets.getByName(sheet).getCellRangeByName(cells).getDataArray()
                for sheet, cells in (("Spectrum", "A7:A47"), ("Spectrum", "B5:D5"), ("Yielding", "A7:A26"),
                                     ("Yielding", "B5:E5"))
            )  # fmt: skip
            document.close(True)
    cells = tuple(held)  # the range as Calc hands it to the component
    direct: dict[str, float] = {}
    for _ in range(REPEATS):
        cache.clear_all()
        started = time.perf_counter()
        calls = _python_calls(cells, 0.0103, peaks, grids)
        direct["cold"] = min(direct.get("cold", 1e9), time.perf_counter() - started)
        started = time.perf_counter()
        _python_calls(cells, 0.0103, peaks, grids)
        direct["warm"] = min(direct.get("warm", 1e9), time.perf_counter() - started)
    print(f"Calc template, {record.n} samples in a {RECORD_ROWS + 1:,}-row range; best of {REPEATS}")
    print(f"  Calc first recalc (all sheets)        {figures['first']:8.3f} s")
    print(f"  Calc unchanged recalc (cache hits)    {figures['unchanged']:8.3f} s")
    print(f"  Calc edit dt and recalc               {figures['edit']:8.3f} s")
    print(f"  Python, the same {calls} calls, cold {direct['cold']:8.3f} s, warm {direct['warm']:8.4f} s "
          f"({direct['warm'] / calls * 1e3:.3f} ms a call)")  # fmt: skip
    print(f"  ratio Calc edit-and-recalc / Python cold calls: {figures['edit'] / direct['cold']:.2f}")


if __name__ == "__main__":
    main()
