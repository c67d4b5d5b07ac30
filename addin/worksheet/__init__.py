"""Worksheet functions: the function table, cells to numbers, caches, the ``STEP_`` functions.

Importing this package declares every ``STEP_`` function, so
``registry.FUNCTIONS`` is complete for whoever reads it (the xlwings module,
the Calc extension builder, the README table).
"""

from . import functions, records, suite  # noqa: F401 - declaring the functions fills registry.FUNCTIONS
