"""Quantities with units, as written in design files, turned into SI floats.

Design files hold every quantity as text with its unit (``"4.5 nV/√Hz"``,
``"10 kΩ"``, ``"25 degC"``). This module reads such text once, at the edge,
and hands the rest of resplan plain SI floats (V, A, Ω, F, Hz, s, K, V/√Hz ...).

Parsing goes in two steps. A small tokenizer of our own reads the number and
checks the unit expression, accepting the spellings engineers type (``rtHz``,
``√Hz``, ``sqrt(Hz)``, ``Hz^0.5``, ``°C``, ``Ω``/``ohm``, ``µ``/``u``, ``%``,
``kS/s``, a trailing ``rms``) and refusing what would be misread (``p-p``,
``peak``, a decimal comma). The common units (SI prefixes on V, A, Ω, F, Hz,
s ..., densities per √Hz, mV/V, %, ppm, degC ...) are then resolved by exact
table look-up in :mod:`resplan.units.tables`, without pint; any other unit
expression goes to pint, imported only when first needed, with a small
registry (``resplan/units/units.txt``) that builds in milliseconds. Both give the
same results (``tests/test_units_fastpath.py``).

Every failure, whatever its cause, is a :class:`resplan.errors.DesignError`
naming the field, the text given and what was expected.

Examples
--------
>>> parse_quantity("4.5 nV/√Hz", "voltage_density", "stages[0].en")
4.5e-09
>>> parse_quantity("10 kΩ", "resistance", "sensor.resistance")
10000.0
>>> parse_quantity("25 degC", "temperature", "sensor.temperature")
298.15
>>> parse_any("10 g", "requirement.resolution")
(0.01, 'kg')
"""

from __future__ import annotations

import functools
import math
import numbers
import re
import sys
from collections.abc import Iterable
from fractions import Fraction
from typing import TYPE_CHECKING, Any, NamedTuple

from ..errors import DesignError
from . import tables as unittables
from .formatting import format_number
from .ranges import RANGES, range_problem

if TYPE_CHECKING:  # pragma: no cover
    import pint

__all__ = [
    "DIMENSIONS",
    "Dimension",
    "parse_quantity",
    "parse_any",
    "parse_db",
    "parse_percent",
    "same_dimension",
]


class Dimension(NamedTuple):
    """One kind of quantity a design field can hold.

    Attributes
    ----------
    dimensionality : str
        pint dimensionality, such as ``"[voltage] / [frequency] ** 0.5"``;
        ``""`` for plain numbers. It is the dimension of ``si_unit`` (the
        tests check so), which is what the pint-free path compares against.
    description : str
        What the user is asked for, such as ``"a voltage noise density"``.
    si_unit : str
        The SI unit of the returned float, as shown to the user.
    """

    dimensionality: str
    description: str
    si_unit: str


#: The dimensions :func:`parse_quantity` knows, by name.
DIMENSIONS: dict[str, Dimension] = {
    "voltage": Dimension("[voltage]", "a voltage", "V"),
    "current": Dimension("[current]", "a current", "A"),
    "resistance": Dimension("[resistance]", "a resistance", "Ω"),
    "capacitance": Dimension("[capacitance]", "a capacitance", "F"),
    "frequency": Dimension("[frequency]", "a frequency", "Hz"),
    "time": Dimension("[time]", "a time", "s"),
    "temperature": Dimension("[temperature]", "a temperature", "K"),
    "temperature_difference": Dimension("[temperature]", "a temperature difference", "K"),
    "voltage_density": Dimension(
        "[voltage] / [frequency] ** 0.5", "a voltage noise density", "V/√Hz"
    ),
    "current_density": Dimension(
        "[current] / [frequency] ** 0.5", "a current noise density", "A/√Hz"
    ),
    "dimensionless": Dimension("", "a plain number", ""),
    "ratio_per_volt": Dimension("", "a sensitivity in volts per volt", "V/V"),
    "mass": Dimension("[mass]", "a mass", "kg"),
    "force": Dimension("[force]", "a force", "N"),
    "pressure": Dimension("[pressure]", "a pressure", "Pa"),
    "length": Dimension("[length]", "a length", "m"),
    "acceleration": Dimension("[acceleration]", "an acceleration", "m/s²"),
}

