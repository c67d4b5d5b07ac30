"""Tests of ``package/sheet_reader.py``: cell values from a direct scan of sheet XML.

Reference: openpyxl's normal reading (``load_workbook(data_only=True)``) of
the same bytes, an independent reader of ECMA-376 sheet XML built on an XML
parser; every cell's value must agree in type and value (floats bit for
bit), and the extent of the cells (``max_row``, ``max_column``) too. The
workbooks are made by hand (raw XML) so that every cell type of ECMA-376
Part 1 §18.18.11 (ST_CellType) appears, and by openpyxl itself.
"""

from __future__ import annotations

import datetime
import io
import struct
import zipfile

import openpyxl
import pytest
from openpyxl.utils.datetime import CALENDAR_MAC_1904

from groundstep.addin.package import sheet_reader
from groundstep.addin.package.sheet_reader import open_workbook

_MAIN = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
_REL = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
_STYLES = f"""<?xml version="1.0" encoding="UTF-8" standalone="yes"?>
<styleSheet xmlns="{_MAIN}"><numFmts count="1"><numFmt numFmtId="164" formatCode="[h]:mm:ss"/></numFmts>
<fonts count="1"><font><sz val="11"/><name val="Calibri"/></font></fonts>
<fills count="1"><fill><patternFill patternType="none"/></fill></fills>
<borders count="1"><border/></borders><cellStyleXfs count="1"><xf/></cellStyleXfs>
<cellXfs count="4"><xf numFmtId="0"/><xf numFmtId="14" applyNumberFormat="1"/><xf numFmtId="11" applyNumberFormat="1"/>
<xf numFmtId="164" applyNumberFormat="1"/></cellXfs>
<cellStyles count="1"><cellStyle name="Normal" xfId="0" builtinId="0"/></cellStyles></styleSheet>"""
#: Shared strings, one with rich-text runs, one with an escaped character (x005F_ is openpyxl's own unescaping).
_STRINGS = f"""<?xml version="1.0" encoding="UTF-8" standalone="yes"?>
<sst xmlns="{_MAIN}" count="4" uniqueCount="4"><si><t>accel [g]</t></si><si><t xml:space="preserve">  padded  </t></si>
<si><r><t>rich </t></r><r><rPr><b/></rPr><t>text</t></r></si><si><t>a &amp; b &lt; c</t></si></sst>"""

#: Cells of every kind, as Excel, LibreOffice and openpyxl write them (reference first, then s, then t).
_PLAIN_CELLS = (
    '<row r="1"><c r="A1" t="s"><v>0</v></c><c r="B1" t="s"><v>1</v></c><c r="C1" t="s"><v>2</v></c>'
    '<c r="D1" t="s"><v>3</v></c></row>'
    '<row r="2"><c r="A2"><v>1</v></c><c r="B2" t="n"><v>-0.25</v></c><c r="C2"><v>1.5E-3</v></c>'
    '<c r="D2"><v>-0</v></c><c r="E2"><v>12345678901234567890</v></c><c r="F2"><v>5e-324</v></c></row>'
    '<row r="3"><c r="A3" t="b"><v>1</v></c><c r="B3" t="b"><v>0</v></c><c r="C3" t="e"><v>#N/A</v></c>'
    '<c r="D3" t="e"><v>#DIV/0!</v></c><c r="E3" t="str"><v>text of a formula</v></c></row>'
    # blank rows 4-6; a styled empty cell, an empty value, a formula never calculated, one with its value
    '<row r="7"><c r="A7" s="2"/><c r="B7"><v></v></c><c r="C7"><f>A2*2</f></c><c r="D7"><f>A2*3</f><v>3</v></c>'
    '<c r="E7" t="str"><f>"x"&amp;"y"</f><v>xy</v></c></row>'
    # dates and times under date formats (style 1: m/d/yyyy; style 3: [h]:mm:ss, a duration)
    '<row r="8"><c r="A8" s="1"><v>45000</v></c><c r="B8" s="1"><v>45000.75</v></c><c r="C8" s="3"><v>1.5</v></c>'
    '<c r="D8" s="1"><v>60</v></c><c r="E8" s="2"><v>0.05</v></c></row>'
    # inline strings, plain and rich, an ISO date cell, entities and a carriage return in text
    '<row r="9"><c r="A9" t="inlineStr"><is><t>inline</t></is></c>'
    '<c r="B9" t="inlineStr"><is><r><t>two </t></r><r><t>runs</t></r></is></c>'
    '<c r="C9" t="d"><v>2026-03-01T12:00:00</v></c><c r="D9" t="str"><v>a &amp; b &#x3C; &#169;</v></c>'
    '<c r="E9" t="str"><v>line&#13;\r\nnext</v></c></row>'
    '<row r="11" spans="1:8" ht="20" customHeight="1"><c r="H11" t="s"><v>0</v></c></row>'
)


