"""Legend labels are never cut: each is wrapped, and its full text is in the SVG.

Checks against the figures' own artists (every legend entry must read, once its
lines are joined, exactly the label its curve or bar was drawn with) and against
the SVG the report embeds (every line of every legend entry is a text element of
the file). The invented long names below are test data only.
"""

from __future__ import annotations

import re
import textwrap
import xml.etree.ElementTree as ET

import pytest

from resplan.chain.budget import forward_budget
from resplan.designfile.examples import EXAMPLE_NAMES, load_example
from resplan.output.alias_figure import alias_figures
from resplan.output.figure_style import LEGEND_WRAP_CHARS, legend_height_in, wrap_label
from resplan.output.figures import figure_svg, make_figures

_SVG = "{http://www.w3.org/2000/svg}"


def _legends(fig):
    found = list(fig.legends)
    found += [ax.get_legend() for ax in fig.axes if ax.get_legend() is not None]
    return found


def _svg_texts(fig) -> set[str]:
    root = ET.fromstring(figure_svg(fig, text_as_paths=False))
    return {"".join(t.itertext()).strip() for t in root.iter(_SVG + "text")}


def _figures(name: str) -> dict:
    design = load_example(name)
    budget = None
    if design.is_complete:
        budget = forward_budget(design.chain(), design.band, requirement=design.requirement)
    try:
        from resplan.plan.allocation import plan_design

        plan = plan_design(design)
    except Exception:  # a design the planner refuses still has its budget figures
        plan = None
    figs = make_figures(design, budget, plan, sweep_counts=(1, 2))
    if budget is not None:
        figs.update(alias_figures(design, budget))
    return figs


def _check_legends(fig, where: str) -> int:
    texts = _svg_texts(fig)
    checked = 0
    for leg in _legends(fig):
        for text, handle in zip(leg.get_texts(), leg.legend_handles, strict=True):
            shown = text.get_text()
            assert "…" not in shown, (where, shown)
            full = handle.get_label()
            if not full.startswith("_"):  # handles built for the legend carry no label
                assert shown.replace("\n", " ") == full, (where, shown, full)
            for line in shown.split("\n"):
                assert line.strip() in texts, (where, line)
            checked += 1
    return checked


@pytest.mark.parametrize("name", EXAMPLE_NAMES)
def test_every_legend_label_is_whole_in_the_svg(name):
    figs = _figures(name)
    checked = sum(_check_legends(fig, f"{name}:{key}") for key, fig in figs.items())
    assert checked > 0 or not figs, name


def test_a_long_contributor_name_is_wrapped_not_cut():
    # INVENTED chain: the amplifier stage's name is far longer than one legend line
    # (the old legend cut labels at 50 characters).
    from invented import design_of, invented_bridge_chain

    from resplan.chain.stages import IntegratedAmplifier

    base = invented_bridge_chain()
    long_name = "invented programmable gain amplifier of the bridge front end, low noise"
    amp = base.stages[1]
    stage = IntegratedAmplifier(
        long_name,
        gain=amp.gain,
        input_noise=amp.input_noise,
        current_noise=amp.current_noise,
        bandwidth_hz=amp.bandwidth_hz,
    )
    chain = invented_bridge_chain(stages=(base.stages[0], stage))
    design = design_of(chain)
    budget = forward_budget(chain, design.band, requirement=design.requirement)
    fig = make_figures(design, budget, sweep_counts=(1, 2))["noise_density"]
    assert _check_legends(fig, "noise_density") > 0
    labels = [t.get_text().replace("\n", " ") for leg in _legends(fig) for t in leg.get_texts()]
    ours = [t for t in labels if long_name in t]
    assert ours, labels
    assert all(len(t) > 50 for t in ours)
    # The whole legend sits inside the figure: wrapped lines made room for themselves.
    fig.canvas.draw()
    box = fig.bbox
    for leg in _legends(fig):
        extent = leg.get_window_extent()
        assert extent.x0 >= box.x0 - 1 and extent.x1 <= box.x1 + 1, extent
        assert extent.y0 >= box.y0 - 1 and extent.y1 <= box.y1 + 1, extent


def test_wrap_label_keeps_every_word():
    # Joining the wrapped lines gives the label back (Python's textwrap, stdlib docs).
    text = (
        "voltage noise of the invented first amplifier of the bridge front end "
        "(stages[0] invented bridge amplifier) · quoted rms"
    )
    wrapped = wrap_label(text)
    assert "…" not in wrapped
    assert wrapped.replace("\n", " ") == text
    assert all(len(line) <= LEGEND_WRAP_CHARS for line in wrapped.split("\n"))
    assert wrapped.split("\n") == textwrap.wrap(text, LEGEND_WRAP_CHARS)
    # A single word longer than a line stays whole.
    word = "x" * (LEGEND_WRAP_CHARS + 10)
    assert wrap_label(word) == word


def test_legend_height_grows_with_wrapped_lines():
    short = ["a", "b", "c"]
    long = ["a", "word " * 30, "c"]
    assert legend_height_in(long, ncols=2) > legend_height_in(short, ncols=2)
    # Columns fill in order, the first taking the extra entry (matplotlib's layout).
    assert legend_height_in(short, ncols=2) == pytest.approx(2 * legend_height_in(["a"]))
    assert not re.search("…", wrap_label("word " * 30))


def test_a_long_interferer_name_is_wrapped_not_cut_in_the_alias_figure():
    # INVENTED: the tank-pressure example's pump pulsation renamed far past one line
    # (the bar labels were once cut at 28 characters, silently).
    from resplan.designfile.examples import example_text
    from resplan.designfile.load import loads_design
    from resplan.output.alias_figure import NAME_WRAP_CHARS

    long_name = "invented pump pulsation coupled through the skid frame into the bridge cable"
    text = example_text("tank-pressure").replace('"pump pulsation (invented)"', f'"{long_name}"')
    design = loads_design(text, "tank-pressure.toml")
    budget = forward_budget(design.chain(), design.band, requirement=design.requirement)
    fig = alias_figures(design, budget)["alias"]
    bars = fig.axes[1]
    fig.canvas.draw()
    labels = bars.get_yticklabels()
    shown = [t.get_text() for t in labels]
    assert long_name in [s.replace("\n", " ") for s in shown], shown
    ours = next(s for s in shown if s.replace("\n", " ") == long_name)
    assert "…" not in ours and ours.count("\n") >= 2
    assert all(len(line) <= NAME_WRAP_CHARS for line in ours.split("\n"))
    # Every label sits inside the figure: the left margin made room for the longest line.
    box = fig.bbox
    for label in labels:
        extent = label.get_window_extent()
        assert extent.x0 >= box.x0 - 1 and extent.y0 >= box.y0 - 1, (label.get_text(), extent)
    # The whole name is in the SVG the report embeds, line by line.
    texts = _svg_texts(fig)
    for line in ours.split("\n"):
        assert line in texts