# An accepted input for each dimension, quoted in error messages.
_EXAMPLES: dict[str, str] = {
    "voltage": '"5 V"',
    "current": '"10 µA"',
    "resistance": '"10 kΩ"',
    "capacitance": '"100 nF"',
    "frequency": '"256 kHz"',
    "time": '"10 s"',
    "temperature": '"25 degC"',
    "temperature_difference": '"0.01 K"',
    "voltage_density": '"4.5 nV/√Hz"',
    "current_density": '"1 pA/√Hz"',
    "dimensionless": '0.5, "99.9 %" or "3 ppm"',
    "ratio_per_volt": '"2 mV/V"',
    "mass": '"200 kg"',
    "force": '"500 N"',
    "pressure": '"10 bar"',
    "length": '"25 mm"',
    "acceleration": '"9.81 m/s^2" or "1 gn"',
}

_ANY_EXPECTED = 'a quantity with a unit, such as "10 g"'
_DB_EXPECTED = 'a level in decibels such as "110 dB"'
_PERCENT_EXPECTED = 'a fraction between 0 and 1 (exclusive) such as "99.9 %" or 0.999'

# Longer input is refused before any parsing, so no text can make parsing slow.
_MAX_LENGTH = 100
# Largest exponent magnitude and parenthesis depth accepted in a unit expression.
_MAX_EXPONENT = 12
_MAX_DEPTH = 4
# Arithmetic is exact (fractions) and rounded once, at the end; conversion
# factors are first cleaned of pint's float round-off (unittables.exact), so
# "4.5 nV" gives the same float as 4.5e-9, "99.9 %" 0.999 and "32 degF" 273.15.
# Largest decimal exponent accepted in a number ("1e999"); 10**999 is cheap.
_MAX_NUMBER_EXPONENT_DIGITS = 3

_BASE_SYMBOLS = {
    "kilogram": "kg",
    "metre": "m",
    "second": "s",
    "ampere": "A",
    "kelvin": "K",
    "mole": "mol",
    "candela": "cd",
}


# The pint-free path for common units (resplan.units.tables); off only in tests,
# through _set_fast_path, to compare it with pint.
_fast_path = True


class _Rejected(Exception):
    """Internal: the text cannot be read; ``reason`` completes the message."""

    def __init__(self, reason: str = ""):
        super().__init__(reason)
        self.reason = reason


# ---------------------------------------------------------------------------
# registry


@functools.cache
def _registry() -> pint.UnitRegistry:
    """Build the small pint registry from ``units.txt`` (once, on first use)."""
    import sys
    from importlib.resources import files

    # pint probes for scipy at import (only its unit-choosing helper uses it);
    # keep scipy off the start-up path of `resplan check`. The probe sees it as
    # absent; the marker is removed at once, so later imports of scipy work.
    probe = "scipy" not in sys.modules
    if probe:
        sys.modules["scipy"] = None  # type: ignore[assignment]
    try:
        import pint
    finally:
        if probe and sys.modules.get("scipy", 0) is None:
            del sys.modules["scipy"]

    ureg = pint.UnitRegistry(None, on_redefinition="raise", cache_folder=None)
    text = files("resplan.units").joinpath("units.txt").read_text(encoding="utf-8")
    ureg.load_definitions(text.splitlines())
    return ureg


@functools.cache
def _spellings() -> tuple[str, ...]:
    """Every unit spelling the registry knows, prefixed symbols included.

    Read from ``units.txt`` itself; used for "did you mean" suggestions.
    """
    from importlib.resources import files

    text = files("resplan.units").joinpath("units.txt").read_text(encoding="utf-8")
    prefixes: list[str] = []
    names: list[str] = []
    for raw in text.splitlines():
        line = raw.split("#", 1)[0].strip()
        if not line or line.startswith("["):
            continue
        parts = [p.strip() for p in line.split("=")]
        if parts[0].endswith("-"):
            prefixes += [p[:-1] for p in parts[2:]]
            continue
        names.append(parts[0])
        names += [p for p in parts[2:] if p]
    # prefixes go on symbols and short names ("kΩ", "kohm", "mbar")
    prefixed = [p + n for p in prefixes for n in names if len(n) <= 4]
    extra = ["rtHz", "√Hz", "°C", "°F"]
    return tuple(dict.fromkeys(names + prefixed + extra))


