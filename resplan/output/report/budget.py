"""Section 4: the forward noise budget, every contributor, and the stated interferers."""

from __future__ import annotations

from typing import Any

from ...chain.budget import Budget
from ...chain.design import Design
from ...units.formatting import format_percent, format_si
from ..interference_text import interference_lines
from .style import GREY, SECTION_TITLES
from .writer import Writer


def budget_section(w: Writer, design: Design, budget: Budget | None) -> list:
    out = [w.heading(SECTION_TITLES[3], 0)]
    unit = design.sensor.unit  # at the sensor: V, or A for a current-output sensor
    density = f"{unit}/√Hz"
    if budget is None:
        names = ", ".join(f"{p.field_path} ({p.kind})" for p in design.open_parts)
        out.append(
            w.p(
                "The forward budget needs every part given; these parts are open: "
                + names
                + ". Their limits are in section 3."
            )
        )
        return out
    out.append(
        w.p(
            "Every contributor, largest first, with its stage and its id (the same in "
            f"check --json and from Python). RMS ({unit} rms) over the chain's noise band, "
            "referred to the sensor (RTI) and at the ADC input; share of the total noise power; "
            "white density referred to the sensor and its 1/f corner where the source is a "
            "density; the white noise bandwidth of its path.",
            w.small,
        )
    )
    rows: list[list[Any]] = [
        [
            "Contributor",
            "Kind",
            "RMS at sensor",
            "RMS at ADC",
            "Share",
            "Density (RTI)",
            "1/f corner",
            "Noise BW",
            "Note",
        ]
    ]
    for c in budget.contributions:
        name = w.p(
            f"{w.text(c.name)}<br/><font color='{GREY}' size='6.5'>{w.text(c.stage)}"
            f" · {w.text(c.id)}</font>",
            w.cell,
            markup=True,
        )
        rows.append(
            [
                name,
                c.kind,
                format_si(c.rms_v, unit),
                format_si(c.adc_rms_v, "V"),
                format_percent(c.share),
                "—" if c.density_v_per_rthz is None else format_si(c.density_v_per_rthz, density),
                "—" if c.corner_hz is None else format_si(c.corner_hz, "Hz"),
                "—" if c.noise_bandwidth_hz is None else format_si(c.noise_bandwidth_hz, "Hz"),
                w.p(c.note, w.cell_grey) if c.note else "",
            ]
        )
    rows.append(
        [
            "Total (root sum of squares)",
            "",
            format_si(budget.total_rms_v, unit),
            format_si(budget.total_adc_rms_v, "V"),
            format_percent(1.0),
            "",
            "",
            "",
            "",
        ]
    )
    out.append(
        w.table(
            rows,
            [31, 17, 14, 14, 15, 19, 13, 13, 34],
            total_row=True,
            align_right=(2, 3, 4, 5, 6, 7),
            font_size=7,
        )
    )
    out.append(
        w.p(
            f"Gain from the sensor to the ADC {format_si(budget.gain, budget.gain_unit)}; ADC "
            f"full-scale range {format_si(budget.adc_full_scale_v, 'V')}; "
            f"reference: {budget.reference_note}.",
            w.small,
        )
    )
    if design.is_complete:
        from ...chain.verdict import interferer_checks

        residues = interferer_checks(design, budget)
        if residues:
            out.append(w.heading("Stated interferers (interference, not noise)", 1))
            out += [w.p(line.strip(), w.small) for line in interference_lines(residues)[1:]]
    return out
