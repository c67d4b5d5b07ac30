"""groundstep.core: oscillator response to ground acceleration.

No spreadsheet library is imported here; ``groundstep.addin`` adapts
spreadsheets and the command line to this API. SI units throughout
(m, s, m/s²).
"""

from importlib.metadata import PackageNotFoundError, version

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

try:
    __version__ = version("groundstep")
except PackageNotFoundError:  # running from a source tree that was not installed
    __version__ = "0+unknown"

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
