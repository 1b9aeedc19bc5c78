"""The parts of a measurement chain, as frozen dataclasses that validate themselves.

A chain runs sensor → analog stages (gain stages and filters, in order) → ADC,
with a voltage reference beside the ADC and digital filtering after it. Every
field is SI. Field names in errors are the names a design file uses; the design
file loader prefixes them with the stage's place (``stages[1].en``).
"""

from __future__ import annotations

import math
import numbers
from dataclasses import dataclass, field

import numpy as np

from ..errors import DesignError
from ..noise.responses import AnalogLowpass, SectionsLowpass
from ..units.formatting import format_number, format_si

__all__ = [
    "NoiseDensity",
    "Sensor",
    "NonInvertingStage",
    "IntegratedAmplifier",
    "RCFilter",
    "ActiveFilter",
    "InvertingStage",
    "TransimpedanceStage",
    "AnalogStage",
    "ACTIVE_FILTER_TOPOLOGIES",
    "MAX_SECTION_Q",
    "Reference",
]


def _is_number(value: object) -> bool:
    return isinstance(value, numbers.Real) and not isinstance(value, bool | np.bool_)


def check_positive(name: str, value: float, what: str) -> float:
    """Return ``value`` if it is a finite number > 0, else raise DesignError(name, value, what)."""
    if not _is_number(value):
        raise DesignError(name, value, what)
    if not (math.isfinite(value) and value > 0):
        raise DesignError(name, value, what)
    return float(value)


def check_nonnegative(name: str, value: float, what: str) -> float:
    """Return ``value`` if it is a finite number ≥ 0, else raise DesignError."""
    if not _is_number(value):
        raise DesignError(name, value, what)
    if not (math.isfinite(value) and value >= 0):
        raise DesignError(name, value, what)
    return float(value)


def check_optional_positive(name: str, value: float | None, what: str) -> None:
    if value is not None:
        check_positive(name, value, what)


@dataclass(frozen=True)
class NoiseDensity:
    """A 1/f + white noise density: e(f)² = white²·(1 + corner/f).

    Parameters
    ----------
    white : float
        White (flat) density, V/√Hz or A/√Hz (≥ 0).
    corner_hz : float
        1/f corner frequency, Hz (≥ 0; 0 for white noise only).

    Examples
    --------
    >>> NoiseDensity(4e-9, 10.0)
    NoiseDensity(white=4e-09, corner_hz=10.0)
    """

    white: float
    corner_hz: float = 0.0

    def __post_init__(self) -> None:
        check_nonnegative("white", self.white, "a noise density ≥ 0")
        check_nonnegative("corner", self.corner_hz, "a 1/f corner frequency ≥ 0 Hz")

    def scaled(self, factor: float) -> NoiseDensity:
        """The same shape with the white level multiplied by ``factor``."""
        return NoiseDensity(self.white * factor, self.corner_hz)


