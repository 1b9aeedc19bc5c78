"""resplan: plan the resolution and dynamic range of a measurement signal chain.

Work backward from a sensor span and a resolution requirement to the noise each
part may add, check a candidate chain forward with every contribution shown,
and write a requirements appendix. Everything inside is SI; see
``docs/formulas.md`` for every formula and its source.
"""

# The one place the version is written; pyproject.toml reads it from here.
__version__ = "0.1.0"

from .chain.budget import Budget, Contribution, contribution_id, forward_budget
from .chain.converter import (
    ADC,
    InputNoiseDensity,
    NoiseAtRate,
    NoiseTable,
    SnrNoise,
    TransitionNoise,
)
from .chain.hand import (
    amplifier_input_density,
    cascade_input_noise,
    coverage_factor,
    effective_bits_from_rms,
    noise_free_bits_from_rms,
    non_inverting_input_density,
    oversampling_bits,
    oversampling_gain_db,
    oversampling_ratio,
    refer_through_gains,
    reference_noise_at_input,
)
from .chain.requirement import Requirement
from .chain.signal_chain import Band, Chain
from .chain.stages import (
    ActiveFilter,
    IntegratedAmplifier,
    InvertingStage,
    NoiseDensity,
    NonInvertingStage,
    RCFilter,
    Reference,
    Sensor,
    TransimpedanceStage,
)
from .chain.tolerance import Spread
from .errors import ChainError, DesignError, DesignErrors, ResplanError
from .noise.bandwidth import DigitalPath, NoiseBandwidth, integrate_psd, noise_bandwidth
from .noise.physics import CoverageProbability, coverage_for_factor, peak_to_peak_factor
from .noise.responses import AnalogLowpass, IdealLowpass, SincFilter
from .spread.corner import Corner, worst_case
from .spread.improve import Improvement, improvements
from .spread.model import SpreadModel, build_model
from .spread.trials import TrialResult, clopper_pearson, run_trials

__all__ = [
    "Corner",
    "Improvement",
    "Spread",
    "SpreadModel",
    "TrialResult",
    "build_model",
    "clopper_pearson",
    "improvements",
    "run_trials",
    "worst_case",
    "ADC",
    "ActiveFilter",
    "AnalogLowpass",
    "Band",
    "Budget",
    "Chain",
    "ChainError",
    "Contribution",
    "CoverageProbability",
    "DesignError",
    "DesignErrors",
    "DigitalPath",
    "IdealLowpass",
    "InputNoiseDensity",
    "IntegratedAmplifier",
    "InvertingStage",
    "TransimpedanceStage",
    "NoiseAtRate",
    "NoiseBandwidth",
    "NoiseDensity",
    "NoiseTable",
    "NonInvertingStage",
    "RCFilter",
    "Reference",
    "Requirement",
    "ResplanError",
    "SincFilter",
    "SnrNoise",
    "TransitionNoise",
    "Sensor",
    "amplifier_input_density",
    "cascade_input_noise",
    "contribution_id",
    "coverage_factor",
    "coverage_for_factor",
    "effective_bits_from_rms",
    "forward_budget",
    "integrate_psd",
    "noise_bandwidth",
    "noise_free_bits_from_rms",
    "non_inverting_input_density",
    "oversampling_bits",
    "oversampling_gain_db",
    "oversampling_ratio",
    "peak_to_peak_factor",
    "refer_through_gains",
    "reference_noise_at_input",
]
