"""Stable contribution ids: every contribution has one, unique in its budget, and
the same in Python, in ``check --json`` and in lookups.

Chains are INVENTED (tests/invented.py); the id scheme is the project's own
(the table in :mod:`resplan.chain.budget`), so these are consistency checks,
not checks against an outside reference.
"""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner
from invented import invented_bridge_chain, invented_four_stage_chain, invented_vibration_chain

from resplan import Band, forward_budget
from resplan.cli import main
from resplan.designfile.examples import EXAMPLE_NAMES, example_text, load_example
from resplan.designfile.load import check_design

CHAINS = [invented_bridge_chain, invented_vibration_chain, invented_four_stage_chain]


@pytest.mark.parametrize("build", CHAINS, ids=lambda b: b.__name__)
def test_every_contribution_has_a_unique_id(build):
    budget = forward_budget(build(), Band(0.1, 10.0))
    ids = [c.id for c in budget.contributions]
    assert all(ids), ids
    assert len(set(ids)) == len(ids)
    for c in budget.contributions:
        assert budget[c.id] is c
        assert budget.contribution(c.id) is c
        assert c.id in budget


def test_bridge_ids_follow_the_scheme():
    budget = forward_budget(invented_bridge_chain(), Band(0.1, 10.0))
    assert set(budget.ids) == {
        "sensor.thermal",
        "stages[0].R.thermal",
        "stages[1].en",
        "stages[1].in",
        "reference.noise",
        "adc.noise",
    }
    assert budget["stages[1].en"].stage == "invented PGA"


def test_unknown_id_names_the_closest():
    budget = forward_budget(invented_bridge_chain(), Band(0.1, 10.0))
    with pytest.raises(KeyError, match=r"closest: stages\[1\]\.en"):
        budget["stages[1].e_n"]


@pytest.mark.parametrize("name", [n for n in EXAMPLE_NAMES if n != "kickoff-bridge"])  # open parts
def test_json_ids_match_python(name, tmp_path):
    budget = check_design(load_example(name))
    path = tmp_path / f"{name}.toml"
    path.write_text(example_text(name), encoding="utf-8")
    result = CliRunner().invoke(main, ["check", "--json", str(path)])
    assert result.exit_code in (0, 1), result.output
    data = json.loads(result.output)
    assert [c["id"] for c in data["contributors"]] == list(budget.ids)
