"""Settling, latency and the per-channel rate of the digital path.

After a step at the input, or a multiplexer switch to another channel, a result
is *settled* once no sample from before the step is inside the filter's impulse
response. For the stages resplan models (E. B. Hogenauer, IEEE Trans. ASSP 29
(1981) 155, for the sinc^k filter):

=================================  ==========================  =======================
stage                              settling after a step       group delay (latency)
=================================  ==========================  =======================
SAR conversion (no filter)         1 conversion, 1/f_s         1/f_s (conversion)
sinc^k, length R, at f_in          k·R/f_in = k output periods k·(R−1)/(2·f_in)
average of N, at f_in              N/f_in                      (N−1)/(2·f_in)
band-limit FIR of L taps, at f_in  L/f_in                      (L−1)/(2·f_in), linear phase
=================================  ==========================  =======================

Stages in cascade add (conservative: it ignores the overlap of their last
samples). With ``channels = N`` multiplexed, every switch waits the settling
time, so each channel gets a settled result every N·max(settling, 1/ODR):
per-channel rate = 1 / (N · max(t_settle, 1/ODR)). The analog path's own
settling (filter poles, the driver) is not counted; with a slow anti-alias
filter add it by hand. Nothing here varies with noise spreads.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from ..noise.responses import IdealLowpass, SincFilter
from .signal_chain import Chain

__all__ = ["StageTiming", "DigitalTiming", "digital_timing"]


@dataclass(frozen=True)
class StageTiming:
    """One stage's settling and delay.

    Attributes
    ----------
    name : str
        Such as ``"sinc3, R = 6400"``.
    settling_s : float or None
        Settling time after a step, s (None when the FIR length is not stated).
    delay_s : float or None
        Group delay, s.
    rule : str
        The rule used, for people.
    """

    name: str
    settling_s: float | None
    delay_s: float | None
    rule: str


@dataclass(frozen=True)
class DigitalTiming:
    """Settling, latency and per-channel rate of a chain's conversion and digital path.

    Attributes
    ----------
    stages : tuple of StageTiming
    settling_s : float or None
        Total settling time after a step or a channel switch, s (None: unknown).
    latency_s : float or None
        Conversion time plus the group delays, s.
    output_rate_hz : float
        Rate of the final results, Hz.
    channels : int
        Multiplexed inputs.
    channel_rate_hz : float or None
        Settled results per second that each channel gets, Hz.
    """

    stages: tuple[StageTiming, ...]
    settling_s: float | None
    latency_s: float | None
    output_rate_hz: float
    channels: int
    channel_rate_hz: float | None

    def to_dict(self) -> dict[str, Any]:
        return {
            "settling_s": self.settling_s,
            "latency_s": self.latency_s,
            "output_rate_hz": self.output_rate_hz,
            "channels": self.channels,
            "channel_rate_hz": self.channel_rate_hz,
            "stages": [s.__dict__.copy() for s in self.stages],
        }


def _stage(stage: Any) -> StageTiming:
    f_in = stage.input_rate_hz
    if isinstance(stage, SincFilter):
        k, r = stage.order, stage.length
        if k == 1:
            return StageTiming(f"average of {r}", r / f_in, (r - 1) / (2 * f_in), "N input periods")
        return StageTiming(
            f"sinc{k}, R = {r}", k * r / f_in, k * (r - 1) / (2 * f_in), "k output periods"
        )
    if isinstance(stage, IdealLowpass):
        if stage.taps is None:
            return StageTiming("band limit", None, None, "FIR length not stated")
        n = stage.taps
        return StageTiming(
            f"band-limit FIR, {n} taps", n / f_in, (n - 1) / (2 * f_in), "its length"
        )
    raise TypeError(type(stage))  # pragma: no cover - the union is closed


def digital_timing(chain: Chain) -> DigitalTiming:
    """Settling, latency and per-channel rate of the chain (see the module's table).

    Examples
    --------
    A sinc3 decimator from 64 kHz to 10 Hz settles in three output periods:

    >>> from resplan import ADC, DigitalPath, NoiseAtRate, Sensor, SincFilter
    >>> adc = ADC("ΔΣ (invented)", "delta-sigma", 24, 5.0, 64e3, NoiseAtRate(1e-7, 10.0),
    ...           data_rate_hz=10.0, channels=4)
    >>> chain = Chain(Sensor(0.01, 350.0), (), adc,
    ...               digital=DigitalPath((SincFilter(3, 6400, 64e3),)))
    >>> t = digital_timing(chain)
    >>> round(t.settling_s, 6), round(t.channel_rate_hz, 4)
    (0.3, 0.8333)
    """
    adc = chain.adc
    rows: list[StageTiming] = []
    digital = chain.digital.stages if chain.digital is not None else ()
    if adc.architecture == "sar":
        period = 1.0 / adc.sample_rate_hz
        rows.append(StageTiming("SAR conversion", period, period, "one conversion"))
    rows += [_stage(s) for s in digital]
    known = all(r.settling_s is not None for r in rows)
    settling = sum(r.settling_s for r in rows) if known else None  # type: ignore[misc]
    latency = sum(r.delay_s for r in rows) if known else None  # type: ignore[misc]
    odr = chain.output_rate_hz
    channel_rate = None
    if settling is not None:
        channel_rate = 1.0 / (adc.channels * max(settling, 1.0 / odr))
    elif adc.channels == 1:
        channel_rate = odr
    return DigitalTiming(tuple(rows), settling, latency, odr, adc.channels, channel_rate)
