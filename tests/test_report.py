"""The PDF requirements appendix (resplan.output.report).

pypdf reads the text back; every section title and the numbers the budget
gives (``Budget.to_dict()``, written with resplan.units.formatting as ``resplan
check`` writes them) must be in it. Failures must leave no file and leave an
existing one untouched. Every design built here is INVENTED; figures are
drawn at a low resolution to keep the tests fast.
"""

from __future__ import annotations

import datetime as dt
import re
import sys

import pypdf
import pytest
from invented import design_of, invented_bridge_chain

from resplan import (
    Requirement,
    __version__,
    forward_budget,
)
from resplan.chain.design import Design, Meta, OpenPart
from resplan.designfile.examples import load_example
from resplan.errors import DesignError
from resplan.output.report import PAPER_SIZES, SECTION_TITLES, write_report
from resplan.units.formatting import (
    format_bits,
    format_counts,
    format_db,
    format_in_unit,
    format_percent,
    format_si,
    format_temperature,
)

LOW_DPI = 50
FEW_COUNTS = (1, 2, 4)
INVENTED_SHA = "0123456789abcdef" * 4


def invented_design(**overrides) -> Design:
    """INVENTED bridge design: the shared bridge chain (350 Ω, 10 mV → RC → PGA ×128 →
    delta-sigma, sinc3 to 10 Hz) with a title block, a requirement and a file digest."""
    fields = dict(
        meta=Meta(
            title="Invented scale & logger <test>",
            project="invented project",
            revision="C",
            author="invented author",
            date="2024-01-02",
        ),
        requirement=Requirement(
            span_v=10e-3,
            noise_free_counts=20_000,
            interference_rms_v=5e-9,
            description="10 g out of 200 kg, noise-free (invented)",
            engineering_unit="kg",
            engineering_per_volt=200 / 10e-3,
        ),
        source="invented.toml",
        sha256=INVENTED_SHA,
    )
    fields.update(overrides)
    return design_of(invented_bridge_chain(), **fields)


def pdf_text(path) -> tuple[str, list]:
    reader = pypdf.PdfReader(str(path))
    text = "\n".join(page.extract_text() for page in reader.pages)
    return re.sub(r"\s+", " ", text), reader.pages


@pytest.fixture(scope="module")
def a4_report(tmp_path_factory):
    folder = tmp_path_factory.mktemp("report")
    design = invented_design()
    budget = forward_budget(design.chain(), design.band, requirement=design.requirement)
    path = write_report(design, folder / "appendix.pdf", dpi=LOW_DPI, sweep_counts=FEW_COUNTS)
    text, pages = pdf_text(path)
    return design, budget, path, text, pages


def test_every_section_title_is_in_the_pdf(a4_report):
    _, _, _, text, _ = a4_report
    for title in SECTION_TITLES:
        assert title in text


def test_title_block_traces_the_design(a4_report):
    design, _, _, text, _ = a4_report
    assert "Invented scale & logger <test>" in text
    for value in ("invented project", "invented author", "2024-01-02", "invented.toml"):
        assert value in text
    assert INVENTED_SHA in text
    assert f"resplan {__version__}" in text


def test_pages_are_numbered_n_of_m(a4_report):
    _, _, _, text, pages = a4_report
    total = len(pages)
    for n in range(1, total + 1):
        assert f"page {n} of {total}" in text


