"""Figures of a budget and a plan, drawn with matplotlib's Agg renderer.

matplotlib is imported only when a figure is made, so the command line starts
quickly. Figures are plain :class:`matplotlib.figure.Figure` objects with an
Agg canvas (no pyplot, no global state), so they can be made from threads and
tests without a display.

The curves come from :mod:`resplan.output.spectra` and are for reading, not for
numbers: every total, share and resolution figure printed beside them comes
from the forward budget.

Colours are the Okabe–Ito set (M. Okabe and K. Ito, "Color Universal Design —
how to make figures and presentations that are friendly to colorblind people",
J*FLY, 2008), chosen to stay apart for the common forms of colour-vision
deficiency; lines also differ in dash pattern so a grey print still reads.
"""

from __future__ import annotations

import io
import math
import os
from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import TYPE_CHECKING, Any

from ..chain.budget import Budget
from ..errors import DesignError
from ..units.formatting import format_bits, format_number, format_percent, format_si, format_tick
from .atomic import write_bytes_atomic
from .figure_style import (
    DASHES,
    GREY,
    KIND_COLOURS,
    LIGHT,
    LINE_COLOURS,
    OKABE_ITO,
    STYLE,
    WIDTH_IN,
    bar_axes,
    caption,
    legend,
    legend_height_in,
    new_axes,
    set_caption,
    title,
)

if TYPE_CHECKING:  # pragma: no cover
    from matplotlib.figure import Figure

    from ..chain.design import Design

__all__ = [
    "OKABE_ITO",
    "KIND_COLOURS",
    "FIGURE_TITLES",
    "DEFAULT_DPI",
    "make_figures",
    "save_figures",
    "figure_png",
    "figure_svg",
    "caption",
]

#: Figures :func:`make_figures` can make, by name, with their titles.
FIGURE_TITLES: dict[str, str] = {
    "noise_density": "Noise density of each contributor, referred to the sensor",
    "cumulative_noise": "Cumulative rms noise against frequency, referred to the sensor",
    "contributions": "Contributions to the noise power",
    "resolution_vs_rate": "Noise-free resolution against output data rate",
    "allocation": "Allocation of the allowed noise",
}

#: Resolution of saved PNG files and of the PNG figures embedded in a report, dots per inch.
DEFAULT_DPI = 200
#: Contributors drawn individually; the rest are drawn as one line or bar.
_MAX_LINES = 7
_MAX_BARS = 12
# Engineering prefixes for axis scales.
_PREFIXES = ((1e-15, "f"), (1e-12, "p"), (1e-9, "n"), (1e-6, "µ"), (1e-3, "m"), (1.0, ""))


def _scale_for(value: float) -> tuple[float, str]:
    """A power of 1000 and its prefix so that ``value`` reads between 1 and 1000."""
    if not (math.isfinite(value) and value > 0):
        return 1.0, ""
    chosen = _PREFIXES[0]
    for factor, prefix in _PREFIXES:
        if value >= factor:
            chosen = (factor, prefix)
    return chosen


def _rate_label(x: float, _pos=None) -> str:
    """A rate or frequency tick label with an engineering prefix ("25 kHz", "1 MHz")."""
    return format_tick(x, "Hz")


#: Swept points closer than this rate ratio to one already labelled get no label or tick.
_LABEL_RATIO = 1.35
#: At most about this many labelled rates across the axis.
_MAX_LABELS = 10


def _spread(rates: Sequence[float], keep: float) -> list[float]:
    """The rates to label: ``keep`` first, then each far enough from those kept.

    Far enough is a ratio of 1.35, or more when that would put more than about ten
    labels on the axis.
    """
    span = max([*rates, keep]) / min([*rates, keep])
    step = math.log(max(_LABEL_RATIO, span ** (1 / (_MAX_LABELS - 1)) * (1 - 1e-9)))
    kept = [keep]
    for r in sorted(rates, key=lambda r: abs(math.log(r / keep))):
        if all(abs(math.log(r / k)) >= step for k in kept):
            kept.append(r)
    return sorted(kept)


def _swept_rate_axis(ax, ticks: Sequence[float]) -> None:
    """A tick with a plain label at each swept rate given, and no others."""
    from matplotlib.ticker import FixedLocator, FuncFormatter, NullLocator

    ax.xaxis.set_major_locator(FixedLocator(list(ticks)))
    ax.xaxis.set_major_formatter(FuncFormatter(_rate_label))
    ax.xaxis.set_minor_locator(NullLocator())


