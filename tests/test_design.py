"""Tests of groundstep.core.design against values worked by hand from the standards' formulas."""

from __future__ import annotations

import doctest
import math

import numpy as np
import pytest
from numpy.testing import assert_allclose

from groundstep.core import design
from groundstep.core.design import DesignSpectrumWarning, design_spectrum

# Hand values below are exact decimal arithmetic; 1e-12 relative covers the
# binary round-off of a few multiplications and one division.
RTOL = 1e-12


def test_asce7_every_branch_by_hand():
    """ASCE 7 spectrum equals hand values in the rising, plateau, 1/T and 1/T² branches."""
    # ASCE/SEI 7-16 §11.4.6 with SDS = 1.2 g, SD1 = 0.72 g, TL = 6 s:
    # T0 = 0.2·0.72/1.2 = 0.12 s, TS = 0.72/1.2 = 0.6 s
    periods = [0.0, 0.06, 0.12, 0.3, 0.6, 1.0, 2.4, 6.0, 8.0, 12.0]
    expected = [
        0.48,  # T = 0: 1.2·0.4
        0.84,  # T = 0.06 < T0: 1.2·(0.4 + 0.6·0.06/0.12) = 1.2·0.7
        1.2,  # T = T0: plateau SDS
        1.2,  # T0 <= 0.3 <= TS
        1.2,  # T = TS: plateau (and SD1/TS = 1.2)
        0.72,  # T = 1: SD1/1
        0.3,  # T = 2.4: 0.72/2.4
        0.12,  # T = TL = 6: 0.72/6
        0.0675,  # T = 8 > TL: 0.72·6/64
        0.03,  # T = 12: 0.72·6/144
    ]
    spectrum = design_spectrum(periods, "ASCE7", sds=1.2, sd1=0.72, tl=6.0)
    assert_allclose(spectrum.sa, expected, rtol=RTOL)
    assert spectrum.parameter("T0") == pytest.approx(0.12, rel=RTOL)
    assert spectrum.parameter("TS") == pytest.approx(0.6, rel=RTOL)
    assert spectrum.edition == "ASCE/SEI 7-16" and "11.4.6" in spectrum.clause


def test_en1998_type1_every_branch_by_hand():
    """EN 1998 Type 1, ground B, γI = 1.2 equals hand values in the four branches of eqs. 3.2-3.5."""
    # EN 1998-1:2004 §3.2.2.2, Table 3.2 ground B (from memory): S = 1.2, TB = 0.15, TC = 0.5, TD = 2.0;
    # ag·γI = 0.3·1.2 = 0.36 g, ξ = 5 %: η = sqrt(10/10) = 1; ag·S = 0.432 g
    periods = [0.0, 0.075, 0.3, 1.0, 3.0]
    expected = [
        0.432,  # eq. 3.2 at T = 0: ag·S
        0.756,  # eq. 3.2 at T = TB/2: 0.432·(1 + 0.5·(2.5 - 1)) = 0.432·1.75
        1.08,  # eq. 3.3: 2.5·0.432
        0.54,  # eq. 3.4: 1.08·0.5/1.0
        0.12,  # eq. 3.5: 1.08·0.5·2.0/9
    ]
    spectrum = design_spectrum(periods, "EN1998", ag=0.3, ground_type="B", importance_factor=1.2)
    assert_allclose(spectrum.sa, expected, rtol=RTOL)
    assert spectrum.parameter("ag_design") == pytest.approx(0.36, rel=RTOL)


