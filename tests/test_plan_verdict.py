"""The plan reads the one verdict for everything it does not allocate itself.

On a complete design (nothing open) ``resplan plan`` and ``resplan check`` must give
the same failures, the same exit code and agreeing text and JSON: both read
:func:`resplan.chain.verdict.judge` (STYLE: "one verdict object"). Every design is
INVENTED (the embedded examples and edits of them). The reference is the check
itself: this is a consistency law, not a number against a published source.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from click.testing import CliRunner

from resplan.cli import main
from resplan.designfile.examples import EXAMPLE_NAMES, example_text


@pytest.fixture
def runner():
    return CliRunner()


def _items(data: dict) -> list[tuple[str, float, float, str]]:
    return [(f["item"], f["value"], f["limit"], f["unit"]) for f in data["failures"]]


def _complete(name: str) -> bool:
    return "open = true" not in example_text(name)


@pytest.mark.parametrize("name", [n for n in EXAMPLE_NAMES if _complete(n)])
def test_plan_and_check_agree_on_every_complete_example(runner, tmp_path, name):
    path = tmp_path / f"{name}.toml"
    path.write_text(example_text(name), encoding="utf-8")
    check = runner.invoke(main, ["check", str(path), "--json"])
    plan = runner.invoke(main, ["plan", str(path), "--json"])
    assert check.exit_code in (0, 1) and plan.exit_code == check.exit_code, plan.output
    checked, planned = json.loads(check.output), json.loads(plan.output)
    assert planned["feasible"] is checked["meets_requirement"]
    assert _items(planned) == _items(checked)
    text = runner.invoke(main, ["plan", str(path)])
    assert text.exit_code == check.exit_code
    last = text.output.strip().splitlines()[-1]
    assert last.startswith("FEASIBLE" if check.exit_code == 0 else "INFEASIBLE")
    for f in checked["failures"]:
        assert f["item"] in text.output


def test_tank_pressure_pump_tone_fails_the_plan_too(runner, tmp_path):
    # The invented tank-pressure example fails `check` on its pump tone (interferer[1]);
    # with nothing open the plan used to say FEASIBLE. Now it names the same item.
    path = tmp_path / "tank.toml"
    path.write_text(example_text("tank-pressure"), encoding="utf-8")
    result = runner.invoke(main, ["plan", str(path)])
    assert result.exit_code == 1
    assert "interferer[1]: pump pulsation (invented)" in result.output
    assert result.output.strip().splitlines()[-1].startswith("INFEASIBLE")


def test_an_open_part_does_not_hide_a_failing_interferer(runner, tmp_path: Path):
    # The same chain with its reference open (the interferer does not depend on it):
    # the plan sizes the reference and still reports the tone the given filter lets by.
    text = example_text("tank-pressure")
    assert "[reference]" in text
    head, _, tail = text.partition("[reference]")
    body, sep, rest = tail.partition("\n[")
    reference = '[reference]\nopen = true\nvoltage = "5 V"\n'
    path = tmp_path / "tank-open.toml"
    path.write_text(head + reference + sep + rest, encoding="utf-8")
    result = runner.invoke(main, ["plan", str(path), "--json"])
    assert result.exit_code == 1, result.output
    data = json.loads(result.output)
    assert [f["item"] for f in data["failures"]] == ["interferer[1]"]
    assert data["feasible"] is False
