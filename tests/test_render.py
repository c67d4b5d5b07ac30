"""Tests of groundstep.addin.result.render: the layout walked into cell writes, names and charts."""

from __future__ import annotations

import pytest

from groundstep.addin.result import layout
from groundstep.addin.result.render import CellRecorder, column_letter, render


@pytest.mark.parametrize(
    ("column", "letters"),
    # spreadsheet column names (the A..Z, AA.. bijective base-26 naming used by Excel and LibreOffice)
    [(1, "A"), (26, "Z"), (27, "AA"), (52, "AZ"), (53, "BA"), (702, "ZZ"), (703, "AAA"), (16384, "XFD")],
)
def test_column_letters(column, letters):
    """Column numbers become the letters spreadsheets show (XFD is the last column of an .xlsx sheet)."""
    assert column_letter(column) == letters


def _tiny_layout() -> layout.WorkbookLayout:
    source = layout.Table(
        "source", "Samples", 5, 1, (layout.Column("x", "x", "m"), layout.Column("y", "y")), 3
    )
    fields = layout.Fields(
        "inputs", "Inputs", 2, 5,
        (layout.Field("scale", "Scale", "-"), layout.Field("label", "Label"), layout.Field("twice", "Twice")),
        formulas=(("twice", "=2*{scale}"),),
    )  # fmt: skip
    replay = layout.FormulaTable(
        "replay", "Replay", 5, 8, (layout.FormulaColumn("z", "z", "=0", "={z}{q}+A{rr}*{scale}"),), 3,
        source_sheet="Data", source="source",
    )  # fmt: skip
    chart = layout.Chart("chart", "y against x", "source", "x", (("y", "y"),), "x", "y", 1, 12)
    return layout.WorkbookLayout((layout.Sheet("Data", "Title", (source, fields, replay), (chart,), note="a note"),))


def test_render_writes_titles_values_formulas_and_names():
    """Every block lands at its position; {q} is the row above, {rr} the same row of the source table."""
    content = {"source": {"x": [1.0, 2.0, 3.0], "y": [4.0, 5.0, 6.0]}, "inputs": {"scale": 0.5, "label": "=danger"}}
    out = CellRecorder()
    render(_tiny_layout(), content, out)
    cells = out.cells
    assert cells[("Data", 1, 1)] == "Title" and cells[("Data", 2, 1)] == "a note"
    assert cells[("Data", 6, 1)] == "x [m]" and cells[("Data", 7, 1)] == 1.0 and cells[("Data", 9, 2)] == 6.0
    assert cells[("Data", 3, 6)] == 0.5
    assert cells[("Data", 4, 6)] == " =danger"  # text from inputs never becomes a formula
    assert cells[("Data", 5, 6)] == "=2*$F$3"  # the formula field points at the scale cell
    # formula table: first data row row 7 ("=0"), then row r uses row r-1 and source row r
    assert [cells[("Data", r, 8)] for r in (7, 8, 9)] == ["=0", "=H7+A8*$F$3", "=H8+A9*$F$3"]
    assert out.names["gs_scale"] == "Data!$F$3"
    assert out.names["gs_source_y"] == "Data!$B$7:$B$9"
    assert out.charts == [("Data", "chart", "Data!$A$7:$A$9", [("y", "Data!$B$7:$B$9")])]


def test_a_table_column_of_the_wrong_length_is_refused():
    """Content that does not fill a table exactly stops the render, naming block and column."""
    content = {"source": {"x": [1.0, 2.0], "y": [4.0, 5.0, 6.0]}}
    with pytest.raises(ValueError, match="block 'source' column 'x': 2 values for 3 rows"):
        render(_tiny_layout(), content, CellRecorder())
