"""The title block and section 1, the one-page summary."""

from __future__ import annotations

from typing import Any

from ... import __version__
from ...chain.budget import Budget
from ...chain.design import Design
from ...units.formatting import (
    format_bits,
    format_counts,
    format_db,
    format_in_unit,
    format_percent,
    format_si,
    format_temperature,
)
from ..interference_text import residue_summary
from ..verdict_text import failure_rows, verdict_sentence
from .safety import SUMMARY_CAUTION
from .style import GREY, MEETS, SECTION_TITLES, SHORT
from .writer import (
    Writer,
    after_allowance,
    coverage_text,
    k_text,
    maybe_hz,
    report_date,
    rms,
    signed_bits,
)


def title_block(w: Writer, design: Design) -> list:
    from reportlab.platypus import TableStyle

    meta = design.meta
    written, how = report_date(meta.date)

    def label(text: str) -> Any:
        return w.p(f"<b>{w.text(text)}</b>", w.cell, markup=True)

    # Two facts a row where they are short, so that the summary keeps to page 1.
    rows = [
        [label("Project"), meta.project or "—", label("Revision"), meta.revision or "—"],
        [label("Author"), meta.author or "—", label("Date"), meta.date or "— (none given)"],
        [label("Design file"), design.source or "— (built in code)", "", ""],
        [
            label("SHA-256 of file"),
            w.p(design.sha256, w.mono) if design.sha256 else "not recorded (no design file)",
            "",
            "",
        ],
        [label("Written by"), f"resplan {__version__} on {written} ({how})", "", ""],
    ]
    block = w.table(rows, [30, 70, 22, 48], header=False, compact=True)
    block.setStyle(TableStyle([("SPAN", (1, r), (3, r)) for r in (2, 3, 4)]))
    return [
        w.p(meta.title or "Untitled design", w.title),
        w.p("Noise and resolution requirements appendix", w.subtitle),
        block,
    ]


def _requirement_line(design: Design) -> str:
    """The requirement, stated once: the design's statement, and the target unless the
    statement already gives it (a statement written from the target is not repeated)."""
    req = design.requirement
    statement = req.description or ""
    if req.noise_free_counts is not None:
        bits = format_bits(req.required_noise_free_bits)
        if "count" in statement:
            return f"{statement} ({bits})"
        target = (
            f"{format_counts(req.noise_free_counts)} noise-free counts ({bits}) over "
            f"{format_si(req.span_v, design.sensor.unit)}"
        )
    else:
        if "dynamic range" in statement:
            return statement
        target = (
            f"{format_db(req.dynamic_range_db)} dynamic range over "
            f"{format_si(req.span_v, design.sensor.unit)}"
        )
    return f"{statement} — {target}" if statement else target


def _verdict(w: Writer, budget: Budget | None, plan: Any, judged: Any = None) -> Any:
    if budget is not None and budget.meets_requirement is not None:
        if judged is None:
            from ...chain.verdict import judge

            judged = judge(budget)
        text = verdict_sentence(judged, budget.margin_bits)
        colour = MEETS if judged.meets else SHORT
    elif plan is not None:
        feasible = bool(getattr(plan, "feasible", False))
        text = (
            "The plan is feasible: limits for every open part are in section 3."
            if feasible
            else "The plan is infeasible: "
            + "; ".join(getattr(plan, "reasons", ()) or ["see section 3"])
        )
        colour = MEETS if feasible else SHORT
    else:
        text = "No verdict: the design has open parts and no plan was computed."
        colour = GREY
    return w.p(
        f'<font color="{colour}"><b>{w.text(text)}</b></font>',
        w.h2,
        markup=True,
    )


def _judged(design: Design, budget: Budget | None) -> Any:
    if budget is None or not design.is_complete:
        return None
    from ...chain.verdict import judge_design

    return judge_design(design, budget)


def _failures(w: Writer, judged: Any) -> list:
    """Every failing item, its figure and its limit: the same list as check's."""
    if judged is None or judged.meets:
        return []
    rows = failure_rows(judged.failures)
    return [
        w.heading("What fails", 1),
        w.table(rows, [28, 25, 25, 92], font_size=7),
    ]


def _passband_rows(judged: Any) -> list[list[str]]:
    """The band-top gain, settling and each interferer; an item "What fails" lists is
    not repeated (its figure, limit and where it lands are in that table)."""
    rows: list[list[str]] = []
    if judged is None:
        return rows
    failed = set(judged.failed_items)
    d, t = judged.droop, judged.timing
    if d is not None and "passband_flatness" not in failed:
        rows.append(
            [
                "Gain at the band top",
                f"{d.total_db:+.3f} dB at {format_si(d.frequency_hz, 'Hz')} "
                f"({d.analog_db:+.3f} dB analog, {d.digital_db:+.3f} dB digital)",
            ]
        )
    if t is not None and not failed & {"settling", "channel_rate"}:
        settle = "not known" if t.settling_s is None else format_si(t.settling_s, "s")
        per = "not known" if t.channel_rate_hz is None else format_si(t.channel_rate_hz, "Hz")
        rows.append(
            [
                "Settling, channels",
                f"{settle} after a step or a channel switch; {t.channels} channel(s), "
                f"{per} of settled results each",
            ]
        )
    for r in judged.interference:
        if r.item in failed:
            continue
        rows.append([f"Interferer {r.item}", f"{r.name}: {residue_summary(r)}; lands {r.lands}"])
    return rows