def _same_rate(a: float, b: float) -> bool:
    return math.isclose(a, b, rel_tol=1e-9)


def _label(c: Any) -> str:
    return f"{c.name} ({c.stage})"


def _density_figure(chain, budget: Budget, spectra) -> Figure:
    import numpy as np

    f = spectra.centres_hz
    shown = spectra.contributors[:_MAX_LINES]
    rest = spectra.contributors[_MAX_LINES:]
    names = [_label(c) + (" · quoted rms" if c.quoted else "") for c in shown]
    entries = [
        *names,
        *([f"{len(rest)} smaller sources together"] if rest else []),
        "total",
        "analog path, dB (right axis)",
        *(["digital filter, dB (right axis)"] if spectra.digital_power_gain is not None else []),
    ]
    legend_in = legend_height_in(entries, ncols=2) + 0.1
    height = 3.3 + legend_in
    fig, ax = new_axes(height, right=0.62, bottom=0.48 + legend_in, top=0.42)
    top = float(np.max(spectra.total_density_v_per_rthz))
    for i, (c, name) in enumerate(zip(shown, names, strict=True)):
        ax.loglog(
            f,
            np.where(c.density_v_per_rthz > 0, c.density_v_per_rthz, np.nan),
            color=LINE_COLOURS[i % len(LINE_COLOURS)],
            linestyle=DASHES[i % len(DASHES)],
            linewidth=1.0,
            label=name,
        )
    if rest:
        power = sum(c.bin_power_v2 for c in rest)
        ax.loglog(
            f,
            np.sqrt(power / spectra.widths_hz),
            color=GREY,
            linewidth=0.8,
            label=f"{len(rest)} smaller sources together",
        )
    ax.loglog(
        f,
        spectra.total_density_v_per_rthz,
        color="black",
        linewidth=2.6,
        alpha=0.3,
        zorder=1.5,
        label="total",
    )
    if top > 0:
        ax.set_ylim(top * 1e-4, top * 3)
    ax.set_xlim(spectra.edges_hz[0], spectra.edges_hz[-1])
    ax.set_xlabel("frequency")
    ax.xaxis.set_major_formatter(_rate_label)
    ax.set_ylabel(f"noise density at the sensor ({budget.sensor_unit}/√Hz)")
    if spectra.quoted_top_hz < 0.9 * spectra.f_top_hz:
        ax.axvline(spectra.quoted_top_hz, color=GREY, linewidth=0.6, linestyle=(0, (2, 2)))
        ax.annotate(
            "½ converter output rate",
            (spectra.quoted_top_hz, 1.0),
            xycoords=("data", "axes fraction"),
            xytext=(-2, -8),
            textcoords="offset points",
            ha="right",
            fontsize=6.3,
            color=GREY,
        )

    right = ax.twinx()
    right.grid(False)
    right.spines["right"].set_visible(True)
    with np.errstate(divide="ignore"):
        right.semilogx(
            f,
            10 * np.log10(spectra.analog_power_gain),
            color=GREY,
            linewidth=0.8,
            linestyle=(0, (6, 2)),
            label="analog path, dB (right axis)",
        )
        if spectra.digital_power_gain is not None:
            right.semilogx(
                f,
                10 * np.log10(spectra.digital_power_gain),
                color=GREY,
                linewidth=0.8,
                linestyle=(0, (1, 1.5)),
                label="digital filter, dB (right axis)",
            )
    right.set_ylim(-130, 10)
    right.xaxis.set_major_formatter(_rate_label)  # the twin re-set the shared axis
    right.set_ylabel("filter response (dB)")
    handles, labels = ax.get_legend_handles_labels()
    h2, l2 = right.get_legend_handles_labels()
    legend(
        fig,
        handles + h2,
        labels + l2,
        loc="lower left",
        bbox_to_anchor=(0.3 / WIDTH_IN, 0.04 / height),
        ncols=2,
        handlelength=3.0,
        columnspacing=1.5,
    )
    title(fig, FIGURE_TITLES["noise_density"])
    set_caption(
        fig,
        "Each contributor's density referred to the sensor through the analog responses "
        "after its entry point and the digital filter, as the power mean over logarithmic "
        "bins (the side lobes of the digital filter are narrower than a bin). Figures the "
        "budget holds as rms values (marked \u2018quoted rms\u2019) are drawn as white noise "
        "at the converter's output rate r, from f_L to r/2, shaped by the digital stages "
        "after the converter, carrying that rms. The "
        "axis is not folded: noise above half the sample rate that aliases into the band "
        "is counted in the budget, not drawn here.",
    )
    return fig


