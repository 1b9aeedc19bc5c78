"""The PDF requirements appendix: a document a design review can file.

:func:`write_report` (``document``) builds the whole document from the design,
its forward budget and its plan, and writes it atomically. Each section of the
report has its own module (``summary``, ``requirement``, ``allocation``,
``budget``, ``figures``, ``formulas``, ``safety``); the page furniture is in
``style``, ``fonts``, ``writer`` and ``canvas``. reportlab and matplotlib are
imported only when a report is written.
"""

from .document import PAPER_SIZES, SECTION_TITLES, write_report

__all__ = ["write_report", "PAPER_SIZES", "SECTION_TITLES"]
