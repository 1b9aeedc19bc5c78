"""SI floats written for people: engineering prefixes, dB, bits, counts.

SI inside, units at the edges: every number resplan computes is an SI float,
and this module writes it once, when output is produced. The text it writes
reads back through :mod:`resplan.units.parse` (``"4.07 nV/√Hz"``, ``"1.20 kΩ"``).

Examples
--------
>>> format_si(4.07e-9, "V/√Hz")
'4.07 nV/√Hz'
>>> ascii_units(format_si(1.2e3, "Ω"))
'1.20 kohm'
"""

from __future__ import annotations

import math
import unicodedata
from decimal import ROUND_HALF_EVEN, Decimal

__all__ = [
    "NO_PREFIX_UNITS",
    "RATIO_UNITS",
    "format_si",
    "format_number",
    "format_in_unit",
    "format_complex",
    "format_db",
    "format_bits",
    "format_counts",
    "format_percent",
    "format_temperature",
    "ascii_units",
    "format_tick",
]

#: Units written as plain numbers, never with an SI prefix: ratios and gains,
#: levels, counts and temperatures ("3 ppm", not "3 µ"; "1500 V/V", not
#: "1.50 kV/V"; "298 K", not "0.298 kK").
NO_PREFIX_UNITS: frozenset[str] = frozenset(
    {
        "",
        "V/V",
        "%",
        "ppm",
        "ppb",
        "dB",
        "dBFS",
        "bit",
        "bits",
        "count",
        "counts",
        "LSB",
        "K",
        "°C",
        "°F",
        "degC",
        "degF",
    }
)

#: Dimensionless ratios, written by :func:`format_number`'s rule: a whole
#: number whole ("1 V/V", "500 V/V"), anything else to significant digits.
RATIO_UNITS: frozenset[str] = frozenset({"", "V/V", "A/A"})

# A value within this relative distance of a whole number is written whole
# (a gain of 1 + 1e-15 after arithmetic is "1", not "1.00").
_WHOLE_TOLERANCE = 1e-9

# SI prefixes by power of ten (SI Brochure, 9th ed., BIPM 2019, Table 7).
_PREFIXES = {
    -15: "f",
    -12: "p",
    -9: "n",
    -6: "µ",
    -3: "m",
    0: "",
    3: "k",
    6: "M",
    9: "G",
    12: "T",
}

# T/K = t/°C + 273.15 (SI Brochure, 9th ed., BIPM 2019, section 2.3.1)
_ZERO_CELSIUS = Decimal("273.15")

# Fixed notation is used for plain numbers within these decades.
_FIXED_LOW = -4
_FIXED_HIGH = 15


def _check_digits(digits: int) -> None:
    if isinstance(digits, bool) or not isinstance(digits, int) or digits < 1:
        raise ValueError(f"digits must be an integer >= 1, got {digits!r}")


def _join(number: str, unit: str) -> str:
    return f"{number} {unit}" if unit else number


def _non_finite(value: float, unit: str = "") -> str | None:
    """The text of a NaN ("n/a") or an infinity ("∞ unit", "-∞ unit"); None if finite."""
    if math.isnan(value):
        return "n/a"
    if math.isinf(value):
        return _join("-∞" if value < 0 else "∞", unit)
    return None


def _round_significant(value: float, digits: int) -> tuple[float, int]:
    """Round ``|value| > 0`` to ``digits`` significant digits.

    Returns the rounded magnitude and its decade (the exponent of its leading
    digit), taken after rounding so that 999.96 becomes (1000.0, 3).
    """
    mantissa, _, exponent = f"{abs(value):.{digits - 1}e}".partition("e")
    return float(f"{mantissa}e{exponent}"), int(exponent)


def _plain(value: float, digits: int) -> str:
    """``value`` to ``digits`` significant digits, without a prefix."""
    if value == 0:
        return "0"
    rounded, decade = _round_significant(value, digits)
    sign = "-" if value < 0 else ""
    if not _FIXED_LOW <= decade < _FIXED_HIGH:
        return f"{value:.{digits - 1}e}"
    decimals = max(digits - 1 - decade, 0)
    return f"{sign}{rounded:.{decimals}f}"


