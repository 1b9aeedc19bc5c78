"""Interference as engineers state it, and what the whole chain leaves of it.

Interference is not noise (DOMAIN §8): shielding, layout and grounding fix it,
not the choice of parts. What the tool can say is how much of a stated
interferer reaches the output, and whether that fits the allowance. Three
forms are stated at the sensor:

* :class:`Tone` — one frequency with an rms amplitude (a resonance, a switching
  spur);
* :class:`Mains` — mains pickup at 50 Hz and/or 60 Hz with a frequency
  tolerance and harmonics up to a stated order. Mains frequency wanders, so each
  harmonic is evaluated at the *worst* frequency inside its tolerance window,
  never at the exact null of a sinc filter (±1 % is common practice, no source);
* :class:`Broadband` — an out-of-band spectrum, a table of frequency and
  density, folded through the analog and digital responses like noise.

A tone at f through the chain leaves

    residue = A · |H_a(f)| · |H_d(f)|

referred to the sensor, where H_a is the product of the analog responses
normalised to their DC gain and H_d the digital path, periodic in the sample
rate so that its value at f is its value where f lands after sampling,
|f − m·f_s| (DOMAIN §4, §12). A spectrum S(f) leaves √(∫ S |H_a|² |H_d|² df),
integrated with the aliases included (:func:`resplan.noise.bandwidth.integrate_psd`).
Harmonics and the two mains frequencies lie at different frequencies, so
within one entry they add in power.

The responses are the chain's own (:meth:`resplan.chain.signal_chain.Chain.stage_responses`
and its digital path), the same the noise budget integrates. None of the
residues depends on noise densities: a Monte Carlo spread of noise figures
leaves them unchanged.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import DesignError
from ..units.formatting import format_percent
from .alias import alias_frequency, allowed_residue
from .requirement import Requirement
from .signal_chain import Chain

__all__ = [
    "Tone",
    "Mains",
    "Broadband",
    "Interferer",
    "Component",
    "Residue",
    "path_power_gain",
    "worst_in_window",
    "interference_residue",
    "interference_residues",
    "ATTENUATION_FLOOR_DB",
    "RESIDUE_FLOOR_V",
]

#: Attenuation past this is written as a floor (an exact null, or past numerical precision).
ATTENUATION_FLOOR_DB = 200.0
#: Residues below this are written as "below 1.00 fV".
RESIDUE_FLOOR_V = 1e-15
#: Points per digital side lobe when a tolerance window is searched for its worst frequency.
_POINTS_PER_LOBE = 32
_MAX_WINDOW_POINTS = 200_001


def _positive(field: str, value: Any, what: str) -> None:
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise DesignError(field, value, what)
    if not (math.isfinite(value) and value > 0):
        raise DesignError(field, value, what)


def _nonnegative(field: str, value: Any, what: str) -> None:
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise DesignError(field, value, what)
    if not (math.isfinite(value) and value >= 0):
        raise DesignError(field, value, what)


def _allowance(value: float | None) -> None:
    if value is not None:
        _positive("allowance", value, "an allowance > 0 V rms")


@dataclass(frozen=True)
class Tone:
    """One interfering tone at the sensor.

    Parameters
    ----------
    frequency_hz : float
        Its frequency, Hz.
    amplitude_v : float
        Its rms amplitude at the sensor, V.
    name : str
        Label for tables.
    allowance_v : float, optional
        The largest residue allowed for it, V rms at the sensor; the requirement's
        interference allowance (or 1/5 of the allowed noise) when omitted.
    """

    frequency_hz: float
    amplitude_v: float
    name: str = "tone"
    allowance_v: float | None = None

    def __post_init__(self) -> None:
        _positive("frequency", self.frequency_hz, "a frequency > 0 Hz")
        _nonnegative("amplitude", self.amplitude_v, "an amplitude ≥ 0 V rms")
        _allowance(self.allowance_v)

    kind = "tone"


@dataclass(frozen=True)
class Mains:
    """Mains pickup at the sensor: fundamentals, tolerance, harmonics.

    Parameters
    ----------
    frequencies_hz : tuple of float
        Nominal mains frequencies, Hz: ``(50.0,)``, ``(60.0,)`` or ``(50.0, 60.0)``
        for equipment sold for both.
    amplitudes_v : tuple of float
        RMS amplitude at the sensor of harmonic 1, 2, … up to the stated order, V.
    tolerance : float
        Relative frequency tolerance, such as 0.01 for ±1 %.
    name, allowance_v
        As for :class:`Tone`.
    """

    frequencies_hz: tuple[float, ...]
    amplitudes_v: tuple[float, ...]
    tolerance: float = 0.01
    name: str = "mains"
    allowance_v: float | None = None

    def __post_init__(self) -> None:
        object.__setattr__(self, "frequencies_hz", tuple(self.frequencies_hz))
        object.__setattr__(self, "amplitudes_v", tuple(self.amplitudes_v))
        if not self.frequencies_hz:
            raise DesignError("mains", "[]", "one or more mains frequencies, such as 50 Hz")
        for f in self.frequencies_hz:
            _positive("mains", f, "a mains frequency > 0 Hz")
        if not self.amplitudes_v:
            raise DesignError("amplitude", "[]", "an amplitude for each harmonic")
        for a in self.amplitudes_v:
            _nonnegative("amplitude", a, "an amplitude ≥ 0 V rms")
        _nonnegative("tolerance", self.tolerance, "a tolerance from 0 to 20 %")
        if self.tolerance > 0.2:
            raise DesignError("tolerance", self.tolerance, "a tolerance from 0 to 20 %")
        _allowance(self.allowance_v)

    kind = "mains"

    @property
    def harmonics(self) -> int:
        return len(self.amplitudes_v)


@dataclass(frozen=True)
class Broadband:
    """An out-of-band spectrum at the sensor, as a table of frequency and density.

    The density is interpolated linearly in log–log between the points and is
    zero outside the table.

    Parameters
    ----------
    frequencies_hz : tuple of float
        Ascending frequencies, Hz (two or more).
    densities_v_per_rthz : tuple of float
        Density at each, V/√Hz at the sensor.
    name, allowance_v
        As for :class:`Tone`.
    """

    frequencies_hz: tuple[float, ...]
    densities_v_per_rthz: tuple[float, ...]
    name: str = "broadband"
    allowance_v: float | None = None

    def __post_init__(self) -> None:
        f = tuple(self.frequencies_hz)
        d = tuple(self.densities_v_per_rthz)
        object.__setattr__(self, "frequencies_hz", f)
        object.__setattr__(self, "densities_v_per_rthz", d)
        if len(f) < 2 or len(f) != len(d):
            raise DesignError(
                "spectrum", f"{len(f)} points", "two or more (frequency, density) pairs"
            )
        for x in f:
            _positive("spectrum", x, "frequencies > 0 Hz")
        for x in d:
            _positive("spectrum", x, "densities > 0 V/√Hz")
        if any(b <= a for a, b in zip(f, f[1:], strict=False)):
            raise DesignError("spectrum", "unsorted", "frequencies in ascending order")
        _allowance(self.allowance_v)

    kind = "broadband"

    def power_density(self, frequency_hz: np.ndarray) -> np.ndarray:
        """S(f), V²/Hz at the sensor: log–log interpolation, zero outside the table."""
        f = np.asarray(frequency_hz, dtype=float)
        logf = np.log(np.clip(f, 1e-300, None))
        xs = np.log(np.asarray(self.frequencies_hz))
        ys = 2.0 * np.log(np.asarray(self.densities_v_per_rthz))
        s = np.exp(np.interp(logf, xs, ys))
        inside = (f >= self.frequencies_hz[0]) & (f <= self.frequencies_hz[-1])
        return np.where(inside, s, 0.0)


Interferer = Tone | Mains | Broadband


# ---------------------------------------------------------------------------
# the chain's response


def path_power_gain(chain: Chain, frequency_hz) -> tuple[np.ndarray, np.ndarray]:
    """|H_a(f)|² (analog, normalised to DC) and |H_d(f)|² (digital) of the signal path.

    Uses the chain's own stage responses, the same the noise budget integrates.
    """
    f = np.asarray(frequency_hz, dtype=float)
    analog = np.ones_like(f)
    for j in range(len(chain.stages)):
        for response in chain.stage_responses(j):
            analog = analog * response.power_gain(f)
    digital = np.ones_like(f) if chain.digital is None else chain.digital.power_gain(f)
    return analog, digital


def worst_in_window(chain: Chain, low_hz: float, high_hz: float) -> float:
    """The frequency in [low_hz, high_hz] the chain passes most, Hz.

    A grid of at least 32 points per digital side lobe, then a finer grid around
    the best point, so that a sinc null inside the window is never what counts.
    """
    if high_hz <= low_hz:
        return low_hz
    lobe = math.inf if chain.digital is None else chain.digital.finest_lobe_hz
    lobes = (high_hz - low_hz) / lobe if math.isfinite(lobe) else 1.0
    n = int(min(_MAX_WINDOW_POINTS, max(129, _POINTS_PER_LOBE * lobes + 129)))
    f = np.linspace(low_hz, high_hz, n)
    a, d = path_power_gain(chain, f)
    i = int(np.argmax(a * d))
    step = f[1] - f[0]
    fine = np.linspace(max(low_hz, f[i] - step), min(high_hz, f[i] + step), 129)
    a, d = path_power_gain(chain, fine)
    return float(fine[int(np.argmax(a * d))])


@dataclass(frozen=True)
class Component:
    """One tone of an interferer as it reaches the output.

    Attributes
    ----------
    frequency_hz : float
        The frequency evaluated (the worst in its tolerance window for mains), Hz.
    nominal_hz : float
        The stated frequency, Hz.
    alias_hz : float
        Where it lands after sampling, Hz.
    amplitude_v : float
        RMS at the sensor, V.
    analog_db, digital_db : float
        Attenuation by the analog path and by the digital filter, dB (inf at an exact null).
    residue_v : float
        RMS left, referred to the sensor, V.
    """

    frequency_hz: float
    nominal_hz: float
    alias_hz: float
    amplitude_v: float
    analog_db: float
    digital_db: float
    residue_v: float

    @property
    def attenuation_db(self) -> float:
        return self.analog_db + self.digital_db

    def to_dict(self) -> dict[str, Any]:
        return {**self.__dict__, "attenuation_db": self.attenuation_db}


def _db(power_gain: float) -> float:
    return math.inf if power_gain <= 0 else max(0.0, -10.0 * math.log10(power_gain))


def _component(chain: Chain, f: float, nominal: float, amplitude: float) -> Component:
    a, d = path_power_gain(chain, np.array([f]))
    a0, d0 = float(a[0]), float(d[0])
    return Component(
        frequency_hz=f,
        nominal_hz=nominal,
        alias_hz=alias_frequency(f, chain.adc.sample_rate_hz),
        amplitude_v=amplitude,
        analog_db=_db(a0),
        digital_db=_db(d0),
        residue_v=amplitude * math.sqrt(max(a0 * d0, 0.0)),
    )


@dataclass(frozen=True)
class Residue:
    """What one stated interferer leaves in the output, against its allowance.

    Attributes
    ----------
    item : str
        Stable name in the verdict: ``interferer[i]``.
    name, kind : str
        The interferer's label and form (``tone``, ``mains``, ``broadband``).
    components : tuple of Component
        Each tone reaching the output (empty for a spectrum).
    residue_v : float
        Total residue referred to the sensor, V rms (components add in power).
    allowed_v : float
        The largest residue allowed, V rms, and ``allowed_reason`` why.
    lands : str
        Where it lands in the output, for people.
    """

    item: str
    name: str
    kind: str
    components: tuple[Component, ...]
    residue_v: float
    allowed_v: float
    allowed_reason: str
    lands: str

    @property
    def within_allowance(self) -> bool:
        return self.residue_v <= self.allowed_v * (1 + 1e-12)

    @property
    def worst(self) -> Component | None:
        """The component leaving the most."""
        return max(self.components, key=lambda c: c.residue_v, default=None)

    def to_dict(self) -> dict[str, Any]:
        return {
            "item": self.item,
            "name": self.name,
            "kind": self.kind,
            "residue_v": self.residue_v,
            "allowed_v": self.allowed_v,
            "allowed_reason": self.allowed_reason,
            "within_allowance": self.within_allowance,
            "lands": self.lands,
            "components": [c.to_dict() for c in self.components],
        }


def _hz(value: float) -> str:
    from ..units.formatting import format_si

    return format_si(value, "Hz")


def _broadband_rms(chain: Chain, spectrum: Broadband, f_low_hz: float) -> float:
    from ..noise.bandwidth import integrate_psd
    from ..noise.responses import AnalogLowpass

    analog = chain.responses_from(0)
    if not analog:
        # The table bounds the spectrum; a pole a million times above its top changes
        # |H_a|² inside it by less than 1e-12 and lets the folded integral run.
        analog = (AnalogLowpass("rc", 1, 1e6 * spectrum.frequencies_hz[-1]),)
    low = min(f_low_hz, 0.5 * spectrum.frequencies_hz[0])
    if chain.digital is not None:
        low = min(low, 0.25 * chain.digital.sample_rate_hz)
    power = integrate_psd(spectrum.power_density, analog, chain.digital, low, grid_points=4000)
    return math.sqrt(max(float(power), 0.0))


def interference_residue(
    chain: Chain,
    interferer: Interferer,
    requirement: Requirement,
    item: str = "interferer[0]",
    f_low_hz: float = 0.01,
) -> Residue:
    """What one interferer at the sensor leaves in the output of the chain.

    Examples
    --------
    A single-pole RC at 1 kHz ahead of a SAR at 100 kHz leaves 1/√(1 + 95²) of a
    tone at 95 kHz, which lands at 5 kHz:

    >>> from resplan import ADC, RCFilter, Requirement, Sensor, TransitionNoise
    >>> import math
    >>> rc = RCFilter("RC (invented)", 1e3, 1 / (2 * math.pi * 1e3 * 1e3))
    >>> adc = ADC("SAR (invented)", "sar", 16, 5.0, 100e3, TransitionNoise(0.5))
    >>> chain = Chain(Sensor(1.0, 1e-3), (rc,), adc)
    >>> r = interference_residue(chain, Tone(95e3, 1.0), Requirement(1.0, noise_free_counts=1000))
    >>> r.components[0].alias_hz, round(r.residue_v * math.sqrt(1 + 95**2), 3)
    (5000.0, 1.0)
    """
    allowed, reason = allowed_residue(requirement)
    if interferer.allowance_v is not None:
        allowed, reason = interferer.allowance_v, "its own allowance"
    components: list[Component] = []
    if isinstance(interferer, Tone):
        f = interferer.frequency_hz
        components.append(_component(chain, f, f, interferer.amplitude_v))
        c = components[0]
        lands = f"at {_hz(c.alias_hz)}"
        total = c.residue_v
    elif isinstance(interferer, Mains):
        tol = interferer.tolerance
        per_system = []
        for f0 in interferer.frequencies_hz:
            own = []
            for h, amplitude in enumerate(interferer.amplitudes_v, start=1):
                nominal = h * f0
                f = worst_in_window(chain, nominal * (1 - tol), nominal * (1 + tol))
                own.append(_component(chain, f, nominal, amplitude))
            components += own
            per_system.append(math.sqrt(sum(c.residue_v**2 for c in own)))
        # Equipment is on one mains system at a time: the worse fundamental counts.
        total = max(per_system)
        worst = max(components, key=lambda c: c.residue_v)
        lands = (
            f"at {_hz(worst.alias_hz)} (harmonic {_hz(worst.nominal_hz)}, worst at "
            f"{_hz(worst.frequency_hz)} within ±{format_percent(tol)})"
        )
    else:
        total = _broadband_rms(chain, interferer, f_low_hz)
        lands = f"across the output band, 0 … {_hz(chain.output_rate_hz / 2)}"
    return Residue(
        item=item,
        name=interferer.name,
        kind=interferer.kind,
        components=tuple(components),
        residue_v=total,
        allowed_v=allowed,
        allowed_reason=reason,
        lands=lands,
    )


def interference_residues(
    chain: Chain,
    interferers: tuple[Interferer, ...],
    requirement: Requirement,
    f_low_hz: float = 0.01,
) -> tuple[Residue, ...]:
    """Every stated interferer through the chain, items ``interferer[0]``, ``interferer[1]`` …"""
    return tuple(
        interference_residue(chain, x, requirement, f"interferer[{i}]", f_low_hz)
        for i, x in enumerate(interferers)
    )
