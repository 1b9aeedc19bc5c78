"""A whole measurement chain, and the band and temperature it is judged at."""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cached_property

from ..errors import DesignError
from ..noise.bandwidth import DigitalPath, noise_bandwidth
from ..noise.responses import AnalogLowpass, IdealLowpass, SincFilter
from ..units.formatting import format_si
from .converter import ADC
from .stages import AnalogStage, RCFilter, Reference, Sensor, check_positive

__all__ = ["Band", "Chain", "ROOM_TEMPERATURE_K"]

#: 25 °C, the temperature data sheets quote typical noise at.
ROOM_TEMPERATURE_K = 298.15


@dataclass(frozen=True)
class Band:
    """The measurement band.

    Parameters
    ----------
    f_low_hz : float
        Lower limit, Hz (> 0): about 1/(observation time). It bounds the 1/f
        noise, which does not average down with longer records.
    f_high_hz : float, optional
        Top of the signal band, Hz. The noise band itself is what the chain's
        filters pass; an ideal digital band limit is a digital filter stage.
    """

    f_low_hz: float = 0.01
    f_high_hz: float | None = None

    def __post_init__(self) -> None:
        check_positive("band.f_low", self.f_low_hz, "a lower band edge > 0 Hz")
        if self.f_high_hz is not None:
            if not (math.isfinite(self.f_high_hz) and self.f_high_hz > self.f_low_hz):
                raise DesignError(
                    "band.f_high",
                    self.f_high_hz,
                    f"an upper band edge above f_low = {format_si(self.f_low_hz, 'Hz')}",
                )