def format_si(value: float, unit: str, digits: int = 3) -> str:
    """Write an SI value with an engineering prefix on its unit.

    Parameters
    ----------
    value : float
        The value in the SI unit ``unit``.
    unit : str
        The SI unit, such as ``"V/√Hz"``. The prefix goes in front of it.
        Units in :data:`NO_PREFIX_UNITS` get none. ``"kg"`` is written on the
        gram (``0.01`` → ``"10.0 g"``).
    digits : int, optional
        Significant digits, at least 1 (default 3).

    Returns
    -------
    str
        Such as ``"4.07 nV/√Hz"``; prefixes run from f (1e-15) to T (1e12),
        beyond that the number is written ``"1.23e-18 V"``. NaN gives
        ``"n/a"``, infinity ``"∞ V"``.

    Examples
    --------
    >>> format_si(4.07e-9, "V/√Hz")
    '4.07 nV/√Hz'
    >>> format_si(1.2e3, "Ω")
    '1.20 kΩ'
    >>> format_si(0.0, "V")
    '0 V'
    >>> format_si(2.5e-6, "V")
    '2.50 µV'
    >>> format_si(-0.0125, "A")
    '-12.5 mA'
    >>> format_si(999.96, "Hz")
    '1.00 kHz'
    >>> format_si(1.234e-18, "V")
    '1.23e-18 V'
    >>> format_si(0.01, "kg")
    '10.0 g'
    >>> format_si(298.15, "K", digits=5)
    '298.15 K'
    >>> format_si(float("nan"), "V"), format_si(float("-inf"), "V")
    ('n/a', '-∞ V')
    """
    _check_digits(digits)
    value = float(value)
    if (text := _non_finite(value, unit)) is not None:
        return text
    if unit in RATIO_UNITS:
        return format_number(value, unit, digits)
    if unit in NO_PREFIX_UNITS or unit[:1] in ("1", "/"):
        return _join(_plain(value, digits), unit)
    if unit == "kg":  # prefixes go on the gram (SI Brochure 9th ed., 3)
        value, unit = value * 1e3, "g"
    if value == 0:
        return _join("0", unit)
    rounded, decade = _round_significant(value, digits)
    engineering = decade - decade % 3
    if engineering not in _PREFIXES:
        return _join(f"{value:.{digits - 1}e}", unit)
    shift = decade - engineering
    scaled = rounded / 10.0**engineering
    sign = "-" if value < 0 else ""
    number = f"{sign}{scaled:.{max(digits - 1 - shift, 0)}f}"
    return f"{number} {_PREFIXES[engineering]}{unit}"


def format_number(value: float, unit: str = "", digits: int = 3) -> str:
    """Write a plain number (a gain, ratio, factor, Q or weight), never with a prefix.

    One rule for every dimensionless number resplan prints: a whole number is
    written whole ("1", "500 V/V", "1500 V/V"), grouped by thousands from
    10,000 up ("16,384"; four digits stay together, as the SI Brochure, 9th ed.,
    BIPM 2019, section 5.4.4 advises); anything else gets ``digits``
    significant digits ("0.707", "2.50 V/V", "6.58"). Numbers below 1e-4 or
    from 1e15 up keep an exponent.

    Parameters
    ----------
    value : float
        The number, dimensionless or in ``unit``.
    unit : str, optional
        Written after the number unchanged, such as ``"V/V"`` (default none).
    digits : int, optional
        Significant digits of a number that is not whole, at least 1 (default 3).

    Examples
    --------
    >>> format_number(1.0, "V/V"), format_number(500, "V/V"), format_number(2.5, "V/V")
    ('1 V/V', '500 V/V', '2.50 V/V')
    >>> format_number(6.5792), format_number(0.70711), format_number(16384.0)
    ('6.58', '0.707', '16,384')
    >>> format_number(1 + 1e-15), format_number(1.778279, digits=4)
    ('1', '1.778')
    >>> format_number(-3.0), format_number(-0.0), format_number(1500.0)
    ('-3', '0', '1500')
    >>> format_number(float("nan")), format_number(float("inf"))
    ('n/a', '∞')
    """
    _check_digits(digits)
    value = float(value)
    if (text := _non_finite(value, unit)) is not None:
        return text
    whole = round(value)
    if abs(value) < 10.0**_FIXED_HIGH and abs(value - whole) <= _WHOLE_TOLERANCE * max(
        1.0, abs(value)
    ):
        return _join(f"{whole:,d}" if abs(whole) >= 10_000 else str(whole), unit)
    return _join(_plain(value, digits), unit)


