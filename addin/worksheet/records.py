"""The ``STEP_`` worksheet functions about the record itself: processing, measures, Fourier amplitude.

``STEP_PROCESS`` spills the processed acceleration (baseline correction, then
a Butterworth band-pass) in the record's unit, one column, so its spill
range can be the acceleration argument of any other ``STEP_`` function with
the same time step and unit. ``STEP_MEASURES`` returns one ground-motion
measure, or a spill for a range of measure names; ``STEP_FOURIER`` spills
frequency [Hz] and Fourier amplitude. Each hands off to the public core API
(`groundstep.core.baseline_correct`, `bandpass`, `ground_motion_measures`,
`fourier_amplitude`) and returns what it returns, converted to the output
units only.

Arguments come in the order of every ``STEP_`` function (see
``functions.py``): the record (acceleration range, time step [s], record
unit), then what to compute, then options and output units. Units of
``STEP_MEASURES``: accelerations in the record's unit (or
``accel_unit_out``), velocities (PGV, CAV) and lengths (PGD, spectrum
intensity) in the length unit matching the record's unit (or
``length_unit_out``), times and periods in s, Arias intensity in m/s.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from groundstep.core import Record, bandpass, baseline_correct, fourier_amplitude, ground_motion_measures
from groundstep.core.measures import DEFAULT_BRACKET_THRESHOLD
from groundstep.core.units import ACCELERATION_UNITS

from . import cells, convert
from .cache import HISTORIES, RESULTS
from .convert import Cell
from .registry import MEASURE_QUANTITIES, worksheet_function

__all__ = ["STEP_FOURIER", "STEP_MEASURES", "STEP_PROCESS"]


@worksheet_function(spills=True)
def STEP_PROCESS(
    accel: Cell,
    dt: Cell,
    unit: Cell,
    baseline_order: Cell = None,
    low_hz: Cell = None,
    high_hz: Cell = None,
    filter_order: Cell = 4,
    taper: Cell = 0.05,
    keep_pads: Cell = True,
    headers: Cell = False,
) -> Any:
    """Processed acceleration in the record's unit (spills one column): baseline correction, then band-pass."""
    record, key = convert.record(accel, dt, unit)
    processed = processed_record(record, key, baseline_order, low_hz, high_hz, filter_order, taper, keep_pads)
    column = [[value] for value in processed.accel_in(record.unit).tolist()]
    return [[f"processed acceleration [{record.unit}]"], *column] if _headers(headers) else column


@worksheet_function(help={"measure": "measure"})
def STEP_MEASURES(
    accel: Cell,
    dt: Cell,
    unit: Cell,
    measure: Cell = "PGA",
    bracket_threshold: Cell = None,
    accel_unit_out: Cell = None,
    length_unit_out: Cell = None,
) -> Any:
    """A ground-motion measure of the record (PGA, PGV, Arias intensity, D5-95, CAV, ...); a range of names spills."""
    record, key = convert.record(accel, dt, unit)
    out = convert.units(record.unit, accel_unit_out, length_unit_out)
    threshold = cells.number(bracket_threshold, "the bracket threshold", None)
    level = DEFAULT_BRACKET_THRESHOLD if threshold is None else threshold * ACCELERATION_UNITS[record.unit]
    measures = RESULTS.get_or_compute(
        ("measures", key, level),
        lambda: convert.quiet(ground_motion_measures, record, bracket_threshold=level).to_dict(),
    )

    def value(name: Cell) -> Any:
        chosen = convert.choice(name, MEASURE_QUANTITIES, "the measure")
        return convert.to_unit(measures[chosen.attribute], chosen.kind, out)

    names = measure if isinstance(measure, list) else [[measure]]
    rows = [line if isinstance(line, list) else [line] for line in names]
    if len(rows) == 1 and len(rows[0]) == 1:
        return value(rows[0][0])
    return [["" if cell is None or cell == "" else value(cell) for cell in line] for line in rows]


@worksheet_function(spills=True)
def STEP_FOURIER(
    accel: Cell,
    dt: Cell,
    unit: Cell,
    smoothing: Cell = None,
    bandwidth: Cell = 40.0,
    length_unit_out: Cell = None,
    headers: Cell = False,
) -> Any:
    """Fourier amplitude spectrum (spills): frequency [Hz] and amplitude [velocity unit], raw or smoothed."""
    record, key = convert.record(accel, dt, unit)
    out = convert.units(record.unit, None, length_unit_out)
    window = cells.text(smoothing, "the smoothing", None)
    b = cells.positive(cells.number(bandwidth, "the bandwidth", 40.0), "the bandwidth")
    spectrum = HISTORIES.get_or_compute(
        ("fourier", key, window, b), lambda: fourier_amplitude(record, window, bandwidth=b)
    )
    amplitudes = convert.to_unit(spectrum.amplitudes, "velocity", out)
    rows = np.column_stack((spectrum.frequencies, amplitudes)).tolist()
    if not _headers(headers):
        return rows
    return [["frequency [Hz]", f"Fourier amplitude [{out.velocity}]"], *rows]


def processed_record(
    record: Record,
    key: Any,
    baseline_order: Cell,
    low_hz: Cell,
    high_hz: Cell,
    filter_order: Cell = 4,
    taper: Cell = 0.05,
    keep_pads: Cell = True,
) -> Record:
    """`record` after `baseline_correct` (when an order is given), then `bandpass` (when a corner is given).

    The record comes back unchanged when every processing cell is blank.
    Each step is the core function itself, so the result is the core's.
    """
    order = cells.number(baseline_order, "the baseline order", None)
    corners = (cells.number(low_hz, "the low corner", None), cells.number(high_hz, "the high corner", None))
    poles = cells.number(filter_order, "the filter order", 4.0)
    fraction = cells.number(taper, "the taper", 0.05)
    pads = cells.flag(keep_pads, "the keep-pads option", True)

    def compute() -> Record:
        result = record
        if order is not None:
            result = baseline_correct(result, _whole(order, "the baseline order"))
        if corners != (None, None):
            result = bandpass(result, *corners, _whole(poles, "the filter order"), taper=fraction, keep_pads=pads)
        return result

    return HISTORIES.get_or_compute(("process", key, order, corners, poles, fraction, pads), compute)


def _whole(value: float, what: str) -> int:
    """A whole number typed into a cell (spreadsheets pass 2 as 2.0)."""
    if not float(value).is_integer():
        raise cells.CellError(f"{what} must be a whole number, got {value:g}")
    return int(value)


def _headers(headers: Cell) -> bool:
    return cells.flag(headers, "the headers option", False)
