"""The printed calculation package: page set-up, number formats and column widths (addin.result.printing)."""

from __future__ import annotations

import re
import shutil
import subprocess

import openpyxl
import pytest

from groundstep.addin.cli import main
from groundstep.addin.result import layout as lay
from groundstep.addin.result.printing import column_width, number_format, page_setup


@pytest.mark.parametrize(
    ("values", "expected"),
    [
        ([0.917012, 0.2], "0.0000"),  # largest 0.917: 4 significant digits (0.9170) need 4 decimals
        ([12.5, 3.0], "0.00"),
        ([1234.0, 5.0], "0"),
        ([1e-5, 0.3], "0.000E+00"),  # tiny values: E-notation keeps their digits
        ([2e6], "0.000E+00"),
        ([], "0.000"),
    ],
)
def test_scientific_columns_get_ordinary_formats_from_their_range(values, expected):
    """A scientific column prints in ordinary notation with 4 significant digits unless tiny or huge (before: 9.17012E-01)."""
    assert number_format(lay.SCIENTIFIC, values) == expected
    assert number_format(lay.FIXED3, values) == lay.FIXED3  # other formats are kept


def test_column_is_as_wide_as_its_header():
    """'Ductility demand μ' is not cut (before: 'Ductility deman'); very long headers wrap at 36 characters."""
    column = lay.Column("ductility", "Ductility demand μ", "", lay.FIXED3, 10.0)
    assert column_width(column) >= len("Ductility demand μ")
    assert column_width(lay.Column("x", "x" * 80, "", lay.GENERAL, 10.0)) == 36.0


def test_long_tables_repeat_and_freeze_their_header():
    """A sheet whose table has 30+ rows repeats and freezes its header row; wide sheets print landscape."""
    table = lay.Table("t", "Samples", 7, 1, tuple(lay.Column(f"c{i}", f"Column {i}", "", lay.GENERAL, 17.0) for i in range(8)), 100)
    page = page_setup(lay.Sheet("S", "title", (table,)))
    assert page == lay.PageSetup(landscape=True, fit_width=True, fit_height=False, title_rows=(8, 8), freeze=(9, 1))


def test_demo_workbook_carries_the_page_set_up(tmp_path):
    """Every sheet of the demo fits to one page wide; the Summary fits on one page; Record repeats its header."""
    assert main(["demo", str(tmp_path / "demo.xlsx")]) == 0
    book = openpyxl.load_workbook(tmp_path / "demo.xlsx")
    for ws in book.worksheets:
        assert ws.sheet_properties.pageSetUpPr.fitToPage and ws.page_setup.fitToWidth == 1, ws.title
    assert book["Summary"].page_setup.fitToHeight == 1
    assert book["Record"].print_title_rows == "$8:$8" and book["Record"].freeze_panes == "A9"


@pytest.mark.skipif(shutil.which("soffice") is None, reason="LibreOffice (soffice) is not installed")
def test_printed_demo_is_a_few_dozen_pages(tmp_path):
    """LibreOffice prints the demo in at most 80 pages (before the page set-up: 252 on this layout, 156 in the issue)."""
    assert main(["demo", str(tmp_path / "demo.xlsx")]) == 0
    subprocess.run(
        ["soffice", f"-env:UserInstallation={(tmp_path / 'profile').as_uri()}", "--headless", "--norestore",
         "--convert-to", "pdf", "--outdir", str(tmp_path), str(tmp_path / "demo.xlsx")],
        capture_output=True, timeout=300, check=True,
    )  # fmt: skip
    pdf = (tmp_path / "demo.pdf").read_bytes()
    pages = len(re.findall(rb"/Type\s*/Page[^s]", pdf))  # PDF 1.7 (ISO 32000-1) 7.7.3.3: one page object per page
    assert 7 <= pages <= 80
