"""Section 2: the requirement, the chain part by part, and every assumption."""

from __future__ import annotations

from typing import Any

from ...chain.budget import Budget
from ...chain.design import Design
from ...units.formatting import (
    format_bits,
    format_counts,
    format_db,
    format_percent,
    format_si,
    format_temperature,
)
from .diagram import block_diagram
from .parts import describe_adc_noise, describe_digital, describe_part
from .style import SECTION_TITLES
from .writer import Writer, coverage_text, k_text, maybe_hz, rms


def requirement_section(w: Writer, design: Design, budget: Budget | None, plan: Any) -> list:
    req = design.requirement
    unit = design.sensor.unit  # V, or A for a current-output sensor
    out = [w.heading(SECTION_TITLES[1], 0), w.heading("The requirement", 1)]
    swing = "bipolar, ±" + format_si(req.span_v / 2, unit) if design.sensor.bipolar else "unipolar"
    rows: list[list[Any]] = [
        ["Statement", req.description or "no statement given"],
        [
            "Sensor span",
            f"{format_si(req.span_v, unit)} peak to peak at the sensor output ({swing})",
        ],
    ]
    if req.noise_free_counts is not None:
        rows.append(
            [
                "Resolution required",
                f"{format_counts(req.noise_free_counts)} noise-free counts "
                f"({format_bits(req.required_noise_free_bits)})",
            ]
        )
    else:
        rows.append(["Resolution required", f"{format_db(req.dynamic_range_db)} dynamic range"])
    rows += [
        ["Coverage", coverage_text(req.coverage, req.k_pp)],
        ["Allowed total", rms(req.allowed_total_rms_v, unit) + " at the sensor"],
        ["Interference allowance", rms(req.interference_rms_v, unit) + " at the sensor"],
        [
            "Allowed noise",
            rms(req.allowed_noise_rms_v, unit) + " at the sensor (in power, after it)",
        ],
    ]
    out.append(w.table(rows, [55, 115], header=False, label_column=True))

    out.append(w.heading("The chain", 1))
    out.append(block_diagram(design, w.width, w.f, w.plain))
    out.append(
        w.p(
            "Block diagram of the chain, drawn from the design: signal left to right, each block "
            "with its place in the design file, its kind and the figures that set its part in "
            "the noise; open parts dashed.",
            w.caption,
        )
    )
    parts: list[tuple[str, Any]] = [("sensor", design.sensor)]
    parts += [(f"stages[{i}]", s) for i, s in enumerate(design.stages)]
    if design.reference is not None:
        parts.append(("reference", design.reference))
    parts.append(("adc", design.adc))
    rows = [["Place", "Part", "Kind", "Figures used"]]
    for place, part in parts:
        name, kind, figures = describe_part(part)
        rows.append([getattr(part, "field_path", place), name, kind, figures])
    if design.digital is not None:
        rows.append(["digital_filter", "digital filtering", "digital", describe_digital(design)])
    out.append(w.table(rows, [20, 38, 24, 88]))

    out.append(w.heading("Assumptions", 1))
    items = [
        f"Lower band edge f_L = {format_si(design.band.f_low_hz, 'Hz')}: it bounds the 1/f "
        "noise, which does not average down (about 1/observation time). The noise band above "
        "it is what the chain's analog and digital filters pass, aliases included.",
        "Top of the signal band: "
        + maybe_hz(design.band.f_high_hz, "not given (the filters set the noise band)")
        + ".",
        f"Temperature of the electronics {format_temperature(design.temperature_k)}"
        + (
            f"; sensor {format_temperature(design.sensor.temperature_k)}."
            if design.sensor.temperature_k is not None
            else "; the sensor at the same temperature."
        ),
        "Noise is Gaussian and the sources are uncorrelated: they add in power. Peak-to-peak "
        f"figures are k_pp·σ with k_pp = {k_text(req.k_pp)} at {format_percent(req.coverage)} "
        "coverage; true Gaussian noise has no bounded peak, so k_pp is a choice.",
        "Interference is not noise: mains pickup, RF rectification, ground loops and switching "
        "spurs are fixed by shielding, layout, filtering and grounding, not by the choice of "
        + (
            f"parts. An allowance of {rms(req.interference_rms_v, unit)} is reserved for them, "
            "taken out of the budget in power."
            if req.interference_rms_v > 0
            else "parts. No allowance is reserved for them in this design."
        ),
        "Every source is referred to the sensor by dividing by the DC gain in front of it.",
        "Current noise flows in the DC source resistance at each input; a filter capacitor's "
        "shunting at high frequency is neglected, which overstates current noise.",
    ]
    if budget is not None:
        items.append("Reference: " + budget.reference_note + ".")
    elif design.reference is None:
        items.append("Reference: none given; reference noise is not counted.")
    adc_note = describe_adc_noise(design.adc)
    if adc_note:
        items.append("ADC noise: " + adc_note)
    if budget is not None:
        for c in budget.contributions:
            if c.note:
                items.append(f"{c.name} ({c.stage}): {c.note}.")
        items += [f"Budget warning: {x}" for x in budget.warnings]
    notes = tuple(getattr(design, "notes", ()) or ())
    items += [f"From the design file: {x}." for x in notes]
    if plan is not None:
        items += [f"Plan: {x}" for x in getattr(plan, "assumptions", ()) or () if x not in notes]
    out += w.bullet_items(items)
    return out