# ---------------------------------------------------------------------------
# text → (number, unit expression)

_NUMBER = re.compile(r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE](?P<exponent>[+-]?\d+))?")
_NON_FINITE = re.compile(r"[+-]?(?:nan|inf|infinity)\b", re.IGNORECASE)
_PEAK_TO_PEAK = re.compile(
    r"(?:p-p|pk-pk|peak[\s-]*to[\s-]*peak|\bptp\b|\bpp\b|(?<=[VA])pp\b)", re.IGNORECASE
)
_PEAK = re.compile(r"(?:\b(?:pk|peak)\b|(?<=[VA])pk\b)", re.IGNORECASE)
_RMS = re.compile(r"[\s_]*(?:\(rms\)|rms)$", re.IGNORECASE)
_SAMPLES_PER_SECOND = re.compile(r"(?<![\w/])([kMG]?)S/s\b")
_UNICODE_FIXES = str.maketrans(
    {
        "\u2212": "-",  # minus sign
        "\u2126": "Ω",  # ohm sign → Greek capital omega
        "\u2103": "°C",  # degree Celsius sign
        "\u2109": "°F",  # degree Fahrenheit sign
        "\u00b7": "*",  # middle dot
        "\u22c5": "*",  # dot operator
        "\u00d7": "*",  # multiplication sign
    }
)
_WHITESPACE = re.compile(r"\s+")


def _split(text: str) -> tuple[Fraction, str]:
    """Split cleaned text into its number and its unit text ('' if none)."""
    if len(text) > _MAX_LENGTH:
        raise _Rejected(f"text longer than {_MAX_LENGTH} characters")
    text = _WHITESPACE.sub(" ", text.translate(_UNICODE_FIXES)).strip()
    if not text:
        raise _Rejected("empty text")
    if _NON_FINITE.match(text):
        raise _Rejected("not a finite number")
    match = _NUMBER.match(text)
    if match is None:
        raise _Rejected("no number at the start")
    exponent = match.group("exponent")
    if exponent and len(exponent.lstrip("+-")) > _MAX_NUMBER_EXPONENT_DIGITS:
        raise _Rejected("out of range")
    number = Fraction(match.group())
    return number, text[match.end() :].strip()


def _clean_unit(unit_text: str) -> str:
    """Refuse peak and peak-to-peak values, drop a trailing rms."""
    if _PEAK_TO_PEAK.search(unit_text):
        raise _Rejected(
            "a peak-to-peak value needs a stated coverage: give the rms value, "
            "or the p-p value with its coverage in the fields meant for it"
        )
    if _PEAK.search(unit_text):
        raise _Rejected("a peak value is not an rms value: give the rms value")
    unit_text = _RMS.sub("", unit_text).strip()
    return _SAMPLES_PER_SECOND.sub(r"\1SPS", unit_text)


# ---------------------------------------------------------------------------
# unit text → canonical pint expression

_TOKENS = re.compile(
    r"""
    (?P<space>\s+)
  | (?P<pow>\*\*|\^)
  | (?P<mul>\*)
  | (?P<div>/)
  | (?P<lpar>\()
  | (?P<rpar>\))
  | (?P<sup>[⁻⁺]?[⁰¹²³⁴⁵⁶⁷⁸⁹]+|½)
  | (?P<sqrt>√|(?:sqrt|rt)(?=\s*\())
  | (?P<one>1(?=\s*/))
  | (?P<name>°[CF]|%|[A-Za-zµμεΩ_]+)(?P<digits>\d+(?![\d.]))?
    """,
    re.VERBOSE,
)
_EXPONENT = re.compile(
    r"""\s*(?:
        \(\s*(?P<pnum>[+-]?\d+(?:\.\d+)?)\s*(?:/\s*(?P<pden>\d+)\s*)?\)
      | (?P<num>[+-]?\d+)\s*/\s*(?P<den>\d+)(?![\d.])
      | (?P<dec>[+-]?\d+(?:\.\d+)?)
    )""",
    re.VERBOSE,
)
_SUPERSCRIPTS = str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹⁻⁺", "0123456789-+")
_NAME_FIXES = {"°C": "degC", "°F": "degF", "%": "percent", "rtHz": "(Hz**0.5)"}