def format_in_unit(value: float, unit: str, digits: int = 3) -> str:
    """Write a value in a unit as the user wrote it, adding no prefix.

    For figures in the measurand's unit ("g", "mbar", "degC"): the unit may
    carry a prefix already, so none is added ("0.0412 mbar", never "41.2 mmbar");
    ``digits`` significant digits, as :func:`format_si` writes them.

    Examples
    --------
    >>> format_in_unit(0.04123, "mbar"), format_in_unit(1.0, "mbar"), format_in_unit(6.08, "g")
    ('0.0412 mbar', '1.00 mbar', '6.08 g')
    """
    _check_digits(digits)
    value = float(value)
    if (text := _non_finite(value, unit)) is not None:
        return text
    return _join(_plain(value, digits), unit)


def format_complex(value: complex, unit: str, digits: int = 4) -> str:
    """Write a complex value, such as a pole in Hz, as real and imaginary parts.

    Each part gets its own engineering prefix; ``j`` marks the imaginary part.

    Examples
    --------
    >>> format_complex(complex(1234.6, -5.0e6), "Hz")
    '1.235 kHz - j 5.000 MHz'
    >>> format_complex(complex(-20.0, 0.0), "Hz")
    '-20.00 Hz'
    """
    real = format_si(value.real, unit, digits)
    if value.imag == 0:
        return real
    sign = "-" if value.imag < 0 else "+"
    return f"{real} {sign} j {format_si(abs(value.imag), unit, digits)}"


def format_tick(value: float, unit: str) -> str:
    """An axis tick label: engineering prefix, no trailing zeros ("10 kHz", "2.5 µV").

    Examples
    --------
    >>> [format_tick(x, "Hz") for x in (0.01, 1.0, 1e3, 25e3, 1e6, 0.0)]
    ['10 mHz', '1 Hz', '1 kHz', '25 kHz', '1 MHz', '0 Hz']
    >>> format_tick(2.5e-6, "V")
    '2.5 µV'
    """
    text = format_si(value, unit)
    number, _, rest = text.partition(" ")
    if "." in number and "e" not in number:
        number = number.rstrip("0").rstrip(".")
    return f"{number} {rest}" if rest else number


def format_db(value: float) -> str:
    """Write a level in dB with one decimal.

    Examples
    --------
    >>> format_db(110.24)
    '110.2 dB'
    >>> format_db(-3.0103)
    '-3.0 dB'
    """
    value = float(value)
    if (text := _non_finite(value, "dB")) is not None:
        return text
    return f"{value:.1f} dB"


def format_bits(value: float) -> str:
    """Write a resolution in bits with two decimals.

    Examples
    --------
    >>> format_bits(19.4237)
    '19.42 bits'
    """
    value = float(value)
    if (text := _non_finite(value, "bits")) is not None:
        return text
    return f"{value:.2f} bits"


def format_counts(value: float) -> str:
    """Write a number of counts with comma thousands separators.

    Rounded to the nearest integer from 100 up; below 100 three significant
    digits are kept, so a fraction of a count is not shown as 0. Callers that
    need a conservative whole number floor the value first.

    Examples
    --------
    >>> format_counts(20000)
    '20,000'
    >>> format_counts(1234567.8)
    '1,234,568'
    >>> format_counts(12.34)
    '12.3'
    """
    value = float(value)
    if (text := _non_finite(value)) is not None:
        return text
    if abs(value) < 100:
        return _plain(value, 3)
    return f"{value:,.0f}"