@dataclass(frozen=True)
class Chain:
    """Sensor → analog stages → ADC (with reference) → digital filtering.

    Parameters
    ----------
    sensor : Sensor
    stages : tuple of analog stages
        Gain stages and filters in signal order.
    adc : ADC
    reference : Reference, optional
        Without one, reference noise is not counted (say so in a report).
    digital : DigitalPath, optional
        For a delta-sigma ADC its first stage is the decimation filter, running at
        the modulator rate with output at the ADC's data rate; later stages
        (averaging, a band limit) run at the rate before them.
    temperature_k : float
        Temperature of the electronics, K.
    """

    sensor: Sensor
    stages: tuple[AnalogStage, ...]
    adc: ADC
    reference: Reference | None = None
    digital: DigitalPath | None = None
    temperature_k: float = ROOM_TEMPERATURE_K

    def __post_init__(self) -> None:
        check_positive("temperature", self.temperature_k, "a temperature above 0 K")
        object.__setattr__(self, "stages", tuple(self.stages))
        adc = self.adc
        band = _band_at_output_rate(self.digital, adc)
        if band is not None:
            object.__setattr__(self, "digital", band)
        if self.digital is not None:
            if not math.isclose(self.digital.sample_rate_hz, adc.sample_rate_hz, rel_tol=1e-9):
                raise DesignError(
                    "digital_filter[0].input_rate",
                    self.digital.sample_rate_hz,
                    f"the ADC sample rate {format_si(adc.sample_rate_hz, 'Hz')}",
                )
        if adc.architecture == "delta-sigma":
            first = self.digital.stages[0] if self.digital else None
            if not (isinstance(first, SincFilter) or _ideal_decimator(first)):
                raise DesignError(
                    "digital_filter",
                    "none" if first is None else type(first).__name__,
                    "a sinc decimation filter as the first digital stage of a delta-sigma ADC, "
                    "or only ideal band limits at its data rate",
                )
            if isinstance(first, SincFilter) and not math.isclose(
                first.output_rate_hz, adc.output_rate_hz, rel_tol=1e-6
            ):
                raise DesignError(
                    "digital_filter[0].length",
                    first.length,
                    "a decimation ratio giving the ADC data rate "
                    f"{format_si(adc.output_rate_hz, 'Hz')} "
                    f"from {format_si(adc.sample_rate_hz, 'Hz')}",
                )

    @property
    def sensor_temperature_k(self) -> float:
        t = self.sensor.temperature_k
        return self.temperature_k if t is None else t

    # Per-stage figures of the whole chain, each from one pass over the stages and kept
    # (the chain is frozen), so that a chain of n stages costs O(n), not O(n²) or O(n³).

    @cached_property
    def _gains_before(self) -> tuple[float, ...]:
        """DC gain at the input of every stage and at the ADC (n + 1 values), V/V."""
        gains = [1.0]
        for stage in self.stages:
            gains.append(gains[-1] * stage.gain)
        return tuple(gains)

    @cached_property
    def _resistances_seen(self) -> tuple[float, ...]:
        """DC source resistance at the input of every stage and at the ADC, Ω (one pass)."""
        r = self.sensor.resistance_ohm
        out = [r]
        for stage in self.stages:
            r = stage.output_resistance_ohm + (r if stage.output_resistance_ohm else 0.0)
            out.append(r)
        return tuple(out)

    @cached_property
    def _responses(self) -> tuple[tuple[AnalogLowpass, ...], ...]:
        """Analog responses of every stage as it sits in the chain."""
        out = []
        for index, stage in enumerate(self.stages):
            if isinstance(stage, RCFilter):
                r_total = stage.resistance_ohm + self._resistances_seen[index]
                cutoff = 1.0 / (2.0 * math.pi * r_total * stage.capacitance_f)
                out.append((AnalogLowpass("rc", 1, cutoff),))
            else:
                out.append(tuple(stage.responses))
        return tuple(out)

    @cached_property
    def _suffixes(self) -> dict[int, tuple[AnalogLowpass, ...]]:
        return {}

    def gain_before(self, index: int) -> float:
        """DC gain from the sensor to the input of stage ``index``, V/V."""
        return self._gains_before[max(0, min(index, len(self.stages)))]

    @property
    def total_gain(self) -> float:
        """DC gain from the sensor to the ADC input, V/V."""
        return self._gains_before[-1]

    def stage_responses(self, index: int) -> tuple[AnalogLowpass, ...]:
        """Analog responses of stage ``index`` as it sits in the chain.

        A passive RC's pole is set by everything in series with its capacitor: its
        own resistor plus the source resistance ahead of it,
        f_c = 1/(2π(R + R_source)C); the other stages' responses do not depend on
        what drives them (their inputs are taken as high-impedance).
        """
        return self._responses[index]

    def responses_from(self, index: int) -> tuple[AnalogLowpass, ...]:
        """Analog responses from stage ``index`` (inclusive) to the ADC."""
        cache = self._suffixes
        if index not in cache:
            cache[index] = tuple(r for rs in self._responses[index:] for r in rs)
        return cache[index]

    def resistance_seen_by(self, index: int) -> float:
        """DC source resistance at the input of stage ``index``, Ω.

        The sensor's resistance, plus the series resistors of passive filters in
        between; an active stage's output resets it to zero. A filter capacitor's
        shunting at high frequency is neglected, which overstates current noise.
        """
        return self._resistances_seen[max(0, min(index, len(self.stages)))]

    @property
    def post_stages(self) -> tuple:
        """Digital stages after the ADC's own output (averaging, band limits)."""
        if self.digital is None:
            return ()
        return self.digital.stages[1 if self._decimated else 0 :]

    @property
    def _decimated(self) -> bool:
        """The first digital stage is the converter's own (modelled) decimation filter."""
        return self.adc.architecture == "delta-sigma" and isinstance(
            self.digital.stages[0] if self.digital else None, SincFilter
        )

    @property
    def output_rate_hz(self) -> float:
        """Rate of the final results, Hz."""
        return self.digital.output_rate_hz if self.digital else self.adc.output_rate_hz

    def post_variance_factor(self) -> float:
        """How the digital post-filter scales the variance of the converter's own noise.

        The converter's noise is taken as flat in density over its first Nyquist zone
        (thermal noise of the modulator or of the SAR sampling): the factor is the
        noise bandwidth of the whole digital path over that of the converter's own
        output. For a SAR that is (2/f_s)·∫₀^{f_s/2} |H_post|² df, 1/N for an
        N-sample average (Parseval); after a sinc^k decimator it is larger than 1/N,
        because successive decimator outputs are correlated.
        """
        if not self.post_stages:
            return 1.0
        fs = self.adc.sample_rate_hz
        f_low = self.output_rate_hz * 1e-6
        full = noise_bandwidth((), self.digital, f_low, folded_source=True).white_hz + f_low
        if self._decimated:
            own_path = DigitalPath(self.digital.stages[:1])
            own = noise_bandwidth((), own_path, f_low, folded_source=True).white_hz + f_low
        elif self.adc.architecture == "delta-sigma":
            # An ideal band limit after the converter's output: its noise is taken as
            # flat over its own Nyquist band, 0 … ODR/2.
            own = self.adc.output_rate_hz / 2
        else:
            own = fs / 2
        return full / own

    def reference_bandwidth(self, f_low_hz: float, grid_points: int = 2000):
        """Noise bandwidth of the reference path: its filter, then the digital filtering.

        The ADC samples its reference, so reference noise aliases like input noise.
        Without a reference filter the density is taken as flat up to half the sample
        rate and zero above (the reference's output capacitor limits it; say so).
        """
        ref = self.reference
        if ref is not None and ref.responses:
            return noise_bandwidth(ref.responses, self.digital, f_low_hz, grid_points=grid_points)
        if self.digital is None:
            return noise_bandwidth(
                (), None, f_low_hz, f_high_hz=self.adc.sample_rate_hz / 2, grid_points=grid_points
            )
        return noise_bandwidth(
            (), self.digital, f_low_hz, grid_points=grid_points, folded_source=True
        )


