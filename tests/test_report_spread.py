"""The report's spread part: readings, worst case, yield and interval, figures, improvements."""

from __future__ import annotations

from pypdf import PdfReader
from scipy import stats

from resplan.designfile.examples import load_example
from resplan.output.report import write_report
from resplan.output.report.spread import REPORT_SEED, REPORT_TRIALS
from resplan.output.spread_figures import spread_figures
from resplan.spread.model import build_model
from resplan.spread.trials import run_trials


def _text(path) -> str:
    return "\n".join(page.extract_text() for page in PdfReader(str(path)).pages)


def test_report_carries_the_spread_section(tmp_path):
    design = load_example("hive-spread")
    text = _text(write_report(design, tmp_path / "r.pdf"))
    for fragment in (
        "Spread across boards and temperature",
        "max read as +3σ; common practice, no source",
        "Worst case",
        "Clopper and Pearson",
        "Noise-free resolution across sampled boards",
        "What drives the spread of the total noise power",
        "What to improve first",
        "adc.noise_table: ADC noise 10 % lower",
    ):
        assert fragment in text.replace("\n", " "), fragment
    # the interval printed is scipy's exact interval of the same run
    result = run_trials(build_model(design), REPORT_TRIALS, REPORT_SEED)
    ci = stats.binomtest(result.met, result.trials).proportion_ci(0.95, method="exact")
    assert f"{ci.low * 100:.2f} %" in text


def test_report_without_spreads_says_figures_are_typical(tmp_path):
    text = _text(write_report(load_example("hive-scale"), tmp_path / "r.pdf"))
    assert "No figure of this design states a spread" in text.replace("\n", " ")
    assert "What to improve first" in text


def test_spread_figures_have_the_requirement_line_and_drivers():
    result = run_trials(build_model(load_example("hive-spread")), 2000, 1)
    figs = spread_figures(result)
    assert set(figs) == {"yield_histogram", "yield_drivers"}
    hist = figs["yield_histogram"].axes[0]
    xs = [line.get_xdata()[0] for line in hist.get_lines()]
    assert result.required_bits in xs and result.typical_bits in xs