@dataclass(frozen=True)
class Sensor:
    """The sensor as the chain sees it.

    Parameters
    ----------
    span_v : float
        Full-scale output span, V: the whole range of the output (20 mV for ±10 mV).
    resistance_ohm : float
        Output (source) resistance, Ω (> 0); its thermal noise is counted.
    bipolar : bool
        The output swings both ways about ``offset_v`` (±span/2) rather than
        from ``offset_v`` up by the span.
    noise : NoiseDensity, optional
        The sensor's own noise beyond the thermal noise of its resistance, V/√Hz.
    temperature_k : float, optional
        Temperature of the sensor, K; the chain's temperature when omitted.
    name : str
        Label used in the budget.
    offset_v : float
        Output at the bottom of the span (unipolar) or at its middle (bipolar), V:
        an RTD's voltage at the lowest temperature measured, a bridge's zero offset.
        It moves the input window the ADC must hold and the largest input the
        reference noise acts on.
    capacity : float, optional
        The full scale the span stands for, in SI units of ``capacity_unit``
        (200 kg of a load cell: 200.0, ``"kg"``). See :meth:`from_sensitivity`.
    capacity_unit : str
        SI base unit of ``capacity`` (``"kg"``, ``"K"``, ``""`` for a number).
    capacitance_f : float, optional
        Capacitance across the output, F: a piezo element, a photodiode's junction,
        a long cable. It shunts the current noise of the next stage above
        1/(2πR_sC) and, at an op-amp's inverting input, raises its e_n noise gain.
    dark_current_a : float
        A DC current through the sensor, A (≥ 0), such as a photodiode's dark current:
        its shot noise 2qI (Schottky 1918) is counted at the output.
    differential : bool
        A balanced source: the resistance is split into two halves, one in each
        leg, so each input's current noise flows in its own half (i_n·R_s/√2 each).
        The first stage must then take a differential input (an amplifier stage).
    output : {"voltage", "current"}
        ``"current"``: the sensor is a current source (a photodiode): ``span_v`` and
        ``offset_v`` are then in A, ``resistance_ohm`` is its shunt resistance, and
        everything referred to the sensor is in A. The shot noise of the signal
        current at its largest value is counted with the dark current's. The first
        stage must be a transimpedance stage.
    """

    span_v: float
    resistance_ohm: float
    bipolar: bool = False
    noise: NoiseDensity | None = None
    temperature_k: float | None = None
    name: str = "sensor"
    offset_v: float = 0.0
    capacity: float | None = None
    capacity_unit: str = ""
    capacitance_f: float | None = None
    dark_current_a: float = 0.0
    differential: bool = False
    output: str = "voltage"

    @classmethod
    def from_sensitivity(
        cls,
        sensitivity: float | str,
        excitation: float | str,
        resistance_ohm: float,
        *,
        capacity: float | str | None = None,
        **kwargs,
    ) -> Sensor:
        """A sensor whose span is sensitivity × excitation, as a design file states it.

        Parameters
        ----------
        sensitivity : float or str
            Full-scale output per volt of excitation: 2e-3 or ``"2 mV/V"``.
        excitation : float or str
            Excitation, V: 5.0 or ``"5 V"``.
        resistance_ohm : float
            Output resistance, Ω.
        capacity : float or str, optional
            The full scale in engineering units, such as ``"200 kg"``.
        **kwargs
            Any other field of :class:`Sensor`.

        Examples
        --------
        >>> s = Sensor.from_sensitivity("2 mV/V", "5 V", 350.0, capacity="200 kg")
        >>> s.span_v, s.capacity, s.capacity_unit
        (0.01, 200.0, 'kg')
        """
        from .engineering import engineering_quantity, span_from_sensitivity

        span = span_from_sensitivity(sensitivity, excitation)
        cap, unit = (None, "") if capacity is None else engineering_quantity(capacity, "capacity")
        return cls(span, resistance_ohm, capacity=cap, capacity_unit=unit, **kwargs)

    def __post_init__(self) -> None:
        unit = "A" if self.output == "current" else "V"
        if self.output not in ("voltage", "current"):
            raise DesignError("output", self.output, '"voltage" or "current"')
        check_positive("span", self.span_v, f"a full-scale output span > 0 {unit}")
        check_positive("resistance", self.resistance_ohm, "a source resistance > 0 ohm")
        check_optional_positive("capacitance", self.capacitance_f, "a capacitance > 0 F")
        check_nonnegative("dark_current", self.dark_current_a, "a dark current ≥ 0 A")
        if not isinstance(self.differential, bool):
            raise DesignError("differential", self.differential, "true or false")
        if self.differential and self.output == "current":
            raise DesignError("differential", True, "false for a current-output sensor")
        if not (_is_number(self.offset_v) and math.isfinite(self.offset_v)):
            raise DesignError("offset", self.offset_v, "a finite offset voltage, V")
        if self.temperature_k is not None:
            check_positive("temperature", self.temperature_k, "a temperature above 0 K")
        if self.capacity is not None:
            check_positive("capacity", self.capacity, "a full scale > 0 in its unit")

    @property
    def unit(self) -> str:
        """Unit of the span and of everything referred to the sensor: "V" or "A"."""
        return "A" if self.output == "current" else "V"

    @property
    def output_range_v(self) -> tuple[float, float]:
        """Lowest and highest output, V."""
        if self.bipolar:
            return self.offset_v - self.span_v / 2, self.offset_v + self.span_v / 2
        return self.offset_v, self.offset_v + self.span_v

    @property
    def peak_v(self) -> float:
        """Largest |output|, V: span/2 when bipolar about zero, span when unipolar from zero."""
        low, high = self.output_range_v
        return max(abs(low), abs(high))


