"""Design-file format: the pydantic models of the TOML tables and their JSON Schema.

One model per table of a design file (``[meta]``, ``[requirement]``,
``[sensor]``, ``[[stages]]``, ``[reference]``, ``[adc]``, ``[digital]``,
``[plan]``). The models check structure only: which tables and fields exist,
their types, no unknown keys. Quantities stay the text the user wrote; they are
read with their units when the tables become core objects
(:mod:`resplan.designfile.parts`, :mod:`resplan.designfile.converter`). Each field
carries a description and an example, which feed the JSON Schema
(:func:`design_schema`) and the "missing" messages.

Examples
--------
>>> sorted(STAGE_TYPES)
['active_filter', 'amplifier', 'inverting', 'noninverting', 'rc_filter', 'transimpedance']
>>> design_schema()["properties"]["sensor"]["$ref"]
'#/$defs/SensorTable'
"""

from __future__ import annotations

import datetime as _dt
from typing import Annotated, Any, Literal

from pydantic import BaseModel, ConfigDict, Field, PlainValidator, WithJsonSchema
from pydantic_core import PydanticCustomError

__all__ = [
    "Quantity",
    "Number",
    "Text",
    "MetaTable",
    "InterfererTable",
    "InterferenceEntry",
    "RequirementTable",
    "SensorTable",
    "StageTable",
    "NonInvertingTable",
    "AmplifierTable",
    "RCFilterTable",
    "ActiveFilterTable",
    "FilterSectionTable",
    "InvertingTable",
    "TransimpedanceTable",
    "STAGE_MODELS",
    "STAGE_TYPES",
    "ReferenceTable",
    "AdcTable",
    "DigitalTable",
    "PlanTable",
    "DesignFile",
    "design_schema",
]


# ---------------------------------------------------------------------------
# field types


def _scalar(value: Any) -> Any:
    if isinstance(value, bool) or not isinstance(value, str | int | float):
        raise PydanticCustomError("quantity_type", 'text with a unit, such as "10 kΩ"')
    return value


def _text(value: Any) -> str:
    if isinstance(value, _dt.date | _dt.datetime | _dt.time):
        return value.isoformat()
    if not isinstance(value, str):
        raise PydanticCustomError("text_type", "text in quotes")
    return value


#: A spread in place of a value (read before these models: resplan.designfile.spreads).
_SPREAD_SCHEMA = {
    "type": "object",
    "description": "A spread: { typ, max }, { value, tolerance }, { min, max } (optionally "
    "with typ) or { value, sigma }, each optionally with tempco.",
    "properties": {
        key: {"type": ["string", "number"]}
        for key in ("typ", "max", "min", "value", "tolerance", "sigma", "tempco")
    },
    "additionalProperties": False,
    "minProperties": 1,
}
#: A quantity written as text with its unit (``"4.5 nV/√Hz"``); read by resplan.units.parse.
Quantity = Annotated[
    Any,
    PlainValidator(_scalar),
    WithJsonSchema({"anyOf": [{"type": "string"}, _SPREAD_SCHEMA]}),
]
#: A plain number (or numeric text) such as a gain or a count.
Number = Annotated[
    Any,
    PlainValidator(_scalar),
    WithJsonSchema({"anyOf": [{"type": ["number", "string"]}, _SPREAD_SCHEMA]}),
]
#: Free text; TOML dates are accepted and kept in ISO form.
Text = Annotated[Any, PlainValidator(_text), WithJsonSchema({"type": "string"})]


def _field(description: str, example: Any = None, **kwargs: Any) -> Any:
    extra = {"examples": [example]} if example is not None else {}
    return Field(None, description=description, **extra, **kwargs)


class _Table(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True)


# ---------------------------------------------------------------------------
# tables


class RevisionTable(_Table):
    """One earlier (or the current) revision of the design, for the report's history."""

    revision: Text = _field("Revision letter or number.", "A")
    date: Text = _field("Date of that revision (text or a TOML date).", "2024-03-12")
    author: Text = _field("Who made it.", "A. Engineer")
    change: Text = _field("What changed, in a line.", "first issue")


