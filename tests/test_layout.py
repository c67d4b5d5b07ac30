"""Tests of the result workbook's layout (groundstep.addin.result.sheets on layout.py's classes)."""

from __future__ import annotations

import pytest

from groundstep.addin.result import layout, sheets


@pytest.fixture(scope="module")
def book() -> layout.WorkbookLayout:
    return sheets.result_layout(500, 40, (0.02, 0.05, 0.1), 6, "g", "m", n_yielding=3)


def _extent(block) -> tuple[int, int, int, int]:
    """(first row, last row, first column, last column) a block occupies, title row included."""
    if isinstance(block, layout.Fields):
        return block.row, block.row + len(block.fields), block.column, block.column + 2
    return block.row, block.row + 1 + max(block.rows, 1), block.column, block.column + len(block.columns) - 1


def test_blocks_of_a_sheet_do_not_overlap(book):
    """No two blocks of one sheet share a cell, so no writer overwrites another block."""
    for sheet in book.sheets:
        boxes = [(_extent(b), b.key) for b in sheet.blocks]
        for i, ((r0, r1, c0, c1), key) in enumerate(boxes):
            for (s0, s1, d0, d1), other in boxes[i + 1 :]:
                assert r1 < s0 or s1 < r0 or c1 < d0 or d1 < c0, f"{sheet.name}: {key} overlaps {other}"


def test_names_are_unique_across_the_workbook(book):
    """Every field and table column gets one defined name; none repeats on another sheet."""
    keys = []
    for sheet in book.sheets:
        for block in sheet.blocks:
            if isinstance(block, layout.Fields):
                keys += [item.key for item in block.fields]
            else:
                keys += [f"{block.key}_{column.key}" for column in block.columns]
    assert len(keys) == len(set(keys))


def test_charts_plot_columns_that_exist(book):
    """Each chart's table, x column and series columns are in its sheet's layout."""
    for sheet in book.sheets:
        tables = {b.key: b for b in sheet.blocks if isinstance(b, layout.Table)}
        for chart in sheet.charts:
            columns = {c.key for c in tables[chart.table].columns}
            assert chart.x in columns and {key for key, _ in chart.series} <= columns


def test_verification_replays_the_record_rows(book):
    """The Verification steps start on the Record table's first data row and are as long as the record."""
    steps = next(b for b in book.sheet(sheets.VERIFICATION).blocks if b.key == "verification_steps")
    record = next(b for b in book.sheet(sheets.RECORD).blocks if b.key == "record_table")
    assert steps.row + 2 == record.row + 2 == sheets.RECORD_FIRST_ROW and steps.rows == record.rows == 500


def test_unknown_sheet_names_the_sheets(book):
    """Asking for a sheet the layout lacks lists the ones it has."""
    with pytest.raises(KeyError, match="no sheet 'Charts'; the layout has"):
        book.sheet("Charts")
