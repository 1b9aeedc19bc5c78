"""The report read as a design-review document, on every embedded example.

Each example's report is built twice (figures at a low resolution and few
averaging counts, to stay fast) and read back with pypdf: its outline (one entry
per heading), its text page by page and its bytes. Checked here: no page ends
with a heading, every page carries the footer, the sign-off block and revision
history are present, and the two builds are byte for byte the same (reportlab's
invariant mode; dates from ``[meta].date`` or ``SOURCE_DATE_EPOCH``). The
examples are invented scenarios.
"""

from __future__ import annotations

import re

import pypdf
import pytest

from resplan import __version__
from resplan.chain.design import Meta
from resplan.designfile.examples import list_examples, load_example
from resplan.output.report import write_report
from resplan.output.report.canvas import fit_footer
from resplan.output.report.signoff import DOCUMENT_CONTROL_TITLE, SIGN_OFF_ROLES

EXAMPLES = [name for name, _ in list_examples()]
FEW_COUNTS = (1, 4)
FOOTER_NUMBER = re.compile(r"page (\d+) of (\d+)$")


def outline_titles(reader: pypdf.PdfReader) -> list[tuple[str, int]]:
    found = []

    def walk(items):
        for item in items:
            if isinstance(item, list):
                walk(item)
            else:
                found.append((item.title, reader.get_destination_page_number(item)))

    walk(reader.outline)
    return found


def body_lines(page) -> list[str]:
    """The page's text lines without the footer (drawn last, after the body)."""
    lines = [ln.strip() for ln in page.extract_text().splitlines() if ln.strip()]
    while lines and (
        lines[-1].startswith(f"resplan {__version__}") or FOOTER_NUMBER.search(lines[-1])
    ):
        lines.pop()
    return lines


@pytest.fixture(scope="module", params=EXAMPLES)
def built(request, tmp_path_factory):
    folder = tmp_path_factory.mktemp(request.param)
    design = load_example(request.param)
    first = write_report(design, folder / "one.pdf", dpi=50, sweep_counts=FEW_COUNTS)
    second = write_report(design, folder / "two.pdf", dpi=50, sweep_counts=FEW_COUNTS)
    return design, first.read_bytes(), second.read_bytes(), pypdf.PdfReader(str(first))


def test_building_twice_gives_identical_bytes(built):
    _, first, second, _ = built
    assert first == second


def test_every_heading_is_in_the_outline(built):
    _, _, _, reader = built
    titles = [t for t, _ in outline_titles(reader)]
    for needed in ("1 Summary", "7 Measurement safety", DOCUMENT_CONTROL_TITLE, "Revision history"):
        assert needed in titles


def test_no_page_ends_with_a_heading(built):
    _, _, _, reader = built
    headings = {t for t, _ in outline_titles(reader)}
    for number, page in enumerate(reader.pages, start=1):
        lines = body_lines(page)
        assert lines, f"page {number} is empty"
        assert lines[-1] not in headings, f"page {number} ends with the heading {lines[-1]!r}"


def test_every_heading_has_content_after_it_on_its_page(built):
    _, _, _, reader = built
    for title, index in outline_titles(reader):
        lines = body_lines(reader.pages[index])
        where = [i for i, ln in enumerate(lines) if ln == title]
        assert where and where[0] < len(lines) - 1, f"{title!r} alone at the foot of its page"


def path_operations(reader: pypdf.PdfReader, page) -> int:
    """Path-construction operators (m, l, c, re) in a page's content stream."""
    stream = pypdf.generic.ContentStream(page.get_contents(), reader)
    return sum(op in (b"m", b"l", b"c", b"re") for _, op in stream.operations)


def test_figures_are_vector_drawings(built):
    # Each figure is drawn as PDF paths (PDF 32000-1:2008, 8.5.2: m, l, c, re), and
    # the file holds no raster image at all.
    design, _, _, reader = built
    assert sum(len(page.images) for page in reader.pages) == 0
    figure_pages = [p for p in reader.pages if "Figure 1." in p.extract_text()]
    if design.is_complete:
        assert figure_pages and path_operations(reader, figure_pages[0]) > 500


def test_summary_ends_on_page_one(built):
    # The summary is one page: its last paragraph (the pointer to the cautions) is on
    # page 1, so every row before it is too; page 2 holds none of its rows.
    from resplan.output.report.safety import SUMMARY_CAUTION

    _, _, _, reader = built
    first, second = (re.sub(r"\s+", " ", p.extract_text()) for p in reader.pages[:2])
    assert "1 Summary" in first
    assert re.sub(r"\s+", " ", SUMMARY_CAUTION)[-60:] in first
    for label in ("Noise margin", "Output data rate", "Dominant contributors"):
        assert label not in second