class MetaTable(_Table):
    """Title block of the design (free text, shown in every output)."""

    title: Text = _field("Title of the design.", "Hive scale front end")
    project: Text = _field("Project it belongs to.", "apiary logger")
    revision: Text = _field("Revision of the design file.", "B")
    author: Text = _field("Who wrote it.", "A. Engineer")
    date: Text = _field("Date of this revision (text or a TOML date).", "2024-05-01")
    history: list[RevisionTable] | None = _field(
        "Revision history, oldest first ([[meta.history]] tables), printed in the report."
    )


class InterfererTable(_Table):
    """An interferer the anti-alias filter must suppress (used by the planner)."""

    frequency: Quantity = Field(description="Frequency of the interferer.", examples=["150 kHz"])
    amplitude: Quantity = Field(
        description="Its amplitude at the sensor, V rms.", examples=["10 mV"]
    )


class InterferenceEntry(_Table):
    """One stated interferer at the sensor: a tone, mains pickup, or an out-of-band spectrum.

    The fields given decide the form: ``frequency`` (a tone), ``mains`` (mains
    pickup with ``tolerance`` and ``harmonics``), ``spectrum`` or ``spectrum_file``
    (a table of frequency and density).
    """

    name: Text = _field("Label used in tables.", "pump resonance")
    frequency: Quantity = _field("A tone: its frequency.", "82 kHz")
    amplitude: Quantity | list[Quantity] = _field(
        "RMS amplitude at the sensor: of the tone, or of mains pickup at each harmonic "
        "(one value for all, or a list: fundamental, 2nd, 3rd ...).",
        "12 mV",
    )
    mains: Quantity | list[Quantity] = _field(
        "Mains pickup: the nominal mains frequency, or both.", ["50 Hz", "60 Hz"]
    )
    tolerance: Quantity = _field(
        "Mains frequency tolerance; the worst frequency inside it is checked (default 1 %).",
        "1 %",
    )
    harmonics: int | None = _field(
        "Mains harmonics up to this order, the fundamental being 1 (default 1).", 5, strict=True
    )
    spectrum: list[list[Quantity]] | None = _field(
        "An out-of-band spectrum at the sensor: [frequency, density] pairs, ascending.",
        [["100 kHz", "2 µV/√Hz"], ["1 MHz", "200 nV/√Hz"]],
    )
    spectrum_file: Text = _field(
        "The same as a CSV file of frequency,density rows (relative to the design file).",
        "hash.csv",
    )
    allowance: Quantity = _field(
        "Largest residue allowed for this one, V rms at the sensor (default: the "
        "requirement's interference allowance, else 1/5 of the allowed noise).",
        "2 µV",
    )


