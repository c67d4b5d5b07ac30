"""Old private name of `groundstep.core.units`, kept until addin imports the public module.

Import from ``groundstep.core.units``; this module goes once no adapter uses it.
"""

from .units import (  # noqa: F401
    ACCELERATION_UNITS,
    FOOT,
    INCH,
    LENGTH_UNITS,
    MATCHING_LENGTH_UNIT,
    STANDARD_GRAVITY,
    VELOCITY_UNITS,
    normalise_unit,
    to_si,
)
