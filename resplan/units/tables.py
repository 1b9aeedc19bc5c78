"""Exact values of the common unit expressions, computed without pint.

:mod:`resplan.units.parse` checks unit text and rewrites it as a canonical
expression (``"nV/(Hz**0.5)"``, ``"kohm"``, ``"m/s**(2)"``). Nearly every
design file uses a few dozen units only: SI prefixes on V, A, Ω, F, Hz, s, K,
W, g, N, Pa and m, densities per √Hz, mV/V, %, ppm, SPS, gn, bar, degC and
degF. For those, :func:`evaluate` gives the SI factor as an exact fraction and
the dimension as the exponents of the SI base quantities, by table look-up and
plain arithmetic, so that reading such a design never imports pint.

Anything else (a unit not in the tables, a plural, an exponent that is not a
multiple of one half, a prefixed unit under a root, an offset unit inside a
product, a very large scale, a factor that pint's float round-off could move
off the number it stands for) gives ``None``, and resplan.units.parse asks pint
exactly as it would without this module. The tables duplicate only what they
must; ``tests/test_units_fastpath.py`` checks every entry, and many
combinations of them, against pint as the outside reference.

Examples
--------
>>> evaluate("nV/(Hz**0.5)").factor
Fraction(1, 1000000000)
>>> evaluate("kohm").dimensions == evaluate("V/A").dimensions
True
>>> evaluate("psi") is None  # not in the tables: pint's job
True
"""

from __future__ import annotations

import functools
import math
import re
from decimal import Decimal
from fractions import Fraction
from typing import NamedTuple

__all__ = [
    "BASE_QUANTITIES",
    "ROOT_UNITS",
    "DIMENSIONLESS",
    "Known",
    "exact",
    "dimension_vector",
    "known_name",
    "spellings",
    "evaluate",
]

#: The seven SI base quantities, as pint names their dimensions, in the order
#: of every dimension vector here (SI Brochure 9th ed., Table 1).
BASE_QUANTITIES: tuple[str, ...] = (
    "[mass]",
    "[length]",
    "[time]",
    "[current]",
    "[temperature]",
    "[substance]",
    "[luminosity]",
)
#: The SI base unit of each base quantity, in the same order (ibid., Table 2).
ROOT_UNITS: tuple[str, ...] = (
    "kilogram",
    "metre",
    "second",
    "ampere",
    "kelvin",
    "mole",
    "candela",
)

Vector = tuple[Fraction, ...]

#: The dimension vector of a plain number.
DIMENSIONLESS: Vector = (Fraction(0),) * len(BASE_QUANTITIES)


def _vector(kg: int = 0, m: int = 0, s: int = 0, a: int = 0, k: int = 0) -> Vector:
    return tuple(Fraction(x) for x in (kg, m, s, a, k, 0, 0))


def dimension_vector(exponents: dict[str, float]) -> Vector:
    """Turn base-dimension exponents keyed by name into a dimension vector.

    Parameters
    ----------
    exponents : dict
        Such as ``{"[length]": 1, "[time]": -2}`` (pint's dimensionality).

    Returns
    -------
    tuple of Fraction
        One exponent per entry of :data:`BASE_QUANTITIES`.

    Raises
    ------
    ValueError
        For a name that is not one of :data:`BASE_QUANTITIES`.

    Examples
    --------
    >>> dimension_vector({"[length]": 1, "[time]": -2}) == evaluate("m/s**(2)").dimensions
    True
    """
    vector = list(DIMENSIONLESS)
    for name, power in exponents.items():
        vector[BASE_QUANTITIES.index(name)] = Fraction(power)
    return tuple(vector)


# ---------------------------------------------------------------------------
# pint's floats → exact numbers

# Digits of a factor kept, and the most a "short decimal" may have; largest
# denominator of a simple fraction such as 5/9.
_FACTOR_DIGITS = 15
_SHORT_DIGITS = 12
_MAX_DENOMINATOR = 1000


def exact(value: float) -> Fraction:
    """The exact number a conversion factor stands for, as a fraction.

    pint builds factors such as 1e-9 from products of prefixes and 5/9 from a
    float division, leaving round-off in the last bit. A factor that is a short
    decimal at 15 significant digits (1e-09, 0.45359237, 273.15) or, within
    1e-15, a fraction with a small denominator (5/9) is taken as that number;
    any other is kept exactly as the float it is.

    Examples
    --------
    >>> exact(1e-3 * 1e-6), exact(5 / 9)
    (Fraction(1, 1000000000), Fraction(5, 9))
    """
    rounded = Decimal(f"{value:.{_FACTOR_DIGITS}g}")  # number-format: reviewed (exact arithmetic)
    if len(rounded.normalize().as_tuple().digits) <= _SHORT_DIGITS:
        return Fraction(rounded)
    as_fraction = Fraction(value)
    simple = as_fraction.limit_denominator(_MAX_DENOMINATOR)
    if abs(simple - as_fraction) <= abs(as_fraction) * Fraction(1, 10**15):
        return simple
    return as_fraction