class RequirementTable(_Table):
    """What the chain must resolve, and the conditions it is judged at."""

    span: Quantity = _field(
        "Sensor full-scale output span, V (the whole range: 20 mV for ±10 mV); a current, A, "
        "for a current-output sensor (one with sensor.shunt_resistance, such as a photodiode). "
        "Give it, or sensitivity and excitation.",
        "10 mV",
    )
    capacity: Quantity = _field(
        "Full scale in engineering units, for resolutions stated in them.", "200 kg"
    )
    sensitivity: Quantity = _field(
        "Full-scale output per volt of excitation; span = sensitivity × excitation.", "2 mV/V"
    )
    excitation: Quantity = _field("Excitation voltage of the sensor.", "5 V")
    resolution: Quantity = _field(
        "Noise-free resolution in engineering units (needs capacity).", "10 g"
    )
    noise_free_counts: Number = _field("Noise-free counts over the span.", 20000)
    noise_free_bits: Number = _field("Noise-free bits over the span (counts = 2^bits).", 14.3)
    dynamic_range: Quantity = _field("Dynamic range: full-scale sine over rms noise, dB.", "110 dB")
    coverage: Quantity = _field(
        "Coverage probability of peak-to-peak noise (default 99.9 %).", "99.9 %"
    )
    f_low: Quantity = _field(
        "Lower band edge, about 1/observation time; bounds 1/f noise (default 0.01 Hz).",
        "0.01 Hz",
    )
    f_high: Quantity = _field("Top of the signal band.", "2 Hz")
    data_rate: Quantity = _field(
        "Output data rate the chain must deliver (checked against the chain).", "10 Hz"
    )
    temperature: Quantity = _field("Temperature of the electronics (default 25 degC).", "25 degC")
    interference: Quantity = _field(
        "Allowance reserved for interference, V rms at the sensor (A rms for a "
        "current-output sensor; default 0).",
        "20 nV",
    )
    yield_: Quantity = _field(
        "Fraction of boards that must meet, judged by `resplan yield` on the lower bound "
        "of its 95 % interval (read with the spreads).",
        "99 %",
        alias="yield",
    )
    interferer: InterfererTable | None = _field(
        "An interferer the anti-alias filter must suppress (a tone; checked as "
        "interferers[0] when both are given).",
        {"frequency": "150 kHz", "amplitude": "10 mV"},
    )
    passband_flatness: Quantity = _field(
        "Largest gain error allowed at the band top (analog and digital together); the "
        "droop is always reported.",
        "0.1 dB",
    )
    headroom: Quantity = _field(
        "Part of the ADC range kept free: the planner's gain keeps it, check fails a span "
        "past it (default 0 %).",
        "10 %",
    )
    settling_time: Quantity = _field(
        "Longest settling allowed after a step or a multiplexer switch.", "50 ms"
    )
    channel_rate: Quantity = _field(
        "Lowest rate of settled results each multiplexed channel must get.", "2 Hz"
    )
    signal_frequency: Quantity = _field(
        "Highest signal frequency, for the ADC's aperture jitter (default: the band top).",
        "20 kHz",
    )
    interferers: list[InterferenceEntry] | None = _field(
        "Stated interferers at the sensor, as [[requirement.interferers]] tables: tones, "
        "mains pickup, out-of-band spectra. Each fails the verdict when its residue "
        "exceeds its allowance.",
    )
    description: Text = _field(
        "The requirement in your words (made from the fields when omitted).",
        "10 g noise-free out of 200 kg",
    )


class SensorTable(_Table):
    """The sensor as the chain sees it (its span is given in [requirement])."""

    name: Text = _field("Label used in tables.", "load-cell bridge")
    resistance: Quantity = _field(
        "Output (source) resistance; its thermal noise is counted.", "350 ohm"
    )
    shunt_resistance: Quantity = _field(
        "A current-output sensor (a photodiode): the resistance across its output, whose "
        "thermal noise current is counted. Give it instead of resistance; the span is then "
        "a current and the first stage a transimpedance stage.",
        "1 Gohm",
    )
    bipolar: bool | None = _field(
        "The output swings both ways about zero (±span/2) rather than 0 … span.",
        False,
        strict=True,
    )
    noise_density: Quantity = _field(
        "The sensor's own noise density beyond its resistance's thermal noise (a current "
        "density for a current-output sensor).",
        "40 nV/√Hz",
    )
    noise_corner: Quantity = _field("1/f corner of the sensor's own noise (default 0 Hz).", "10 Hz")
    temperature: Quantity = _field(
        "Temperature of the sensor (the electronics' temperature when omitted).", "-10 degC"
    )
    offset: Quantity = _field(
        "Output at the bottom of the span (at its middle when bipolar), such as an RTD's "
        "voltage at the lowest temperature measured (default 0 V). It counts in the ADC "
        "input window and in the largest input reference noise acts on. A current for a "
        "current-output sensor.",
        "100 mV",
    )
    capacitance: Quantity = _field(
        "Capacitance across the output (a piezo element, a long cable): it shunts the next "
        "stage's current noise and raises an inverting input's e_n noise gain.",
        "1 nF",
    )
    dark_current: Quantity = _field(
        "A DC current through the sensor whose shot noise 2qI is counted (a photodiode's "
        "dark current; default 0 A).",
        "1 nA",
    )
    differential: bool | None = _field(
        "A balanced source: half the resistance in each leg, so each input's current noise "
        "flows in its own half (the first stage must be an amplifier).",
        False,
        strict=True,
    )


class StageTable(_Table):
    """Fields every stage table has: its label and whether the planner sizes it."""

    name: Text = _field("Label used in tables (and in [plan] weights).", "front end")
    open: bool | None = _field(
        "Let the planner set this part's limits; other required fields become optional.",
        False,
        strict=True,
    )


