"""`resplan plan` and `resplan report` through click's CliRunner.

The scenarios are the embedded invented examples. Exit codes follow the
project's rule: 0 success (feasible), 1 infeasible, 2 bad input with one line
per problem and no traceback.
"""

from __future__ import annotations

import json
import os
from pathlib import Path

import pytest
from click.testing import CliRunner
from pypdf import PdfReader

from resplan.cli import main
from resplan.examples import EXAMPLE_NAMES, example_text


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
        "SNR",
        "ENOB",
        "noise relative to V_ref",
        "front-end gain the ADC range allows",
    ):
        assert figure in quantities
    # Every assumption the planner made is stated.
    assumed = " ".join(data["assumptions"])
    assert "gain not stated" in assumed and "cut-off not stated" in assumed
