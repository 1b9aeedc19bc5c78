"""Tests of resplan.units.parse: quantities with units read from design files.

Reference values come from scipy.constants (CODATA 2018 and the exact
conventional values it lists) and the SI Brochure, 9th ed. (BIPM 2019); the
source is named beside each table. Tolerance: 1e-12 relative, far below any
physical significance and well above float round-off (~1e-16).
"""

from __future__ import annotations

import ast
import math
from pathlib import Path

import pytest
import scipy.constants as sc
from hypothesis import given, settings
from hypothesis import strategies as st

from resplan.errors import DesignError, describe_value
from resplan.units.parse import (
    DIMENSIONS,
    parse_any,
    parse_db,
    parse_percent,
    parse_quantity,
    same_dimension,
)

REL = 1e-12

# Spellings of 4.5 nV/√Hz. Prefix values: SI Brochure 9th ed., Table 7
# (scipy.constants.nano, .micro).
EN = 4.5 * sc.nano
DENSITY_SPELLINGS = [
    "4.5 nV/rtHz",
    "4.5 nV/√Hz",
    "4.5 nV/sqrt(Hz)",
    "4.5 nV/√(Hz)",
    "4.5 nV/rt(Hz)",
    "4.5 nV/Hz^0.5",
    "4.5 nV/Hz^(1/2)",
    "4.5 nV/Hz^1/2",
    "4.5 nV/Hz**0.5",
    "4.5 nV/Hz½",
    "4.5nV/rtHz",
    "4.5 nV / √Hz",
    "4.5 nV/√Hz rms",
    "4.5 nV Hz^-0.5",
    "0.0045 µV/√Hz",
    "0.0045 μV/√Hz",
    "0.0045 uV/rtHz",
    "4.5e-9 V/Hz^0.5",
    "4500 pV/√Hz",
]


@pytest.mark.parametrize("text", DENSITY_SPELLINGS)
def test_voltage_density_spellings(text):
    # SI Brochure 9th ed., Table 7: n = 1e-9 (scipy.constants.nano)
    assert parse_quantity(text, "voltage_density", "stages[0].en") == pytest.approx(EN, rel=REL)