class NonInvertingTable(StageTable):
    """An op-amp non-inverting gain stage, gain 1 + rf/rg."""

    type: Literal["noninverting"] = Field(description="Stage type.")
    rf: Quantity = _field("Feedback resistor (0 ohm for a follower).", "9.09 kohm")
    rg: Quantity = _field("Gain resistor to ground (omit for a follower).", "1 kohm")
    gain: Number = _field("Gain of an open stage (a given stage's gain is 1 + rf/rg).", 10)
    en: Quantity = _field("Input voltage noise density, white part.", "4.5 nV/√Hz")
    en_corner: Quantity = _field("1/f corner of en (default 0 Hz).", "5 Hz")
    in_: Quantity = _field(
        "Input current noise density (both inputs unless in_minus).", "0.5 pA/√Hz", alias="in"
    )
    in_corner: Quantity = _field("1/f corner of the current noise (default 0 Hz).", "50 Hz")
    in_minus: Quantity = _field("Current noise of the inverting input, if different.", "0.4 pA/√Hz")
    in_minus_corner: Quantity = _field("1/f corner of in_minus (default in_corner).", "50 Hz")
    gbw: Quantity = _field("Gain-bandwidth product; bounds the noise band.", "10 MHz")


class AmplifierTable(StageTable):
    """An integrated in-amp, PGA or differential driver, given by input and output noise."""

    type: Literal["amplifier"] = Field(description="Stage type.")
    gain: Number = _field("Voltage gain, V/V.", 128)
    en: Quantity = _field("Input-stage voltage noise density.", "12 nV/√Hz")
    en_corner: Quantity = _field("1/f corner of en (default 0 Hz).", "2 Hz")
    en_out: Quantity = _field(
        "Output-stage voltage noise density (divided by the gain).", "90 nV/√Hz"
    )
    en_out_corner: Quantity = _field("1/f corner of en_out (default 0 Hz).", "10 Hz")
    in_: Quantity = _field("Input current noise density.", "0.3 pA/√Hz", alias="in")
    in_corner: Quantity = _field("1/f corner of the current noise (default 0 Hz).", "10 Hz")
    bandwidth: Quantity = _field("−3 dB bandwidth at this gain (a single pole).", "50 kHz")


class RCFilterTable(StageTable):
    """A passive single-pole RC low-pass (series R, shunt C)."""

    type: Literal["rc_filter"] = Field(description="Stage type.")
    resistance: Quantity = _field(
        "Series resistance (both legs of a differential filter).", "2 kohm"
    )
    capacitance: Quantity = _field(
        "Shunt capacitance (across the legs when differential).", "10 nF"
    )
    leg_capacitance: Quantity = _field(
        "After a differential sensor: a capacitor from each leg to ground (default none).",
        "1 nF",
    )
    cutoff: Quantity = _field("Cut-off of an open filter (a given filter's is 1/(2πRC)).", "8 kHz")


class FilterSectionTable(_Table):
    """One section of an active filter given by its component values.

    A Sallen-Key pair: r1, r2, c1, c2 (and rf, rg for a gain 1 + rf/rg); a
    multiple-feedback pair: r1, r2, r3, c1, c2 (gain −r2/r1); a buffered real pole:
    r, c.
    """

    r1: Quantity = _field("Input resistor (both topologies).", "11.3 kohm")
    r2: Quantity = _field(
        "Sallen-Key: second series resistor; multiple-feedback: feedback resistor.", "11.3 kohm"
    )
    r3: Quantity = _field("Multiple-feedback: resistor to the inverting input.", "5.6 kohm")
    c1: Quantity = _field(
        "Sallen-Key: feedback capacitor; multiple-feedback: capacitor to ground.", "20 nF"
    )
    c2: Quantity = _field(
        "Sallen-Key: capacitor to ground; multiple-feedback: feedback capacitor.", "10 nF"
    )
    rf: Quantity = _field("Sallen-Key with gain: feedback resistor of 1 + rf/rg.", "10 kohm")
    rg: Quantity = _field("Sallen-Key with gain: resistor to ground of 1 + rf/rg.", "10 kohm")
    r: Quantity = _field("A buffered real pole: its resistor.", "15.9 kohm")
    c: Quantity = _field("A buffered real pole: its capacitor.", "10 nF")