def format_percent(fraction: float, digits: int = 3) -> str:
    """Write a fraction as a percentage with ``digits`` significant digits.

    Parameters
    ----------
    fraction : float
        The fraction, dimensionless (0.999 for 99.9 %).
    digits : int, optional
        Significant digits (default 3).

    Examples
    --------
    >>> format_percent(0.999)
    '99.9 %'
    >>> format_percent(0.9973, digits=4)
    '99.73 %'
    >>> format_percent(0.02)
    '2.00 %'
    >>> format_percent(3.13e-8)
    '< 0.0001 %'
    """
    _check_digits(digits)
    fraction = float(fraction)
    if (text := _non_finite(fraction, "%")) is not None:
        return text
    if 0 < abs(fraction * 100) < 10.0**_FIXED_LOW:
        # a share too small to matter, never written "3.13e-06 %"
        return f"{'> -' if fraction < 0 else '< '}{_plain(10.0**_FIXED_LOW, 1)} %"
    return f"{_plain(fraction * 100, digits)} %"


def format_temperature(kelvin: float) -> str:
    """Write an absolute temperature in °C with one decimal, and in K.

    Parameters
    ----------
    kelvin : float
        Thermodynamic temperature, K.

    Notes
    -----
    t/°C = T/K − 273.15 (SI Brochure, 9th ed., BIPM 2019, section 2.3.1).

    Examples
    --------
    >>> format_temperature(298.15)
    '25.0 °C (298.15 K)'
    >>> format_temperature(77.0)
    '-196.2 °C (77.00 K)'
    """
    kelvin = float(kelvin)
    if not math.isfinite(kelvin):
        return "n/a"
    # in decimal, so that 77 K shows -196.2 °C, not the float's -196.1499...
    celsius = (Decimal(repr(kelvin)) - _ZERO_CELSIUS).quantize(Decimal("0.1"), ROUND_HALF_EVEN)
    if celsius == 0:
        celsius = abs(celsius)  # no "-0.0 °C"
    return f"{celsius} °C ({kelvin:.2f} K)"


_ASCII = {
    "√Hz": "rtHz",
    "√": "sqrt",
    "\u00b5": "u",  # micro sign
    "\u03bc": "u",  # Greek small mu
    "\u03a9": "ohm",  # Greek capital omega
    "\u2126": "ohm",  # ohm sign
    "°C": "degC",
    "°F": "degF",
    "\u2103": "degC",  # degree Celsius sign
    "\u2109": "degF",  # degree Fahrenheit sign
    "°": "deg",
    "²": "^2",
    "³": "^3",
    "½": "^0.5",
    "∞": "inf",
    "±": "+/-",
    "·": "*",
    "×": "x",
    "\u2212": "-",  # minus sign
    "\u2013": "-",  # en dash
    "\u2014": "-",  # em dash
    "≤": "<=",
    "≥": ">=",
    "≈": "~",
}


def ascii_units(text: str) -> str:
    """Replace the non-ASCII characters resplan prints, for plain terminals.

    µ → u, Ω → ohm, √Hz → rtHz, °C → degC, plus ², ∞, ±, · and dashes; unusual
    spaces become plain spaces. Any other non-ASCII character is reduced to its
    ASCII base letter where it has one, else replaced by "?", so the result is
    always ASCII. The unit spellings produced read back through
    :mod:`resplan.units.parse`.

    Examples
    --------
    >>> ascii_units("4.07 nV/√Hz, 1.20 kΩ, 2.50 µV, 25.0 °C")
    '4.07 nV/rtHz, 1.20 kohm, 2.50 uV, 25.0 degC'
    >>> ascii_units("±∞ dB")
    '+/-inf dB'
    """
    for unicode_text, ascii_text in _ASCII.items():
        text = text.replace(unicode_text, ascii_text)
    if text.isascii():
        return text
    out = []
    for char in text:
        if char.isascii():
            out.append(char)
        elif char.isspace():
            out.append(" ")
        else:
            base = unicodedata.normalize("NFKD", char).encode("ascii", "ignore").decode()
            out.append(base or "?")
    return "".join(out)