VALID = [
    # (text, dimension, expected SI value) -- source in the comment of each group
    # SI prefixes and derived units: SI Brochure 9th ed., Tables 4 and 7
    ("1 pA/rtHz", "current_density", sc.pico),
    ("1 fA/√Hz", "current_density", sc.femto),
    ("10 kohm", "resistance", 10 * sc.kilo),
    ("10 kΩ", "resistance", 10 * sc.kilo),
    ("10 k\u2126", "resistance", 10 * sc.kilo),  # ohm sign, U+2126
    ("10 kOhm", "resistance", 10 * sc.kilo),
    ("10 kohms", "resistance", 10 * sc.kilo),
    ("2.2 MΩ", "resistance", 2.2 * sc.mega),
    ("50 mΩ", "resistance", 50 * sc.milli),
    ("256 kHz", "frequency", 256 * sc.kilo),
    ("100 nF", "capacitance", 100 * sc.nano),
    ("10 uF", "capacitance", 10 * sc.micro),
    ("5 V", "voltage", 5.0),
    ("−5 V", "voltage", -5.0),  # U+2212 minus sign
    ("+5 V", "voltage", 5.0),
    ("1 µV", "voltage", sc.micro),
    ("1 uV", "voltage", sc.micro),
    ("1 μV", "voltage", sc.micro),  # Greek mu, U+03BC
    ("2.5 µV rms", "voltage", 2.5 * sc.micro),
    ("2.5 µVrms", "voltage", 2.5 * sc.micro),
    ("2.5 µV (rms)", "voltage", 2.5 * sc.micro),
    ("1e-3 V", "voltage", sc.milli),
    ("10 µA", "current", 10 * sc.micro),
    ("2 ms", "time", 2 * sc.milli),
    ("25 mm", "length", 25 * sc.milli),
    ("25 um", "length", 25 * sc.micro),
    ("25 µm", "length", 25 * sc.micro),
    ("500 N", "force", 500.0),
    ("2 kN", "force", 2 * sc.kilo),
    ("10 kPa", "pressure", 10 * sc.kilo),
    ("10 hPa", "pressure", 10 * sc.hecto),
    ("9.81 m/s^2", "acceleration", 9.81),
    ("9.81 m/s²", "acceleration", 9.81),
    ("9.81 m/s2", "acceleration", 9.81),
    ("9.81 m·s⁻²", "acceleration", 9.81),
    ("9.81 m s^-2", "acceleration", 9.81),
    # samples per second counted as hertz (common practice, no source)
    ("10 SPS", "frequency", 10.0),
    ("10 sps", "frequency", 10.0),
    ("2 kSPS", "frequency", 2 * sc.kilo),
    ("2 kS/s", "frequency", 2 * sc.kilo),
    ("1 MS/s", "frequency", sc.mega),
    ("100 1/s", "frequency", 100.0),
    # degree Celsius: T/K = t/°C + 273.15 (SI Brochure 9th ed., 2.3.1;
    # scipy.constants.zero_Celsius)
    ("25 degC", "temperature", 25 + sc.zero_Celsius),
    ("25 °C", "temperature", 25 + sc.zero_Celsius),
    ("25 \u2103", "temperature", 25 + sc.zero_Celsius),
    ("-40 degC", "temperature", -40 + sc.zero_Celsius),
    ("298.15 K", "temperature", 298.15),
    ("300 mK", "temperature", 0.3),
    # degree Fahrenheit (scipy.constants.convert_temperature)
    ("77 degF", "temperature", float(sc.convert_temperature(77, "Fahrenheit", "Kelvin"))),
    ("-40 °F", "temperature", float(sc.convert_temperature(-40, "Fahrenheit", "Kelvin"))),
    # temperature differences: a kelvin and a degree Celsius are equal in size
    # (SI Brochure 9th ed., 2.3.1); a degree Fahrenheit is 5/9 K
    ("0.01 degC", "temperature_difference", 0.01),
    ("0.01 °C", "temperature_difference", 0.01),
    ("0.01 K", "temperature_difference", 0.01),
    ("10 mK", "temperature_difference", 0.01),
    ("1.8 degF", "temperature_difference", 1.0),
    # plain ratios: % = 1e-2, ppm = 1e-6, ppb = 1e-9 (SI Brochure 9th ed.,
    # 5.4.7, from memory)
    ("99.9 %", "dimensionless", 0.999),
    ("99.9%", "dimensionless", 0.999),
    ("3 ppm", "dimensionless", 3e-6),
    ("3 ppb", "dimensionless", 3e-9),
    ("0.5", "dimensionless", 0.5),
    (0.5, "dimensionless", 0.5),
    (100, "dimensionless", 100.0),
    ("1e3", "dimensionless", 1000.0),
    ("100 V/V", "dimensionless", 100.0),
    ("2 mV/V", "ratio_per_volt", 2 * sc.milli),
    ("2 mV / V", "ratio_per_volt", 2 * sc.milli),
    ("2000 ppm", "ratio_per_volt", 2 * sc.milli),
    # mass, force, pressure: scipy.constants (gram, metric_ton, pound, lbf,
    # kgf, psi, bar, atm, g); standard gravity 9.80665 m/s^2 (3rd CGPM, 1901)
    ("200 kg", "mass", 200.0),
    ("10 g", "mass", 10 * sc.gram),
    ("10 mg", "mass", 10 * sc.milli * sc.gram),
    ("5 t", "mass", 5 * sc.metric_ton),
    ("1 tonne", "mass", sc.metric_ton),
    ("100 lb", "mass", 100 * sc.pound),
    ("1 lbf", "force", sc.lbf),
    ("1 kgf", "force", sc.kgf),
    ("1 psi", "pressure", sc.psi),
    ("1 bar", "pressure", sc.bar),
    ("10 mbar", "pressure", 10 * sc.milli * sc.bar),
    ("1 atm", "pressure", sc.atm),
    ("2 gn", "acceleration", 2 * sc.g),
    ("2 g_n", "acceleration", 2 * sc.g),
    ("50 mgn", "acceleration", 50 * sc.milli * sc.g),
    ("1 inch", "length", sc.inch),
    # time: SI Brochure 9th ed., Table 8 (scipy.constants.minute, hour, day)
    ("1 min", "time", sc.minute),
    ("1 h", "time", sc.hour),
    ("1 day", "time", sc.day),
]