def _numbers(budget) -> list[str]:
    """The budget's numbers as resplan.units.formatting writes them."""
    d = budget.to_dict()
    adc = d["adc_range"]
    req = d["requirement"]
    out = [
        format_si(d["total_noise_rms_v"], "V"),
        format_si(d["total_noise_adc_rms_v"], "V"),
        format_bits(d["effective_bits"]),
        format_bits(d["noise_free_bits"]),
        format_counts(d["noise_free_counts"]),
        format_si(adc["full_scale_range_v"], "V"),
        format_bits(adc["effective_bits"]),
        format_bits(adc["noise_free_bits"]),
        format_counts(adc["noise_free_counts"]),
        format_percent(d["coverage"]),
        f"k_pp = {d['coverage_factor_pp']:.3g}",
        format_db(d["snr_db"]),
        format_db(d["dynamic_range_db"]),
        format_bits(d["adc_enob"]),
        format_percent(d["adc_range_used"]),
        format_si(d["gain"], "V/V"),
        format_si(d["span_v"], "V"),
        format_temperature(d["temperature_k"]),
        format_temperature(d["sensor_temperature_k"]),
        format_si(d["band"]["f_low_hz"], "Hz"),
        format_si(d["output_rate_hz"], "Hz"),
        d["reference"],
        format_bits(d["margin_bits"]),
        format_si(req["allowed_total_rms_v"], "V"),
        format_si(req["interference_rms_v"], "V"),
        format_si(req["allowed_noise_rms_v"], "V"),
        format_bits(req["noise_free_bits"]),
        format_counts(req["noise_free_counts"]),
        req["description"],
    ]
    out += d["dominant"]
    out += d["warnings"]
    for c in d["contributors"]:
        out += [c["name"], c["stage"], c["kind"], format_si(c["rms_v"], "V")]
        out += [format_si(c["adc_rms_v"], "V"), format_percent(c["share"])]
        if c["density_v_per_rthz"] is not None:
            out.append(format_si(c["density_v_per_rthz"], "V/√Hz"))
        if c["corner_hz"] is not None:
            out.append(format_si(c["corner_hz"], "Hz"))
        if c["noise_bandwidth_hz"] is not None:
            out.append(format_si(c["noise_bandwidth_hz"], "Hz"))
    return out


def test_the_budget_numbers_are_in_the_pdf_as_check_prints_them(a4_report):
    _, budget, _, text, _ = a4_report
    missing = [n for n in _numbers(budget) if re.sub(r"\s+", " ", n) not in text]
    assert not missing


def test_summary_page_states_verdict_margin_and_coverage(a4_report):
    _, budget, _, _, pages = a4_report
    first = re.sub(r"\s+", " ", pages[0].extract_text())
    verdict = "Meets the requirement" if budget.meets_requirement else "Does not meet"
    assert verdict in first
    assert f"margin {format_bits(budget.margin_bits)}".replace("margin ", "margin +") in first
    assert f"noise-free figures at 99.9 % coverage, k_pp = {budget.k_pp:.3g}" in first
    for label in ("SNR", "Dynamic range", "Band", "Temperature", "Output data rate"):
        assert label in first
    # In the measurand: the noise-free step at 200 kg / 10 mV, in the unit as given
    # (no prefix added: a unit such as "mbar" may carry one already).
    step = budget.k_pp * budget.total_rms_v * 200 / 10e-3
    assert format_in_unit(step, "kg") in first


def test_assumptions_and_cautions_are_stated(a4_report):
    _, _, _, text, _ = a4_report
    for phrase in (
        "Interference is not noise",
        "quoted at 10.0 Hz data rate",
        "IEC 61010-1",
        "IEC 60601-1",
        "IEC 60079",
        "creepage",
        "measurement category",
        "licensed practice",
        "verify it on the bench".capitalize(),
    ):
        assert phrase in text, phrase


def test_formulas_carry_their_sources(a4_report):
    _, _, _, text, _ = a4_report
    for source in (
        "Johnson",
        "Nyquist",
        "Schottky",
        "Motchenbacher",
        "Bennett",
        "IEEE Std 1241",
        "Schreier",
        "JCGM 100:2008",
        "Parseval",
        "Butterworth",
    ):
        assert source in text, source


