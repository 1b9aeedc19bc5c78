"""The page canvas: the footer line and "page N of M", written once the count is known."""

from __future__ import annotations

from ...units.formatting import ascii_units
from .style import GREY, MARGIN, RULE


def canvas_class(footer_left: str, font: str, unicode: bool):
    """A canvas that writes "page N of M" once the page count is known."""
    from reportlab.pdfgen import canvas

    left = footer_left if unicode else ascii_units(footer_left)

    class NumberedCanvas(canvas.Canvas):
        def __init__(self, *args, **kwargs):
            super().__init__(*args, **kwargs)
            self._pages: list[dict] = []

        def showPage(self):  # noqa: N802 - reportlab's name
            self._pages.append(dict(self.__dict__))
            self._startPage()

        def save(self):
            total = len(self._pages)
            for state in self._pages:
                self.__dict__.update(state)
                self._footer(total)
                super().showPage()
            super().save()

        def _footer(self, total: int) -> None:
            width, _ = self._pagesize
            self.saveState()
            self.setFont(font, 7)
            self.setFillColor(GREY)
            self.setStrokeColor(RULE)
            self.setLineWidth(0.4)
            y = MARGIN * 0.55
            self.line(MARGIN, y + 9, width - MARGIN, y + 9)
            self.drawString(MARGIN, y, left)
            self.drawRightString(width - MARGIN, y, f"page {self._pageNumber} of {total}")
            self.restoreState()

    return NumberedCanvas