def _settled(factor: Fraction, float_error: float) -> bool:
    """Tell whether every float pint may compute for ``factor`` cleans to it.

    pint's float lies within ``float_error`` (relative) of the exact factor.
    :func:`exact` rounds monotonically, so if the first and the last float in
    that interval clean to the factor, pint's float does too.
    """
    margin = Fraction(float_error)
    low, high = factor * (1 - margin), factor * (1 + margin)
    try:
        first, last = float(low), float(high)
    except OverflowError:
        return False
    if Fraction(first) < low:
        first = math.nextafter(first, math.inf)
    if Fraction(last) > high:
        last = math.nextafter(last, -math.inf)
    return all(math.isfinite(x) and x != 0.0 and exact(x) == factor for x in (first, last))


# ---------------------------------------------------------------------------
# tables

# SI prefixes: SI Brochure 9th ed., Table 7 (the same set as units.txt). The
# micro sign (U+00B5), the Greek mu (U+03BC) and "u" all stand for micro.
_PREFIXES: dict[str, Fraction] = {
    "a": Fraction(1, 10**18),
    "f": Fraction(1, 10**15),
    "p": Fraction(1, 10**12),
    "n": Fraction(1, 10**9),
    "µ": Fraction(1, 10**6),
    "μ": Fraction(1, 10**6),
    "u": Fraction(1, 10**6),
    "m": Fraction(1, 10**3),
    "c": Fraction(1, 10**2),
    "d": Fraction(1, 10),
    "da": Fraction(10),
    "h": Fraction(10**2),
    "k": Fraction(10**3),
    "M": Fraction(10**6),
    "G": Fraction(10**9),
    "T": Fraction(10**12),
}

_VOLT = _vector(kg=1, m=2, s=-3, a=-1)
_OHM = _vector(kg=1, m=2, s=-3, a=-2)
_PASCAL = _vector(kg=1, m=-1, s=-2)
_HERTZ = _vector(s=-1)

# Units that take a prefix: (SI value of one unit, dimension vector).
_UNITS: dict[str, tuple[Fraction, Vector]] = {
    # SI base units (SI Brochure 9th ed., Table 2); the gram is 1e-3 kg
    "m": (Fraction(1), _vector(m=1)),
    "g": (Fraction(1, 1000), _vector(kg=1)),
    "s": (Fraction(1), _vector(s=1)),
    "A": (Fraction(1), _vector(a=1)),
    "K": (Fraction(1), _vector(k=1)),
    # derived units with special names (ibid., Table 4)
    "Hz": (Fraction(1), _HERTZ),
    "N": (Fraction(1), _vector(kg=1, m=1, s=-2)),
    "Pa": (Fraction(1), _PASCAL),
    "W": (Fraction(1), _vector(kg=1, m=2, s=-3)),
    "V": (Fraction(1), _VOLT),
    "Ω": (Fraction(1), _OHM),
    "ohm": (Fraction(1), _OHM),
    "Ohm": (Fraction(1), _OHM),
    "F": (Fraction(1), _vector(kg=-1, m=-2, s=4, a=2)),
    # samples per second, counted as a frequency (common practice, no source)
    "SPS": (Fraction(1), _HERTZ),
    "sps": (Fraction(1), _HERTZ),
    # bar: 1e5 Pa exactly (from memory, as in units.txt)
    "bar": (Fraction(10**5), _PASCAL),
    # standard gravity: 9.806 65 m/s^2 exactly (3rd CGPM, 1901; from memory)
    "gn": (Fraction(980665, 100000), _vector(m=1, s=-2)),
}

# Plain ratios, never prefixed ("percent" is how resplan.units.parse writes "%").
_RATIOS: dict[str, Fraction] = {
    "percent": Fraction(1, 100),
    "ppm": Fraction(1, 10**6),
    "ppb": Fraction(1, 10**9),
    # strain, a length ratio: 1 µε = 1e-6 (the trade's spellings; common practice, no source)
    "strain": Fraction(1),
    "microstrain": Fraction(1, 10**6),
    "ue": Fraction(1, 10**6),
    "\u00b5\u03b5": Fraction(1, 10**6),  # µε with the micro sign
    "\u03bc\u03b5": Fraction(1, 10**6),  # με with the Greek mu
}