def _cumulative_figure(budget: Budget, cumulative, spectra) -> Figure:
    import numpy as np

    fig, ax = new_axes(3.1, top=0.42)
    scale, prefix = _scale_for(max(cumulative.total_rms_v, float(np.max(cumulative.rms_v))))
    f = np.concatenate([[spectra.edges_hz[0]], cumulative.frequencies_hz])
    y = np.concatenate([[0.0], cumulative.rms_v]) / scale
    ax.semilogx(f, y, color=OKABE_ITO["blue"], linewidth=1.4, label="cumulative rms")
    end_f = float(f[-1])
    if cumulative.remainder_rms_v > 0:
        ax.plot(
            [end_f, end_f],
            [y[-1], cumulative.total_rms_v / scale],
            color=OKABE_ITO["blue"],
            linewidth=1.4,
            linestyle=(0, (2, 1)),
            label="folded from above the plotted range: "
            + format_si(cumulative.remainder_rms_v, budget.sensor_unit)
            + " rms",
        )
    ax.plot(
        [end_f],
        [cumulative.total_rms_v / scale],
        marker="o",
        color="black",
        markersize=4,
        linestyle="none",
        label="budget total: " + format_si(cumulative.total_rms_v, budget.sensor_unit) + " rms",
    )
    allowed = budget.allowed_rms_v
    if allowed is not None and allowed > 0:
        ax.axhline(
            allowed / scale,
            color=OKABE_ITO["vermillion"],
            linewidth=1.0,
            linestyle="--",
            label="allowed noise: " + format_si(allowed, budget.sensor_unit) + " rms",
        )
    ax.set_xlim(spectra.edges_hz[0], end_f * 1.5)
    ax.set_ylim(bottom=0)
    ax.set_xlabel("frequency")
    ax.xaxis.set_major_formatter(_rate_label)
    ax.set_ylabel(f"rms noise at the sensor ({prefix}{budget.sensor_unit})")
    legend(ax, loc="lower right")
    title(fig, FIGURE_TITLES["cumulative_noise"])
    set_caption(fig, "RMS of the noise below each frequency. " + cumulative.caption)
    return fig


def _contributions_figure(budget: Budget) -> Figure:
    items = [c for c in budget.contributions if c.rms_v > 0]
    shown = items[:_MAX_BARS]
    rest = items[_MAX_BARS:]
    labels = [_label(c) for c in shown]
    shares = [100 * c.share for c in shown]
    colours = [KIND_COLOURS.get(c.kind, GREY) for c in shown]
    unit = budget.sensor_unit
    texts = [f"{format_percent(c.share)}  ·  {format_si(c.rms_v, unit)} rms" for c in shown]
    if rest:
        share = sum(c.share for c in rest)
        labels.append(f"{len(rest)} smaller sources")
        shares.append(100 * share)
        colours.append(LIGHT)
        texts.append(format_percent(share))
    fig, ax, y = bar_axes(labels, right_in=0.1)
    ax.barh(y, shares, color=colours, edgecolor=GREY, linewidth=0.4, height=0.65)
    ax.set_yticks(y, labels)
    ax.set_xlim(0, 118)
    ax.grid(axis="y", visible=False)
    for yi, value, text in zip(y, shares, texts, strict=True):
        inside = value > 60
        ax.annotate(
            text,
            (value, yi),
            xytext=(-4 if inside else 3, 0),
            textcoords="offset points",
            va="center",
            ha="right" if inside else "left",
            color="white" if inside else "black",
            fontsize=6.3,
        )
    ax.set_xlabel("share of the total noise power (%)")
    kinds = sorted({c.kind for c in shown}, key=list(KIND_COLOURS).index)
    from matplotlib.patches import Patch

    legend(
        ax,
        [Patch(facecolor=KIND_COLOURS[k], edgecolor=GREY, linewidth=0.4, label=k) for k in kinds],
        kinds,
        loc="lower right",
        bbox_to_anchor=(1.0, 1.0),
        ncols=len(kinds),
        handlelength=1.2,
        columnspacing=1.0,
        borderaxespad=0.2,
    )
    title(fig, FIGURE_TITLES["contributions"])
    set_caption(
        fig,
        "Share of the total noise power, largest first, with each contribution's rms "
        "referred to the sensor. Uncorrelated sources add in power.",
    )
    return fig


