"""groundstep.core: oscillator response to ground acceleration.

No spreadsheet library is imported here; ``groundstep.addin`` adapts
spreadsheets and the command line to this API. SI units throughout
(m, s, m/s²).

The public names load on first use (module ``__getattr__``, PEP 562): a
process that needs only ``elastic_spectrum`` never imports scipy's signal
and FFT packages, which the Fourier and processing modules need.
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING, Any

#: Public name -> the module of this package that defines it.
_SOURCES = {
    "collect_warnings": "_notices",
    "warm_up": "_warm",
    "DesignSpectrum": "design",
    "DesignSpectrumWarning": "design",
    "design_spectrum": "design",
    "FourierAmplitude": "fourier",
    "fourier_amplitude": "fourier",
    "ConvergenceError": "inelastic",
    "ConvergenceWarning": "inelastic",
    "ductility_spectrum": "inelastic",
    "inelastic_response": "inelastic",
    "DuctilitySpectrum": "inelastic_results",
    "DuctilityTargetWarning": "inelastic_results",
    "InelasticResponse": "inelastic_results",
    "DEFAULT_STEP_RATIO": "linear",
    "SubstepWarning": "linear",
    "elastic_spectrum": "linear",
    "linear_response": "linear",
    "period_grid": "linear",
    "GroundMotionMeasures": "measures",
    "MeasureWarning": "measures",
    "arias_intensity": "measures",
    "ground_motion_measures": "measures",
    "normalised_arias": "measures",
    "significant_duration": "measures",
    "METHODS": "methods",
    "Method": "methods",
    "resolve_method": "methods",
    "ReplayWarning": "processing",
    "bandpass": "processing",
    "baseline_correct": "processing",
    "replay_history": "processing",
    "ProcessingStep": "record",
    "Record": "record",
    "RecordTextWarning": "record",
    "ElasticSpectrum": "results",
    "LinearResponse": "results",
    "RotDSpectrum": "rotd",
    "rotd_spectrum": "rotd",
    "SuitePreset": "scaling",
    "SuiteScaling": "scaling",
    "scale_suite": "scaling",
    "suite_preset": "scaling",
    "filtered_noise": "synthetic",
    "jennings_envelope": "synthetic",
    "kanai_tajimi_psd": "synthetic",
    "synthetic_record": "synthetic",
    "ACCELERATION_UNITS": "units",
    "LENGTH_UNITS": "units",
    "OutputUnits": "units",
    "STANDARD_GRAVITY": "units",
    "output_units": "units",
}


def __getattr__(name: str) -> Any:
    """Import the module that defines `name` on first use and keep the value here."""
    if name == "__version__":
        value: Any = _version()
    elif name in _SOURCES:
        value = getattr(importlib.import_module(f".{_SOURCES[name]}", __name__), name)
    else:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(__all__))


def _version() -> str:
    from importlib.metadata import PackageNotFoundError, version

    try:
        return version("groundstep")
    except PackageNotFoundError:  # running from a source tree that was not installed
        return "0+unknown"


if TYPE_CHECKING:  # the names as static type checkers and editors see them
    from ._notices import collect_warnings
    from ._warm import warm_up
    from .design import DesignSpectrum, DesignSpectrumWarning, design_spectrum
    from .fourier import FourierAmplitude, fourier_amplitude
    from .inelastic import (
        ConvergenceError,
        ConvergenceWarning,
        ductility_spectrum,
        inelastic_response,
    )
    from .inelastic_results import DuctilitySpectrum, DuctilityTargetWarning, InelasticResponse
    from .linear import (
        DEFAULT_STEP_RATIO,
        SubstepWarning,
        elastic_spectrum,
        linear_response,
        period_grid,
    )
    from .measures import (
        GroundMotionMeasures,
        MeasureWarning,
        arias_intensity,
        ground_motion_measures,
        normalised_arias,
        significant_duration,
    )
    from .methods import METHODS, Method, resolve_method
    from .processing import ReplayWarning, bandpass, baseline_correct, replay_history
    from .record import ProcessingStep, Record, RecordTextWarning
    from .results import ElasticSpectrum, LinearResponse
    from .rotd import RotDSpectrum, rotd_spectrum
    from .scaling import SuitePreset, SuiteScaling, scale_suite, suite_preset
    from .synthetic import (
        filtered_noise,
        jennings_envelope,
        kanai_tajimi_psd,
        synthetic_record,
    )
    from .units import (
        ACCELERATION_UNITS,
        LENGTH_UNITS,
        STANDARD_GRAVITY,
        OutputUnits,
        output_units,
    )

#: Every public name (tests/test_docs.py checks it lists exactly `_SOURCES` and the version).
__all__ = [
    "ACCELERATION_UNITS",
    "ConvergenceError",
    "ConvergenceWarning",
    "DEFAULT_STEP_RATIO",
    "DesignSpectrum",
    "DesignSpectrumWarning",
    "DuctilitySpectrum",
    "DuctilityTargetWarning",
    "ElasticSpectrum",
    "FourierAmplitude",
    "GroundMotionMeasures",
    "InelasticResponse",
    "LENGTH_UNITS",
    "LinearResponse",
    "METHODS",
    "MeasureWarning",
    "Method",
    "OutputUnits",
    "ProcessingStep",
    "Record",
    "RecordTextWarning",
    "ReplayWarning",
    "RotDSpectrum",
    "STANDARD_GRAVITY",
    "SubstepWarning",
    "SuitePreset",
    "SuiteScaling",
    "__version__",
    "arias_intensity",
    "bandpass",
    "baseline_correct",
    "collect_warnings",
    "design_spectrum",
    "ductility_spectrum",
    "elastic_spectrum",
    "filtered_noise",
    "fourier_amplitude",
    "ground_motion_measures",
    "inelastic_response",
    "jennings_envelope",
    "kanai_tajimi_psd",
    "linear_response",
    "normalised_arias",
    "output_units",
    "period_grid",
    "replay_history",
    "resolve_method",
    "rotd_spectrum",
    "scale_suite",
    "significant_duration",
    "suite_preset",
    "synthetic_record",
    "warm_up",
]