# Units with an offset: (size of one degree in K, SI value of 0 degrees).
# T/K = t/degC + 273.15 (SI Brochure 9th ed., 2.3.1);
# T/K = (t/degF + 459.67) * 5/9 (from memory, as in units.txt).
# Read here only when the whole expression is the one unit; inside a product
# pint's rules for offset units apply, so such text goes to pint.
_OFFSET_UNITS: dict[str, tuple[Fraction, Fraction]] = {
    "degC": (Fraction(1), Fraction(27315, 100)),
    "degF": (Fraction(5, 9), Fraction(45967, 100) * Fraction(5, 9)),
}


class _Reading(NamedTuple):
    factor: Fraction  # SI value of one unit
    vector: Vector  # dimension
    scales: tuple[Fraction, ...]  # the factors pint multiplies for it (prefix, unit), not 1


@functools.cache
def spellings() -> dict[str, _Reading]:
    """Every unit name the tables know, with its SI factor and dimension.

    Prefixed names are built from the prefix and unit tables; a spelling that
    could be read two ways is left out (none can, with these tables), so that
    pint decides.

    Returns
    -------
    dict
        ``{"kohm": (Fraction(1000), vector, scales), ...}``; offset units excluded.
    """

    def reading(factor: Fraction, vector: Vector, *scales: Fraction) -> _Reading:
        return _Reading(factor, vector, tuple(x for x in scales if x != 1))

    table: dict[str, _Reading] = {}
    seen: dict[str, int] = {}
    readings = [(name, reading(f, v, f)) for name, (f, v) in _UNITS.items()]
    readings += [(name, reading(f, DIMENSIONLESS, f)) for name, f in _RATIOS.items()]
    readings += [
        (prefix + name, reading(scale * f, v, scale, f))
        for prefix, scale in _PREFIXES.items()
        for name, (f, v) in _UNITS.items()
    ]
    for spelled, value in readings:
        seen[spelled] = seen.get(spelled, 0) + 1
        table[spelled] = value
    return {name: value for name, value in table.items() if seen[name] == 1}


def known_name(name: str) -> bool:
    """Tell whether the tables read this unit name (prefix included).

    Examples
    --------
    >>> known_name("kΩ"), known_name("degC"), known_name("kohms")
    (True, True, False)
    """
    return name in _OFFSET_UNITS or name in spellings()


# ---------------------------------------------------------------------------
# canonical expression → factor and dimension


class Known(NamedTuple):
    """A unit expression the tables could read.

    Attributes
    ----------
    factor : Fraction
        SI value of one unit (of a one-unit difference for degC and degF).
    dimensions : tuple of Fraction
        Exponents of the base quantities, in the order of :data:`BASE_QUANTITIES`.
    offset : Fraction
        SI value of zero units: 273.15 K for degC, non-zero only for offset units.
    """

    factor: Fraction
    dimensions: Vector
    offset: Fraction

    def root_units(self) -> list[tuple[str, float]]:
        """(SI base unit, exponent) for each base quantity present, as pint lists them."""
        return [
            (root, float(power))
            for root, power in zip(ROOT_UNITS, self.dimensions, strict=True)
            if power
        ]


class _NotHere(Exception):
    """Internal: the expression is not for the tables; pint reads it."""


_TOKEN = re.compile(r"\*\*|[*/()]|-?\d+(?:\.\d+)?(?:e[+-]?\d+)?|[^\W\d]+")
# Scales beyond 10**±60 are left to pint, which owns the out-of-range errors
# and the float overflow rules; it also keeps the fractions here small.
_MAX_DECADES = 60


def _tokens(expression: str) -> list[str]:
    out: list[str] = []
    pos = 0
    while pos < len(expression):
        m = _TOKEN.match(expression, pos)
        if m is None:
            raise _NotHere
        out.append(m.group())
        pos = m.end()
    return out


# One rounding of a float operation, relative: 2**-53 (IEEE 754 binary64,
# round to nearest). C's pow() is allowed one ulp, two roundings.
_ROUNDING = 2.0**-53


def _representation_error(value: Fraction) -> float:
    """Relative error of the nearest float to ``value`` (exact, then rounded up)."""
    return float(abs(Fraction(float(value)) - value) / value) * (1 + 2**-50)


