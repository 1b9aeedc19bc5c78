"""Section 4, continued: spread across boards and temperature, and what to improve first.

States which figures the budget used (typical), how each spread is read, the
worst-case corner's resolution and verdict, a Monte Carlo run (yield with its
Clopper–Pearson interval, percentiles, drivers, a histogram of noise-free bits
with the requirement line, the drivers chart) and the ranked table of the bits a
10 % better figure gains.
"""

from __future__ import annotations

from ...chain.budget import Budget
from ...chain.design import Design
from ...errors import ResplanError
from ...units.formatting import format_bits, format_percent, format_si
from ..spread_figures import SPREAD_FIGURE_TITLES, spread_figures
from .writer import Writer

__all__ = ["spread_section", "REPORT_TRIALS", "REPORT_SEED"]

#: Trials and seed of the run printed in a report (the same every time).
REPORT_TRIALS = 20_000
REPORT_SEED = 1


def _svg(fig) -> bytes:
    from ..figures import figure_svg

    return figure_svg(fig, text_as_paths=False)


def _figure(w: Writer, name: str, fig) -> object:
    from reportlab.platypus import KeepTogether

    from ..figures import caption
    from .figures import vector_drawing

    width_in, _ = fig.get_size_inches()
    drawing = vector_drawing(_svg(fig), min(w.width, width_in * 72.0))
    text = f"<b>{w.text(SPREAD_FIGURE_TITLES[name])}.</b> {w.text(caption(fig))}"
    return KeepTogether([drawing, w.p(text, w.caption, markup=True)])


def spread_section(w: Writer, design: Design, budget: Budget | None) -> list:
    """The spread part of the budget section (nothing for a design with open parts)."""
    if budget is None or design.variant is None:
        return []
    from ...spread.corner import worst_case
    from ...spread.improve import improvements
    from ...spread.model import build_model
    from ...spread.trials import run_trials

    out = [w.heading("Spread across boards and temperature", 1)]
    spreads = [s for s in design.spreads if s.varies]
    out.append(
        w.p(
            "The budget above uses typical figures: every plain value of the design file is "
            "read as typical, and each spread at its typical value."
            + (
                f" {len(spreads)} figures spread; each is read as below. Spreads are taken as "
                "independent from part to part."
                if spreads
                else " No figure of this design states a spread (typ/max, tolerance, range or "
                "sigma), so no worst case or yield is computed."
            ),
            w.small,
        )
    )
    try:
        if spreads:
            rows = [["Field", "As written", "Read as"]]
            rows += [[s.field, s.text, s.describe()] for s in spreads]
            out.append(w.table(rows, [30, 45, 60], font_size=7))
            corner = worst_case(design)
            cb = corner.budget
            verdict = "meets" if corner.verdict.meets else "does NOT meet"
            out.append(
                w.p(
                    f"Worst case (every spread at its adverse end, the worse temperature end "
                    f"included, in one forward budget): noise {format_si(cb.total_rms_v, 'V')} "
                    f"rms at the sensor, {format_bits(cb.noise_free_bits)} noise-free over the "
                    f"span; the corner {verdict} the requirement.",
                )
            )
            result = run_trials(build_model(design), REPORT_TRIALS, REPORT_SEED)
            lo, hi = result.interval
            req = result.required_yield
            stated = (
                "no yield requirement is stated"
                if req is None
                else f"the requirement is {format_percent(req, 4)}: "
                + ("met" if result.meets else "NOT met")
                + " on the interval's lower bound"
            )
            out.append(
                w.p(
                    f"Monte Carlo: {result.trials:,} boards (seed {result.seed}); yield "
                    f"{format_percent(result.yield_fraction, 4)} of boards meet every verdict "
                    f"item, 95 % interval {format_percent(lo, 4)} … {format_percent(hi, 4)} "
                    f"(Clopper and Pearson, Biometrika 26 (1934) 404); {stated}. The model "
                    f"behind the trials differs from {result.checks} exact budgets by at most "
                    f"{format_percent(result.deviation)} in total noise.",
                )
            )
            rows = [["Percentile", "Noise at sensor (rms)", "Noise-free bits"]]
            for q in result.noise_percentiles_v:
                rows.append(
                    [
                        f"{q} %",
                        format_si(result.noise_percentiles_v[q], "V"),
                        format_bits(result.bits_percentiles[q]),
                    ]
                )
            out.append(w.table(rows, [20, 30, 30], align_right=(1, 2), font_size=7))
            figs = spread_figures(result)
            for name, fig in figs.items():
                out.append(_figure(w, name, fig))
    except ResplanError as err:
        out.append(w.p(f"The spread could not be computed: {err}", w.small))
    items = improvements(design)
    out.append(w.heading("What to improve first", 1))
    out.append(
        w.p(
            "Noise-free bits over the span gained by making each figure 10 % better (lower "
            "noise, resistance, corner, cut-off, data rate or temperature; higher gain), "
            "typical values, ranked.",
            w.small,
        )
    )
    rows = [["Figure", "Bits gained"]]
    for i in items:
        rows.append(
            [i.label, f"{i.bits_gained:+.3f}" if i.bits_gained is not None else "not evaluated"]
        )
    out.append(w.table(rows, [80, 20], align_right=(1,), font_size=7))
    return out
