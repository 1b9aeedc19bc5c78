"""The physical range of every kind of number a design file holds: one table, by dimension.

Edges validate, the core trusts: a number read from a design file is checked
here, when it is read, against the range its dimension allows, so that nothing
subnormal, infinite or absurd reaches the arithmetic. A new field gets its range
from its dimension, with no code of its own. The ranges are wide: they refuse
what no bench could hold (a 1e-320 Hz band edge, a 1e308 Ω resistor), not
unusual designs. The table is printed in ``docs/design-file.md`` (and a test keeps
the two the same).

Zero is outside every range here; whether a field may be zero is the field's own
rule (a 1/f corner of 0 Hz means none; a cut-off of 0 Hz is refused).
Temperatures are absolute and never zero. Signed quantities (an offset voltage)
are checked by magnitude.

The limits are common practice, no source: each is many decades beyond what a
precision signal chain meets, and well inside the range of a double (IEEE 754,
smallest normal 2.2e-308), so squares and products of a few of them stay finite.

Examples
--------
>>> range_problem(1e-320, "frequency") is None
False
>>> print(range_problem(1e-320, "frequency"))
a frequency from 1 nHz to 100 GHz
>>> range_problem(10.0, "frequency") is None
True
>>> range_problem(0.0, "resistance") is None
True
>>> print(range_problem(2e12, "resistance"))
a resistance from 1 µΩ to 1 TΩ
>>> print(range_problem(2e12, "resistance", zero=True))
a resistance of 0 Ω or from 1 µΩ to 1 TΩ
"""

from __future__ import annotations

import math
from typing import NamedTuple

__all__ = [
    "Range",
    "RANGES",
    "MAX_COUNT",
    "COVERAGE_RANGE",
    "LEVEL_DB_RANGE",
    "range_problem",
    "coverage_problem",
    "level_db_problem",
    "count_problem",
]

#: Largest count accepted (noise-free counts, decimation and averaging lengths): 2^40.
MAX_COUNT = 2**40


class Range(NamedTuple):
    """The magnitudes a dimension allows (zero aside).

    Attributes
    ----------
    low, high : float
        Smallest and largest non-zero magnitude, SI units.
    text : str
        The range in words, as messages and the docs state it.
    zero_allowed : bool
        Zero may be given where the field allows it (not for absolute temperature).
    """

    low: float
    high: float
    text: str
    zero_allowed: bool = True


#: Range of each dimension of :data:`resplan.units.parse.DIMENSIONS`, SI units.
RANGES: dict[str, Range] = {
    "voltage": Range(1e-18, 1e6, "1 aV to 1 MV"),
    "current": Range(1e-21, 1e3, "1 zA to 1 kA"),
    "resistance": Range(1e-6, 1e12, "1 µΩ to 1 TΩ"),
    "capacitance": Range(1e-18, 10.0, "1 aF to 10 F"),
    "frequency": Range(1e-9, 1e11, "1 nHz to 100 GHz"),
    "time": Range(1e-15, 1e9, "1 fs to 1e9 s"),
    "temperature": Range(1e-3, 1e3, "1 mK to 1000 K", zero_allowed=False),
    "temperature_difference": Range(1e-9, 1e3, "1 nK to 1000 K"),
    "voltage_density": Range(1e-21, 1.0, "1 zV/√Hz to 1 V/√Hz"),
    "current_density": Range(1e-24, 1.0, "1 yA/√Hz to 1 A/√Hz"),
    "dimensionless": Range(1e-12, float(MAX_COUNT), "1e-12 to 2^40 (about 1.1e12)"),
    "ratio_per_volt": Range(1e-12, 1e3, "1e-12 V/V to 1000 V/V"),
    "mass": Range(1e-30, 1e30, "1e-30 kg to 1e30 kg"),
    "force": Range(1e-30, 1e30, "1e-30 N to 1e30 N"),
    "pressure": Range(1e-30, 1e30, "1e-30 Pa to 1e30 Pa"),
    "length": Range(1e-30, 1e30, "1e-30 m to 1e30 m"),
    "acceleration": Range(1e-30, 1e30, "1e-30 m/s² to 1e30 m/s²"),
    # A quantity of any unit (capacity, resolution in engineering units), SI base units.
    "any": Range(1e-30, 1e30, "1e-30 to 1e30 in SI base units"),
}

#: Coverage probability of a peak-to-peak figure: from 50 % to 1 − 1e-12.
COVERAGE_RANGE = Range(0.5, 1.0 - 1e-12, "from 50 % to 1 − 1e-12 (99.9999999999 %)")
#: Levels in decibels (SNR, dynamic range).
LEVEL_DB_RANGE = Range(-400.0, 400.0, "from −400 dB to 400 dB")

_WHAT = {
    "voltage": "a voltage",
    "current": "a current",
    "resistance": "a resistance",
    "capacitance": "a capacitance",
    "frequency": "a frequency",
    "time": "a time",
    "temperature": "a temperature",
    "temperature_difference": "a temperature difference",
    "voltage_density": "a voltage noise density",
    "current_density": "a current noise density",
    "dimensionless": "a number",
    "ratio_per_volt": "a sensitivity",
    "mass": "a mass",
    "force": "a force",
    "pressure": "a pressure",
    "length": "a length",
    "acceleration": "an acceleration",
    "any": "a quantity",
}

_ZERO = {
    "voltage": "0 V",
    "current": "0 A",
    "resistance": "0 Ω",
    "capacitance": "0 F",
    "frequency": "0 Hz",
    "time": "0 s",
    "voltage_density": "0 V/√Hz",
    "current_density": "0 A/√Hz",
}


def range_problem(value: float, dimension: str, *, zero: bool = False) -> str | None:
    """What was expected, if ``value`` (SI) is outside the range of ``dimension``; else None.

    Parameters
    ----------
    value : float
        The value read, SI units. Zero passes (where the dimension allows zero at
        all); the field's own rule decides whether zero means anything there.
    dimension : str
        A key of :data:`RANGES`.
    zero : bool
        The field accepts zero: the message says so.

    Returns
    -------
    str or None
        Such as ``"a frequency from 1 nHz to 100 GHz"``; None when in range.
    """
    spec = RANGES[dimension]
    magnitude = abs(value)
    if math.isfinite(value) and (
        spec.low <= magnitude <= spec.high or (magnitude == 0 and spec.zero_allowed)
    ):
        return None
    zero_text = _ZERO.get(dimension, "0")
    if zero and spec.zero_allowed:
        return f"{_WHAT[dimension]} of {zero_text} or from {spec.text}"
    return f"{_WHAT[dimension]} from {spec.text}"


def coverage_problem(value: float) -> str | None:
    """What was expected, if a coverage probability is outside :data:`COVERAGE_RANGE`."""
    if math.isfinite(value) and COVERAGE_RANGE.low <= value <= COVERAGE_RANGE.high:
        return None
    return f'a coverage {COVERAGE_RANGE.text}, such as "99.9 %"'


def level_db_problem(value: float) -> str | None:
    """What was expected, if a level in dB is outside :data:`LEVEL_DB_RANGE`."""
    if math.isfinite(value) and LEVEL_DB_RANGE.low <= value <= LEVEL_DB_RANGE.high:
        return None
    return f"a level {LEVEL_DB_RANGE.text}"


def count_problem(value: float, what: str = "a count") -> str | None:
    """What was expected, if a count is not from 1 to :data:`MAX_COUNT` (2^40)."""
    if math.isfinite(value) and 1 <= value <= MAX_COUNT:
        return None
    return f"{what} from 1 to 2^40"
