"""Plausibility checks of a record and its spectrum periods: findings to show, never errors.

A record can be perfectly readable and still be wrong in a way no parser
sees: a time step typed in seconds that was meant in milliseconds, samples
in cm/s² declared as g, periods far beyond the record, an accelerogram whose
integrated velocity drifts. `check_record` looks for these and returns
`Finding` objects; the caller lists them (the Summary sheet, the command
line's ``groundstep: note:`` lines, ``STEP_CHECK``). Nothing is changed.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from .record import Record
from .units import ACCELERATION_UNITS, STANDARD_GRAVITY

__all__ = [
    "DRIFT_DISPLACEMENT_SHARE",
    "DRIFT_VELOCITY_SHARE",
    "Finding",
    "PGA_RANGE_G",
    "TIME_STEP_RANGE",
    "check_record",
]

#: Usual time steps of strong-motion records [s]: 2000 to 20 samples per second
#: (common practice for digital accelerographs and processed records).
TIME_STEP_RANGE = (0.0005, 0.05)
#: Peak ground accelerations a record plausibly has [g]: above 1e-4 g is felt
#: motion above instrument noise; the largest recorded PGAs are a few g, so
#: more than 5 g points to a wrong unit (common practice; values from memory).
PGA_RANGE_G = (1e-4, 5.0)
#: Residual ground velocity, as a share of the peak ground velocity, above
#: which the record is said to drift (common practice for uncorrected records).
DRIFT_VELOCITY_SHARE = 0.1
#: Final ground displacement, as a share of the peak ground displacement, at
#: or above which the displacement is said to drift (still at its peak when the
#: record ends; common practice).
DRIFT_DISPLACEMENT_SHARE = 0.9


@dataclass(frozen=True, slots=True)
class Finding:
    """One plausibility finding.

    Attributes
    ----------
    check : str
        Which check: ``"time_step"``, ``"pga_unit"``, ``"period_beyond_record"``,
        ``"period_below_two_dt"``, ``"velocity_drift"`` or ``"displacement_drift"``.
    message : str
        One sentence for a reader: what was found, the rule, what to do.
    value : float
        The value that triggered it (dt [s], PGA [declared unit], period [s]
        or the drift share).
    """

    check: str
    message: str
    value: float

    def __str__(self) -> str:
        return self.message


def check_record(record: Record, periods: ArrayLike | None = None) -> tuple[Finding, ...]:
    """Look for signs that a record or its periods are not what was meant.

    Parameters
    ----------
    record : Record
        The ground acceleration.
    periods : array_like, optional
        Oscillator periods [s] the record will be used for; 0 (rigid) is
        never a finding.

    Returns
    -------
    tuple of Finding
        Empty when nothing looks wrong; in the order time step, PGA and
        unit, periods, drift.

    Notes
    -----
    * time step outside `TIME_STEP_RANGE`;
    * PGA outside `PGA_RANGE_G`, with the units in which the same numbers
      give a plausible PGA;
    * a period longer than the record's duration (the peak then comes from the
      free vibration after the record ends);
    * a period shorter than 2·dt, the Nyquist period: the record holds no
      content there (Shannon 1949);
    * residual ground velocity above `DRIFT_VELOCITY_SHARE` of the peak, or a
      ground displacement still at `DRIFT_DISPLACEMENT_SHARE` of its peak at
      the end: a baseline offset, for which ``baseline_correct`` (least-squares
      polynomial removal) is the usual remedy.

    References
    ----------
    Shannon, C. E. (1949). Communication in the presence of noise.
    Proceedings of the IRE, 37(1), 10-21.

    Examples
    --------
    >>> import numpy as np
    >>> cycles = 336.0 * np.sin(np.linspace(0.0, 20.0 * np.pi, 2001))  # cm/s² numbers, declared as g
    >>> check_record(Record(cycles, dt=0.01, unit="g"))[0].check
    'pga_unit'
    """
    if not isinstance(record, Record):
        raise TypeError(f"`record` must be a Record, got {type(record).__name__}")
    findings: list[Finding] = []
    findings += _time_step(record)
    findings += _pga(record)
    if periods is not None:
        findings += _periods(record, np.atleast_1d(np.asarray(periods, dtype=np.float64)))
    findings += _drift(record)
    return tuple(findings)


def _time_step(record: Record) -> list[Finding]:
    low, high = TIME_STEP_RANGE
    dt = record.dt
    if low <= dt <= high:
        return []
    hint = ""
    if dt > high and low <= dt / 1000.0 <= high:
        hint = f"; if it was meant in milliseconds, dt = {dt / 1000.0:g} s"
    elif dt < low and low <= dt * 1000.0 <= high:
        hint = f"; if it was meant in seconds, dt = {dt * 1000.0:g} s"
    return [Finding(
        "time_step",
        f"time step dt = {dt:g} s is outside the usual {low:g} to {high:g} s of strong-motion records{hint}",
        dt,
    )]  # fmt: skip


def _pga(record: Record) -> list[Finding]:
    low, high = PGA_RANGE_G
    peak = float(np.max(np.abs(record.accel_in(record.unit))))
    pga_g = record.pga / STANDARD_GRAVITY
    if low <= pga_g <= high or peak == 0.0:
        return []
    likely = [
        unit for unit, factor in ACCELERATION_UNITS.items()
        if unit != record.unit and low <= peak * factor / STANDARD_GRAVITY <= high
        and unit not in ("gal",)  # the alias of cm/s2
    ]  # fmt: skip
    likely.sort(key=lambda unit: abs(np.log10(peak * ACCELERATION_UNITS[unit] / STANDARD_GRAVITY / 0.3)))
    hint = f"; the numbers would be plausible in {' or '.join(likely[:2])}" if likely else ""
    side = "above" if pga_g > high else "below"
    return [Finding(
        "pga_unit",
        f"PGA {peak:.4g} {record.unit}{'' if record.unit == 'g' else f' ({pga_g:.3g} g)'} is {side} the plausible {low:g} to {high:g} g for the "
        f"declared unit {record.unit!r}{hint}: check the unit",
        peak,
    )]  # fmt: skip


def _periods(record: Record, periods: np.ndarray) -> list[Finding]:
    found: list[Finding] = []
    longest = float(np.max(periods)) if periods.size else 0.0
    if longest > record.duration:
        count = int(np.count_nonzero(periods > record.duration))
        found.append(Finding(
            "period_beyond_record",
            f"{count} period(s) up to T = {longest:g} s are longer than the record ({record.duration:g} s): "
            "their peaks come from the free vibration after the record ends; read them with care",
            longest,
        ))  # fmt: skip
    positive = periods[periods > 0.0]
    shortest = float(np.min(positive)) if positive.size else np.inf
    if shortest < 2.0 * record.dt:
        count = int(np.count_nonzero(positive < 2.0 * record.dt))
        found.append(Finding(
            "period_below_two_dt",
            f"{count} period(s) down to T = {shortest:g} s are shorter than 2·dt = {2.0 * record.dt:g} s "
            "(the Nyquist period): the record holds no content there, so PSA there only approaches the PGA",
            shortest,
        ))  # fmt: skip
    return found


def _drift(record: Record) -> list[Finding]:
    found: list[Finding] = []
    velocity = record.ground_velocity()
    pgv = float(np.max(np.abs(velocity)))
    if pgv > 0.0 and abs(velocity[-1]) > DRIFT_VELOCITY_SHARE * pgv:
        share = abs(float(velocity[-1])) / pgv
        found.append(Finding(
            "velocity_drift",
            f"the ground velocity ends at {share:.0%} of its peak (more than {DRIFT_VELOCITY_SHARE:.0%}): the record "
            "drifts; consider baseline correction (groundstep.core.baseline_correct) before use",
            share,
        ))  # fmt: skip
    displacement = record.ground_displacement()
    pgd = float(np.max(np.abs(displacement)))
    if pgd > 0.0 and abs(displacement[-1]) >= DRIFT_DISPLACEMENT_SHARE * pgd:
        share = abs(float(displacement[-1])) / pgd
        found.append(Finding(
            "displacement_drift",
            f"the ground displacement ends at {share:.0%} of its peak: it is still drifting when the record ends; "
            "consider baseline correction (groundstep.core.baseline_correct) before use",
            share,
        ))  # fmt: skip
    return found