def test_figures_are_embedded_with_captions(a4_report):
    _, _, _, text, pages = a4_report
    for n, title in enumerate(
        (
            "Noise density of each contributor, referred to the sensor",
            "Cumulative rms noise against frequency, referred to the sensor",
            "Contributions to the noise power",
            "Noise-free resolution against output data rate",
        ),
        start=1,
    ):
        assert f"Figure {n}. {title}." in text
    # Vector drawings, not bitmaps: no image in the PDF at all.
    assert sum(len(page.images) for page in pages) == 0
    assert "Figures are vector drawings" in text


@pytest.mark.parametrize(
    ("paper", "size_pt"),
    [
        # ISO 216: A4 is 210 mm × 297 mm; 1 in = 25.4 mm = 72 pt.
        ("A4", (210 / 25.4 * 72, 297 / 25.4 * 72)),
        # US Letter, 8.5 in × 11 in (ANSI/ASME Y14.1).
        ("letter", (8.5 * 72, 11 * 72)),
    ],
)
def test_paper_size(tmp_path, paper, size_pt, a4_report, monkeypatch):
    import resplan.output.report.document as report

    monkeypatch.setattr(report, "make_figures", lambda *a, **k: {})
    path = write_report(invented_design(), tmp_path / "out.pdf", paper=paper, dpi=LOW_DPI)
    box = pypdf.PdfReader(str(path)).pages[0].mediabox
    assert float(box.width) == pytest.approx(size_pt[0], abs=0.01)
    assert float(box.height) == pytest.approx(size_pt[1], abs=0.01)
    assert PAPER_SIZES[paper.lower()] == pytest.approx(size_pt, abs=0.01)


def _leftovers(folder, keep):
    return sorted(p.name for p in folder.iterdir() if p.name not in keep)


def test_a_failing_figure_leaves_no_file(tmp_path, monkeypatch):
    import resplan.output.report.document as report

    def broken(*args, **kwargs):
        raise RuntimeError("injected failure")

    monkeypatch.setattr(report, "figure_svg", broken)
    target = tmp_path / "appendix.pdf"
    with pytest.raises(RuntimeError, match="injected"):
        write_report(invented_design(), target, dpi=LOW_DPI, sweep_counts=FEW_COUNTS)
    assert not target.exists()
    assert _leftovers(tmp_path, set()) == []


def test_a_failure_after_the_pdf_is_drawn_leaves_the_old_file_untouched(tmp_path, monkeypatch):
    import resplan.output.report.document as report

    target = tmp_path / "appendix.pdf"
    target.write_bytes(b"the previous report")

    def broken(*args, **kwargs):
        raise OSError("injected failure while saving figures")

    monkeypatch.setattr(report, "make_figures", lambda *a, **k: {})
    monkeypatch.setattr(report, "save_figures", broken)
    with pytest.raises(OSError, match="injected"):
        write_report(invented_design(), target, figures_dir=tmp_path / "figs", dpi=LOW_DPI)
    assert target.read_bytes() == b"the previous report"
    assert _leftovers(tmp_path, {"appendix.pdf"}) == []


def test_a_good_run_replaces_the_old_file_and_writes_figures(tmp_path):
    target = tmp_path / "appendix.pdf"
    target.write_bytes(b"the previous report")
    write_report(
        invented_design(),
        target,
        figures_dir=tmp_path / "figs",
        dpi=LOW_DPI,
        sweep_counts=FEW_COUNTS,
    )
    assert target.read_bytes().startswith(b"%PDF-")
    names = sorted(p.name for p in (tmp_path / "figs").iterdir())
    assert "noise_density.png" in names and "noise_density.svg" in names
    assert _leftovers(tmp_path, {"appendix.pdf", "figs"}) == []


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"paper": "A3"}, "paper"),
        ({"dpi": 20}, "dpi"),
    ],
)
def test_bad_options_are_design_errors(tmp_path, kwargs, field):
    with pytest.raises(DesignError) as err:
        write_report(invented_design(), tmp_path / "x.pdf", **kwargs)
    assert err.value.field == field
    assert not (tmp_path / "x.pdf").exists()


