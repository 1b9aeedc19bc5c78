"""Open stages in design files, through the command line: limits, GBW as an output, errors.

Every design is INVENTED (edits of the embedded examples and small files written here).
References: the round trip of DOMAIN §7 (a chain at its limits meets with zero margin,
checked with the same forward budget `check` runs, 1e-9 relative) and the GBW criterion
`check` applies (open-loop gain GBW/f at the band top ≥ the stage's gain,
resplan.chain.netlists.check_circuit).
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from click.testing import CliRunner

from resplan import forward_budget
from resplan.cli import main
from resplan.designfile.examples import example_text
from resplan.designfile.load import load_design
from resplan.plan.allocation import plan_design, realise


@pytest.fixture
def runner():
    return CliRunner()


SAR_500 = """
[meta]
title = "gain 500 before a 256 kHz SAR (invented)"
[requirement]
span = "10 mV"
noise_free_bits = 12
f_low = "0.1 Hz"
f_high = "100 kHz"
[sensor]
resistance = "350 ohm"
[[stages]]
type = "rc_filter"
resistance = "100 ohm"
capacitance = "1 uF"
[[stages]]
type = "{kind}"
name = "front end"
open = true
gain = 500
{extra}
[adc]
architecture = "sar"
bits = 16
full_scale_range = "5 V"
sample_rate = "256 kHz"
transition_noise = 0.5
[reference]
voltage = "2.5 V"
ratiometric = true
"""


def _write(tmp_path, name, text):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return str(path)


def _requirements(output: str) -> dict[str, dict]:
    return {r["quantity"]: r for r in json.loads(output)["requirements"]}


def test_an_open_gain_stage_gets_its_gbw_as_a_limit_not_a_refusal(runner, tmp_path):
    # Fault: `plan` refused this design with an error naming stages[1].gbw, a field the
    # file never gives. The GBW is an output: GBW ≥ G·f_top = 500 × 100 kHz = 50 MHz.
    path = _write(tmp_path, "nonin.toml", SAR_500.format(kind="noninverting", extra=""))
    result = runner.invoke(main, ["plan", path, "--json"])
    assert result.exit_code == 0, result.output
    gbw = _requirements(result.output)["gain-bandwidth product GBW"]
    assert gbw["bound"] == "min" and gbw["unit"] == "Hz"
    assert gbw["value"] == pytest.approx(500 * 100e3, rel=1e-12)
    text = runner.invoke(main, ["plan", path])
    assert "error" not in text.output.lower() and "Traceback" not in text.output


def test_a_stated_bandwidth_too_low_is_a_reason_naming_that_field(runner, tmp_path):
    extra = 'bandwidth = "10 kHz"'
    path = _write(tmp_path, "amp.toml", SAR_500.format(kind="amplifier", extra=extra))
    result = runner.invoke(main, ["plan", path])
    assert result.exit_code == 1, result.output
    assert "stages[1].bandwidth: the stated 10.0 kHz is below the 100 kHz needed" in (result.output)
    assert "stages[1].gbw" not in result.output
    assert result.output.strip().splitlines()[-1].startswith("INFEASIBLE")
    # An in-amp without a stated bandwidth gets the bandwidth it needs as a limit.
    path = _write(tmp_path, "amp2.toml", SAR_500.format(kind="amplifier", extra=""))
    result = runner.invoke(main, ["plan", path, "--json"])
    assert result.exit_code == 0, result.output
    row = _requirements(result.output)["bandwidth (−3 dB, at this gain)"]
    assert row["value"] == pytest.approx(100e3, rel=1e-12) and row["bound"] == "min"


def _open_photodiode(tmp_path) -> str:
    text = example_text("turbidity-photodiode")
    given = 'en = "15 nV/√Hz"\nen_corner = "100 Hz"\nin = "2 fA/√Hz"\ngbw = "20 MHz"\n'
    assert given in text
    return _write(tmp_path, "tia.toml", text.replace(given, 'open = true\nen_corner = "100 Hz"\n'))


def test_open_transimpedance_stage_from_a_design_file(runner, tmp_path):
    path = _open_photodiode(tmp_path)
    result = runner.invoke(main, ["plan", path, "--json"])
    assert result.exit_code == 0, result.output
    rows = _requirements(result.output)
    assert rows["white voltage noise e_n (current noise negligible)"]["unit"] == "V/√Hz"
    assert rows["current noise i_n (voltage noise negligible)"]["unit"] == "A/√Hz"
    assert rows["gain-bandwidth product GBW for a flat response"]["bound"] == "min"
    # The round trip through the file: the chain at its limits meets with zero margin.
    design = load_design(path)
    plan = plan_design(design)
    b = forward_budget(realise(plan, design), design.band, requirement=design.requirement)
    assert b.total_rms_v == pytest.approx(plan.allowed_noise_rms_v, rel=1e-9)


def test_open_inverting_stage_from_a_design_file(runner, tmp_path):
    text = """
