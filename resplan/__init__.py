"""resplan: plan the resolution and dynamic range of a measurement signal chain.

Work backward from a sensor span and a resolution requirement to the noise each
part may add, check a candidate chain forward with every contribution shown,
and write a requirements appendix. Everything inside is SI; see
``docs/formulas.md`` for every formula and its source.
"""

# The one place the version is written; pyproject.toml reads it from here.
__version__ = "0.1.0"

from .bandwidth import DigitalPath, NoiseBandwidth, integrate_psd, noise_bandwidth
from .budget import Budget, Contribution, forward_budget
from .chain import Band, Chain
from .converter import (
    ADC,
    InputNoiseDensity,
    NoiseAtRate,
    NoiseTable,
    SnrNoise,
    TransitionNoise,
)
from .errors import ChainError, DesignError, DesignErrors, ResplanError
from .requirement import Requirement
from .responses import AnalogLowpass, IdealLowpass, SincFilter
from .stages import (
    ActiveFilter,
    IntegratedAmplifier,
    NoiseDensity,
    NonInvertingStage,
    RCFilter,
    Reference,
    Sensor,
)

__all__ = [
    "ADC",
    "ActiveFilter",
    "AnalogLowpass",
    "Band",
    "Budget",
    "Chain",
    "ChainError",
    "Contribution",
    "DesignError",
    "DesignErrors",
    "DigitalPath",
    "IdealLowpass",
    "InputNoiseDensity",
    "IntegratedAmplifier",
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
    "forward_budget",
    "integrate_psd",
    "noise_bandwidth",
]
