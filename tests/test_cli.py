"""The command line through click's CliRunner: exit codes, messages, JSON, init, schema.

Every design is INVENTED (the embedded examples and edits of them).
"""

from __future__ import annotations

import json
import math
import os
from pathlib import Path

import pytest
from click.testing import CliRunner
from pypdf import PdfReader

from resplan import __version__
from resplan.cli import main
from resplan.designfile.examples import EXAMPLE_NAMES, example_text

COMPLETE = (
    "hive-scale",
    "soil-temperature",
    "pipeline-vibration",
    "tank-pressure",
    "turbidity-photodiode",
)
#: The exit status each complete example is stated (in its first line) to give.
EXPECTED_EXIT = {
    "hive-scale": 0,
    "soil-temperature": 0,
    "pipeline-vibration": 1,
    "tank-pressure": 1,
    "turbidity-photodiode": 0,
}

#: Keys ``check --json`` promises, at least.
JSON_KEYS = {
    "total_noise_rms_v",
    "effective_bits",
    "noise_free_bits",
    "noise_free_counts",
    "coverage",
    "snr_db",
    "dynamic_range_db",
    "adc_range_used",
    "meets_requirement",
    "margin_bits",
    "contributors",
    "requirement",
    "design",
    "verdict",
}


@pytest.fixture
def runner():
    return CliRunner()


def write(folder: Path, name: str, text: str) -> str:
    path = folder / name
    path.write_text(text, encoding="utf-8")
    return str(path)


def no_traceback(result) -> None:
    assert result.exception is None or isinstance(result.exception, SystemExit), result.exception
    assert "Traceback" not in result.output


def strict_json(text: str):
    """json.loads that refuses NaN and Infinity, which are not JSON."""

    def refuse(name):
        raise ValueError(f"not JSON: {name}")

    return json.loads(text, parse_constant=refuse)


# ---------------------------------------------------------------------------
# check


@pytest.mark.parametrize("name", COMPLETE)
def test_check_examples_exit_as_stated(runner, tmp_path, name):
    path = write(tmp_path, f"{name}.toml", example_text(name))
    result = runner.invoke(main, ["check", path])
    no_traceback(result)
    assert result.exit_code == EXPECTED_EXIT[name], result.output
    out = result.stdout
    verdict = out.strip().splitlines()[-1]
    assert verdict.startswith("MEETS" if EXPECTED_EXIT[name] == 0 else "DOES NOT MEET")
    # conditions are always named
    for fragment in ("coverage", "k_pp", "band", "temperature", "output data rate", "reference"):
        assert fragment in out
    assert "total" in out and "share" in out


def test_check_prints_engineering_units(runner, tmp_path):
    result = runner.invoke(main, ["check", write(tmp_path, "h.toml", example_text("hive-scale"))])
    assert "in g: noise" in result.stdout
    assert "required step           10.0 g" in result.stdout  # as the report writes it


def test_verdict_line_format(runner, tmp_path):
    result = runner.invoke(main, ["check", write(tmp_path, "h.toml", example_text("hive-scale"))])
    data = strict_json(runner.invoke(main, ["check", "--json", str(tmp_path / "h.toml")]).stdout)
    margin = data["margin_bits"]
    assert result.stdout.strip().endswith(f"MEETS the requirement with {margin:.2f} bits to spare")
    text = write(tmp_path, "v.toml", example_text("pipeline-vibration"))
    out = runner.invoke(main, ["check", text]).stdout.strip().splitlines()[-1]
    assert out.startswith("DOES NOT MEET the requirement: short by ")
    assert out.endswith(" bits")


