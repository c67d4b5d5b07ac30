"""The one unit table of groundstep: every conversion factor lives here.

Factors convert a value in the named unit to SI (metre, second).
"""

from __future__ import annotations

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

    ``"m/s^2"``, ``"M/S²"`` and ``"m/sec2"`` all become ``"m/s2"``.

    Raises
    ------
    TypeError
        If `unit` is not a string.
    ValueError
        If the unit is not in `table`; the message lists the accepted names.
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
    """Return the factor that converts a value in `unit` to SI."""
    return table[normalise_unit(unit, table)]