@dataclass(frozen=True)
class NonInvertingStage:
    """An op-amp non-inverting gain stage, gain 1 + RF/RG.

    Parameters
    ----------
    name : str
        Label used in the budget.
    rf_ohm : float
        Feedback resistor, Ω (≥ 0; 0 for a follower).
    rg_ohm : float or None
        Resistor from the inverting input to ground, Ω (> 0); None for a follower.
    en : NoiseDensity
        Input voltage noise, V/√Hz, with its 1/f corner.
    in_plus : NoiseDensity
        Current noise of the non-inverting input, A/√Hz.
    in_minus : NoiseDensity, optional
        Current noise of the inverting input, A/√Hz; ``in_plus`` when omitted.
    gbw_hz : float, optional
        Gain-bandwidth product, Hz; the closed-loop bandwidth GBW/(1 + RF/RG)
        limits the noise band as a single pole.

    Notes
    -----
    Referred to its input (Motchenbacher & Connelly, ch. 2):
    e_RTI² = e_n² + (i_n+·R_s)² + (i_n−·RF‖RG)² + 4kT·(RF‖RG), the source's own
    4kTR_s being counted with the source.
    """

    name: str
    rf_ohm: float
    rg_ohm: float | None
    en: NoiseDensity
    in_plus: NoiseDensity
    in_minus: NoiseDensity | None = None
    gbw_hz: float | None = None

    def __post_init__(self) -> None:
        check_nonnegative("rf", self.rf_ohm, "a feedback resistance ≥ 0 ohm")
        if self.rg_ohm is not None:
            check_positive("rg", self.rg_ohm, "a gain resistance > 0 ohm (omit it for a follower)")
        elif self.rf_ohm != 0:
            raise DesignError("rg", None, "a gain resistance > 0 ohm when rf is not 0")
        check_optional_positive("gbw", self.gbw_hz, "a gain-bandwidth product > 0 Hz")

    @property
    def gain(self) -> float:
        return 1.0 if self.rg_ohm is None else 1.0 + self.rf_ohm / self.rg_ohm

    @property
    def feedback_parallel_ohm(self) -> float:
        """RF‖RG, Ω: the resistance the inverting input sees."""
        if self.rg_ohm is None or self.rf_ohm == 0:
            return 0.0
        return self.rf_ohm * self.rg_ohm / (self.rf_ohm + self.rg_ohm)

    @property
    def responses(self) -> tuple[AnalogLowpass, ...]:
        if self.gbw_hz is None:
            return ()
        return (AnalogLowpass("rc", 1, self.gbw_hz / self.gain),)

    output_resistance_ohm = 0.0


@dataclass(frozen=True)
class IntegratedAmplifier:
    """An instrumentation amplifier, PGA or fully differential driver given by its noise.

    Parameters
    ----------
    name : str
        Label used in the budget.
    gain : float
        Voltage gain, V/V (> 0).
    input_noise : NoiseDensity
        Input-stage voltage noise, V/√Hz.
    output_noise : NoiseDensity, optional
        Output-stage voltage noise, V/√Hz (referred to the input by dividing by the gain).
    current_noise : NoiseDensity, optional
        Input current noise, A/√Hz; it flows in the resistance ahead of the input.
    bandwidth_hz : float, optional
        −3 dB bandwidth at this gain, Hz (a single pole).

    Notes
    -----
    e_RTI² = e_in² + (e_out/G)² + (i_n·R_s)² (the usual two-stage model of an
    integrated in-amp; Motchenbacher & Connelly, ch. 2).
    """

    name: str
    gain: float
    input_noise: NoiseDensity
    output_noise: NoiseDensity | None = None
    current_noise: NoiseDensity | None = None
    bandwidth_hz: float | None = None

    def __post_init__(self) -> None:
        check_positive("gain", self.gain, "a gain > 0 V/V")
        check_optional_positive("bandwidth", self.bandwidth_hz, "a bandwidth > 0 Hz")

    @property
    def responses(self) -> tuple[AnalogLowpass, ...]:
        if self.bandwidth_hz is None:
            return ()
        return (AnalogLowpass("rc", 1, self.bandwidth_hz),)

    output_resistance_ohm = 0.0


