"""The resolution requirement and the noise it allows."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from ..errors import DesignError
from ..noise.physics import peak_to_peak_factor
from .resolution import sine_rms
from .stages import check_nonnegative, check_positive

__all__ = ["Requirement", "DEFAULT_COVERAGE"]

#: 99.9 %: k_pp = 6.58, the trade's "6.6 σ" peak-to-peak.
DEFAULT_COVERAGE = 0.999


@dataclass(frozen=True)
class Requirement:
    """What the chain must resolve, referred to the sensor.

    Give exactly one of ``noise_free_counts`` or ``dynamic_range_db``; a design
    file turns noise-free bits (2^b counts) and an engineering resolution
    ("10 g out of 200 kg": 20 000 counts) into counts.

    Parameters
    ----------
    span_v : float
        Sensor full-scale output span, V.
    noise_free_counts : float, optional
        Steps across the span that must be distinguishable peak to peak (≥ 1).
    dynamic_range_db : float, optional
        Full-scale sine over rms noise, dB.
    coverage : float
        Coverage probability for peak-to-peak noise (0.999 → k_pp = 6.58).
    interference_rms_v : float
        Allowance reserved for interference (mains pickup, spurs), V rms at the
        sensor. It is taken out of the budget in power; it is fixed by shielding,
        layout and grounding, not by the choice of parts.
    description : str
        The requirement as the user stated it, for reports.
    engineering_unit : str
        Unit of the measurand (such as ``"kg"``) when the requirement was stated in it.
    engineering_per_volt : float, optional
        Measurand per volt at the sensor output (capacity/span), to show noise in
        engineering units.
    passband_flatness_db : float, optional
        Largest gain error allowed at the band top (analog and digital responses
        together), dB (> 0); the droop is always reported, checked when given.
    headroom : float
        Fraction of the ADC range kept free (0.1 keeps the span within 90 % of it);
        the planner's gain choice keeps it and ``check`` fails a span past it.
    settling_time_s : float, optional
        Longest settling time allowed after a step or a multiplexer switch, s.
    channel_rate_hz : float, optional
        Lowest settled result rate each multiplexed channel must get, Hz.
    signal_frequency_hz : float, optional
        Highest frequency of the signal, Hz: the aperture jitter of the ADC is
        evaluated for a full-span sine there (the band top when omitted).

    Examples
    --------
    >>> r = Requirement(span_v=10e-3, noise_free_counts=20_000)
    >>> round(r.allowed_total_rms_v * 1e9, 1)  # nV rms
    76.0
    """

    span_v: float
    noise_free_counts: float | None = None
    dynamic_range_db: float | None = None
    coverage: float = DEFAULT_COVERAGE
    interference_rms_v: float = 0.0
    description: str = ""
    engineering_unit: str = ""
    engineering_per_volt: float | None = None
    passband_flatness_db: float | None = None
    headroom: float = 0.0
    settling_time_s: float | None = None
    channel_rate_hz: float | None = None
    signal_frequency_hz: float | None = None

    @classmethod
    def from_resolution(
        cls,
        sensor_or_span: Any,
        resolution: float | str,
        capacity: float | str | None = None,
        **kwargs,
    ) -> Requirement:
        """A noise-free requirement stated as a resolution out of a capacity ("10 g of 200 kg").

        Parameters
        ----------
        sensor_or_span : Sensor or float
            The sensor (its span and, unless ``capacity`` is given, its capacity)
            or the span itself, V.
        resolution : float or str
            The step to resolve noise-free, such as ``"10 g"``.
        capacity : float or str, optional
            The full scale the span stands for, such as ``"200 kg"``.
        **kwargs
            ``coverage``, ``interference_rms_v``, ``description``.

        Returns
        -------
        Requirement
            With counts = capacity/resolution, and the engineering unit and scale
            that noise figures are shown in (the resolution's unit as written).

        Examples
        --------
        >>> r = Requirement.from_resolution(10e-3, "10 g", "200 kg")
        >>> r.noise_free_counts, r.engineering_unit, round(r.engineering_per_volt)
        (20000.0, 'g', 20000000)
        """
        from .engineering import counts_from_resolution, engineering_quantity, unit_as_written

        span = getattr(sensor_or_span, "span_v", sensor_or_span)
        if capacity is None:
            cap = getattr(sensor_or_span, "capacity", None)
            if cap is None:
                raise DesignError(
                    "capacity", "none", 'a capacity such as "200 kg" (or a Sensor that has one)'
                )
            unit = getattr(sensor_or_span, "capacity_unit", "")
            capacity = f"{cap!r} {unit}" if unit else cap
        counts, _ = counts_from_resolution(capacity, resolution)
        cap_si, _ = engineering_quantity(capacity, "capacity")
        shown = unit_as_written(resolution)
        unit_si = engineering_quantity(f"1 {shown}", "resolution")[0] if shown else 1.0
        kwargs.setdefault("description", f"{resolution} noise-free out of {capacity}")
        return cls(
            span_v=span,
            noise_free_counts=counts,
            engineering_unit=shown,
            engineering_per_volt=cap_si / unit_si / span,
            **kwargs,
        )

    def __post_init__(self) -> None:
        check_positive("requirement.span", self.span_v, "a span > 0 V")
        given = [x is not None for x in (self.noise_free_counts, self.dynamic_range_db)]
        if sum(given) != 1:
            raise DesignError(
                "requirement.resolution",
                "none" if not any(given) else "both",
                "exactly one of noise-free counts/bits/resolution or a dynamic range",
            )
        if self.noise_free_counts is not None:
            c = self.noise_free_counts
            if (
                isinstance(c, bool)
                or not isinstance(c, int | float)
                or not math.isfinite(c)
                or c < 1
            ):
                raise DesignError("requirement.noise_free_counts", c, "a count ≥ 1")
        if self.dynamic_range_db is not None:
            check_positive(
                "requirement.dynamic_range", self.dynamic_range_db, "a dynamic range > 0 dB"
            )
        peak_to_peak_factor(self.coverage)  # validates the coverage
        check_nonnegative(
            "requirement.interference", self.interference_rms_v, "an allowance ≥ 0 V rms"
        )
        check_nonnegative("requirement.headroom", self.headroom, "a headroom from 0 to 90 %")
        if self.headroom > 0.9:
            raise DesignError("requirement.headroom", self.headroom, "a headroom from 0 to 90 %")
        for name, value, what in (
            ("passband_flatness", self.passband_flatness_db, "a flatness > 0 dB"),
            ("settling_time", self.settling_time_s, "a settling time > 0 s"),
            ("channel_rate", self.channel_rate_hz, "a rate > 0 Hz"),
            ("signal_frequency", self.signal_frequency_hz, "a frequency > 0 Hz"),
        ):
            if value is not None:
                check_positive(f"requirement.{name}", value, what)

    @property
    def k_pp(self) -> float:
        """Peak-to-peak factor of the coverage."""
        return peak_to_peak_factor(self.coverage)

    @property
    def allowed_total_rms_v(self) -> float:
        """Total rms the requirement allows at the sensor, interference included, V.

        σ = S/(counts·k_pp) for a noise-free target; σ = (S/(2√2))·10^(−DR/20) for a
        dynamic range.
        """
        if self.noise_free_counts is not None:
            return self.span_v / (self.noise_free_counts * self.k_pp)
        return sine_rms(self.span_v) * 10.0 ** (-self.dynamic_range_db / 20.0)

    @property
    def allowed_noise_rms_v(self) -> float:
        """Noise allowed once the interference allowance is reserved, V rms (≥ 0).

        Zero when the allowance alone uses up the budget.
        """
        room = self.allowed_total_rms_v**2 - self.interference_rms_v**2
        return math.sqrt(room) if room > 0 else 0.0

    @property
    def required_noise_free_bits(self) -> float:
        """The requirement as noise-free bits over the span (with its coverage)."""
        return math.log2(self.span_v / (self.allowed_total_rms_v * self.k_pp))
