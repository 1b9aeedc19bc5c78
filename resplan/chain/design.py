"""A design as loaded: metadata, the requirement, and a chain whose parts may be open.

A part is *given* when every field the forward budget needs is known (it is
then a core stage object), and *open* when the planner is to set its limits
(:class:`OpenPart`, holding whatever fields are already known). ``check``
needs every part given; ``plan`` works with any mix.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from typing import Any

from ..errors import DesignError, DesignErrors
from ..noise.bandwidth import DigitalPath
from .converter import ADC
from .requirement import Requirement
from .signal_chain import ROOM_TEMPERATURE_K, Band, Chain
from .stages import AnalogStage, Reference, Sensor
from .tolerance import Spread

__all__ = ["Meta", "Revision", "OpenPart", "Design", "PART_KINDS"]

#: Kinds of open part and the known fields (SI, core field names) each may carry.
PART_KINDS: dict[str, tuple[str, ...]] = {
    # Front-end or driver amplifier, either model. ``gain`` known or open;
    # ``en_corner_hz`` and ``in_corner_hz`` are the 1/f corners assumed for the limits.
    # ``rf_ohm`` and ``rg_ohm`` (a non-inverting stage whose resistors are chosen: their
    # thermal noise is fixed, and i_n− flows in RF‖RG); ``op_amp`` (true for a
    # non-inverting op-amp stage: its speed is a GBW, not an in-amp's bandwidth).
    "amplifier": (
        "op_amp",
        "gain",
        "en_corner_hz",
        "in_corner_hz",
        "bandwidth_hz",
        "gbw_hz",
        "rf_ohm",
        "rg_ohm",
    ),
    # Inverting stage: ``rin_ohm`` known; ``rf_ohm`` or ``gain`` known or open; the op
    # amp's e_n, i_n and GBW are planned (a GBW stated is kept).
    "inverting": ("gain", "rf_ohm", "rin_ohm", "en_corner_hz", "in_corner_hz", "gbw_hz"),
    # Transimpedance stage: ``cf_f`` known, ``rf_ohm`` known or open; e_n, i_n and GBW
    # planned.
    "transimpedance": (
        "rf_ohm",
        "cf_f",
        "input_capacitance_f",
        "en_corner_hz",
        "in_corner_hz",
        "gbw_hz",
    ),
    # Anti-alias filter: response and any of order / cutoff known. With a ``topology``
    # the filter is a circuit whose op amps' e_n, i_n and GBW are planned.
    "filter": (
        "response",
        "order",
        "cutoff_hz",
        "gain",
        "topology",
        "capacitor_f",
        "en_corner_hz",
        "in_corner_hz",
        "gbw_hz",
    ),
    # Reference: voltage known, noise open.
    "reference": ("voltage_v", "filter_cutoff_hz", "noise_corner_hz"),
    # ADC: its range and rates known, its noise open.
    "adc": ("architecture", "bits", "full_scale_range_v", "sample_rate_hz", "data_rate_hz", "gain"),
}


@dataclass(frozen=True)
class Revision:
    """One entry of a design's revision history (free text)."""

    revision: str = ""
    date: str = ""
    author: str = ""
    change: str = ""


@dataclass(frozen=True)
class Meta:
    """Title block of a design (free text), with its revision history, oldest first."""

    title: str = "Untitled design"
    project: str = ""
    revision: str = ""
    author: str = ""
    date: str = ""
    history: tuple[Revision, ...] = ()