def _package(cells: str, *, date1904: bool = False, sheet: str = "", strings: bool = True) -> bytes:
    """A minimal .xlsx package: one worksheet holding `cells` inside <sheetData>, a chart-free workbook."""
    workbook = (f'<?xml version="1.0" encoding="UTF-8" standalone="yes"?><workbook xmlns="{_MAIN}" xmlns:r="{_REL}">'
                + ('<workbookPr date1904="1"/>' if date1904 else "")
                + '<sheets><sheet name="Data" sheetId="1" r:id="rId1"/></sheets></workbook>')  # fmt: skip
    sheet = sheet or (f'<?xml version="1.0" encoding="UTF-8" standalone="yes"?><worksheet xmlns="{_MAIN}">'
                      f"<sheetData>{cells}</sheetData></worksheet>")  # fmt: skip
    types = (
        '<?xml version="1.0" encoding="UTF-8"?><Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">'
        '<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/>'
        '<Default Extension="xml" ContentType="application/xml"/>'
        '<Override PartName="/xl/workbook.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/>'
        '<Override PartName="/xl/worksheets/sheet1.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/>'
        '<Override PartName="/xl/styles.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.styles+xml"/>'
        + ('<Override PartName="/xl/sharedStrings.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sharedStrings+xml"/>'
           if strings else "")
        + "</Types>"
    )  # fmt: skip
    package_rels = ('<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">'
                    f'<Relationship Id="rId1" Type="{_REL}/officeDocument" Target="xl/workbook.xml"/></Relationships>')  # fmt: skip
    workbook_rels = ('<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">'
                     f'<Relationship Id="rId1" Type="{_REL}/worksheet" Target="worksheets/sheet1.xml"/>'
                     f'<Relationship Id="rId2" Type="{_REL}/styles" Target="styles.xml"/>'
                     + (f'<Relationship Id="rId3" Type="{_REL}/sharedStrings" Target="sharedStrings.xml"/>' if strings else "")
                     + "</Relationships>")  # fmt: skip
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w", zipfile.ZIP_DEFLATED) as package:
        package.writestr("[Content_Types].xml", types)
        package.writestr("_rels/.rels", package_rels)
        package.writestr("xl/workbook.xml", workbook)
        package.writestr("xl/_rels/workbook.xml.rels", workbook_rels)
        package.writestr("xl/styles.xml", _STYLES)
        if strings:
            package.writestr("xl/sharedStrings.xml", _STRINGS)
        package.writestr("xl/worksheets/sheet1.xml", sheet)
    return buffer.getvalue()


def _openpyxl_cells(data: bytes, title: str) -> tuple[dict[tuple[int, int], object], int, int]:
    """Every cell openpyxl's normal reading holds, with the sheet's extent (the independent reference)."""
    book = openpyxl.load_workbook(io.BytesIO(data), data_only=True)
    sheet = book[title]
    return {(c.row, c.column): c.value for row in sheet.iter_rows() for c in row}, sheet.max_row, sheet.max_column


def _bits(value: object) -> object:
    """A value in a form where equal means identical: floats by their bits, other values with their type."""
    if isinstance(value, float):
        return ("float", struct.pack("<d", value))
    return (type(value).__name__, value)


def _assert_same_as_openpyxl(data: bytes, title: str = "Data") -> sheet_reader.SheetValues:
    expected, max_row, max_column = _openpyxl_cells(data, title)
    found = open_workbook(data).sheet(title)
    assert (found.max_row, found.max_column) == (max_row, max_column)
    cells = set(expected) | {key for key, value in found.values.items() if value is not None}
    for key in sorted(cells):
        assert _bits(found.values.get(key)) == _bits(expected.get(key)), key
    return found


