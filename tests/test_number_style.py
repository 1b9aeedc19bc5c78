"""Numbers for people are written one way: engineering prefixes, no exponents.

The formatter table checks the cases the output must read (SI Brochure, 9th
ed., BIPM 2019, Table 7 for the prefixes; three significant digits is the
house style, common practice, no source). The scan runs ``check``, ``plan``
and ``report`` on every embedded example and refuses any number written with
an exponent ("1.632e+04 Hz") or a run of five or more digits before a unit
("200000 Hz"); grouped counts such as "16,384" are fine.
"""

from __future__ import annotations

import json
import re

import pypdf
import pytest
from click.testing import CliRunner

from resplan.cli import main
from resplan.designfile.examples import EXAMPLE_NAMES, example_text
from resplan.designfile.load import loads_design
from resplan.output.report import write_report
from resplan.units.formatting import format_percent, format_si


@pytest.mark.parametrize(
    ("value", "unit", "expected"),
    [
        (200e3, "Hz", "200 kHz"),
        (1.632e4, "Hz", "16.3 kHz"),
        (0.15625, "V", "156 mV"),
        (1e6, "Hz", "1.00 MHz"),
        (256e3, "Hz", "256 kHz"),
        (78.125e-3, "V", "78.1 mV"),
        (1e-15, "V", "1.00 fV"),
        (10.0, "Hz", "10.0 Hz"),
    ],
)
def test_formatter_writes_engineering_prefixes(value, unit, expected):
    text = format_si(value, unit)
    assert text == expected
    assert not re.search(r"\d[eE][+-]?\d", text)


def test_tiny_percent_is_a_floor_not_an_exponent():
    assert format_percent(3.13e-8) == "< 0.0001 %"
    assert format_percent(0.00674e-2) == "0.00674 %"


# An exponent, or five or more ungrouped integer digits before a unit. Hex digests
# (the design's SHA-256, 8 or more hex digits) are removed first; digits after a
# decimal point or inside a word do not count.
_BAD = re.compile(
    r"(?<![\w.,])\d+(?:\.\d+)?[eE][+-]?\d+\b"
    r"|(?<![\w.,])\d{5,}(?:\.\d+)? ?[a-zA-Zµ°%Ω]"
)
_DIGEST = re.compile(r"\b(?=[0-9a-f]*[a-f])(?=[0-9a-f]*[0-9])[0-9a-f]{8,}")


def _bad_numbers(text: str) -> list[str]:
    return [m.group() for m in _BAD.finditer(_DIGEST.sub("", text))]


def _strings(node) -> list[str]:
    if isinstance(node, str):
        return [node]
    if isinstance(node, dict):
        return [s for v in node.values() for s in _strings(v)]
    if isinstance(node, list):
        return [s for v in node for s in _strings(v)]
    return []


@pytest.mark.parametrize("name", EXAMPLE_NAMES)
def test_check_and_plan_text_write_no_exponent_and_no_long_digit_run(name, tmp_path):
    path = tmp_path / f"{name}.toml"
    path.write_text(example_text(name), encoding="utf-8")
    runner = CliRunner()
    for args in (["check", str(path)], ["plan", str(path)]):
        result = runner.invoke(main, args)
        assert result.exit_code in (0, 1, 2), result.output  # 2: open parts
        assert _bad_numbers(result.output) == [], (args, result.output)
    result = runner.invoke(main, ["check", str(path), "--json"])
    if result.exit_code == 2:  # open parts: a one-line message, no JSON document
        assert _bad_numbers(result.output) == []
        return
    strings = _strings(json.loads(result.output))  # message strings; numbers stay numbers
    assert _bad_numbers("\n".join(strings)) == []


@pytest.mark.parametrize("name", EXAMPLE_NAMES)
def test_report_text_writes_no_exponent_and_no_long_digit_run(name, tmp_path):
    design = loads_design(example_text(name), f"{name}.toml")
    path = write_report(design, tmp_path / "r.pdf", dpi=50, sweep_counts=(1, 2, 4))
    text = " ".join(page.extract_text() for page in pypdf.PdfReader(str(path)).pages)
    assert _bad_numbers(text) == []