@pytest.mark.parametrize("name", COMPLETE)
def test_check_json_is_valid_with_the_promised_keys(runner, tmp_path, name):
    path = write(tmp_path, f"{name}.toml", example_text(name))
    result = runner.invoke(main, ["check", "--json", path])
    no_traceback(result)
    assert result.exit_code == EXPECTED_EXIT[name]
    data = strict_json(result.stdout)
    assert JSON_KEYS <= set(data)
    assert data["meets_requirement"] is (EXPECTED_EXIT[name] == 0)
    for c in data["contributors"]:
        assert {"name", "stage", "kind", "rms_v", "adc_rms_v", "share"} <= set(c)
    # shares of the noise power add to one (uncorrelated sources add in power)
    assert sum(c["share"] for c in data["contributors"]) == pytest.approx(1.0, rel=1e-12)
    total = math.sqrt(sum(c["rms_v"] ** 2 for c in data["contributors"]))
    assert total == pytest.approx(data["total_noise_rms_v"], rel=1e-12)
    assert len(data["design"]["sha256"]) == 64
    assert data["design"]["meta"]["title"]


def test_check_json_keys_are_stable(runner, tmp_path):
    a = write(tmp_path, "a.toml", example_text("hive-scale"))
    b = write(tmp_path, "b.toml", example_text("soil-temperature"))
    ka = list(strict_json(runner.invoke(main, ["check", "--json", a]).stdout))
    kb = list(strict_json(runner.invoke(main, ["check", "--json", b]).stdout))
    assert ka == kb


def test_check_json_with_infinite_margin_is_valid_json(runner, tmp_path):
    # An interference allowance larger than the whole budget leaves no room for
    # noise: the margin is -inf bits, written as null with the reason beside it.
    text = example_text("hive-scale").replace('interference = "20 nV"', 'interference = "1 mV"')
    result = runner.invoke(main, ["check", "--json", write(tmp_path, "h.toml", text)])
    assert result.exit_code == 1
    data = strict_json(result.stdout)
    assert data["margin_bits"] is None
    assert "minus infinity" in data["null_reasons"]["margin_bits"]
    assert data["meets_requirement"] is False
    plain = runner.invoke(main, ["check", str(tmp_path / "h.toml")])
    assert "interference allowance alone" in plain.stdout


def test_check_ascii(runner, tmp_path):
    path = write(tmp_path, "s.toml", example_text("soil-temperature"))
    result = runner.invoke(main, ["check", "--ascii", path])
    assert result.exit_code == 0
    assert result.stdout.isascii()
    assert "degC" in result.stdout


def test_check_open_design_names_every_open_part(runner, tmp_path):
    path = write(tmp_path, "k.toml", example_text("kickoff-bridge"))
    result = runner.invoke(main, ["check", path])
    no_traceback(result)
    assert result.exit_code == 2
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 3
    for field in ("stages[0]", "reference", "adc"):
        assert any(f"k.toml: {field}: " in line and "resplan plan" in line for line in lines)
    assert result.stdout == ""


HIVE = example_text("hive-scale")
#: The example's ADC noise table (invented rows), replaced whole by the cases below.
HIVE_TABLE = HIVE[HIVE.index("noise_table = [") : HIVE.index("\n]\n") + 2]
BAD_INPUT = [
    # (description, old, new, number of problem lines, fragment)
    ("wrong unit", 'resistance = "2 kohm"', 'resistance = "2 kV"', 1, "kV is a voltage"),
    ("missing field", 'resistance = "350 ohm"', "", 1, "sensor.resistance: missing"),
    ("unknown key", "bits = 24", "bitss = 24", 2, 'did you mean "bits"'),
    ("negative value", '"350 ohm"', '"-350 ohm"', 1, "> 0"),
    ("bad TOML", "bits = 24", "bits = = 24", 1, "bad TOML syntax"),
    (
        "p-p noise without factor",
        HIVE_TABLE,
        'noise_pp = "300 nV"\nnoise_data_rate = "10 Hz"',
        1,
        "pp_factor",
    ),
    ("ratio not integer", '"64 kHz"', '"64.001 kHz"', 1, "whole decimation ratio"),
    (
        "noise at another data rate",
        HIVE_TABLE,
        'noise = "45 nV"\nnoise_data_rate = "5 Hz"',
        1,
        "scale_with_rate",
    ),
]


