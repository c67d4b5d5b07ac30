"""What a batch computes for every record: `SurveySettings`, read from a TOML file or built from options."""

from __future__ import annotations

import json
import os
from collections.abc import Mapping
from dataclasses import asdict, dataclass, field
from pathlib import Path
from typing import Any

from groundstep.addin.result.content import yielding_method
from groundstep.core import period_grid
from groundstep.core.checks import (
    check_damping,
    check_dampings,
    check_ductilities,
    check_hardening,
    check_integer,
    check_method,
    check_periods,
    check_positive,
)
from groundstep.core.defaults import DEFAULT_DAMPING, DEFAULT_DAMPINGS, DEFAULT_PERIOD_RANGE, DEFAULT_STEP_RATIO
from groundstep.core.methods import Method
from groundstep.core.processing import MAX_BASELINE_ORDER

__all__ = ["SETTINGS_KEYS", "SurveySettings", "read_settings", "settings_from_mapping"]


def _default_periods() -> tuple[float, ...]:
    return tuple(float(p) for p in period_grid(*DEFAULT_PERIOD_RANGE))


@dataclass(frozen=True, slots=True)
class SurveySettings:
    """The analyses of every record of a batch (checked when built).

    Attributes
    ----------
    periods : tuple of float
        Spectrum periods [s], >= 0 (default: 80 log-spaced from 0.02 to 10 s).
    dampings : tuple of float
        Damping ratios of the elastic spectra [-] (default 0.02, 0.05, 0.10).
    method : str or (beta, gamma)
        Integration method of the elastic spectra, as in
        ``groundstep.core.elastic_spectrum`` (default ``"average"``).
    max_step_ratio : float or None
        Largest h/T before a step is sub-divided (default 0.1).
    ductilities : tuple of float
        Target ductilities μ >= 1 of the constant-ductility spectra; empty
        (the default) computes none.
    ductility_damping : float
        Damping ratio of the constant-ductility spectra [-] (default 0.05).
    hardening : float
        Post-yield stiffness ratio α of the yielding oscillators, in [0, 1).
    baseline : int or None
        Degree of the velocity trend removed by
        ``groundstep.core.baseline_correct`` before anything else; ``None``
        (default) leaves the record as read.
    bandpass : (float or None, float or None) or None
        Corners (low, high) [Hz] of ``groundstep.core.bandpass``, applied
        after the baseline correction; ``None`` (default) does not filter.
    measures : bool
        Compute ``groundstep.core.ground_motion_measures`` (default True).

    Examples
    --------
    >>> s = SurveySettings(periods=(0.1, 1.0), dampings=(0.05,), ductilities=(2, 4))
    >>> s.ductilities, s.ductility_method.name
    ((2.0, 4.0), 'average')
    """

    periods: tuple[float, ...] = field(default_factory=_default_periods)
    dampings: tuple[float, ...] = DEFAULT_DAMPINGS
    method: Any = "average"
    max_step_ratio: float | None = DEFAULT_STEP_RATIO
    ductilities: tuple[float, ...] = ()
    ductility_damping: float = DEFAULT_DAMPING
    hardening: float = 0.0
    baseline: int | None = None
    bandpass: tuple[float | None, float | None] | None = None
    measures: bool = True

    def __post_init__(self) -> None:
        set_ = object.__setattr__
        set_(self, "periods", tuple(float(p) for p in check_periods(self.periods, "periods")))
        set_(self, "dampings", tuple(float(d) for d in check_dampings(self.dampings, "dampings")))
        method = self.method
        if isinstance(method, (list, tuple)):
            method = tuple(float(x) for x in method)
        check_method(method, "method")
        set_(self, "method", method)
        if self.max_step_ratio is not None:
            set_(self, "max_step_ratio", check_positive(self.max_step_ratio, "max_step_ratio"))
        ductilities = () if len(self.ductilities) == 0 else tuple(float(m) for m in check_ductilities(self.ductilities))
        set_(self, "ductilities", ductilities)
        set_(self, "ductility_damping", check_damping(self.ductility_damping, "ductility_damping"))
        set_(self, "hardening", check_hardening(self.hardening, "hardening"))
        if self.baseline is not None:
            order = check_integer(self.baseline, "baseline", minimum=1)
            if order > MAX_BASELINE_ORDER:
                raise ValueError(f"`baseline` must be an order from 1 to {MAX_BASELINE_ORDER}; got {order}")
            set_(self, "baseline", order)
        if self.bandpass is not None:
            corners = tuple(self.bandpass)
            if len(corners) != 2 or all(c is None for c in corners):
                raise ValueError(
                    f"`bandpass` must be (low, high) [Hz] with at least one corner; got {self.bandpass!r}"
                )
            set_(self, "bandpass", tuple(None if c is None else check_positive(c, "bandpass corner") for c in corners))
        if not isinstance(self.measures, bool):
            raise TypeError(f"`measures` must be true or false; got {self.measures!r}")

    def __repr__(self) -> str:
        return (
            f"SurveySettings({len(self.periods)} periods, dampings={self.dampings}, method={self.method!r}, "
            f"ductilities={self.ductilities}, baseline={self.baseline}, bandpass={self.bandpass}, "
            f"measures={self.measures})"
        )

    @property
    def elastic_method(self) -> Method:
        """The resolved method of the elastic spectra."""
        return check_method(self.method, "method")

    @property
    def ductility_method(self) -> Method:
        """The method of the yielding oscillators: `method` when it is an implicit Newmark pair, else average."""
        return yielding_method(self.elastic_method)

    def to_dict(self) -> dict[str, Any]:
        """The settings as plain JSON values (tuples become lists)."""
        return json.loads(json.dumps(asdict(self)))

    def fingerprint(self) -> str:
        """Canonical JSON text of the settings: equal settings, equal text (part of every record's hash)."""
        return json.dumps(self.to_dict(), sort_keys=True, separators=(",", ":"))