@dataclass(frozen=True)
class RCFilter:
    """A passive single-pole RC low-pass: series R, shunt C.

    Its resistor's thermal noise is filtered by its own pole: alone it integrates
    to √(kT/C). The resistance adds to what a following amplifier's current noise sees.

    Parameters
    ----------
    name : str
        Label used in the budget.
    resistance_ohm : float
        Series resistance, Ω; after a differential sensor the sum of both legs.
    capacitance_f : float
        Shunt capacitance, F; after a differential sensor, across the legs.
    leg_capacitance_f : float
        After a differential sensor only: a capacitor from each leg to ground, F (≥ 0).
        The differential-mode cut-off is then 1/(2πR(C + C_leg/2)) (each half of the
        circuit sees R/2 with 2C + C_leg to the virtual ground).
    """

    name: str
    resistance_ohm: float
    capacitance_f: float
    leg_capacitance_f: float = 0.0

    def __post_init__(self) -> None:
        check_positive("resistance", self.resistance_ohm, "a resistance > 0 ohm")
        check_positive("capacitance", self.capacitance_f, "a capacitance > 0 F")
        check_nonnegative("leg_capacitance", self.leg_capacitance_f, "a capacitance ≥ 0 F")

    gain = 1.0

    @property
    def cutoff_hz(self) -> float:
        c = self.capacitance_f + self.leg_capacitance_f / 2.0
        return 1.0 / (2.0 * math.pi * self.resistance_ohm * c)

    @property
    def responses(self) -> tuple[AnalogLowpass, ...]:
        return (AnalogLowpass("rc", 1, self.cutoff_hz),)

    @property
    def output_resistance_ohm(self) -> float:
        return self.resistance_ohm


