"""Design response spectra of published standards, and user tables of target spectra.

Spectral accelerations here are in units of g (the unit the standards use);
periods in seconds. ``DesignSpectrum.sa_in("m/s2")`` converts.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from . import _notices, _validate
from .checks import check_damping, check_periods, check_positive
from .units import ACCELERATION_UNITS, normalise_unit

__all__ = ["DESIGN_STANDARDS", "DesignSpectrum", "DesignSpectrumWarning", "EN1998_GROUND_PARAMETERS", "design_spectrum"]


class DesignSpectrumWarning(UserWarning):
    """A design spectrum was evaluated outside the period range its standard gives."""


#: Recommended values of EN 1998-1:2004 for the horizontal elastic spectrum:
#: (S, TB [s], TC [s], TD [s]) by spectrum type and ground type.
#: Type 1 is Table 3.2, Type 2 is Table 3.3. These values are written FROM
#: MEMORY of the published tables (recommended values; a National Annex may
#: set others) and were checked against each other only for the patterns the
#: standard shows (TD 2.0 s for every Type 1 ground, 1.2 s for every Type 2).
EN1998_GROUND_PARAMETERS: dict[int, dict[str, tuple[float, float, float, float]]] = {
    1: {
        "A": (1.00, 0.15, 0.40, 2.0),
        "B": (1.20, 0.15, 0.50, 2.0),
        "C": (1.15, 0.20, 0.60, 2.0),
        "D": (1.35, 0.20, 0.80, 2.0),
        "E": (1.40, 0.15, 0.50, 2.0),
    },
    2: {
        "A": (1.00, 0.05, 0.25, 1.2),
        "B": (1.35, 0.05, 0.25, 1.2),
        "C": (1.50, 0.10, 0.25, 1.2),
        "D": (1.80, 0.10, 0.30, 1.2),
        "E": (1.60, 0.05, 0.25, 1.2),
    },
}

#: Lower bound of the damping correction factor η, EN 1998-1:2004 eq. (3.6).
EN1998_ETA_MIN = 0.55
#: Longest period of the EN 1998-1:2004 §3.2.2.2 expressions, eq. (3.5) [s];
#: beyond it the standard points to its Annex A (displacement spectrum).
EN1998_LONGEST_PERIOD = 4.0

#: Accepted standards: name -> (required parameters, optional parameters with defaults).
DESIGN_STANDARDS: dict[str, tuple[tuple[str, ...], dict[str, Any]]] = {
    "ASCE7": (("sds", "sd1", "tl"), {}),
    "EN1998": (("ag", "ground_type"), {"spectrum_type": 1, "importance_factor": 1.0, "damping": 0.05}),
    "table": (("periods_table", "sa_table"), {}),
}


@dataclass(frozen=True, slots=True, eq=False)
class DesignSpectrum:
    """A design (or target) spectrum evaluated at given periods, returned by `design_spectrum`.

    Behaves as the array of its spectral accelerations (``np.asarray(spectrum)``
    is ``spectrum.sa``, in g).

    Attributes
    ----------
    periods : ndarray (n,)
        T [s].
    sa : ndarray (n,)
        Spectral acceleration [g].
    standard : str
        ``"ASCE7"``, ``"EN1998"`` or ``"table"``.
    edition : str
        The document, e.g. ``"ASCE/SEI 7-16"``.
    clause : str
        The clause and equations used.
    parameters : tuple of (str, object) pairs
        The parameters given, then the values derived from them (T0, TS, S,
        TB, ...), periods in s and accelerations in g.
    """

    periods: NDArray[np.float64]
    sa: NDArray[np.float64]
    standard: str
    edition: str
    clause: str
    parameters: tuple[tuple[str, object], ...]

    def __repr__(self) -> str:
        return (
            f"DesignSpectrum({self.standard!r}, n={self.periods.size}, "
            f"T={self.periods.min():g}..{self.periods.max():g} s, max Sa={self.sa.max():.4g} g)"
        )

    def __len__(self) -> int:
        return int(self.sa.shape[0])

    def __array__(self, dtype: Any = None, copy: Any = None) -> NDArray[Any]:
        return np.array(self.sa, dtype=dtype, copy=True)

    def parameter(self, name: str) -> object:
        """The value of one given or derived parameter, by name."""
        for key, value in self.parameters:
            if key == name:
                return value
        raise KeyError(f"{name!r} is not a parameter of this spectrum; it has {[k for k, _ in self.parameters]}")

    def sa_in(self, unit: str) -> NDArray[np.float64]:
        """Spectral accelerations converted from g to `unit` (any acceleration unit, e.g. ``"m/s2"``)."""
        factor = ACCELERATION_UNITS["g"] / ACCELERATION_UNITS[normalise_unit(unit, ACCELERATION_UNITS)]
        return self.sa * factor

    def describe(self) -> str:
        """One line for reports: document, clause and parameters."""
        shown = ", ".join(
            f"{name} = {value:.6g}" if isinstance(value, float) else f"{name} = {value}"
            for name, value in self.parameters
            if not isinstance(value, tuple)
        )
        return f"{self.edition} {self.clause}: {shown}"


def design_spectrum(periods: ArrayLike, standard: str, **parameters: Any) -> DesignSpectrum:
    """Design response spectrum of a standard, or a target table, at the given periods.

    Parameters
    ----------
    periods : array_like (n,)
        Periods T [s], >= 0 (> 0 for ``"table"``).
    standard : {"ASCE7", "EN1998", "table"}
        Which spectrum (case is ignored).
    **parameters
        For ``"ASCE7"`` (ASCE/SEI 7-16 §11.4.6): ``sds`` [g], ``sd1`` [g]
        (design spectral accelerations at short periods and at 1 s, > 0) and
        ``tl`` [s] (long-period transition period, > TS = SD1/SDS).

        For ``"EN1998"`` (EN 1998-1:2004 §3.2.2.2, horizontal elastic
        spectrum): ``ag`` [g] (reference peak ground acceleration on type A
        ground, > 0), ``ground_type`` (``"A"`` to ``"E"``), ``spectrum_type``
        (1 or 2, default 1), ``importance_factor`` γI (> 0, default 1; the
        design ground acceleration is ag·γI) and ``damping`` ξ (ratio of
        critical, default 0.05).

        For ``"table"`` (a user-defined target): ``periods_table`` [s]
        (strictly increasing, > 0, at least two) and ``sa_table`` [g] (> 0,
        same length); values between table points follow straight lines on
        log-log axes, and periods outside the table are refused.

    Returns
    -------
    DesignSpectrum
        ``.sa`` [g] at `periods`, with the document, clause and parameters.

    Raises
    ------
    TypeError
        A parameter is missing, unknown for the standard, or not a number.
    ValueError
        Unknown standard (the accepted ones are listed), a non-positive
        acceleration or period parameter, ``tl`` <= TS, a ground type other
        than A-E, a spectrum type other than 1 or 2, a damping outside
        [0, 1) (a hint when it looks like a percentage), a bad table, or a
        period outside the table.

    Warns
    -----
    DesignSpectrumWarning
        EN 1998 at periods beyond 4 s: eq. (3.5) is given up to 4 s, and the
        values beyond extend it.

    Notes
    -----
    ASCE/SEI 7-16 §11.4.6, with T0 = 0.2·SD1/SDS and TS = SD1/SDS::

        Sa = SDS·(0.4 + 0.6·T/T0)   T < T0
        Sa = SDS                    T0 <= T <= TS
        Sa = SD1/T                  TS < T <= TL
        Sa = SD1·TL/T²              T > TL

    EN 1998-1:2004 §3.2.2.2, eqs. (3.2)-(3.5), with ag·γI the design ground
    acceleration, S, TB, TC, TD from Table 3.2 (Type 1) or 3.3 (Type 2) and
    η = sqrt(10/(5 + ξ[%])) >= 0.55 (eq. 3.6)::

        Se = ag·S·(1 + T/TB·(2.5η - 1))   0 <= T <= TB
        Se = 2.5·ag·S·η                   TB <= T <= TC
        Se = 2.5·ag·S·η·TC/T              TC <= T <= TD
        Se = 2.5·ag·S·η·TC·TD/T²          TD <= T <= 4 s

    The EN 1998 table values are the standard's recommended ones, written
    from memory (see ``EN1998_GROUND_PARAMETERS``); a National Annex may set
    others.

    References
    ----------
    American Society of Civil Engineers (2017). Minimum Design Loads and
    Associated Criteria for Buildings and Other Structures, ASCE/SEI 7-16,
    §11.4.6 Design response spectrum. Reston, VA: ASCE.

    CEN (2004). EN 1998-1:2004 Eurocode 8: Design of structures for
    earthquake resistance - Part 1: General rules, seismic actions and rules
    for buildings, §3.2.2.2 Horizontal elastic response spectrum. Brussels:
    European Committee for Standardization.

    Examples
    --------
    >>> spec = design_spectrum([0.0, 0.5, 2.0], "ASCE7", sds=1.0, sd1=0.6, tl=8.0)
    >>> spec.sa.round(3)
    array([0.4, 1. , 0.3])
    >>> design_spectrum([0.3], "EN1998", ag=0.25, ground_type="C").sa.round(4)
    array([0.7188])
    """
    period_values = check_periods(periods, "periods")
    if not isinstance(standard, str):
        raise TypeError(f"`standard` must be a string, got {type(standard).__name__} {standard!r}")
    key = {name.lower(): name for name in DESIGN_STANDARDS}.get(standard.strip().lower())
    if key is None:
        accepted = ", ".join(repr(name) for name in DESIGN_STANDARDS)
        raise ValueError(f"`standard` {standard!r} is not known; use one of {accepted}")
    given = _check_parameter_names(key, parameters)
    if key == "ASCE7":
        return _asce7(period_values, given)
    if key == "EN1998":
        return _en1998(period_values, given)
    return _table(period_values, given)


def _check_parameter_names(standard: str, parameters: dict[str, Any]) -> dict[str, Any]:
    required, optional = DESIGN_STANDARDS[standard]
    unknown = sorted(set(parameters) - set(required) - set(optional))
    accepted = ", ".join(f"`{name}`" for name in (*required, *optional))
    if unknown:
        raise TypeError(f"{standard} takes the parameters {accepted}; got unknown {', '.join(unknown)}")
    missing = [name for name in required if name not in parameters]
    if missing:
        raise TypeError(f"{standard} needs {', '.join(f'`{name}`' for name in missing)} (it takes {accepted})")
    return {**optional, **parameters}


def _asce7(periods: NDArray[np.float64], given: dict[str, Any]) -> DesignSpectrum:
    sds = check_positive(given["sds"], "sds")
    sd1 = check_positive(given["sd1"], "sd1")
    tl = check_positive(given["tl"], "tl")
    t0 = 0.2 * sd1 / sds
    ts = sd1 / sds
    if not tl > ts:
        raise ValueError(
            f"`tl` must exceed TS = sd1/sds = {ts:.6g} s for the four branches of §11.4.6 to follow "
            f"each other, got {tl!r}; check `sds` and `sd1` (in g) and the long-period map value"
        )
    safe = np.where(periods > 0.0, periods, 1.0)
    sa = np.select(
        [periods < t0, periods <= ts, periods <= tl],
        [sds * (0.4 + 0.6 * periods / t0), np.full(periods.shape, sds), sd1 / safe],
        sd1 * tl / safe**2,
    )
    parameters = (("sds", sds), ("sd1", sd1), ("tl", tl), ("T0", t0), ("TS", ts))
    return DesignSpectrum(periods, sa, "ASCE7", "ASCE/SEI 7-16", "§11.4.6 design response spectrum", parameters)


def _en1998(periods: NDArray[np.float64], given: dict[str, Any]) -> DesignSpectrum:
    ag = check_positive(given["ag"], "ag")
    importance = check_positive(given["importance_factor"], "importance_factor")
    damping = check_damping(given["damping"], "damping")
    kind = given["spectrum_type"]
    if isinstance(kind, bool) or kind not in (1, 2):
        raise ValueError(f"`spectrum_type` must be 1 or 2 (EN 1998-1:2004 §3.2.2.2(2)P), got {kind!r}")
    ground = given["ground_type"]
    if not isinstance(ground, str) or ground.strip().upper() not in EN1998_GROUND_PARAMETERS[1]:
        raise ValueError(
            f"`ground_type` must be one of 'A', 'B', 'C', 'D', 'E' (EN 1998-1:2004 Table 3.1), got {ground!r}; "
            "ground types S1 and S2 need special studies and have no tabulated spectrum"
        )
    ground = ground.strip().upper()
    soil, tb, tc, td = EN1998_GROUND_PARAMETERS[int(kind)][ground]
    eta = max(math.sqrt(10.0 / (5.0 + 100.0 * damping)), EN1998_ETA_MIN)
    design_ag = ag * importance
    plateau = 2.5 * design_ag * soil * eta
    if np.any(periods > EN1998_LONGEST_PERIOD):
        _notices.warn(
            DesignSpectrumWarning(
                f"EN 1998-1:2004 eq. (3.5) is given for periods up to {EN1998_LONGEST_PERIOD:g} s; "
                f"{int(np.count_nonzero(periods > EN1998_LONGEST_PERIOD))} period(s) up to {periods.max():g} s "
                "extend it (the standard's Annex A gives the displacement spectrum beyond)"
            ),
            stacklevel=3,
        )
    safe = np.where(periods > 0.0, periods, 1.0)
    sa = np.select(
        [periods <= tb, periods <= tc, periods <= td],
        [design_ag * soil * (1.0 + periods / tb * (2.5 * eta - 1.0)), np.full(periods.shape, plateau),
         plateau * tc / safe],
        plateau * tc * td / safe**2,
    )  # fmt: skip
    parameters = (
        ("ag", ag), ("ground_type", ground), ("spectrum_type", int(kind)), ("importance_factor", importance),
        ("damping", damping), ("ag_design", design_ag), ("S", soil), ("TB", tb), ("TC", tc), ("TD", td),
        ("eta", eta),
    )  # fmt: skip
    table = "Table 3.2" if kind == 1 else "Table 3.3"
    clause = f"§3.2.2.2 horizontal elastic response spectrum, eqs. (3.2)-(3.6), {table}"
    return DesignSpectrum(periods, sa, "EN1998", "EN 1998-1:2004", clause, parameters)


def _table(periods: NDArray[np.float64], given: dict[str, Any]) -> DesignSpectrum:
    table_t = _validate.as_vector(given["periods_table"], "periods_table", min_size=2)
    table_sa = _validate.as_vector(given["sa_table"], "sa_table", min_size=2)
    if table_sa.size != table_t.size:
        raise ValueError(
            f"`sa_table` must have one value per period of `periods_table` ({table_t.size}), got {table_sa.size}"
        )
    if table_t[0] <= 0.0:
        raise ValueError(
            f"`periods_table` must be > 0 s for log-log interpolation, got {table_t[0]!r} first; "
            "give the zero-period value at a short period such as 0.01 s"
        )
    falling = np.flatnonzero(np.diff(table_t) <= 0.0)
    if falling.size:
        index = int(falling[0]) + 1
        raise ValueError(
            f"`periods_table` must increase strictly; index {index} holds {table_t[index]!r} "
            f"after {table_t[index - 1]!r}"
        )
    bad = np.flatnonzero(table_sa <= 0.0)
    if bad.size:
        index = int(bad[0])
        raise ValueError(f"`sa_table` must be > 0 g for log-log interpolation; index {index} holds {table_sa[index]!r}")
    outside = np.flatnonzero((periods < table_t[0]) | (periods > table_t[-1]))
    if outside.size:
        index = int(outside[0])
        raise ValueError(
            f"`periods` index {index} holds {periods[index]!r} s, outside the table "
            f"[{table_t[0]:g}, {table_t[-1]:g}] s; a target is not extrapolated: extend the table"
        )
    sa = np.exp(np.interp(np.log(periods), np.log(table_t), np.log(table_sa)))
    parameters = (("periods_table", tuple(table_t.tolist())), ("sa_table", tuple(table_sa.tolist())),
                  ("points", int(table_t.size)))  # fmt: skip
    return DesignSpectrum(periods, sa, "table", "user-defined target", "log-log interpolation of a table", parameters)
