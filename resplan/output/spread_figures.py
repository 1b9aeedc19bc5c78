"""Figures of a Monte Carlo run: the histogram of noise-free bits and the drivers chart.

Drawn in the house style of :mod:`resplan.output.figure_style` (same fonts, margins,
Okabe–Ito colours, fixed-margin layout, captions); matplotlib is imported only
when a figure is drawn.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from ..units.formatting import format_bits, format_percent
from .figure_style import GREY, OKABE_ITO, STYLE, bar_axes, new_axes, set_caption, title

if TYPE_CHECKING:  # pragma: no cover
    from matplotlib.figure import Figure

    from ..spread.trials import TrialResult

__all__ = ["SPREAD_FIGURE_TITLES", "spread_figures"]

#: Titles of the spread figures, by name.
SPREAD_FIGURE_TITLES: dict[str, str] = {
    "yield_histogram": "Noise-free resolution across sampled boards",
    "yield_drivers": "What drives the spread of the total noise power",
}


def _histogram(result: TrialResult) -> Figure:
    edges, counts = result.histogram
    fig, ax = new_axes(2.3)
    widths = [b - a for a, b in zip(edges[:-1], edges[1:], strict=True)]
    total = max(result.trials, 1)
    ax.bar(
        edges[:-1],
        [100.0 * c / total for c in counts],
        width=widths,
        align="edge",
        color=OKABE_ITO["blue"],
        edgecolor="white",
        linewidth=0.3,
    )
    if result.required_bits is not None:
        ax.axvline(result.required_bits, color=OKABE_ITO["vermillion"], linewidth=1.2)
        ax.annotate(
            f"required {format_bits(result.required_bits)}",
            (result.required_bits, 1.0),
            xycoords=("data", "axes fraction"),
            xytext=(3, -2),
            textcoords="offset points",
            va="top",
            fontsize=6.3,
            color=OKABE_ITO["vermillion"],
        )
    ax.axvline(result.typical_bits, color=GREY, linewidth=0.8, linestyle="--")
    ax.set_xlabel("noise-free resolution over the sensor span (bits)")
    ax.set_ylabel("boards (%)")
    title(fig, SPREAD_FIGURE_TITLES["yield_histogram"])
    lo, hi = result.interval
    set_caption(
        fig,
        f"{result.trials:,} sampled boards (seed {result.seed}); solid line: the requirement, "
        f"dashed: the typical design. Yield {format_percent(result.yield_fraction, 4)}, 95 % "
        f"interval {format_percent(lo, 4)} … {format_percent(hi, 4)} (Clopper–Pearson).",
    )
    return fig


def _drivers(result: TrialResult) -> Figure | None:
    drivers = [d for d in result.drivers][:8]
    if not drivers:
        return None
    labels = [d.field for d in drivers]
    shares = [100.0 * d.share for d in drivers]
    fig, ax, y = bar_axes(labels, right_in=0.1)
    ax.barh(y, shares, color=OKABE_ITO["bluish green"], edgecolor=GREY, linewidth=0.4, height=0.6)
    ax.set_yticks(y, labels)
    ax.set_xlim(0, 118)
    ax.grid(axis="y", visible=False)
    for yi, value in zip(y, shares, strict=True):
        ax.annotate(
            format_percent(value / 100.0),
            (value, yi),
            xytext=(3, 0),
            textcoords="offset points",
            va="center",
            fontsize=6.3,
        )
    ax.set_xlabel("first-order share of the variance of the total noise power (%)")
    title(fig, SPREAD_FIGURE_TITLES["yield_drivers"])
    set_caption(
        fig,
        "Each spread's share of the variance of the total noise power, Var(E[P | figure]) / "
        "Var(P), largest first; the shares of independent figures acting on separate "
        "contributions add to 100 %.",
    )
    return fig


def spread_figures(result: TrialResult) -> dict[str, Figure]:
    """The histogram and, when any figure spreads, the drivers chart of a run."""
    import matplotlib

    figs: dict[str, Figure] = {}
    with matplotlib.rc_context(STYLE):
        figs["yield_histogram"] = _histogram(result)
        drivers = _drivers(result)
        if drivers is not None:
            figs["yield_drivers"] = drivers
    return figs
