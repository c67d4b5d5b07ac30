"""The one table of input cells: what ``fill``, the live macro and the template agree on.

Each input has a key (how the reading code asks for it), the defined name and
cell the calculation-package template gives it, and ``gs_in_*`` aliases that
anyone may add to their own workbook by hand. The template writes
`INPUT_NAMES`; the readers look names up with `lookup_names`.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["INPUTS", "INPUT_NAMES", "RECORD_ROWS", "Input", "lookup_names"]

#: Rows of the template's acceleration column: a heading in row 1, samples in rows 2 to 200001
#: (1000 s at 0.005 s). A longer record is refused by ``fill``, naming the first row beyond
#: the range, never cut; a defined name extended by hand to the last sample lifts the limit.
RECORD_ROWS = 200_000


@dataclass(frozen=True, slots=True)
class Input:
    """One input: `key` for the readers, the template's defined name and cell, hand-made aliases."""

    key: str
    template_name: str | None
    template_cell: str | None
    aliases: tuple[str, ...] = ()

    @property
    def names(self) -> tuple[str, ...]:
        """Defined names looked up for this input, first found wins: the template's, then the aliases."""
        return ((self.template_name,) if self.template_name else ()) + self.aliases


INPUTS: tuple[Input, ...] = (
    Input("project", "input_project", "Input!$B$6", ("gs_in_project",)),
    Input("project_number", "input_project_number", "Input!$B$7", ("gs_in_project_number",)),
    Input("site", "input_site", "Input!$B$8", ("gs_in_site",)),
    Input("engineer", "input_engineer", "Input!$B$9", ("gs_in_engineer",)),
    Input("checker", "input_checker", "Input!$B$10", ("gs_in_checker",)),
    Input("date", "input_date", "Input!$B$11", ("gs_in_date",)),
    Input("structure", None, None, ("gs_in_structure",)),
    Input("scenario", None, None, ("gs_in_scenario",)),
    Input("record_name", "input_record_name", "Input!$B$14", ("gs_in_record_name",)),
    Input("dt", "input_dt", "Input!$B$15", ("gs_in_dt",)),
    Input("unit", "input_unit", "Input!$B$16", ("gs_in_unit",)),
    Input("method", "input_method", "Input!$B$17", ("gs_in_method",)),
    Input("accel_unit_out", "input_accel_unit_out", "Input!$B$18"),
    Input("length_unit_out", "input_length_unit_out", "Input!$B$19"),
    Input("baseline_order", "input_baseline_order", "Input!$B$20", ("gs_in_baseline_order",)),
    Input("low_hz", "input_low_hz", "Input!$B$21", ("gs_in_low_hz",)),
    Input("high_hz", "input_high_hz", "Input!$B$22", ("gs_in_high_hz",)),
    Input("record", "input_record", f"Record!$A$1:$A${RECORD_ROWS + 1}", ("gs_in_record",)),
    Input("dampings", "input_dampings", "Spectrum!$B$5:$D$5", ("gs_in_dampings",)),
    Input("periods", "input_periods", "Spectrum!$A$7:$A$47", ("gs_in_periods",)),
    Input("oscillator_periods", "input_peak_periods", "Peaks!$A$7:$A$18", ("gs_in_oscillator_periods",)),
    Input("oscillator_dampings", "input_peak_dampings", "Peaks!$B$7:$B$18", ("gs_in_oscillator_dampings",)),
    Input(
        "oscillator_reduction_factors", "input_peak_reduction_factors", "Peaks!$I$7:$I$18",
        ("gs_in_oscillator_reduction_factors",),
    ),  # fmt: skip
    Input("oscillator_labels", None, None, ("gs_in_oscillator_labels",)),
    Input("hardening", None, None, ("gs_in_hardening",)),
    Input("ductilities", "input_ductilities", "Yielding!$B$5:$E$5", ("gs_in_ductilities",)),
    Input("yield_damping", "input_yield_damping", "Yielding!$B$4", ("gs_in_yield_damping",)),
    Input("yield_periods", "input_yield_periods", "Yielding!$A$7:$A$26", ("gs_in_yield_periods",)),
    Input("target_standard", "input_target_standard", "Target!$B$5", ("gs_in_target_standard",)),
    Input("target_names", "input_target_names", "Target!$A$8:$A$13", ("gs_in_target_names",)),
    Input("target_values", "input_target_values", "Target!$B$8:$B$13", ("gs_in_target_values",)),
    Input("target_table_periods", "input_target_table_periods", "Target!$D$8:$D$107", ("gs_in_target_table_periods",)),
    Input("target_table_sa", "input_target_table_sa", "Target!$E$8:$E$107", ("gs_in_target_table_sa",)),
)

_BY_KEY = {item.key: item for item in INPUTS}

#: Defined names of the template's input cells (workbook scope) and what they refer to.
INPUT_NAMES: dict[str, str] = {
    item.template_name: item.template_cell for item in INPUTS if item.template_name and item.template_cell
}


def lookup_names(key: str) -> tuple[str, ...]:
    """The defined names that hold input `key`, in the order they are tried.

    Raises
    ------
    KeyError
        `key` is not an input (the message lists the keys).
    """
    try:
        return _BY_KEY[key].names
    except KeyError:
        raise KeyError(f"no input {key!r}; the inputs are {sorted(_BY_KEY)}") from None
