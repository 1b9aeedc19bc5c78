"""How a design-file figure spreads from board to board and with temperature.

A plain value in a design file is the *typical* figure. A spread says how far
the figure may move: a data sheet's typical and maximum, a BOM tolerance, a
range, or a standard deviation. Each becomes one :class:`Spread`: a sampling
distribution for Monte Carlo runs and two ends for the worst-case corner.

The readings, stated once here and in every output that uses them:

========================  ======================  ===============================
form                      distribution            worst-case ends
========================  ======================  ===============================
``{ typ, max }``          normal, mean typ,       typ − 3σ … max
                          σ = (max − typ)/3
``{ value, sigma }``      normal                  value ± 3σ
``{ value, tolerance }``  uniform in ± tolerance  value ± tolerance
``{ min, max }``          uniform                 min … max (typical: midpoint,
                                                  or ``typ`` when given)
``{ value, tempco }``     no spread               —
========================  ======================  ===============================

Reading a data sheet's maximum as the +3σ point of a normal distribution whose
mean is the typical value is common practice, no source: data sheets rarely say
how their maximum is set. A BOM tolerance is read as a hard limit with every
value inside equally likely (common practice, no source); it is the wider of the
two usual readings (uniform, or normal with the tolerance at 3σ), so the yield
it gives errs low. A normal spread is cut at zero (no negative resistance or
noise density): the cut mass is below 1.5e-3 for every spread whose −3σ end is
above zero.

A temperature coefficient on a figure scales it by 1 + tc·(T − 25 °C), T the
temperature of the electronics (the sensor's for sensor fields): data sheets
quote typical figures at 25 °C.

Examples
--------
>>> s = Spread("stages[0].en", "typ-max", 4e-9, "normal", sigma=2e-9 / 3,
...            low=2e-9, high=6e-9, unit="V/√Hz")
>>> round(s.sigma * 1e9, 4), s.ends
(0.6667, (2e-09, 6e-09))
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..errors import DesignError
from ..units.formatting import format_percent, format_si

__all__ = ["Spread", "DISTRIBUTIONS", "FORMS", "TEMPCO_REFERENCE_K", "WORST_CASE_SIGMAS"]

#: Sampling distributions.
DISTRIBUTIONS = ("normal", "uniform", "fixed")
#: The design-file forms of a spread.
FORMS = ("typ-max", "sigma", "tolerance", "min-max", "tempco")
#: Temperature at which data sheets quote typical figures, K (25 °C).
TEMPCO_REFERENCE_K = 298.15
#: A normal spread's worst-case ends sit this many standard deviations from its mean
#: (the same reading as a typ/max pair; common practice, no source).
WORST_CASE_SIGMAS = 3.0


@dataclass(frozen=True)
class Spread:
    """One design-file figure that varies.

    Parameters
    ----------
    field : str
        Its place in the design file, such as ``"stages[0].en"`` or
        ``"adc.noise_table[2][1]"``.
    form : str
        One of :data:`FORMS`, as written.
    typical : float
        Typical value (the mean), SI (at 25 °C when ``tempco_per_k`` is set).
    distribution : str
        One of :data:`DISTRIBUTIONS`.
    sigma : float
        Standard deviation of a normal spread, SI.
    low, high : float
        Bounds of a uniform spread; the worst-case ends of a normal one, SI.
    unit : str
        SI unit of the values, for display (``""`` for plain numbers).
    tempco_per_k : float
        Relative temperature coefficient, 1/K (0 for none).
    text : str
        The spread as written, for reports.
    """

    field: str
    form: str
    typical: float
    distribution: str
    sigma: float = 0.0
    low: float = math.nan
    high: float = math.nan
    unit: str = ""
    tempco_per_k: float = 0.0
    text: str = ""

    def __post_init__(self) -> None:
        if self.form not in FORMS:
            raise DesignError(self.field, self.form, "one of " + ", ".join(FORMS))
        if self.distribution not in DISTRIBUTIONS:
            raise DesignError(self.field, self.distribution, "one of " + ", ".join(DISTRIBUTIONS))
        if self.distribution == "fixed":
            object.__setattr__(self, "low", self.typical)
            object.__setattr__(self, "high", self.typical)
        values = (self.typical, self.sigma, self.low, self.high, self.tempco_per_k)
        if not all(math.isfinite(v) for v in values):
            raise DesignError(self.field, self.text or values, "finite values")
        if self.sigma < 0 or self.low > self.high:
            raise DesignError(self.field, self.text, "a spread with low ≤ high and sigma ≥ 0")

    @property
    def ends(self) -> tuple[float, float]:
        """The two worst-case ends (low, high), SI."""
        return (self.low, self.high)

    @property
    def varies(self) -> bool:
        """True when the value itself spreads (not only with temperature)."""
        return self.distribution != "fixed" and self.high > self.low

    @property
    def is_temperature(self) -> bool:
        """True for a spread of the electronics' or the sensor's temperature."""
        return self.field in ("requirement.temperature", "sensor.temperature")

    def describe(self) -> str:
        """One line on the reading used, for text output and reports."""
        if self.distribution == "normal":
            how = f"normal, σ = {format_si(self.sigma, self.unit)}".rstrip()
            if self.form == "typ-max":
                how += " (max read as +3σ; common practice, no source)"
        elif self.distribution == "uniform":
            low, high = format_si(self.low, self.unit), format_si(self.high, self.unit)
            how = f"uniform {low} … {high}".rstrip()
        else:
            how = "no spread"
        if self.tempco_per_k:
            how += f"; {format_percent(self.tempco_per_k)}/K from 25 °C"
        return how
