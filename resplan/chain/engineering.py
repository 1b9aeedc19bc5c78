"""Engineering units to volts: a sensor's span from its sensitivity and excitation, and a
requirement from a capacity and a resolution ("10 g out of 200 kg").

The arithmetic the design file applies to its ``requirement`` table, for the
Python API: :meth:`resplan.Sensor.from_sensitivity` and
:meth:`resplan.Requirement.from_resolution` call these functions, and so does
the design-file reader.

- span = sensitivity × excitation (a bridge's 2 mV/V at 5 V gives 10 mV);
- noise-free counts = capacity / resolution, both in one engineering unit;
- engineering units per volt = capacity / span (how a noise in V reads in kg).

Figures may be SI floats or strings with their unit (``"2 mV/V"``, ``"5 V"``,
``"200 kg"``, ``"10 g"``), read once here.

Examples
--------
>>> span_from_sensitivity("2 mV/V", "5 V")
0.01
>>> counts_from_resolution("200 kg", "10 g")
(20000.0, 'kg')
"""

from __future__ import annotations

import math
import re
from typing import Any

from ..errors import DesignError

__all__ = [
    "span_from_sensitivity",
    "counts_from_resolution",
    "engineering_quantity",
    "unit_as_written",
]

_LEADING_NUMBER = re.compile(r"\s*[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?")


def unit_as_written(text: Any) -> str:
    """The unit of a figure as the user wrote it (``"10 g"`` → ``"g"``; a number → ``""``).

    Examples
    --------
    >>> unit_as_written("0.5 degC"), unit_as_written(3.0)
    ('degC', '')
    """
    if not isinstance(text, str):
        return ""
    m = _LEADING_NUMBER.match(text)
    return text[m.end() :].strip() if m else ""


def _si(value: Any, dimension: str, field: str) -> float:
    if isinstance(value, str):
        from ..units.parse import parse_quantity

        return float(parse_quantity(value, dimension, field))
    if isinstance(value, bool) or not isinstance(value, int | float) or not math.isfinite(value):
        raise DesignError(field, value, f"a finite number (SI) or a {dimension} with its unit")
    return float(value)


def span_from_sensitivity(sensitivity: float | str, excitation: float | str) -> float:
    """The full-scale output span of a ratiometric sensor, V: sensitivity × excitation.

    Parameters
    ----------
    sensitivity : float or str
        Full-scale output per volt of excitation, V/V (``"2 mV/V"`` or 2e-3).
    excitation : float or str
        Excitation voltage, V.

    Raises
    ------
    DesignError
        For a figure that is not > 0 or a unit of the wrong kind.
    """
    s = _si(sensitivity, "ratio_per_volt", "sensitivity")
    e = _si(excitation, "voltage", "excitation")
    if not s > 0:
        raise DesignError("sensitivity", sensitivity, "a sensitivity > 0 V/V")
    if not e > 0:
        raise DesignError("excitation", excitation, "an excitation > 0 V")
    return s * e


def engineering_quantity(value: float | str, field: str) -> tuple[float, str]:
    """A figure in an engineering unit: its SI magnitude and SI base unit (``""`` for a number).

    Examples
    --------
    >>> engineering_quantity("10 g", "resolution")
    (0.01, 'kg')
    """
    if isinstance(value, str):
        from ..units.parse import parse_any

        magnitude, unit = parse_any(value, field)
    else:
        magnitude, unit = _si(value, "number", field), ""
    if not (math.isfinite(magnitude) and magnitude > 0):
        raise DesignError(field, value, "a value > 0 with its unit")
    return magnitude, unit


def counts_from_resolution(capacity: float | str, resolution: float | str) -> tuple[float, str]:
    """Noise-free counts a resolution asks for over a capacity: capacity / resolution.

    Parameters
    ----------
    capacity : float or str
        The full scale the sensor span stands for, such as ``"200 kg"``.
    resolution : float or str
        The step to resolve noise-free, in a unit of the same kind, such as ``"10 g"``.

    Returns
    -------
    counts : float
    unit : str
        The SI base unit both share (``"kg"``; ``""`` for plain numbers).

    Raises
    ------
    DesignError
        For units of different kinds, or a resolution coarser than the capacity.
    """
    cap, cap_unit = engineering_quantity(capacity, "capacity")
    res, res_unit = engineering_quantity(resolution, "resolution")
    if res_unit != cap_unit:
        raise DesignError(
            "resolution", resolution, f"a resolution in the unit of the capacity ({capacity})"
        )
    counts = cap / res
    if counts < 1:
        raise DesignError("resolution", resolution, f"a resolution at most {capacity}")
    return counts, cap_unit