@pytest.mark.parametrize(
    ("old", "new", "count", "fragment"),
    [case[1:] for case in BAD_INPUT],
    ids=[case[0] for case in BAD_INPUT],
)
def test_bad_input_exits_2_with_one_line_per_problem(runner, tmp_path, old, new, count, fragment):
    assert HIVE.count(old) == 1
    path = write(tmp_path, "bad.toml", HIVE.replace(old, new))
    for args in (["check", path], ["check", "--json", path]):
        result = runner.invoke(main, args)
        no_traceback(result)
        assert result.exit_code == 2
        lines = result.stderr.strip().splitlines()
        assert len(lines) == count, lines
        assert all(line.startswith(f"error: {path}") for line in lines), lines
        assert any(fragment in line for line in lines), lines
        assert result.stdout == ""


def test_two_problems_give_two_lines(runner, tmp_path):
    text = HIVE.replace('"350 ohm"', '"-350 ohm"').replace('"10 nF"', '"10 nV"')
    result = runner.invoke(main, ["check", write(tmp_path, "two.toml", text)])
    assert result.exit_code == 2
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 2
    assert "sensor.resistance" in lines[0] and "stages[0].capacitance" in lines[1]


def test_chain_problem_found_at_check_is_one_line_naming_the_file(runner, tmp_path):
    # Valid field by field, but nothing bounds the analog noise band before sampling.
    text = example_text("soil-temperature")
    start = text.index("\n[[stages]]")
    end = text.index("\n[reference]")
    path = write(tmp_path, "nobw.toml", text[:start] + text[end:])
    result = runner.invoke(main, ["check", path])
    no_traceback(result)
    assert result.exit_code == 2
    (line,) = result.stderr.strip().splitlines()
    assert line.startswith(f"error: {path}: ") and "no band limit" in line


def test_missing_design_file_is_one_line(runner, tmp_path):
    missing = str(tmp_path / "nothere.toml")
    result = runner.invoke(main, ["check", missing])
    no_traceback(result)
    assert result.exit_code == 2
    assert result.stderr == f"error: {missing}: no such design file\n"


def test_usage_errors_exit_2(runner):
    assert runner.invoke(main, ["check"]).exit_code == 2
    assert runner.invoke(main, ["check", "--nope", "x.toml"]).exit_code == 2
    assert runner.invoke(main, ["nocommand"]).exit_code == 2


# ---------------------------------------------------------------------------
# init


def test_init_writes_the_default_example(runner, tmp_path, monkeypatch):
    # `init` with no target writes into the working folder: run it from an empty one.
    monkeypatch.chdir(tmp_path)
    result = runner.invoke(main, ["init"])
    assert result.exit_code == 0, result.output
    written = (tmp_path / "hive-scale.toml").read_text(encoding="utf-8")
    assert written == example_text("hive-scale")
    assert "resplan check hive-scale.toml" in result.stdout
    assert runner.invoke(main, ["check", "hive-scale.toml"]).exit_code == 0
    # no temporary files left behind
    assert sorted(p.name for p in tmp_path.iterdir()) == ["hive-scale.toml"]


def test_init_refuses_to_overwrite_and_force_writes(runner, tmp_path):
    target = tmp_path / "mine.toml"
    target.write_text("# my own design\n", encoding="utf-8")
    result = runner.invoke(main, ["init", "--example", "soil-temperature", str(target)])
    no_traceback(result)
    assert result.exit_code == 2
    assert result.stderr == f"error: {target}: exists; use --force to overwrite it\n"
    assert target.read_text(encoding="utf-8") == "# my own design\n"
    result = runner.invoke(main, ["init", "-e", "soil-temperature", "--force", str(target)])
    assert result.exit_code == 0
    assert target.read_text(encoding="utf-8") == example_text("soil-temperature")


def test_init_list_names_every_example(runner):
    result = runner.invoke(main, ["init", "--list"])
    assert result.exit_code == 0
    lines = result.stdout.strip().splitlines()
    assert [line.split()[0] for line in lines] == list(EXAMPLE_NAMES)
    assert all("invented" in line for line in lines)


