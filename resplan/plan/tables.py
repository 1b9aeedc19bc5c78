"""A plan as rows and as HTML tables, and its limits and verdict as text.

:func:`plan_records` gives flat rows (plain values, SI) of what each part must
meet, of the allocation, or of the fixed contributions — ready for
``pandas.DataFrame(rows)`` or CSV without pandas. :func:`plan_html` is what a
:class:`~resplan.plan.allocation.Plan` shows in Jupyter: the fixed
contributions with their ids, the allocation, each part's limits and the
verdict. :func:`format_limit` and :func:`plan_verdict` are the texts ``resplan
plan`` prints, kept here so that the text output and the HTML read one source.
"""

from __future__ import annotations

import html
import math
from typing import TYPE_CHECKING, Any

from ..chain.tables import html_table
from ..units.formatting import (
    format_bits,
    format_db,
    format_number,
    format_percent,
    format_si,
    format_temperature,
)
from .limits import PartRequirement

if TYPE_CHECKING:  # pragma: no cover
    from .allocation import Plan

__all__ = [
    "format_limit",
    "amplitude_suffix",
    "plan_verdict",
    "plan_records",
    "plan_html",
    "RECORD_KINDS",
]

#: What :func:`plan_records` can list.
RECORD_KINDS = ("requirements", "allocations", "fixed")

_BOUND = {"max": "≤ ", "min": "≥ ", "info": ""}


def format_limit(row: PartRequirement) -> str:
    """A requirement's value with its bound and unit, such as ``"≤ 18.7 nV/√Hz"``.

    Examples
    --------
    >>> format_limit(PartRequirement("amp", "stages[0]", "e_n", 18.7e-9, "V/√Hz", "max"))
    '≤ 18.7 nV/√Hz'
    """
    value, unit = row.value, row.unit
    bound = _BOUND.get(row.bound, "")
    if math.isinf(value):
        return "none reaches it" if row.bound == "min" else "no limit"
    if unit == "dB":
        text = format_db(value)
    elif unit == "bits":
        text = format_bits(value)
    elif unit in ("ppm", "LSB", "V/V", ""):
        text = format_si(value, unit, 4)
    else:
        text = format_si(value, unit)
    return bound + text + amplitude_suffix(row)


def amplitude_suffix(row: PartRequirement) -> str:
    """ " rms" or " p-p" after a voltage limit ("" when the quantity already says so).

    Examples
    --------
    >>> amplitude_suffix(PartRequirement("ADC", "adc", "noise peak-to-peak", 1e-6, "V", "max"))
    ' p-p'
    """
    if row.unit != "V" or "rms" in row.quantity:
        return ""
    return " p-p" if "peak-to-peak" in row.quantity else " rms"


def plan_verdict(plan: Plan, unit: str = "V") -> str:
    """The one-line verdict of a plan; ``unit`` of figures at the sensor (A: a current output)."""
    if plan.feasible and not plan.allocations:
        return (
            "FEASIBLE: nothing is open; the given parts leave "
            f"{format_si(plan.remaining_rms_v, unit)} rms unused "
            "(run `resplan check` for the margin)"
        )
    if plan.feasible:
        return (
            "FEASIBLE: a chain whose open parts meet these limits meets the requirement "
            "(with zero margin at the limits)"
        )
    if plan.levers:
        return "INFEASIBLE: the requirement cannot be met as the design stands (see the levers)"
    return "INFEASIBLE: the requirement cannot be met as the design stands (see why above)"