@dataclass(frozen=True)
class ActiveFilter:
    """An active low-pass of a given response and order.

    Parameters
    ----------
    name : str
        Label used in the budget.
    response : {"rc", "butterworth", "bessel"}
        Response shape.
    order : int
        Order, 1–8.
    cutoff_hz : float
        −3 dB frequency, Hz.
    gain : float
        Pass-band gain, V/V.
    noise_resistance_ohm : float
        Equivalent input resistor whose thermal noise stands for the filter's
        resistors, Ω (≥ 0).
    en : NoiseDensity, optional
        Without a topology: op-amp voltage noise referred to the filter input, V/√Hz.
        With one: the e_n of each section's op amp.
    topology : {"sallen-key", "multiple-feedback"}, optional
        Build the filter as a circuit: a cascade of second-order sections of this
        topology (plus a buffered RC real pole for an odd order), with section f₀ and Q
        from the Butterworth or Bessel prototype and component values from
        :mod:`resplan.noise.sections` (capacitors ``capacitor_f``). Every resistor and
        op-amp source is then its own contribution, with its own transfer. Without a
        topology the filter is a behavioural block: its response times its gain, with
        ``noise_resistance`` and ``en`` entering at its input.
    in_noise : NoiseDensity, optional
        With a topology: each op amp's input current noise (both inputs), A/√Hz.
    gbw_hz : float, optional
        With a topology: each op amp's gain-bandwidth product, Hz; ideal when omitted.
    capacitor_f : float
        With a topology: the capacitor the synthesis starts from (C2 of each section and
        the real pole's C), F; 10 nF by default (common practice, no source).
    sections : tuple of section values, optional
        With a topology: the filter given by its component values instead of
        (response, order, cutoff): :class:`~resplan.noise.sections.SallenKeyValues`,
        :class:`~resplan.noise.sections.MultipleFeedbackValues` (as the topology) or
        :class:`~resplan.noise.sections.RealPoleValues` (a buffered RC pole), in signal
        order. Build it with :meth:`from_sections`; ``response`` is then ``"sections"``
        and ``order``, ``cutoff_hz`` and ``gain`` are read off the values.

    Notes
    -----
    With a topology the pass-band gain (≥ 1) is taken by the first second-order section;
    a multiple-feedback section inverts, and ``gain`` is the magnitude.
    """

    name: str
    response: str
    order: int
    cutoff_hz: float
    gain: float = 1.0
    noise_resistance_ohm: float = 0.0
    en: NoiseDensity | None = None
    topology: str | None = None
    in_noise: NoiseDensity | None = None
    gbw_hz: float | None = None
    capacitor_f: float = 10e-9
    sections: tuple = ()
    _lowpass: AnalogLowpass | SectionsLowpass = field(init=False, repr=False, compare=False)

    @classmethod
    def from_sections(cls, name: str, topology: str, sections: tuple, **kwargs) -> ActiveFilter:
        """An active filter given by the component values of its sections.

        Examples
        --------
        >>> from resplan.noise.sections import sallen_key_lowpass
        >>> f = ActiveFilter.from_sections("f", "sallen-key", (sallen_key_lowpass(1e3, 0.7071),))
        >>> f.order, round(f.cutoff_hz, 1), f.gain
        (2, 1000.0, 1.0)
        """
        from ..noise.sections import section_f0_q

        shape = []
        gain = 1.0
        for k, values in enumerate(sections):
            try:
                f0, q, g = section_f0_q(values)
            except DesignError as err:
                raise DesignError(f"sections[{k}]", err.value, err.expected) from None
            shape.append((f0, q))
            gain *= g
        response = SectionsLowpass(tuple(shape))
        return cls(
            name,
            "sections",
            response.order,
            response.cutoff_hz,
            gain,
            topology=topology,
            sections=tuple(sections),
            **kwargs,
        )

    def __post_init__(self) -> None:
        if self.sections:
            self._check_sections()
            return
        check_positive("gain", self.gain, "a pass-band gain > 0 V/V")
        check_nonnegative("noise_resistance", self.noise_resistance_ohm, "a resistance ≥ 0 ohm")
        if self.topology is not None:
            if self.topology not in ACTIVE_FILTER_TOPOLOGIES:
                raise DesignError("topology", self.topology, '"sallen-key" or "multiple-feedback"')
            if self.response == "rc" or self.order < 2:
                raise DesignError(
                    "order", self.order, "an order of 2 to 8 (Butterworth or Bessel) for a topology"
                )
            if self.gain < 1.0:
                raise DesignError("gain", self.gain, "a pass-band gain ≥ 1 V/V with a topology")
            if self.noise_resistance_ohm:
                raise DesignError(
                    "noise_resistance",
                    self.noise_resistance_ohm,
                    "no equivalent resistor with a topology (each resistor is counted)",
                )
        check_optional_positive("gbw", self.gbw_hz, "a gain-bandwidth product > 0 Hz")
        check_positive("capacitor", self.capacitor_f, "a capacitance > 0 F")
        try:
            lowpass = AnalogLowpass(self.response, self.order, self.cutoff_hz)
        except DesignError as err:
            raise DesignError(err.field.removeprefix("filter."), err.value, err.expected) from None
        object.__setattr__(self, "_lowpass", lowpass)

    def _check_sections(self) -> None:
        from ..noise.sections import (
            MultipleFeedbackValues,
            RealPoleValues,
            SallenKeyValues,
            section_f0_q,
        )

        if self.topology not in ACTIVE_FILTER_TOPOLOGIES:
            raise DesignError("topology", self.topology, '"sallen-key" or "multiple-feedback"')
        pair = SallenKeyValues if self.topology == "sallen-key" else MultipleFeedbackValues
        shape = []
        for k, values in enumerate(self.sections):
            if not isinstance(values, pair | RealPoleValues):
                raise DesignError(
                    f"sections[{k}]", type(values).__name__, f"a {self.topology} section"
                )
            try:
                f0, q, _ = section_f0_q(values)
            except DesignError as err:
                raise DesignError(f"sections[{k}]", err.value, err.expected) from None
            if q is not None and q > MAX_SECTION_Q:
                raise DesignError(
                    f"sections[{k}]",
                    f"Q = {format_number(q)} at {format_si(f0, 'Hz')}",
                    f"a section Q ≤ {format_number(MAX_SECTION_Q)} (a higher Q sits close to "
                    "oscillation and a 1 % part moves its peak by several dB)",
                )
            shape.append((f0, q))
        if self.noise_resistance_ohm:
            raise DesignError(
                "noise_resistance",
                self.noise_resistance_ohm,
                "no equivalent resistor with sections",
            )
        check_optional_positive("gbw", self.gbw_hz, "a gain-bandwidth product > 0 Hz")
        object.__setattr__(self, "_lowpass", SectionsLowpass(tuple(shape)))

    @property
    def responses(self) -> tuple[AnalogLowpass | SectionsLowpass, ...]:
        return (self._lowpass,)

    output_resistance_ohm = 0.0