def test_bad_output_paths_are_design_errors(tmp_path):
    with pytest.raises(DesignError, match="existing folder"):
        write_report(invented_design(), tmp_path / "no" / "such" / "x.pdf")
    with pytest.raises(DesignError, match="not a folder"):
        write_report(invented_design(), tmp_path)
    source = tmp_path / "design.toml"
    source.write_text("# the design file")
    with pytest.raises(DesignError, match="other than the design file"):
        write_report(invented_design(source=str(source)), source)
    assert source.read_text() == "# the design file"


def test_date_defaults_to_today(tmp_path, monkeypatch):
    import resplan.output.report.document as report

    monkeypatch.setattr(report, "make_figures", lambda *a, **k: {})
    design = invented_design(meta=Meta(title="Invented undated design"))
    text, _ = pdf_text(write_report(design, tmp_path / "x.pdf", dpi=LOW_DPI))
    assert dt.date.today().isoformat() in text


def test_report_without_the_planner_says_so(tmp_path, monkeypatch):
    import resplan.output.report.document as report

    monkeypatch.setattr(report, "make_figures", lambda *a, **k: {})
    # the import now raises ImportError
    monkeypatch.setitem(sys.modules, "resplan.plan.allocation", None)
    text, _ = pdf_text(write_report(invented_design(), tmp_path / "x.pdf", dpi=LOW_DPI))
    assert "The plan was not computed: the planner is not available" in text


def invented_open_design() -> Design:
    """The INVENTED bridge with its amplifier open (to be planned)."""
    open_amp = OpenPart("amplifier", "invented open PGA", "stages[1]", {"gain": 128.0})
    base = invented_design()
    return invented_design(stages=(base.stages[0], open_amp))


def test_open_design_reports_the_open_parts_and_the_plan(tmp_path, monkeypatch):
    import resplan.output.report.document as report

    monkeypatch.setattr(report, "make_figures", lambda *a, **k: {})
    text, _ = pdf_text(write_report(invented_open_design(), tmp_path / "x.pdf", dpi=LOW_DPI))
    assert "these parts are open: stages[1] (amplifier)" in text
    for title in SECTION_TITLES:
        assert title in text
    try:
        from resplan.plan.allocation import plan_design
    except ImportError:  # pragma: no cover - planner not installed
        assert "The plan was not computed" in text
        return
    plan = plan_design(invented_open_design())
    assert ("The plan is feasible." if plan.feasible else "The plan is infeasible.") in text
    for r in plan.requirements:
        assert format_si(r.value, r.unit) in text
    for a in plan.allocations:
        assert format_si(a.rms_v, "V") in text


def test_embedded_example_report(tmp_path):
    design = load_example("hive-scale")
    path = write_report(design, tmp_path / "hive.pdf", dpi=LOW_DPI, sweep_counts=FEW_COUNTS)
    text, _ = pdf_text(path)
    assert design.sha256 in text
    assert design.meta.title in text


def test_docs_carry_the_report_formula_table():
    # One table per fact: docs/formulas.md holds the report's table verbatim.
    from pathlib import Path

    from resplan.output.report.formulas import DOCS_MARKERS, formulas_markdown

    docs = (Path(__file__).parents[1] / "docs" / "formulas.md").read_text(encoding="utf-8")
    start, end = docs.index(DOCS_MARKERS[0]), docs.index(DOCS_MARKERS[1])
    held = docs[start : end + len(DOCS_MARKERS[1])] + "\n"
    assert held == formulas_markdown(), (
        "docs/formulas.md is out of step with resplan/output/report/formulas.py: paste "
        "formulas_markdown() between the markers"
    )


def test_every_contribution_id_is_in_the_budget_table(a4_report):
    # The same stable ids as check --json and Budget[id] (resplan.chain.budget's table).
    _, budget, _, text, _ = a4_report
    squeezed = text.replace(" ", "")
    missing = [c.id for c in budget.contributions if c.id not in squeezed]
    assert not missing