@pytest.mark.parametrize(("text", "dimension", "expected"), VALID)
def test_parse_quantity(text, dimension, expected):
    got = parse_quantity(text, dimension, "field")
    assert isinstance(got, float)
    assert got == pytest.approx(expected, rel=REL)


@pytest.mark.parametrize(
    ("text", "dimension", "expected"),
    [
        # decimal prefixes give the float nearest to the decimal value, exactly
        ("4.5 nV/√Hz", "voltage_density", 4.5e-9),
        ("99.9 %", "dimensionless", 0.999),
        ("25 degC", "temperature", 298.15),
        ("32 degF", "temperature", 273.15),
        ("2 mV/V", "ratio_per_volt", 0.002),
        ("0.01 degC", "temperature_difference", 0.01),
    ],
)
def test_decimal_results_are_exact(text, dimension, expected):
    assert parse_quantity(text, dimension, "field") == expected


def test_ohm_spellings_agree():
    # SI Brochure 9th ed., Table 7: k = 1e3
    values = {parse_quantity(t, "resistance", "r") for t in ("1 kohm", "1 kΩ", "1000 ohm")}
    assert values == {1000.0}


@pytest.mark.parametrize("name", sorted(DIMENSIONS))
def test_si_unit_shown_reads_back_as_one(name):
    unit = DIMENSIONS[name].si_unit
    text = f"1 {unit}" if unit else "1"
    assert parse_quantity(text, name, "field") == 1.0


ERRORS = [
    # (value, dimension, fragments the message must contain)
    (
        "4.5 nV",
        "voltage_density",
        ['a voltage noise density such as "4.5 nV/√Hz"', "nV is a voltage"],
    ),
    ("5", "voltage", ['a voltage such as "5 V"', "a unit is required"]),
    (5, "resistance", ["a resistance such as", "a unit is required"]),
    ("25", "temperature", ['a temperature such as "25 degC"', "a unit is required"]),
    ("0.002", "ratio_per_volt", ['"2 mV/V"', "a unit is required"]),
    ("5 KHz", "frequency", ['unknown unit "KHz"', 'did you mean "kHz"?']),
    ("10 Kohm", "resistance", ['did you mean "kohm"?']),
    ("4.5 nV/rtHZ", "voltage_density", ['did you mean "rtHz"?']),
    ("5 voltz", "voltage", ['did you mean "volt"?']),
    ("5 furlong", "length", ['unknown unit "furlong"']),
    ("2.5 µV p-p", "voltage", ["peak-to-peak", "coverage"]),
    ("2.5 µVpp", "voltage", ["peak-to-peak", "coverage"]),
    ("2.5 µV pp", "voltage", ["peak-to-peak"]),
    ("2.5 µV pk-pk", "voltage", ["peak-to-peak"]),
    ("2.5 µV peak-to-peak", "voltage", ["peak-to-peak"]),
    ("2.5 µV peak", "voltage", ["peak value"]),
    ("2.5 µVpk", "voltage", ["peak value"]),
    ("nan", "dimensionless", ["not a finite number"]),
    ("inf V", "voltage", ["not a finite number"]),
    ("-Infinity", "dimensionless", ["not a finite number"]),
    (float("nan"), "dimensionless", ["not a finite number"]),
    (float("inf"), "voltage", ["not a finite number"]),
    (10**400, "dimensionless", ["not a finite number"]),
    ("1e999 V", "voltage", ["out of range"]),
    ("1e99999999 V", "voltage", ["out of range"]),
    ("-300 degC", "temperature", ["below absolute zero"]),
    ("-1 K", "temperature", ["below absolute zero"]),
    ("4,5 nV/√Hz", "voltage_density", ["cannot read"]),
    ("1 000 V", "voltage", ["cannot read"]),
    ("110 dB", "dimensionless", ["decibels"]),
    ("", "voltage", ["empty"]),
    ("   ", "voltage", ["empty"]),
    ("V", "voltage", ["no number"]),
    (None, "voltage", ["not a number or text"]),
    (True, "dimensionless", ["not a number or text"]),
    ([5], "dimensionless", ["not a number or text"]),
    ("5 V**9**9", "voltage", ["two exponents"]),
    ("5 V^99", "voltage", ["out of range"]),
    ("5 V^x", "voltage", ["exponent"]),
    ("5 (V", "voltage", ['unmatched "("']),
    ("5 (((((V)))))", "voltage", ["nested too deeply"]),
    ("5 V)", "voltage", ['unmatched ")"']),
    ("5 V/", "voltage", ["ends early"]),
    ("5 /V", "voltage", ["where a unit was expected"]),
    ("5 √", "voltage", ["ends early"]),
    ("2 mV/V", "voltage", ["mV/V is a plain number"]),
    ("5 mS/s", "frequency", ["mS/s is"]),
    ("5 nV*s", "voltage_density", ["in SI base units"]),
    ("25 degC/s", "temperature", ["K/s in SI base units"]),
    ("10 g", "acceleration", ["g is a mass", "standard gravity is written gn"]),
    ("1" * 200 + " V", "voltage", ["longer than"]),
]


