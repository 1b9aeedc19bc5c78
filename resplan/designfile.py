"""Design files: TOML text → checked tables → core objects → :class:`resplan.design.Design`.

A design file is plain TOML kept beside the schematic. Reading it goes in three
steps, and every problem of every step is collected so the user sees them all
at once, one line each (:class:`resplan.errors.DesignErrors`):

1. ``tomllib`` parses the text (a syntax error is one line ``file:line:col: ...``);
2. pydantic models check the structure: the tables and fields that exist, their
   types, no unknown keys (with a "did you mean" suggestion);
3. every quantity is read with its unit (:func:`resplan.units.parse_quantity`),
   checked for its dimension and range, and the core objects are built.

The same pydantic models give the JSON Schema (:func:`design_schema`), so an
editor can complete and check a design file. The format is described in
``docs/design-file.md``.

Examples
--------
>>> from resplan.examples import example_text
>>> design = loads_design(example_text("hive-scale"), "hive-scale.toml")
>>> design.is_complete, round(design.requirement.span_v * 1e3, 3)
(True, 10.0)
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import math
import re
import tomllib
import typing
from collections.abc import Callable, Mapping
from pathlib import Path
from typing import Annotated, Any, Literal

from pydantic import BaseModel, ConfigDict, Field, PlainValidator, ValidationError, WithJsonSchema
from pydantic_core import PydanticCustomError

from .bandwidth import DigitalPath
from .chain import ROOM_TEMPERATURE_K, Band
from .converter import (
    ADC,
    InputNoiseDensity,
    NoiseAtRate,
    NoiseTable,
    SnrNoise,
    TransitionNoise,
)
from .design import Design, Meta, OpenPart
from .errors import DesignError, DesignErrors, ResplanError, describe_value
from .formatting import format_si
from .requirement import DEFAULT_COVERAGE, Requirement
from .responses import IdealLowpass, SincFilter
from .stages import (
    ActiveFilter,
    IntegratedAmplifier,
    NoiseDensity,
    NonInvertingStage,
    RCFilter,
    Reference,
    Sensor,
)
from .units import DIMENSIONS, parse_any, parse_db, parse_percent, parse_quantity

__all__ = [
    "DesignFile",
    "DesignFileError",
    "MissingField",
    "UnknownField",
    "load_design",
    "loads_design",
    "design_from_mapping",
    "design_schema",
    "check_design",
    "STAGE_TYPES",
    "MAX_DECIMATION",
    "MAX_AVERAGE",
]

#: Largest decimation ratio accepted (2^20): beyond it the design is implausible.
MAX_DECIMATION = 2**20
#: Largest post-average accepted, samples.
MAX_AVERAGE = 2**20


# ---------------------------------------------------------------------------
# errors


class DesignFileError(ResplanError, ValueError):
    """A design file that cannot be read at all: missing, not text, or bad TOML.

    The message is one line, starting with the file (and ``line:col`` for syntax).
    """


class MissingField(DesignError):
    """A required field that is absent."""

    def _message(self) -> str:
        where = f"{self.source}: " if self.source else ""
        return f"{where}{self.field}: missing, expected {self.expected}"


class UnknownField(DesignError):
    """A key the format does not know; ``expected`` holds the suggestion."""

    def _message(self) -> str:
        where = f"{self.source}: " if self.source else ""
        return f"{where}{self.field}: unknown field, {self.expected}"


def _with_source(err: DesignError, source: str) -> DesignError:
    if err.source:
        return err
    return type(err)(err.field, err.value, err.expected, source)


def _close_match(word: str, choices: typing.Iterable[str]) -> str | None:
    """The choice closest to ``word`` (difflib's ratio ≥ 0.6), if any."""
    import difflib  # only on the error path

    close = difflib.get_close_matches(str(word), list(choices), n=1, cutoff=0.6)
    return close[0] if close else None


def _did_you_mean(word: str, choices: typing.Iterable[str]) -> str:
    hint = _close_match(word, choices)
    return f' (did you mean "{hint}"?)' if hint else ""


def _quoted(value: Any) -> str:
    import json  # only on the error path

    return json.dumps(value, ensure_ascii=False)


def _suggest(word: str, choices: typing.Iterable[str]) -> str:
    choices = list(choices)
    hint = _close_match(word, choices)
    if hint:
        return f'did you mean "{hint}"?'
    return "expected one of " + ", ".join(choices)


# ---------------------------------------------------------------------------
# field types of the pydantic models


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


#: A quantity written as text with its unit (``"4.5 nV/√Hz"``); read by resplan.units.
Quantity = Annotated[Any, PlainValidator(_scalar), WithJsonSchema({"type": "string"})]
#: A plain number (or numeric text) such as a gain or a count.
Number = Annotated[Any, PlainValidator(_scalar), WithJsonSchema({"type": ["number", "string"]})]
#: Free text; TOML dates are accepted and kept in ISO form.
Text = Annotated[Any, PlainValidator(_text), WithJsonSchema({"type": "string"})]


def _field(description: str, example: Any = None, **kwargs: Any) -> Any:
    extra = {"examples": [example]} if example is not None else {}
    return Field(None, description=description, **extra, **kwargs)


class _Table(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True)


class MetaTable(_Table):
    """Title block of the design (free text, shown in every output)."""

    title: Text = _field("Title of the design.", "Hive scale front end")
    project: Text = _field("Project it belongs to.", "apiary logger")
    revision: Text = _field("Revision of the design file.", "B")
    author: Text = _field("Who wrote it.", "A. Engineer")
    date: Text = _field("Date of this revision (text or a TOML date).", "2024-05-01")


class InterfererTable(_Table):
    """An interferer the anti-alias filter must suppress (used by the planner)."""

    frequency: Quantity = Field(description="Frequency of the interferer.", examples=["150 kHz"])
    amplitude: Quantity = Field(
        description="Its amplitude at the sensor, V rms.", examples=["10 mV"]
    )


class RequirementTable(_Table):
    """What the chain must resolve, and the conditions it is judged at."""

    span: Quantity = _field(
        "Sensor full-scale output span, V (the whole range: 20 mV for ±10 mV). "
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
        "Allowance reserved for interference, V rms at the sensor (default 0).", "20 nV"
    )
    interferer: InterfererTable | None = _field(
        "An interferer the anti-alias filter must suppress.",
        {"frequency": "150 kHz", "amplitude": "10 mV"},
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
    bipolar: bool | None = _field(
        "The output swings both ways about zero (±span/2) rather than 0 … span.",
        False,
        strict=True,
    )
    noise_density: Quantity = _field(
        "The sensor's own noise density beyond its resistance's thermal noise.", "40 nV/√Hz"
    )
    noise_corner: Quantity = _field("1/f corner of the sensor's own noise (default 0 Hz).", "10 Hz")
    temperature: Quantity = _field(
        "Temperature of the sensor (the electronics' temperature when omitted).", "-10 degC"
    )


class _StageTable(_Table):
    name: Text = _field("Label used in tables (and in [plan] weights).", "front end")
    open: bool | None = _field(
        "Let the planner set this part's limits; other required fields become optional.",
        False,
        strict=True,
    )


class NonInvertingTable(_StageTable):
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


class AmplifierTable(_StageTable):
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


class RCFilterTable(_StageTable):
    """A passive single-pole RC low-pass (series R, shunt C)."""

    type: Literal["rc_filter"] = Field(description="Stage type.")
    resistance: Quantity = _field(
        "Series resistance (both legs of a differential filter).", "2 kohm"
    )
    capacitance: Quantity = _field("Shunt capacitance.", "10 nF")
    cutoff: Quantity = _field("Cut-off of an open filter (a given filter's is 1/(2πRC)).", "8 kHz")


class ActiveFilterTable(_StageTable):
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
    en: Quantity = _field("Op-amp voltage noise referred to the filter input.", "6 nV/√Hz")
    en_corner: Quantity = _field("1/f corner of en (default 0 Hz).", "10 Hz")


STAGE_MODELS: dict[str, type[_StageTable]] = {
    "noninverting": NonInvertingTable,
    "amplifier": AmplifierTable,
    "rc_filter": RCFilterTable,
    "active_filter": ActiveFilterTable,
}
#: The stage types a design file knows.
STAGE_TYPES = tuple(STAGE_MODELS)

Stage = Annotated[
    NonInvertingTable | AmplifierTable | RCFilterTable | ActiveFilterTable,
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
    input_range: Literal["unipolar", "bipolar", "differential"] | None = _field(
        "Range from the reference: unipolar 0…V_ref (FSR = V_ref); bipolar or differential "
        "±V_ref (FSR = 2·V_ref); divided by gain.",
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


# ---------------------------------------------------------------------------
# pydantic errors → one line each

_TYPE_WORDS = {
    "int_type": "a whole number",
    "int_from_float": "a whole number",
    "int_parsing": "a whole number",
    "bool_type": "true or false",
    "bool_parsing": "true or false",
    "list_type": "a list in [brackets]",
    "tuple_type": "a pair [data rate, noise]",
    "dict_type": "a table",
    "model_type": "a table",
    "model_attributes_type": "a table",
    "too_short": "more items",
    "too_long": "fewer items",
}


_BARE_KEY = re.compile(r"^[A-Za-z0-9_-]+$")


def _key(name: Any) -> str:
    """A key as TOML would write it: bare when it can be, else quoted."""
    text = str(name)
    return text if _BARE_KEY.match(text) else _quoted(text)


def _path(loc: typing.Sequence[Any]) -> str:
    """``("stages", 1, "en")`` → ``"stages[1].en"``."""
    out = ""
    for part in loc:
        if isinstance(part, int):
            out += f"[{part}]"
        else:
            out += ("." if out else "") + _key(part)
    return out


def _strip_tags(loc: tuple) -> tuple:
    # A discriminated union puts the stage type in the location: drop it.
    if len(loc) > 2 and loc[0] == "stages" and isinstance(loc[1], int) and loc[2] in STAGE_MODELS:
        return loc[:2] + loc[3:]
    return loc


def _model_at(loc: tuple, data: Any) -> type[BaseModel] | None:
    """The model that holds the last key of ``loc`` (for suggestions)."""
    model: type[BaseModel] | None = DesignFile
    node = data
    for i, key in enumerate(loc[:-1]):
        if isinstance(key, int):
            node = node[key] if isinstance(node, list) and 0 <= key < len(node) else None
            if i > 0 and loc[i - 1] == "stages":
                tag = node.get("type") if isinstance(node, dict) else None
                model = STAGE_MODELS.get(tag) if isinstance(tag, str) else None
            continue
        if model is None:
            return None
        info = _fields_by_key(model).get(key)
        node = node.get(key) if isinstance(node, dict) else None
        model = _first_model(info.annotation) if info else None
    return model


def _describe_field(model: type[BaseModel] | None, key: Any) -> str:
    """What a field holds, from its description and example, for "missing" messages."""
    info = _fields_by_key(model).get(key) if model is not None else None
    if info is None or not info.description:
        return "a value here"
    text = info.description.rstrip(".")
    text = text[0].lower() + text[1:]
    sub = _first_model(info.annotation)
    if sub is not None:
        return f"a [{key}] table ({text})"
    if info.examples:
        return f"{text}, such as {_quoted(info.examples[0])}"
    return text


def _fields_by_key(model: type[BaseModel]) -> dict[str, Any]:
    return {(info.alias or name): info for name, info in model.model_fields.items()}


def _first_model(annotation: Any) -> type[BaseModel] | None:
    if isinstance(annotation, type) and issubclass(annotation, BaseModel):
        return annotation
    for arg in typing.get_args(annotation):
        found = _first_model(arg)
        if found is not None:
            return found
    return None


def _literal_choices(model: type[BaseModel] | None, key: Any) -> list[str]:
    if model is None:
        return []
    info = _fields_by_key(model).get(key)
    if info is None:
        return []

    def walk(a: Any) -> list[str]:
        if typing.get_origin(a) is Literal:
            return [str(x) for x in typing.get_args(a)]
        return [c for arg in typing.get_args(a) for c in walk(arg)]

    return walk(info.annotation)


def _structure_errors(err: ValidationError, data: Any) -> list[DesignError]:
    out: list[DesignError] = []
    for e in err.errors(include_url=False):
        loc = _strip_tags(tuple(e["loc"]))
        path = _path(loc)
        kind = e["type"]
        value = e.get("input")
        key = loc[-1] if loc else ""
        if kind == "extra_forbidden":
            model = _model_at(loc, data)
            choices = list(_fields_by_key(model)) if model else []
            out.append(UnknownField(path, value, _suggest(str(key), choices)))
        elif kind == "missing":
            out.append(MissingField(path, None, _describe_field(_model_at(loc, data), key)))
        elif kind in ("union_tag_invalid", "union_tag_not_found"):
            tag = (e.get("ctx") or {}).get("tag")
            what = "a stage type: " + ", ".join(STAGE_TYPES)
            if tag is None:
                out.append(MissingField(f"{path}.type", None, what))
            else:
                more = _did_you_mean(tag, STAGE_TYPES)
                out.append(DesignError(f"{path}.type", tag, what + more))
        elif kind == "literal_error":
            choices = _literal_choices(_model_at(loc, data), key)
            more = _did_you_mean(value, choices)
            out.append(DesignError(path, value, "one of " + ", ".join(choices) + more))
        elif path == "stages" and kind == "list_type":
            out.append(DesignError(path, value, "[[stages]] tables, one per stage"))
        else:
            expected = _TYPE_WORDS.get(kind, e["msg"])
            out.append(DesignError(path, value, expected))
    return out


# ---------------------------------------------------------------------------
# reading values with units, collecting every problem

_EXAMPLE = {
    "voltage": '"5 V"',
    "current": '"10 µA"',
    "resistance": '"10 kΩ"',
    "capacitance": '"100 nF"',
    "frequency": '"10 Hz"',
    "temperature": '"25 degC"',
    "voltage_density": '"4.5 nV/√Hz"',
    "current_density": '"0.5 pA/√Hz"',
    "dimensionless": "128",
    "ratio_per_volt": '"2 mV/V"',
}

_NUMBER = re.compile(r"^\s*[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?\s*")


def _unit_text(text: Any) -> str:
    """The unit as the user wrote it (``"200 kg"`` → ``"kg"``)."""
    if not isinstance(text, str):
        return ""
    m = _NUMBER.match(text)
    return text[m.end() :].strip() if m else ""


def _close(a: float, b: float) -> bool:
    return math.isclose(a, b, rel_tol=1e-6)


def _below(x: float, minimum: str | None) -> bool:
    """``x`` fails ``minimum`` (``"> 0"``, ``"≥ 0"`` or None for no bound)."""
    return minimum == "> 0" and not x > 0 or minimum == "≥ 0" and not x >= 0


#: Why a noise field of an open part is refused.
_OPEN = "not used for an open part (the planner sets it); remove it or set open = false"


class _Reader:
    """Turns the checked tables into core objects, collecting every problem."""

    def __init__(self, source: str):
        self.source = source
        self.errors: list[DesignError] = []
        self.notes: list[str] = []

    # -- recording ---------------------------------------------------------
    def bad(self, path: str, value: Any, expected: str) -> None:
        self.errors.append(DesignError(path, value, expected))

    def missing(self, path: str, expected: str) -> None:
        self.errors.append(MissingField(path, None, expected))

    def build(self, path: str, make: Callable[..., Any], *args: Any, **kwargs: Any) -> Any:
        """Call a core constructor; its errors are recorded with ``path`` in front."""
        try:
            return make(*args, **kwargs)
        except DesignError as err:
            self.errors.append(err.with_context(prefix=path) if path else err)
            return None

    def parse(self, read: Callable[..., Any], *args: Any) -> Any:
        """Call a parser of :mod:`resplan.units`; its error is recorded as is, None returned."""
        return self.build("", read, *args)

    def refuse(self, table: BaseModel, path: str, keys: typing.Iterable[str], why: str) -> None:
        for key in keys:
            value = getattr(table, key)
            if value is not None:
                alias = type(table).model_fields[key].alias or key
                self.bad(f"{path}.{alias}", value, why)

    def refuse_open(self, table: BaseModel, path: str, keys: typing.Iterable[str]) -> None:
        """Refuse the noise fields of an open part: the planner sets them."""
        self.refuse(table, path, keys, _OPEN)

    def one_of(
        self, table: BaseModel, path: str, keys: tuple[str, ...], expected: str, missing: str
    ) -> str | None:
        """The one field of ``keys`` that ``table`` gives, or None with the problem recorded.

        With two or more given, the second is refused; with none, ``missing`` is.
        """
        given = [k for k in keys if getattr(table, k) is not None]
        if len(given) == 1:
            return given[0]
        if given:
            self.bad(f"{path}.{given[1]}", getattr(table, given[1]), expected)
        else:
            self.missing(f"{path}.{missing}", expected)
        return None

    # -- values ------------------------------------------------------------
    def q(
        self,
        value: Any,
        dimension: str,
        path: str,
        *,
        required: bool = False,
        minimum: str | None = None,
        default: float | None = None,
    ) -> float | None:
        """Read a quantity; ``minimum`` is ``"> 0"`` or ``"≥ 0"``."""
        what = DIMENSIONS[dimension].description
        if value is None:
            if required:
                self.missing(path, f"{what} such as {_EXAMPLE.get(dimension, '')}".strip())
            return default
        x = self.parse(parse_quantity, value, dimension, path)
        if x is None:
            return None
        if _below(x, minimum):
            unit = DIMENSIONS[dimension].si_unit
            self.bad(path, value, f"{what} {minimum}{' ' + unit if unit else ''}")
            return None
        return x

    def number(
        self,
        value: Any,
        path: str,
        what: str,
        *,
        required: bool = False,
        default: float | None = None,
        minimum: str = "> 0",
    ) -> float | None:
        if value is None:
            if required:
                self.missing(path, what)
            return default
        try:
            x = parse_quantity(value, "dimensionless", path)
        except DesignError:
            self.bad(path, value, what)
            return None
        if _below(x, minimum):
            self.bad(path, value, what)
            return None
        return x

    def density(
        self,
        white: Any,
        corner: Any,
        path: str,
        white_key: str,
        corner_key: str,
        dimension: str = "voltage_density",
        *,
        required: bool = False,
        default_corner: float = 0.0,
    ) -> NoiseDensity | None:
        w = self.q(white, dimension, f"{path}.{white_key}", required=required, minimum="≥ 0")
        c = self.q(
            corner, "frequency", f"{path}.{corner_key}", minimum="≥ 0", default=default_corner
        )
        if w is None or c is None:
            return None
        return NoiseDensity(w, c)

    def pp_factor(self, value: Any, path: str) -> float | None:
        """The factor a peak-to-peak figure was quoted with; required, none is assumed."""
        return self.number(
            value,
            f"{path}.pp_factor",
            "the peak-to-peak factor the figure was "
            "quoted with, such as 6.6 (a p-p figure is refused without it)",
            required=True,
        )


# ---------------------------------------------------------------------------
# tables → core objects


def _requirement(r: _Reader, t: RequirementTable) -> tuple[Requirement | None, float | None]:
    p = "requirement"
    span: float | None = None
    by_sensitivity = t.sensitivity is not None or t.excitation is not None
    if t.span is not None and by_sensitivity:
        r.bad(f"{p}.span", t.span, "either span, or sensitivity and excitation, not both")
    elif t.span is not None:
        span = r.q(t.span, "voltage", f"{p}.span", minimum="> 0")
    elif by_sensitivity:
        s = r.q(t.sensitivity, "ratio_per_volt", f"{p}.sensitivity", required=True, minimum="> 0")
        e = r.q(t.excitation, "voltage", f"{p}.excitation", required=True, minimum="> 0")
        if s is not None and e is not None:
            span = s * e
            if span > 0:
                r.notes.append(
                    f"span = sensitivity × excitation = {t.sensitivity} × {t.excitation} "
                    f"= {format_si(span, 'V')}"
                )
            else:
                r.bad(f"{p}.sensitivity", t.sensitivity, "a sensitivity giving a span > 0 V")
                span = None
    else:
        r.missing(f"{p}.span", 'a span such as "10 mV", or sensitivity and excitation')

    capacity = capacity_unit = None
    if t.capacity is not None:
        read = r.parse(parse_any, t.capacity, f"{p}.capacity")
        if read is not None:
            capacity, capacity_unit = read
            if not capacity > 0 or not _unit_text(t.capacity):
                r.bad(
                    f"{p}.capacity", t.capacity, 'a full scale > 0 with its unit, such as "200 kg"'
                )
                capacity = None

    form = r.one_of(
        t,
        p,
        ("noise_free_counts", "noise_free_bits", "resolution", "dynamic_range"),
        "exactly one of noise_free_counts, noise_free_bits, resolution, dynamic_range",
        "resolution",
    )
    counts = dr = None
    unit_shown = _unit_text(t.capacity) if capacity is not None else ""
    if form == "noise_free_counts":
        counts = r.number(t.noise_free_counts, f"{p}.noise_free_counts", "a count ≥ 1")
        if counts is not None and counts < 1:
            r.bad(f"{p}.noise_free_counts", t.noise_free_counts, "a count ≥ 1")
            counts = None
    elif form == "noise_free_bits":
        bits = r.number(
            t.noise_free_bits,
            f"{p}.noise_free_bits",
            "a number of bits from 0 to 64",
            minimum="≥ 0",
        )
        if bits is not None and bits > 64:
            r.bad(f"{p}.noise_free_bits", t.noise_free_bits, "a number of bits from 0 to 64")
        elif bits is not None:
            counts = 2.0**bits
    elif form == "resolution":
        read = r.parse(parse_any, t.resolution, f"{p}.resolution")
        if read is not None:
            res, res_unit = read
            if t.capacity is None:
                r.missing(
                    f"{p}.capacity",
                    "the full scale in the resolution's unit, such as "
                    '"200 kg", to turn the resolution into counts',
                )
            elif capacity is not None and res_unit != capacity_unit:
                r.bad(
                    f"{p}.resolution",
                    t.resolution,
                    f"a resolution in the unit of the capacity ({t.capacity})",
                )
            elif not res > 0:
                r.bad(f"{p}.resolution", t.resolution, "a resolution > 0")
            elif capacity is not None:
                counts = capacity / res
                if counts < 1:
                    r.bad(f"{p}.resolution", t.resolution, f"a resolution at most {t.capacity}")
                    counts = None
                else:
                    unit_shown = _unit_text(t.resolution)
    elif form == "dynamic_range":
        dr = r.parse(parse_db, t.dynamic_range, f"{p}.dynamic_range")
        if dr is not None and not dr > 0:
            r.bad(f"{p}.dynamic_range", t.dynamic_range, "a dynamic range > 0 dB")
            dr = None

    read = r.parse(parse_percent, t.coverage, f"{p}.coverage") if t.coverage is not None else None
    coverage = DEFAULT_COVERAGE if read is None else read
    interference = r.q(t.interference, "voltage", f"{p}.interference", minimum="≥ 0", default=0.0)

    if span is None or (counts is None and dr is None) or interference is None:
        return None, span
    engineering_per_volt = None
    if capacity is not None and unit_shown:
        try:
            unit_si, _ = parse_any(f"1 {unit_shown}", f"{p}.capacity")
        except DesignError:  # pragma: no cover - the unit was read above
            unit_si = 0.0
        if unit_si > 0:
            engineering_per_volt = capacity / unit_si / span
    description = t.description or _describe(t, counts, form, coverage)
    req = r.build(
        "",
        Requirement,
        span_v=span,
        noise_free_counts=counts,
        dynamic_range_db=dr,
        coverage=coverage,
        interference_rms_v=interference,
        description=description,
        engineering_unit=unit_shown if engineering_per_volt is not None else "",
        engineering_per_volt=engineering_per_volt,
    )
    return req, span


def _describe(t: RequirementTable, counts: float | None, form: str, coverage: float) -> str:
    cov = f"{coverage * 100:.4g} % coverage"
    span = t.span if t.span is not None else f"{t.sensitivity} × {t.excitation}"
    if form == "resolution":
        return f"{t.resolution} noise-free out of {t.capacity} at {cov}"
    if form == "noise_free_bits":
        return f"{t.noise_free_bits} noise-free bits over {span} at {cov}"
    if form == "noise_free_counts":
        return f"{counts:,.0f} noise-free counts over {span} at {cov}"
    return f"{t.dynamic_range} dynamic range over {span}"


def _sensor(r: _Reader, t: SensorTable, span: float | None) -> Sensor | None:
    p = "sensor"
    resistance = r.q(t.resistance, "resistance", f"{p}.resistance", required=True, minimum="> 0")
    noise = None
    if t.noise_density is not None or t.noise_corner is not None:
        noise = r.density(
            t.noise_density, t.noise_corner, p, "noise_density", "noise_corner", required=True
        )
    temperature = r.q(t.temperature, "temperature", f"{p}.temperature", minimum="> 0")
    if span is None or resistance is None:
        return None
    if (t.noise_density is not None and noise is None) or (
        t.temperature is not None and temperature is None
    ):
        return None
    return r.build(
        p,
        Sensor,
        span_v=span,
        resistance_ohm=resistance,
        bipolar=bool(t.bipolar),
        noise=noise,
        temperature_k=temperature,
        name=t.name or "sensor",
    )


def _stage(r: _Reader, i: int, t: _StageTable) -> Any:
    p = f"stages[{i}]"
    name = t.name or f"stage {i + 1}"
    if isinstance(t, NonInvertingTable):
        return _noninverting(r, p, name, t)
    if isinstance(t, AmplifierTable):
        return _amplifier(r, p, name, t)
    if isinstance(t, RCFilterTable):
        return _rc_filter(r, p, name, t)
    return _active_filter(r, p, name, t)


def _noninverting(r: _Reader, p: str, name: str, t: NonInvertingTable) -> Any:
    rf = r.q(t.rf, "resistance", f"{p}.rf", required=not t.open, minimum="≥ 0")
    rg = r.q(t.rg, "resistance", f"{p}.rg", minimum="> 0")
    gbw = r.q(t.gbw, "frequency", f"{p}.gbw", minimum="> 0")
    en_c = r.q(t.en_corner, "frequency", f"{p}.en_corner", minimum="≥ 0", default=0.0)
    in_c = r.q(t.in_corner, "frequency", f"{p}.in_corner", minimum="≥ 0", default=0.0)
    if t.open:
        r.refuse_open(t, p, ("en", "in_", "in_minus", "in_minus_corner"))
        known: dict[str, Any] = {}
        gain = r.number(t.gain, f"{p}.gain", "a gain > 0 V/V")
        if t.gain is not None and t.rf is not None:
            r.bad(f"{p}.gain", t.gain, "either gain or rf and rg, not both")
        elif gain is not None:
            known["gain"] = gain
        elif rf is not None:
            known["gain"] = 1.0 + (rf / rg if rg else 0.0)
        _put(known, "gbw_hz", gbw, t.gbw)
        _put(known, "en_corner_hz", en_c, t.en_corner)
        _put(known, "in_corner_hz", in_c, t.in_corner)
        return r.build(p, OpenPart, "amplifier", name, p, known)
    r.refuse(
        t,
        p,
        ("gain",),
        "not given for a non-inverting stage: its gain is 1 + rf/rg "
        "(give gain only with open = true)",
    )
    en = r.density(t.en, t.en_corner, p, "en", "en_corner", required=True)
    i_plus = r.density(t.in_, t.in_corner, p, "in", "in_corner", "current_density", required=True)
    i_minus = None
    if t.in_minus is not None or t.in_minus_corner is not None:
        i_minus = r.density(
            t.in_minus,
            t.in_minus_corner,
            p,
            "in_minus",
            "in_minus_corner",
            "current_density",
            required=True,
            default_corner=in_c or 0.0,
        )
        if i_minus is None:
            return None
    if None in (rf, en, i_plus, en_c, in_c) or (t.rg is not None and rg is None):
        return None
    if t.gbw is not None and gbw is None:
        return None
    return r.build(p, NonInvertingStage, name, rf, rg, en, i_plus, i_minus, gbw)


def _put(known: dict[str, Any], key: str, value: Any, given: Any) -> None:
    if given is not None and value is not None:
        known[key] = value


def _amplifier(r: _Reader, p: str, name: str, t: AmplifierTable) -> Any:
    gain = r.number(t.gain, f"{p}.gain", "a gain > 0 V/V", required=not t.open)
    bandwidth = r.q(t.bandwidth, "frequency", f"{p}.bandwidth", minimum="> 0")
    en_c = r.q(t.en_corner, "frequency", f"{p}.en_corner", minimum="≥ 0", default=0.0)
    in_c = r.q(t.in_corner, "frequency", f"{p}.in_corner", minimum="≥ 0", default=0.0)
    if t.open:
        r.refuse_open(t, p, ("en", "en_out", "en_out_corner", "in_"))
        known: dict[str, Any] = {}
        _put(known, "gain", gain, t.gain)
        _put(known, "bandwidth_hz", bandwidth, t.bandwidth)
        _put(known, "en_corner_hz", en_c, t.en_corner)
        _put(known, "in_corner_hz", in_c, t.in_corner)
        return r.build(p, OpenPart, "amplifier", name, p, known)
    en = r.density(t.en, t.en_corner, p, "en", "en_corner", required=True)
    en_out = current = None
    if t.en_out is not None or t.en_out_corner is not None:
        en_out = r.density(t.en_out, t.en_out_corner, p, "en_out", "en_out_corner", required=True)
        if en_out is None:
            return None
    if t.in_ is not None:
        current = r.density(t.in_, t.in_corner, p, "in", "in_corner", "current_density")
        if current is None:
            return None
    elif t.in_corner is not None:
        r.bad(f"{p}.in_corner", t.in_corner, "a current noise `in` to go with it")
    else:
        r.notes.append(f"{name}: no current noise (in) given, none counted")
    if gain is None or en is None or (t.bandwidth is not None and bandwidth is None):
        return None
    return r.build(p, IntegratedAmplifier, name, gain, en, en_out, current, bandwidth)


def _rc_filter(r: _Reader, p: str, name: str, t: RCFilterTable) -> Any:
    res = r.q(t.resistance, "resistance", f"{p}.resistance", required=not t.open, minimum="> 0")
    cap = r.q(t.capacitance, "capacitance", f"{p}.capacitance", required=not t.open, minimum="> 0")
    if t.open:
        known: dict[str, Any] = {"response": "rc", "order": 1}
        cutoff = r.q(t.cutoff, "frequency", f"{p}.cutoff", minimum="> 0")
        if t.cutoff is not None and (t.resistance is not None or t.capacitance is not None):
            r.bad(f"{p}.cutoff", t.cutoff, "either cutoff, or resistance and capacitance")
        elif cutoff is not None:
            known["cutoff_hz"] = cutoff
        elif res is not None and cap is not None:
            known["cutoff_hz"] = 1.0 / (2.0 * math.pi * res * cap)
        return r.build(p, OpenPart, "filter", name, p, known)
    r.refuse(
        t,
        p,
        ("cutoff",),
        "not given for an RC filter: its cut-off is 1/(2πRC) (give cutoff only with open = true)",
    )
    if res is None or cap is None:
        return None
    return r.build(p, RCFilter, name, res, cap)


def _active_filter(r: _Reader, p: str, name: str, t: ActiveFilterTable) -> Any:
    need = not t.open
    if t.response is None and need:
        r.missing(f"{p}.response", "one of butterworth, bessel, rc")
    if t.order is None and need:
        r.missing(f"{p}.order", "a whole number from 1 to 8")
    cutoff = r.q(t.cutoff, "frequency", f"{p}.cutoff", required=need, minimum="> 0")
    gain = r.number(t.gain, f"{p}.gain", "a pass-band gain > 0 V/V", default=1.0)
    if t.open:
        r.refuse_open(t, p, ("noise_resistance", "en", "en_corner"))
        known: dict[str, Any] = {}
        _put(known, "response", t.response, t.response)
        _put(known, "order", t.order, t.order)
        _put(known, "cutoff_hz", cutoff, t.cutoff)
        _put(known, "gain", gain, t.gain)
        return r.build(p, OpenPart, "filter", name, p, known)
    nr = r.q(t.noise_resistance, "resistance", f"{p}.noise_resistance", minimum="≥ 0", default=0.0)
    en = None
    if t.en is not None or t.en_corner is not None:
        en = r.density(t.en, t.en_corner, p, "en", "en_corner", required=True)
        if en is None:
            return None
    else:
        r.notes.append(f"{name}: no op-amp noise (en) given, none counted")
    if None in (t.response, t.order, cutoff, gain, nr):
        return None
    return r.build(p, ActiveFilter, name, t.response, t.order, cutoff, gain, nr, en)


def _reference(r: _Reader, t: ReferenceTable) -> Any:
    p = "reference"
    name = t.name or "reference"
    voltage = r.q(t.voltage, "voltage", f"{p}.voltage", required=not t.open, minimum="> 0")
    cutoff = r.q(t.filter_cutoff, "frequency", f"{p}.filter_cutoff", minimum="> 0")
    corner = r.q(t.noise_corner, "frequency", f"{p}.noise_corner", minimum="≥ 0")
    if t.open:
        r.refuse_open(t, p, ("noise", "noise_pp", "pp_factor", "noise_band", "noise_density"))
        if t.ratiometric:
            r.bad(
                f"{p}.ratiometric",
                True,
                "false for an open reference (a ratiometric "
                "reference's noise cancels: there is nothing to size)",
            )
        known: dict[str, Any] = {}
        _put(known, "voltage_v", voltage, t.voltage)
        _put(known, "filter_cutoff_hz", cutoff, t.filter_cutoff)
        _put(known, "noise_corner_hz", corner, t.noise_corner)
        return r.build(p, OpenPart, "reference", name, p, known)
    forms = [k for k in ("noise", "noise_pp", "noise_density") if getattr(t, k) is not None]
    noise = None
    if len(forms) > 1:
        r.bad(
            f"{p}.{forms[1]}",
            getattr(t, forms[1]),
            "one noise figure only: noise (rms in noise_band), noise_pp or noise_density",
        )
    elif not forms:
        if not t.ratiometric:
            r.missing(
                f"{p}.noise",
                "the reference noise (noise or noise_pp with noise_band and "
                "noise_corner, or noise_density), or ratiometric = true",
            )
    elif forms[0] == "noise_density":
        noise = r.density(t.noise_density, t.noise_corner, p, "noise_density", "noise_corner")
    else:
        noise = _band_noise(r, t, p, corner)
    if forms and forms[0] == "noise_density" and t.noise_band is not None:
        r.bad(f"{p}.noise_band", t.noise_band, "no band with a noise density")
    if t.pp_factor is not None and (not forms or forms[0] != "noise_pp"):
        r.bad(f"{p}.pp_factor", t.pp_factor, "a factor only with noise_pp")
    if (
        voltage is None
        or (forms and noise is None)
        or (t.filter_cutoff is not None and cutoff is None)
    ):
        return None
    return r.build(p, Reference, voltage, noise, cutoff, bool(t.ratiometric), name)


def _band_noise(r: _Reader, t: ReferenceTable, p: str, corner: float | None) -> Any:
    if t.noise_pp is not None:
        value = r.q(t.noise_pp, "voltage", f"{p}.noise_pp", minimum="≥ 0")
        k = r.pp_factor(t.pp_factor, p)
        rms = None if value is None or k is None else value / k
        if rms is not None:
            r.notes.append(f"reference noise {t.noise_pp} p-p divided by the stated factor {k:g}")
    else:
        rms = r.q(t.noise, "voltage", f"{p}.noise", minimum="≥ 0")
    band = None
    if t.noise_band is None:
        r.missing(f"{p}.noise_band", 'the band of the figure, such as ["0.1 Hz", "10 Hz"]')
    elif len(t.noise_band) != 2:
        r.bad(f"{p}.noise_band", t.noise_band, 'two band edges, such as ["0.1 Hz", "10 Hz"]')
    else:
        lo = r.q(t.noise_band[0], "frequency", f"{p}.noise_band[0]", minimum="> 0")
        hi = r.q(t.noise_band[1], "frequency", f"{p}.noise_band[1]", minimum="> 0")
        if lo is not None and hi is not None:
            if hi > lo:
                band = (lo, hi)
            else:
                r.bad(f"{p}.noise_band[1]", t.noise_band[1], "an upper edge above the lower")
    if t.noise_corner is None:
        r.missing(
            f"{p}.noise_corner",
            'the 1/f corner of the reference noise, such as "10 Hz" '
            '("0 Hz" for white noise): a band figure says nothing of it',
        )
    if rms is None or band is None or corner is None:
        return None
    return r.build(p, Reference.density_from_band_rms, rms, band[0], band[1], corner)


def _reference_voltage(reference: Any) -> float | None:
    if isinstance(reference, Reference):
        return reference.voltage_v
    if isinstance(reference, OpenPart):
        return reference.known.get("voltage_v")
    return None


def _adc(r: _Reader, t: AdcTable, reference: Any, ref_table: ReferenceTable | None) -> Any:
    p = "adc"
    name = t.name or "ADC"
    need = not t.open
    if t.architecture is None and need:
        r.missing(f"{p}.architecture", "one of sar, delta-sigma")
    if t.bits is None and need:
        r.missing(f"{p}.bits", "a whole number of bits from 1 to 32")
    gain = r.number(t.gain, f"{p}.gain", "a gain > 0 V/V", default=1.0)
    rate = r.q(t.sample_rate, "frequency", f"{p}.sample_rate", required=need, minimum="> 0")
    data_rate = r.q(t.data_rate, "frequency", f"{p}.data_rate", minimum="> 0")
    if need and t.architecture == "delta-sigma" and t.data_rate is None:
        r.missing(f"{p}.data_rate", 'the output data rate of a delta-sigma ADC, such as "10 Hz"')
    fsr = _full_scale(r, t, gain, reference, ref_table, need)
    if t.open:
        r.refuse_open(
            t,
            p,
            (
                "noise",
                "noise_pp",
                "pp_factor",
                "noise_data_rate",
                "noise_gain",
                "scale_with_rate",
                "noise_table",
                "noise_table_pp",
                "snr",
                "snr_sample_rate",
                "transition_noise",
                "noise_density",
                "noise_corner",
            ),
        )
        known: dict[str, Any] = {}
        _put(known, "architecture", t.architecture, t.architecture)
        _put(known, "bits", t.bits, t.bits)
        _put(known, "full_scale_range_v", fsr, fsr)
        _put(known, "sample_rate_hz", rate, t.sample_rate)
        _put(known, "data_rate_hz", data_rate, t.data_rate)
        _put(known, "gain", gain, t.gain)
        return r.build(p, OpenPart, "adc", name, p, known)
    noise = _adc_noise(r, t, gain)
    if None in (t.architecture, t.bits, gain, rate, fsr, noise):
        return None
    if t.data_rate is not None and data_rate is None:
        return None
    adc = r.build(p, ADC, name, t.architecture, t.bits, fsr, rate, noise, data_rate, gain)
    if adc is not None:
        _check_noise_conditions(r, adc, t)
    return adc


def _full_scale(
    r: _Reader,
    t: AdcTable,
    gain: float | None,
    reference: Any,
    ref_table: ReferenceTable | None,
    need: bool,
) -> float | None:
    p = "adc"
    if t.full_scale_range is not None and t.input_range is not None:
        r.bad(f"{p}.input_range", t.input_range, "either full_scale_range or input_range, not both")
        return None
    if t.full_scale_range is not None:
        fsr = r.q(t.full_scale_range, "voltage", f"{p}.full_scale_range", minimum="> 0")
        if fsr is None or gain is None:
            return None
        if gain != 1:
            r.notes.append(
                f"ADC range = full_scale_range / gain = {t.full_scale_range} / {gain:g} = "
                f"{format_si(fsr / gain, 'V')} peak-to-peak"
            )
        return fsr / gain
    if t.input_range is not None:
        v_ref = _reference_voltage(reference)
        if v_ref is None:
            if ref_table is None or ref_table.voltage is None:
                r.missing(
                    "reference.voltage",
                    "a reference voltage for adc.input_range, such as "
                    '"2.5 V" (or give adc.full_scale_range)',
                )
            return None
        if gain is None:
            return None
        factor = 1.0 if t.input_range == "unipolar" else 2.0
        what = "V_ref" if factor == 1 else "2·V_ref"
        swing = "0 … V_ref" if factor == 1 else "±V_ref"
        r.notes.append(
            f"ADC range = {what} / gain = {factor:g} × {format_si(v_ref, 'V')} / {gain:g} = "
            f"{format_si(factor * v_ref / gain, 'V')} peak-to-peak ({t.input_range} input, {swing})"
        )
        return factor * v_ref / gain
    if need:
        r.missing(
            f"{p}.full_scale_range",
            'a peak-to-peak range such as "5 V", or input_range '
            "(unipolar, bipolar or differential) with a [reference]",
        )
    return None


_NOISE_FORMS = (
    "noise",
    "noise_pp",
    "noise_table",
    "noise_table_pp",
    "snr",
    "transition_noise",
    "noise_density",
)


def _adc_noise(r: _Reader, t: AdcTable, gain: float | None) -> Any:
    p = "adc"
    form = r.one_of(
        t, p, _NOISE_FORMS, "exactly one noise figure: " + ", ".join(_NOISE_FORMS), "noise"
    )
    if form is None:
        return None
    rate_forms = ("noise", "noise_pp")
    table_forms = ("noise_table", "noise_table_pp")
    if form not in rate_forms:
        r.refuse(
            t,
            p,
            ("noise_data_rate", "scale_with_rate"),
            f"a field only with noise or noise_pp (the noise is given as {form})",
        )
    if form not in rate_forms + table_forms:
        r.refuse(
            t,
            p,
            ("noise_gain",),
            f"a field only with noise or a noise table (the noise is given as {form})",
        )
    if form != "snr":
        r.refuse(t, p, ("snr_sample_rate",), "a field only with snr")
    if form != "noise_density":
        r.refuse(t, p, ("noise_corner",), "a field only with noise_density")
    pp = form in ("noise_pp", "noise_table_pp")
    k = None
    if pp:
        k = r.pp_factor(t.pp_factor, p)
    elif t.pp_factor is not None:
        r.bad(f"{p}.pp_factor", t.pp_factor, "a factor only with noise_pp or noise_table_pp")
    noise_gain = None
    if form in rate_forms + table_forms:
        noise_gain = r.number(t.noise_gain, f"{p}.noise_gain", "a gain > 0 V/V")
        if t.noise_gain is None and gain is not None and gain != 1:
            r.missing(
                f"{p}.noise_gain",
                f"the gain the noise was quoted at (the ADC runs at gain "
                f"{gain:g}; noise depends on it)",
            )
            return None
        if t.noise_gain is not None and noise_gain is None:
            return None
    if form in rate_forms:
        value = r.q(getattr(t, form), "voltage", f"{p}.{form}", minimum="≥ 0")
        at = r.q(
            t.noise_data_rate, "frequency", f"{p}.noise_data_rate", required=True, minimum="> 0"
        )
        if value is None or at is None or (pp and k is None):
            return None
        if pp:
            r.notes.append(f"ADC noise {t.noise_pp} p-p divided by the stated factor {k:g}")
            value /= k
        return r.build(p, NoiseAtRate, value, at, noise_gain, bool(t.scale_with_rate))
    if form in table_forms:
        rows = []
        for i, (rate_text, noise_text) in enumerate(getattr(t, form)):
            rate = r.q(rate_text, "frequency", f"{p}.{form}[{i}][0]", minimum="> 0")
            value = r.q(noise_text, "voltage", f"{p}.{form}[{i}][1]", minimum="≥ 0")
            rows.append((rate, value))
        if not rows:
            r.bad(f"{p}.{form}", [], "at least one [data rate, noise] row")
            return None
        if any(a is None or b is None for a, b in rows) or (pp and k is None):
            return None
        if pp:
            r.notes.append(f"ADC noise table in p-p divided by the stated factor {k:g}")
            rows = [(a, b / k) for a, b in rows]
        return r.build(p, NoiseTable, tuple(rows), noise_gain)
    if form == "snr":
        snr = r.parse(parse_db, t.snr, f"{p}.snr")
        if snr is None:
            return None
        at = r.q(t.snr_sample_rate, "frequency", f"{p}.snr_sample_rate", minimum="> 0")
        if t.snr_sample_rate is not None and at is None:
            return None
        return r.build(p, SnrNoise, snr, at)
    if form == "transition_noise":
        lsb = r.number(
            t.transition_noise, f"{p}.transition_noise", "a noise ≥ 0 LSB rms", minimum="≥ 0"
        )
        return None if lsb is None else r.build(p, TransitionNoise, lsb)
    density = r.density(t.noise_density, t.noise_corner, p, "noise_density", "noise_corner")
    return None if density is None else InputNoiseDensity(density)


def _check_noise_conditions(r: _Reader, adc: ADC, t: AdcTable) -> None:
    """Refuse now, with the other problems, noise quoted at conditions the ADC does not run at."""
    noise = adc.noise
    try:
        if isinstance(noise, NoiseAtRate | NoiseTable):
            noise.rms_at(adc.output_rate_hz, adc.gain)
        elif isinstance(noise, SnrNoise):
            noise.rms(adc.full_scale_range_v, adc.sample_rate_hz)
    except DesignError as err:
        # Show the value as written in the file, not as an SI float.
        key = err.field.removeprefix("adc.")
        written = getattr(t, key, None) if key in AdcTable.model_fields else None
        if key == "noise_table":
            written = t.data_rate
        value = err.value if written is None else written
        r.errors.append(DesignError(err.field, value, err.expected))


def _digital(r: _Reader, t: DigitalTable | None, adc: Any) -> DigitalPath | None:
    p = "digital"
    t = t or DigitalTable()
    if isinstance(adc, OpenPart):
        arch = adc.known.get("architecture")
        rate = adc.known.get("sample_rate_hz")
        data_rate = adc.known.get("data_rate_hz")
    elif isinstance(adc, ADC):
        arch, rate, data_rate = adc.architecture, adc.sample_rate_hz, adc.data_rate_hz
    else:
        return None
    if arch is None or rate is None:
        return None
    stages: list[Any] = []
    if arch == "delta-sigma":
        if data_rate is None:
            return None
        if t.decimation is None:
            r.missing(
                f"{p}.decimation", 'the decimation filter of the delta-sigma ADC, such as "sinc3"'
            )
            return None
        ratio = rate / data_rate
        whole = round(ratio) if math.isfinite(ratio) else 0
        if not 1 <= whole <= MAX_DECIMATION or not _close(ratio, whole):
            r.bad(
                f"{p}.decimation",
                t.decimation,
                f"a whole decimation ratio sample_rate / data_rate from 1 to {MAX_DECIMATION} "
                f"(here {rate:g} Hz / {data_rate:g} Hz = {ratio:.6g})",
            )
            return None
        stages.append(SincFilter(int(t.decimation[-1]), int(whole), rate))
    elif t.decimation is not None:
        r.bad(f"{p}.decimation", t.decimation, "no decimation filter for a SAR ADC (use average)")
    here = stages[-1].output_rate_hz if stages else rate
    if t.average is not None:
        if not 1 <= t.average <= MAX_AVERAGE:
            r.bad(f"{p}.average", t.average, f"a whole number of samples from 1 to {MAX_AVERAGE}")
        else:
            stages.append(SincFilter(1, t.average, here))
            here /= t.average
    if t.band_limit is not None:
        cutoff = r.q(t.band_limit, "frequency", f"{p}.band_limit", minimum="> 0")
        if cutoff is not None:
            limit = r.build("", IdealLowpass, cutoff, here)
            if limit is None:
                r.errors[-1] = DesignError(
                    f"{p}.band_limit",
                    t.band_limit,
                    f"a band limit ≤ half the rate it runs at ({here / 2:g} Hz)",
                )
            else:
                stages.append(limit)
    return DigitalPath(tuple(stages)) if stages else None


def _band(r: _Reader, t: RequirementTable, digital: DigitalPath | None, adc: Any) -> Band | None:
    p = "requirement"
    f_low = r.q(t.f_low, "frequency", f"{p}.f_low", minimum="> 0", default=0.01)
    f_high = r.q(t.f_high, "frequency", f"{p}.f_high", minimum="> 0")
    data_rate = r.q(t.data_rate, "frequency", f"{p}.data_rate", minimum="> 0")
    if f_low is None or (t.f_high is not None and f_high is None):
        return None
    out_rate = None
    if digital is not None:
        out_rate = digital.output_rate_hz
    elif isinstance(adc, ADC):
        out_rate = adc.output_rate_hz
    if data_rate is not None and out_rate is not None and not _close(data_rate, out_rate):
        r.bad(
            f"{p}.data_rate",
            t.data_rate,
            f"the chain's output data rate, {out_rate:g} Hz (ADC rates and [digital])",
        )
    if f_high is None and data_rate is not None:
        f_high = data_rate / 2
        r.notes.append(f"signal band top = half the output data rate = {f_high:g} Hz")
    nyquist = (out_rate if out_rate is not None else data_rate or math.inf) / 2
    if f_high is not None and f_high > nyquist * (1 + 1e-9):
        r.bad(f"{p}.f_high", t.f_high, f"a band top ≤ half the output data rate ({nyquist:g} Hz)")
        return None
    band = r.build("", Band, f_low, f_high)
    if band is None:
        err = r.errors[-1]
        r.errors[-1] = DesignError(err.field.replace("band.", f"{p}."), err.value, err.expected)
    return band


def _names(r: _Reader, parts: list[tuple[str, str]]) -> None:
    seen: dict[str, str] = {}
    for path, name in parts:
        if name in seen:
            r.bad(f"{path}.name", name, f"a name no other part uses ({seen[name]} has it)")
        else:
            seen[name] = path


def _weights(
    r: _Reader, t: PlanTable | None, parts: list[tuple[str, str, bool]]
) -> dict[str, float]:
    """Weights keyed by part name; a key may also be the part's table (``adc``, ``stages[1]``)."""
    out: dict[str, float] = {}
    if t is None or t.weights is None:
        return out
    by_name = {name: is_open for _, name, is_open in parts}
    by_path = {path: name for path, name, _ in parts}
    open_names = [name for _, name, is_open in parts if is_open]
    for key, value in t.weights.items():
        path = f"plan.weights.{_key(key)}"
        name = key if key in by_name else by_path.get(key)
        if name is None:
            more = _did_you_mean(key, [*by_name, *by_path])
            listed = ", ".join(open_names) if open_names else "none is open"
            r.bad(path, key, f"the name of an open part ({listed}){more}")
            continue
        if not by_name[name]:
            r.bad(
                path,
                key,
                f"the name of an open part ({name} is given: only open parts share the budget)",
            )
            continue
        w = r.number(value, path, "a weight ≥ 0", minimum="≥ 0")
        if w is not None:
            out[name] = w
    return out


def design_from_mapping(
    data: Mapping[str, Any], source: str = "<design>", sha256: str = ""
) -> Design:
    """Build a :class:`Design` from the parsed TOML tables.

    Parameters
    ----------
    data : mapping
        The design as ``tomllib`` returns it.
    source : str
        Where it came from, named in every error.
    sha256 : str
        Digest of the file's bytes, kept for traceability.

    Raises
    ------
    DesignErrors
        Every problem found, one per line, each naming the field, the value and
        what was expected.
    """
    model, structure, reported = _validate_structure(data)
    r = _Reader(source)
    meta_t = model.meta or MetaTable()
    meta = Meta(
        title=meta_t.title or "Untitled design",
        project=meta_t.project or "",
        revision=meta_t.revision or "",
        author=meta_t.author or "",
        date=meta_t.date or "",
    )
    requirement, span = _requirement(r, model.requirement)
    temperature = r.q(
        model.requirement.temperature,
        "temperature",
        "requirement.temperature",
        minimum="> 0",
        default=ROOM_TEMPERATURE_K,
    )
    sensor = _sensor(r, model.sensor, span)
    stages = [_stage(r, i, s) for i, s in enumerate(model.stages or [])]
    reference = _reference(r, model.reference) if model.reference else None
    adc = _adc(r, model.adc, reference, model.reference)
    digital = _digital(r, model.digital, adc)
    band = _band(r, model.requirement, digital, adc)
    interferer = None
    if model.requirement.interferer is not None:
        it = model.requirement.interferer
        f = r.q(it.frequency, "frequency", "requirement.interferer.frequency", minimum="> 0")
        a = r.q(it.amplitude, "voltage", "requirement.interferer.amplitude", minimum="≥ 0")
        interferer = None if f is None or a is None else (f, a)
    parts = [
        (f"stages[{i}]", s.name or f"stage {i + 1}", bool(s.open))
        for i, s in enumerate(model.stages or [])
    ]
    if model.reference:
        parts.append(("reference", model.reference.name or "reference", bool(model.reference.open)))
    parts.append(("adc", model.adc.name or "ADC", bool(model.adc.open)))
    _names(r, [(path, name) for path, name, _ in parts])
    weights = _weights(r, model.plan, parts)
    if (
        structure
        or r.errors
        or None in (requirement, sensor, adc, band, temperature)
        or (None in stages)
    ):
        # Problems inside a part already refused for its structure are not repeated.
        later = [e for e in r.errors if not _under(e.field, reported)]
        found = structure + later
        if not found:  # pragma: no cover - every None comes with a recorded problem
            found = [DesignError("design", "?", "a complete design")]
        raise DesignErrors(_with_source(e, source) for e in found)
    stages = [_weighted(s, weights) for s in stages]
    reference = _weighted(reference, weights)
    adc = _weighted(adc, weights)
    design = Design(
        meta=meta,
        requirement=requirement,
        band=band,
        sensor=sensor,
        stages=tuple(stages),
        adc=adc,
        reference=reference,
        digital=digital,
        temperature_k=temperature,
        source=source,
        sha256=sha256,
        weights=weights,
        alias_interferer=interferer,
        notes=tuple(r.notes),
    )
    if design.is_complete:
        try:
            design.chain()
        except DesignError as err:
            raise DesignErrors([_with_source(err, source)]) from None
    return design


#: Stand-in for a stage whose structure was refused, so the rest can still be read.
_PLACEHOLDER_STAGE = {"type": "rc_filter", "open": True}
_REQUIRED_TABLES = ("requirement", "sensor", "adc")


def _validate_structure(data: Any) -> tuple[DesignFile, list[DesignError], list[str]]:
    """Validate the structure; on problems, set the offending fields aside and go on.

    Returns the model of what is left, the structure problems, and the paths of
    the fields set aside (problems found under them later are not repeated).
    """
    errors: list[DesignError] = []
    reported: list[str] = []
    if not isinstance(data, Mapping):
        data = {}
        errors.append(DesignError("design", "?", "a TOML document of tables"))
    work = _plain_copy(data)
    for _ in range(8):
        try:
            return DesignFile.model_validate(work), errors, reported
        except ValidationError as err:
            errors.extend(_structure_errors(err, work))
            for e in err.errors(include_url=False):
                reported.append(_path(_set_aside(work, _strip_tags(tuple(e["loc"])))))
    raise DesignErrors(errors)  # pragma: no cover - each round removes what it reports


def _plain_copy(node: Any) -> Any:
    if isinstance(node, Mapping):
        return {k: _plain_copy(v) for k, v in node.items()}
    if isinstance(node, list):
        return [_plain_copy(v) for v in node]
    return node


def _set_aside(work: dict, loc: tuple) -> tuple:
    """Remove (or neutralise) the field a structure error is about; return its location."""
    if not loc:
        return loc
    table = loc[0]
    if table == "stages" and len(loc) >= 2 and isinstance(loc[1], int):
        at = loc[:3] if len(loc) >= 3 and isinstance(loc[2], str) and loc[2] != "type" else loc[:2]
    else:
        at = loc[:2] if len(loc) >= 2 and isinstance(loc[1], str) else loc[:1]
    if len(at) == 1:
        if table in _REQUIRED_TABLES:
            work[table] = {}
        else:
            work.pop(table, None)
        return at
    if at[0] == "stages" and len(at) == 2:
        stages = work.get("stages")
        if isinstance(stages, list) and 0 <= at[1] < len(stages):
            stages[at[1]] = dict(_PLACEHOLDER_STAGE)
        return at
    node: Any = work
    for key in at[:-1]:
        node = node[key] if isinstance(node, dict | list) else None
    if isinstance(node, dict):
        node.pop(at[-1], None)
    return at


def _under(field: str, prefixes: list[str]) -> bool:
    return any(
        field == p or field.startswith(p + ".") or field.startswith(p + "[") for p in prefixes
    )


def _weighted(part: Any, weights: dict[str, float]) -> Any:
    if isinstance(part, OpenPart) and part.name in weights:
        return OpenPart(part.kind, part.name, part.field_path, part.known, weights[part.name])
    return part


_TOML_POSITION = re.compile(r"\s*\(at line (\d+), column (\d+)\)\s*$")


def loads_design(text: str, source: str = "<design>") -> Design:
    """Read a design from TOML text. See :func:`design_from_mapping` for the errors.

    Raises
    ------
    DesignFileError
        For bad TOML, with ``source:line:col``.
    DesignErrors
        For everything else.
    """
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as err:
        message = str(err)
        m = _TOML_POSITION.search(message)
        if m:
            where = f"{source}:{m.group(1)}:{m.group(2)}"
            message = message[: m.start()]
        else:
            lines = text.count("\n") + 1
            where = f"{source}:{lines}:1"
            message = message.replace(" (at end of document)", "")
        raise DesignFileError(f"{where}: bad TOML syntax: {message}") from None
    digest = hashlib.sha256(text.encode("utf-8")).hexdigest()
    return design_from_mapping(data, source, digest)


def load_design(path: str | Path) -> Design:
    """Read a design file.

    Parameters
    ----------
    path : str or Path
        The TOML file.

    Raises
    ------
    DesignFileError
        The file does not exist, cannot be read, is not UTF-8 text, or is not TOML.
    DesignErrors
        Every problem in its content, one per line.
    """
    source = str(path)
    try:
        raw = Path(path).read_bytes()
    except FileNotFoundError:
        raise DesignFileError(f"{source}: no such design file") from None
    except IsADirectoryError:
        raise DesignFileError(f"{source}: is a folder, expected a design file") from None
    except OSError as err:
        raise DesignFileError(f"{source}: cannot be read ({err.strerror or err})") from None
    try:
        text = raw.decode("utf-8-sig")  # a byte-order mark, as some editors write, is fine
    except UnicodeDecodeError as err:
        raise DesignFileError(
            f"{source}: not UTF-8 text (byte {describe_value(raw[err.start : err.start + 1])} "
            f"at offset {err.start})"
        ) from None
    design = loads_design(text, source)
    digest = hashlib.sha256(raw).hexdigest()
    if design.sha256 != digest:  # the digest is of the file's bytes, byte-order mark included
        design = Design(**{**design.__dict__, "sha256": digest})
    return design


def check_design(design: Design, *, grid_points: int = 2000):
    """The forward budget of a complete design against its requirement.

    Raises
    ------
    DesignErrors
        One line per open part (``resplan plan`` sizes them).
    ChainError
        A chain valid field by field that cannot be computed.
    """
    from .budget import forward_budget

    chain = design.chain()
    try:
        return forward_budget(
            chain, design.band, requirement=design.requirement, grid_points=grid_points
        )
    except DesignError as err:  # name the file, as every other problem does
        raise _with_source(err, design.source) if design.source else err from None