def describe_reference(reference: Reference | None) -> str:
    if reference is None:
        return "no reference given: reference noise not counted"
    if reference.ratiometric:
        return "ratiometric: reference noise cancels to first order"
    if not reference.responses:
        return (
            "evaluated at the largest ADC input the sensor produces; no reference filter: "
            "its density taken as flat to half the sample rate"
        )
    return "evaluated at the largest ADC input the sensor produces"


def _ideal_decimator(stage) -> bool:
    return isinstance(stage, IdealLowpass) and stage.decimate_to_hz is not None


def _band_at_output_rate(digital: DigitalPath | None, adc) -> DigitalPath | None:
    """An ideal band limit stated at a delta-sigma converter's data rate, as the chain runs it.

    Ideal band limits running at the converter's output rate, with no model of its
    decimation filter in front, become one ideal decimator from the modulator rate:
    band-limited to the lowest cut-off, output at the data rate. Analog noise then
    counts from the band and from the images around multiples of the modulator
    rate (which a real decimator passes too); the converter's own figure at its
    data rate is scaled by cut-off/(ODR/2). Returns None when the path is not of
    that form (band limits with a stated FIR length keep their own settling, so
    they are left as given).
    """
    if digital is None or adc.architecture != "delta-sigma":
        return None
    if math.isclose(digital.sample_rate_hz, adc.sample_rate_hz, rel_tol=1e-9):
        return None
    if not math.isclose(digital.sample_rate_hz, adc.output_rate_hz, rel_tol=1e-9):
        return None
    if not all(
        isinstance(s, IdealLowpass) and s.decimate_to_hz is None and s.taps is None
        for s in digital.stages
    ):
        return None
    cutoff = min(s.cutoff_hz for s in digital.stages)
    return DigitalPath(
        (IdealLowpass(cutoff, adc.sample_rate_hz, decimate_to_hz=adc.output_rate_hz),)
    )