#: How a data-rate sweep took the converter's noise at each rate, for the caption.
_CARRY_TEXT = {
    "table": "the converter's noise is the row of its noise table at each rate",
    "white": (
        "the converter's noise is its quoted figure carried as white noise, "
        "√(ODR/ODR_quoted), as the design allows"
    ),
    "density": (
        "the converter's noise is its input density integrated over the filters at each rate"
    ),
}


def _resolution_figure(budget: Budget, sweep) -> Figure:
    import numpy as np

    from .spectra import SWEEP_DATA_RATE

    fig, ax = new_axes(3.3, top=0.42)
    colour = OKABE_ITO["blue"]
    rates = sweep.output_rates_hz
    bits = sweep.noise_free_bits
    passes = sweep.passes_band
    by_rate = sweep.swept == SWEEP_DATA_RATE
    k = format_number(sweep.k_pp)
    coverage = format_percent(sweep.coverage)
    # Solid where both ends pass the signal band, dotted where either does not.
    for i in range(len(rates) - 1):
        both = bool(passes[i] and passes[i + 1])
        ax.semilogx(
            rates[i : i + 2],
            bits[i : i + 2],
            color=colour,
            linewidth=1.2 if both else 0.9,
            linestyle="-" if both else (0, (1.5, 1.5)),
            zorder=2,
        )
    ax.plot(
        rates[passes],
        bits[passes],
        marker="o",
        markersize=4,
        color=colour,
        linestyle="none",
        zorder=3,
        label=f"noise-free bits over the sensor span ({coverage} coverage, k_pp = {k})",
    )
    if not np.all(passes):
        ax.plot(
            rates[~passes],
            bits[~passes],
            marker="o",
            markersize=4,
            markerfacecolor="white",
            markeredgecolor=colour,
            markeredgewidth=1.0,
            linestyle="none",
            zorder=3,
            label="output rate below 2 × the signal band top: the band is not passed",
        )
    required = sweep.required_noise_free_bits
    span = float(np.ptp(np.append(bits, required if required is not None else bits[:1])))
    labelled = _spread([float(r) for r in rates], budget.output_rate_hz) if len(rates) else []
    for p in sweep.points:
        own = p is sweep.current
        if not own and not any(_same_rate(p.output_rate_hz, r) for r in labelled):
            continue
        # A label just under the required line goes below its point, clear of the line.
        below = required is not None and 0 < required - p.noise_free_bits < 0.12 * span
        ax.annotate(
            f"{p.noise_free_bits:.2f}" if by_rate else f"N={p.averaging_count}",
            (p.output_rate_hz, p.noise_free_bits),
            xytext=(0, (-7 if not own else -9) if below else (6 if not own else 8)),
            textcoords="offset points",
            ha="center",
            va="top" if below else "bottom",
            fontsize=5.8,
            color=GREY,
        )
    ax.plot(
        [budget.output_rate_hz],
        [budget.noise_free_bits],
        marker="D",
        markersize=8,
        markerfacecolor="none",
        markeredgecolor="black",
        markeredgewidth=1.0,
        linestyle="none",
        zorder=4,
        label=(
            f"this design: {format_bits(budget.noise_free_bits)} at "
            f"{format_si(budget.output_rate_hz, 'Hz')}"
        ),
    )
    if sweep.required_noise_free_bits is not None:
        ax.axhline(
            sweep.required_noise_free_bits,
            color=OKABE_ITO["vermillion"],
            linestyle="--",
            linewidth=1.0,
            label="required: "
            + format_bits(sweep.required_noise_free_bits)
            + " (after the interference allowance)",
        )
    if len(rates):
        low, high = float(min(rates)) / 1.6, float(max(rates)) * 1.6
        ax.set_xlim(low, high)
        _swept_rate_axis(ax, labelled)
        top = sweep.band_top_hz
        if top is not None and low < 2 * top < high:
            ax.axvspan(low, 2 * top, color=LIGHT, alpha=0.45, linewidth=0, zorder=0.5)
            ax.annotate(
                "2 × signal band top",
                (2 * top, 0.0),
                xycoords=("data", "axes fraction"),
                xytext=(-3, 3),
                textcoords="offset points",
                ha="right",
                va="bottom",
                fontsize=6.3,
                color=GREY,
            )
    ax.margins(y=0.2)
    ax.set_xlabel("output data rate")
    ax.set_ylabel("noise-free resolution over the span (bits)")
    legend(ax, loc="best")
    title(fig, FIGURE_TITLES["resolution_vs_rate"])
    set_caption(fig, _resolution_caption(sweep))
    return fig


