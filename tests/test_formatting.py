"""Tests of resplan.units.formatting: SI floats written with units.

Prefix values: SI Brochure, 9th ed. (BIPM 2019), Table 7, written out here
independently of the module. The degree Celsius: T/K = t/°C + 273.15 (ibid.,
section 2.3.1). Choices of layout (digits, separators) are this project's
conventions and have no outside source.
"""

from __future__ import annotations

import math
import re

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from resplan.units.formatting import (
    NO_PREFIX_UNITS,
    ascii_units,
    format_bits,
    format_counts,
    format_db,
    format_percent,
    format_si,
    format_temperature,
)
from resplan.units.parse import parse_quantity

NAN = float("nan")
INF = float("inf")

# SI Brochure 9th ed., Table 7 (the prefixes format_si uses, f to T)
SI_PREFIXES = {
    "f": 1e-15,
    "p": 1e-12,
    "n": 1e-9,
    "µ": 1e-6,
    "m": 1e-3,
    "": 1.0,
    "k": 1e3,
    "M": 1e6,
    "G": 1e9,
    "T": 1e12,
}


@pytest.mark.parametrize(
    ("value", "unit", "digits", "expected"),
    [
        (4.07e-9, "V/√Hz", 3, "4.07 nV/√Hz"),
        (1.2e3, "Ω", 3, "1.20 kΩ"),
        (0.0, "V", 3, "0 V"),
        (-0.0, "V", 3, "0 V"),
        (2.5e-6, "V", 3, "2.50 µV"),
        (-2.5e-6, "V", 3, "-2.50 µV"),
        (1.0, "V", 3, "1.00 V"),
        (999.4, "Hz", 3, "999 Hz"),
        (999.6, "Hz", 3, "1.00 kHz"),
        (256e3, "Hz", 3, "256 kHz"),
        (12.5e6, "Hz", 2, "12 MHz"),  # round half to even
        (1.5e-15, "A", 3, "1.50 fA"),
        (2.0e12, "Ω", 3, "2.00 TΩ"),
        (1.234e-18, "V", 3, "1.23e-18 V"),
        (5.0e15, "Hz", 3, "5.00e+15 Hz"),
        (123.456, "V", 1, "100 V"),
        (123.456, "V", 5, "123.46 V"),
        (0.01, "kg", 3, "10.0 g"),
        (200.0, "kg", 3, "200 kg"),
        (NAN, "V", 3, "n/a"),
        (INF, "V", 3, "∞ V"),
        (-INF, "V", 3, "-∞ V"),
        # no prefix for ratios, levels, counts and temperatures
        (99.9, "%", 3, "99.9 %"),
        (3e-6, "ppm", 3, "3.00e-06 ppm"),
        (110.0, "dB", 4, "110.0 dB"),
        (19.42, "bits", 4, "19.42 bits"),
        (20000.0, "counts", 3, "20000 counts"),
        (298.15, "K", 5, "298.15 K"),
        (25.0, "°C", 3, "25.0 °C"),
        (1500.0, "", 3, "1500"),
        (1500.0, "V/V", 3, "1500 V/V"),
    ],
)
def test_format_si(value, unit, digits, expected):
    assert format_si(value, unit, digits) == expected


def test_no_prefix_units_cover_the_plain_ones():
    assert {"%", "dB", "bits", "counts", "ppm", "°C", "K", "V/V", ""} <= NO_PREFIX_UNITS


@pytest.mark.parametrize("digits", [0, -1, 2.5, True])
def test_format_si_rejects_bad_digits(digits):
    with pytest.raises(ValueError, match="digits"):
        format_si(1.0, "V", digits)


