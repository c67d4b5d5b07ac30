"""Benchmark of ``groundstep fill`` on a long record: wall time, file size, and their parts.

Run: ``python benchmarks/bench_fill.py``. Workload: an input workbook holding
an invented 40,000-sample record (dt = 0.005 s, seeded noise), 200 periods x
3 dampings, the default oscillators. Every figure is the best of several runs
measured in this run; the machine is shared, so compare the ratios printed
here (time to build the report versus time to write it, both in this run)
rather than figures from different runs. The writing is also measured
through the former writer (openpyxl cell objects for every cell, inlined
below), alternated with the current one on the same report, and the
reading through the former reader (openpyxl's normal mode, a cell object
for every cell of the workbook, inlined below), alternated with the
current sheet scan on the same file.
"""

from __future__ import annotations

import contextlib
import io
import tempfile
from pathlib import Path

import numpy as np
from _timing import best_of
from openpyxl import Workbook

from groundstep.addin.cli import main
from groundstep.addin.cli.common import settings_from_options
from groundstep.addin.package.inputs import clip_reference, read_input_workbook, settings_from_cells, split_reference
from groundstep.addin.result import layout as lay
from groundstep.addin.result.content import build_report
from groundstep.addin.result.offline import OpenpyxlWriter, write_report
from groundstep.addin.result.render import Formula, column_letter, render
from groundstep.addin.result.sheet_xml import SheetCells

SAMPLES = 40_000
DT = 0.005  # s
REPEATS = 3
#: Targets of issue 14.
TARGET_SECONDS = 2.0
TARGET_BYTES = 1.5e6


class FormerWriter(OpenpyxlWriter):
    """The writer before issue 14: an openpyxl cell per value, openpyxl's own save (inlined for the ratio)."""

    def write_cells(self, sheet, row, column, values, number_format, bold) -> None:
        from copy import copy

        from openpyxl.styles import Font

        ws = self.book[sheet]
        style = None
        for i, line in enumerate(values):
            for j, value in enumerate(line):
                cell = ws.cell(row=row + i, column=column + j, value=value)
                if isinstance(value, str) and not isinstance(value, Formula):
                    cell.data_type = "s"
                if not (number_format and number_format != lay.GENERAL) and not bold:
                    continue
                if style is None:
                    if number_format:
                        cell.number_format = number_format
                    if bold:
                        cell.font = Font(bold=True)
                    style = cell._style
                else:
                    cell._style = copy(style)

    def save(self, target) -> None:
        self.book.save(target)


class MainCells(SheetCells):
    """The cell XML before shared formulas: every formula written out, every row with its ``r`` (inlined for the ratio)."""

    def xml(self):
        yield "<sheetData>"
        parts = []
        for number in sorted(self._rows):
            cells = sorted(self._rows[number], key=lambda cell: cell[0])
            if not cells:
                continue
            parts.append(f'<row r="{number}">')
            parts.extend(f'<c r="{column_letter(column)}{number}"{text}' for column, text in cells)
            parts.append("</row>")
        parts.append("</sheetData>")
        yield "".join(parts)


class MainWriter(OpenpyxlWriter):
    """The writer before shared formulas and row references were left off: `MainCells` for every sheet."""

    def add_sheet(self, name: str) -> None:
        super().add_sheet(name)
        self.cells[name] = MainCells(name, self._style)


def fill_former(path: Path, reference: str, settings, out: Path) -> None:
    """The former `fill` in process: openpyxl's normal mode to read, `MainWriter` to write."""
    record = read_former(path, reference)[0]
    report = build_report(record, settings, command="bench", source=path.name)
    writer = MainWriter()
    render(report.layout, report.content, writer)
    writer.save(out)


def fill_now(path: Path, reference: str, settings, out: Path) -> None:
    """The current `fill` in process, the same steps as `fill_former`."""
    record = read_input_workbook(path, record=reference, dt=DT, unit="g")[0]
    write_report(build_report(record, settings, command="bench", source=path.name), out, force=True)


def read_former(path: Path, reference: str):
    """The reader before the sheet scan: openpyxl's normal mode, the record range's cells (inlined for the ratio)."""
    import openpyxl

    book = openpyxl.load_workbook(io.BytesIO(path.read_bytes()), data_only=True, keep_vba=False)
    sheet_name, cells = split_reference(reference)
    sheet = book[sheet_name]
    values = [[cell.value for cell in row] for row in sheet[clip_reference(cells, sheet.max_row, sheet.max_column)]]
    return settings_from_cells(lambda key: None, record_values=values, dt=DT, unit="g", source=path.name)


def _write_former(report, path: Path) -> None:
    writer = FormerWriter()
    render(report.layout, report.content, writer)
    writer.save(path)