def test_every_page_carries_the_footer(built):
    design, _, _, reader = built
    total = len(reader.pages)
    for number, page in enumerate(reader.pages, start=1):
        text = page.extract_text()
        assert f"page {number} of {total}" in text
        assert f"resplan {__version__} · " in text


def test_sign_off_block_and_revision_history(built):
    design, _, _, reader = built
    text = "\n".join(page.extract_text() for page in reader.pages[:2])
    for role in SIGN_OFF_ROLES:
        assert role in text
    assert "Revision history" in text
    if design.meta.revision:
        assert design.meta.revision in text


def test_source_date_epoch_sets_the_written_date(tmp_path, monkeypatch):
    # Reproducible-builds convention: SOURCE_DATE_EPOCH is seconds since 1970-01-01 UTC;
    # 1700000000 s is 2023-11-14 22:13:20 UTC (from the definition, by hand).
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1700000000")
    import resplan.output.report.document as document

    monkeypatch.setattr(document, "make_figures", lambda *a, **k: {})
    path = write_report(load_example("kickoff-bridge"), tmp_path / "x.pdf")
    text = pypdf.PdfReader(str(path)).pages[0].extract_text()
    assert "2023-11-14 (SOURCE_DATE_EPOCH)" in text


def _width(text: str) -> float:
    return 5.0 * len(text)  # a monospaced stand-in: 5 pt a character


@pytest.mark.parametrize(
    ("title", "room", "expected"),
    [
        ("short", 200, "resplan · short · rev. A"),
        ("a title far too long to fit", 150, "resplan · a title fa… · rev. A"),
        ("x" * 40, 30, "…"),
    ],
)
def test_footer_title_is_shortened_to_fit(title, room, expected):
    text = fit_footer("resplan · ", title, " · rev. A", room, _width)
    assert _width(text) <= room
    assert text == expected


def test_a_long_title_never_reaches_the_page_number(tmp_path, monkeypatch):
    import resplan.output.report.document as document

    monkeypatch.setattr(document, "make_figures", lambda *a, **k: {})
    design = load_example("kickoff-bridge")
    long = "An invented design whose title runs on and on " * 6
    from dataclasses import replace

    design = replace(design, meta=Meta(title=long.strip(), revision="B"))
    reader = pypdf.PdfReader(str(write_report(design, tmp_path / "long.pdf")))
    for page in reader.pages:
        footer = [ln for ln in page.extract_text().splitlines() if ln.startswith("resplan ")]
        assert footer and "…" in footer[-1]


def test_block_diagram_draws_every_part_of_the_chain(built):
    # The diagram's labels are drawn as text: every place of the chain is on its page.
    from resplan.output.report.diagram import chain_blocks

    design, _, _, reader = built
    page = next(p for p in reader.pages if "Block diagram of the chain" in p.extract_text())
    text = page.extract_text()
    for place, _, kind, lines, _ in chain_blocks(design):
        assert place in text
        assert kind[:12] in text
        for line in lines:
            assert line[:12] in text
    if design.reference is not None:
        assert "reference" in text


def test_alias_figure_for_every_stated_interferer(built):
    # Where a tone lands after sampling: f_alias = |f − m·f_s| folded into 0…f_s/2
    # (sampling theorem; e.g. Oppenheim and Schafer, Discrete-Time Signal Processing,
    # 3rd ed., §4.2). 190 kHz sampled at 200 kHz lands at 10 kHz (by hand).
    from resplan.chain.alias import alias_frequency
    from resplan.chain.verdict import interferer_checks
    from resplan.output.alias_figure import ALIAS_TITLE

    assert alias_frequency(190e3, 200e3) == pytest.approx(10e3)
    design, _, _, reader = built
    text = "\n".join(p.extract_text() for p in reader.pages)
    if not design.is_complete:
        return
    from resplan import forward_budget

    budget = forward_budget(design.chain(), design.band, requirement=design.requirement)
    residues = [r for r in interferer_checks(design, budget) if r.components or r.residue_v]
    assert (ALIAS_TITLE in text) == bool(residues)
    flat = " ".join(text.split())
    for r in residues:
        assert r.name in flat
