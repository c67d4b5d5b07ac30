"""The limits of the xlsx format are checked before the result workbook is computed."""

from __future__ import annotations

import numpy as np
import pytest

from groundstep.addin.result import content, limits, sheets
from groundstep.addin.result.content import ReportSettings, build_report
from groundstep.core import Record
from groundstep.core.budget import LimitError


def _never(*args, **kwargs):
    raise AssertionError("the computation started before the limit was checked")


def test_a_million_sample_record_is_refused_before_computing(monkeypatch):
    """A 10^6-sample record is refused up front (LimitError naming the limit and the CSV/JSON way out)."""
    monkeypatch.setattr(content, "elastic_spectrum", _never)
    record = Record(np.zeros(1_000_000), 0.01, "g")
    with pytest.raises(LimitError, match=r"1,000,000 samples.*at most 200,000.*--format csv.*decimate"):
        build_report(record, ReportSettings(periods=(0.5,)))


def test_rows_beyond_the_sheet_are_refused_naming_the_block(monkeypatch):
    """A table ending below the last sheet row (lowered to 100 here) is refused naming its sheet and row."""
    monkeypatch.setattr(limits, "SHEET_ROWS", 100)
    layout = sheets.result_layout(200, 3, (0.05,), 1, "g", "m")
    with pytest.raises(LimitError, match=r"Record sheet's block 'Samples' would end at row 208, beyond the 100 rows"):
        limits.check_layout(layout)  # Record table: title row 7, header row 8, 200 data rows 9..208


def test_columns_beyond_the_sheet_are_refused_asking_for_fewer_dampings():
    """Many dampings (6 columns each, plus the period) past column XFD (16,384) are refused."""
    layout = sheets.result_layout(100, 3, tuple(0.01 + 1e-6 * i for i in range(2731)), 1, "g", "m")
    with pytest.raises(LimitError, match=r"Spectra sheet.*column 16,387, beyond the 16,384 columns.*fewer dampings"):
        limits.check_layout(layout)  # 1 + 6 * 2731 = 16,387 columns


def test_a_layout_that_fits_passes():
    """The ordinary layout (2,000 samples, 3 dampings) passes every check."""
    limits.check_layout(sheets.result_layout(2000, 50, (0.02, 0.05, 0.1), 4, "g", "m"))


def test_charts_beyond_openpyxls_reference_limit_are_refused(monkeypatch):
    """A chart whose table ends below openpyxl's chartable row (lowered to 500) is refused before writing."""
    monkeypatch.setattr(limits, "CHART_ROWS", 500)
    with pytest.raises(LimitError, match=r"chart 'Ground acceleration' on the Record sheet .* rows up to 1,008"):
        limits.check_layout(sheets.result_layout(1000, 3, (0.05,), 1, "g", "m"))  # 7 + 1 + 1000


def test_text_longer_than_a_cell_is_refused_not_cut(monkeypatch):
    """A project text over 32,767 characters is refused before computing, naming the field."""
    monkeypatch.setattr(content, "elastic_spectrum", _never)
    record = Record(np.sin(np.arange(200) * 0.1), 0.01, "g")
    settings = ReportSettings(periods=(0.5,), project=(("site", "x" * 32_768),))
    with pytest.raises(LimitError, match=r"project field 'site' is 32,768 characters long.*shorten"):
        build_report(record, settings)


def test_the_sample_limit_can_be_lowered_and_counts_the_record_as_read(monkeypatch):
    """Processed plus as-read samples count against WORKBOOK_SAMPLES (lowered to 300: 200 + 200 is refused)."""
    monkeypatch.setattr(limits, "WORKBOOK_SAMPLES", 300)
    with pytest.raises(LimitError, match=r"200 samples plus 200 as read; a result workbook holds at most 300"):
        limits.check_samples(200, 200)
    limits.check_samples(300)  # at the limit: accepted