def test_every_cell_type_reads_as_openpyxl_reads_it(monkeypatch):
    """Numbers, shared and inline strings, Booleans, errors, formula results, dates and blanks agree with openpyxl."""
    monkeypatch.setattr(sheet_reader, "_parse_whole", None)  # the scan itself reads this sheet, no fallback
    found = _assert_same_as_openpyxl(_package(_PLAIN_CELLS))
    # a few values spelled out (ECMA-376 §18.18.11; the date serial 45000 is 2023-03-15 in the 1900 system)
    assert found.values[(2, 1)] == 1 and type(found.values[(2, 1)]) is int
    assert found.values[(3, 3)] == "#N/A" and found.values[(3, 1)] is True
    assert found.values[(8, 1)] == datetime.datetime(2023, 3, 15)
    assert found.values[(7, 3)] is None and found.values[(7, 4)] == 3  # uncalculated formula: no value
    assert found.values[(1, 3)] == "rich text" and found.values[(9, 2)] == "two runs"


def test_1904_dates_follow_the_workbook_flag():
    """Under date1904 the serial 0 is 1904-01-01 (ECMA-376 §18.17.4.1), as openpyxl reads it."""
    data = _package(_PLAIN_CELLS, date1904=True)
    found = _assert_same_as_openpyxl(data)
    assert open_workbook(data).epoch == CALENDAR_MAC_1904
    assert found.values[(8, 1)] == datetime.datetime(2027, 3, 16)  # 45000 days after 1904-01-01


def test_a_sheet_the_scan_cannot_follow_is_read_by_openpyxls_parser(monkeypatch):
    """Cells without a reference, attributes in another order, a comment or prefixed elements: the same values."""
    calls = []
    whole = sheet_reader._parse_whole
    monkeypatch.setattr(sheet_reader, "_parse_whole", lambda *args: calls.append(1) or whole(*args))
    unusual = (
        '<row r="1"><c><v>1</v></c><c t="s"><v>0</v></c><c><v>2.5</v></c></row>',  # no cell reference
        '<row r="1"><c t="n" r="A1" s="0"><v>1</v></c><c r="B1"> <v>2</v> </c></row>',  # order, whitespace
        '<!-- a comment --><row r="1"><c r="A1"><v>1</v></c></row>',
    )
    for cells in unusual:
        _assert_same_as_openpyxl(_package(cells))
    prefixed = (f'<?xml version="1.0"?><x:worksheet xmlns:x="{_MAIN}"><x:sheetData>'
                '<x:row r="1"><x:c r="A1"><x:v>7</x:v></x:c></x:row></x:sheetData></x:worksheet>')  # fmt: skip
    data = _package("", sheet=prefixed)
    assert open_workbook(data).sheet("Data").values == {(1, 1): 7}
    assert len(calls) == len(unusual) + 1


def test_a_long_column_written_by_openpyxl_reads_bit_for_bit(tmp_path):
    """A workbook openpyxl writes (a heading, 5,000 floats of every magnitude, a time column): the same bits."""
    import numpy as np

    rng = np.random.default_rng(7)
    values = (rng.standard_normal(5000) * 10.0 ** rng.integers(-300, 300, 5000)).tolist() + [0.1, -0.0, 5e-324, 1e308]
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = "Ground motion"
    sheet.append(["time [s]", "accel [g]", "note"])
    for i, value in enumerate(values):
        sheet.append([i * 0.005, value, "=A2*2" if i == 3 else None])
    sheet["D9"], sheet["E2"] = True, datetime.datetime(2026, 3, 1, 8, 30)
    sheet["F3"] = "#N/A"  # openpyxl writes it as an error cell (t="e")
    book.save(tmp_path / "in.xlsx")
    _assert_same_as_openpyxl((tmp_path / "in.xlsx").read_bytes(), "Ground motion")


def test_a_workbook_without_shared_strings_reads():
    """No shared-string part (every text inline): the scan reads the inline strings as openpyxl does."""
    cells = '<row r="1"><c r="A1" t="inlineStr"><is><t>head</t></is></c></row><row r="2"><c r="A2"><v>0.5</v></c></row>'
    _assert_same_as_openpyxl(_package(cells, strings=False))


def test_gc_is_restored_after_a_scan():
    """The collector is paused during a scan and enabled again after it, also when the scan fails."""
    import gc

    assert gc.isenabled()
    open_workbook(_package(_PLAIN_CELLS)).sheet("Data")
    assert gc.isenabled()
    with pytest.raises(IndexError):  # a shared-string index beyond the table: openpyxl's parser raises too
        open_workbook(_package('<row r="1"><c r="A1" t="s"><v>99</v></c></row>')).sheet("Data")
    assert gc.isenabled()
