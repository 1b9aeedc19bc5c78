"""Numbers for people go through resplan.units.formatting, on every path.

An AST walk over ``resplan/`` refuses a number format that writes exponents or
drops the unit's prefix (``f"{x:.3g}"``, ``format(x, "g")``, ``"%e" % x``,
``"{:g}".format(x)``) anywhere but ``units/formatting.py``, or on a line that
carries the reviewed allow-list comment ``# number-format: reviewed (why)``
(a value written back for a reader, not for a person). Then a sample of the
messages the walk moved onto the formatter is triggered and its text checked.

The expected texts are this project's conventions: engineering prefixes (SI
Brochure, 9th ed., BIPM 2019, Table 7), three significant digits (common
practice, no source), whole dimensionless numbers written whole.
"""

from __future__ import annotations

import ast
import math
import re
from pathlib import Path

import numpy as np
import pytest
from invented import invented_bridge_chain

import resplan
from resplan import Sensor
from resplan.chain.converter import NoiseTable, SnrNoise
from resplan.chain.signal_chain import Band
from resplan.errors import ResplanError
from resplan.noise.netlist import Resistor
from resplan.noise.nodal import Stability
from resplan.plan.limits import PartRequirement
from resplan.plan.tables import format_limit
from resplan.units.formatting import format_complex, format_number, format_si

PACKAGE = Path(resplan.__file__).parent
FORMATTER = PACKAGE / "units" / "formatting.py"
REVIEWED = "# number-format: reviewed"

# Presentation types that bypass the formatter: exponent or general notation
# (g, e), locale digits (n) and Python's own percent (%).
_SPEC_TYPE = re.compile(r"[gGeEn%]$")
_PERCENT_SPEC = re.compile(r"%[-+ #0]*(?:\d+|\*)?(?:\.(?:\d+|\*))?[gGeE]")
_BRACE_SPEC = re.compile(r"\{[^{}]*:[^{}]*[gGeEn%]\}")


def _spec_text(spec: ast.JoinedStr) -> str:
    return "".join(v.value for v in spec.values if isinstance(v, ast.Constant))


def _bare_specs(tree: ast.AST) -> list[tuple[int, int, str]]:
    """(first line, last line, what) of each format that bypasses the formatter."""
    found = []
    for node in ast.walk(tree):
        span = (node.lineno, node.end_lineno) if hasattr(node, "lineno") else None
        if isinstance(node, ast.JoinedStr):
            for v in node.values:
                if isinstance(v, ast.FormattedValue) and v.format_spec is not None:
                    spec = _spec_text(v.format_spec)
                    if _SPEC_TYPE.search(spec):
                        found.append((*span, f"f-string spec {spec!r}"))
        elif isinstance(node, ast.Call):
            f = node.func
            if isinstance(f, ast.Name) and f.id == "format" and len(node.args) == 2:
                spec = node.args[1]
                if not isinstance(spec, ast.Constant) or _SPEC_TYPE.search(str(spec.value)):
                    found.append((*span, "format(value, spec)"))
            elif (
                isinstance(f, ast.Attribute)
                and f.attr == "format"
                and isinstance(f.value, ast.Constant)
                and isinstance(f.value.value, str)
                and _BRACE_SPEC.search(f.value.value)
            ):
                found.append((*span, "str.format spec"))
        elif (
            isinstance(node, ast.BinOp)
            and isinstance(node.op, ast.Mod)
            and isinstance(node.left, ast.Constant)
            and isinstance(node.left.value, str)
            and _PERCENT_SPEC.search(node.left.value)
        ):
            found.append((*span, "%-format"))
    return found


def _unreviewed(source: str) -> list[tuple[int, str]]:
    lines = source.splitlines()
    out = []
    for first, last, what in _bare_specs(ast.parse(source)):
        if not any(REVIEWED in lines[i - 1] for i in range(first, last + 1)):
            out.append((first, what))
    return out


@pytest.mark.parametrize(
    "source",
    [
        'x = f"{v:.3g} V"',
        'x = f"{v:g}"',
        'x = f"{v:+.4e}j"',
        'x = f"{v:.{n}g}"',
        'x = f"{v:.1%}"',
        'x = format(v, ".3g")',
        'x = format(v, spec)',
        'x = "%g Hz" % v',
        'x = "%.3e" % (v,)',
        'x = "{:.3g} Hz".format(v)',
        'x = "{0:e}".format(v)',
    ],
)
def test_the_walk_finds_each_way_of_writing_a_bare_number(source):
    assert len(_unreviewed(source)) == 1


