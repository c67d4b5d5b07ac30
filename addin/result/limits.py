"""The limits of the xlsx format, checked on a layout before anything is computed.

`check_layout` walks a ``WorkbookLayout`` and refuses, with a message saying
how to proceed, a workbook whose blocks would end beyond the last row or
column of a sheet, or whose charts would reference rows openpyxl cannot
chart. `check_text` refuses a text longer than a cell holds (a spreadsheet
would cut it silently). The limits are module constants so that tests can
lower them.
"""

from __future__ import annotations

from collections.abc import Iterable

from groundstep.core.budget import LimitError

from .layout import Fields, FormulaTable, Table, WorkbookLayout

__all__ = [
    "CELL_CHARACTERS",
    "CHART_ROWS",
    "SHEET_COLUMNS",
    "SHEET_ROWS",
    "WORKBOOK_SAMPLES",
    "check_layout",
    "check_samples",
    "check_text",
]

#: Rows of a worksheet (ECMA-376 Part 1, 18.3.1.73: row index 1..1,048,576).
SHEET_ROWS = 1_048_576
#: Columns of a worksheet (ECMA-376 Part 1, 18.3.1.13: columns A..XFD, 16,384).
SHEET_COLUMNS = 16_384
#: Characters one cell holds (Excel's documented specification; longer text is cut when saved).
CELL_CHARACTERS = 32_767
#: Most record samples (processed plus as read) a result workbook takes: each sample writes about
#: 0.9-1.2 kB of sheet XML (Record, Measures and Verification rows, measured on a 20,000-sample
#: workbook), and ``verify`` reads packages of at most 256 MiB (``guard.PackageLimits.max_total``),
#: so a longer record would give a workbook that fails its own check. A choice of ours, with margin.
WORKBOOK_SAMPLES = 200_000
#: Last row a chart reference may name: openpyxl's ``Reference`` refuses more ("Max value is 1000000").
CHART_ROWS = 1_000_000

_ADVICE = (
    "use `groundstep spectrum --format csv` or `--format json` for records this long, "
    "or decimate the record (keep every k-th sample, then low-pass filter) before writing a workbook"
)


def _extent(block: Fields | Table | FormulaTable) -> tuple[int, int]:
    """Last row and last column a block writes (title row, header row, data rows)."""
    if isinstance(block, Fields):
        # title, then one row per field: label, value, unit, source
        return block.row + len(block.fields), block.column + 3
    return block.row + 1 + block.rows, block.column + len(block.columns) - 1


def check_layout(layout: WorkbookLayout) -> None:
    """Refuse a layout that does not fit an xlsx sheet or that openpyxl cannot chart.

    Raises
    ------
    LimitError
        A block ending below row `SHEET_ROWS` or right of column
        `SHEET_COLUMNS`, or a chart whose table ends below row `CHART_ROWS`;
        the message names the sheet, the block and what to do.
    """
    for sheet in layout.sheets:
        ends: dict[str, int] = {}
        for block in sheet.blocks:
            last_row, last_column = _extent(block)
            ends[block.key] = last_row
            what = f"the {sheet.name} sheet's block {block.title!r}"
            if last_row > SHEET_ROWS:
                rows = getattr(block, "rows", 0)
                raise LimitError(
                    f"the result workbook cannot hold {rows:,} rows: {what} would end at row {last_row:,}, "
                    f"beyond the {SHEET_ROWS:,} rows of an xlsx sheet",
                    _ADVICE,
                )
            if last_column > SHEET_COLUMNS:
                raise LimitError(
                    f"{what} would end at column {last_column:,}, beyond the {SHEET_COLUMNS:,} columns "
                    "of an xlsx sheet",
                    "ask for fewer dampings (each takes a group of columns) or write several workbooks",
                )
        for chart in sheet.charts:
            last_row = ends.get(chart.table, 0)
            if last_row > CHART_ROWS:
                raise LimitError(
                    f"the chart {chart.title!r} on the {sheet.name} sheet would reference rows up to "
                    f"{last_row:,}; a chart series can reach row {CHART_ROWS:,} at most",
                    _ADVICE,
                )


def check_samples(n_samples: int, n_raw: int = 0) -> None:
    """Refuse a record too long for a result workbook that ``verify`` can read back.

    Raises
    ------
    LimitError
        When `n_samples` + `n_raw` exceeds `WORKBOOK_SAMPLES`, saying what to do.
    """
    total = n_samples + n_raw
    if total > WORKBOOK_SAMPLES:
        held = f"{n_samples:,} samples" + (f" plus {n_raw:,} as read" if n_raw else "")
        raise LimitError(
            f"the record has {held}; a result workbook holds at most {WORKBOOK_SAMPLES:,} "
            "(beyond that its package is too large for `groundstep verify` to read back)",
            _ADVICE,
        )


def check_text(texts: Iterable[tuple[str, str]]) -> None:
    """Refuse any (what, text) pair whose text exceeds `CELL_CHARACTERS` (never cut it silently).

    Raises
    ------
    LimitError
        Naming `what`, the length and the limit, and asking to shorten it.
    """
    for what, text in texts:
        if len(text) > CELL_CHARACTERS:
            raise LimitError(
                f"{what} is {len(text):,} characters long; a workbook cell holds {CELL_CHARACTERS:,} "
                "and a spreadsheet would cut the rest when it saves",
                f"shorten {what} to at most {CELL_CHARACTERS:,} characters",
            )
