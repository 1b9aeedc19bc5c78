"""The alias figure: the chain's analog and digital responses with each stated interferer.

Top: the analog path's and the digital filter's responses (dB) against
frequency, the sample rate and the half sample rate marked, and each tone of
each stated interferer at its frequency with an arrow to where it lands after
sampling (:func:`resplan.chain.alias.alias_frequency`). Bottom: each
interferer's residue at the sensor against its allowance, from zero. The
numbers come from :func:`resplan.chain.verdict.interferer_checks` — the same
the verdict reads — and the curves from
:func:`resplan.chain.interference.path_power_gain`, the responses the budget
integrates.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING, Any

from ..units.formatting import format_si, format_tick
from .figure_style import (
    GREY,
    OKABE_ITO,
    STYLE,
    WIDTH_IN,
    legend,
    set_caption,
    text_width_in,
    title,
    wrap_label,
)

if TYPE_CHECKING:  # pragma: no cover
    from matplotlib.figure import Figure

    from ..chain.budget import Budget
    from ..chain.design import Design

#: Title of the figure, by the name the report files it under.
ALIAS_TITLE = "Interferers: where each lands after sampling, and what is left of it"
#: An interferer's name in the bar labels wraps onto lines of at most this many
#: characters; nothing is cut, the panel grows with the lines.
NAME_WRAP_CHARS = 24


def hz_tick(x: float, _pos=None) -> str:
    """A frequency tick label with an engineering prefix ("10 kHz"), as every output writes."""
    return format_tick(x, "Hz")


def alias_figure(design: Design, budget: Budget) -> Figure | None:
    """The alias figure of a complete design, or None when it states no interferer."""
    from ..chain.verdict import interferer_checks

    residues = [r for r in interferer_checks(design, budget) if r.components or r.residue_v]
    if not residues:
        return None
    import matplotlib
    import numpy as np
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    from matplotlib.ticker import FuncFormatter, LogLocator, NullFormatter

    from ..chain.interference import path_power_gain

    chain = design.chain()
    fs = chain.adc.sample_rate_hz
    tones = [(r, c) for r in residues for c in r.components]
    top = max([3 * fs, *(2 * c.frequency_hz for _, c in tones)])
    low = max(design.band.f_low_hz, 1e-3 * min([fs / 2, *(c.alias_hz or fs for _, c in tones)]))
    f = np.geomspace(low, top, 1500)
    analog, digital = path_power_gain(chain, f)

    names = [wrap_label(r.name, NAME_WRAP_CHARS) for r in residues]
    lines = sum(n.count("\n") + 1 for n in names)
    bars_in = max(0.9, 0.13 * lines + 0.12 * len(names))  # the residue panel, inches
    with matplotlib.rc_context(STYLE):
        height = bars_in + 3.3
        fig = Figure(figsize=(WIDTH_IN, height))
        FigureCanvasAgg(fig)
        # Both panels share a left margin wide enough for the longest line of a name.
        every_line = [line for n in names for line in n.split("\n")]
        left = max(0.72, text_width_in(fig, every_line, STYLE["ytick.labelsize"]) + 0.15)
        width = (WIDTH_IN - left - 0.23) / WIDTH_IN
        ax = fig.add_axes((left / WIDTH_IN, (bars_in + 0.85) / height, width, 2.1 / height))
        floor = -160.0
        ax.semilogx(
            f,
            np.maximum(10 * np.log10(np.maximum(analog, 1e-300)), floor),
            color=OKABE_ITO["blue"],
            label="analog path",
        )
        ax.semilogx(
            f,
            np.maximum(10 * np.log10(np.maximum(digital, 1e-300)), floor),
            color=OKABE_ITO["reddish purple"],
            linestyle=":",
            label="digital filter",
        )
        ax.axvline(fs / 2, color=GREY, linewidth=0.7, linestyle="--")
        ax.axvline(fs, color=GREY, linewidth=0.7, linestyle="-.")
        ax.text(fs / 2, 3, " f_s/2", fontsize=6, color=GREY, ha="right", va="bottom")
        ax.text(fs, 3, " f_s", fontsize=6, color=GREY, ha="left", va="bottom")
        for k, (r, c) in enumerate(tones[:12]):
            colour = (
                OKABE_ITO["vermillion"] if not r.within_allowance else OKABE_ITO["bluish green"]
            )
            att = -(c.analog_db)
            ax.plot([c.frequency_hz], [max(att, floor)], marker="v", color=colour, markersize=5)
            if c.alias_hz and c.alias_hz > low:
                ax.annotate(
                    "",
                    xy=(c.alias_hz, -6 - 4 * k),
                    xytext=(c.frequency_hz, -6 - 4 * k),
                    arrowprops={"arrowstyle": "->", "color": colour, "lw": 0.8},
                )
        ax.set_ylim(floor, 10)
        ax.set_xlim(low, top)
        ax.set_ylabel("response (dB)")
        ax.set_xlabel("frequency")
        ax.xaxis.set_major_locator(LogLocator(base=10, numticks=12))
        ax.xaxis.set_major_formatter(FuncFormatter(hz_tick))
        legend(ax, loc="lower left")

        bx = fig.add_axes((left / WIDTH_IN, 0.35 / height, width, bars_in / height))
        y = np.arange(len(residues))
        resid = [max(r.residue_v, 1e-15) for r in residues]
        allow = [r.allowed_v for r in residues]
        bx.barh(
            y + 0.18, resid, height=0.34, color=OKABE_ITO["orange"], label="residue at the sensor"
        )
        bx.barh(y - 0.18, allow, height=0.34, color="#bdbdbd", label="allowed")
        bx.set_xlim(0, 1.15 * max([*resid, *allow]))
        bx.set_yticks(y, names)
        bx.xaxis.set_major_formatter(FuncFormatter(lambda v, _p=None: format_tick(v, "V")))
        bx.xaxis.set_minor_formatter(NullFormatter())
        legend(bx, loc="lower right", fontsize=6)
        bx.set_xlabel("V rms at the sensor")
        title(fig, ALIAS_TITLE)
    worst = max(residues, key=lambda r: r.residue_v / r.allowed_v if r.allowed_v else math.inf)
    text = "; ".join(
        f"{r.name}: lands {r.lands}, leaves {format_si(r.residue_v, 'V')} rms against "
        f"{format_si(r.allowed_v, 'V')} rms allowed "
        f"({'within' if r.within_allowance else 'EXCEEDS'})"
        for r in residues
    )
    set_caption(
        fig,
        "Analog and digital responses of the chain (top) with each stated interferer (▼ at its "
        "frequency, the arrow to where it lands after sampling at "
        f"{format_si(fs, 'Hz')}); residue against allowance (bottom). {text}. Largest share of "
        f"its allowance: {worst.name}. Interference is not noise: shielding, layout and "
        "filtering fix it.",
    )
    return fig


def alias_figures(design: Design, budget: Any) -> dict:
    """``{"alias": figure}`` for a complete design stating interferers, else ``{}``."""
    if budget is None or not design.is_complete:
        return {}
    fig = alias_figure(design, budget)
    return {} if fig is None else {"alias": fig}