@dataclass(frozen=True)
class OpenPart:
    """A part whose limits the planner is to set.

    Parameters
    ----------
    kind : str
        One of :data:`PART_KINDS`.
    name : str
        Label used in tables.
    field_path : str
        Where it sits in the design file, such as ``"stages[0]"`` or ``"adc"``.
    known : dict
        Fields already fixed, SI values keyed by the names in :data:`PART_KINDS`.
    weight : float, optional
        Share of the open noise power relative to the other open parts (1 each by default).
    """

    kind: str
    name: str
    field_path: str
    known: dict[str, Any] = field(default_factory=dict)
    weight: float | None = None

    def __post_init__(self) -> None:
        if self.kind not in PART_KINDS:
            raise DesignError(
                f"{self.field_path}.type", self.kind, "one of " + ", ".join(PART_KINDS)
            )
        allowed = PART_KINDS[self.kind]
        for key in self.known:
            if key not in allowed:
                raise DesignError(
                    f"{self.field_path}.{key}", self.known[key], f"one of {', '.join(allowed)}"
                )

    def __hash__(self) -> int:  # known is a dict; identity is the place in the file
        return hash((self.kind, self.field_path))

    # Gain of an open amplifier, if known; filters default to unity gain.
    @property
    def gain(self) -> float | None:
        if self.kind == "filter":
            return self.known.get("gain", 1.0)
        return self.known.get("gain")


@dataclass(frozen=True)
class Design:
    """Everything a design file says.

    Attributes
    ----------
    meta : Meta
    requirement : Requirement
    band : Band
    sensor : Sensor
    stages : tuple
        Analog stages in signal order; each a core stage or an :class:`OpenPart`.
    adc : ADC or OpenPart
    reference : Reference, OpenPart or None
    digital : DigitalPath or None
        Built from the digital-filter table and the ADC's rates.
    temperature_k : float
    source : str
        The file it came from (or ``"<example NAME>"``).
    sha256 : str
        SHA-256 of the file's bytes, for traceability.
    weights : dict
        Allocation weights by part name, from the design file.
    alias_interferer : tuple of (frequency_hz, rms_v) or None
        An interferer the anti-alias filter must suppress, at the sensor.
    interferers : tuple
        Every stated interferer (:mod:`resplan.chain.interference`: tones, mains
        pickup, spectra), ``alias_interferer`` first when it is stated; each is an
        item of the verdict.
    notes : tuple of str
        Conversions and assumptions made while reading the design (a peak-to-peak
        figure divided by its stated factor, a range taken from the reference ...),
        for reports.
    spreads : tuple of Spread
        Figures that vary (:mod:`resplan.chain.tolerance`); every other value is typical.
    yield_required : float or None
        Fraction of boards that must meet the requirement, for Monte Carlo runs.
    variant : callable or None
        ``variant({field: SI value, ...})`` → this design with those fields changed,
        re-read as the design file would be (set by the design-file reader).
    """

    meta: Meta
    requirement: Requirement
    band: Band
    sensor: Sensor
    stages: tuple[AnalogStage | OpenPart, ...]
    adc: ADC | OpenPart
    reference: Reference | OpenPart | None = None
    digital: DigitalPath | None = None
    temperature_k: float = ROOM_TEMPERATURE_K
    source: str = ""
    sha256: str = ""
    weights: dict[str, float] = field(default_factory=dict)
    alias_interferer: tuple[float, float] | None = None
    interferers: tuple = ()
    notes: tuple[str, ...] = ()
    spreads: tuple[Spread, ...] = ()
    yield_required: float | None = None
    variant: Callable[[Mapping[str, float]], Design] | None = field(
        default=None, repr=False, compare=False
    )

    @property
    def open_parts(self) -> tuple[OpenPart, ...]:
        parts = [s for s in self.stages if isinstance(s, OpenPart)]
        for p in (self.reference, self.adc):
            if isinstance(p, OpenPart):
                parts.append(p)
        return tuple(parts)

    @property
    def is_complete(self) -> bool:
        return not self.open_parts

    def chain(self) -> Chain:
        """The complete chain, or DesignErrors naming every open part."""
        if self.open_parts:
            raise DesignErrors(
                DesignError(
                    p.field_path,
                    "open",
                    "a part with every field given (run `resplan plan` to size open parts)",
                    self.source or None,
                )
                for p in self.open_parts
            )
        return Chain(
            sensor=self.sensor,
            stages=tuple(self.stages),  # type: ignore[arg-type]
            adc=self.adc,  # type: ignore[arg-type]
            reference=self.reference,  # type: ignore[arg-type]
            digital=self.digital,
            temperature_k=self.temperature_k,
        )
