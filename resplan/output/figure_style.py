"""The house style shared by every figure: palette, page width, margins, titles, legends.

One place for what :mod:`resplan.output.figures`, :mod:`resplan.output.alias_figure`
and :mod:`resplan.output.spread_figures` draw alike, so the three look the same.
matplotlib is imported only inside the helpers that draw.

Legend labels are never cut: a long label is wrapped onto several lines at word
boundaries (:func:`wrap_label`), so its full text is in the figure.
"""

from __future__ import annotations

import textwrap
from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:  # pragma: no cover
    from matplotlib.figure import Figure
    from matplotlib.legend import Legend

__all__ = [
    "OKABE_ITO",
    "LINE_COLOURS",
    "DASHES",
    "GREY",
    "LIGHT",
    "KIND_COLOURS",
    "WIDTH_IN",
    "STYLE",
    "LEGEND_WRAP_CHARS",
    "new_axes",
    "bar_axes",
    "title",
    "text_width_in",
    "set_caption",
    "caption",
    "wrap_label",
    "legend_height_in",
    "legend",
]

#: The Okabe–Ito colour-blind-safe palette (Okabe & Ito 2008), by its published names.
OKABE_ITO: dict[str, str] = {
    "black": "#000000",
    "orange": "#E69F00",
    "sky blue": "#56B4E9",
    "bluish green": "#009E73",
    "yellow": "#F0E442",
    "blue": "#0072B2",
    "vermillion": "#D55E00",
    "reddish purple": "#CC79A7",
}
#: Line colours in order of use; yellow last, it is faint on white.
LINE_COLOURS: tuple[str, ...] = tuple(
    OKABE_ITO[n]
    for n in (
        "blue",
        "vermillion",
        "bluish green",
        "reddish purple",
        "orange",
        "sky blue",
        "yellow",
    )
)
#: Line styles in order of use, so lines differ without colour too.
DASHES = ("-", "--", "-.", ":", (0, (5, 1, 1, 1, 1, 1)), (0, (1, 1)), (0, (8, 2)))
GREY = "#6b6b6b"
LIGHT = "#d9d9d9"

#: Colour of each kind of contribution in bar charts.
KIND_COLOURS: dict[str, str] = {
    "thermal": OKABE_ITO["orange"],
    "sensor": OKABE_ITO["yellow"],
    "voltage": OKABE_ITO["blue"],
    "current": OKABE_ITO["sky blue"],
    "reference": OKABE_ITO["reddish purple"],
    "adc": OKABE_ITO["bluish green"],
    "quantisation": OKABE_ITO["vermillion"],
    "jitter": "#000000",
}

#: Width of a figure, inches: the text width of an A4 or Letter page with 20 mm margins.
WIDTH_IN = 6.5

#: matplotlib settings every figure is drawn and saved under.
STYLE: dict[str, Any] = {
    "font.family": "DejaVu Sans",
    "font.size": 7.5,
    "axes.titlesize": 8.5,
    "axes.titleweight": "bold",
    "axes.titlelocation": "left",
    "axes.labelsize": 7.5,
    "axes.edgecolor": GREY,
    "axes.linewidth": 0.6,
    "axes.spines.top": False,
    "axes.spines.right": False,
    "axes.grid": True,
    "axes.axisbelow": True,
    "grid.color": LIGHT,
    "grid.linewidth": 0.5,
    "grid.linestyle": "-",
    "xtick.color": GREY,
    "ytick.color": GREY,
    "xtick.labelcolor": "black",
    "ytick.labelcolor": "black",
    "xtick.labelsize": 6.5,
    "ytick.labelsize": 6.5,
    "xtick.major.width": 0.6,
    "ytick.major.width": 0.6,
    "legend.fontsize": 6.3,
    "legend.frameon": False,
    "lines.linewidth": 1.2,
    "svg.hashsalt": "resplan",
    "svg.fonttype": "path",
}

#: Characters on one line of a legend label before it wraps. At the 6.3 pt legend
#: font a line of this many characters fits one of two legend columns across the
#: figure's width (common practice, no source: measured on the figures drawn here).
LEGEND_WRAP_CHARS = 48

#: Height of a one-line legend entry and of each further line of a wrapped label,
#: inches, at the 6.3 pt legend font (line spacing 1.2, label spacing 0.5 em).
_ENTRY_IN = 0.14
_LINE_IN = 0.105


