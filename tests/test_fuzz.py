"""A quick fuzz run in the suite: mutated INVENTED examples give a result or a ResplanError.

hypothesis picks an embedded example, a field in it and a hostile value (any
float, subnormal and huge ones included, text with a unit, nested arrays,
tables, dates, control characters) and runs the design through reading and the
forward budget. Whatever the input, the outcome is a budget with finite
figures or a :class:`resplan.errors.ResplanError` whose message has one line per
problem: never another exception, never a warning (``filterwarnings = error``).
The long campaign is ``benchmarks/fuzz_campaign.py``.
"""

from __future__ import annotations

import math
import re

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from resplan.designfile.examples import EXAMPLE_NAMES, example_text
from resplan.designfile.load import check_design, loads_design
from resplan.errors import ResplanError

_ASSIGN = re.compile(r"^(?P<key>[A-Za-z0-9_]+)\s*=\s*(?P<value>.*)$", re.MULTILINE)
UNITS = [
    "Hz",
    "kHz",
    "V",
    "nV",
    "nV/rtHz",
    "pA/rtHz",
    "ohm",
    "kohm",
    "F",
    "nF",
    "K",
    "degC",
    "%",
    "mV/V",
    "dB",
    "",
    "furlong",
    "V p-p",
]


def _toml_float(x: float) -> str:
    if math.isnan(x):
        return "nan"
    if math.isinf(x):
        return "inf" if x > 0 else "-inf"
    return repr(x)


def _escape(text: str) -> str:
    return "".join(c if c.isprintable() and c not in '"\\' else f"\\u{ord(c):04x}" for c in text)


values = st.one_of(
    st.floats().map(_toml_float),
    st.integers(min_value=-(2**63), max_value=2**63 - 1).map(str),
    st.tuples(st.floats(allow_nan=False, allow_infinity=False), st.sampled_from(UNITS)).map(
        lambda t: f'"{t[0]!r} {t[1]}"'
    ),
    st.text(max_size=40).map(lambda s: f'"{_escape(s)}"'),
    st.sampled_from(
        [
            "true",
            "2024-05-01T10:00:00",
            "[]",
            "{}",
            '{ type = "rc_filter" }',
            "[[[[1]]]]",
            '["1 Hz", "1e308 Hz"]',
            '"1e-320 Hz"',
            '"' + "x" * 2000 + '"',
        ]
    ),
)


@settings(
    max_examples=150,
    deadline=None,
    suppress_health_check=[HealthCheck.too_slow],
)
@given(
    name=st.sampled_from(EXAMPLE_NAMES),
    pick=st.integers(min_value=0, max_value=10_000),
    value=values,
)
def test_a_mutated_example_gives_a_result_or_one_line_problems(name, pick, value):
    text = example_text(name)
    fields = list(_ASSIGN.finditer(text))
    m = fields[pick % len(fields)]
    mutated = text[: m.start()] + f"{m.group('key')} = {value}" + text[m.end() :]
    try:
        design = loads_design(mutated, "fuzz.toml")
        if design.is_complete:
            budget = check_design(design)
            assert math.isfinite(budget.total_rms_v)
    except ResplanError as err:
        for line in str(err).split("\n"):
            assert line and len(line.splitlines()) == 1, line


@pytest.mark.parametrize("name", EXAMPLE_NAMES)
def test_every_example_reads_cleanly(name):
    design = loads_design(example_text(name), f"{name}.toml")
    if design.is_complete:
        assert math.isfinite(check_design(design).total_rms_v)