@pytest.mark.parametrize(("value", "dimension", "fragments"), ERRORS)
def test_parse_quantity_errors(value, dimension, fragments):
    with pytest.raises(DesignError) as caught:
        parse_quantity(value, dimension, "stages[1].en")
    error = caught.value
    assert error.field == "stages[1].en"
    assert error.value is value
    message = str(error)
    given = "missing" if value is None else f"got {describe_value(value)}"
    assert message.startswith(f"stages[1].en: {given}, expected ")
    for fragment in fragments:
        assert fragment in error.expected


def test_mismatch_message_reads_as_specified():
    with pytest.raises(DesignError) as caught:
        parse_quantity("4.5 nV", "voltage_density", "stages[1].en")
    assert str(caught.value).startswith(
        'stages[1].en: got "4.5 nV", expected a voltage noise density such as "4.5 nV/√Hz"'
    )


def test_unknown_dimension_is_a_programming_error():
    with pytest.raises(ValueError, match="unknown dimension"):
        parse_quantity("5 V", "voltage_noise", "f")


@pytest.mark.parametrize(
    ("text", "magnitude", "unit"),
    [
        # base-unit forms: SI Brochure 9th ed., Table 4; values scipy.constants
        ("10 g", 10 * sc.gram, "kg"),
        ("200 kg", 200.0, "kg"),
        ("5 t", 5 * sc.metric_ton, "kg"),
        ("1 N", 1.0, "kg*m/s**2"),
        ("1 lbf", sc.lbf, "kg*m/s**2"),
        ("0.5 psi", 0.5 * sc.psi, "kg/(m*s**2)"),
        ("1 V", 1.0, "kg*m**2/(s**3*A)"),
        ("1 Ω", 1.0, "kg*m**2/(s**3*A**2)"),
        ("4.5 nV/√Hz", EN, "kg*m**2/(s**2.5*A)"),
        ("1 mgn", sc.milli * sc.g, "m/s**2"),
        ("1 kHz", sc.kilo, "1/s"),
        ("0.01 degC", 0.01, "K"),
        ("0.01 degF", 0.01 * 5 / 9, "K"),
        ("3 ppm/degC", 3e-6, "1/K"),
        ("3 ppm", 3e-6, ""),
        ("3", 3.0, ""),
        (3, 3.0, ""),
    ],
)
def test_parse_any(text, magnitude, unit):
    got, got_unit = parse_any(text, "requirement.resolution")
    assert got == pytest.approx(magnitude, rel=REL)
    assert got_unit == unit


@pytest.mark.parametrize("value", ["10 foo", "nan g", "", None, "10 g p-p", "5 V^99"])
def test_parse_any_errors(value):
    with pytest.raises(DesignError) as caught:
        parse_any(value, "requirement.resolution")
    assert caught.value.field == "requirement.resolution"
    assert "a quantity with a unit" in caught.value.expected


@pytest.mark.parametrize(
    ("a", "b", "same"),
    [
        ("g", "kg", True),
        ("g", "t", True),
        ("lb", "kg", True),
        ("N", "lbf", True),
        ("nV/rtHz", "V/√Hz", True),
        ("degC", "K", True),
        ("%", "ppm", True),
        ("", "%", True),
        ("Pa", "psi", True),
        ("gn", "m/s^2", True),
        ("Hz", "SPS", True),
        ("V", "A", False),
        ("N", "kg", False),
        ("g", "gn", False),
    ],
)
def test_same_dimension(a, b, same):
    assert same_dimension(a, b) is same