def summary_section(w: Writer, design: Design, budget: Budget | None, plan: Any) -> list:
    req = design.requirement
    at_sensor = design.sensor.unit  # V, or A for a current-output sensor
    judged = _judged(design, budget)
    out = [w.heading(SECTION_TITLES[0], 0), _verdict(w, budget, plan, judged)]
    out += _failures(w, judged)
    rows: list[list[Any]] = [["Requirement", _requirement_line(design)]]
    if budget is not None:
        b = budget
        # The verdict is the headline above; the margin is its own row below.
        rows += [
            [
                "Resolution, sensor span",
                f"noise-free {format_bits(b.noise_free_bits)} · "
                f"{format_counts(b.noise_free_counts)} counts over "
                f"{format_si(b.span_v, b.sensor_unit)}; effective {format_bits(b.effective_bits)}",
            ],
            [
                "Resolution, ADC range",
                f"noise-free {format_bits(b.noise_free_bits_adc_range)} · "
                f"{format_counts(b.noise_free_counts_adc_range)} counts over "
                f"{format_si(b.adc_full_scale_v, 'V')}; effective "
                f"{format_bits(b.effective_bits_adc_range)}",
            ],
            [
                "Total noise",
                f"{rms(b.total_rms_v, at_sensor)} at the sensor · {rms(b.total_adc_rms_v)} at the "
                "ADC input",
            ],
            [
                "Allowed noise",
                f"{rms(b.allowed_rms_v, at_sensor)} at the sensor, "
                f"{after_allowance(req, at_sensor)}",
            ],
            [
                "Noise margin",
                f"{signed_bits(b.margin_bits)} of noise-free resolution "
                "(log2 of allowed over actual noise)",
            ],
            ["Coverage", coverage_text(b.coverage, b.k_pp)],
            [
                "SNR",
                f"{format_db(b.snr_db)} (full-scale sine of the ADC range against the total "
                "noise at its input)",
            ],
            [
                "Dynamic range",
                f"{format_db(b.dynamic_range_db)} (full-scale sine over the sensor span)",
            ],
            ["ADC alone", f"ENOB {format_bits(b.adc_enob)} (its own noise and quantisation)"],
            [
                "Gain, sensor to ADC",
                f"{format_si(b.gain, b.gain_unit)}; the sensor span uses "
                f"{format_percent(b.adc_range_used)} of the ADC range",
            ],
            [
                "Band",
                f"f_L = {format_si(b.f_low_hz, 'Hz')} (bounds the 1/f noise); top of the signal "
                f"band {maybe_hz(b.f_high_hz)}; the noise band is what the filters pass",
            ],
            [
                "Temperature",
                f"electronics {format_temperature(b.temperature_k)}; sensor "
                f"{format_temperature(b.sensor_temperature_k)}",
            ],
            ["Output data rate", format_si(b.output_rate_hz, "Hz")],
            [
                "Dominant contributors",
                "; ".join(f"{c.name} ({c.stage})" for c in b.dominant) or "none",
            ],
            *_passband_rows(judged),
        ]
        if req.engineering_per_volt and req.engineering_unit:
            unit = req.engineering_unit
            per_v = req.engineering_per_volt
            text = (
                f"noise {format_in_unit(b.total_rms_v * per_v, unit)} rms; noise-free step "
                f"{format_in_unit(b.k_pp * b.total_rms_v * per_v, unit)} at k_pp = "
                f"{k_text(b.k_pp)}"
            )
            if req.noise_free_counts:
                step = req.span_v * per_v / req.noise_free_counts
                text += f"; required step {format_in_unit(step, unit)}"
            rows.append(["In the measurand", text])
    else:
        rows += [
            ["Forward budget", "not computed: the design has open parts (section 3 sizes them)"],
            [
                "Allowed noise",
                f"{rms(req.allowed_noise_rms_v, at_sensor)} at the sensor, "
                f"{after_allowance(req, at_sensor)}",
            ],
            ["Coverage", coverage_text(req.coverage, req.k_pp)],
            [
                "Band",
                f"f_L = {format_si(design.band.f_low_hz, 'Hz')} (bounds the 1/f noise); top of "
                f"the signal band {maybe_hz(design.band.f_high_hz)}",
            ],
            ["Temperature", f"electronics {format_temperature(design.temperature_k)}"],
            [
                "Open parts",
                "; ".join(f"{p.name} ({p.field_path}, {p.kind})" for p in design.open_parts),
            ],
        ]
        if plan is not None:
            rows += [
                ["Fixed by given parts", rms(plan.fixed_rms_v, at_sensor) + " at the sensor"],
                [
                    "Left for the open parts",
                    rms(plan.remaining_rms_v, at_sensor) + " at the sensor",
                ],
            ]
            if getattr(plan, "output_rate_hz", None):
                rows.append(["Output data rate", format_si(plan.output_rate_hz, "Hz")])
    out.append(w.table(rows, [40, 130], header=False, label_column=True, compact=True))
    if budget is not None and budget.warnings:
        out.append(w.heading("Warnings from the budget:", 1))
        out += w.bullet_items(list(budget.warnings))
    out.append(w.p(SUMMARY_CAUTION, w.small))
    return out