@pytest.mark.parametrize(
    ("call", "expected"),
    [
        (lambda: format_db(110.24), "110.2 dB"),
        (lambda: format_db(-3.0103), "-3.0 dB"),
        (lambda: format_db(NAN), "n/a"),
        (lambda: format_db(INF), "∞ dB"),
        (lambda: format_bits(19.4237), "19.42 bits"),
        (lambda: format_bits(NAN), "n/a"),
        (lambda: format_counts(20000), "20,000"),
        (lambda: format_counts(1234567.8), "1,234,568"),
        (lambda: format_counts(100), "100"),
        (lambda: format_counts(12.34), "12.3"),
        (lambda: format_counts(0.4567), "0.457"),
        (lambda: format_counts(NAN), "n/a"),
        (lambda: format_percent(0.999), "99.9 %"),
        (lambda: format_percent(0.9973, digits=4), "99.73 %"),
        (lambda: format_percent(0.02), "2.00 %"),
        (lambda: format_percent(1.0), "100 %"),
        (lambda: format_percent(NAN), "n/a"),
        # T/K = t/°C + 273.15 (SI Brochure 9th ed., 2.3.1)
        (lambda: format_temperature(298.15), "25.0 °C (298.15 K)"),
        (lambda: format_temperature(273.15), "0.0 °C (273.15 K)"),
        (lambda: format_temperature(273.14), "0.0 °C (273.14 K)"),
        (lambda: format_temperature(77.0), "-196.2 °C (77.00 K)"),
        (lambda: format_temperature(NAN), "n/a"),
    ],
)
def test_small_formatters(call, expected):
    assert call() == expected


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("4.07 nV/√Hz", "4.07 nV/rtHz"),
        ("1.20 kΩ", "1.20 kohm"),
        ("1.20 k\u2126", "1.20 kohm"),
        ("2.50 µV", "2.50 uV"),
        ("2.50 \u03bcV", "2.50 uV"),
        ("25.0 °C (298.15 K)", "25.0 degC (298.15 K)"),
        ("9.81 m/s²", "9.81 m/s^2"),
        ("±∞ dB", "+/-inf dB"),
        ("20\u202f000", "20 000"),
        ("café", "cafe"),
        ("→", "?"),
    ],
)
def test_ascii_units(text, expected):
    assert ascii_units(text) == expected


# --- laws -------------------------------------------------------------------

_NUMBER_AND_UNIT = re.compile(r"^(-?\d+(?:\.\d+)?) ([fpnµmkMGT]?)V$")


@settings(max_examples=150, deadline=None)
@given(
    st.floats(min_value=1e-15, max_value=9.4e14),  # 9.5e14 rounds to 1e15 at 1 digit
    st.booleans(),
    st.integers(min_value=1, max_value=8),
)
def test_prefix_and_digits_match_the_si_table(magnitude, negative, digits):
    value = -magnitude if negative else magnitude
    text = format_si(value, "V", digits)
    match = _NUMBER_AND_UNIT.match(text)
    assert match, text
    number, prefix = float(match.group(1)), match.group(2)
    # the shown number times its prefix (SI Brochure Table 7) is the value,
    # up to rounding to `digits` significant digits
    assert number * SI_PREFIXES[prefix] == pytest.approx(
        value, rel=0.5 * 10 ** (1 - digits) + 1e-12
    )
    assert 1 <= abs(number) < 1000 or abs(number) == 1000  # 999.96 at 3 digits → "1.00 k"
    significant = match.group(1).lstrip("-").replace(".", "").lstrip("0")
    assert len(significant) >= digits or number == 0


ROUND_TRIP = [
    ("V", "voltage"),
    ("A", "current"),
    ("Ω", "resistance"),
    ("F", "capacitance"),
    ("Hz", "frequency"),
    ("V/√Hz", "voltage_density"),
    ("A/√Hz", "current_density"),
    ("kg", "mass"),
    ("Pa", "pressure"),
]


@settings(max_examples=100, deadline=None)
@given(
    st.floats(min_value=1e-15, max_value=1e12),
    st.sampled_from(ROUND_TRIP),
)
def test_formatted_text_reads_back(value, unit_and_dimension):
    """Output text, Unicode or ASCII, parses back to the value it shows."""
    unit, dimension = unit_and_dimension
    text = format_si(value, unit, digits=12)
    back = parse_quantity(text, dimension, "f")
    assert back == pytest.approx(value, rel=1e-11)
    assert parse_quantity(ascii_units(text), dimension, "f") == back


@settings(max_examples=100, deadline=None)
@given(st.text(max_size=30))
def test_ascii_units_always_gives_ascii(text):
    assert ascii_units(text).isascii()


@settings(max_examples=100, deadline=None)
@given(st.floats(), st.sampled_from(["V", "Ω", "%", "K", ""]), st.integers(1, 10))
def test_format_si_never_fails(value, unit, digits):
    text = format_si(value, unit, digits)
    assert isinstance(text, str) and text
    if math.isnan(value):
        assert text == "n/a"