def _exponent(value: float) -> str:
    if not math.isfinite(value) or abs(value) > _MAX_EXPONENT:
        raise _Rejected(f"exponent {format_number(value)} out of range")
    return f"**({value!r})" if value != int(value) else f"**({int(value)})"


def _check_name(name: str) -> None:
    """Raise unless pint knows exactly this unit name (with any prefix)."""
    if _fast_path and unittables.known_name(name):
        return  # every such name reads the same in pint (see the fast-path tests)
    ureg = _registry()
    try:
        known = bool(ureg.parse_unit_name(name))
    except Exception:  # pint internals must not leak to users
        known = False
    if not known:
        raise _Rejected(_unknown_unit_reason(name))


def _unknown_unit_reason(name: str) -> str:
    if name in {"dB", "db", "dBFS", "dBc"}:
        return "decibels go only in the fields meant for them"
    import difflib

    spellings = _spellings()
    lowered = {s.lower(): s for s in reversed(spellings)}
    guess = lowered.get(name.lower())
    if guess is None:
        close = difflib.get_close_matches(name, spellings, n=1, cutoff=0.7)
        guess = close[0] if close else None
    hint = f'; did you mean "{guess}"?' if guess else ""
    return f'unknown unit "{name}"{hint}'


@functools.lru_cache(maxsize=512)
def _translate(unit_text: str) -> str:
    """Check a unit expression and rewrite it for pint.

    Returns the pint expression. Products,
    quotients, parentheses and bounded numeric exponents are allowed; numbers
    elsewhere are not, so pint never evaluates arbitrary arithmetic.
    """
    out: list[str] = []
    stack: list[bool] = []  # one entry per open parenthesis: is it a sqrt(...)?
    expect_operand = True  # at the start, after an operator or "("
    after_exponent = False
    pending_sqrt = False
    pos = 0
    while pos < len(unit_text):
        m = _TOKENS.match(unit_text, pos)
        if m is None:
            raise _Rejected(f'cannot read "{unit_text[pos : pos + 10]}" in the unit')
        kind = m.lastgroup if m.lastgroup != "digits" else "name"
        pos = m.end()
        if kind == "space":
            continue
        if kind in ("name", "one", "lpar", "sqrt"):
            if not expect_operand:
                out.append("*")  # implicit product, as in "N m"
            if pending_sqrt and kind not in ("name", "lpar"):
                raise _Rejected("√ must be followed by a unit or a parenthesis")
            if kind == "name":
                name = m.group("name")
                if name in _NAME_FIXES:
                    piece = _NAME_FIXES[name]
                else:
                    _check_name(name)
                    piece = name
                if m.group("digits"):  # "s2" is s**2
                    piece = f"({piece}{_exponent(float(m.group('digits')))})"
                if pending_sqrt:
                    piece = f"({piece}**0.5)"
                    pending_sqrt = False
                out.append(piece)
                expect_operand, after_exponent = False, False
            elif kind == "one":
                out.append("1")
                expect_operand, after_exponent = False, False
            elif kind == "lpar":
                # "√(...)" becomes "((...)**0.5)": the extra "(" closes at ")"
                out.append("((" if pending_sqrt else "(")
                stack.append(pending_sqrt)
                if len(stack) > _MAX_DEPTH:
                    raise _Rejected("parentheses nested too deeply")
                pending_sqrt = False
                expect_operand = True
            else:  # sqrt
                pending_sqrt = True
                expect_operand = True
                continue
            continue
        # operators and exponents need an operand before them
        if expect_operand:
            raise _Rejected(f'"{m.group()}" where a unit was expected')
        if kind in ("pow", "sup"):
            if after_exponent:
                raise _Rejected("two exponents in a row")
            if kind == "sup":
                sup = m.group()
                value = 0.5 if sup == "½" else float(sup.translate(_SUPERSCRIPTS))
            else:
                e = _EXPONENT.match(unit_text, pos)
                if e is None:
                    raise _Rejected("an exponent must be a number, such as Hz^0.5")
                pos = e.end()
                if e.group("pnum") is not None:
                    value = float(e.group("pnum")) / float(e.group("pden") or 1)
                elif e.group("num") is not None:
                    value = float(e.group("num")) / float(e.group("den"))
                else:
                    value = float(e.group("dec"))
            if not math.isfinite(value) or value == 0:
                raise _Rejected("an exponent must be a non-zero number")
            out.append(_exponent(value))
            after_exponent = True
        elif kind == "rpar":
            if not stack:
                raise _Rejected('unmatched ")"')
            out.append(")**0.5)" if stack.pop() else ")")
            after_exponent = False
        else:  # mul, div
            out.append(m.group())
            expect_operand, after_exponent = True, False
    if pending_sqrt or (expect_operand and out):
        raise _Rejected("the unit ends early")
    if stack:
        raise _Rejected('unmatched "("')
    return "".join(out)