@pytest.mark.parametrize(("a", "b"), [("foo", "kg"), ("kg", "5 kg"), ("kg", None)])
def test_same_dimension_errors(a, b):
    with pytest.raises(DesignError):
        same_dimension(a, b)


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("110 dB", 110.0),
        ("110dB", 110.0),
        ("110", 110.0),
        (110, 110.0),
        ("-3.0 dB", -3.0),
        ("1e2 dB", 100.0),
        ("96 db", 96.0),
        (" 96.5  dB ", 96.5),
    ],
)
def test_parse_db(text, expected):
    assert parse_db(text, "requirement.dynamic_range") == expected


@pytest.mark.parametrize(
    "value", ["110 dBm", "110 V", "nan", "inf dB", "dB", "", None, True, float("nan"), "1,10 dB"]
)
def test_parse_db_errors(value):
    with pytest.raises(DesignError) as caught:
        parse_db(value, "requirement.dynamic_range")
    assert caught.value.field == "requirement.dynamic_range"
    assert "decibels" in caught.value.expected


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("99.9 %", 0.999),
        ("0.999", 0.999),
        (0.9973, 0.9973),
        ("99.73 %", 0.9973),
        ("999000 ppm", 0.999),
        ("50%", 0.5),
    ],
)
def test_parse_percent(text, expected):
    assert parse_percent(text, "coverage") == pytest.approx(expected, rel=REL)


@pytest.mark.parametrize(
    "value", ["99.9", "100 %", "0 %", 1, 0, "-5 %", "5 V", "nan", None, "99.9 % p-p"]
)
def test_parse_percent_errors(value):
    with pytest.raises(DesignError) as caught:
        parse_percent(value, "coverage")
    assert caught.value.field == "coverage"
    assert "a fraction between 0 and 1" in caught.value.expected


def test_every_spelling_is_unambiguous():
    """No unit spelling (prefixed symbols included) has two readings."""
    from resplan.units.parse import _registry, _spellings

    ureg = _registry()
    for spelling in _spellings():
        if spelling in ("rtHz", "√Hz", "°C", "°F", "%"):
            continue  # rewritten before pint sees them
        assert len(ureg.parse_unit_name(spelling)) == 1, spelling


def test_gram_and_standard_gravity_stay_apart():
    assert parse_quantity("1 g", "mass", "f") == pytest.approx(sc.gram, rel=REL)
    assert parse_quantity("1 gn", "acceleration", "f") == pytest.approx(sc.g, rel=REL)


def test_import_does_not_load_pint():
    """pint is imported lazily, inside a function, so the module stays cheap."""
    source = Path(__file__).parents[1] / "resplan" / "units" / "parse.py"
    tree = ast.parse(source.read_text(encoding="utf-8"))
    for node in tree.body:
        if isinstance(node, ast.If):  # the TYPE_CHECKING block
            continue
        if isinstance(node, ast.Import):
            assert all(alias.name.split(".")[0] != "pint" for alias in node.names)
        if isinstance(node, ast.ImportFrom):
            assert (node.module or "").split(".")[0] != "pint"


# --- laws -------------------------------------------------------------------

magnitudes = st.floats(min_value=1e-3, max_value=1e6, allow_nan=False, allow_infinity=False)


@settings(max_examples=60, deadline=None)
@given(magnitudes)
def test_density_spelling_never_changes_result(x):
    a = parse_quantity(f"{x!r} nV/rtHz", "voltage_density", "f")
    b = parse_quantity(f"{x * 1e-3!r} µV/√Hz", "voltage_density", "f")
    c = parse_quantity(f"{x * 1e-9!r} V/Hz^0.5", "voltage_density", "f")
    d = parse_quantity(f"{x!r} nV/sqrt(Hz)", "voltage_density", "f")
    assert a == pytest.approx(b, rel=REL)
    assert a == pytest.approx(c, rel=REL)
    assert a == d


