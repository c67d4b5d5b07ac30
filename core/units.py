"""The one unit table of groundstep: every conversion factor lives here.

Factors convert a value in the named unit to SI (metre, second). Results
leave core in SI; `output_units` gives the one converter that adapters use
to report them in a record's own units.

Examples
--------
>>> from groundstep.core.units import output_units
>>> units = output_units("cm/s2")
>>> units.length, units.velocity, units.energy
('cm', 'cm/s', 'cm2/s2')
>>> float(units.acceleration_from_si(1.0))  # 1 m/s² = 100 cm/s²
100.0
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = [
    "ACCELERATION_UNITS",
    "LENGTH_UNITS",
    "MATCHING_LENGTH_UNIT",
    "OutputUnits",
    "STANDARD_GRAVITY",
    "VELOCITY_UNITS",
    "normalise_unit",
    "output_units",
    "to_si",
]

STANDARD_GRAVITY = 9.80665  # m/s², standard acceleration of gravity (3rd CGPM, 1901)
INCH = 0.0254  # m, international inch (1959 agreement)
FOOT = 0.3048  # m, international foot (1959 agreement)

#: Acceleration units accepted for records, with the factor to m/s².
ACCELERATION_UNITS: dict[str, float] = {
    "g": STANDARD_GRAVITY,
    "m/s2": 1.0,
    "cm/s2": 0.01,
    "gal": 0.01,
    "mm/s2": 0.001,
    "in/s2": INCH,
    "ft/s2": FOOT,
}

#: Length units, with the factor to m.
LENGTH_UNITS: dict[str, float] = {
    "m": 1.0,
    "cm": 0.01,
    "mm": 0.001,
    "in": INCH,
    "ft": FOOT,
}

#: Velocity units, with the factor to m/s.
VELOCITY_UNITS: dict[str, float] = {f"{name}/s": factor for name, factor in LENGTH_UNITS.items()}

#: The length unit that goes with each acceleration unit when results are
#: reported in the record's own units: the acceleration unit's own length,
#: and metre for g.
MATCHING_LENGTH_UNIT: dict[str, str] = {
    "g": "m",
    "m/s2": "m",
    "cm/s2": "cm",
    "gal": "cm",
    "mm/s2": "mm",
    "in/s2": "in",
    "ft/s2": "ft",
}

_SPELLINGS = {"²": "2", "^2": "2", "/sec": "/s", "/s/s": "/s2", " ": "", "**2": "2"}


def normalise_unit(unit: object, table: dict[str, float], argument: str = "unit") -> str:
    """Return the table key for a unit name written in any usual spelling.

    Parameters
    ----------
    unit : str
        A unit name: ``"m/s^2"``, ``"M/S²"`` and ``"m/sec2"`` all become ``"m/s2"``.
    table : dict
        One of `ACCELERATION_UNITS`, `LENGTH_UNITS`, `VELOCITY_UNITS`.
    argument : str, default "unit"
        The argument or cell named in error messages.

    Returns
    -------
    str
        The key of `table`.

    Raises
    ------
    TypeError
        If `unit` is not a string.
    ValueError
        If the unit is not in `table`; the message lists the accepted names.

    Examples
    --------
    >>> normalise_unit("M/S²", ACCELERATION_UNITS)
    'm/s2'
    """
    if not isinstance(unit, str):
        raise TypeError(f"`{argument}` must be a unit name such as 'g' or 'm/s2', got {unit!r}")
    key = unit.strip().lower()
    for spelled, plain in _SPELLINGS.items():
        key = key.replace(spelled, plain)
    if key == "gals":
        key = "gal"
    if key not in table:
        accepted = ", ".join(repr(name) for name in table)
        raise ValueError(f"`{argument}` {unit!r} is not a known unit; use one of {accepted}")
    return key


def to_si(unit: str, table: dict[str, float]) -> float:
    """Return the factor that converts a value in `unit` to SI.

    Parameters
    ----------
    unit : str
        A unit name in any spelling `normalise_unit` accepts.
    table : dict
        The table the unit belongs to.

    Returns
    -------
    float
        SI value = value in `unit` × factor.

    Examples
    --------
    >>> to_si("in", LENGTH_UNITS)
    0.0254
    """
    return table[normalise_unit(unit, table)]


@dataclass(frozen=True, slots=True)
class OutputUnits:
    """The units results are reported in, and the conversions from SI to them.

    Build it with `output_units`. Energies are per unit mass, in
    length²/s² of the length unit.

    Attributes
    ----------
    acceleration : str
        A key of `ACCELERATION_UNITS`, e.g. ``"g"``.
    length : str
        A key of `LENGTH_UNITS`, e.g. ``"m"``.
    velocity : str
        ``length + "/s"``.
    energy : str
        ``length + "2/s2"`` (energy per unit mass).
    """

    acceleration: str
    length: str
    velocity: str
    energy: str

    def __post_init__(self) -> None:
        object.__setattr__(self, "acceleration", normalise_unit(self.acceleration, ACCELERATION_UNITS, "acceleration"))
        object.__setattr__(self, "length", normalise_unit(self.length, LENGTH_UNITS, "length"))
        object.__setattr__(self, "velocity", normalise_unit(self.velocity, VELOCITY_UNITS, "velocity"))
        if self.energy != f"{self.length}2/s2":
            raise ValueError(f"`energy` must be {self.length + '2/s2'!r} for length {self.length!r}, got {self.energy!r}")

    def acceleration_from_si(self, value: ArrayLike) -> float | NDArray[np.float64]:
        """Acceleration(s) given in m/s² expressed in `acceleration`."""
        return _in_unit(value, ACCELERATION_UNITS[self.acceleration])

    def length_from_si(self, value: ArrayLike) -> float | NDArray[np.float64]:
        """Length(s) given in m expressed in `length`."""
        return _in_unit(value, LENGTH_UNITS[self.length])

    def velocity_from_si(self, value: ArrayLike) -> float | NDArray[np.float64]:
        """Velocity(ies) given in m/s expressed in `velocity`."""
        return _in_unit(value, VELOCITY_UNITS[self.velocity])

    def energy_from_si(self, value: ArrayLike) -> float | NDArray[np.float64]:
        """Energy(ies) per unit mass given in m²/s² expressed in `energy`."""
        factor = LENGTH_UNITS[self.length]
        return _in_unit(value, factor * factor)

    def unit_of(self, kind: str) -> str | None:
        """The unit of a quantity of `kind` (``"acceleration"``, ``"length"``, ``"velocity"``, ``"energy"``).

        None for any other kind (times, ratios, counts): those are not converted.
        """
        return {
            "acceleration": self.acceleration,
            "length": self.length,
            "velocity": self.velocity,
            "energy": self.energy,
        }.get(kind)

    def from_si(self, kind: str, value: ArrayLike) -> float | NDArray[np.float64]:
        """SI value(s) of a quantity of `kind` in this set's unit of that kind; other kinds as floats, unchanged.

        Examples
        --------
        >>> units = output_units("cm/s2")
        >>> units.from_si("length", 0.5), units.from_si("time", 2.5)
        (50.0, 2.5)
        """
        convert = {
            "acceleration": self.acceleration_from_si,
            "length": self.length_from_si,
            "velocity": self.velocity_from_si,
            "energy": self.energy_from_si,
        }.get(kind)
        return _in_unit(value, 1.0) if convert is None else convert(value)


def output_units(record_unit: str, acceleration: str | None = None, length: str | None = None) -> OutputUnits:
    """The units to report results in for a record given in `record_unit`.

    Parameters
    ----------
    record_unit : str
        The record's acceleration unit (``Record.unit``).
    acceleration : str, optional
        Acceleration unit of the results; default the record's unit.
    length : str, optional
        Length unit of displacements, velocities (length/s) and energies
        per unit mass (length²/s²); default the length unit matching
        `record_unit` (`MATCHING_LENGTH_UNIT`: metre for g).

    Returns
    -------
    OutputUnits

    Raises
    ------
    TypeError, ValueError
        A unit name that is not text or not in the table.

    Examples
    --------
    >>> units = output_units("g")
    >>> round(float(units.acceleration_from_si(9.80665)), 12), units.length
    (1.0, 'm')
    >>> output_units("g", length="mm").energy
    'mm2/s2'
    """
    record_key = normalise_unit(record_unit, ACCELERATION_UNITS, "record_unit")
    accel_key = record_key if acceleration is None else normalise_unit(acceleration, ACCELERATION_UNITS, "acceleration")
    length_key = MATCHING_LENGTH_UNIT[record_key] if length is None else normalise_unit(length, LENGTH_UNITS, "length")
    return OutputUnits(accel_key, length_key, f"{length_key}/s", f"{length_key}2/s2")


def _in_unit(value: ArrayLike, factor: float) -> float | NDArray[np.float64]:
    """SI `value` divided by the unit's SI `factor`: a float for a scalar, an ndarray for an array."""
    array = np.asarray(value, dtype=np.float64) / factor
    return float(array) if array.ndim == 0 else array