# ---------------------------------------------------------------------------
# canonical expression → dimension and conversion to SI


class _UnitInfo(NamedTuple):
    dimensionality: tuple[Fraction, ...]  # exponents of unittables.BASE_QUANTITIES
    factor: Fraction  # SI value of 1 unit, or of a 1-unit difference for offset units
    offset: Fraction  # SI value of 0 unit (non-zero only for degC, degF)
    base_unit: str  # the SI base unit string, such as "kg*m/s**2"


@functools.lru_cache(maxsize=512)
def _unit_info(expression: str) -> _UnitInfo:
    known = unittables.evaluate(expression) if _fast_path else None
    if known is not None:
        base = _base_unit_string(known.root_units())
        return _UnitInfo(known.dimensions, known.factor, known.offset, base)
    return _pint_unit_info(expression)


def _pint_unit_info(expression: str) -> _UnitInfo:
    ureg = _registry()
    try:
        units = ureg.parse_units(expression) if expression else ureg.dimensionless
        one = ureg.Quantity(1.0, units)
        zero = ureg.Quantity(0.0, units)
        root_zero = zero.to_root_units()
        offset = float(root_zero.magnitude)
        if offset == 0.0:
            root = one.to_root_units()
        else:  # offset unit: the factor is that of a difference
            root = (one - zero).to_root_units()
        factor = float(root.magnitude)
        dimensionality = unittables.dimension_vector(dict(units.dimensionality))
        base = _base_unit_string(root.unit_items())
    except _Rejected:
        raise
    except Exception:  # pint internals must not leak to users
        raise _Rejected("not a unit expression") from None
    if not (math.isfinite(factor) and math.isfinite(offset)) or factor == 0.0:
        raise _Rejected("unit scale out of range")
    return _UnitInfo(dimensionality, unittables.exact(factor), unittables.exact(offset), base)


def _base_unit_string(units: Iterable[tuple[str, float]]) -> str:
    """Write root units as "kg*m**2/(s**3*A)"; "" when dimensionless."""
    ordered = sorted(units, key=lambda kv: list(_BASE_SYMBOLS).index(kv[0]))

    def term(name: str, power: float) -> str:
        symbol = _BASE_SYMBOLS[name]
        power = abs(power)
        if power == 1:
            return symbol
        return f"{symbol}**{int(power) if power == int(power) else power!r}"

    numerator = [term(n, p) for n, p in ordered if p > 0]
    denominator = [term(n, p) for n, p in ordered if p < 0]
    top = "*".join(numerator) or ("1" if denominator else "")
    if not denominator:
        return top
    bottom = "*".join(denominator)
    return f"{top}/({bottom})" if len(denominator) > 1 else f"{top}/{bottom}"


