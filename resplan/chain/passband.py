"""Pass-band droop: the signal's gain error at the top of the band.

A signal at f inside the band passes the analog path and the digital filter:
its gain relative to DC is |H_a(f)|·|H_d(f)|, and the droop at the band top is

    droop = 20·log10(|H_a(f_top)|·|H_d(f_top)|) dB   (≤ 0; 0 is flat)

For a sinc^k filter of length R at f_s, |H_d(f)| = |sin(πfR/f_s)/(R·sin(πf/f_s))|^k
(Hogenauer, IEEE Trans. ASSP 29 (1981) 155); a sinc3 at a 10 Hz output rate is
−11.8 dB at 5 Hz. The responses are the chain's own
(:func:`resplan.chain.interference.path_power_gain`). It does not vary with
noise spreads; a spread of a filter's cut-off moves it.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .interference import path_power_gain
from .signal_chain import Chain

__all__ = ["Droop", "passband_droop"]


@dataclass(frozen=True)
class Droop:
    """Gain error at a frequency, dB (≤ 0 for a low-pass path).

    Attributes
    ----------
    frequency_hz : float
        Where it is evaluated (the band top), Hz.
    analog_db, digital_db : float
        The analog path's and the digital filter's gain there, relative to DC, dB.
    """

    frequency_hz: float
    analog_db: float
    digital_db: float

    @property
    def total_db(self) -> float:
        return self.analog_db + self.digital_db

    def to_dict(self) -> dict:
        return {**self.__dict__, "total_db": self.total_db}


def _db(power_gain: float) -> float:
    return -math.inf if power_gain <= 0 else 10.0 * math.log10(power_gain)


def passband_droop(chain: Chain, frequency_hz: float) -> Droop:
    """The signal path's gain at ``frequency_hz`` relative to DC.

    Examples
    --------
    >>> from resplan import ADC, DigitalPath, NoiseAtRate, Sensor, SincFilter
    >>> adc = ADC("ΔΣ (invented)", "delta-sigma", 24, 5.0, 64e3, NoiseAtRate(1e-7, 10.0),
    ...           data_rate_hz=10.0)
    >>> chain = Chain(Sensor(0.01, 350.0), (), adc,
    ...               digital=DigitalPath((SincFilter(3, 6400, 64e3),)))
    >>> round(passband_droop(chain, 5.0).total_db, 1)
    -11.8
    """
    a, d = path_power_gain(chain, np.array([float(frequency_hz)]))
    return Droop(float(frequency_hz), _db(float(a[0])), _db(float(d[0])))