@pytest.mark.parametrize(
    "source",
    [
        'x = f"{v:.3f} dB"',
        'x = f"{v:>8}"',
        'x = f"{n:d} of {m:,d}"',
        'x = "%s" % v',
        'x = "%d %%" % v',
        'x = "{} Hz".format(v)',
        '"""Docstring: 10 % easier, %g in prose."""',
        'x = f"{v:.15g}"  # number-format: reviewed (read back by the parser)',
    ],
)
def test_the_walk_lets_house_formats_and_reviewed_lines_pass(source):
    assert _unreviewed(source) == []


def test_no_number_format_outside_the_formatter():
    problems = []
    for path in sorted(PACKAGE.rglob("*.py")):
        if path == FORMATTER:
            continue
        for line, what in _unreviewed(path.read_text(encoding="utf-8")):
            problems.append(f"{path.relative_to(PACKAGE.parent)}:{line}: {what}")
    assert problems == [], (
        "write numbers for people through resplan.units.formatting "
        f"(or mark a machine-read value {REVIEWED!r}):\n" + "\n".join(problems)
    )


# --- the one rule for plain numbers -------------------------------------------


@pytest.mark.parametrize(
    ("value", "unit", "digits", "expected"),
    [
        (1.0, "V/V", 3, "1 V/V"),
        (500.0, "V/V", 3, "500 V/V"),
        (1 + 1e-15, "V/V", 3, "1 V/V"),  # arithmetic noise on a whole gain
        (2.5, "V/V", 3, "2.50 V/V"),
        (48.7321, "V/V", 4, "48.73 V/V"),
        (16384.0, "", 3, "16,384"),
        (0.7071068, "", 3, "0.707"),
        (6.5792, "", 3, "6.58"),  # k_pp at 99.9 % coverage, JCGM 100:2008 G.1
        (1.778279, "", 4, "1.778"),
        (-2.0, "", 3, "-2"),
    ],
)
def test_plain_numbers_are_written_whole_or_to_significant_digits(value, unit, digits, expected):
    assert format_number(value, unit, digits) == expected
    if unit == "V/V":
        assert format_si(value, unit, digits) == expected  # gains follow the same rule


def test_a_pole_is_written_with_prefixes_on_each_part():
    assert format_complex(complex(2.0e3, 5.0e5), "Hz") == "2.000 kHz + j 500.0 kHz"
    assert format_complex(complex(3.0, 0.0), "Hz") == "3.000 Hz"


# --- a sample of the messages moved onto the formatter ------------------------

_EXPONENT = re.compile(r"\d[eE][+-]?\d")


def test_unstable_poles_are_listed_with_prefixes():
    s = 2 * math.pi * complex(1.5e3, 2.0e4)
    text = Stability(np.array([s, s.conjugate()])).describe()
    assert text == "unstable or marginal: poles at 1.500 kHz + j 20.00 kHz, 1.500 kHz - j 20.00 kHz"


def test_a_missing_table_rate_lists_the_rates_with_prefixes():
    table = NoiseTable(((10.0, 1e-6), (1.0e3, 4e-6)))
    with pytest.raises(ResplanError) as caught:
        table.rms_at(50.0, 1.0)
    assert "a data rate listed in the table (10.0 Hz, 1.00 kHz)" in str(caught.value)


def test_an_snr_note_writes_the_level_in_db():
    _, how = SnrNoise(84.25).rms(5.0, 1e5)
    assert how == "from SNR 84.2 dB"  # format_db: one decimal, half to even


def test_a_circuit_bound_is_a_plain_number():
    with pytest.raises(ResplanError) as caught:
        Resistor("R1", "a", "b", -5.0)
    message = str(caught.value)
    assert "> 0 in" in message and not _EXPONENT.search(message)


@pytest.mark.parametrize(
    ("value", "unit", "expected"),
    [
        (1.0, "V/V", "≤ 1 V/V"),
        (48.7321, "V/V", "≤ 48.73 V/V"),
        (0.123456, "ppm", "≤ 0.1235 ppm"),
        (64.0, "", "≤ 64"),
    ],
)
def test_plan_limits_follow_the_rule(value, unit, expected):
    row = PartRequirement("amp", "stages[0]", "gain", value, unit, "max")
    assert format_limit(row) == expected


def test_adc_overload_warning_says_percent_of_range():
    # INVENTED: a 50 mV span through the bridge chain's gain of 128 is 6.4 V into 5 V p-p
    sensor = Sensor(span_v=50e-3, resistance_ohm=350.0, name="invented bridge")
    budget = resplan.forward_budget(invented_bridge_chain(sensor=sensor), Band(0.01))
    warning = next(w for w in budget.warnings if "full-scale range" in w)
    assert warning.startswith("the sensor span at the ADC is 128 % of its full-scale range"), (
        warning
    )
