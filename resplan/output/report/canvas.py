"""The page canvas: the footer line and "page N of M", written once the count is known."""

from __future__ import annotations

from ...units.formatting import ascii_units
from .style import GREY, MARGIN, RULE

#: Footer type size, points, and the least gap between its two ends, points.
FOOTER_SIZE = 7
FOOTER_GAP = 12


def fit_footer(head: str, title: str, tail: str, room: float, width_of) -> str:
    """``head + title + tail`` in ``room`` points, the title shortened with "…" if need be.

    ``width_of(text)`` measures a string in points. When even an empty title does not
    fit, the tail goes too: the footer never runs into the page number.
    """
    whole = head + title + tail
    if width_of(whole) <= room:
        return whole
    for keep in range(len(title) - 1, -1, -1):
        text = head + title[:keep].rstrip() + "…" + tail
        if width_of(text) <= room:
            return text
    text = head + "…"
    return text if width_of(text) <= room else "…"


def canvas_class(footer: tuple[str, str, str], font: str, unicode: bool):
    """A canvas that writes the footer and "page N of M" once the page count is known.

    ``footer`` is (head, title, tail): the title is shortened when the whole line would
    reach the page number.
    """
    from reportlab.pdfbase.pdfmetrics import stringWidth
    from reportlab.pdfgen import canvas

    parts = tuple(x if unicode else ascii_units(x) for x in footer)

    class NumberedCanvas(canvas.Canvas):
        def __init__(self, *args, **kwargs):
            super().__init__(*args, **kwargs)
            self._pages: list[dict] = []
            self._marks: list[list[tuple[str, float, float]]] = [[]]

        def mark_heading(self, key: str, x: float, y: float) -> None:
            """A bookmark at (x, y) on this page, placed when the page is written."""
            self._marks[-1].append((key, x, y))

        def showPage(self):  # noqa: N802 - reportlab's name
            self._pages.append(dict(self.__dict__))
            self._marks.append([])
            self._startPage()

        def save(self):
            total = len(self._pages)
            for state, marks in zip(self._pages, self._marks, strict=False):
                self.__dict__.update(state)
                for key, x, y in marks:
                    self.bookmarkPage(key, fit="XYZ", left=x, top=y)
                self._footer(total)
                super().showPage()
            super().save()

        def _footer(self, total: int) -> None:
            width, _ = self._pagesize
            self.saveState()
            self.setFont(font, FOOTER_SIZE)
            self.setFillColor(GREY)
            self.setStrokeColor(RULE)
            self.setLineWidth(0.4)
            y = MARGIN * 0.55
            self.line(MARGIN, y + 9, width - MARGIN, y + 9)
            number = f"page {self._pageNumber} of {total}"
            room = width - 2 * MARGIN - stringWidth(number, font, FOOTER_SIZE) - FOOTER_GAP
            left = fit_footer(*parts, room, lambda t: stringWidth(t, font, FOOTER_SIZE))
            self.drawString(MARGIN, y, left)
            self.drawRightString(width - MARGIN, y, number)
            self.restoreState()

    return NumberedCanvas