#: Topologies of an active filter built as a circuit.
ACTIVE_FILTER_TOPOLOGIES = ("sallen-key", "multiple-feedback")
#: Sections with a higher Q are refused: a part tolerance of 1 % moves their peak by
#: several dB and they sit close to oscillation (common practice, no source).
MAX_SECTION_Q = 50.0


@dataclass(frozen=True)
class InvertingStage:
    """An op-amp inverting gain stage, gain −RF/R_in.

    Parameters
    ----------
    name : str
        Label used in the budget.
    rf_ohm : float
        Feedback resistor, Ω (> 0).
    rin_ohm : float
        Input resistor from the stage input to the inverting input, Ω (> 0); it loads
        whatever drives it (the virtual ground is at its far end).
    en : NoiseDensity
        Op-amp input voltage noise, V/√Hz.
    in_minus : NoiseDensity
        Current noise of the inverting input, A/√Hz (the + input is grounded, so its
        current noise does not matter).
    gbw_hz : float, optional
        Gain-bandwidth product, Hz; ideal when omitted.

    Notes
    -----
    ``gain`` is the magnitude RF/R_in: resplan judges noise and ranges in magnitude; the
    inversion only swaps the ends of the ADC window, which a bipolar range does not mind.
    Referred to its input, e_n appears with noise gain 1 + RF/R_in
    (Motchenbacher & Connelly, ch. 2); the solver gives it exactly.
    """

    name: str
    rf_ohm: float
    rin_ohm: float
    en: NoiseDensity
    in_minus: NoiseDensity = NoiseDensity(0.0)
    gbw_hz: float | None = None

    def __post_init__(self) -> None:
        check_positive("rf", self.rf_ohm, "a feedback resistance > 0 ohm")
        check_positive("rin", self.rin_ohm, "an input resistance > 0 ohm")
        check_optional_positive("gbw", self.gbw_hz, "a gain-bandwidth product > 0 Hz")

    @property
    def gain(self) -> float:
        return self.rf_ohm / self.rin_ohm

    @property
    def noise_gain(self) -> float:
        """1 + RF/R_in: the gain e_n sees, V/V."""
        return 1.0 + self.rf_ohm / self.rin_ohm

    @property
    def responses(self) -> tuple[AnalogLowpass, ...]:
        if self.gbw_hz is None:
            return ()
        return (AnalogLowpass("rc", 1, self.gbw_hz / self.noise_gain),)

    output_resistance_ohm = 0.0


