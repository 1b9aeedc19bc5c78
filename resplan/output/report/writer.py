"""Paragraph and table builders, and the short phrases numbers are written in."""

from __future__ import annotations

import datetime as _dt
import math
import os
from collections.abc import Sequence
from typing import Any
from xml.sax.saxutils import escape

from ...units.formatting import ascii_units, format_bits, format_number, format_percent, format_si
from .fonts import fonts
from .style import GREY, INK, RULE, SHADE


class Writer:
    """Paragraph and table builders bound to one set of fonts and one page width."""

    def __init__(self, width: float):
        from reportlab.lib.styles import ParagraphStyle

        self.width = width
        self._headings = 0
        f = fonts()
        self.unicode = bool(f["unicode"])
        self.f = f
        base = ParagraphStyle(
            "body", fontName=f["regular"], fontSize=9, leading=12, textColor=INK, spaceAfter=4
        )
        self.body = base
        self.small = ParagraphStyle("small", base, fontSize=7.5, leading=9.5, spaceAfter=0)
        self.cell = ParagraphStyle("cell", base, fontSize=7.5, leading=9.2, spaceAfter=0)
        self.cell_grey = ParagraphStyle("cellgrey", self.cell, textColor=GREY, fontSize=6.8)
        self.caption = ParagraphStyle(
            "caption", base, fontSize=7.8, leading=10, textColor=GREY, spaceAfter=10
        )
        self.h1 = ParagraphStyle(
            "h1",
            base,
            fontName=f["bold"],
            fontSize=13,
            leading=16,
            spaceBefore=6,
            spaceAfter=6,
            keepWithNext=1,
        )
        self.h2 = ParagraphStyle(
            "h2",
            base,
            fontName=f["bold"],
            fontSize=10,
            leading=13,
            spaceBefore=8,
            spaceAfter=3,
            keepWithNext=1,
        )
        self.title = ParagraphStyle(
            "title", base, fontName=f["bold"], fontSize=17, leading=20, spaceAfter=2
        )
        self.subtitle = ParagraphStyle(
            "subtitle", base, fontSize=10.5, leading=14, textColor=GREY, spaceAfter=6
        )
        self.bullet = ParagraphStyle("bullet", base, leftIndent=10, bulletIndent=0, spaceAfter=2)
        self.mono = ParagraphStyle("mono", self.cell, fontName=f["mono"], fontSize=7)

    def plain(self, value: str) -> str:
        """Text for a drawing's strings: ASCII spellings when no Unicode font was found."""
        return value if self.unicode else ascii_units(value)

    def text(self, value: str) -> str:
        """Escape for paragraph markup; ASCII spellings when no Unicode font was found."""
        value = value if self.unicode else ascii_units(value)
        return escape(value)

    def p(self, text: str, style=None, *, markup: bool = False):
        from reportlab.platypus import Paragraph

        return Paragraph(text if markup else self.text(text), style or self.body)

    def heading(self, text: str, level: int, style=None):
        """A heading that keeps with what follows it and is an entry of the PDF's outline.

        ``level`` 0 is a section (h1 style by default), 1 a part of one (h2 style).
        """
        from reportlab.platypus import Paragraph

        self._headings += 1
        key = f"heading-{self._headings}"
        title = self.text(text)

        class Heading(Paragraph):
            def draw(self):
                super().draw()
                x, y = self.canv.absolutePosition(0, self.height)
                # The page is only numbered when the canvas writes it out (canvas.py):
                # the bookmark is placed then, the outline entry can be added now.
                self.canv.mark_heading(key, x, y)
                self.canv.addOutlineEntry(title, key, level=level, closed=False)

        return Heading(title, style or (self.h1 if level == 0 else self.h2))

    def bullets(self, items: Sequence[str]) -> list:
        return [self.p(item, self.bullet) for item in items]

    def bullet_items(self, items: Sequence[str]) -> list:
        from reportlab.platypus import Paragraph

        return [
            Paragraph(self.text(item), self.bullet, bulletText="•" if self.unicode else "-")
            for item in items
        ]

    def table(
        self,
        rows: Sequence[Sequence[Any]],
        widths: Sequence[float],
        *,
        header: bool = True,
        total_row: bool = False,
        align_right: Sequence[int] = (),
        label_column: bool = False,
        font_size: float | None = None,
        row_height: float | None = None,
        compact: bool = False,
    ):
        """A table; str cells become paragraphs (they wrap), flowables pass through.

        ``compact`` sets rows closer (the one-page summary).
        """
        from reportlab.lib import colors
        from reportlab.lib.styles import ParagraphStyle
        from reportlab.platypus import Table, TableStyle

        scale = self.width / sum(widths)
        col_widths = [w * scale for w in widths]
        cell = self.cell
        if font_size is not None:
            cell = ParagraphStyle("cellsized", cell, fontSize=font_size, leading=font_size * 1.25)
        right = ParagraphStyle("right", cell, alignment=2)
        body = []
        for r, row in enumerate(rows):
            cells = []
            for c, value in enumerate(row):
                if isinstance(value, str):
                    style = cell
                    if header and r == 0:
                        text = f"<b>{self.text(value)}</b>"
                        cells.append(self.p(text, style, markup=True))
                        continue
                    if label_column and c == 0:
                        cells.append(self.p(f"<b>{self.text(value)}</b>", style, markup=True))
                        continue
                    if c in align_right:
                        style = right
                    cells.append(self.p(value, style))
                else:
                    cells.append(value)
            body.append(cells)
        t = Table(
            body,
            colWidths=col_widths,
            rowHeights=None if row_height is None else [None] + [row_height] * (len(body) - 1),
            repeatRows=1 if header else 0,
            hAlign="LEFT",
            spaceAfter=6,
        )
        commands = [
            ("VALIGN", (0, 0), (-1, -1), "TOP"),
            ("LEFTPADDING", (0, 0), (-1, -1), 3),
            ("RIGHTPADDING", (0, 0), (-1, -1), 3),
            ("TOPPADDING", (0, 0), (-1, -1), 1 if compact else 2),
            ("BOTTOMPADDING", (0, 0), (-1, -1), 1.5 if compact else 2.5),
            ("LINEBELOW", (0, 0), (-1, -1), 0.25, colors.HexColor(RULE)),
        ]
        if header:
            commands += [
                ("BACKGROUND", (0, 0), (-1, 0), colors.HexColor(SHADE)),
                ("LINEBELOW", (0, 0), (-1, 0), 0.6, colors.HexColor(GREY)),
            ]
        if total_row:
            commands += [("LINEABOVE", (0, -1), (-1, -1), 0.8, colors.HexColor(GREY))]
        t.setStyle(TableStyle(commands))
        return t