[meta]
title = "open inverting stage (invented)"
[requirement]
span = "20 mV"
noise_free_bits = 11
f_low = "0.1 Hz"
f_high = "1 kHz"
[sensor]
resistance = "100 ohm"
bipolar = true
[[stages]]
type = "inverting"
name = "inverting front end"
open = true
rin = "1 kohm"
en_corner = "10 Hz"
[[stages]]
type = "rc_filter"
resistance = "470 ohm"
capacitance = "10 nF"
[adc]
architecture = "sar"
bits = 18
full_scale_range = "5 V"
sample_rate = "200 kHz"
noise = "20 uV"
noise_data_rate = "200 kHz"
[reference]
voltage = "2.5 V"
ratiometric = true
"""
    path = _write(tmp_path, "inv.toml", text)
    result = runner.invoke(main, ["plan", path, "--json"])
    assert result.exit_code == 0, result.output
    rows = _requirements(result.output)
    # 5 V range over a 20 mV span: gain 250, so GBW ≥ 250 × 1 kHz (check's criterion).
    assert rows["front-end gain the ADC range allows"]["value"] == pytest.approx(250.0)
    assert rows["gain-bandwidth product GBW"]["value"] == pytest.approx(250e3, rel=1e-12)
    design = load_design(path)
    plan = plan_design(design)
    b = forward_budget(realise(plan, design), design.band, requirement=design.requirement)
    assert b.total_rms_v == pytest.approx(plan.allowed_noise_rms_v, rel=1e-9)


def test_noise_fields_of_an_open_op_amp_stage_are_refused_one_line_each(runner, tmp_path):
    text = example_text("turbidity-photodiode").replace(
        'gbw = "20 MHz"\n', 'gbw = "20 MHz"\nopen = true\n'
    )
    path = _write(tmp_path, "tia-bad.toml", text)
    result = runner.invoke(main, ["plan", path])
    assert result.exit_code == 2
    lines = [line for line in result.output.splitlines() if "stages[0]." in line]
    assert any("stages[0].en:" in line for line in lines)
    assert any("stages[0].in:" in line for line in lines)
    assert "Traceback" not in result.output


def test_the_worked_example_of_docs_planning_md(tmp_path):
    # docs/planning.md, "Worked example: an open transimpedance stage": the numbers the
    # page states, as the planner writes them (engineering prefixes, three digits).
    from resplan.units.formatting import format_si

    design = load_design(_open_photodiode(tmp_path))
    plan = plan_design(design)
    rows = {r.quantity: r.value for r in plan.requirements}
    # 72 dB over 2 µA: σ = (2 µA/2√2)·10^(−72/20) (DOMAIN §6, dynamic range of a sine).
    assert plan.allowed_total_rms_v == pytest.approx(2e-6 / (2 * 2**0.5) * 10 ** (-72 / 20))
    got = [
        format_si(plan.allowed_total_rms_v, "A"),
        format_si(plan.remaining_rms_v, "A"),
        format_si(rows["white voltage noise e_n (current noise negligible)"], "V/√Hz"),
        format_si(rows["gain-bandwidth product GBW for a flat response"], "Hz"),
    ]
    assert got == ["178 pA", "158 pA", "18.6 nV/√Hz", "25.5 MHz"]
    text = (Path(__file__).parents[1] / "docs" / "planning.md").read_text(encoding="utf-8")
    for number in ("178 pA", "158 pA", "18.6 nV/√Hz", "25.5 MHz"):
        assert number in text
