"""Interference that aliases: where a tone lands after sampling and how much of it is left.

Interference is not noise (DOMAIN §8): a tone at f_i sampled at f_s appears at
|f_i − m·f_s| folded into [0, f_s/2], attenuated by every analog response in the
signal path and by the digital filter's response at f_i itself (the digital
response is periodic in f_s, so its value at f_i is its value at the alias). The
residue is compared with the requirement's interference allowance, or, when none
is reserved, with 1/5 of the allowed noise, which then adds about 2 % (common
practice, no source).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from .budget import DOMINANCE_RATIO
from .requirement import Requirement
from .signal_chain import Chain

__all__ = [
    "AliasCheck",
    "alias_frequency",
    "path_attenuation_db",
    "check_interferer",
    "allowed_residue",
]


def alias_frequency(frequency_hz: float, sample_rate_hz: float) -> float:
    """Where a tone at ``frequency_hz`` lands after sampling at ``sample_rate_hz``, Hz.

    Examples
    --------
    >>> alias_frequency(95e3, 100e3)
    5000.0
    >>> alias_frequency(130e3, 100e3)
    30000.0
    """
    folded = math.fmod(abs(frequency_hz), sample_rate_hz)
    return min(folded, sample_rate_hz - folded)


def path_attenuation_db(
    chain: Chain, frequency_hz: float, skip: object = None
) -> tuple[float, float]:
    """Attenuation of the signal path at a frequency: (analog dB, digital dB).

    ``skip`` leaves one stage out (the planner sizes that one).
    """
    analog = 0.0
    for j, stage in enumerate(chain.stages):
        if stage is skip:
            continue
        for response in chain.stage_responses(j):
            analog += float(response.attenuation_db(frequency_hz))
    digital = 0.0
    if chain.digital is not None:
        digital = max(
            0.0, float(-10 * math.log10(max(float(chain.digital.power_gain(frequency_hz)), 1e-300)))
        )
    return analog, digital


def allowed_residue(requirement: Requirement) -> tuple[float, str]:
    """The largest residue an interferer may leave at the sensor, V rms, and why."""
    if requirement.interference_rms_v > 0:
        return requirement.interference_rms_v, "the interference allowance"
    return (
        DOMINANCE_RATIO * requirement.allowed_total_rms_v,
        "1/5 of the allowed noise (common practice, no source)",
    )


@dataclass(frozen=True)
class AliasCheck:
    """An interferer through the chain.

    Attributes
    ----------
    frequency_hz : float
        The interferer, Hz.
    alias_hz : float
        Where it lands after sampling, Hz.
    amplitude_v : float
        Its amplitude at the sensor, V rms.
    analog_db, digital_db : float
        Attenuation by the analog path and by the digital filter, dB.
    residue_v : float
        What is left, referred to the sensor, V rms.
    allowed_v : float
        The largest residue allowed, V rms, and ``allowed_reason`` why.
    """

    frequency_hz: float
    alias_hz: float
    amplitude_v: float
    analog_db: float
    digital_db: float
    residue_v: float
    allowed_v: float
    allowed_reason: str

    @property
    def within_allowance(self) -> bool:
        return self.residue_v <= self.allowed_v * (1 + 1e-12)

    def to_dict(self) -> dict:
        return {**self.__dict__, "within_allowance": self.within_allowance}


def check_interferer(
    chain: Chain, frequency_hz: float, amplitude_v: float, requirement: Requirement
) -> AliasCheck:
    """What an interferer at the sensor leaves in the output.

    Examples
    --------
    A single-pole RC at 1 kHz ahead of a raw SAR at 100 kHz leaves 1/√(1 + 95²) of a
    tone at 95 kHz (it lands at 5 kHz):

    >>> from resplan import ADC, RCFilter, Requirement, Sensor, TransitionNoise
    >>> from resplan.chain.signal_chain import Chain
    >>> import math
    >>> rc = RCFilter("RC (invented)", 1e3, 1 / (2 * math.pi * 1e3 * 1e3))
    >>> adc = ADC("SAR (invented)", "sar", 16, 5.0, 100e3, TransitionNoise(0.5))
    >>> chain = Chain(Sensor(1.0, 1e-3), (rc,), adc)
    >>> c = check_interferer(chain, 95e3, 1.0, Requirement(1.0, noise_free_counts=1000))
    >>> c.alias_hz, round(c.residue_v * math.sqrt(1 + 95**2), 3)
    (5000.0, 1.0)
    """
    analog_db, digital_db = path_attenuation_db(chain, frequency_hz)
    residue = amplitude_v * 10 ** (-(analog_db + digital_db) / 20)
    allowed, reason = allowed_residue(requirement)
    return AliasCheck(
        frequency_hz=frequency_hz,
        alias_hz=alias_frequency(frequency_hz, chain.adc.sample_rate_hz),
        amplitude_v=amplitude_v,
        analog_db=analog_db,
        digital_db=digital_db,
        residue_v=residue,
        allowed_v=allowed,
        allowed_reason=reason,
    )
