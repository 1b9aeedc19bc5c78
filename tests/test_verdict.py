"""The one verdict: every item that fails enters one list that text, JSON and exit code read.

Every design here is INVENTED.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from click.testing import CliRunner

from resplan.chain.verdict import Failure, Verdict, judge_design, noise_exceeds, range_exceeds
from resplan.cli import main
from resplan.designfile.examples import example_text
from resplan.designfile.load import check_design, loads_design

#: An invented accelerometer channel: 4th-order Bessel, 18-bit SAR at 100 kHz, 20 kHz band,
#: and an 82 kHz resonance of 12 mV rms at the sensor that aliases to 18 kHz. Its noise
#: meets 90 dB; the resonance does not.
ACCELEROMETER = """
[meta]
title = "Accelerometer channel (invented)"

[requirement]
span = "10 V"
dynamic_range = "90 dB"
f_low = "1 Hz"
f_high = "20 kHz"
interferer = { frequency = "82 kHz", amplitude = "12 mV" }

[sensor]
name = "accelerometer (invented)"
resistance = "100 ohm"
bipolar = true

[[stages]]
type = "active_filter"
name = "anti-alias Bessel (invented)"
response = "bessel"
order = 4
cutoff = "40 kHz"
gain = 0.8
noise_resistance = "4 kohm"
en = "8 nV/√Hz"

[adc]
name = "18-bit SAR (invented)"
architecture = "sar"
bits = 18
full_scale_range = "8.192 V"
sample_rate = "100 kHz"
snr = "99 dB"
snr_sample_rate = "100 kHz"
"""


@pytest.fixture
def runner():
    return CliRunner()


def test_verdict_meets_only_without_failures():
    assert Verdict((), ("noise",)).meets
    f = Failure("noise", 2.0, 1.0, "V", "over")
    assert not Verdict((f,), ("noise",)).meets
    assert Verdict((f,), ()).to_dict()["failures"] == [
        {"item": "noise", "value": 2.0, "limit": 1.0, "unit": "V", "message": "over"}
    ]


def test_number_checks_take_arrays():
    # Monte Carlo trials are judged at once: one boolean per trial.
    assert noise_exceeds(np.array([0.5, 1.0, 1.5]), 1.0).tolist() == [False, False, True]
    assert range_exceeds(np.array([0.9, 1.1])).tolist() == [False, True]


def test_accelerometer_interferer_fails_the_verdict(runner, tmp_path):
    design = loads_design(ACCELEROMETER, "accelerometer.toml")
    budget = check_design(design)
    assert budget.meets_requirement  # the noise alone passes ...
    judged = judge_design(design, budget)
    assert judged.failed_items == ("interferer[0]",)  # ... the resonance does not
    path = tmp_path / "accelerometer.toml"
    path.write_text(ACCELEROMETER, encoding="utf-8")
    text = runner.invoke(main, ["check", str(path)])
    assert text.exit_code == 1
    assert "interferer[0]" in text.stdout and "82.0 kHz" in text.stdout
    assert text.stdout.strip().splitlines()[-1].startswith("DOES NOT MEET")
    result = runner.invoke(main, ["check", "--json", str(path)])
    assert result.exit_code == 1
    data = json.loads(result.stdout)
    assert data["meets_requirement"] is False
    assert [f["item"] for f in data["failures"]] == ["interferer[0]"]
    failure = data["failures"][0]
    assert failure["unit"] == "V" and failure["value"] > failure["limit"]


def test_meeting_example_has_no_failures(runner, tmp_path):
    path = tmp_path / "h.toml"
    path.write_text(example_text("hive-scale"), encoding="utf-8")
    data = json.loads(runner.invoke(main, ["check", "--json", str(path)]).stdout)
    assert data["failures"] == [] and data["meets_requirement"] is True
    assert {"noise", "input_window"} <= set(data["checked"])


HIVE_INTERFERERS = """
[[requirement.interferers]]
name = "mains pickup (invented)"
mains = ["50 Hz", "60 Hz"]
tolerance = "1 %"
harmonics = 3
amplitude = ["20 µV", "5 µV", "10 µV"]

[[requirement.interferers]]
name = "hum tone (invented)"
frequency = "25 Hz"
amplitude = "1 µV"

