"""The provisional chain of a plan: given parts as they are, open parts as placeholders.

Open parts enter the forward budget as noiseless placeholders that keep whatever
is known of them (gain, bandwidth, filter shape, ADC range and rates), so that the
budget computes the fixed parts' noise through the same paths the finished chain
will have. Every value the planner has to assume is recorded, to be stated.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Any

from ..chain.converter import ADC, NoiseAtRate
from ..chain.design import Design, OpenPart
from ..chain.signal_chain import Chain
from ..chain.stages import ActiveFilter, IntegratedAmplifier, NoiseDensity, Reference
from ..errors import DesignError, DesignErrors
from ..units.formatting import format_percent, format_si

__all__ = ["DEFAULT_FILTER", "Slot", "provisional_chain", "signal_band_top"]

#: Response and order assumed for an open filter whose shape is not stated.
DEFAULT_FILTER = ("butterworth", 2)


@dataclass
class Slot:
    """What the planner knows of one open part and where it sits."""

    part: OpenPart
    index: int | None  # analog stage index, None for reference/ADC
    gain_known: bool = True
    assumptions: list[str] = field(default_factory=list)


def _require(part: OpenPart, key: str, what: str, source: str) -> Any:
    if key not in part.known:
        raise DesignError(
            f"{part.field_path}.{key.removesuffix('_hz').removesuffix('_v')}",
            "open",
            what + " (the planner needs it even when the part is open)",
            source or None,
        )
    return part.known[key]


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
    return ActiveFilter(part.name, response, int(order), cutoff, gain=k.get("gain", 1.0))


def signal_band_top(design: Design) -> float:
    if design.band.f_high_hz is not None:
        return design.band.f_high_hz
    if design.digital is not None:
        return design.digital.output_rate_hz / 2
    raise DesignError(
        "requirement.band.high", None, "the top of the signal band, to size an open filter"
    )


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
        gain = stage.known.get("gain")
        if gain is None:
            slot.gain_known = False
            unknown_gain.append(slot)
            gain = 1.0
        stages.append(_placeholder_amplifier(stage, gain))
    # An open amplifier with nothing after it to bound its noise band gets one.
    for slot in slots:
        if slot.index is None or slot.part.kind != "amplifier":
            continue
        downstream = any(s.responses for s in stages[slot.index :])
        k = slot.part.known
        if not downstream and k.get("bandwidth_hz") is None and k.get("gbw_hz") is None:
            k = {**k, "bandwidth_hz": adc.sample_rate_hz}
            slot.part = replace(slot.part, known=k)
            slot.assumptions.append(
                f"{slot.part.name}: bandwidth not stated and nothing after it bounds its noise; "
                f"{format_si(adc.sample_rate_hz, 'Hz')} (the ADC sample rate) assumed: state "
                "bandwidth or gbw"
            )
            stages[slot.index] = _placeholder_amplifier(slot.part, stages[slot.index].gain)
    # The first amplifier of unknown gain takes the largest gain the ADC range allows.
    for n, slot in enumerate(unknown_gain):
        if n == 0:
            others = 1.0
            for j, s in enumerate(stages):
                if j != slot.index:
                    others *= s.gain
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
                f"{slot.part.name}: gain not stated; set to {format_si(gain, 'V/V')}, the largest "
                "the ADC "
                f"range allows ({kept}: choose the next lower gain you can build and plan again)"
            )
        else:
            gain = 1.0
            slot.assumptions.append(f"{slot.part.name}: gain not stated; unity assumed")
        stages[slot.index] = _placeholder_amplifier(slot.part, gain)
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
    for slot in slots:
        assumptions.extend(slot.assumptions)
    return chain, slots, assumptions


def _placeholder_amplifier(part: OpenPart, gain: float) -> IntegratedAmplifier:
    k = part.known
    bandwidth = k.get("bandwidth_hz")
    if bandwidth is None and k.get("gbw_hz") is not None:
        bandwidth = k["gbw_hz"] / gain
    return IntegratedAmplifier(
        part.name,
        gain=gain,
        input_noise=NoiseDensity(0.0, k.get("en_corner_hz", 0.0)),
        bandwidth_hz=bandwidth,
    )
