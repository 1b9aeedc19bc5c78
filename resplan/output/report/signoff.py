"""The document-control block: sign-off (prepared, reviewed, approved) and revision history.

Names and dates of the sign-off are left blank for the people who sign; only the
preparer's name comes from ``[meta].author``. The revision history is
``[[meta.history]]`` as the design file gives it, oldest first, with the current
revision added when the history does not already end with it.
"""

from __future__ import annotations

from ...chain.design import Design
from .writer import Writer

#: Roles of the sign-off block, in order.
SIGN_OFF_ROLES = ("Prepared by", "Reviewed by", "Approved by")
#: Heading of the block (tests look for it in the PDF).
DOCUMENT_CONTROL_TITLE = "Document control"


def _history_rows(design: Design) -> list[list[str]]:
    meta = design.meta
    rows = [
        [h.revision or "—", h.date or "—", h.author or "—", h.change or ""] for h in meta.history
    ]
    current = meta.revision or ""
    if current and not any(h.revision == current for h in meta.history):
        rows.append([current, meta.date or "—", meta.author or "—", "this revision"])
    return rows


def document_control_section(w: Writer, design: Design) -> list:
    """The sign-off table and the revision history, kept together on one page."""
    from reportlab.platypus import KeepTogether

    out = [w.heading(DOCUMENT_CONTROL_TITLE, 0, w.h2)]
    rows = [["Role", "Name", "Signature", "Date"]]
    for role in SIGN_OFF_ROLES:
        name = design.meta.author if role == "Prepared by" and design.meta.author else ""
        rows.append([role, name, "", ""])
    out.append(w.table(rows, [30, 50, 60, 30], row_height=16))
    history = _history_rows(design)
    if history:
        out.append(w.heading("Revision history", 1))
        out.append(w.table(
                [["Revision", "Date", "Author", "Change"], *history], [20, 28, 40, 82], compact=True
            ))
    else:
        out.append(w.p("No revision is recorded ([meta] revision and [[meta.history]]).", w.small))
    return [KeepTogether(out)]
