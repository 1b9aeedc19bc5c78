"""The pint-free path for common units gives exactly what pint gives.

resplan.units.parse reads the common unit expressions from its own tables
(resplan.units.tables) and every other one through pint. The outside reference
here is pint 0.2x itself, driven by resplan/units.txt as before the tables
existed: with the private switch ``_set_fast_path(False)`` every expression
goes to pint, and each check below asks for the same outcome both ways, to
the bit: the same SI float, the same base-unit string, or the same error
message. Prefix values are also checked against scipy.constants (SI Brochure
9th ed., Table 7).

Spellings compared: every prefix × unit of the tables in several forms, every
quantity in the embedded examples and examples/minimal.toml (read with
tomllib), and combinations drawn by hypothesis, mixing table units with units
only pint knows, roots, exponents, products and quotients.
"""

from __future__ import annotations

import contextlib
import subprocess
import sys
import tomllib
from pathlib import Path

import pytest
import scipy.constants as sc
from hypothesis import given, settings
from hypothesis import strategies as st

from resplan.errors import DesignError
from resplan.units import parse as units
from resplan.units import tables as unittables
from resplan.units.parse import DIMENSIONS, parse_any, parse_percent, parse_quantity, same_dimension

ROOT = Path(__file__).parents[1]
EXAMPLE_FILES = sorted((ROOT / "resplan" / "designfile" / "examples").glob("*.toml")) + [
    ROOT / "examples" / "minimal.toml"
]


@contextlib.contextmanager
def pint_only():
    """Every unit expression through pint, as before the tables existed."""
    previous = units._set_fast_path(False)
    try:
        yield
    finally:
        units._set_fast_path(previous)


def _outcome(parse, *args):
    """What a user sees: the exact float (or tuple), or the error message."""
    try:
        result = parse(*args)
    except DesignError as error:
        return ("error", str(error))
    if isinstance(result, tuple):
        return ("value", repr(result[0]), result[1])
    return ("value", repr(result))


def _outcomes(value) -> list:
    """Outcomes of every parser and every dimension for one value."""
    out = [_outcome(parse_any, value, "f"), _outcome(parse_percent, value, "f")]
    out += [_outcome(parse_quantity, value, name, "f") for name in DIMENSIONS]
    return out


def _unit_outcomes(unit: str) -> list:
    out = [_outcome(same_dimension, unit, DIMENSIONS[name].si_unit) for name in DIMENSIONS]
    return out + [_outcome(same_dimension, unit, "psi")]  # psi: a unit only pint reads


def _both(function, value):
    fast = function(value)
    with pint_only():
        reference = function(value)
    return fast, reference


@contextlib.contextmanager
def counting_pint_calls(monkeypatch):
    """Count the calls that would need pint (the registry or pint's unit reading)."""
    calls = []
    registry, pint_info = units._registry, units._pint_unit_info

    def counted_registry():
        calls.append("registry")
        return registry()

    def counted_info(expression):
        calls.append(expression)
        return pint_info(expression)

    monkeypatch.setattr(units, "_registry", counted_registry)
    monkeypatch.setattr(units, "_pint_unit_info", counted_info)
    units._set_fast_path(True)  # empty the caches, so nothing is answered from them
    yield calls


# --- the tables themselves, against pint and scipy -----------------------------


def test_prefixes_are_the_si_values():
    # SI Brochure 9th ed., Table 7, as listed by scipy.constants
    names = {
        "a": sc.atto, "f": sc.femto, "p": sc.pico, "n": sc.nano, "µ": sc.micro,
        "μ": sc.micro, "u": sc.micro, "m": sc.milli, "c": sc.centi, "d": sc.deci,
        "da": sc.deka, "h": sc.hecto, "k": sc.kilo, "M": sc.mega, "G": sc.giga,
        "T": sc.tera,
    }  # fmt: skip
    assert set(unittables._PREFIXES) == set(names)
    for prefix, value in names.items():
        assert float(unittables._PREFIXES[prefix]) == value, prefix


def test_every_table_name_has_one_reading_in_pint():
    ureg = units._registry()
    for name in [*unittables.spellings(), *unittables._OFFSET_UNITS]:
        assert len(ureg.parse_unit_name(name)) == 1, name


