"""``resplan yield`` and ``check --worst-case`` through click's CliRunner."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from click.testing import CliRunner
from scipy import stats

from resplan.cli import main
from resplan.designfile.examples import example_text

SPREAD = example_text("hive-spread")


@pytest.fixture
def runner():
    return CliRunner()


def _write(folder: Path, text: str, name: str = "d.toml") -> str:
    path = folder / name
    path.write_text(text, encoding="utf-8")
    return str(path)


def _strict(text: str):
    def refuse(name):
        raise ValueError(name)

    return json.loads(text, parse_constant=refuse)


def test_yield_meets_and_its_json_is_strict(runner, tmp_path):
    path = _write(tmp_path, SPREAD)
    text = runner.invoke(main, ["yield", path, "--trials", "20000", "--seed", "4"])
    assert text.exit_code == 0, text.output
    out = text.stdout
    assert "Clopper" in out and "Drivers" in out and "Worst trial" in out
    assert out.strip().splitlines()[-2].startswith("VERDICT: MEETS")
    assert "licensed practice" in out
    data = _strict(
        runner.invoke(main, ["yield", path, "-n", "20000", "--seed", "4", "--json"]).stdout
    )
    assert data["trials"] == 20000 and data["meets_yield"] is True
    assert set(data["noise_rms_v_percentiles"]) == {"1", "5", "50", "95", "99"}
    # the interval is scipy's exact (Clopper-Pearson) interval of the count met
    ci = stats.binomtest(data["met"], 20000).proportion_ci(0.95, method="exact")
    assert data["yield_interval_95"] == pytest.approx([ci.low, ci.high], rel=1e-12)
    assert data["drivers"][0]["field"] == "adc.noise_table[2][1]"
    assert {s["field"] for s in data["spreads"]} >= {"requirement.temperature", "sensor.resistance"}
    again = _strict(
        runner.invoke(main, ["yield", path, "-n", "20000", "--seed", "4", "--json"]).stdout
    )
    again.pop("seconds"), data.pop("seconds")
    assert again == data


def test_yield_below_the_requirement_exits_1(runner, tmp_path):
    text = SPREAD.replace('resolution = "10 g"', 'resolution = "8 g"')
    result = runner.invoke(main, ["yield", _write(tmp_path, text), "-n", "5000"])
    assert result.exit_code == 1, result.output
    assert "DOES NOT MEET the yield requirement" in result.stdout


@pytest.mark.parametrize(
    ("args", "fragment"),
    [(["-n", "0"], "--trials"), (["--seed", "-1"], "--seed"), (["-n", "x"], "--trials")],
)
def test_yield_bad_options_exit_2(runner, tmp_path, args, fragment):
    result = runner.invoke(main, ["yield", _write(tmp_path, SPREAD), *args])
    assert result.exit_code == 2 and fragment in result.output
    assert "Traceback" not in result.output


def test_bad_spread_is_one_line_and_exit_2(runner, tmp_path):
    text = SPREAD.replace('max = "60 nV"', 'max = "30 nV"')
    result = runner.invoke(main, ["yield", _write(tmp_path, text)])
    assert result.exit_code == 2
    lines = [ln for ln in result.stderr.splitlines() if ln]
    assert len(lines) == 1 and "adc.noise_table[2][1].max" in lines[0]


def test_check_worst_case_names_the_corner(runner, tmp_path):
    path = _write(tmp_path, SPREAD)
    typical = runner.invoke(main, ["check", path])
    assert typical.exit_code == 0
    assert "figures: typical" in typical.stdout and "What to improve first" in typical.stdout
    worst = runner.invoke(main, ["check", path, "--worst-case"])
    assert worst.stdout.startswith("Worst-case corner")
    assert "adc.noise_table[2][1] = 60.0 nV (high end" in worst.stdout
    data = _strict(runner.invoke(main, ["check", path, "--worst-case", "--json"]).stdout)
    assert data["figures"] == "worst-case corner"
    assert data["worst_case"]["ends"]["requirement.temperature"] == "high"
    assert data["improve_first"][0]["fields"][0].startswith("adc.noise_table")
    typical_data = _strict(runner.invoke(main, ["check", path, "--json"]).stdout)
    assert typical_data["figures"] == "typical"
    assert data["total_noise_rms_v"] > typical_data["total_noise_rms_v"]


def test_plan_says_its_figures_are_typical(runner, tmp_path):
    result = runner.invoke(main, ["plan", _write(tmp_path, example_text("kickoff-bridge"))])
    lines = result.stdout.strip().splitlines()
    assert lines[-2].startswith("figures: typical") and lines[-1].startswith(("FEASIBLE", "INF"))
    data = _strict(
        runner.invoke(main, ["plan", _write(tmp_path, SPREAD, "s.toml"), "--json"]).stdout
    )
    assert data["figures"] == "typical"


def test_progress_is_reported_chunk_by_chunk():
    from resplan.designfile.examples import load_example
    from resplan.spread.model import build_model
    from resplan.spread.trials import run_trials

    seen = []
    run_trials(
        build_model(load_example("hive-spread")),
        10_000,
        1,
        chunk=3_000,
        progress=lambda done, total: seen.append((done, total)),
    )
    assert seen == [(3000, 10000), (6000, 10000), (9000, 10000), (10000, 10000)]