def new_axes(
    height_in: float,
    *,
    left: float = 0.72,
    right: float = 0.2,
    bottom: float = 0.48,
    top: float = 0.32,
):
    """A figure with one axes placed by fixed margins (inches).

    Fixed margins instead of an automatic layout engine: the figures have a known
    shape, and a layout engine measures every tick label on every save, which
    costs more than drawing the figure.
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(WIDTH_IN, height_in))
    FigureCanvasAgg(fig)
    ax = fig.add_axes(
        (
            left / WIDTH_IN,
            bottom / height_in,
            (WIDTH_IN - left - right) / WIDTH_IN,
            (height_in - bottom - top) / height_in,
        )
    )
    return fig, ax


def title(fig: Figure, text: str) -> None:
    """The title at the top left of the figure, clear of axes and legends."""
    height = fig.get_size_inches()[1]
    fig.text(
        0.08 / WIDTH_IN,
        1 - 0.08 / height,
        text,
        ha="left",
        va="top",
        fontsize=STYLE["axes.titlesize"],
        fontweight="bold",
    )


def text_width_in(fig: Figure, labels: Sequence[str], size_pt: float) -> float:
    """Width of the widest label, inches."""
    from matplotlib.font_manager import FontProperties

    renderer = fig.canvas.get_renderer()
    prop = FontProperties(family=STYLE["font.family"], size=size_pt)
    widths = [renderer.get_text_width_height_descent(t, prop, ismath=False)[0] for t in labels]
    return max(widths, default=0.0) / fig.dpi


def bar_axes(labels: Sequence[str], right_in: float):
    """A figure for one horizontal bar per label, its left margin fitted to the labels.

    Returns the figure, its axes and the bar positions, first label on top.
    """
    height = 1.0 + 0.22 * len(labels)
    fig, ax = new_axes(height, bottom=0.45)
    left = text_width_in(fig, labels, STYLE["ytick.labelsize"]) + 0.15
    ax.set_position(
        (
            left / WIDTH_IN,
            0.45 / height,
            (WIDTH_IN - left - right_in) / WIDTH_IN,
            (height - 0.92) / height,
        )
    )
    return fig, ax, list(range(len(labels)))[::-1]


def set_caption(fig: Figure, text: str) -> None:
    """Attach the caption the report prints under the figure."""
    fig.resplan_caption = text  # type: ignore[attr-defined]


def caption(fig: Figure) -> str:
    """The caption a figure was made with ("" if none)."""
    return getattr(fig, "resplan_caption", "")


def wrap_label(text: str, width: int = LEGEND_WRAP_CHARS) -> str:
    """A legend label wrapped at word boundaries onto lines of at most ``width`` characters.

    Nothing is cut: a single word longer than ``width`` stays whole on its own
    line, and joining the lines with one space gives the label back.

    >>> wrap_label("a short label")
    'a short label'
    >>> print(wrap_label("voltage noise of the first stage amplifier (stages[0])", 30))
    voltage noise of the first
    stage amplifier (stages[0])
    """
    lines = textwrap.wrap(text, width, break_long_words=False, break_on_hyphens=False)
    return "\n".join(lines) if lines else text


def legend_height_in(
    labels: Sequence[str], ncols: int = 1, width: int = LEGEND_WRAP_CHARS
) -> float:
    """Height of a legend of these labels once wrapped, inches (its tallest column).

    Entries fill the columns in order, the first columns taking one more when they
    do not divide evenly, as matplotlib lays them out.
    """
    heights = [_ENTRY_IN + _LINE_IN * wrap_label(t, width).count("\n") for t in labels]
    n = len(heights)
    if n == 0:
        return 0.0
    rows, extra = divmod(n, ncols)
    tallest, start = 0.0, 0
    for col in range(ncols):
        count = rows + (1 if col < extra else 0)
        tallest = max(tallest, sum(heights[start : start + count]))
        start += count
    return tallest


def legend(
    target, handles=None, labels=None, *, width: int = LEGEND_WRAP_CHARS, **kwargs
) -> Legend:
    """A legend on an axes or figure with every label wrapped, never cut.

    ``handles`` and ``labels`` default to the axes' labelled artists; the artists
    keep their full labels, only the legend's text is wrapped.
    """
    if handles is None:
        handles, labels = target.get_legend_handles_labels()
    elif labels is None:
        labels = [h.get_label() for h in handles]
    return target.legend(handles, [wrap_label(t, width) for t in labels], **kwargs)