def _resolution_caption(sweep) -> str:
    from .spectra import SWEEP_DATA_RATE

    k = format_number(sweep.k_pp)
    if sweep.swept == SWEEP_DATA_RATE:
        text = (
            "Each point is a full forward budget of the chain at one of the converter's "
            "output data rates, not a scaled estimate: "
            + _CARRY_TEXT.get(sweep.noise_carry, "the converter's noise is taken at each rate")
            + f"; its sinc{sweep.decimation_order} decimation ratio is "
            f"{format_si(sweep.sample_rate_hz, 'Hz')}/ODR"
            + (
                "; the digital stages after it run at the new rate (an average keeps its "
                "length, a band limit its cut-off)."
                if sweep.post_stage_count
                else "."
            )
        )
    else:
        text = (
            "Each point is a full forward budget of the chain, not a scaled estimate, "
            "with N output samples averaged (a first-order sinc after the converter)"
            + (f": {sweep.note}" if sweep.note else "")
            + ". White noise falls as 1/√N; 1/f noise does not, so the curve flattens."
        )
    text += (
        f" Noise-free resolution over the sensor span at {format_percent(sweep.coverage)} "
        f"coverage (k_pp = {k}); the diamond marks this design."
    )
    if sweep.band_top_hz is not None and not all(p.passes_band for p in sweep.points):
        text += (
            " Hollow markers and dotted lines: output rates below twice the top of the "
            f"signal band ({format_si(2 * sweep.band_top_hz, 'Hz')}), which no longer pass "
            "the signal band."
        )
    if sweep.required_noise_free_bits is not None:
        text += " The required line is after the interference allowance."
    reasons: dict[str, list[str]] = {}
    for value, why in sweep.skipped:
        shown = format_si(value, "Hz") if sweep.swept == SWEEP_DATA_RATE else f"N={value}"
        reasons.setdefault(why, []).append(shown)
    for why, values in reasons.items():
        text += " Left out (" + why + "): " + ", ".join(values) + "."
    return text


def _allocation_figure(plan) -> Figure | None:
    fixed = tuple(getattr(plan, "fixed", ()) or ())
    allocations = tuple(getattr(plan, "allocations", ()) or ())
    rows = [(f"{_label(c)} — fixed", c.rms_v, GREY) for c in fixed if c.rms_v > 0]
    rows += [
        (f"{a.part} — allocated", a.rms_v, OKABE_ITO["blue"]) for a in allocations if a.rms_v > 0
    ]
    if not rows:
        return None
    rows = rows[: _MAX_BARS + 4]
    scale, prefix = _scale_for(max(r[1] for r in rows))
    labels = [r[0] for r in rows]
    fig, ax, y = bar_axes(labels, right_in=0.2)
    ax.barh(
        y, [r[1] / scale for r in rows], color=[r[2] for r in rows], height=0.65, edgecolor=GREY
    )
    ax.set_yticks(y, [r[0] for r in rows])
    ax.grid(axis="y", visible=False)
    allowed = getattr(plan, "allowed_noise_rms_v", None)
    if allowed:
        ax.axvline(
            allowed / scale,
            color=OKABE_ITO["vermillion"],
            linestyle="--",
            linewidth=1.0,
            label="allowed noise in total: " + format_si(allowed, "V") + " rms",
        )
        legend(ax, loc="lower right")
    ax.set_xlabel(f"rms noise at the sensor ({prefix}V)")
    title(fig, FIGURE_TITLES["allocation"])
    set_caption(
        fig,
        "Noise fixed by given parts and the rms allocated to each open part, referred to "
        "the sensor. They add in power, not linearly, to the allowed total.",
    )
    return fig