class ActiveFilterTable(StageTable):
    """An active low-pass of a given response and order."""

    type: Literal["active_filter"] = Field(description="Stage type.")
    response: Literal["butterworth", "bessel", "rc"] | None = _field(
        "Response shape.", "butterworth"
    )
    order: int | None = _field("Filter order, 1–8.", 4, strict=True)
    cutoff: Quantity = _field("−3 dB frequency.", "20 kHz")
    gain: Number = _field("Pass-band gain, V/V (default 1).", 1)
    noise_resistance: Quantity = _field(
        "Equivalent input resistor standing for the filter's resistors (default 0).", "2 kohm"
    )
    en: Quantity = _field(
        "Op-amp voltage noise: referred to the filter input without a topology; each "
        "section's op-amp e_n with one.",
        "6 nV/√Hz",
    )
    en_corner: Quantity = _field("1/f corner of en (default 0 Hz).", "10 Hz")
    topology: Literal["sallen-key", "multiple-feedback"] | None = _field(
        "Build the filter as a circuit of this topology (orders 2–8, Butterworth or Bessel): "
        "every resistor and op-amp source is then counted with its own transfer.",
        "sallen-key",
    )
    in_: Quantity = _field(
        "With a topology: each op amp's input current noise.", "0.5 pA/√Hz", alias="in"
    )
    in_corner: Quantity = _field("1/f corner of the current noise (default 0 Hz).", "50 Hz")
    gbw: Quantity = _field("With a topology: each op amp's gain-bandwidth product.", "10 MHz")
    capacitor: Quantity = _field(
        "With a topology: the capacitor the section values start from (default 10 nF).", "10 nF"
    )
    sections: list[FilterSectionTable] | None = _field(
        "With a topology, instead of response, order, cutoff and gain: each section's "
        "component values in signal order, as [[stages.sections]] tables or inline tables.",
        [{"r1": "11.3 kohm", "r2": "11.3 kohm", "c1": "20 nF", "c2": "10 nF"}],
    )


class InvertingTable(StageTable):
    """An op-amp inverting gain stage, gain −rf/rin (its magnitude is counted)."""

    type: Literal["inverting"] = Field(description="Stage type.")
    rf: Quantity = _field("Feedback resistor.", "10 kohm")
    rin: Quantity = _field("Input resistor (it loads what drives it).", "1 kohm")
    en: Quantity = _field("Input voltage noise density, white part.", "4.5 nV/√Hz")
    en_corner: Quantity = _field("1/f corner of en (default 0 Hz).", "5 Hz")
    in_: Quantity = _field("Current noise of the inverting input.", "0.5 pA/√Hz", alias="in")
    in_corner: Quantity = _field("1/f corner of the current noise (default 0 Hz).", "50 Hz")
    gbw: Quantity = _field("Gain-bandwidth product.", "10 MHz")


class TransimpedanceTable(StageTable):
    """A transimpedance amplifier after a current-output sensor: RF ∥ CF in the feedback."""

    type: Literal["transimpedance"] = Field(description="Stage type.")
    rf: Quantity = _field("Feedback resistor: the transimpedance, V/A.", "1 Mohm")
    cf: Quantity = _field(
        "Feedback capacitor across rf (omit for none); the signal bandwidth is 1/(2π·rf·cf).",
        "2 pF",
    )
    en: Quantity = _field("Op-amp input voltage noise density, white part.", "10 nV/√Hz")
    en_corner: Quantity = _field("1/f corner of en (default 0 Hz).", "100 Hz")
    in_: Quantity = _field(
        "Current noise of the inverting input (default 0 A/√Hz).", "1 fA/√Hz", alias="in"
    )
    in_corner: Quantity = _field("1/f corner of the current noise (default 0 Hz).", "10 Hz")
    gbw: Quantity = _field("Gain-bandwidth product (ideal when omitted).", "10 MHz")
    input_capacitance: Quantity = _field(
        "The op amp's own input capacitance, common-mode plus differential (default 0 F); "
        "it adds to the sensor's capacitance in the e_n noise gain.",
        "4 pF",
    )