[[requirement.interferers]]
name = "switching hash (invented)"
spectrum_file = "hash.csv"
"""


def _with_interferers(extra: str) -> str:
    text = example_text("hive-scale")
    i = text.index("[sensor]")
    return text[:i] + extra + "\n" + text[i:]


def test_interferers_as_engineers_state_them(runner, tmp_path):
    (tmp_path / "hash.csv").write_text(
        "frequency,density\n10 kHz,1 µV/√Hz\n1e6,1e-7\n", encoding="utf-8"
    )
    path = tmp_path / "hive.toml"
    path.write_text(_with_interferers(HIVE_INTERFERERS), encoding="utf-8")
    result = runner.invoke(main, ["check", "--json", str(path)])
    data = json.loads(result.stdout)
    kinds = [(x["item"], x["kind"]) for x in data["interferers"]]
    assert kinds == [
        ("interferer[0]", "mains"),
        ("interferer[1]", "tone"),
        ("interferer[2]", "broadband"),
    ]
    assert len(data["interferers"][0]["components"]) == 6  # 3 harmonics × 2 systems
    assert [f["item"] for f in data["failures"]] == ["interferer[2]"]
    assert result.exit_code == 1
    text = runner.invoke(main, ["check", str(path)]).stdout
    assert "worst at 49.5 Hz" in text and "interferer[2]" in text


@pytest.mark.parametrize(
    "entry, field",
    [
        ('frequency = "1 kHz"\nmains = "50 Hz"\namplitude = "1 mV"', "interferers[0].mains"),
        (
            'mains = "50 Hz"\nharmonics = 3\namplitude = ["1 mV", "2 mV"]',
            "interferers[0].amplitude",
        ),
        ('mains = "50 Hz"\namplitude = "1 mV"\ntolerance = "150 %"', "interferers[0].tolerance"),
        ('frequency = "1 kHz"', "interferers[0].amplitude"),
        ('spectrum_file = "missing.csv"', "interferers[0].spectrum_file"),
        ('spectrum = [["1 kHz", "1 µV/√Hz"], ["2 kHz"]]', "interferers[0].spectrum[1]"),
        ('frequency = "-1 kHz"\namplitude = "1 mV"', "interferers[0].frequency"),
    ],
)
def test_bad_interferer_is_one_line_exit_2(runner, tmp_path, entry, field):
    path = tmp_path / "bad.toml"
    path.write_text(_with_interferers("[[requirement.interferers]]\n" + entry), encoding="utf-8")
    result = runner.invoke(main, ["check", str(path)])
    assert result.exit_code == 2
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and field in lines[0], lines


def test_plan_is_infeasible_when_no_filter_order_suppresses_the_interferer(runner, tmp_path):
    # The accelerometer channel with its Bessel filter open, cut-off at the band top:
    # no order up to 8 takes the 82 kHz resonance down to its allowance.
    text = ACCELEROMETER.replace(
        'type = "active_filter"', 'type = "active_filter"\nopen = true'
    ).replace('noise_resistance = "4 kohm"\nen = "8 nV/√Hz"\n', "")
    path = tmp_path / "open.toml"
    path.write_text(text, encoding="utf-8")
    result = runner.invoke(main, ["plan", str(path)])
    assert result.exit_code == 1
    assert "INFEASIBLE" in result.stdout.splitlines()[-1]
    assert "suppresses the stated interferer" in result.stdout
    data = json.loads(runner.invoke(main, ["plan", "--json", str(path)]).stdout)
    assert data["feasible"] is False
    assert any("suppresses the stated interferer" in r for r in data["reasons"])


def test_tank_example_every_item_in_text_json_and_pdf(runner, tmp_path):
    # The embedded (invented) example: mains 50/60 Hz with ±1 % and five harmonics
    # passes at its worst frequencies, the 24.5 Hz pump pulsation fails.
    path = tmp_path / "tank.toml"
    path.write_text(example_text("tank-pressure"), encoding="utf-8")
    text = runner.invoke(main, ["check", str(path)])
    assert text.exit_code == 1
    out = text.stdout
    for fragment in (
        "interferer[0]",
        "mains pickup (invented)",
        "worst at 49.5 Hz",
        "interferer[1]",
        "pump pulsation (invented)",
        "EXCEEDS it",
        "gain at the band top",
        "settling after a step",
        "per channel",
    ):
        assert fragment in out, fragment
    assert out.strip().splitlines()[-1] == (
        "DOES NOT MEET the requirement: 1 item fails (interferer[1])"
    )
    data = json.loads(runner.invoke(main, ["check", "--json", str(path)]).stdout)
    assert data["meets_requirement"] is False
    assert [f["item"] for f in data["failures"]] == ["interferer[1]"]
    assert {
        "noise",
        "interferer[0]",
        "interferer[1]",
        "input_window",
        "headroom",
        "passband_flatness",
        "settling",
        "channel_rate",
    } <= set(data["checked"])
    assert data["interferers"][0]["within_allowance"] is True
    assert len(data["interferers"][0]["components"]) == 10
    assert data["passband"]["total_db"] < 0 and data["timing"]["channels"] == 2
    pdf = tmp_path / "tank.pdf"
    assert runner.invoke(main, ["report", str(path), "-o", str(pdf)]).exit_code == 0
    from pypdf import PdfReader

    page = PdfReader(str(pdf)).pages[0].extract_text()
    assert "Does not meet the requirement" in page
    assert "What fails" in page and "interferer[1]" in page
