"""Amplitude scaling of a suite of records to a target spectrum, with the checks of two standards.

Spectra and target share one unit (any); `DesignSpectrum` results (in g)
are accepted as targets, so give the records' spectra in g with them, or
pass ``target.sa_in("m/s2")``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .checks import check_periods, check_positive
from .design import DesignSpectrum

__all__ = ["DEFAULT_FACTOR_LIMITS", "SCALING_RULES", "SuitePreset", "SuiteScaling", "scale_suite", "suite_preset"]

#: Accepted scaling rules.
SCALING_RULES = ("least_squares", "common", "both")
#: Scale factors outside this range are reported as a problem: 0.25 to 4 is
#: common practice for amplitude scaling of recorded motions (not a rule of
#: either standard here).
DEFAULT_FACTOR_LIMITS = (0.25, 4.0)
#: Relative slack when checking the fraction: the common factor makes the
#: smallest ratio equal the fraction up to round-off of a mean and a division.
_SLACK = 1e-12


@dataclass(frozen=True, slots=True)
class SuitePreset:
    """The scaling rule of a standard for a structure of period `period`, from `suite_preset`.

    Attributes
    ----------
    standard, edition, clause : str
        ``"ASCE7"`` or ``"EN1998"``, the document and the clause.
    period : float
        The structure's fundamental period T (ASCE 7) or T1 (EN 1998) [s].
    period_range : tuple of float
        (0.2·T, 2.0·T) [s].
    fraction : float
        The suite mean must not fall below this fraction of the target (0.9).
    min_records : int
        Fewest records the clause accepts.
    zero_period_fraction : float or None
        EN 1998 only: the mean at T = 0 must reach this fraction (1.0) of the
        target (mean PGA >= ag·S); None when the clause has no such rule.
    spectrum : str
        Which spectra of the records the clause compares with the target.
    """

    standard: str
    edition: str
    clause: str
    period: float
    period_range: tuple[float, float]
    fraction: float
    min_records: int
    zero_period_fraction: float | None
    spectrum: str

    def describe(self) -> str:
        """One line for reports: document, clause, rule and that the details are from memory."""
        low, high = self.period_range
        extra = "; mean at T = 0 not below the target's (ag·S)" if self.zero_period_fraction else ""
        return (
            f"{self.edition} {self.clause}: mean of the {self.spectrum} of at least {self.min_records} records "
            f"not below {self.fraction:.0%} of the target over {low:.4g}-{high:.4g} s "
            f"(0.2T-2T, T = {self.period:g} s){extra} (clause details from memory)"
        )


def suite_preset(standard: str, period: float) -> SuitePreset:
    """The suite-scaling rule of ASCE/SEI 7-16 or EN 1998-1:2004 for fundamental period `period`.

    Parameters
    ----------
    standard : {"ASCE7", "EN1998"}
        Which standard (case is ignored).
    period : float
        Fundamental period of the structure T [s], > 0.

    Returns
    -------
    SuitePreset
        Pass it as `period_range` of `scale_suite`.

    Raises
    ------
    ValueError
        Unknown standard (the accepted ones are listed) or a period <= 0.

    Notes
    -----
    From memory of the published clauses (check the edition in force):

    * ASCE/SEI 7-16 §16.2.3.2 (amplitude scaling): the mean of the
      maximum-direction (RotD100) spectra of the suite must not fall below
      90 % of the target over the period range of §16.2.3.1, here 0.2T to
      2.0T; §16.2.2 asks for at least 11 records.
    * EN 1998-1:2004 §3.2.3.1.2(4), applied to recorded motions by
      §3.2.3.1.3: at least 3 accelerograms; the mean zero-period spectral
      value not below ag·S; between 0.2T1 and 2T1 no value of the mean 5 %
      damped elastic spectrum below 90 % of the elastic response spectrum.

    References
    ----------
    American Society of Civil Engineers (2017). Minimum Design Loads and
    Associated Criteria for Buildings and Other Structures, ASCE/SEI 7-16,
    Chapter 16 Nonlinear response history analysis, §16.2. Reston, VA: ASCE.

    CEN (2004). EN 1998-1:2004 Eurocode 8: Design of structures for
    earthquake resistance - Part 1, §3.2.3.1 Time-history representation.
    Brussels: European Committee for Standardization.

    Examples
    --------
    >>> suite_preset("EN1998", 0.8).period_range
    (0.16, 1.6)
    """
    if not isinstance(standard, str):
        raise TypeError(f"`standard` must be a string, got {type(standard).__name__} {standard!r}")
    value = check_positive(period, "period")
    key = standard.strip().upper()
    scaled = (round(0.2 * value, 12), round(2.0 * value, 12))
    if key == "ASCE7":
        return SuitePreset("ASCE7", "ASCE/SEI 7-16", "§16.2.3.2", value, scaled, 0.9, 11, None,
                           "maximum-direction (RotD100) spectra")  # fmt: skip
    if key == "EN1998":
        return SuitePreset("EN1998", "EN 1998-1:2004", "§3.2.3.1.2(4)", value, scaled, 0.9, 3, 1.0,
                           "5 %-damped elastic spectra")  # fmt: skip
    raise ValueError(f"`standard` {standard!r} has no suite-scaling preset; use 'ASCE7' or 'EN1998'")


@dataclass(frozen=True, slots=True, eq=False)
class SuiteScaling:
    """Scale factors of a suite and the checks they pass, returned by `scale_suite`.

    Attributes
    ----------
    periods : ndarray (n_periods,)
        T [s].
    factors : ndarray (n_records,)
        The scale factor of each record: ``record_factors * common_factor``.
    record_factors : ndarray (n_records,)
        Per-record least-squares factors (ones for rule ``"common"``).
    common_factor : float
        The factor applied to the whole suite on top (1 for ``"least_squares"``).
    rule : str
        ``"least_squares"``, ``"common"`` or ``"both"``.
    fraction : float
        Required suite mean / target over the range.
    period_range : tuple of float
        (low, high) [s], both included.
    in_range : ndarray of bool (n_periods,)
        Periods inside the range.
    ratio : ndarray (n_periods,)
        Mean over the records of the scaled spectra, divided by the target.
    passes : ndarray of bool (n_in_range,)
        ``ratio >= fraction`` at each period in the range.
    controlling_period : float
        The period [s] with the smallest ratio (relative to what is required
        there): the one that sets the common factor.
    ok : bool
        True when there are no problems.
    problems : tuple of str
        Every rule the suite does not meet, or could not be checked, in words.
    clause : str
        The rule applied, with its source.
    preset : SuitePreset or None
        The standard's preset, when one was given.
    """

    periods: NDArray[np.float64]
    factors: NDArray[np.float64]
    record_factors: NDArray[np.float64]
    common_factor: float
    rule: str
    fraction: float
    period_range: tuple[float, float]
    in_range: NDArray[np.bool_]
    ratio: NDArray[np.float64]
    passes: NDArray[np.bool_]
    controlling_period: float
    ok: bool
    problems: tuple[str, ...]
    clause: str
    preset: SuitePreset | None

    def __repr__(self) -> str:
        return (
            f"SuiteScaling(rule={self.rule!r}, records={self.factors.size}, "
            f"controlling_period={self.controlling_period:g} s, ok={self.ok}, problems={len(self.problems)})"
        )

    def describe(self) -> str:
        """A few lines for reports: the rule, the factors and every problem."""
        lines = [self.clause, "factors: " + ", ".join(f"{f:.4g}" for f in self.factors)]
        lines.append(f"controlling period {self.controlling_period:g} s; lowest ratio {self.ratio[self.in_range].min():.4g}")
        lines.extend(f"problem: {text}" for text in self.problems)
        return "\n".join(lines)


def scale_suite(
    periods: ArrayLike,
    spectra: ArrayLike,
    target: ArrayLike | DesignSpectrum,
    period_range: tuple[float, float] | SuitePreset,
    rule: str = "common",
    fraction: float = 0.9,
    *,
    factor_limits: tuple[float, float] = DEFAULT_FACTOR_LIMITS,
) -> SuiteScaling:
    """Scale factors that bring a suite's mean spectrum to a target over a period range.

    Parameters
    ----------
    periods : array_like (n_periods,)
        Periods T [s] of the spectra, >= 0, no repeats.
    spectra : array_like (n_records, n_periods)
        Spectral accelerations of each record (e.g. RotD100 or PSA), in the
        target's unit; > 0 inside the range. One record may be 1-D.
    target : array_like (n_periods,) or DesignSpectrum
        Target spectrum at `periods`, > 0 inside the range. A DesignSpectrum
        must have been evaluated at `periods`; it is in g.
    period_range : (low, high) or SuitePreset
        Periods [s] over which the rule applies, both included; or a
        standard's preset from `suite_preset`, which also sets the fraction,
        the fewest records and (EN 1998) the zero-period check.
    rule : {"common", "least_squares", "both"}, default "common"
        ``"least_squares"``: one factor per record minimising the squared
        log misfit over the range. ``"common"``: one factor for the whole
        suite, the smallest for which the mean is at least `fraction` of the
        target at every period in the range. ``"both"``: the per-record
        least-squares factors, then a common factor on top.
    fraction : float, default 0.9
        Required mean / target, in (0, 1]. With a preset it must equal the
        preset's.
    factor_limits : (low, high), default (0.25, 4.0)
        Factors outside are reported in ``.problems`` (common practice).

    Returns
    -------
    SuiteScaling
        ``.factors``, ``.ratio``, ``.passes``, ``.controlling_period``,
        ``.ok`` and ``.problems``.

    Raises
    ------
    TypeError
        A number argument is not a number, or `period_range` is neither a
        pair nor a SuitePreset.
    ValueError
        Shapes that do not match the periods, values <= 0 inside the range,
        no period inside the range, an unknown rule, a bad fraction or
        factor limits, a fraction that contradicts the preset.

    Notes
    -----
    Least squares, over the N periods of the range::

        ln f_i = (1/N) Σ (ln target(T) - ln S_i(T))

    Common factor F over record factors f_i (ones for ``"common"``)::

        F = fraction / min over T in range of [mean_i(f_i·S_i(T)) / target(T)]

    so that the smallest ratio equals `fraction` at the controlling period.
    With the EN 1998 preset and T = 0 among the periods, F is also at least
    what lifts the mean at T = 0 to the target there (mean PGA >= ag·S).
    A suite that cannot meet a rule (too few records, factors outside
    `factor_limits`, a range reaching past the periods given, a rule left
    unchecked) is reported in ``.problems`` and ``.ok`` is False.

    References
    ----------
    See `suite_preset` for the clauses of ASCE/SEI 7-16 and EN 1998-1:2004.

    Examples
    --------
    >>> periods = [0.5, 1.0, 2.0]
    >>> spectra = [[0.5, 0.25, 0.125], [1.0, 0.5, 0.25]]
    >>> result = scale_suite(periods, spectra, [1.0, 0.5, 0.25], (0.5, 2.0), rule="least_squares")
    >>> result.factors.tolist()
    [2.0, 1.0]
    """
    period_values = check_periods(periods, "periods")
    if np.unique(period_values).size != period_values.size:
        raise ValueError("`periods` must not repeat a period")
    values = _check_spectra(spectra, period_values.size)
    target_values = _check_target(target, period_values)
    preset = period_range if isinstance(period_range, SuitePreset) else None
    low, high = _check_range(period_range)
    if rule not in SCALING_RULES:
        raise ValueError(f"`rule` {rule!r} is not known; use one of {', '.join(repr(r) for r in SCALING_RULES)}")
    required = _check_fraction(fraction, preset)
    limit_low, limit_high = _check_limits(factor_limits)

    in_range = (period_values >= low * (1 - _SLACK)) & (period_values <= high * (1 + _SLACK))
    if not in_range.any():
        raise ValueError(
            f"`period_range` [{low:g}, {high:g}] s holds none of the periods, which span "
            f"{period_values.min():g}-{period_values.max():g} s; give periods inside the range"
        )
    _check_positive_in_range(values, target_values, in_range, period_values)

    problems: list[str] = []
    conditions = [(in_range, required, "range")]
    if preset is not None and preset.zero_period_fraction is not None:
        rigid = period_values == 0.0
        if rigid.any():
            conditions.append((rigid, preset.zero_period_fraction, "zero period"))
            _check_positive_in_range(values, target_values, rigid, period_values)
        else:
            problems.append(
                f"{preset.edition} {preset.clause}b (mean zero-period value not below ag·S) not checked: "
                "the periods hold no 0; add period 0 (PGA) to check it"
            )

    if rule == "common":
        record_factors = np.ones(values.shape[0])
    else:
        logs = np.log(target_values[in_range])[None, :] - np.log(values[:, in_range])
        record_factors = np.exp(logs.mean(axis=1))
    mean = (record_factors[:, None] * values).mean(axis=0)
    ratio = np.full(period_values.size, np.nan)
    positive = target_values > 0.0
    ratio[positive] = mean[positive] / target_values[positive]
    # the controlling period: the smallest ratio relative to what each condition requires
    shortfall, controlling = math.inf, math.nan
    for mask, needed, _ in conditions:
        index = np.flatnonzero(mask)[np.argmin(ratio[mask])]
        if ratio[index] / needed < shortfall:
            shortfall, controlling = ratio[index] / needed, float(period_values[index])
    common = 1.0 / shortfall if rule in ("common", "both") else 1.0
    factors = record_factors * common
    ratio = ratio * common
    passes = ratio[in_range] >= required * (1 - _SLACK)

    problems.extend(_problems(preset, values.shape[0], factors, (limit_low, limit_high), passes, ratio,
                              period_values, in_range, required, (low, high), conditions))  # fmt: skip
    return SuiteScaling(
        periods=period_values,
        factors=factors,
        record_factors=record_factors,
        common_factor=float(common),
        rule=rule,
        fraction=required,
        period_range=(low, high),
        in_range=in_range,
        ratio=ratio,
        passes=passes,
        controlling_period=controlling,
        ok=not problems,
        problems=tuple(problems),
        clause=_clause_text(rule, required, (low, high), preset),
        preset=preset,
    )


def _problems(preset, n_records, factors, limits, passes, ratio, periods, in_range, required, bounds, conditions):
    """Texts of every rule the scaled suite does not meet."""
    found = []
    if preset is not None and n_records < preset.min_records:
        found.append(
            f"{preset.edition} {preset.clause} asks for at least {preset.min_records} records; the suite has {n_records}"
        )
    outside = np.flatnonzero((factors < limits[0]) | (factors > limits[1]))
    if outside.size:
        listed = ", ".join(f"record {i}: {factors[i]:.4g}" for i in outside[:5])
        hint = ""
        if np.all((factors > 0.08) & (factors < 0.13)) or np.all((factors > 7.5) & (factors < 12.5)):
            hint = "; factors near 1/9.81 or 9.81 suggest spectra in m/s² against a target in g (or the reverse)"
        found.append(
            f"{outside.size} factor(s) outside {limits[0]:g}-{limits[1]:g} (common practice): {listed}{hint}"
        )
    if not passes.all():
        failing = np.flatnonzero(in_range)[~passes]
        worst = failing[np.argmin(ratio[failing])]
        found.append(
            f"the suite mean is below {required:.0%} of the target at {failing.size} period(s) in the range; "
            f"lowest {ratio[worst]:.3f} at {periods[worst]:g} s"
        )
    for mask, needed, label in conditions[1:]:
        if ratio[mask].min() < needed * (1 - _SLACK):
            found.append(f"the suite mean at T = 0 is {ratio[mask].min():.3f} of the target; the {label} rule asks {needed:.0%}")
    low, high = bounds
    if low < periods.min() * (1 - _SLACK) or high > periods.max() * (1 + _SLACK):
        found.append(
            f"the period range {low:g}-{high:g} s reaches past the periods given ({periods.min():g}-"
            f"{periods.max():g} s); only the periods inside were checked: extend the period grid"
        )
    return found


def _clause_text(rule: str, fraction: float, bounds: tuple[float, float], preset: SuitePreset | None) -> str:
    what = {
        "least_squares": "per-record least-squares factors (log misfit)",
        "common": f"one common factor: suite mean >= {fraction:.0%} of the target",
        "both": f"per-record least-squares factors, then a common factor: suite mean >= {fraction:.0%} of the target",
    }[rule]
    text = f"{what} over {bounds[0]:.4g}-{bounds[1]:.4g} s"
    return f"{text}; {preset.describe()}" if preset is not None else text


def _check_spectra(spectra: ArrayLike, n_periods: int) -> NDArray[np.float64]:
    try:
        values = np.array(spectra, dtype=np.float64)
    except (TypeError, ValueError) as exc:
        raise TypeError(f"`spectra` must be numbers of shape (records, periods), got {spectra!r:.80}") from exc
    if values.ndim == 1:
        values = values[None, :]
    if values.ndim != 2 or values.shape[1] != n_periods or values.shape[0] == 0:
        raise ValueError(
            f"`spectra` must have shape (records, {n_periods}) to match `periods`, got {values.shape}"
        )
    if not np.all(np.isfinite(values)):
        raise ValueError("`spectra` must be finite")
    return values


def _check_target(target: ArrayLike | DesignSpectrum, periods: NDArray[np.float64]) -> NDArray[np.float64]:
    if isinstance(target, DesignSpectrum):
        if target.periods.shape != periods.shape or not np.allclose(target.periods, periods, rtol=1e-12, atol=0):
            raise ValueError(
                "`target` is a DesignSpectrum evaluated at other periods than `periods`; "
                "evaluate it with design_spectrum(periods, ...)"
            )
        return np.array(target.sa, dtype=np.float64)
    try:
        values = np.array(target, dtype=np.float64).reshape(-1)
    except (TypeError, ValueError) as exc:
        raise TypeError(f"`target` must be numbers, one per period, got {target!r:.80}") from exc
    if values.shape != periods.shape:
        raise ValueError(f"`target` must hold one value per period ({periods.size}), got {values.size}")
    if not np.all(np.isfinite(values)):
        raise ValueError("`target` must be finite")
    return values


def _check_range(period_range: object) -> tuple[float, float]:
    if isinstance(period_range, SuitePreset):
        return period_range.period_range
    low_value, high_value = _pair(period_range, "period_range", "a (low, high) pair of periods or a suite_preset(...)")
    low = check_positive(low_value, "period_range low") if low_value != 0 else 0.0
    high = check_positive(high_value, "period_range high")
    if not high > low:
        raise ValueError(f"`period_range` must have high > low, got ({low!r}, {high!r})")
    return low, high


def _pair(value: object, argument: str, kind: str) -> tuple[object, object]:
    if not isinstance(value, (tuple, list, np.ndarray)) or len(value) != 2:
        raise TypeError(f"`{argument}` must be {kind}, got {value!r:.80}")
    return value[0], value[1]


def _check_fraction(fraction: object, preset: SuitePreset | None) -> float:
    value = check_positive(fraction, "fraction")
    if value > 1.0:
        hint = f"; {value:g} looks like a percentage: enter {value / 100:g}" if value <= 100 else ""
        raise ValueError(f"`fraction` must lie in (0, 1], got {value!r}{hint}")
    if preset is not None and not math.isclose(value, preset.fraction, rel_tol=1e-12):
        raise ValueError(
            f"`fraction` {value:g} contradicts the {preset.edition} preset, which sets {preset.fraction:g}; "
            "leave `fraction` out, or give a (low, high) range instead of the preset"
        )
    return value


def _check_limits(factor_limits: object) -> tuple[float, float]:
    low_value, high_value = _pair(factor_limits, "factor_limits", "a (low, high) pair")
    low = check_positive(low_value, "factor_limits low")
    high = check_positive(high_value, "factor_limits high")
    if not high > low:
        raise ValueError(f"`factor_limits` must have high > low, got ({low!r}, {high!r})")
    return low, high


def _check_positive_in_range(values, target, mask, periods) -> None:
    bad_target = np.flatnonzero(mask & (target <= 0.0))
    if bad_target.size:
        index = int(bad_target[0])
        raise ValueError(f"`target` must be > 0 inside the period range; {periods[index]:g} s holds {target[index]!r}")
    bad = np.argwhere((values <= 0.0) & mask[None, :])
    if bad.size:
        record, index = (int(i) for i in bad[0])
        raise ValueError(
            f"`spectra` must be > 0 inside the period range; record {record} at {periods[index]:g} s "
            f"holds {values[record, index]!r}"
        )
