"""The provisional chain of a plan: given parts as they are, open parts as placeholders.

Open parts enter the forward budget as noiseless placeholders that keep whatever
is known of them (gain, bandwidth, filter shape, ADC range and rates), so that the
budget computes the fixed parts' noise through the same paths the finished chain
will have. Every value the planner has to assume is recorded, to be stated.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field, replace
from typing import Any

from ..chain.converter import ADC, NoiseAtRate
from ..chain.design import Design, OpenPart
from ..chain.signal_chain import Chain
from ..chain.stages import (
    ActiveFilter,
    IntegratedAmplifier,
    InvertingStage,
    NoiseDensity,
    NonInvertingStage,
    Reference,
    TransimpedanceStage,
)
from ..errors import DesignError, DesignErrors
from ..units.formatting import format_percent, format_si

__all__ = ["DEFAULT_FILTER", "Slot", "provisional_chain", "signal_band_top", "NOISELESS"]

#: The density of an open figure in the provisional chain: none.
NOISELESS = NoiseDensity(0.0)

#: Response and order assumed for an open filter whose shape is not stated.
DEFAULT_FILTER = ("butterworth", 2)


@dataclass
class Slot:
    """What the planner knows of one open part and where it sits."""

    part: OpenPart
    index: int | None  # analog stage index, None for reference/ADC
    gain_known: bool = True
    assumptions: list[str] = field(default_factory=list)
    #: ``build(en, i_n)``: the stage with its op amp's (or its own) voltage and current
    #: noise set to these densities and everything else as planned. The provisional
    #: chain holds ``build(0, 0)``; the planner's paths come from ``build(1, 1)``, the
    #: realised chain from ``build(e_max, 0)``: one circuit, so one model.
    build: Callable[[NoiseDensity, NoiseDensity], Any] | None = None
    #: Reasons the plan is infeasible that this part's stated figures give.
    reasons: list[str] = field(default_factory=list)
    #: The known fields the design states (the rest of ``part.known`` was assumed).
    stated: frozenset[str] = frozenset()
    #: Bandwidth and GBW limits (:mod:`resplan.plan.bandwidth_needs`).
    gbw_rows: list = field(default_factory=list)
    #: rms at the sensor per unit density of its open figures (:mod:`resplan.plan.stage_limits`).
    paths: dict[str, Any] = field(default_factory=dict)

    def __post_init__(self) -> None:
        if not self.stated:
            self.stated = frozenset(self.part.known)

    @property
    def en_corner_hz(self) -> float:
        return self.part.known.get("en_corner_hz", 0.0)

    @property
    def in_corner_hz(self) -> float:
        return self.part.known.get("in_corner_hz", 0.0)

    def stage(self, en: float = 0.0, i_n: float = 0.0):
        """The stage with white densities ``en`` (V/√Hz) and ``i_n`` (A/√Hz), known corners."""
        assert self.build is not None
        return self.build(NoiseDensity(en, self.en_corner_hz), NoiseDensity(i_n, self.in_corner_hz))


def _require(part: OpenPart, key: str, what: str, source: str) -> Any:
    if key not in part.known:
        raise DesignError(
            f"{part.field_path}.{_file_key(key)}",
            "open",
            what + " (the planner needs it even when the part is open)",
            source or None,
        )
    return part.known[key]


def _file_key(key: str) -> str:
    """The design-file name of a known field: ``cf_f`` → ``cf``, ``voltage_v`` → ``voltage``."""
    for suffix in ("_hz", "_ohm", "_v", "_f"):
        if key.endswith(suffix):
            return key.removesuffix(suffix)
    return key


def _placeholder_adc(part: OpenPart, source: str) -> ADC:
    k = part.known
    errors = []
    for key, what in (
        ("architecture", "the ADC architecture, sar or delta-sigma"),
        ("full_scale_range_v", "the ADC full-scale range, to refer its noise"),
        ("sample_rate_hz", "the ADC sample (modulator) rate"),
    ):
        try:
            _require(part, key, what, source)
        except DesignError as err:
            errors.append(err)
    if errors:
        raise DesignErrors(errors)
    rate = k.get("data_rate_hz") or k["sample_rate_hz"]
    return ADC(
        name=part.name,
        architecture=k["architecture"],
        bits=int(k.get("bits", 24)),
        full_scale_range_v=k["full_scale_range_v"],
        sample_rate_hz=k["sample_rate_hz"],
        noise=NoiseAtRate(0.0, rate),
        data_rate_hz=k.get("data_rate_hz"),
        gain=k.get("gain", 1.0),
    )


def _placeholder_filter(part: OpenPart, design: Design, slot: Slot) -> ActiveFilter:
    k = part.known
    response = k.get("response")
    order = k.get("order")
    cutoff = k.get("cutoff_hz")
    topology = k.get("topology")
    if response is None:
        response = DEFAULT_FILTER[0]
        slot.assumptions.append(f"{part.name}: response not stated, Butterworth assumed")
    if order is None:
        order = 1 if response == "rc" else DEFAULT_FILTER[1]
        slot.assumptions.append(
            f"{part.name}: order not stated, {order} assumed for its noise bandwidth"
        )
    if cutoff is None:
        cutoff = signal_band_top(design)
        slot.assumptions.append(
            f"{part.name}: cut-off not stated, the signal band top {format_si(cutoff, 'Hz')} "
            "assumed "
            "for its noise bandwidth"
        )
    gain = k.get("gain", 1.0)
    if topology is None:

        def build(en: NoiseDensity, i_n: NoiseDensity) -> ActiveFilter:
            return ActiveFilter(part.name, response, int(order), cutoff, gain=gain, en=en)

    else:
        gbw = k.get("gbw_hz")
        capacitor = k.get("capacitor_f", 10e-9)
        if gbw is None:
            slot.assumptions.append(
                f"{part.name}: op amps taken as ideal (no GBW) for the noise; a finite GBW "
                "changes each section's noise gain above its corner: state gbw and plan again"
            )

        def build(en: NoiseDensity, i_n: NoiseDensity) -> ActiveFilter:
            return ActiveFilter(
                part.name,
                response,
                int(order),
                cutoff,
                gain=gain,
                en=en,
                topology=topology,
                in_noise=i_n,
                gbw_hz=gbw,
                capacitor_f=capacitor,
            )

    slot.build = build
    return slot.stage()


def signal_band_top(design: Design) -> float:
    if design.band.f_high_hz is not None:
        return design.band.f_high_hz
    if design.digital is not None:
        return design.digital.output_rate_hz / 2
    raise DesignError(
        "requirement.band.high", None, "the top of the signal band, to size an open filter"
    )


def _others_gain(stages: list, index: int) -> float:
    others = 1.0
    for j, s in enumerate(stages):
        if j != index:
            others *= s.gain
    return others


def provisional_chain(design: Design) -> tuple[Chain, list[Slot], list[str]]:
    slots: list[Slot] = []
    assumptions: list[str] = []
    source = design.source
    adc = design.adc
    if isinstance(adc, OpenPart):
        slots.append(Slot(adc, None))
        adc = _placeholder_adc(adc, source)
    stages = []
    unknown_gain: list[Slot] = []
    for i, stage in enumerate(design.stages):
        if not isinstance(stage, OpenPart):
            stages.append(stage)
            continue
        slot = Slot(stage, i)
        slots.append(slot)
        if stage.kind == "filter":
            stages.append(_placeholder_filter(stage, design, slot))
            continue
        if stage.kind == "transimpedance":
            _require(stage, "cf_f", "the feedback capacitor across rf", source)
        if stage.kind == "inverting":
            _require(stage, "rin_ohm", "the input resistor", source)
        gain = _known_gain(stage)
        if gain is None:
            slot.gain_known = False
            unknown_gain.append(slot)
            gain = 1.0
        stages.append(_placeholder_gain_stage(slot, gain))
    # An open gain stage with nothing after it to bound its noise band gets one.
    for slot in slots:
        if slot.index is None or slot.part.kind == "filter":
            continue
        downstream = any(s.responses for s in stages[slot.index + 1 :])
        k = slot.part.known
        stated = k.get("bandwidth_hz") is not None or k.get("gbw_hz") is not None
        if slot.part.kind == "transimpedance" or downstream or stated:
            continue
        k = {**k, "bandwidth_hz": adc.sample_rate_hz}
        slot.part = replace(slot.part, known=k)
        what = "bandwidth or gbw" if slot.part.kind == "amplifier" else "gbw"
        slot.assumptions.append(
            f"{slot.part.name}: bandwidth not stated and nothing after it bounds its noise; "
            f"{format_si(adc.sample_rate_hz, 'Hz')} (the ADC sample rate) assumed: state {what}"
        )
        stages[slot.index] = _placeholder_gain_stage(slot, stages[slot.index].gain)
    for slot in slots:
        k = slot.part.known
        if slot.part.kind in ("inverting", "amplifier") and (
            k.get("op_amp") or slot.part.kind == "inverting" or k.get("rf_ohm")
        ):
            if k.get("gbw_hz") is None and k.get("bandwidth_hz") is None:
                slot.assumptions.append(
                    f"{slot.part.name}: op amp taken as ideal (no gbw stated) for the noise; a "
                    "finite GBW only narrows the stage's noise band, so its limits stay safe"
                )
    # The first gain stage of unknown gain takes the largest gain the ADC range allows.
    for n, slot in enumerate(unknown_gain):
        unit = "V/A" if slot.part.kind == "transimpedance" else "V/V"
        if n == 0:
            others = _others_gain(stages, slot.index)
            headroom = design.requirement.headroom
            usable = 1.0 - headroom
            gain = usable * adc.full_scale_range_v / (design.sensor.span_v * others)
            kept = (
                f"the sensor span fills {format_percent(usable)} of the range, keeping the stated "
                f"{format_percent(headroom)} headroom"
                if headroom > 0
                else "the sensor span fills the whole range, no headroom stated "
                "(requirement.headroom)"
            )
            slot.assumptions.append(
                f"{slot.part.name}: gain not stated; set to {format_si(gain, unit)}, the largest "
                "the ADC "
                f"range allows ({kept}: choose the next lower gain you can build and plan again)"
            )
        else:
            gain = 1.0
            slot.assumptions.append(f"{slot.part.name}: gain not stated; unity assumed")
        stages[slot.index] = _placeholder_gain_stage(slot, gain)
    reference = design.reference
    if isinstance(reference, OpenPart):
        slots.append(Slot(reference, None))
        reference = Reference(
            _require(reference, "voltage_v", "the reference voltage", source),
            noise=None,
            filter_cutoff_hz=reference.known.get("filter_cutoff_hz"),
            name=reference.name,
        )
    chain = Chain(
        sensor=design.sensor,
        stages=tuple(stages),
        adc=adc,
        reference=reference,
        digital=design.digital,
        temperature_k=design.temperature_k,
    )
    from .bandwidth_needs import settle_gbw

    settle_gbw(design, chain, slots)
    stages = list(chain.stages)
    for slot in slots:
        if slot.index is not None:
            stages[slot.index] = slot.stage()
    chain = replace(chain, stages=tuple(stages))
    for slot in slots:
        assumptions.extend(slot.assumptions)
    return chain, slots, assumptions


def _known_gain(part: OpenPart) -> float | None:
    """The gain of an open gain stage if its file fixes it (V/V, or V/A for a TIA)."""
    k = part.known
    if part.kind == "transimpedance":
        return k.get("rf_ohm")
    if part.kind == "inverting" and "rf_ohm" in k:
        return k["rf_ohm"] / k["rin_ohm"]
    if part.kind == "amplifier" and "rf_ohm" in k:
        rg = k.get("rg_ohm")
        return 1.0 + (k["rf_ohm"] / rg if rg else 0.0)
    return k.get("gain")


def _placeholder_gain_stage(slot: Slot, gain: float):
    """The open gain stage at ``gain`` (V/V or V/A) with ``slot.build`` set; noiseless.

    ``build`` reads the part's known fields when called, so a GBW the planner settles
    later (:mod:`resplan.plan.bandwidth_needs`) is in every stage it builds.
    """
    part = slot.part
    kind = part.kind
    k0 = part.known
    if kind == "amplifier" and k0.get("rf_ohm") and k0.get("rg_ohm"):

        def build(en: NoiseDensity, i_n: NoiseDensity):
            k = slot.part.known
            return NonInvertingStage(
                part.name, k["rf_ohm"], k["rg_ohm"], en, i_n, i_n, gbw_hz=_gbw(k, gain)
            )

    elif kind == "amplifier":

        def build(en: NoiseDensity, i_n: NoiseDensity):
            k = slot.part.known
            bandwidth = k.get("bandwidth_hz")
            if bandwidth is None and k.get("gbw_hz") is not None:
                bandwidth = k["gbw_hz"] / gain
            return IntegratedAmplifier(
                part.name, gain, input_noise=en, current_noise=i_n, bandwidth_hz=bandwidth
            )

    elif kind == "inverting":

        def build(en: NoiseDensity, i_n: NoiseDensity):
            k = slot.part.known
            rin = k["rin_ohm"]
            return InvertingStage(part.name, gain * rin, rin, en, i_n, gbw_hz=_gbw(k, 1.0 + gain))

    elif kind == "transimpedance":

        def build(en: NoiseDensity, i_n: NoiseDensity):
            k = slot.part.known
            return TransimpedanceStage(
                part.name,
                gain,
                en,
                i_n,
                cf_f=k["cf_f"],
                gbw_hz=k.get("gbw_hz"),
                input_capacitance_f=k.get("input_capacitance_f", 0.0),
            )

    else:  # pragma: no cover - the kinds are closed
        raise TypeError(kind)
    slot.build = build
    return slot.stage()


def _gbw(known: dict[str, Any], noise_gain: float) -> float | None:
    """A stated GBW, or the assumed closed-loop bandwidth times the noise gain, Hz."""
    if known.get("gbw_hz") is not None:
        return known["gbw_hz"]
    if known.get("bandwidth_hz") is not None:
        return known["bandwidth_hz"] * noise_gain
    return None