def test_init_unknown_example_suggests(runner, tmp_path):
    result = runner.invoke(main, ["init", "-e", "hive-scal", str(tmp_path / "x.toml")])
    assert result.exit_code == 2
    assert 'did you mean "hive-scale"' in result.stderr
    assert not (tmp_path / "x.toml").exists()


def test_init_into_a_missing_folder(runner, tmp_path):
    result = runner.invoke(main, ["init", str(tmp_path / "no" / "such" / "d.toml")])
    no_traceback(result)
    assert result.exit_code == 2
    assert "no such folder" in result.stderr


# ---------------------------------------------------------------------------
# schema, help, version


def test_schema_is_json_schema_of_the_format(runner):
    result = runner.invoke(main, ["schema"])
    assert result.exit_code == 0
    schema = strict_json(result.stdout)
    assert schema["title"] == "resplan design file"
    assert {"requirement", "sensor", "adc", "stages"} <= set(schema["properties"])


@pytest.mark.parametrize("command", [[], ["init"], ["check"], ["schema"]])
def test_help_has_an_example(runner, command):
    result = runner.invoke(main, [*command, "--help"])
    assert result.exit_code == 0
    assert "resplan " in result.stdout and (
        "Example" in result.stdout or "example" in result.stdout
    )


def test_help_carries_the_safety_caution(runner):
    result = runner.invoke(main, ["--help"])
    assert "mains or high voltage" in result.stdout
    assert "local codes" in result.stdout


def test_version(runner):
    result = runner.invoke(main, ["--version"])
    assert result.exit_code == 0
    assert __version__ in result.stdout


# ---------------------------------------------------------------------------
# plan and report


@pytest.mark.parametrize("name", EXAMPLE_NAMES)
def test_plan_runs_on_every_example(runner, tmp_path, name):
    result = runner.invoke(main, ["plan", write(tmp_path, "d.toml", example_text(name))])
    no_traceback(result)
    assert result.exit_code in (0, 1), result.output
    last = result.stdout.strip().splitlines()[-1]
    assert last.startswith("FEASIBLE" if result.exit_code == 0 else "INFEASIBLE")
    # Conditions are named in every output: coverage with k_pp, band, temperature.
    assert "k_pp" in result.stdout and "f_low" in result.stdout and "K)" in result.stdout


def test_plan_of_the_kickoff_example_sizes_every_open_part(runner, tmp_path):
    path = write(tmp_path, "k.toml", example_text("kickoff-bridge"))
    result = runner.invoke(main, ["plan", path, "--json"])
    assert result.exit_code == 0, result.output
    data = json.loads(result.stdout)
    assert data["feasible"] is True
    parts = {a["part"] for a in data["allocations"]}
    assert len(parts) >= 3
    assert parts <= {r["part"] for r in data["requirements"]}
    for key in ("allowed_total_rms_v", "fixed_rms_v", "remaining_rms_v", "assumptions", "levers"):
        assert key in data
    # Equal power by default unless the file sets weights; shares add up to 1.
    assert sum(a["share"] for a in data["allocations"]) == pytest.approx(1.0)


def test_plan_weights_option_changes_shares(runner, tmp_path):
    path = write(tmp_path, "k.toml", example_text("kickoff-bridge"))
    data = json.loads(runner.invoke(main, ["plan", path, "--json", "--weights", "adc=3"]).stdout)
    by_place = {a["field_path"]: a for a in data["allocations"]}
    assert by_place["adc"]["weight"] == 3


@pytest.mark.parametrize(
    "weights, fragment",
    [
        ("nothing=2", "weights.nothing"),
        ("adc=-1", "a weight ≥ 0"),
        ("adc", "NAME=NUMBER"),
    ],
)
def test_plan_bad_weights_exit_2_one_line(runner, tmp_path, weights, fragment):
    path = write(tmp_path, "k.toml", example_text("kickoff-bridge"))
    result = runner.invoke(main, ["plan", path, "--weights", weights])
    no_traceback(result)
    assert result.exit_code == 2
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and fragment in lines[0]


