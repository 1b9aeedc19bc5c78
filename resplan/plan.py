r"""Work backward: from the resolution requirement to a noise limit for every open part.

The method (DOMAIN §7; see ``docs/planning.md`` for a worked example):

1. The allowed total rms at the sensor is σ = S/(counts·k_pp) (or the
   dynamic-range equivalent); the interference allowance is taken out in power.
2. Every part already given — the sensor's thermal and own noise, any stage,
   reference or ADC the design fixes — is computed with the forward budget and
   subtracted in power. Open parts enter that computation as noiseless
   placeholders that keep their known gain and bandwidth.
3. The remainder is shared among the open parts by weights (equal power by default).
4. Each share is turned into the figures data sheets quote, through the same
   noise bandwidths the forward budget uses, so that a chain built with every
   open part exactly at its limit meets the requirement with zero margin.

When the fixed parts alone exceed the budget the plan is infeasible and says
which parts, by how much, and the value of each lever that would make it feasible.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Any

from .bandwidth import DigitalPath, noise_bandwidth
from .budget import DOMINANCE_RATIO, Budget, Contribution, forward_budget
from .chain import Chain
from .converter import ADC, NoiseAtRate, SnrNoise, TransitionNoise
from .design import Design, OpenPart
from .errors import ChainError, DesignError, DesignErrors
from .formatting import format_si
from .physics import BOLTZMANN_J_PER_K, enob_from_sinad, noise_rms_to_snr
from .resolution import sine_rms
from .responses import AnalogLowpass, SincFilter
from .stages import (
    ActiveFilter,
    IntegratedAmplifier,
    NoiseDensity,
    NonInvertingStage,
    Reference,
)


def _v(value: float) -> str:
    return format_si(value, "V")


def _ohm(value: float) -> str:
    return format_si(value, "Ω")


__all__ = [
    "Allocation",
    "PartRequirement",
    "Lever",
    "Plan",
    "plan_design",
    "realise",
    "parse_weights",
    "DEFAULT_FILTER",
]

#: Response and order assumed for an open filter whose shape is not stated.
DEFAULT_FILTER = ("butterworth", 2)
#: Largest post-averaging count tried when looking for a feasible data rate.
_MAX_AVERAGING_DOUBLINGS = 24


@dataclass(frozen=True)
class Allocation:
    """One open part's share of the noise that is left after the fixed parts.

    Attributes
    ----------
    part, kind, field_path : str
        Which part.
    weight : float
        Its allocation weight.
    share : float
        Fraction of the open noise power.
    rms_v : float
        Its allowance referred to the sensor, V rms.
    adc_rms_v : float
        The same at the ADC input, V rms.
    """

    part: str
    kind: str
    field_path: str
    weight: float
    share: float
    rms_v: float
    adc_rms_v: float


@dataclass(frozen=True)
class PartRequirement:
    """A figure a part must meet, in the form data sheets quote.

    ``value`` is SI in ``unit`` (format it with :func:`resplan.formatting.format_si`);
    ``bound`` says whether it is a maximum, a minimum or information.
    """

    part: str
    field_path: str
    quantity: str
    value: float
    unit: str
    bound: str
    condition: str = ""
    formula: str = ""


@dataclass(frozen=True)
class Lever:
    """A change that alone would make an infeasible plan feasible."""

    name: str
    value: float | None
    unit: str
    description: str


@dataclass(frozen=True)
class Plan:
    """The backward plan of a design. See :func:`plan_design`."""

    design_title: str
    coverage: float
    k_pp: float
    allowed_total_rms_v: float
    interference_rms_v: float
    allowed_noise_rms_v: float
    fixed: tuple[Contribution, ...]
    fixed_rms_v: float
    remaining_rms_v: float
    allocations: tuple[Allocation, ...]
    requirements: tuple[PartRequirement, ...]
    feasible: bool
    reasons: tuple[str, ...]
    levers: tuple[Lever, ...]
    assumptions: tuple[str, ...]
    temperature_k: float
    f_low_hz: float
    output_rate_hz: float | None
    limits: dict[str, dict[str, Any]] = field(default_factory=dict, repr=False, compare=False)

    def to_dict(self) -> dict[str, Any]:
        """Plain data with stable keys (SI units; the key or ``unit`` names the unit)."""
        return {
            "design": self.design_title,
            "feasible": self.feasible,
            "coverage": self.coverage,
            "coverage_factor_pp": self.k_pp,
            "allowed_total_rms_v": self.allowed_total_rms_v,
            "interference_rms_v": self.interference_rms_v,
            "allowed_noise_rms_v": self.allowed_noise_rms_v,
            "fixed_rms_v": self.fixed_rms_v,
            "remaining_rms_v": self.remaining_rms_v,
            "temperature_k": self.temperature_k,
            "f_low_hz": self.f_low_hz,
            "output_rate_hz": self.output_rate_hz,
            "fixed": [
                {"name": c.name, "stage": c.stage, "kind": c.kind, "rms_v": c.rms_v}
                for c in self.fixed
            ],
            "allocations": [a.__dict__.copy() for a in self.allocations],
            "requirements": [r.__dict__.copy() for r in self.requirements],
            "reasons": list(self.reasons),
            "levers": [lever.__dict__.copy() for lever in self.levers],
            "assumptions": list(self.assumptions),
        }


def parse_weights(text: str) -> dict[str, float]:
    """Parse ``"amp=2,adc=1"`` into ``{"amp": 2.0, "adc": 1.0}``.

    Examples
    --------
    >>> parse_weights("front end=2, adc=1")
    {'front end': 2.0, 'adc': 1.0}
    """
    out: dict[str, float] = {}
    errors = []
    for item in filter(None, (p.strip() for p in text.split(","))):
        name, sep, value = item.partition("=")
        name = name.strip()
        try:
            if not sep or not name:
                raise ValueError
            w = float(value)
        except ValueError:
            errors.append(DesignError("--weights", item, "NAME=NUMBER pairs separated by commas"))
            continue
        out[name] = w
    if errors:
        raise DesignErrors(errors)
    return out


# --------------------------------------------------------------------------------------
# The provisional chain: given parts as they are, open parts as noiseless placeholders.


@dataclass
class _Slot:
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


def _placeholder_filter(part: OpenPart, design: Design, slot: _Slot) -> ActiveFilter:
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
        cutoff = _signal_band_top(design)
        slot.assumptions.append(
            f"{part.name}: cut-off not stated, the signal band top {cutoff:g} Hz assumed "
            "for its noise bandwidth"
        )
    return ActiveFilter(part.name, response, int(order), cutoff, gain=k.get("gain", 1.0))


def _signal_band_top(design: Design) -> float:
    if design.band.f_high_hz is not None:
        return design.band.f_high_hz
    if design.digital is not None:
        return design.digital.output_rate_hz / 2
    raise DesignError(
        "requirement.band.high", None, "the top of the signal band, to size an open filter"
    )


def _provisional(design: Design) -> tuple[Chain, list[_Slot], list[str]]:
    slots: list[_Slot] = []
    assumptions: list[str] = []
    source = design.source
    adc = design.adc
    if isinstance(adc, OpenPart):
        slots.append(_Slot(adc, None))
        adc = _placeholder_adc(adc, source)
    stages = []
    unknown_gain: list[_Slot] = []
    for i, stage in enumerate(design.stages):
        if not isinstance(stage, OpenPart):
            stages.append(stage)
            continue
        slot = _Slot(stage, i)
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
                f"{adc.sample_rate_hz:g} Hz (the ADC sample rate) assumed: state bandwidth or gbw"
            )
            stages[slot.index] = _placeholder_amplifier(slot.part, stages[slot.index].gain)
    # The first amplifier of unknown gain takes the largest gain the ADC range allows.
    for n, slot in enumerate(unknown_gain):
        if n == 0:
            others = 1.0
            for j, s in enumerate(stages):
                if j != slot.index:
                    others *= s.gain
            gain = adc.full_scale_range_v / (design.sensor.span_v * others)
            slot.assumptions.append(
                f"{slot.part.name}: gain not stated; set to {gain:.4g} V/V, the largest the ADC "
                "range allows (the sensor span fills the range: choose the next lower gain "
                "you can build and plan again)"
            )
        else:
            gain = 1.0
            slot.assumptions.append(f"{slot.part.name}: gain not stated; unity assumed")
        stages[slot.index] = _placeholder_amplifier(slot.part, gain)
    reference = design.reference
    if isinstance(reference, OpenPart):
        slots.append(_Slot(reference, None))
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


# --------------------------------------------------------------------------------------


def _weights(slots: list[_Slot], design: Design, override: dict[str, float] | None) -> list[float]:
    """Weights of the open parts, keyed in the design or ``override`` by name or place."""
    names = [s.part.name for s in slots]
    places = {s.part.field_path: s.part.name for s in slots}
    errors = []
    given: dict[str, float] = {}
    for name, w in {**design.weights, **(override or {})}.items():
        key = places.get(name, name)
        if key not in names:
            errors.append(
                DesignError(
                    f"weights.{name}",
                    w,
                    "the name or place of an open part: "
                    + (", ".join(names) if names else "(none open)"),
                )
            )
        elif not (math.isfinite(w) and w >= 0):
            errors.append(DesignError(f"weights.{name}", w, "a weight ≥ 0"))
        else:
            given[key] = float(w)
    if errors:
        raise DesignErrors(errors)
    weights = []
    for slot in slots:
        w = given.get(slot.part.name, slot.part.weight)
        weights.append(1.0 if w is None else float(w))
    if slots and sum(weights) <= 0:
        raise DesignError("weights", given, "at least one open part with a weight > 0")
    return weights


def plan_design(
    design: Design, weights: dict[str, float] | None = None, *, grid_points: int = 2000
) -> Plan:
    """Plan the noise limits of every open part of a design.

    Parameters
    ----------
    design : Design
        Requirement and chain; any part may be open.
    weights : dict, optional
        Allocation weights by part name, overriding those of the design file.
    grid_points : int
        Integration grid, as for the forward budget.

    Returns
    -------
    Plan

    Raises
    ------
    DesignError, DesignErrors
        For bad weights, or an open part lacking a field the planner needs.
    """
    req = design.requirement
    chain, slots, assumptions = _provisional(design)
    w = _weights(slots, design, weights)
    band = design.band
    fixed_budget = forward_budget(chain, band, requirement=req, grid_points=grid_points)
    fixed = tuple(c for c in fixed_budget.contributions if c.rms_v > 0)
    fixed_var = sum(c.rms_v**2 for c in fixed)
    allowed = req.allowed_noise_rms_v
    remaining_var = allowed**2 - fixed_var
    reasons: list[str] = []
    levers: list[Lever] = []
    assumptions = list(assumptions)
    assumptions.extend(_standing_assumptions(design, fixed_budget))
    feasible = remaining_var > 0
    if req.interference_rms_v >= req.allowed_total_rms_v:
        reasons.append(
            f"the interference allowance ({_v(req.interference_rms_v)} rms) uses up the whole "
            f"allowed noise ({_v(req.allowed_total_rms_v)} rms)"
        )
        feasible = False
    elif not feasible:
        reasons.extend(_infeasible_reasons(fixed, fixed_var, allowed))
    if not feasible:
        levers.extend(
            _levers(design, chain, fixed_budget, fixed, fixed_var, req, band, grid_points)
        )

    room = max(remaining_var, 0.0)
    total_w = sum(w) or 1.0
    allocations = []
    requirements: list[PartRequirement] = []
    limits: dict[str, dict[str, Any]] = {}
    gain_total = chain.total_gain
    for slot, weight in zip(slots, w, strict=True):
        var = room * weight / total_w
        allocations.append(
            Allocation(
                part=slot.part.name,
                kind=slot.part.kind,
                field_path=slot.part.field_path,
                weight=weight,
                share=weight / total_w,
                rms_v=math.sqrt(var),
                adc_rms_v=math.sqrt(var) * gain_total,
            )
        )
        if var > 0:
            rows, limit = _CONVERTERS[slot.part.kind](slot, var, chain, design, band, grid_points)
        else:
            rows, limit = _no_room(slot, chain)
        requirements.extend(rows)
        limits[slot.part.field_path] = limit

    requirements.extend(_gain_rows(slots, chain, design, fixed, allowed, reasons))
    requirements.extend(_given_adc_rows(chain, design, fixed_budget, allowed))
    if any(r.startswith("the ADC's noise needs") for r in reasons):
        feasible = False
    return Plan(
        design_title=design.meta.title,
        coverage=req.coverage,
        k_pp=req.k_pp,
        allowed_total_rms_v=req.allowed_total_rms_v,
        interference_rms_v=req.interference_rms_v,
        allowed_noise_rms_v=allowed,
        fixed=fixed,
        fixed_rms_v=math.sqrt(fixed_var),
        remaining_rms_v=math.sqrt(room),
        allocations=tuple(allocations),
        requirements=tuple(requirements),
        feasible=feasible,
        reasons=tuple(reasons),
        levers=tuple(levers),
        assumptions=tuple(dict.fromkeys(assumptions)),
        temperature_k=design.temperature_k,
        f_low_hz=band.f_low_hz,
        output_rate_hz=chain.output_rate_hz,
        limits=limits,
    )


def _standing_assumptions(design: Design, budget: Budget) -> list[str]:
    req = design.requirement
    out = [
        f"coverage {req.coverage * 100:.4g} % (k_pp = {req.k_pp:.3f}) for noise-free figures",
        f"electronics at {design.temperature_k:.2f} K, "
        f"sensor at {budget.sensor_temperature_k:.2f} K",
        f"1/f noise integrated from f_low = {design.band.f_low_hz:g} Hz (about 1/observation time)",
        "uncorrelated sources add in power; open parts share the remaining power by weight",
        f"reference: {budget.reference_note}",
    ]
    out.extend(budget.warnings)
    out.extend(getattr(design, "notes", ()))
    return out


def _infeasible_reasons(fixed: tuple[Contribution, ...], fixed_var: float, allowed: float) -> list:
    total = math.sqrt(fixed_var)
    reasons = [
        f"the fixed parts alone give {_v(total)} rms at the sensor, "
        f"{total / allowed:.3g} times the {_v(allowed)} rms allowed"
        if allowed > 0
        else "nothing is left for noise once the interference allowance is reserved"
    ]
    for c in fixed:
        if c.rms_v**2 >= 0.05 * fixed_var:
            reasons.append(
                f"  {c.stage}: {c.name} {_v(c.rms_v)} rms ({c.rms_v**2 / fixed_var:.0%} of it)"
            )
    return reasons


# --------------------------------------------------------------------------------------
# Converting a share into data-sheet figures.


def _path_bandwidth(chain: Chain, index: int, band, grid_points: int):
    return noise_bandwidth(
        chain.responses_from(index), chain.digital, band.f_low_hz, grid_points=grid_points
    )


def _band_text(nb) -> str:
    return f"white noise bandwidth {nb.white_hz:.4g} Hz"


def _amplifier_rows(slot: _Slot, var: float, chain: Chain, design: Design, band, grid_points):
    part = slot.part
    i = slot.index
    stage = chain.stages[i]
    g_in = chain.gain_before(i)
    nb = _path_bandwidth(chain, i, band, grid_points)
    at_input = var * g_in**2
    fc_e = part.known.get("en_corner_hz", 0.0)
    fc_i = part.known.get("in_corner_hz", 0.0)
    en_max = math.sqrt(at_input / (nb.white_hz + fc_e * nb.flicker))
    r_seen = chain.resistance_seen_by(i)
    e_for_current = math.sqrt(at_input / (nb.white_hz + fc_i * nb.flicker))
    in_max = e_for_current / r_seen if r_seen > 0 else math.inf
    role = "front end" if i == _first_gain_index(chain) else "driver"
    corner_text = f"1/f corner {fc_e:g} Hz" + (
        "" if "en_corner_hz" in part.known else " (assumed: state it)"
    )
    rows = [
        PartRequirement(
            part.name,
            part.field_path,
            "white voltage noise e_n (current noise negligible)",
            en_max,
            "V/√Hz",
            "max",
            f"{corner_text}; {_band_text(nb)}",
            "e_n = √(σ²·G_in² / (ENBW + f_c·K_1/f))",
        ),
    ]
    if r_seen > 0:
        rows += [
            PartRequirement(
                part.name,
                part.field_path,
                f"current noise i_n into {_ohm(r_seen)} (voltage noise negligible)",
                in_max,
                "A/√Hz",
                "max",
                f"1/f corner {fc_i:g} Hz"
                + ("" if "in_corner_hz" in part.known else " (assumed: state it)")
                + f"; {_band_text(nb)}",
                "i_n = e_allowed / R_source",
            ),
            PartRequirement(
                part.name,
                part.field_path,
                "e_n and i_n with half the share each",
                en_max / math.sqrt(2),
                "V/√Hz",
                "max",
                f"with i_n ≤ {in_max / math.sqrt(2):.3g} A/√Hz; optimum source resistance "
                f"e_n/i_n = {_ohm(r_seen)}",
                "each term σ²/2",
            ),
        ]
    rows += [
        PartRequirement(
            part.name,
            part.field_path,
            "output noise density (as a " + role + ")",
            en_max * stage.gain,
            "V/√Hz",
            "max",
            f"at its output, gain {stage.gain:.4g} V/V; {_band_text(nb)}",
            "e_out = e_n · G",
        ),
    ]
    limit = {"en": NoiseDensity(en_max, fc_e), "gain": stage.gain, "bandwidth_hz": None}
    if stage.responses:
        limit["bandwidth_hz"] = stage.responses[0].cutoff_hz
    return rows, limit


def _first_gain_index(chain: Chain) -> int | None:
    for i, stage in enumerate(chain.stages):
        if isinstance(stage, IntegratedAmplifier | NonInvertingStage):
            return i
    return None


def _filter_rows(slot: _Slot, var: float, chain: Chain, design: Design, band, grid_points):
    part = slot.part
    i = slot.index
    stage: ActiveFilter = chain.stages[i]
    g_in = chain.gain_before(i)
    nb = _path_bandwidth(chain, i, band, grid_points)
    t = chain.temperature_k
    r_max = var * g_in**2 / (4 * BOLTZMANN_J_PER_K * t * nb.white_hz)
    rows = [
        PartRequirement(
            part.name,
            part.field_path,
            "equivalent noise resistance of the filter",
            r_max,
            "Ω",
            "max",
            f"thermal noise 4kTR at {t:.2f} K; {_band_text(nb)}",
            "R = σ²·G_in² / (4kT·ENBW)",
        )
    ]
    rows.extend(_alias_rows(part, stage, chain, design))
    limit = {"noise_resistance_ohm": r_max, "filter": stage}
    return rows, limit


def _alias_rows(part: OpenPart, stage: ActiveFilter, chain: Chain, design: Design) -> list:
    req = design.requirement
    fs = chain.adc.sample_rate_hz
    top = _signal_band_top(design)
    if design.alias_interferer is not None:
        f_i, amplitude = design.alias_interferer
        source = f"stated interferer {_v(amplitude)} rms at {f_i:g} Hz (at the sensor)"
    else:
        f_i, amplitude = fs - top, sine_rms(req.span_v)
        source = (
            f"a full-scale sine at the first alias band, f_s − f_B = {f_i:g} Hz "
            "(no interferer stated)"
        )
    if req.interference_rms_v > 0:
        residue = req.interference_rms_v
        residue_text = "the interference allowance"
    else:
        residue = DOMINANCE_RATIO * req.allowed_total_rms_v
        residue_text = "1/5 of the allowed noise (common practice, no source)"
    needed_db = 20 * math.log10(amplitude / residue) if amplitude > residue else 0.0
    helped_db = 0.0
    if chain.digital is not None:
        helped_db += float(-10 * math.log10(max(chain.digital.power_gain(f_i), 1e-300)))
    for j, other in enumerate(chain.stages):
        if other is stage:
            continue
        for r in other.responses:
            helped_db += float(r.attenuation_db(f_i))
        del j
    filter_db = max(0.0, needed_db - helped_db)
    rows = [
        PartRequirement(
            part.name,
            part.field_path,
            f"attenuation at {f_i:g} Hz",
            filter_db,
            "dB",
            "min",
            f"{source}; residue ≤ {_v(residue)} rms ({residue_text}); digital filter and "
            f"other stages give {helped_db:.1f} dB of the {needed_db:.1f} dB",
            "A = 20·log10(A_i/residue) − A_digital − A_other",
        )
    ]
    if f_i <= 0:
        return rows
    response = stage._lowpass.kind
    known_order = part.known.get("order")
    known_cutoff = part.known.get("cutoff_hz")
    cutoff = known_cutoff if known_cutoff is not None else top
    min_order = None
    for n in range(1, 9):
        if response == "rc" and n > 1:
            break
        if float(AnalogLowpass(response, n, cutoff).attenuation_db(f_i)) >= filter_db:
            min_order = n
            break
    rows.append(
        PartRequirement(
            part.name,
            part.field_path,
            f"{response} order for a cut-off of {cutoff:g} Hz",
            float(min_order) if min_order is not None else math.inf,
            "",
            "min",
            "no order up to 8 reaches it: raise the sample rate or lower the cut-off"
            if min_order is None
            else ("cut-off as stated" if known_cutoff is not None else "cut-off at the band top"),
            "A(f) = 10·log10(1 + (f/f_c)^(2n)) for Butterworth; numerical otherwise",
        )
    )
    order = int(known_order) if known_order is not None else (min_order or 8)
    if response == "rc":
        order = 1
    fc_max = _max_cutoff(response, order, f_i, filter_db)
    rows.append(
        PartRequirement(
            part.name,
            part.field_path,
            f"cut-off of an order-{order} {response} filter",
            fc_max,
            "Hz",
            "max",
            "inside the signal band: pass-band droop"
            if fc_max < top
            else f"the signal band top is {top:g} Hz",
            "f_c = f / (10^(A/10) − 1)^(1/2n) for Butterworth",
        )
    )
    return rows


def _max_cutoff(response: str, order: int, f_i: float, needed_db: float) -> float:
    if needed_db <= 0:
        return math.inf
    if response in ("rc", "butterworth"):
        return f_i / (10 ** (needed_db / 10) - 1) ** (1 / (2 * order))
    lo, hi = f_i * 1e-9, f_i
    for _ in range(200):
        mid = math.sqrt(lo * hi)
        if float(AnalogLowpass(response, order, mid).attenuation_db(f_i)) >= needed_db:
            lo = mid
        else:
            hi = mid
    return lo


def _reference_rows(slot: _Slot, var: float, chain: Chain, design: Design, band, grid_points):
    part = slot.part
    ref = chain.reference
    peak = chain.sensor.peak_v
    sigma_ref = math.sqrt(var) * ref.voltage_v / peak
    nb = chain.reference_bandwidth(band.f_low_hz, grid_points)
    fc = part.known.get("noise_corner_hz", 0.0)
    density = sigma_ref / math.sqrt(nb.white_hz + fc * nb.flicker)
    rms_01_10 = density * math.sqrt(fc * math.log(100.0) + 9.9)
    corner_text = f"1/f corner {fc:g} Hz" + (
        "" if "noise_corner_hz" in part.known else " (assumed: state it)"
    )
    rows = [
        PartRequirement(
            part.name,
            part.field_path,
            "noise in the chain's band",
            sigma_ref,
            "V",
            "max",
            f"evaluated at the largest input ({_v(peak)} at the sensor); {_band_text(nb)}",
            "σ_ref = σ_share · V_ref / V_in,max",
        ),
        PartRequirement(
            part.name,
            part.field_path,
            "noise relative to V_ref",
            sigma_ref / ref.voltage_v * 1e6,
            "ppm",
            "max",
            f"of {ref.voltage_v:g} V, rms",
            "σ_ref / V_ref",
        ),
        PartRequirement(
            part.name,
            part.field_path,
            "white noise density",
            density,
            "V/√Hz",
            "max",
            corner_text,
            "e = σ_ref / √(ENBW + f_c·K_1/f)",
        ),
        PartRequirement(
            part.name,
            part.field_path,
            "equivalent rms noise 0.1–10 Hz",
            rms_01_10,
            "V",
            "max",
            f"for that density and corner (peak-to-peak ≈ 6.6× rms at 99.9 %); {corner_text}",
            "e·√(f_c·ln 100 + 9.9 Hz)",
        ),
    ]
    return rows, {"noise": NoiseDensity(density, fc)}


def _adc_rows(slot: _Slot, var: float, chain: Chain, design: Design, band, grid_points):
    part = slot.part
    adc = chain.adc
    post = chain.post_variance_factor()
    at_input = math.sqrt(var) * chain.total_gain
    at_rate = at_input / math.sqrt(post)
    rate = adc.output_rate_hz
    snr = float(noise_rms_to_snr(at_rate, adc.full_scale_range_v)) if at_rate > 0 else math.inf
    after = (
        "" if post == 1 else f" (before the post-filter, which divides its power by {1 / post:.4g})"
    )
    rows = [
        PartRequirement(
            part.name,
            part.field_path,
            f"noise at its input at {rate:g} Hz data rate",
            at_rate,
            "V",
            "max",
            f"rms, quantisation included, gain {adc.gain:g}{after}",
            "σ_ADC = σ_share · G_total / √(post factor)",
        ),
        PartRequirement(
            part.name,
            part.field_path,
            "SNR, full-scale sine",
            snr,
            "dB",
            "min",
            f"full-scale range {adc.full_scale_range_v:g} V p-p at {rate:g} Hz",
            "SNR = 20·log10((FSR/2√2)/σ) (IEEE Std 1241)",
        ),
        PartRequirement(
            part.name,
            part.field_path,
            "ENOB",
            float(enob_from_sinad(snr)),
            "bits",
            "min",
            "from the SNR above",
            "ENOB = (SNR − 1.76)/6.02 (IEEE Std 1241)",
        ),
    ]
    if "bits" in part.known:
        q = adc.quantisation_rms_v
        if q > at_rate:
            osr = (q / at_rate) ** 2
            rows.append(
                PartRequirement(
                    part.name,
                    part.field_path,
                    f"oversampling ratio for an ideal {adc.bits}-bit quantiser",
                    osr,
                    "",
                    "min",
                    "white (dithered) quantisation noise averaged down, 10·log10(OSR) dB",
                    "OSR = (q/√12 / σ)²",
                )
            )
        else:
            rows.append(
                PartRequirement(
                    part.name,
                    part.field_path,
                    "transition noise",
                    math.sqrt(at_rate**2 - q**2) / adc.lsb_v,
                    "LSB",
                    "max",
                    f"rms, with quantisation q/√12 of {adc.bits} bits added",
                    "√(σ² − q²/12) / LSB",
                )
            )
    return rows, {"noise": NoiseAtRate(at_rate, rate)}


def _no_room(slot: _Slot, chain: Chain):
    """A part left with nothing: it would have to be noiseless."""
    part = slot.part
    row = PartRequirement(
        part.name,
        part.field_path,
        "noise allowance",
        0.0,
        "V",
        "max",
        "nothing is left for this part (see the reasons and levers)",
        "σ² = 0",
    )
    limit = {
        "amplifier": {"en": NoiseDensity(0.0)},
        "filter": {"noise_resistance_ohm": 0.0},
        "reference": {"noise": NoiseDensity(0.0)},
        "adc": {"noise": NoiseAtRate(0.0, chain.adc.output_rate_hz)},
    }[part.kind]
    return [row], limit


_CONVERTERS = {
    "amplifier": _amplifier_rows,
    "filter": _filter_rows,
    "reference": _reference_rows,
    "adc": _adc_rows,
}


def _gain_rows(slots, chain: Chain, design: Design, fixed, allowed: float, reasons: list) -> list:
    """Largest gain the ADC range allows and the least the fixed ADC noise needs."""
    i = _first_gain_index(chain)
    if i is None:
        return []
    stage = chain.stages[i]
    name = stage.name
    path = next((s.part.field_path for s in slots if s.index == i), f"stages[{i}]")
    g_in = chain.gain_before(i)
    others = chain.total_gain / stage.gain
    g_max = chain.adc.full_scale_range_v / (design.sensor.span_v * others)
    rows = [
        PartRequirement(
            name,
            path,
            "front-end gain the ADC range allows",
            g_max,
            "V/V",
            "max",
            f"sensor span {_v(design.sensor.span_v)} into {chain.adc.full_scale_range_v:g} V "
            "full-scale range",
            "G_max = FSR / (span · other gains)",
        )
    ]
    later = {s.name for s in chain.stages[i + 1 :]} | {chain.adc.name}
    post_sq = sum((c.rms_v * g_in * stage.gain) ** 2 for c in fixed if c.stage in later)
    pre_sq = sum(c.rms_v**2 for c in fixed if c.stage not in later)
    room = allowed**2 - pre_sq
    if post_sq > 0 and room > 0:
        g_min = math.sqrt(post_sq) / (math.sqrt(room) * g_in)
        rows.append(
            PartRequirement(
                name,
                path,
                "front-end gain the given later parts need",
                g_min,
                "V/V",
                "min",
                "their noise alone fills the budget at this gain, everything else noiseless",
                "G_min = σ_after / (√(σ² − σ_before²) · G_in)",
            )
        )
        if g_min > g_max * (1 + 1e-9):
            reasons.append(
                f"the ADC's noise needs a front-end gain of at least {g_min:.4g} V/V but the ADC "
                f"range allows at most {g_max:.4g} V/V: a quieter ADC or a larger span"
            )
    return rows


def _given_adc_rows(chain: Chain, design: Design, budget: Budget, allowed: float) -> list:
    """For a given ADC with white noise: the highest output data rate that still fits."""
    adc = design.adc
    if isinstance(adc, OpenPart) or design.open_parts:
        return []
    if not isinstance(adc.noise, NoiseAtRate | SnrNoise | TransitionNoise):
        return []
    own = [c for c in budget.contributions if c.stage == adc.name]
    own_sq = sum(c.rms_v**2 for c in own)
    rest = budget.total_rms_v**2 - own_sq
    room = allowed**2 - rest
    if own_sq <= 0 or room <= 0:
        return []
    factor = room / own_sq
    return [
        PartRequirement(
            adc.name,
            "adc",
            "highest output data rate for this ADC",
            chain.output_rate_hz * factor,
            "Hz",
            "info",
            "its noise white from sample to sample and the other parts unchanged",
            "ODR_max = ODR · room/σ_ADC²",
        )
    ]


# --------------------------------------------------------------------------------------
# Levers for an infeasible plan.


def _levers(design, chain, budget, fixed, fixed_var, req, band, grid_points) -> list[Lever]:
    levers: list[Lever] = []
    allowed = req.allowed_noise_rms_v
    total_with_interference = math.sqrt(fixed_var + req.interference_rms_v**2)
    span_needed = req.span_v * total_with_interference / req.allowed_total_rms_v
    levers.append(
        Lever(
            "larger span",
            span_needed,
            "V",
            f"a sensor span of at least {_v(span_needed)} (now {_v(req.span_v)}) with the "
            "same noise at the sensor",
        )
    )
    sensor_name = design.sensor.name
    thermal_s = sum(c.rms_v**2 for c in fixed if c.stage == sensor_name and c.kind == "thermal")
    room_s = allowed**2 - (fixed_var - thermal_s)
    r = design.sensor.resistance_ohm
    t_s = budget.sensor_temperature_k
    if thermal_s > 0 and room_s > 0:
        levers.append(
            Lever(
                "lower source resistance",
                r * room_s / thermal_s,
                "Ω",
                f"a source resistance of at most {_ohm(r * room_s / thermal_s)} (now {_ohm(r)}), "
                "thermal noise only; current-noise terms fall too",
            )
        )
        levers.append(
            Lever(
                "colder sensor",
                t_s * room_s / thermal_s,
                "K",
                f"the sensor at or below {t_s * room_s / thermal_s:.4g} K (now {t_s:.2f} K)",
            )
        )
    else:
        levers.append(
            Lever(
                "lower source resistance",
                None,
                "Ω",
                "not enough alone: the other fixed parts exceed the budget at R = 0",
            )
        )
    thermal_all = sum(c.rms_v**2 for c in fixed if c.kind == "thermal")
    room_t = allowed**2 - (fixed_var - thermal_all)
    if thermal_all > 0 and room_t > 0:
        t = chain.temperature_k
        factor = room_t / thermal_all
        levers.append(
            Lever(
                "lower temperature",
                factor * t,
                "K",
                f"every resistor at or below {factor * t:.4g} K (now {t:.2f} K; "
                "thermal terms scale with T)",
            )
        )
    levers.append(_averaging_lever(chain, band, req, grid_points))
    return levers


def _averaging_lever(chain: Chain, band, req, grid_points: int) -> Lever:
    """Find the shortest extra averaging (a narrower band) that makes the fixed parts fit."""
    rate = chain.output_rate_hz
    for k in range(1, _MAX_AVERAGING_DOUBLINGS + 1):
        n = 2**k
        extra = SincFilter(1, n, rate)
        stages = (chain.digital.stages if chain.digital else ()) + (extra,)
        try:
            trial = replace(chain, digital=DigitalPath(stages))
            b = forward_budget(trial, band, requirement=req, grid_points=grid_points)
        except (DesignError, ChainError):
            break
        if b.total_rms_v <= req.allowed_noise_rms_v:
            return Lever(
                "longer averaging / narrower band",
                float(n),
                "",
                f"average {n} more results: output rate {rate / n:.4g} Hz (now {rate:.4g} Hz), "
                f"computed with 1/f noise, which does not average down",
            )
    return Lever(
        "longer averaging / narrower band",
        None,
        "",
        f"not enough alone: even 2^{_MAX_AVERAGING_DOUBLINGS} averages do not fit "
        "(1/f noise does not average down)",
    )


# --------------------------------------------------------------------------------------


def realise(plan: Plan, design: Design) -> Chain:
    """The chain with every open part exactly at its planned limit.

    Amplifiers get their maximum e_n and no current noise, filters their maximum
    noise resistance, the reference its maximum density, the ADC its maximum
    noise at its data rate. Its forward budget meets the requirement with zero margin.
    """
    chain, slots, _ = _provisional(design)
    stages = list(chain.stages)
    reference = chain.reference
    adc = chain.adc
    for slot in slots:
        limit = plan.limits[slot.part.field_path]
        kind = slot.part.kind
        if kind == "amplifier":
            old = stages[slot.index]
            stages[slot.index] = replace(old, input_noise=limit["en"])
        elif kind == "filter":
            stages[slot.index] = replace(
                stages[slot.index], noise_resistance_ohm=limit["noise_resistance_ohm"]
            )
        elif kind == "reference":
            reference = replace(reference, noise=limit["noise"])
        elif kind == "adc":
            adc = replace(adc, noise=limit["noise"])
    return replace(chain, stages=tuple(stages), reference=reference, adc=adc)