def make_figures(
    design: Design,
    budget: Budget | None,
    plan: Any = None,
    *,
    sweep_counts: tuple[int, ...] | None = None,
    sweep_rates: tuple[float, ...] | None = None,
) -> dict[str, Figure]:
    """Draw the figures of a design's budget (and plan).

    Parameters
    ----------
    design : Design
        The design; its chain is needed for the density curves when ``budget`` is given.
    budget : Budget or None
        Its forward budget (None when parts are open).
    plan : resplan.plan.allocation.Plan, optional
        The backward allocation; adds the ``allocation`` figure.
    sweep_counts : tuple of int, optional
        Averaging counts for the resolution figure when it varies the post-average
        (see :func:`resplan.output.spectra.resolution_sweep`).
    sweep_rates : tuple of float, optional
        Converter data rates, Hz, for the resolution figure when it varies the
        data rate (the default: each row of a noise table, or powers of two times
        the design's rate).

    Returns
    -------
    dict
        Figure name (keys of :data:`FIGURE_TITLES`) to matplotlib Figure; each has a
        caption (:func:`caption`). Figures of the budget are made only when it is given.
    """
    import matplotlib

    from .spectra import cumulative_noise, noise_spectra, resolution_sweep

    figs: dict[str, Figure] = {}
    with matplotlib.rc_context(STYLE):
        if budget is not None:
            chain = design.chain()
            spectra = noise_spectra(chain, budget)
            figs["noise_density"] = _density_figure(chain, budget, spectra)
            figs["cumulative_noise"] = _cumulative_figure(
                budget, cumulative_noise(spectra, budget), spectra
            )
            figs["contributions"] = _contributions_figure(budget)
            sweep = resolution_sweep(
                chain,
                design.band,
                budget.requirement,
                counts=sweep_counts,
                rates=sweep_rates,
                coverage=budget.coverage,
            )
            figs["resolution_vs_rate"] = _resolution_figure(budget, sweep)
        if plan is not None and getattr(plan, "allocations", ()):
            fig = _allocation_figure(plan)
            if fig is not None:
                figs["allocation"] = fig
    return figs


def figure_png(fig: Figure, dpi: int = DEFAULT_DPI) -> bytes:
    """The figure as PNG bytes at ``dpi`` dots per inch."""
    import matplotlib

    buffer = io.BytesIO()
    with matplotlib.rc_context(STYLE):
        fig.savefig(buffer, format="png", dpi=dpi, metadata={"Software": None})
    return buffer.getvalue()


def figure_svg(fig: Figure, *, text_as_paths: bool = True) -> bytes:
    """The figure as SVG, with no date stamp and a fixed hash salt (the same bytes each time).

    Text is drawn as paths by default, so the file looks the same without the font;
    ``text_as_paths=False`` keeps it as text in DejaVu Sans (smaller, selectable), for
    a reader that has the font, such as the PDF report.
    """
    import matplotlib

    buffer = io.BytesIO()
    style = {**STYLE, "svg.fonttype": "path" if text_as_paths else "none"}
    with matplotlib.rc_context(style):
        fig.savefig(buffer, format="svg", metadata={"Date": None})
    return buffer.getvalue()


def save_figures(
    figs: Mapping[str, Figure],
    directory: str | os.PathLike,
    *,
    dpi: int = DEFAULT_DPI,
    pngs: Mapping[str, bytes] | None = None,
) -> list[Path]:
    """Write each figure as ``NAME.png`` (at ``dpi``) and ``NAME.svg`` into a folder.

    The folder is created if needed. Each file is written to a temporary file
    beside it and renamed, so no file is ever left half-written.

    Parameters
    ----------
    figs : mapping of str to Figure
        As returned by :func:`make_figures`.
    directory : path
        Folder for the files.
    dpi : int
        Resolution of the PNG files, dots per inch (≥ 50; 200 by default).
    pngs : mapping of str to bytes, optional
        PNG files already rendered at ``dpi`` (by :func:`figure_png`), written as they
        are instead of drawing the figure again.

    Returns
    -------
    list of Path
        The files written.
    """
    if isinstance(dpi, bool) or not isinstance(dpi, int) or dpi < 50:
        raise DesignError("dpi", dpi, "a whole number of dots per inch ≥ 50")
    folder = Path(directory)
    if folder.exists() and not folder.is_dir():
        raise DesignError("figures", str(folder), "a folder (a file of that name exists)")
    folder.mkdir(parents=True, exist_ok=True)
    written: list[Path] = []
    for name, fig in figs.items():
        png = folder / f"{name}.png"
        data = pngs.get(name) if pngs is not None else None
        write_bytes_atomic(png, data if data is not None else figure_png(fig, dpi))
        svg = folder / f"{name}.svg"
        write_bytes_atomic(svg, figure_svg(fig))
        written += [png, svg]
    return written
