"""Section 5: the figures, each with its number, title and caption."""

from __future__ import annotations

import io

from ..figures import FIGURE_TITLES, caption
from .style import SECTION_TITLES
from .writer import Writer


def figures_section(w: Writer, figs: dict, pngs: dict[str, bytes], dpi: int) -> list:
    from reportlab.platypus import Image, KeepTogether

    out = [w.heading(SECTION_TITLES[4], 0)]
    if not figs:
        out.append(w.p("No figures: the design has open parts and no plan to draw."))
        return out
    out.append(
        w.p(
            f"Figures are embedded as PNG images at {dpi} dpi; the curves are for reading, and "
            "every number printed comes from the forward budget. Colours are the Okabe–Ito "
            "colour-blind-safe set.",
            w.small,
        )
    )
    for number, (name, fig) in enumerate(figs.items(), start=1):
        width_in, height_in = fig.get_size_inches()
        width = min(w.width, width_in * 72.0)
        height = width * height_in / width_in
        image = Image(io.BytesIO(pngs[name]), width=width, height=height)
        title = FIGURE_TITLES.get(name, name)
        text = f"<b>Figure {number}. {w.text(title)}.</b> {w.text(caption(fig))}"
        out.append(KeepTogether([image, w.p(text, w.caption, markup=True)]))
    return out