def test_en1998_type2_damped_by_hand():
    """EN 1998 Type 2, ground D, 10 % damping equals hand values with η = sqrt(2/3)."""
    # Table 3.3 ground D (from memory): S = 1.8, TB = 0.1, TC = 0.3, TD = 1.2; ag = 0.1 g: ag·S = 0.18 g;
    # eq. 3.6: η = sqrt(10/(5 + 10)) = 0.816496580927726; plateau 2.5·0.18·η = 0.367423461417477
    periods = [0.05, 0.2, 0.6, 2.0]
    expected = [
        0.27371173070873835,  # eq. 3.2: 0.18·(1 + 0.5·(2.5η - 1)) = 0.18·1.5206207261596575
        0.367423461417477,  # eq. 3.3: plateau
        0.1837117307087385,  # eq. 3.4: plateau·0.3/0.6
        0.03306811152757293,  # eq. 3.5: plateau·0.3·1.2/4
    ]
    spectrum = design_spectrum(periods, "EN1998", ag=0.1, ground_type="d", spectrum_type=2, damping=0.10)
    assert_allclose(spectrum.sa, expected, rtol=RTOL)
    assert spectrum.parameter("eta") == pytest.approx(math.sqrt(2.0 / 3.0), rel=RTOL)


def test_en1998_eta_floor():
    """At 30 % damping η = sqrt(10/35) = 0.53 is raised to its floor 0.55 (EN 1998-1:2004 eq. 3.6)."""
    spectrum = design_spectrum([0.3], "EN1998", ag=0.2, ground_type="A", damping=0.30)
    # ground A Type 1 plateau: 2.5·0.2·1.0·0.55 = 0.275 g
    assert_allclose(spectrum.sa, [0.275], rtol=RTOL)


@pytest.mark.parametrize(
    ("ground", "kind", "values"),
    [
        # EN 1998-1:2004 Tables 3.2 and 3.3, recommended values, from memory: (S, TB, TC, TD)
        ("A", 1, (1.0, 0.15, 0.4, 2.0)),
        ("B", 1, (1.2, 0.15, 0.5, 2.0)),
        ("C", 1, (1.15, 0.20, 0.6, 2.0)),
        ("D", 1, (1.35, 0.20, 0.8, 2.0)),
        ("E", 1, (1.4, 0.15, 0.5, 2.0)),
        ("A", 2, (1.0, 0.05, 0.25, 1.2)),
        ("B", 2, (1.35, 0.05, 0.25, 1.2)),
        ("C", 2, (1.5, 0.10, 0.25, 1.2)),
        ("D", 2, (1.8, 0.10, 0.30, 1.2)),
        ("E", 2, (1.6, 0.05, 0.25, 1.2)),
    ],
)
def test_en1998_ground_table_values(ground, kind, values):
    """The S, TB, TC, TD used for each ground and spectrum type are the tabulated ones."""
    spectrum = design_spectrum([1.0], "EN1998", ag=0.2, ground_type=ground, spectrum_type=kind)
    used = tuple(spectrum.parameter(name) for name in ("S", "TB", "TC", "TD"))
    assert used == pytest.approx(values, rel=0, abs=0)


@pytest.mark.parametrize("standard", ["ASCE7", "EN1998"])
def test_branches_join_continuously(standard):
    """Both spectra are continuous at every corner period (the standards' branches meet)."""
    if standard == "ASCE7":
        spectrum = design_spectrum([1.0], standard, sds=0.9, sd1=0.45, tl=4.0)
        corners = [spectrum.parameter("T0"), spectrum.parameter("TS"), 4.0]
        kwargs = {"sds": 0.9, "sd1": 0.45, "tl": 4.0}
    else:
        kwargs = {"ag": 0.2, "ground_type": "C"}
        corners = [0.2, 0.6, 2.0]  # TB, TC, TD of ground C Type 1 (Table 3.2)
    for corner in corners:
        pair = design_spectrum([corner * (1 - 1e-9), corner * (1 + 1e-9)], standard, **kwargs).sa
        # a jump would show at O(1) relative; a continuous branch moves by ~1e-9 over the 2e-9 step
        assert pair[0] == pytest.approx(pair[1], rel=1e-8)