@functools.cache
def _target(dimension: str) -> tuple[Fraction, ...]:
    spec = DIMENSIONS[dimension]
    if _fast_path:  # the dimension of the SI unit, read like any unit
        return _unit_info(_translate(spec.si_unit)).dimensionality
    ureg = _registry()
    if not spec.dimensionality:
        return unittables.DIMENSIONLESS
    return unittables.dimension_vector(dict(ureg.get_dimensionality(spec.dimensionality)))


def _set_fast_path(enabled: bool) -> bool:
    """Turn the pint-free path on or off (for tests); return the previous setting."""
    global _fast_path
    previous, _fast_path = _fast_path, bool(enabled)
    _translate.cache_clear()
    _unit_info.cache_clear()
    _target.cache_clear()
    return previous


def _described(dimensionality: tuple[Fraction, ...]) -> str | None:
    """Name a dimensionality in words, if it is one of DIMENSIONS."""
    for name, spec in DIMENSIONS.items():
        if name in ("temperature_difference", "ratio_per_volt"):
            continue
        if _target(name) == dimensionality:
            return spec.description
    return None


# ---------------------------------------------------------------------------
# public functions


def _expected(dimension: str, reason: str = "") -> str:
    spec = DIMENSIONS[dimension]
    text = f"{spec.description} such as {_EXAMPLES[dimension]}"
    return f"{text} ({reason})" if reason else text


def _read(text: Any) -> tuple[Fraction, str]:
    """Read text or a number into (number, cleaned unit text)."""
    if isinstance(text, bool) or not isinstance(text, str | numbers.Real):
        raise _Rejected("not a number or text")
    if isinstance(text, str):
        number, unit_text = _split(text)
        return number, _clean_unit(unit_text) if unit_text else ""
    try:
        value = float(text)
    except (TypeError, ValueError, OverflowError):
        raise _Rejected("not a finite number") from None
    if not math.isfinite(value):
        raise _Rejected("not a finite number")
    return Fraction(value), ""


def _finite(value: Fraction) -> float:
    try:
        result = float(value)
    except OverflowError:
        raise _Rejected("out of range") from None
    if not math.isfinite(result):
        raise _Rejected("out of range")
    if value != 0 and (result == 0 or abs(result) < sys.float_info.min):
        # A value that is not zero but rounds to zero or to a subnormal double.
        raise _Rejected("out of range: too small to compute with")
    return result


def parse_quantity(text: str | int | float, dimension: str, field: str) -> float:
    """Read a quantity with its unit and return its SI magnitude.

    Parameters
    ----------
    text : str or int or float
        The value from the design file, such as ``"4.5 nV/√Hz"``. A bare
        number (or numeric text) is accepted only for ``"dimensionless"``.
    dimension : str
        A key of :data:`DIMENSIONS`, such as ``"voltage_density"``.
    field : str
        Path of the field, such as ``"stages[1].en"``; used in error messages.

    Returns
    -------
    float
        The magnitude in the SI unit ``DIMENSIONS[dimension].si_unit``.
        Temperatures are absolute, in K (``"25 degC"`` → 298.15);
        ``"temperature_difference"`` reads degC and degF as differences
        (``"0.01 degC"`` → 0.01). ``"ratio_per_volt"`` returns the ratio
        (``"2 mV/V"`` → 0.002).

    Raises
    ------
    DesignError
        For any text that is not a finite quantity of the requested dimension.
    ValueError
        If ``dimension`` is not a key of :data:`DIMENSIONS` (a programming error).

    Notes
    -----
    Unit definitions: SI Brochure, 9th ed. (BIPM 2019); the degree Celsius
    follows T/K = t/°C + 273.15 (ibid., section 2.3.1). See ``units.txt``.

    Examples
    --------
    >>> parse_quantity("2 mV/V", "ratio_per_volt", "sensor.sensitivity")
    0.002
    >>> parse_quantity("0.01 degC", "temperature_difference", "requirement.resolution")
    0.01
    >>> parse_quantity("99.9 %", "dimensionless", "coverage")
    0.999
    >>> parse_quantity("4.5 nV", "voltage_density", "stages[1].en")
    Traceback (most recent call last):
    ...
    resplan.errors.DesignError: stages[1].en: got "4.5 nV", expected a voltage noise density \
such as "4.5 nV/√Hz" (nV is a voltage)
    """
    if dimension not in DIMENSIONS:
        raise ValueError(f"unknown dimension {dimension!r}; known: {', '.join(DIMENSIONS)}")
    try:
        return _parse(text, dimension)
    except _Rejected as bad:
        if bad.reason.startswith("out of range") and dimension in RANGES:
            # Too large or too small for a double: name the range the field accepts.
            expected = f"{range_problem(math.inf, dimension)} ({bad.reason})"
            raise DesignError(field, text, expected) from None
        raise DesignError(field, text, _expected(dimension, bad.reason)) from None
    except Exception:  # a last guard: users never see a traceback
        raise DesignError(field, text, _expected(dimension)) from None