def input_workbook(path: Path) -> str:
    """An input workbook with the record in column B; returns its SHEET!RANGE."""
    rng = np.random.default_rng(14)
    t = np.arange(SAMPLES) * DT
    envelope = np.minimum(t / 4.0, 1.0) * np.exp(-np.maximum(t - 80.0, 0.0) / 40.0)
    accel = 0.2 * envelope * np.convolve(rng.standard_normal(SAMPLES + 4), np.ones(5) / 5, mode="valid")
    book = Workbook()
    ws = book.active
    ws.title = "Ground motion"
    ws.append(["time [s]", "accel [g]"])
    for i, value in enumerate(accel.tolist()):
        ws.append([i * DT, value])
    book.save(path)
    return f"'Ground motion'!B1:B{SAMPLES + 1}"


def main_bench() -> None:
    folder = Path(tempfile.mkdtemp(prefix="gs-fill-"))
    source = folder / "input.xlsx"
    reference = input_workbook(source)
    out = folder / "out.xlsx"
    argv = ["fill", str(source), "--out", str(out), "--record", reference, "--dt", str(DT), "--unit", "g",
            "--periods", "0.02,10,200", "--dampings", "0.02,0.05,0.1", "--force"]

    def fill() -> None:
        with contextlib.redirect_stdout(io.StringIO()):
            if main(argv) != 0:
                raise RuntimeError("fill failed")

    fill()  # load kernels
    whole = best_of(fill, REPEATS)
    size = out.stat().st_size

    from groundstep.addin.cli.main import _parser  # the same settings as the command line

    args = _parser().parse_args(argv)
    record, settings, label = read_input_workbook(source, record=reference, dt=DT, unit="g")
    settings = settings_from_options(args, settings)
    read = read_before = float("inf")
    for _ in range(REPEATS):  # alternated: both readers see the same machine load
        read = min(read, best_of(lambda: read_input_workbook(source, record=reference, dt=DT, unit="g"), 1))
        read_before = min(read_before, best_of(lambda: read_former(source, reference), 1))
    former_record = read_former(source, reference)[0]
    if former_record.accel.tobytes() != record.accel.tobytes():
        raise RuntimeError("the sheet scan and openpyxl's normal mode read different records")
    report = build_report(record, settings, command="bench", source=label)
    build = best_of(lambda: build_report(record, settings, command="bench", source=label), REPEATS)
    write = former = float("inf")
    for _ in range(REPEATS):  # alternated: both writers see the same machine load
        write = min(write, best_of(lambda: write_report(report, folder / "w.xlsx", force=True), 1))
        former = min(former, best_of(lambda: _write_former(report, folder / "former.xlsx"), 1))
    former_size = (folder / "former.xlsx").stat().st_size
    steps = steps_before = float("inf")
    for _ in range(REPEATS):  # the whole pipeline in process, previous commit against now, alternated
        steps = min(steps, best_of(lambda: fill_now(source, reference, settings, folder / "now.xlsx"), 1))
        steps_before = min(steps_before, best_of(lambda: fill_former(source, reference, settings, folder / "main.xlsx"), 1))
    main_size = (folder / "main.xlsx").stat().st_size
    print(f"groundstep fill: {SAMPLES} samples, 200 periods x 3 dampings (best of {REPEATS})")
    print(f"  whole command    {whole:7.3f} s   (target {TARGET_SECONDS} s: ratio {whole / TARGET_SECONDS:4.2f})")
    print(f"    read input     {read:7.3f} s   share {read / whole:5.1%}")
    print(f"      former reader {read_before:7.3f} s   (openpyxl normal mode, same file): former / now {read_before / read:4.1f}x; "
          "same record bits")
    print(f"    build report   {build:7.3f} s   share {build / whole:5.1%}")
    print(f"    write workbook {write:7.3f} s   share {write / whole:5.1%}")
    print(f"      former writer {former:7.3f} s   (openpyxl cells, same report): former / now {former / write:4.1f}x")
    print(f"  read + build + write in process {steps:6.3f} s; former reader and cell XML (main before the scan) "
          f"{steps_before:6.3f} s: former / now {steps_before / steps:4.2f}x")
    print(f"  file size        {size / 1e6:7.3f} MB  former cell XML (every formula written out, every row's r) {main_size / 1e6:5.3f} MB: "
          f"now / former {size / main_size:4.2f}")
    print(f"  file size        {size / 1e6:7.3f} MB  (target {TARGET_BYTES / 1e6} MB: ratio {size / TARGET_BYTES:4.2f}); "
          f"former writer {former_size / 1e6:5.3f} MB")
    for item in folder.iterdir():
        item.unlink()
    folder.rmdir()


if __name__ == "__main__":
    main_bench()