def plan_records(plan: Plan, what: str = "requirements") -> list[dict[str, Any]]:
    """Flat rows of a plan (SI values, the key or ``unit`` naming the unit).

    Parameters
    ----------
    plan : Plan
    what : {"requirements", "allocations", "fixed"}
        ``requirements``: one row per figure a part must meet (part, field_path,
        quantity, bound, value, unit, condition, formula). ``allocations``: one
        row per open part's share. ``fixed``: the given parts' contributions
        (id, name, stage, kind, rms_v).
    """
    if what == "requirements":
        return [
            {
                "part": r.part,
                "field_path": r.field_path,
                "quantity": r.quantity,
                "bound": r.bound,
                "value": r.value,
                "unit": r.unit,
                "condition": r.condition,
                "formula": r.formula,
            }
            for r in plan.requirements
        ]
    if what == "allocations":
        return [a.__dict__.copy() for a in plan.allocations]
    if what == "fixed":
        return [
            {"id": c.id, "name": c.name, "stage": c.stage, "kind": c.kind, "rms_v": c.rms_v}
            for c in plan.fixed
        ]
    from ..errors import DesignError

    raise DesignError("what", what, "one of " + ", ".join(RECORD_KINDS))


def plan_html(plan: Plan) -> str:
    """The plan as HTML: budget, fixed contributions (with ids), allocation, limits, verdict."""
    esc = html.escape
    conditions = (
        f"coverage {format_percent(plan.coverage, 4)} (k_pp = {format_number(plan.k_pp)}); "
        f"f_low {format_si(plan.f_low_hz, 'Hz')}; output data rate "
        + ("not stated" if plan.output_rate_hz is None else format_si(plan.output_rate_hz, "Hz"))
        + f"; temperature {format_temperature(plan.temperature_k)}"
    )
    budget = html_table(
        ["", "V rms at the sensor"],
        [
            ["allowed total", format_si(plan.allowed_total_rms_v, "V")],
            ["interference allowance", format_si(plan.interference_rms_v, "V")],
            ["allowed noise", format_si(plan.allowed_noise_rms_v, "V")],
            ["fixed parts", format_si(plan.fixed_rms_v, "V")],
            ["left for open parts", format_si(plan.remaining_rms_v, "V")],
        ],
        right=(1,),
        caption="Budget",
    )
    allowed_sq = plan.allowed_noise_rms_v**2
    fixed = html_table(
        ["id", "contributor", "stage", "kind", "at sensor (rms)", "of allowed power"],
        (
            [
                c.id,
                c.name,
                c.stage,
                c.kind,
                format_si(c.rms_v, "V"),
                format_percent(c.rms_v**2 / allowed_sq) if allowed_sq else "∞",
            ]
            for c in plan.fixed
        ),
        right=(4, 5),
        caption="Fixed contributions",
    )
    allocation = html_table(
        ["part", "place", "weight", "share", "at sensor (rms)", "at ADC input (rms)"],
        (
            [
                a.part,
                a.field_path,
                format_number(a.weight),
                format_percent(a.share),
                format_si(a.rms_v, "V"),
                format_si(a.adc_rms_v, "V"),
            ]
            for a in plan.allocations
        ),
        right=(2, 3, 4, 5),
        caption="Allocation to the open parts",
    )
    limits = html_table(
        ["part", "figure", "limit", "condition"],
        ([r.part, r.quantity, format_limit(r), r.condition] for r in plan.requirements),
        right=(2,),
        caption="What each part must meet",
    )
    reasons = "".join(f"<li>{esc(r)}</li>" for r in plan.reasons)
    levers = "".join(f"<li><b>{esc(v.name)}</b>: {esc(v.description)}</li>" for v in plan.levers)
    return (
        '<div class="resplan-plan">'
        f"<p><b>{esc(plan.design_title)}</b><br/><small>{esc(conditions)}</small></p>"
        + budget
        + (fixed if plan.fixed else "")
        + (allocation if plan.allocations else "")
        + (limits if plan.requirements else "")
        + (f"<p>Why it cannot be met:</p><ul>{reasons}</ul>" if reasons else "")
        + (f"<p>Levers (each alone would make it feasible):</p><ul>{levers}</ul>" if levers else "")
        + f"<p><b>{esc(plan_verdict(plan))}</b></p></div>"
    )