def _parse(text: Any, dimension: str) -> float:
    """Body of :func:`parse_quantity`; raises :class:`_Rejected`."""
    number, unit_text = _read(text)
    if not unit_text:
        if DIMENSIONS[dimension].dimensionality or dimension == "ratio_per_volt":
            raise _Rejected("a unit is required")
        return _finite(number)
    info = _unit_info(_translate(unit_text))
    if info.dimensionality != _target(dimension):
        given = _described(info.dimensionality)
        if given is None:
            raise _Rejected(f"{unit_text} is {info.base_unit or '1'} in SI base units")
        hint = ""
        if dimension == "acceleration" and given == "a mass":
            hint = "; standard gravity is written gn"
        raise _Rejected(f"{unit_text} is {given}{hint}")
    if dimension == "temperature":
        kelvin = _finite(number * info.factor + info.offset)
        if kelvin < 0:
            raise _Rejected("below absolute zero")
        return kelvin
    return _finite(number * info.factor)


def parse_any(text: str | int | float, field: str) -> tuple[float, str]:
    """Read a quantity of any dimension: its SI magnitude and SI base unit.

    Meant for engineering-unit figures (a resolution of ``"10 g"`` checked
    against a capacity of ``"200 kg"``): the caller compares the unit strings.

    Parameters
    ----------
    text : str or int or float
        Such as ``"10 g"`` or ``"0.5 psi"``. A bare number is dimensionless.
    field : str
        Path of the field, for error messages.

    Returns
    -------
    magnitude : float
        The value in SI base units.
    unit : str
        The SI base unit, written from base symbols in the fixed order
        kg, m, s, A, K, mol, cd, such as ``"kg"``, ``"kg*m/s**2"`` or
        ``"kg/(m*s**2)"``; ``""`` for a plain number. Two quantities have the
        same dimension exactly when their strings are equal.

    Notes
    -----
    degC and degF are read as temperature *differences* here (``"0.01 degC"``
    → ``(0.01, "K")``), since spans and resolutions are differences. Use
    :func:`parse_quantity` with ``"temperature"`` for absolute temperatures.

    Examples
    --------
    >>> parse_any("200 kg", "sensor.capacity")
    (200.0, 'kg')
    >>> parse_any("1 N", "sensor.capacity")
    (1.0, 'kg*m/s**2')
    >>> parse_any("0.01 degC", "requirement.resolution")
    (0.01, 'K')
    """
    try:
        number, unit_text = _read(text)
        if not unit_text:
            return _finite(number), ""
        info = _unit_info(_translate(unit_text))
        return _finite(number * info.factor), info.base_unit
    except _Rejected as bad:
        reason = f" ({bad.reason})" if bad.reason else ""
        raise DesignError(field, text, _ANY_EXPECTED + reason) from None
    except Exception:  # a last guard: users never see a traceback
        raise DesignError(field, text, _ANY_EXPECTED) from None


_DB = re.compile(r"(?P<number>\S+?)\s*(?:dB)?", re.IGNORECASE)