@pytest.mark.parametrize("name", sorted(DIMENSIONS))
def test_si_unit_has_the_stated_dimensionality(name):
    # pint's reading of the dimensionality text of DIMENSIONS is the reference
    fast = units._target(name)
    with pint_only():
        reference = units._target(name)
    assert fast == reference


def test_dimension_vector_refuses_unknown_base():
    with pytest.raises(ValueError):
        unittables.dimension_vector({"[money]": 1})


# --- every prefix × unit of the tables -------------------------------------------

TABLE_NAMES = sorted([*unittables.spellings(), *unittables._OFFSET_UNITS])
# Forms the tables must read without pint, for every table unit; the rest of
# FORMS may go to pint for some units (1/gn is no short decimal; pint's
# round-off on powers of scaled units can exceed what the tables accept).
FAST_FORMS = ("1.5 {}", "-40 {}", "4.5 {}/√Hz", "2 {}/rtHz", "2 {}/V", "3 {}/s", "3 {} s")
FORMS = FAST_FORMS + ("3 {}^2", "3 {}²", "7 1/{}", "1 {}/√(kHz)", "1 {}^-3")


@pytest.mark.parametrize("name", TABLE_NAMES)
def test_table_spelling_agrees_with_pint(name):
    for form in FORMS:
        text = form.format(name)
        fast, reference = _both(_outcomes, text)
        assert fast == reference, text
    fast, reference = _both(_unit_outcomes, name)
    assert fast == reference, name


@pytest.mark.parametrize("name", TABLE_NAMES)
def test_table_spelling_reads_without_pint(name, monkeypatch):
    # degC and degF inside a product follow pint's offset-unit rules: pint reads them
    forms = FAST_FORMS[:2] if name in unittables._OFFSET_UNITS else FAST_FORMS
    with counting_pint_calls(monkeypatch) as calls:
        for form in forms:
            _outcomes(form.format(name))
    assert calls == []


@pytest.mark.parametrize(
    "expression",
    ["nV/(Hz**0.5)", "kohm", "m/s**(2)", "percent", "degC", "degF", "mV/V", "", "1/s"],
)
def test_unit_info_is_identical(expression):
    fast = units._unit_info(expression)
    with pint_only():
        reference = units._unit_info(expression)
    assert fast == reference
    assert unittables.evaluate(expression) is not None  # answered by the tables


# Expressions at the edges of the tables: pint's float round-off grows with
# large exponents (so the tables must step aside), roots of scaled units are
# irrational, gn in a denominator is no short decimal, offset units in a
# product follow pint's rules.
EDGES = [
    "1 cA/(cA**2)^12",
    "1 gn^3",
    "1 gn²",
    "100 mV/gn",
    "1 pA·fA³",
    "1 µV/√kHz",
    "1 mgn/√Hz",
    "1 kg",
    "-459.67 degF",
    "-273.15 degC",
    "3 ppm/degC",
    "3 ppm/K",
    "1 Hz^0.25",
    "1 Hz^(1/3)",
    "1 (Hz^(1/3))^3",
    "1 √(√Hz)",
    "1 fF^12",
    "1 TΩ^12",
    "1 (((aA^12)^12)^12)",
    "1 V/V/V*V",
    "1 m/s*kg",
    "2 mV / V",
    "1 kΩ·µF",
    "1 1/kHz",
    "1 1/√Hz",
    "5 mS/s",
    "1 dam",
    "1 daN",
]


@pytest.mark.parametrize("text", EDGES)
def test_edge_case_agrees_with_pint(text):
    fast, reference = _both(_outcomes, text)
    assert fast == reference


# --- the quantities of the examples ----------------------------------------------


def _leaves(node):
    if isinstance(node, dict):
        for value in node.values():
            yield from _leaves(value)
    elif isinstance(node, list):
        for value in node:
            yield from _leaves(value)
    else:
        yield node


def _example_values() -> list:
    values = []
    for path in EXAMPLE_FILES:
        with path.open("rb") as handle:
            values += [v for v in _leaves(tomllib.load(handle)) if isinstance(v, str | int | float)]
    return sorted(set(values), key=repr)


EXAMPLE_VALUES = _example_values()


def test_examples_hold_quantities():
    assert len(EXAMPLE_FILES) >= 5
    assert {"4.5 nV/√Hz", "2 mV/V", "30 degC", "99.9 %"} & set(EXAMPLE_VALUES)
    assert sum(isinstance(v, str) and v[:1].isdigit() for v in EXAMPLE_VALUES) > 40


