"""Worksheet functions: the function table, cells to numbers, caches, the ``STEP_`` functions."""