@dataclass(frozen=True)
class TransimpedanceStage:
    """A transimpedance amplifier: current in, RF·I out, RF ∥ CF in the feedback.

    Parameters
    ----------
    name : str
        Label used in the budget.
    rf_ohm : float
        Feedback resistor, Ω (> 0): the gain, V/A.
    cf_f : float, optional
        Feedback capacitor across RF, F; it sets the signal bandwidth 1/(2πRF·CF)
        and keeps the loop stable against the sensor's capacitance.
    en : NoiseDensity
        Op-amp input voltage noise, V/√Hz. Its noise gain 1 + Z_F/Z_in rises above the
        zero set by RF and the input capacitance to 1 + C_in/CF (the e_n·C_in peaking),
        then falls with the loop gain; the solver gives that shape exactly.
    in_minus : NoiseDensity
        Current noise of the inverting input, A/√Hz.
    gbw_hz : float, optional
        Gain-bandwidth product, Hz; ideal when omitted.
    input_capacitance_f : float
        The op amp's own input capacitance (common-mode plus differential), F (≥ 0).

    Notes
    -----
    Its input must be the chain's sensor, a current source (``Sensor.output = "current"``).
    Sources: Graeme, *Photodiode Amplifiers: Op Amp Solutions*, McGraw-Hill 1996
    (from memory), and Motchenbacher & Connelly ch. 2 for the noise model.
    """

    name: str
    rf_ohm: float
    en: NoiseDensity
    in_minus: NoiseDensity = NoiseDensity(0.0)
    cf_f: float | None = None
    gbw_hz: float | None = None
    input_capacitance_f: float = 0.0

    def __post_init__(self) -> None:
        check_positive("rf", self.rf_ohm, "a feedback resistance > 0 ohm")
        check_optional_positive("cf", self.cf_f, "a feedback capacitance > 0 F")
        check_optional_positive("gbw", self.gbw_hz, "a gain-bandwidth product > 0 Hz")
        check_nonnegative("input_capacitance", self.input_capacitance_f, "a capacitance ≥ 0 F")

    @property
    def gain(self) -> float:
        """RF, V/A (transimpedance)."""
        return self.rf_ohm

    @property
    def noise_gain(self) -> float:
        return 1.0

    @property
    def responses(self) -> tuple[AnalogLowpass, ...]:
        if self.cf_f is None:
            return ()
        return (AnalogLowpass("rc", 1, 1.0 / (2.0 * math.pi * self.rf_ohm * self.cf_f)),)

    output_resistance_ohm = 0.0


AnalogStage = (
    NonInvertingStage
    | IntegratedAmplifier
    | RCFilter
    | ActiveFilter
    | InvertingStage
    | TransimpedanceStage
)


@dataclass(frozen=True)
class Reference:
    """The ADC's voltage reference.

    Parameters
    ----------
    voltage_v : float
        Reference voltage, V (> 0).
    noise : NoiseDensity, optional
        Noise density, V/√Hz, with its 1/f corner. Use :meth:`from_band_rms` for a
        data-sheet figure in µV rms over a band.
    filter_cutoff_hz : float, optional
        A single-pole reference filter, Hz.
    ratiometric : bool
        The sensor's excitation comes from this reference, so reference noise
        cancels to first order and is not counted.

    Notes
    -----
    An input V_in at the ADC sees an error V_in·σ_ref/V_ref: zero at zero input and
    worst at full scale. The budget evaluates it at the largest input the sensor
    produces.
    """

    voltage_v: float
    noise: NoiseDensity | None = None
    filter_cutoff_hz: float | None = None
    ratiometric: bool = False
    name: str = "reference"

    def __post_init__(self) -> None:
        check_positive("voltage", self.voltage_v, "a reference voltage > 0 V")
        check_optional_positive("filter_cutoff", self.filter_cutoff_hz, "a cut-off > 0 Hz")

    @staticmethod
    def density_from_band_rms(
        rms_v: float, f_low_hz: float, f_high_hz: float, corner_hz: float
    ) -> NoiseDensity:
        """The 1/f + white density that gives ``rms_v`` over [f_low, f_high].

        Notes
        -----
        Inverts v² = e_w²(f_c ln(f_H/f_L) + f_H − f_L) (see
        :func:`resplan.noise.physics.integrate_flicker_white`). The corner must be stated:
        a 0.1–10 Hz figure is mostly 1/f noise and says nothing of the white floor alone.
        """
        check_nonnegative("noise", rms_v, "a noise ≥ 0 V rms")
        check_positive("noise_band_low", f_low_hz, "a band edge > 0 Hz")
        if not (math.isfinite(f_high_hz) and f_high_hz > f_low_hz):
            raise DesignError(
                "noise_band_high", f_high_hz, f"a band edge above {format_si(f_low_hz, 'Hz')}"
            )
        check_nonnegative("corner", corner_hz, "a 1/f corner ≥ 0 Hz")
        power_bw = corner_hz * math.log(f_high_hz / f_low_hz) + (f_high_hz - f_low_hz)
        return NoiseDensity(rms_v / math.sqrt(power_bw), corner_hz)

    @property
    def responses(self) -> tuple[AnalogLowpass, ...]:
        if self.filter_cutoff_hz is None:
            return ()
        return (AnalogLowpass("rc", 1, self.filter_cutoff_hz),)