def test_plan_infeasible_exits_1_with_levers(runner, tmp_path):
    text = example_text("kickoff-bridge").replace('resolution = "10 g"', 'resolution = "0.05 g"')
    assert "0.05 g" in text
    result = runner.invoke(main, ["plan", write(tmp_path, "k.toml", text)])
    no_traceback(result)
    assert result.exit_code == 1
    out = result.stdout
    assert "Why it cannot be met" in out and "fixed parts alone" in out
    for lever in ("larger span", "lower source resistance", "longer averaging"):
        assert lever in out


def test_plan_missing_file_exit_2(runner, tmp_path):
    result = runner.invoke(main, ["plan", str(tmp_path / "nope.toml")])
    no_traceback(result)
    assert result.exit_code == 2
    assert len(result.stderr.strip().splitlines()) == 1


def test_report_without_design_writes_the_hive_scale_appendix(runner, tmp_path):
    out = tmp_path / "r.pdf"
    result = runner.invoke(main, ["report", "-o", str(out)])
    assert result.exit_code == 0, result.output
    text = "".join(page.extract_text() for page in PdfReader(out).pages)
    assert "Beehive scale" in text and "IEC 61010-1" in text
    # Permissions follow the umask, not the private mode of a temporary file.
    mask = os.umask(0)
    os.umask(mask)
    assert out.stat().st_mode & 0o777 == 0o666 & ~mask


def test_report_letter_with_figures(runner, tmp_path):
    design = write(tmp_path, "p.toml", example_text("pipeline-vibration"))
    out = tmp_path / "p.pdf"
    figs = tmp_path / "figs"
    figs.mkdir()
    result = runner.invoke(
        main, ["report", design, "-o", str(out), "--paper", "letter", "--figures", str(figs)]
    )
    assert result.exit_code == 0, result.output
    box = PdfReader(out).pages[0].mediabox
    assert (round(float(box.width)), round(float(box.height))) == (612, 792)  # US Letter, points
    assert sorted(p.suffix for p in figs.iterdir()) and any(
        p.suffix == ".svg" for p in figs.iterdir()
    )


def test_report_bad_design_leaves_no_file(runner, tmp_path):
    bad = write(tmp_path, "bad.toml", "[requirement]\nspan = 'ten millivolts'\n")
    out = tmp_path / "r.pdf"
    out.write_bytes(b"old report")
    result = runner.invoke(main, ["report", bad, "-o", str(out)])
    no_traceback(result)
    assert result.exit_code == 2
    assert out.read_bytes() == b"old report"
    assert [p.name for p in tmp_path.iterdir() if p.name.startswith(".")] == []


ALL_OPEN = """
# Every part open: an invented bridge at the first day of a project.
[meta]
title = "every part open (invented)"

[requirement]
span = "10 mV"
noise_free_counts = 20000
f_low = "0.01 Hz"
data_rate = "10 Hz"

[sensor]
resistance = "350 ohm"

[[stages]]
type = "amplifier"
name = "front end"
open = true

[[stages]]
type = "active_filter"
name = "anti-alias filter"
open = true

[[stages]]
type = "amplifier"
name = "driver"
open = true
gain = 1

[reference]
open = true
voltage = "2.5 V"

[adc]
open = true
architecture = "delta-sigma"
full_scale_range = "5 V"
sample_rate = "256 kHz"
data_rate = "10 Hz"

[digital]
decimation = "sinc3"
"""


def test_plan_with_every_part_open(runner, tmp_path):
    path = write(tmp_path, "open.toml", ALL_OPEN)
    result = runner.invoke(main, ["plan", path])
    no_traceback(result)
    assert result.exit_code == 0, result.output
    data = json.loads(runner.invoke(main, ["plan", path, "--json"]).stdout)
    kinds = sorted(a["kind"] for a in data["allocations"])
    assert kinds == ["adc", "amplifier", "amplifier", "filter", "reference"]
    quantities = " | ".join(r["quantity"] for r in data["requirements"])
    for figure in (
        "white voltage noise e_n",
        "output noise density",
        "attenuation at",
        "order for a cut-off",
        "input-referred noise peak-to-peak",
        "effective resolution",
        "noise relative to V_ref",
        "front-end gain the ADC range allows",
    ):
        assert figure in quantities
    # A delta-sigma ADC is asked only for what its data sheet quotes per data rate.
    assert "SNR" not in quantities and "ENOB" not in quantities
    assert "transition noise" not in quantities
    # Every assumption the planner made is stated.
    assumed = " ".join(data["assumptions"])
    assert "gain not stated" in assumed and "cut-off not stated" in assumed


