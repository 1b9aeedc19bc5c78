"""Section 5: the figures, each with its number, title and caption, as vector drawings.

Each matplotlib figure is written as SVG (text kept as DejaVu Sans text, no date
stamp, a fixed hash salt: :func:`resplan.output.figures.figure_svg`) and read into a
reportlab :class:`~reportlab.graphics.shapes.Drawing` with svglib, so the curves
stay sharp at any zoom and the PDF holds no bitmaps. svglib is the SVG reader
reportlab's own documentation points to; it is pure Python and keeps the
drawing as reportlab shapes.
"""

from __future__ import annotations

import io
from typing import Any

from ..alias_figure import ALIAS_TITLE
from ..figures import FIGURE_TITLES, caption
from .fonts import register_svg_fonts
from .style import SECTION_TITLES
from .writer import Writer


def vector_drawing(svg: bytes, width: float) -> Any:
    """The SVG as a reportlab Drawing scaled to ``width`` points (aspect kept)."""
    from svglib.svglib import svg2rlg

    register_svg_fonts()
    drawing = svg2rlg(io.BytesIO(svg))
    if drawing is None:  # pragma: no cover - svglib returns None on unreadable input
        raise ValueError("a figure's SVG could not be read")
    factor = width / drawing.width
    drawing.width, drawing.height = width, drawing.height * factor
    drawing.scale(factor, factor)
    drawing.hAlign = "LEFT"
    return drawing


def figures_section(w: Writer, figs: dict, svgs: dict[str, bytes]) -> list:
    from reportlab.platypus import KeepTogether

    out = [w.heading(SECTION_TITLES[4], 0)]
    if not figs:
        out.append(w.p("No figures: the design has open parts and no plan to draw."))
        return out
    out.append(
        w.p(
            "Figures are vector drawings; the curves are for reading, and every number printed "
            "comes from the forward budget. Colours are the Okabe–Ito colour-blind-safe set.",
            w.small,
        )
    )
    for number, (name, fig) in enumerate(figs.items(), start=1):
        width_in, _ = fig.get_size_inches()
        drawing = vector_drawing(svgs[name], min(w.width, width_in * 72.0))
        title = ALIAS_TITLE if name == "alias" else FIGURE_TITLES.get(name, name)
        text = f"<b>Figure {number}. {w.text(title)}.</b> {w.text(caption(fig))}"
        out.append(KeepTogether([drawing, w.p(text, w.caption, markup=True)]))
    return out
