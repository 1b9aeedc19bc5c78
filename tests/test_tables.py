"""Budgets and plans as records and as HTML for notebooks.

Chains and designs are INVENTED (tests/invented.py, the embedded examples).
The HTML must hold the verdict and every contribution id, escape names, and the
records must be flat rows that csv (standard library) writes as given.
"""

from __future__ import annotations

import csv
import io
from dataclasses import replace
from html.parser import HTMLParser

import pytest
from invented import invented_bridge_chain

from resplan import Band, Requirement, forward_budget
from resplan.chain.tables import RECORD_FIELDS, write_records_csv
from resplan.designfile.examples import load_example
from resplan.designfile.load import check_design
from resplan.output.budget_text import check_data
from resplan.plan.allocation import plan_design


class _Text(HTMLParser):
    """Collects text and checks tags balance (a well-formed fragment)."""

    def __init__(self):
        super().__init__()
        self.text: list[str] = []
        self.stack: list[str] = []

    def handle_starttag(self, tag, attrs):
        if tag != "br":
            self.stack.append(tag)

    def handle_endtag(self, tag):
        if tag != "br":
            assert self.stack.pop() == tag

    def handle_data(self, data):
        self.text.append(data)


def _parse(markup: str) -> str:
    p = _Text()
    p.feed(markup)
    p.close()
    assert p.stack == []
    return "".join(p.text)


def _budget(**req):
    requirement = Requirement(span_v=10e-3, noise_free_counts=req.pop("counts", 1000))
    return forward_budget(invented_bridge_chain(), Band(0.1, 10.0), requirement=requirement)


@pytest.mark.parametrize("counts, verdict", [(1000, "MEETS"), (10_000_000, "DOES NOT MEET")])
def test_budget_html_holds_every_id_and_the_verdict(counts, verdict):
    budget = _budget(counts=counts)
    text = _parse(budget._repr_html_())
    assert verdict in text
    if verdict == "MEETS":
        assert "DOES NOT" not in text
    for c in budget.contributions:
        assert c.id in text
    assert "effective resolution" in text and "noise-free resolution" in text
    assert "k_pp" in text and "temperature" in text


def test_budget_html_escapes_names():
    chain = invented_bridge_chain()
    chain = replace(chain, sensor=replace(chain.sensor, name='<script>"x" & y</script>'))
    markup = forward_budget(chain, Band(0.1, 10.0))._repr_html_()
    assert "<script>" not in markup
    assert "&lt;script&gt;" in markup
    assert '<script>"x" & y</script>' in _parse(markup)


def test_records_are_flat_rows_csv_writes():
    budget = _budget()
    rows = budget.to_records()
    assert len(rows) == len(budget.contributions)
    assert all(tuple(r) == RECORD_FIELDS for r in rows)
    assert all(isinstance(v, str | float | int | type(None)) for r in rows for v in r.values())
    out = io.StringIO()
    write_records_csv(rows, out)
    back = list(csv.DictReader(io.StringIO(out.getvalue())))
    assert [r["id"] for r in back] == [c.id for c in budget.contributions]
    assert float(back[0]["rms_v"]) == budget.contributions[0].rms_v  # repr round-trips


def test_to_dict_is_the_json_structure():
    design = load_example("hive-scale")
    budget = check_design(design)
    data = check_data(budget, design)
    plain = budget.to_dict()
    assert set(plain) <= set(data)
    assert [c["id"] for c in plain["contributors"]] == [c["id"] for c in data["contributors"]]


def test_plan_html_and_records():
    design = load_example("kickoff-bridge")
    plan = plan_design(design)
    text = _parse(plan._repr_html_())
    assert ("FEASIBLE" in text) or ("INFEASIBLE" in text)
    for c in plan.fixed:
        assert c.id in text
    rows = plan.to_records()
    assert rows and {"part", "quantity", "bound", "value", "unit"} <= set(rows[0])
    assert [r["id"] for r in plan.to_records("fixed")] == [c.id for c in plan.fixed]
    assert len(plan.to_records("allocations")) == len(plan.allocations)
    with pytest.raises(ValueError):
        plan.to_records("everything")


def test_spread_results_as_records_and_html():
    # The embedded hive-spread example (invented): its Monte Carlo result and worst case.
    from resplan.spread.corner import worst_case
    from resplan.spread.model import build_model
    from resplan.spread.trials import run_trials

    design = load_example("hive-spread")
    result = run_trials(build_model(design), 2000, seed=1)
    rows = result.to_records()
    assert [r["field"] for r in rows] == [d.field for d in result.drivers]
    text = _parse(result._repr_html_())
    assert "yield" in text and "Clopper-Pearson" in text
    assert all(d.field in text for d in result.drivers)
    corner = worst_case(design)
    assert {r["field"] for r in corner.to_records()} == set(corner.values)
    text = _parse(corner._repr_html_())
    assert all(c.id in text for c in corner.budget.contributions)
    assert "MEETS" in text  # either verdict line names the requirement