def test_table_follows_straight_lines_on_log_axes():
    """A table target is a power law between its points: exact for Sa = 0.05/T, geometric mean at mid-log."""
    table_t, table_sa = [0.1, 1.0, 4.0], [0.5, 0.05, 0.0125]  # Sa = 0.05/T at each point (invented)
    spectrum = design_spectrum([0.1, np.sqrt(0.1), 0.5, 2.0, 4.0], "table", periods_table=table_t, sa_table=table_sa)
    # straight line on log-log axes through points of Sa = 0.05/T is Sa = 0.05/T itself
    assert_allclose(spectrum.sa, 0.05 / spectrum.periods, rtol=RTOL)
    assert spectrum.standard == "table"


def test_result_is_array_like_and_converts_units():
    """np.asarray gives Sa [g]; sa_in('m/s2') multiplies by g = 9.80665 m/s² (3rd CGPM 1901)."""
    spectrum = design_spectrum([0.0, 1.0], "ASCE7", sds=1.0, sd1=0.5, tl=8.0)
    assert_allclose(np.asarray(spectrum), spectrum.sa, rtol=0)
    assert len(spectrum) == 2
    assert_allclose(spectrum.sa_in("m/s2"), spectrum.sa * 9.80665, rtol=RTOL)
    assert "DesignSpectrum('ASCE7', n=2" in repr(spectrum)
    assert "sds = 1" in spectrum.describe()


def test_en1998_beyond_four_seconds_warns():
    """Periods beyond 4 s (end of eq. 3.5) give a DesignSpectrumWarning naming the Annex."""
    with pytest.warns(DesignSpectrumWarning, match="up to 4 s"):
        design_spectrum([1.0, 6.0], "EN1998", ag=0.2, ground_type="A")


@pytest.mark.parametrize(
    ("standard", "kwargs", "error", "match"),
    [
        ("EC9", {}, ValueError, "use one of 'ASCE7', 'EN1998', 'table'"),
        ("ASCE7", {"sds": 0.0, "sd1": 0.5, "tl": 8.0}, ValueError, "`sds` must be > 0"),
        ("ASCE7", {"sds": 1.0, "sd1": 0.5, "tl": 0.4}, ValueError, "`tl` must exceed TS"),
        ("ASCE7", {"sds": 1.0, "sd1": 0.5}, TypeError, "needs `tl`"),
        ("ASCE7", {"sds": 1.0, "sd1": 0.5, "tl": 8.0, "ss": 1.5}, TypeError, "unknown ss"),
        ("EN1998", {"ag": 0.2, "ground_type": "F"}, ValueError, "`ground_type` must be one of"),
        ("EN1998", {"ag": 0.2, "ground_type": "A", "damping": 5}, ValueError, "looks like a percentage"),
        ("EN1998", {"ag": 0.2, "ground_type": "A", "spectrum_type": 3}, ValueError, "`spectrum_type` must be 1 or 2"),
        ("table", {"periods_table": [0.1, 0.05], "sa_table": [1, 1]}, ValueError, "increase strictly"),
        ("table", {"periods_table": [0.0, 1.0], "sa_table": [1, 1]}, ValueError, "must be > 0 s"),
        ("table", {"periods_table": [0.2, 1.0], "sa_table": [1, 1]}, ValueError, "outside the table"),
        ("table", {"periods_table": [0.1, 1.0], "sa_table": [1, 1, 1]}, ValueError, "one value per period"),
    ],
)
def test_bad_parameters_are_refused_with_a_message(standard, kwargs, error, match):
    """Each invalid standard or parameter raises the named error with a message naming the rule."""
    with pytest.raises(error, match=match):
        design_spectrum([0.1, 0.5], standard, **kwargs)


def test_docstring_examples_run():
    """The Examples sections of groundstep.core.design run and print what they show."""
    failures, attempted = doctest.testmod(design, optionflags=doctest.NORMALIZE_WHITESPACE)
    assert failures == 0 and attempted > 0
