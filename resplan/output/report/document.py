"""The requirements appendix: a PDF a design review can file.

:func:`write_report` lays out, with reportlab's platypus, a title block that
traces the document to its design file (SHA-256) and resplan version, then

1. a one-page summary (verdict, resolution over the sensor span and the ADC
   range, margin, coverage factor, SNR, dynamic range, band, temperature, rate)
   — :mod:`.summary`;
2. the requirement, the chain and every assumption — :mod:`.requirement`
   (the chain table's wording of each part in :mod:`.parts`);
3. the allocation and per-part requirements of the backward plan — :mod:`.allocation`;
4. the forward budget of every contributor — :mod:`.budget`; its spread across
   boards and temperature (worst case, Monte Carlo yield) and what to improve
   first — :mod:`.spread`;
5. figures (:mod:`resplan.output.figures`) as vector drawings — :mod:`.figures`;
6. the formulas used, each with its published source — :mod:`.formulas`;
7. measurement-safety cautions — :mod:`.safety`.

This module puts those sections in order and builds the document; the page
furniture lives in :mod:`.style` (paper, margins, colours, titles),
:mod:`.fonts`, :mod:`.writer` (paragraphs, tables, number phrases) and
:mod:`.canvas` (footer, page numbers).

Every number goes through :mod:`resplan.units.formatting`, the same writer the
command line uses, so the figures printed here match ``resplan check`` to the
printed precision. reportlab and matplotlib are imported only when a report
is written.

The PDF is written to a temporary file in the target folder and renamed into
place: a failed run leaves no partial file, and an existing report is only
replaced by a complete one.
"""

from __future__ import annotations

import os
from pathlib import Path
from typing import Any

from ... import __version__
from ...chain.budget import Budget, forward_budget
from ...chain.design import Design
from ...errors import DesignError, ResplanError
from ..alias_figure import alias_figures
from ..atomic import atomic_path
from ..figures import DEFAULT_DPI, figure_svg, make_figures, save_figures
from .allocation import allocation_section
from .budget import budget_section
from .canvas import canvas_class
from .figures import figures_section
from .formulas import formulas_section
from .requirement import requirement_section
from .safety import safety_section
from .signoff import document_control_section
from .spread import spread_section
from .style import MARGIN, PAPER_SIZES, SECTION_TITLES
from .summary import summary_section, title_block
from .writer import Writer

__all__ = ["write_report", "PAPER_SIZES", "SECTION_TITLES"]


def _paper(paper: str) -> tuple[float, float]:
    key = str(paper).strip().lower()
    if key not in PAPER_SIZES:
        raise DesignError("paper", paper, "A4 or letter")
    return PAPER_SIZES[key]


def _check_target(design: Design, path: str | os.PathLike) -> Path:
    target = Path(path)
    if target.is_dir():
        raise DesignError("output", str(target), "a file name for the PDF, not a folder")
    if not target.parent.is_dir():
        raise DesignError("output", str(target), "a path in an existing folder")
    if design.source and Path(design.source).exists():
        try:
            same = Path(design.source).resolve() == target.resolve()
        except OSError:  # pragma: no cover - unreadable path
            same = False
        if same:
            raise DesignError("output", str(target), "a path other than the design file")
    return target


def _plan_or_note(design: Design) -> tuple[Any, str]:
    """Call the planner if it is installed; a note saying why not otherwise."""
    try:
        from ...plan.allocation import plan_design
    except ImportError:
        return None, "The plan was not computed: the planner is not available in this installation."
    try:
        return plan_design(design), ""
    except ResplanError as err:
        return None, f"The plan was not computed: {err}"


def write_report(
    design: Design,
    path: str | os.PathLike,
    *,
    paper: str = "A4",
    figures_dir: str | os.PathLike | None = None,
    plan: Any = None,
    budget: Budget | None = None,
    dpi: int = DEFAULT_DPI,
    sweep_counts: tuple[int, ...] | None = None,
) -> Path:
    """Write the requirements appendix of a design as a PDF.

    Parameters
    ----------
    design : Design
        The design (complete, or with open parts).
    path : path
        The PDF to write. Its folder must exist. Written to a temporary file in that
        folder and renamed into place: on any error no partial file is left and an
        existing file is untouched.
    paper : {"A4", "letter"}
        Paper size (ISO 216 A4, 210 × 297 mm, or US Letter, 8.5 × 11 in).
    figures_dir : path, optional
        Also write every figure there as PNG (at ``dpi``) and SVG.
    plan : resplan.plan.allocation.Plan, optional
        The backward plan; computed with :func:`resplan.plan.allocation.plan_design` when omitted
        and the planner is installed.
    budget : Budget, optional
        The forward budget; computed when omitted and the design is complete, as
        ``forward_budget(design.chain(), design.band, requirement=design.requirement)``.
    dpi : int
        Resolution of the PNG copies written to ``figures_dir``, dots per inch (200 by
        default); the figures in the PDF are vector drawings.
    sweep_counts : tuple of int, optional
        Averaging counts for the resolution figure.

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    DesignError
        For a bad paper size or output path; ChainError when the chain cannot be computed.
    """
    from reportlab.platypus import BaseDocTemplate, Frame, PageBreak, PageTemplate

    pagesize = _paper(paper)
    if isinstance(dpi, bool) or not isinstance(dpi, int) or dpi < 50:
        raise DesignError("dpi", dpi, "a whole number of dots per inch ≥ 50")
    target = _check_target(design, path)
    if budget is None and design.is_complete:
        budget = forward_budget(design.chain(), design.band, requirement=design.requirement)
    plan_note = ""
    if plan is None:
        plan, plan_note = _plan_or_note(design)

    figs = make_figures(design, budget, plan, sweep_counts=sweep_counts)
    if figs:
        figs.update(alias_figures(design, budget))
    svgs = {name: figure_svg(fig, text_as_paths=False) for name, fig in figs.items()}

    width = pagesize[0] - 2 * MARGIN
    w = Writer(width)
    story: list = []
    story += title_block(w, design)
    story += document_control_section(w, design)
    story += summary_section(w, design, budget, plan)
    story.append(PageBreak())
    story += requirement_section(w, design, budget, plan)
    story += allocation_section(w, design, plan, plan_note)
    story += budget_section(w, design, budget)
    story += spread_section(w, design, budget)
    story.append(PageBreak())
    story += figures_section(w, figs, svgs)
    story.append(PageBreak())
    story += formulas_section(w)
    story += safety_section(w)

    meta = design.meta
    tail = f" · rev. {meta.revision}" if meta.revision else ""
    if design.sha256:
        tail += f" · design SHA-256 {design.sha256[:12]}…"
    footer = (f"resplan {__version__} · ", meta.title or "Untitled design", tail)

    with atomic_path(target) as temp:
        doc = BaseDocTemplate(
            str(temp),
            pagesize=pagesize,
            leftMargin=MARGIN,
            rightMargin=MARGIN,
            topMargin=MARGIN,
            bottomMargin=MARGIN,
            title=f"{meta.title} — requirements appendix",
            author=meta.author or "",
            subject="Noise and resolution requirements appendix",
            creator=f"resplan {__version__}",
            invariant=1,  # no time stamp or random file id: the same input, the same bytes
        )
        frame = Frame(MARGIN, MARGIN, width, pagesize[1] - 2 * MARGIN, id="body")
        doc.addPageTemplates([PageTemplate(id="page", frames=[frame])])
        doc.build(story, canvasmaker=canvas_class(footer, w.f["regular"], w.unicode))
        if figures_dir is not None:
            save_figures(figs, figures_dir, dpi=dpi)
    return target