def test_sensor_offset_outside_the_adc_window_does_not_meet(runner, tmp_path):
    # The soil example's RTD sits 92.3 mV above zero; 150 mV × 20 leaves a 0 … 2.5 V window.
    text = example_text("soil-temperature")
    assert 'offset = "92.3 mV"' in text
    path = write(tmp_path, "s.toml", text.replace('offset = "92.3 mV"', 'offset = "150 mV"'))
    result = runner.invoke(main, ["check", path])
    no_traceback(result)
    assert result.exit_code == 1
    assert "input window" in result.stdout
    assert result.stdout.strip().splitlines()[-1].startswith("DOES NOT MEET")
    data = strict_json(runner.invoke(main, ["check", "--json", path]).stdout)
    assert data["outside_adc_window"] is True and data["meets_requirement"] is False


def test_adc_polarity_that_contradicts_the_input_range_is_refused(runner, tmp_path):
    text = example_text("soil-temperature").replace("[adc]\n", '[adc]\npolarity = "bipolar"\n', 1)
    result = runner.invoke(main, ["check", write(tmp_path, "s.toml", text)])
    no_traceback(result)
    assert result.exit_code == 2
    assert "adc.polarity" in result.stderr and "unipolar" in result.stderr


def test_stated_interferer_is_checked_through_the_chain(runner, tmp_path):
    # pipeline-vibration states 20 mV at 190 kHz; sampled at 200 kHz it lands at 10 kHz
    # (|f − f_s|, DOMAIN §4) and the anti-alias filter must bring it under the allowance.
    text = example_text("pipeline-vibration")
    path = write(tmp_path, "p.toml", text)
    data = strict_json(runner.invoke(main, ["check", "--json", path]).stdout)
    alias = data["interferer"]
    assert alias["alias_hz"] == pytest.approx(10e3)
    assert alias["residue_v"] == pytest.approx(
        alias["amplitude_v"] * 10 ** (-(alias["analog_db"] + alias["digital_db"]) / 20)
    )
    assert alias["within_allowance"] is True
    loud = text.replace('amplitude = "20 mV"', 'amplitude = "2 V"')
    result = runner.invoke(main, ["check", write(tmp_path, "loud.toml", loud)])
    assert "EXCEEDS" in result.stdout
    assert (
        strict_json(runner.invoke(main, ["check", "--json", str(tmp_path / "loud.toml")]).stdout)[
            "interferer"
        ]["within_allowance"]
        is False
    )
    # Examples that state no interferer carry a null.
    hive = write(tmp_path, "h.toml", example_text("hive-scale"))
    assert strict_json(runner.invoke(main, ["check", "--json", hive]).stdout)["interferer"] is None


def test_unbounded_noise_band_names_the_table(runner, tmp_path):
    # Without gbw and without the RC, nothing bounds the noise of a raw SAR: white noise
    # of unlimited bandwidth aliases without end, so this is bad input, not a number.
    text = example_text("soil-temperature").replace('gbw = "1.5 MHz"\n', "")
    start = text.index('[[stages]]\ntype = "rc_filter"')
    text = text[:start] + text[text.index("\n[reference]\n", start) + 1 :]
    result = runner.invoke(main, ["check", write(tmp_path, "u.toml", text)])
    no_traceback(result)
    assert result.exit_code == 2
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1
    assert lines[0].startswith("error: ") and "u.toml: sensor: " in lines[0]
    assert "analog bandwidth" in lines[0]