@settings(max_examples=50, deadline=None)
@given(magnitudes)
def test_resistance_and_rate_spelling_never_changes_result(x):
    r = {parse_quantity(f"{x!r} {u}", "resistance", "f") for u in ("kohm", "kΩ", "kOhm")}
    assert len(r) == 1
    assert r.pop() == pytest.approx(parse_quantity(f"{x * 1e3!r} ohm", "resistance", "f"), rel=REL)
    f = {parse_quantity(f"{x!r} {u}", "frequency", "f") for u in ("kHz", "kSPS", "ksps", "kS/s")}
    assert len(f) == 1


@settings(max_examples=50, deadline=None)
@given(st.floats(min_value=-273.15, max_value=2000, allow_nan=False))
def test_celsius_and_kelvin_agree(t):
    # SI Brochure 9th ed., 2.3.1: T/K = t/°C + 273.15
    kelvin = parse_quantity(f"{t!r} degC", "temperature", "f")
    assert kelvin == pytest.approx(
        parse_quantity(f"{t + 273.15!r} K", "temperature", "f"), abs=1e-9
    )
    assert kelvin == pytest.approx(parse_quantity(f"{t!r} °C", "temperature", "f"), abs=1e-12)


UNITISH = "0123456789 .eE+-−µuμΩkMGnpfmVAHzs/^*()√½²%°CFKgNPatrmqsSd_lbi,·"
garbage = st.one_of(
    st.text(max_size=30),
    st.text(alphabet=UNITISH, max_size=30),
    st.builds(lambda n, u: f"{n} {u}", st.floats(), st.text(alphabet=UNITISH, max_size=12)),
)
anything = st.one_of(
    garbage,
    st.none(),
    st.booleans(),
    st.integers(),
    st.floats(),
    st.lists(st.integers(), max_size=2),
    st.binary(max_size=5),
)


@settings(max_examples=150, deadline=None)
@given(anything, st.sampled_from(sorted(DIMENSIONS)))
def test_garbage_only_raises_design_error(value, dimension):
    try:
        result = parse_quantity(value, dimension, "f")
    except DesignError as error:
        assert error.field == "f"
    else:
        assert isinstance(result, float) and math.isfinite(result)


@settings(max_examples=100, deadline=None)
@given(anything)
def test_garbage_only_raises_design_error_elsewhere(value):
    for parse in (parse_any, parse_db, parse_percent):
        try:
            result = parse(value, "f")
        except DesignError:
            continue
        magnitude = result[0] if isinstance(result, tuple) else result
        assert isinstance(magnitude, float) and math.isfinite(magnitude)
    try:
        assert isinstance(same_dimension(value, "kg"), bool)
    except DesignError:
        pass


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        # strain is a length ratio, 1 µε = 1e-6 m/m (SI Brochure 9th ed., 5.4.7:
        # ratios of like quantities are dimensionless; the trade's spellings of the
        # micro-strain are common practice, no source)
        ("100 microstrain", 100e-6),
        ("100 ue", 100e-6),
        ("100 \u00b5\u03b5", 100e-6),  # µε, micro sign U+00B5
        ("100 \u03bc\u03b5", 100e-6),  # με, Greek mu U+03BC
        ("0.5 strain", 0.5),
        ("3 ppm", 3e-6),
        ("5 ppb", 5e-9),
    ],
)
def test_strain_and_trade_ratios_are_read(text, expected):
    from resplan.units.parse import parse_quantity

    assert parse_quantity(text, "dimensionless", "x") == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("spelling", ["\u00b5\u03b5", "\u03bc\u03b5"])
@pytest.mark.parametrize("fast", [True, False])
def test_micro_strain_symbol_equals_microstrain(spelling, fast):
    # 1 µε = 1e-6 (a length ratio; SI Brochure 9th ed., 5.4.7 for ratios of
    # like quantities; the symbol µε is common practice, no source). Both the
    # fast table and pint's definitions must read it.
    from resplan.units.parse import _set_fast_path, parse_quantity

    previous = _set_fast_path(fast)
    try:
        value = parse_quantity(f"250 {spelling}", "dimensionless", "x")
        assert value == parse_quantity("250 microstrain", "dimensionless", "x")
        assert value == pytest.approx(250e-6, rel=1e-12)
    finally:
        _set_fast_path(previous)
