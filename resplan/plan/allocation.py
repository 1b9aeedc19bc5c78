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

import difflib
import math
from dataclasses import dataclass, field, replace
from typing import Any

from ..chain.budget import Budget, Contribution, forward_budget
from ..chain.design import Design
from ..chain.signal_chain import Chain
from ..chain.verdict import Failure, noise_exceeds, stated_interferers
from ..errors import DesignError, DesignErrors
from ..units.formatting import format_number, format_percent, format_si
from .levers import Lever, find_levers
from .limits import UNSUPPRESSED, PartRequirement, gain_limits, part_limits
from .provisional import DEFAULT_FILTER, Slot, provisional_chain
from .stage_limits import probe_paths
from .verdict_items import unallocated_failures


def _v(value: float) -> str:
    return format_si(value, "V")


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
    #: Failures of the verdict items the plan does not allocate (the check's own records).
    failures: tuple[Failure, ...] = ()
    limits: dict[str, dict[str, Any]] = field(default_factory=dict, repr=False, compare=False)

    def to_records(self, what: str = "requirements") -> list[dict[str, Any]]:
        """Flat rows: each part's limits, the allocation or the fixed contributions.

        See :func:`resplan.plan.tables.plan_records`.
        """
        from .tables import plan_records

        return plan_records(self, what)

    def _repr_html_(self) -> str:
        from .tables import plan_html

        return plan_html(self)

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
                {"id": c.id, "name": c.name, "stage": c.stage, "kind": c.kind, "rms_v": c.rms_v}
                for c in self.fixed
            ],
            "allocations": [a.__dict__.copy() for a in self.allocations],
            "requirements": [r.__dict__.copy() for r in self.requirements],
            "reasons": list(self.reasons),
            "failures": [f.to_dict() for f in self.failures],
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


def _weights(slots: list[Slot], design: Design, override: dict[str, float] | None) -> list[float]:
    """Weights of the open parts, keyed in the design or ``override`` by name or place."""
    names = [s.part.name for s in slots]
    places = {s.part.field_path: s.part.name for s in slots}
    errors = []
    given: dict[str, float] = {}
    for name, w in {**design.weights, **(override or {})}.items():
        key = places.get(name, name)
        if key not in names:
            close = difflib.get_close_matches(str(name), [*names, *places], n=1, cutoff=0.6)
            hint = f'; did you mean "{close[0]}"?' if close else ""
            errors.append(
                DesignError(
                    f"weights.{name}",
                    w,
                    "the name or place of an open part: "
                    + (", ".join(names) if names else "(none open)")
                    + hint,
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
    chain, slots, assumptions = provisional_chain(design)
    w = _weights(slots, design, weights)
    band = design.band
    fixed_budget = forward_budget(chain, band, requirement=req, grid_points=grid_points)
    probe_paths(design, chain, slots, band, grid_points)
    fixed = tuple(c for c in fixed_budget.contributions if c.rms_v > 0)
    fixed_var = sum(c.rms_v**2 for c in fixed)
    allowed = req.allowed_noise_rms_v
    remaining_var = allowed**2 - fixed_var
    reasons: list[str] = []
    found_levers: list[Lever] = []
    assumptions = list(assumptions)
    assumptions.extend(_standing_assumptions(design, fixed_budget))
    # Nothing open: the noise item is the check's own (the same slack).
    feasible = remaining_var > 0 if slots else not noise_exceeds(math.sqrt(fixed_var), allowed)
    if req.interference_rms_v >= req.allowed_total_rms_v:
        reasons.append(
            f"the interference allowance ({_v(req.interference_rms_v)} rms) uses up the whole "
            f"allowed noise ({_v(req.allowed_total_rms_v)} rms)"
        )
        feasible = False
    elif not feasible:
        reasons.extend(_infeasible_reasons(fixed, fixed_var, allowed))
    if not feasible:
        found_levers = find_levers(
            design, chain, fixed_budget, fixed, fixed_var, req, band, grid_points
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
        rows, limit = part_limits(slot, var, chain, design, band, grid_points)
        requirements.extend(rows)
        limits[slot.part.field_path] = limit

    requirements.extend(gain_limits(slots, chain, design, fixed, allowed, reasons))
    for row in requirements if stated_interferers(design) else ():
        if row.condition.startswith(UNSUPPRESSED) and math.isinf(row.value):
            reasons.append(
                f"{row.part} ({row.field_path}): no filter order up to 8 suppresses the stated "
                f"interferer ({row.quantity}; {row.condition})"
            )
    failures = unallocated_failures(design, chain, fixed_budget, slots)
    reasons.extend(f"{f.item}: {f.message}" for f in failures if f.item != "noise")
    stated = [r for slot in slots for r in slot.reasons]
    reasons.extend(stated)
    if (
        failures
        or stated
        or any(
            r.startswith("the ADC's noise needs") or "suppresses the stated interferer" in r
            for r in reasons
        )
    ):
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
        levers=tuple(found_levers),
        assumptions=tuple(dict.fromkeys(assumptions)),
        temperature_k=design.temperature_k,
        f_low_hz=band.f_low_hz,
        output_rate_hz=chain.output_rate_hz,
        failures=failures,
        limits=limits,
    )


def _standing_assumptions(design: Design, budget: Budget) -> list[str]:
    req = design.requirement
    out = [
        f"coverage {format_percent(req.coverage)} (k_pp = {format_number(req.k_pp)}) for "
        "noise-free figures",
        f"electronics at {design.temperature_k:.2f} K, "
        f"sensor at {budget.sensor_temperature_k:.2f} K",
        f"1/f noise integrated from f_low = {format_si(design.band.f_low_hz, 'Hz')} (about "
        "1/observation time)",
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
        f"{format_number(total / allowed)} times the {_v(allowed)} rms allowed"
        if allowed > 0
        else "nothing is left for noise once the interference allowance is reserved"
    ]
    for c in fixed:
        if c.rms_v**2 >= 0.05 * fixed_var:
            reasons.append(
                f"  {c.stage}: {c.name} {_v(c.rms_v)} rms "
                f"({format_percent(c.rms_v**2 / fixed_var)} of it)"
            )
    return reasons


# --------------------------------------------------------------------------------------


def realise(plan: Plan, design: Design) -> Chain:
    """The chain with every open part exactly at its planned limit.

    Gain stages get their op amp's maximum e_n and no current noise, filters their
    maximum noise resistance (or, built as a circuit, their op amps' maximum e_n), the
    reference its maximum density, the ADC its maximum noise at its data rate. Its
    forward budget meets the requirement with zero margin: every limit was solved
    against the same circuit (:mod:`resplan.plan.stage_limits`).
    """
    chain, slots, _ = provisional_chain(design)
    stages = list(chain.stages)
    reference = chain.reference
    adc = chain.adc
    for slot in slots:
        limit = plan.limits[slot.part.field_path]
        kind = slot.part.kind
        if slot.index is not None:
            stages[slot.index] = limit["stage"]
        elif kind == "reference":
            reference = replace(reference, noise=limit["noise"])
        elif kind == "adc":
            adc = replace(adc, noise=limit["noise"])
    return replace(chain, stages=tuple(stages), reference=reference, adc=adc)