@pytest.mark.parametrize("value", EXAMPLE_VALUES, ids=repr)
def test_example_value_agrees_with_pint(value):
    fast, reference = _both(_outcomes, value)
    assert fast == reference


def test_example_quantities_read_without_pint(monkeypatch):
    # the values that are quantities (names, dates and dB levels are read elsewhere)
    quantities = []
    for value in EXAMPLE_VALUES:
        with contextlib.suppress(DesignError):
            parse_any(value, "f")
            quantities.append(value)
    assert len(quantities) > 40
    with counting_pint_calls(monkeypatch) as calls:
        for value in quantities:
            _outcomes(value)
    assert calls == []


def test_reading_every_example_does_not_import_pint():
    # a fresh interpreter: the test process itself has pint loaded already
    probe = (
        "import sys\n"
        "from resplan.designfile.load import load_design\n"
        "for path in sys.argv[1:]:\n"
        "    load_design(path)\n"
        "print('pint' in sys.modules)\n"
    )
    done = subprocess.run(
        [sys.executable, "-c", probe, *map(str, EXAMPLE_FILES)],
        capture_output=True,
        text=True,
        check=True,
        cwd=ROOT,
    )
    assert done.stdout.strip() == "False", done.stderr


# --- combinations drawn by hypothesis ---------------------------------------------

TABLE_ONLY = sorted(unittables.spellings())
PINT_ONLY = [
    "psi", "lb", "min", "kohms", "volt", "millivolt", "t", "h", "hr", "inch", "atm",
    "kgf", "lbf", "mol", "cd", "J", "C", "S", "H", "celsius", "g_n", "day", "sec",
    "meter", "amp", "tonne", "mpsi", "kJ", "furlong", "KHz", "dB",
]  # fmt: skip
SPECIAL = ["rtHz", "%", "°C", "°F", "℃", "degC", "degF", "Ω", "kΩ", "MΩ", "Ω", "µV", "μA"]
EXPONENTS = [
    "", "", "", "^2", "^-1", "^0.5", "^(1/2)", "^1/2", "**2", "²", "³", "⁻¹", "⁻²",
    "½", "^3", "^(-0.5)", "^0.25", "^(1/3)", "2", "^1.5", "^12", "^-12", "^(2.5)",
]  # fmt: skip
NUMBERS = st.one_of(
    st.sampled_from(["1", "4.5", "-40", "0", "273.15", "1e-3", "2.2e6", "99.9", ".5", "+3"]),
    st.floats(min_value=-1e6, max_value=1e6, allow_nan=False).map(repr),
)


def _factor(names):
    base = st.sampled_from(names)
    powered = st.builds(lambda n, e: n + e, base, st.sampled_from(EXPONENTS))
    rooted = st.builds(
        lambda n, r: r.format(n), base, st.sampled_from(["√{}", "sqrt({})", "√({})", "rt({})"])
    )
    return st.one_of(powered, powered, rooted)


def _expression(names):
    factor = _factor(names)
    joined = st.builds(
        lambda first, rest: first + "".join(op + f for op, f in rest),
        factor,
        st.lists(st.tuples(st.sampled_from(["/", "*", " ", "·", " / ", "/"]), factor), max_size=3),
    )
    grouped = st.builds(lambda a, b, e: f"{a}/({b}){e}", factor, factor, st.sampled_from(EXPONENTS))
    return st.one_of(joined, joined, grouped)


def _text(names):
    return st.builds(
        lambda number, unit, rms: f"{number} {unit}{rms}",
        NUMBERS,
        _expression(names),
        st.sampled_from(["", "", " rms", "rms"]),
    )


@settings(max_examples=300, deadline=None)
@given(_text(TABLE_ONLY + SPECIAL))
def test_common_combinations_agree_with_pint(text):
    fast, reference = _both(_outcomes, text)
    assert fast == reference


@settings(max_examples=300, deadline=None)
@given(_text(TABLE_ONLY + SPECIAL + PINT_ONLY))
def test_mixed_combinations_agree_with_pint(text):
    fast, reference = _both(_outcomes, text)
    assert fast == reference


@settings(max_examples=150, deadline=None)
@given(_expression(TABLE_ONLY + SPECIAL + PINT_ONLY))
def test_same_dimension_agrees_with_pint(unit):
    fast, reference = _both(_unit_outcomes, unit)
    assert fast == reference