class _Reader:
    """Recursive descent over the canonical grammar resplan.units.parse writes.

    ``product := power (("*" | "/") power)*``, ``power := atom ("**" exponent)?``,
    ``atom := name | "1" | "(" product ")"``, ``exponent := number | "(" number ")"``;
    the same precedence and left-to-right order as pint's evaluator.
    """

    def __init__(self, tokens: list[str]):
        self.tokens = tokens
        self.pos = 0
        # per unit name read: [its overall exponent, the scales pint multiplies]
        self.terms: list[list] = []

    def peek(self) -> str | None:
        return self.tokens[self.pos] if self.pos < len(self.tokens) else None

    def take(self) -> str:
        token = self.peek()
        if token is None:
            raise _NotHere
        self.pos += 1
        return token

    def product(self) -> tuple[Fraction, Vector]:
        factor, vector = self.power()
        while self.peek() in ("*", "/"):
            op = self.take()
            first = len(self.terms)
            f, v = self.power()
            if op == "*":
                factor, vector = factor * f, tuple(x + y for x, y in zip(vector, v, strict=True))
            else:  # pint raises a divisor's scales to a negative power
                factor, vector = factor / f, tuple(x - y for x, y in zip(vector, v, strict=True))
                for term in self.terms[first:]:
                    term[0] = -term[0]
        return factor, vector

    def power(self) -> tuple[Fraction, Vector]:
        first = len(self.terms)
        factor, vector = self.atom()
        if self.peek() != "**":
            return factor, vector
        self.take()
        if self.peek() == "(":
            self.take()
            exponent = self.number()
            if self.take() != ")":
                raise _NotHere
        else:
            exponent = self.number()
        # Halves only: their float sums and products in pint are exact too.
        if (2 * exponent).denominator != 1:
            raise _NotHere
        if factor != 1:
            # a root of a scale is irrational in general: pint's float stands
            if exponent.denominator != 1:
                raise _NotHere
            decades = abs(math.log10(factor.numerator) - math.log10(factor.denominator))
            if abs(exponent) * decades > _MAX_DECADES:
                raise _NotHere
            factor = factor ** int(exponent)
        for term in self.terms[first:]:
            term[0] *= exponent
        return factor, tuple(x * exponent for x in vector)

    def float_error(self) -> float:
        """Bound on the relative error of pint's float for the factor read.

        pint starts from 1 and multiplies in, for each unit, the float of each
        of its scales raised to the unit's exponent; scales of 1 add nothing.
        """
        bound = 0.0
        products = -1  # the first product, 1 × x, is exact
        for exponent, scales in self.terms:
            for scale in scales:
                bound += abs(float(exponent)) * _representation_error(scale)
                bound += 0.0 if exponent == 1 else 2 * _ROUNDING  # pow, within 1 ulp
                products += 1
        return (bound + max(products, 0) * _ROUNDING) * (1 + 2**-40)

    def number(self) -> Fraction:
        token = self.take()
        if not token[-1:].isdigit():
            raise _NotHere
        try:
            return Fraction(float(token))
        except (ValueError, OverflowError):
            raise _NotHere from None

    def atom(self) -> tuple[Fraction, Vector]:
        token = self.take()
        if token == "(":
            value = self.product()
            if self.take() != ")":
                raise _NotHere
            return value
        if token == "1":
            return Fraction(1), DIMENSIONLESS
        known = spellings().get(token)
        if known is None:
            raise _NotHere
        self.terms.append([Fraction(1), known.scales])
        return known.factor, known.vector


def evaluate(expression: str) -> Known | None:
    """SI factor and dimension of a canonical unit expression, or ``None``.

    Parameters
    ----------
    expression : str
        A unit expression as resplan.units.parse writes it for pint, such as
        ``"nV/(Hz**0.5)"``; ``""`` is a plain number.

    Returns
    -------
    Known or None
        ``None`` when the expression is not for these tables (pint reads it).

    Notes
    -----
    The factor here is exact; pint's is a float with round-off, which
    resplan.units.parse cleans with :func:`exact`. The exact factor is returned only
    where every float within a bound on pint's round-off cleans to it. The
    bound is first order: the representation error of each scale times the
    magnitude of its exponent, plus one rounding per product and two per power
    (C's pow is within one ulp), with a small margin for the second-order terms.
    Otherwise (large exponents, a factor that is no short decimal) pint decides.

    Examples
    --------
    >>> evaluate("degC").offset
    Fraction(5463, 20)
    >>> evaluate("mV/V").factor
    Fraction(1, 1000)
    """
    if not expression:
        return Known(Fraction(1), DIMENSIONLESS, Fraction(0))
    if expression in _OFFSET_UNITS:
        factor, offset = _OFFSET_UNITS[expression]
        return Known(factor, _vector(k=1), offset)
    try:
        reader = _Reader(_tokens(expression))
        factor, vector = reader.product()
        if reader.peek() is not None:
            return None
    except (_NotHere, ZeroDivisionError):
        return None
    decades = abs(math.log10(factor.numerator) - math.log10(factor.denominator))
    if decades > _MAX_DECADES:
        return None
    if not _settled(factor, reader.float_error()):
        return None
    return Known(factor, vector, Fraction(0))