def parse_db(text: str | int | float, field: str) -> float:
    """Read a level in decibels, such as ``"110 dB"``, and return it in dB.

    Parameters
    ----------
    text : str or int or float
        ``"110 dB"``, ``"-3 dB"``, ``"110"`` or a number.
    field : str
        Path of the field, for error messages.

    Returns
    -------
    float
        The level in dB (``"110 dB"`` → 110.0). dB stays a plain number: it is
        not turned into a ratio here, since power and amplitude ratios differ.

    Examples
    --------
    >>> parse_db("110 dB", "requirement.dynamic_range")
    110.0
    >>> parse_db(96, "adc.snr")
    96.0
    """
    try:
        if isinstance(text, str):
            body = _WHITESPACE.sub(" ", text.translate(_UNICODE_FIXES)).strip()
            if len(body) > _MAX_LENGTH:
                raise _Rejected(f"text longer than {_MAX_LENGTH} characters")
            m = _DB.fullmatch(body)
            if m is None or not _NUMBER.fullmatch(m.group("number")):
                raise _Rejected()
            text_number: str | float = m.group("number")
        elif isinstance(text, numbers.Real) and not isinstance(text, bool):
            text_number = float(text)
        else:
            raise _Rejected("not a number or text")
        value = float(text_number)
        if not math.isfinite(value):
            raise _Rejected("not a finite number")
        return value
    except _Rejected as bad:
        reason = f" ({bad.reason})" if bad.reason else ""
        raise DesignError(field, text, _DB_EXPECTED + reason) from None
    except Exception:  # a last guard: users never see a traceback
        raise DesignError(field, text, _DB_EXPECTED) from None


def parse_percent(text: str | int | float, field: str) -> float:
    """Read a fraction strictly between 0 and 1, given as a percent or a number.

    Parameters
    ----------
    text : str or int or float
        ``"99.9 %"``, ``"0.999"``, ``0.999`` or ``"999000 ppm"``.
    field : str
        Path of the field, for error messages.

    Returns
    -------
    float
        The fraction (dimensionless), 0 < result < 1.

    Examples
    --------
    >>> parse_percent("99.9 %", "coverage")
    0.999
    >>> parse_percent(0.9973, "coverage")
    0.9973
    """
    try:
        fraction = _parse(text, "dimensionless")
        if not 0.0 < fraction < 1.0:
            raise _Rejected()
        return fraction
    except _Rejected as bad:
        reason = f" ({bad.reason})" if bad.reason else ""
        raise DesignError(field, text, _PERCENT_EXPECTED + reason) from None
    except Exception:  # a last guard: users never see a traceback
        raise DesignError(field, text, _PERCENT_EXPECTED) from None


def same_dimension(unit_a: str, unit_b: str) -> bool:
    """Tell whether two unit expressions have the same dimension.

    Parameters
    ----------
    unit_a, unit_b : str
        Unit expressions without a number, such as ``"kg"`` and ``"g"``;
        ``""`` means dimensionless.

    Returns
    -------
    bool

    Raises
    ------
    DesignError
        If either is not a unit expression (field ``"unit"``).

    Examples
    --------
    >>> same_dimension("g", "t")
    True
    >>> same_dimension("nV/rtHz", "V")
    False
    """
    dimensionalities = []
    for unit in (unit_a, unit_b):
        try:
            if not isinstance(unit, str):
                raise _Rejected("not text")
            if len(unit) > _MAX_LENGTH:
                raise _Rejected(f"text longer than {_MAX_LENGTH} characters")
            cleaned = _WHITESPACE.sub(" ", unit.translate(_UNICODE_FIXES)).strip()
            cleaned = _clean_unit(cleaned) if cleaned else ""
            expression = _translate(cleaned) if cleaned else ""
            dimensionalities.append(_unit_info(expression).dimensionality)
        except _Rejected as bad:
            reason = f" ({bad.reason})" if bad.reason else ""
            raise DesignError("unit", unit, 'a unit such as "kg"' + reason) from None
        except Exception:  # a last guard: users never see a traceback
            raise DesignError("unit", unit, 'a unit such as "kg"') from None
    return dimensionalities[0] == dimensionalities[1]