# --------------------------------------------------------------------------- numbers


def rms(value: float, unit: str = "V") -> str:
    """``value`` rms in ``unit``: V, or A at a current-output sensor."""
    return format_si(value, unit) + " rms"


def signed_bits(value: float) -> str:
    text = format_bits(value)
    return ("+" + text) if value > 0 and math.isfinite(value) else text


def k_text(k_pp: float) -> str:
    return format_number(k_pp)


def coverage_text(coverage: float, k_pp: float) -> str:
    return f"noise-free figures at {format_percent(coverage)} coverage, k_pp = {k_text(k_pp)}"


def maybe_hz(value: float | None, none: str = "none given") -> str:
    return none if value is None else format_si(value, "Hz")


def after_allowance(req: Any, unit: str = "V") -> str:
    if req.interference_rms_v > 0:
        return f"after the interference allowance of {rms(req.interference_rms_v, unit)}"
    return "no interference allowance reserved"


def today() -> str:
    """Today's date (ISO 8601), or the UTC date of ``SOURCE_DATE_EPOCH`` when it is set."""
    epoch = os.environ.get("SOURCE_DATE_EPOCH", "").strip()
    if epoch.isdigit():
        return _dt.datetime.fromtimestamp(int(epoch), _dt.UTC).date().isoformat()
    return _dt.date.today().isoformat()


def report_date(design_date: str) -> tuple[str, str]:
    """The date the report is written on, and where it came from.

    ``SOURCE_DATE_EPOCH`` first (the reproducible-builds convention: seconds since
    1970-01-01 UTC), then the design's ``[meta].date``, then today: the same design,
    version and environment give the same PDF byte for byte.
    """
    epoch = os.environ.get("SOURCE_DATE_EPOCH", "").strip()
    if epoch.isdigit():
        return today(), "SOURCE_DATE_EPOCH"
    if design_date:
        return design_date, "the design's date"
    return today(), "today; the design gives no date"
