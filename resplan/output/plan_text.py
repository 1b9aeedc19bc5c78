"""The backward plan as text and as plain data: what ``resplan plan`` prints.

:func:`format_plan` writes the allocation table and the per-part requirement
table, with a unit on every number and the conditions it holds at;
:func:`plan_data` gives the same as plain data with stable keys for ``--json``.
"""

from __future__ import annotations

import math
from typing import Any

from ..chain.design import Design
from ..plan.allocation import Plan
from ..plan.tables import format_limit, plan_verdict
from ..units.formatting import (
    ascii_units,
    format_counts,
    format_db,
    format_number,
    format_percent,
    format_si,
    format_temperature,
)
from .budget_text import _table, json_safe

__all__ = ["format_plan", "format_limit", "plan_data", "plan_verdict"]


def format_plan(plan: Plan, design: Design, *, ascii_only: bool = False) -> str:
    """The plan as an aligned text report, ending with the verdict line."""
    req = design.requirement
    out: list[str] = []
    meta = design.meta
    title = meta.title + (f", revision {meta.revision}" if meta.revision else "")
    out.append(title)
    if design.source:
        out.append(f"design: {design.source} (sha256 {design.sha256[:12]}…)")
    out.append("")
    out.append("Conditions")
    out += _table(
        [
            [
                "coverage",
                f"{format_percent(plan.coverage)} (k_pp = {plan.k_pp:.2f}: "
                f"peak-to-peak = {plan.k_pp:.2f} × rms)",
            ],
            ["band", f"f_low {format_si(plan.f_low_hz, 'Hz')} (bounds 1/f noise)"],
            [
                "output data rate",
                "n/a" if plan.output_rate_hz is None else format_si(plan.output_rate_hz, "Hz"),
            ],
            ["temperature", format_temperature(plan.temperature_k)],
        ],
        set(),
    )
    out.append("")
    out.append("Budget (referred to the sensor)")
    needs = (
        f"{format_counts(req.noise_free_counts)} noise-free counts"
        if req.noise_free_counts is not None
        else f"{format_db(req.dynamic_range_db)} dynamic range"
    )
    unit = design.sensor.unit  # every figure at the sensor: V, or A for a current output
    rows = [
        ["stated as", req.description or needs],
        ["allowed total", f"{format_si(plan.allowed_total_rms_v, unit)} rms ({needs})"],
    ]
    if plan.interference_rms_v:
        rows.append(["interference allowance", f"{format_si(plan.interference_rms_v, unit)} rms"])
    rows += [
        ["allowed noise", f"{format_si(plan.allowed_noise_rms_v, unit)} rms"],
        ["fixed parts", f"{format_si(plan.fixed_rms_v, unit)} rms"],
        ["left for open parts", f"{format_si(plan.remaining_rms_v, unit)} rms"],
    ]
    out += _table(rows, set())
    out.append("")
    if plan.fixed:
        out.append("Fixed contributions")
        allowed_sq = plan.allowed_noise_rms_v**2
        rows = [["contributor", "stage", "kind", "at sensor", "of allowed power"]]
        for c in plan.fixed:
            share = c.rms_v**2 / allowed_sq if allowed_sq else math.inf
            rows.append(
                [c.name, c.stage, c.kind, f"{format_si(c.rms_v, unit)} rms", format_percent(share)]
            )
        out += _table(rows, {3, 4})
        out.append("")
    if plan.allocations:
        out.append("Allocation to the open parts")
        rows = [["part", "place", "weight", "share", "at sensor", "at ADC input"]]
        for a in plan.allocations:
            rows.append(
                [
                    a.part,
                    a.field_path,
                    format_number(a.weight),
                    format_percent(a.share),
                    f"{format_si(a.rms_v, unit)} rms",
                    f"{format_si(a.adc_rms_v, 'V')} rms",
                ]
            )
        out += _table(rows, {2, 3, 4, 5})
        out.append("")
    if plan.requirements:
        out.append("What each part must meet")
        rows = [["part", "figure", "limit"]]
        conditions = []
        for r in plan.requirements:
            rows.append([r.part, r.quantity, format_limit(r)])
            conditions.append(r.condition)
        lines = _table(rows, {2})
        out.append(lines[0])
        for line, condition in zip(lines[1:], conditions, strict=True):
            out.append(line)
            if condition:
                out.append("      " + condition)
        out.append("")
    if plan.reasons:
        out.append("Why it cannot be met")
        out += [f"  {r}" for r in plan.reasons]
        out.append("")
    if plan.levers:
        out.append("Levers (each alone would make it feasible)")
        out += [f"  - {lever.name}: {lever.description}" for lever in plan.levers]
        out.append("")
    if plan.assumptions:
        out.append("Assumptions")
        out += [f"  - {a}" for a in plan.assumptions]
        out.append("")
    out.append(plan_verdict(plan, design.sensor.unit))
    text = "\n".join(out)
    return ascii_units(text) if ascii_only else text


def plan_data(plan: Plan, design: Design) -> dict[str, Any]:
    """The plan as plain data with stable keys (SI units), JSON-safe."""
    data = plan.to_dict()
    data["verdict"] = plan_verdict(plan, design.sensor.unit)
    # A current-output sensor: every figure at the sensor (the *_rms_v keys) is in A.
    data["sensor_unit"] = design.sensor.unit
    data["design"] = {
        "source": design.source,
        "sha256": design.sha256,
        "meta": design.meta.__dict__.copy(),
        "notes": list(design.notes),
    }
    return json_safe(data)