STAGE_MODELS: dict[str, type[StageTable]] = {
    "noninverting": NonInvertingTable,
    "amplifier": AmplifierTable,
    "rc_filter": RCFilterTable,
    "active_filter": ActiveFilterTable,
    "inverting": InvertingTable,
    "transimpedance": TransimpedanceTable,
}
#: The stage types a design file knows.
STAGE_TYPES = tuple(STAGE_MODELS)

Stage = Annotated[
    NonInvertingTable
    | AmplifierTable
    | RCFilterTable
    | ActiveFilterTable
    | InvertingTable
    | TransimpedanceTable,
    Field(discriminator="type"),
]


class ReferenceTable(_Table):
    """The ADC's voltage reference."""

    name: Text = _field("Label used in tables.", "reference")
    open: bool | None = _field("Let the planner set its noise limit.", False, strict=True)
    voltage: Quantity = _field("Reference voltage.", "2.5 V")
    ratiometric: bool | None = _field(
        "The sensor's excitation comes from this reference: its noise cancels.", True, strict=True
    )
    noise: Quantity = _field("Noise rms over noise_band (with noise_corner).", "3 µV")
    noise_pp: Quantity = _field("Noise peak-to-peak over noise_band (needs pp_factor).", "18 µV")
    pp_factor: Number = _field("Peak-to-peak / rms factor the p-p figure was quoted with.", 6.6)
    noise_band: list[Quantity] | None = _field(
        "The band [low, high] the rms or p-p figure covers.", ["0.1 Hz", "10 Hz"]
    )
    noise_corner: Quantity = _field(
        "1/f corner of the reference noise (required with a band figure).", "10 Hz"
    )
    noise_density: Quantity = _field("Noise density (instead of a band figure).", "40 nV/√Hz")
    filter_cutoff: Quantity = _field("Cut-off of a single-pole reference filter.", "10 Hz")


class AdcTable(_Table):
    """The analog-to-digital converter and its noise in one data-sheet form."""

    name: Text = _field("Label used in tables.", "ADC")
    open: bool | None = _field("Let the planner set its noise limit.", False, strict=True)
    architecture: Literal["sar", "delta-sigma"] | None = _field("Converter type.", "delta-sigma")
    bits: int | None = _field("Output word length.", 24, strict=True)
    full_scale_range: Quantity = _field(
        "Peak-to-peak input range at gain 1 (divided by gain). Or give input_range.", "5 V"
    )
    aperture_jitter: Quantity = _field(
        "RMS aperture (sampling clock) jitter; counted as the contributor adc.jitter.", "1 ps"
    )
    channels: int | None = _field(
        "Inputs multiplexed into the converter (default 1); sets the per-channel rate.",
        4,
        strict=True,
    )
    input_range: Literal["unipolar", "bipolar", "differential"] | None = _field(
        "Range from the reference: unipolar 0…V_ref (FSR = V_ref); bipolar or differential "
        "±V_ref (FSR = 2·V_ref); divided by gain.",
        "bipolar",
    )
    polarity: Literal["unipolar", "bipolar"] | None = _field(
        "Input window: unipolar 0 … FSR or bipolar ±FSR/2 (taken from input_range when that "
        "is given). When known, the sensor's whole output range must fit it.",
        "bipolar",
    )
    gain: Number = _field("Internal gain setting, V/V (default 1).", 128)
    sample_rate: Quantity = _field(
        "Conversion rate (SAR) or modulator rate (delta-sigma).", "256 kHz"
    )
    data_rate: Quantity = _field("Output data rate (delta-sigma).", "10 Hz")
    noise: Quantity = _field("Input-referred noise, V rms, at noise_data_rate.", "50 nV")
    noise_pp: Quantity = _field("Input-referred noise peak-to-peak (needs pp_factor).", "330 nV")
    pp_factor: Number = _field("Peak-to-peak / rms factor the p-p figures were quoted with.", 6.6)
    noise_data_rate: Quantity = _field("Data rate the noise figure was quoted at.", "10 Hz")
    noise_gain: Number = _field(
        "Gain the noise figure was quoted at (required when gain is not 1).", 128
    )
    scale_with_rate: bool | None = _field(
        "Carry the figure to another data rate as white noise, √(ODR/ODR_quoted).",
        False,
        strict=True,
    )
    noise_includes_quantisation: bool | None = _field(
        "Whether noise, noise_pp or the noise table already holds quantisation "
        "(default true); when false, q/√12 is added.",
        False,
        strict=True,
    )
    noise_table: list[tuple[Quantity, Quantity]] | None = _field(
        "Rows of [data rate, noise rms]; the ADC's data rate picks the row.",
        [["10 Hz", "40 nV"], ["20 Hz", "56 nV"]],
    )
    noise_table_pp: list[tuple[Quantity, Quantity]] | None = _field(
        "Rows of [data rate, noise peak-to-peak] (needs pp_factor).", [["10 Hz", "260 nV"]]
    )
    snr: Quantity = _field("SNR for a full-scale sine, dB.", "98 dB")
    snr_sample_rate: Quantity = _field("Sample rate the SNR was quoted at.", "200 kHz")
    transition_noise: Number = _field("Code-transition noise, LSB rms.", 0.6)
    noise_density: Quantity = _field("Input-referred noise density.", "60 nV/√Hz")
    noise_corner: Quantity = _field("1/f corner of noise_density (default 0 Hz).", "1 Hz")


