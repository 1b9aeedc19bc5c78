"""Section 3: the backward plan — allocation among the open parts and per-part limits."""

from __future__ import annotations

from typing import Any

from ...chain.design import Design
from ...plan.tables import amplitude_suffix
from ...units.formatting import format_number, format_percent, format_si
from .style import SECTION_TITLES
from .writer import Writer, rms

_BOUND_WORDS = {"max": "at most", "min": "at least", "info": ""}


def allocation_section(w: Writer, design: Design, plan: Any, plan_note: str) -> list:
    out = [w.heading(SECTION_TITLES[2], 0)]
    unit = design.sensor.unit  # figures at the sensor: V, or A for a current output
    if plan is None:
        out.append(w.p(plan_note or "The plan was not computed."))
        return out
    if not design.open_parts:
        # Nothing is open: the plan would only repeat the forward budget of section 4.
        out.append(
            w.p(
                "Every part is given, so there is nothing to allocate: the forward budget in "
                f"section 4 is the check, against {rms(plan.allowed_noise_rms_v, unit)} of noise "
                "allowed at the sensor. Leave a part open in the design file to have the plan "
                "size it."
            )
        )
        out += _levers(w, plan)
        return out
    feasible = bool(getattr(plan, "feasible", False))
    out.append(
        w.p(
            "The plan is feasible." if feasible else "The plan is infeasible.",
            w.h2,
        )
    )
    rows = [
        ["Allowed total", rms(plan.allowed_total_rms_v, unit)],
        ["Interference allowance", rms(plan.interference_rms_v, unit)],
        ["Allowed noise", rms(plan.allowed_noise_rms_v, unit)],
        ["Fixed by given parts", rms(plan.fixed_rms_v, unit)],
        ["Left for the open parts", rms(plan.remaining_rms_v, unit)],
    ]
    out.append(w.p("All figures referred to the sensor.", w.small))
    out.append(w.table(rows, [55, 115], header=False, label_column=True))
    for reason in getattr(plan, "reasons", ()) or ():
        out.append(w.p(reason))
    fixed = [c for c in getattr(plan, "fixed", ()) or () if c.rms_v > 0]
    if fixed:
        out.append(w.heading("Noise fixed by the given parts", 1))
        rows = [["Contributor", "Stage", "Kind", "RMS at sensor"]]
        rows += [[c.name, c.stage, c.kind, rms(c.rms_v, unit)] for c in fixed]
        out.append(w.table(rows, [60, 50, 25, 35], align_right=(3,)))
    allocations = getattr(plan, "allocations", ()) or ()
    if allocations:
        out.append(w.heading("Allocation among the open parts", 1))
        rows = [["Part", "Kind", "Field", "Weight", "Share", "RMS at sensor", "RMS at ADC"]]
        rows += [
            [
                a.part,
                a.kind,
                a.field_path,
                format_number(a.weight),
                format_percent(a.share),
                rms(a.rms_v, unit),
                rms(a.adc_rms_v),
            ]
            for a in allocations
        ]
        out.append(w.table(rows, [34, 18, 22, 13, 15, 24, 24], align_right=(3, 4, 5, 6)))
    elif not design.open_parts:
        out.append(w.p("Every part is given: there is nothing to allocate."))
    requirements = getattr(plan, "requirements", ()) or ()
    if requirements:
        out.append(w.heading("Per-part requirements", 1))
        rows = [["Part", "Quantity", "Limit", "Condition", "Formula"]]
        for r in requirements:
            bound = _BOUND_WORDS.get(getattr(r, "bound", ""), getattr(r, "bound", ""))
            value = format_si(r.value, r.unit) + amplitude_suffix(r) if r.value is not None else "—"
            rows.append(
                [
                    f"{r.part} ({r.field_path})",
                    r.quantity,
                    f"{bound} {value}".strip(),
                    r.condition,
                    r.formula,
                ]
            )
        out.append(w.table(rows, [30, 30, 24, 40, 46]))
    out += _levers(w, plan)
    return out


def _levers(w: Writer, plan: Any) -> list:
    out: list = []
    levers = getattr(plan, "levers", ()) or ()
    if levers:
        out.append(w.heading("Levers", 1))
        rows = [["Lever", "Value", "What it means"]]
        rows += [
            [
                lv.name,
                "—" if lv.value is None else format_si(lv.value, lv.unit),
                lv.description,
            ]
            for lv in levers
        ]
        out.append(w.table(rows, [35, 25, 110]))
    return out
