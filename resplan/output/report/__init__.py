"""The PDF requirements appendix: a document a design review can file.

:func:`write_report` builds the whole document (``document``) from the design,
its forward budget and its plan, and writes it atomically. reportlab and
matplotlib are imported only when a report is written.
"""

from .document import PAPER_SIZES, SECTION_TITLES, write_report

__all__ = ["write_report", "PAPER_SIZES", "SECTION_TITLES"]