class DigitalTable(_Table):
    """Digital filtering after the converter, in the order decimation → average → band limit."""

    decimation: Literal["sinc1", "sinc2", "sinc3", "sinc4", "sinc5"] | None = _field(
        "Decimation filter of a delta-sigma ADC; ratio = sample_rate / data_rate.", "sinc3"
    )
    average: int | None = _field("Average N output samples (post-averaging).", 16, strict=True)
    band_limit: Quantity = _field(
        "An ideal digital band limit (such as an FIR or FFT bins).", "10 kHz"
    )
    band_limit_taps: int | None = _field(
        "Length of the FIR that realises the band limit, taps; sets its settling.",
        255,
        strict=True,
    )


class PlanTable(_Table):
    """Inputs to the planner."""

    weights: dict[str, Number] | None = _field(
        "Share of the open noise power by part name (1 each by default).",
        {"front end": 2, "ADC": 1},
    )


class DesignFile(_Table):
    """A resplan design file."""

    model_config = ConfigDict(
        extra="forbid",
        frozen=True,
        title="resplan design file",
        json_schema_extra={"$schema": "https://json-schema.org/draft/2020-12/schema"},
    )

    meta: MetaTable | None = _field("Title block.")
    requirement: RequirementTable = Field(description="What the chain must resolve.")
    sensor: SensorTable = Field(description="The sensor.")
    stages: list[Stage] | None = _field("Analog stages in signal order, as [[stages]] tables.")
    reference: ReferenceTable | None = _field("The ADC's voltage reference.")
    adc: AdcTable = Field(description="The converter.")
    digital: DigitalTable | None = _field("Digital filtering after the converter.")
    plan: PlanTable | None = _field("Inputs to the planner.")


# ---------------------------------------------------------------------------
# JSON Schema


def design_schema() -> dict[str, Any]:
    """The JSON Schema of design files, from the pydantic models.

    Examples
    --------
    >>> schema = design_schema()
    >>> sorted(schema["required"])
    ['adc', 'requirement', 'sensor']
    """
    return _without_null(DesignFile.model_json_schema(by_alias=True))


def _without_null(node: Any) -> Any:
    """Drop the ``null`` alternatives pydantic writes for optional fields: TOML has no null."""
    if isinstance(node, list):
        return [_without_null(v) for v in node]
    if not isinstance(node, dict):
        return node
    out = {k: _without_null(v) for k, v in node.items() if not (k == "default" and v is None)}
    branches = out.get("anyOf")
    if isinstance(branches, list):
        kept = [b for b in branches if b != {"type": "null"}]
        if len(kept) == 1 and isinstance(kept[0], dict):
            del out["anyOf"]
            out = {**kept[0], **out}
        else:
            out["anyOf"] = kept
    return out