#: The keys a settings file may hold, with what each takes.
SETTINGS_KEYS: dict[str, str] = {
    "periods": "a list of periods [s], or a table {shortest, longest, count} of log-spaced ones",
    "dampings": "a damping ratio or a list of them, e.g. [0.02, 0.05, 0.1]",
    "method": '"average", "linear", "exact" or [beta, gamma]',
    "max_step_ratio": "largest h/T before a step is sub-divided, e.g. 0.1",
    "ductilities": "target ductilities, e.g. [2, 4]",
    "ductility_damping": "damping ratio of the constant-ductility spectra, e.g. 0.05",
    "hardening": "post-yield stiffness ratio in [0, 1)",
    "baseline": "degree of the baseline correction, 1 to 10",
    "bandpass": "a table {low = HZ, high = HZ} (either corner may be left out)",
    "measures": "true or false",
}


def settings_from_mapping(values: Mapping[str, Any], source: str = "settings") -> SurveySettings:
    """`SurveySettings` from a mapping of `SETTINGS_KEYS` (a parsed TOML file); unknown keys are refused.

    Parameters
    ----------
    values : mapping
        Keys of `SETTINGS_KEYS`; any left out keeps its default.
    source : str, default "settings"
        Named in error messages (the file name).

    Returns
    -------
    SurveySettings

    Raises
    ------
    ValueError, TypeError
        An unknown key, or a value the key does not take.

    Examples
    --------
    >>> settings_from_mapping({"periods": {"shortest": 0.1, "longest": 1.0, "count": 3}}).periods
    (0.1, 0.31622776601683794, 1.0)
    """
    unknown = sorted(set(values) - set(SETTINGS_KEYS))
    if unknown:
        raise ValueError(f"{source}: unknown setting {unknown[0]!r}; the settings are {', '.join(SETTINGS_KEYS)}")
    fields: dict[str, Any] = {}
    for key, value in values.items():
        if key == "periods" and isinstance(value, Mapping):
            grid = dict(value)
            if set(grid) != {"shortest", "longest", "count"}:
                raise ValueError(f"{source}: `periods` table needs exactly shortest, longest and count; got {sorted(grid)}")
            value = tuple(float(p) for p in period_grid(grid["shortest"], grid["longest"], grid["count"]))
        elif key == "bandpass":
            if not isinstance(value, Mapping) or not set(value) <= {"low", "high"}:
                raise ValueError(f"{source}: `bandpass` takes {SETTINGS_KEYS['bandpass']}; got {value!r}")
            value = (value.get("low"), value.get("high"))
        elif key in ("dampings", "ductilities") and isinstance(value, (int, float)):
            value = (value,)
        elif key in ("periods", "dampings", "ductilities") and isinstance(value, list):
            value = tuple(value)
        fields[key] = value
    return SurveySettings(**fields)


def read_settings(path: str | os.PathLike[str]) -> SurveySettings:
    """Read a TOML settings file (keys of `SETTINGS_KEYS`) with the standard library's ``tomllib``.

    Parameters
    ----------
    path : path-like
        The ``.toml`` file.

    Returns
    -------
    SurveySettings

    Raises
    ------
    OSError
        The file cannot be read.
    ValueError
        Not valid TOML (line and column named), an unknown key or a bad value.
    """
    try:
        import tomllib
    except ImportError:  # Python 3.10
        raise ValueError("reading a settings file needs Python 3.11 or later (tomllib)") from None
    source = Path(path)
    try:
        values = tomllib.loads(source.read_text(encoding="utf-8"))
    except tomllib.TOMLDecodeError as exc:
        raise ValueError(f"{source.name}: not valid TOML: {exc}") from None
    return settings_from_mapping(values, source.name)
