"""A linear circuit as data: parts, nodes, noise sources with stable ids.

A :class:`Netlist` is a tuple of small frozen parts and the name of the output
node. Each part validates its own values; the netlist validates names, ids and
the output. Nothing here solves anything: :mod:`resplan.noise.nodal` turns any
netlist into transfer functions and noise spectra.

Conventions (all SI):

- Nodes are strings; ``"0"`` is ground.
- A two-terminal source ``(a, b)`` drives its current from ``a`` through the
  source into ``b``; a voltage source ``(plus, minus)`` holds
  ``v(plus) − v(minus)`` at its value (0 for noise, 1 for the signal input).
- Every noise source has a stable string id given by whoever builds the netlist,
  such as ``"stages[2].R3.thermal"`` or ``"stages[0].opamp.en"``; results are
  keyed by it.
- A density with a 1/f corner ``f_c`` has ``density²(f) = white²·(1 + f_c/f)``.

The module imports numpy-free standard library code only.

References
----------
- J. B. Johnson, "Thermal agitation of electricity in conductors", Phys. Rev. 32
  (1928) 97; H. Nyquist, "Thermal agitation of electric charge in conductors",
  Phys. Rev. 32 (1928) 110: a resistor's noise is a current source of density²
  4kT/R in parallel with it.
- W. Schottky, Ann. Phys. 57 (1918) 541: shot noise of a DC current, 2qI.
- C. D. Motchenbacher, J. A. Connelly, *Low-Noise Electronic System Design*,
  Wiley 1993: the amplifier noise model (e_n in series with the input, i_n at
  each input, each white with a 1/f corner).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Literal

from ..errors import DesignError, ResplanError
from ..units.formatting import format_number

__all__ = [
    "BOLTZMANN_J_PER_K",
    "ELEMENTARY_CHARGE_C",
    "DEFAULT_TEMPERATURE_K",
    "GROUND",
    "CircuitError",
    "Resistor",
    "Capacitor",
    "OpAmp",
    "VoltageNoise",
    "CurrentNoise",
    "ShotNoise",
    "VoltageSource",
    "CurrentSource",
    "NoiseSource",
    "Part",
    "Netlist",
    "OpAmpModel",
    "noisy_opamp",
]

#: Boltzmann constant, J/K. Exact by definition of the SI (2019 revision; CODATA 2018).
BOLTZMANN_J_PER_K = 1.380649e-23
#: Elementary charge, C. Exact by definition of the SI (2019 revision; CODATA 2018).
ELEMENTARY_CHARGE_C = 1.602176634e-19
#: Temperature of a netlist whose builder names none, K.
DEFAULT_TEMPERATURE_K = 300.0
#: The ground node's name.
GROUND = "0"


class CircuitError(ResplanError, ValueError):
    """A circuit that is valid part by part but cannot be solved as a whole.

    Parameters
    ----------
    problem : str
        What is wrong, such as ``"floating node"``.
    nodes : sequence of str
        The nodes involved.
    parts : sequence of str
        The parts involved (by name).

    Examples
    --------
    >>> str(CircuitError("floating node", nodes=["mid"], parts=["stages[0].C1"]))
    'circuit: floating node (node mid; part stages[0].C1)'
    """

    def __init__(
        self,
        problem: str,
        nodes: tuple[str, ...] | list[str] = (),
        parts: tuple[str, ...] | list[str] = (),
    ):
        self.problem = problem
        self.nodes = tuple(nodes)
        self.parts = tuple(parts)
        super().__init__(self._message())

    def _message(self) -> str:
        where = []
        if self.nodes:
            where.append(("node " if len(self.nodes) == 1 else "nodes ") + ", ".join(self.nodes))
        if self.parts:
            where.append(("part " if len(self.parts) == 1 else "parts ") + ", ".join(self.parts))
        tail = f" ({'; '.join(where)})" if where else ""
        return f"circuit: {self.problem}{tail}"


# ---------------------------------------------------------------------------
# validation at the edge


def _check_name(owner: str, attribute: str, value: object) -> None:
    if not isinstance(value, str) or not value.strip():
        raise DesignError(f"{owner}.{attribute}" if owner else attribute, value, "a non-empty name")


def _check_number(
    owner: str,
    attribute: str,
    value: object,
    *,
    minimum: float,
    strict: bool,
    allow_inf: bool,
    unit: str,
) -> None:
    ok = isinstance(value, int | float) and not isinstance(value, bool) and not math.isnan(value)
    if ok and math.isinf(value):
        ok = allow_inf and value > 0
    if ok and (value < minimum or (strict and value == minimum)):
        ok = False
    if not ok:
        relation = ">" if strict else "≥"
        finite = "" if allow_inf else "finite "
        bound = "" if math.isinf(minimum) else f" {relation} {format_number(minimum)}"
        raise DesignError(f"{owner}.{attribute}", value, f"a {finite}number{bound} in {unit}")


def _check_nodes(owner: str, **nodes: str) -> None:
    for attribute, node in nodes.items():
        _check_name(owner, attribute, node)


# ---------------------------------------------------------------------------
# noise sources as the solver sees them


@dataclass(frozen=True)
class NoiseSource:
    """One noise generator as the solver injects it.

    Parameters
    ----------
    source_id : str
        Stable id, such as ``"stages[2].R3.thermal"``.
    part : str
        Name of the part it belongs to.
    kind : {"current", "voltage"}
        A current source between ``a`` and ``b`` (driving from ``a`` into ``b``),
        or the series voltage source that is the part ``part`` itself.
    a, b : str
        Terminal nodes (for a voltage source: plus and minus).
    white_sq : float
        White density squared: A²/Hz for a current, V²/Hz for a voltage.
    corner_hz : float
        1/f corner, Hz; 0 for a white source.
    """

    source_id: str
    part: str
    kind: Literal["current", "voltage"]
    a: str
    b: str
    white_sq: float
    corner_hz: float = 0.0

    @property
    def unit(self) -> str:
        """Unit of the transfer from this source to the output voltage."""
        return "V/A" if self.kind == "current" else "V/V"


# ---------------------------------------------------------------------------
# parts


@dataclass(frozen=True)
class Resistor:
    """A resistor between nodes ``a`` and ``b``.

    Its thermal noise is a current source of density² 4kT/R in parallel with it
    (Johnson 1928, Nyquist 1928), id ``noise_id`` or ``"<name>.thermal"``.

    Parameters
    ----------
    name : str
        Part name, such as ``"stages[0].R1"``.
    a, b : str
        Terminal nodes.
    resistance_ohm : float
        Resistance, Ω (> 0, finite).
    temperature_k : float, optional
        Its own temperature, K; the netlist's temperature when omitted.
    noiseless : bool
        True for an ideal resistor without thermal noise (a model element).
    noise_id : str, optional
        Id of its thermal source; ``"<name>.thermal"`` when omitted.
    """

    name: str
    a: str
    b: str
    resistance_ohm: float
    temperature_k: float | None = None
    noiseless: bool = False
    noise_id: str | None = None

    def __post_init__(self) -> None:
        _check_name("", "name", self.name)
        _check_nodes(self.name, a=self.a, b=self.b)
        _check_number(
            self.name,
            "resistance_ohm",
            self.resistance_ohm,
            minimum=0.0,
            strict=True,
            allow_inf=False,
            unit="ohm",
        )
        if self.temperature_k is not None:
            _check_number(
                self.name,
                "temperature_k",
                self.temperature_k,
                minimum=0.0,
                strict=False,
                allow_inf=False,
                unit="K",
            )
        if self.noise_id is not None:
            _check_name(self.name, "noise_id", self.noise_id)

    def noise_sources(self, temperature_k: float) -> tuple[NoiseSource, ...]:
        """Its thermal source at its own temperature (else ``temperature_k``)."""
        if self.noiseless:
            return ()
        t = temperature_k if self.temperature_k is None else self.temperature_k
        return (
            NoiseSource(
                self.noise_id or f"{self.name}.thermal",
                self.name,
                "current",
                self.a,
                self.b,
                4.0 * BOLTZMANN_J_PER_K * t / self.resistance_ohm,
            ),
        )


@dataclass(frozen=True)
class Capacitor:
    """An ideal (noiseless) capacitor between nodes ``a`` and ``b``, ``capacitance_f`` in F."""

    name: str
    a: str
    b: str
    capacitance_f: float

    def __post_init__(self) -> None:
        _check_name("", "name", self.name)
        _check_nodes(self.name, a=self.a, b=self.b)
        _check_number(
            self.name,
            "capacitance_f",
            self.capacitance_f,
            minimum=0.0,
            strict=True,
            allow_inf=False,
            unit="F",
        )

    def noise_sources(self, temperature_k: float) -> tuple[NoiseSource, ...]:
        return ()


@dataclass(frozen=True)
class OpAmp:
    r"""A noiseless voltage amplifier: output to ground equals A(s)·(v₊ − v₋).

    .. math:: A(s) = \frac{A_0}{1 + s A_0 / (2\pi\,\mathrm{GBW})}

    a single pole at GBW/A₀ (the dominant-pole model). ``dc_gain`` and ``gbw_hz``
    may be ``math.inf`` (an ideal amplifier: no pole, or infinite gain).
    The inputs draw no current; the output is an ideal source. Add its noise with
    :class:`VoltageNoise` and :class:`CurrentNoise`, or build all four parts with
    :func:`noisy_opamp`.

    Parameters
    ----------
    name : str
        Part name.
    plus, minus, output : str
        Non-inverting input, inverting input and output nodes.
    dc_gain : float
        Open-loop DC gain A₀, V/V (> 0).
    gbw_hz : float
        Gain-bandwidth product, Hz (> 0).
    """

    name: str
    plus: str
    minus: str
    output: str
    dc_gain: float
    gbw_hz: float

    def __post_init__(self) -> None:
        _check_name("", "name", self.name)
        _check_nodes(self.name, plus=self.plus, minus=self.minus, output=self.output)
        if self.output == GROUND:
            raise DesignError(f"{self.name}.output", self.output, "a node other than ground")
        _check_number(
            self.name, "dc_gain", self.dc_gain, minimum=0.0, strict=True, allow_inf=True, unit="V/V"
        )
        _check_number(
            self.name, "gbw_hz", self.gbw_hz, minimum=0.0, strict=True, allow_inf=True, unit="Hz"
        )

    def noise_sources(self, temperature_k: float) -> tuple[NoiseSource, ...]:
        return ()


def _check_density(owner: str, attribute: str, white: float, corner_hz: float, unit: str) -> None:
    _check_number(owner, attribute, white, minimum=0.0, strict=False, allow_inf=False, unit=unit)
    _check_number(
        owner, "corner_hz", corner_hz, minimum=0.0, strict=False, allow_inf=False, unit="Hz"
    )


@dataclass(frozen=True)
class VoltageNoise:
    """A noise voltage source in series, between ``plus`` and ``minus``.

    ``name`` is its stable id. Density² = ``white_v_per_rthz``²·(1 + ``corner_hz``/f).
    """

    name: str
    plus: str
    minus: str
    white_v_per_rthz: float
    corner_hz: float = 0.0

    def __post_init__(self) -> None:
        _check_name("", "name", self.name)
        _check_nodes(self.name, plus=self.plus, minus=self.minus)
        _check_density(
            self.name, "white_v_per_rthz", self.white_v_per_rthz, self.corner_hz, "V/rtHz"
        )

    def noise_sources(self, temperature_k: float) -> tuple[NoiseSource, ...]:
        return (
            NoiseSource(
                self.name,
                self.name,
                "voltage",
                self.plus,
                self.minus,
                self.white_v_per_rthz**2,
                self.corner_hz,
            ),
        )


@dataclass(frozen=True)
class CurrentNoise:
    """A noise current source from ``a`` into ``b``.

    ``name`` is its stable id. Density² = ``white_a_per_rthz``²·(1 + ``corner_hz``/f).
    """

    name: str
    a: str
    b: str
    white_a_per_rthz: float
    corner_hz: float = 0.0

    def __post_init__(self) -> None:
        _check_name("", "name", self.name)
        _check_nodes(self.name, a=self.a, b=self.b)
        _check_density(
            self.name, "white_a_per_rthz", self.white_a_per_rthz, self.corner_hz, "A/rtHz"
        )

    def noise_sources(self, temperature_k: float) -> tuple[NoiseSource, ...]:
        return (
            NoiseSource(
                self.name,
                self.name,
                "current",
                self.a,
                self.b,
                self.white_a_per_rthz**2,
                self.corner_hz,
            ),
        )


@dataclass(frozen=True)
class ShotNoise:
    """Shot noise of a DC current ``current_a`` flowing from ``a`` to ``b``: density² 2q|I|.

    ``name`` is its stable id (Schottky 1918). The DC current itself is not part
    of the small-signal circuit; only its noise is.
    """

    name: str
    a: str
    b: str
    current_a: float

    def __post_init__(self) -> None:
        _check_name("", "name", self.name)
        _check_nodes(self.name, a=self.a, b=self.b)
        _check_number(
            self.name,
            "current_a",
            self.current_a,
            minimum=-math.inf,
            strict=False,
            allow_inf=False,
            unit="A",
        )

    def noise_sources(self, temperature_k: float) -> tuple[NoiseSource, ...]:
        return (
            NoiseSource(
                self.name,
                self.name,
                "current",
                self.a,
                self.b,
                2.0 * ELEMENTARY_CHARGE_C * abs(self.current_a),
            ),
        )


@dataclass(frozen=True)
class VoltageSource:
    """A noiseless signal voltage source: v(plus) − v(minus) = 1 V when it is the input, else 0."""

    name: str
    plus: str
    minus: str

    def __post_init__(self) -> None:
        _check_name("", "name", self.name)
        _check_nodes(self.name, plus=self.plus, minus=self.minus)

    def noise_sources(self, temperature_k: float) -> tuple[NoiseSource, ...]:
        return ()


@dataclass(frozen=True)
class CurrentSource:
    """A noiseless signal current source from ``a`` into ``b``: 1 A when it is the input, else 0."""

    name: str
    a: str
    b: str

    def __post_init__(self) -> None:
        _check_name("", "name", self.name)
        _check_nodes(self.name, a=self.a, b=self.b)

    def noise_sources(self, temperature_k: float) -> tuple[NoiseSource, ...]:
        return ()


Part = (
    Resistor
    | Capacitor
    | OpAmp
    | VoltageNoise
    | CurrentNoise
    | ShotNoise
    | VoltageSource
    | CurrentSource
)
_PART_TYPES = (
    Resistor,
    Capacitor,
    OpAmp,
    VoltageNoise,
    CurrentNoise,
    ShotNoise,
    VoltageSource,
    CurrentSource,
)


def part_nodes(part: Part) -> tuple[str, ...]:
    """The nodes a part touches, in its own order."""
    if isinstance(part, OpAmp):
        return (part.plus, part.minus, part.output)
    if isinstance(part, VoltageNoise | VoltageSource):
        return (part.plus, part.minus)
    return (part.a, part.b)


# ---------------------------------------------------------------------------
# the netlist


@dataclass(frozen=True)
class Netlist:
    """A linear circuit: parts, the output node and (optionally) the signal input.

    Parameters
    ----------
    parts : sequence of parts
        :class:`Resistor`, :class:`Capacitor`, :class:`OpAmp`, :class:`VoltageNoise`,
        :class:`CurrentNoise`, :class:`ShotNoise`, :class:`VoltageSource`,
        :class:`CurrentSource`. Names must be unique, and so must noise ids.
    output : str
        Output node; the output is ``v(output) − v(output_reference)``.
    output_reference : str
        Reference node of the output, ground by default (another node gives a
        differential output).
    signal_input : str, optional
        Name of the :class:`VoltageSource` or :class:`CurrentSource` whose transfer
        to the output is the signal gain.
    temperature_k : float
        Temperature of every resistor that names none, K.

    Examples
    --------
    >>> net = Netlist([VoltageSource("vin", "in", "0"), Resistor("R1", "in", "out", 1e3),
    ...                Capacitor("C1", "out", "0", 1e-9)], output="out", signal_input="vin")
    >>> net.nodes
    ('in', 'out')
    >>> [s.source_id for s in net.noise_sources]
    ['R1.thermal']
    """

    parts: tuple[Part, ...]
    output: str
    output_reference: str = GROUND
    signal_input: str | None = None
    temperature_k: float = DEFAULT_TEMPERATURE_K
    _sources: tuple[NoiseSource, ...] = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        object.__setattr__(self, "parts", tuple(self.parts))
        _check_number(
            "netlist",
            "temperature_k",
            self.temperature_k,
            minimum=0.0,
            strict=False,
            allow_inf=False,
            unit="K",
        )
        seen: dict[str, Part] = {}
        for index, part in enumerate(self.parts):
            if not isinstance(part, _PART_TYPES):
                raise DesignError(f"netlist.parts[{index}]", part, "a circuit part")
            if part.name in seen:
                raise CircuitError("two parts share a name", parts=[part.name])
            seen[part.name] = part
        sources = tuple(s for p in self.parts for s in p.noise_sources(self.temperature_k))
        ids: set[str] = set()
        for source in sources:
            if source.source_id in ids:
                raise CircuitError(
                    f"two noise sources share the id {source.source_id}",
                    parts=[s.part for s in sources if s.source_id == source.source_id],
                )
            ids.add(source.source_id)
        object.__setattr__(self, "_sources", sources)
        nodes = set(self.nodes) | {GROUND}
        for attribute in ("output", "output_reference"):
            node = getattr(self, attribute)
            _check_name("netlist", attribute, node)
            if node not in nodes:
                raise DesignError(f"netlist.{attribute}", node, "a node of the circuit")
        if self.output == self.output_reference:
            raise DesignError(
                "netlist.output_reference", self.output_reference, "a node other than the output"
            )
        if self.signal_input is not None:
            part = seen.get(self.signal_input)
            if not isinstance(part, VoltageSource | CurrentSource):
                raise DesignError(
                    "netlist.signal_input",
                    self.signal_input,
                    "the name of a VoltageSource or CurrentSource",
                )

    @property
    def nodes(self) -> tuple[str, ...]:
        """Every node except ground, in order of first appearance."""
        order: dict[str, None] = {}
        for part in self.parts:
            for node in part_nodes(part):
                if node != GROUND:
                    order.setdefault(node, None)
        return tuple(order)

    @property
    def noise_sources(self) -> tuple[NoiseSource, ...]:
        """Every noise source, in part order."""
        return self._sources

    def part(self, name: str) -> Part:
        """The part called ``name``."""
        for part in self.parts:
            if part.name == name:
                return part
        raise KeyError(name)


def noisy_opamp(
    name: str,
    plus: str,
    minus: str,
    output: str,
    *,
    dc_gain: float,
    gbw_hz: float,
    en_v_per_rthz: float = 0.0,
    en_corner_hz: float = 0.0,
    in_plus_a_per_rthz: float = 0.0,
    in_minus_a_per_rthz: float = 0.0,
    in_corner_hz: float = 0.0,
) -> tuple[Part, ...]:
    """An op amp with its noise model (Motchenbacher & Connelly): four parts.

    e_n is a :class:`VoltageNoise` in series with the + input (id ``"<name>.en"``,
    through the internal node ``"<name>.in"``); i_n+ and i_n− are
    :class:`CurrentNoise` sources from ground into each input (ids
    ``"<name>.in+"``, ``"<name>.in-"``). Sources with zero density are left out.

    Parameters
    ----------
    name : str
        Name of the op amp and prefix of its noise ids, such as ``"stages[0].opamp"``.
    plus, minus, output : str
        The nodes its pins connect to.
    dc_gain, gbw_hz : float
        As :class:`OpAmp`.
    en_v_per_rthz, en_corner_hz : float
        Voltage-noise white density (V/√Hz) and 1/f corner (Hz).
    in_plus_a_per_rthz, in_minus_a_per_rthz, in_corner_hz : float
        Current-noise white densities at each input (A/√Hz) and their 1/f corner (Hz).

    Examples
    --------
    >>> [p.name for p in noisy_opamp("U1", "a", "b", "c", dc_gain=1e6, gbw_hz=1e6,
    ...                             en_v_per_rthz=5e-9, in_minus_a_per_rthz=1e-12)]
    ['U1.en', 'U1.in-', 'U1']
    """
    _check_density(name, "en_v_per_rthz", en_v_per_rthz, en_corner_hz, "V/rtHz")
    _check_density(name, "in_plus_a_per_rthz", in_plus_a_per_rthz, in_corner_hz, "A/rtHz")
    _check_density(name, "in_minus_a_per_rthz", in_minus_a_per_rthz, in_corner_hz, "A/rtHz")
    parts: list[Part] = []
    pin = plus
    if en_v_per_rthz > 0.0:
        pin = f"{name}.in"
        parts.append(VoltageNoise(f"{name}.en", pin, plus, en_v_per_rthz, en_corner_hz))
    if in_plus_a_per_rthz > 0.0:
        parts.append(CurrentNoise(f"{name}.in+", GROUND, plus, in_plus_a_per_rthz, in_corner_hz))
    if in_minus_a_per_rthz > 0.0:
        parts.append(CurrentNoise(f"{name}.in-", GROUND, minus, in_minus_a_per_rthz, in_corner_hz))
    parts.append(OpAmp(name, pin, minus, output, dc_gain, gbw_hz))
    return tuple(parts)


@dataclass(frozen=True)
class OpAmpModel:
    """An op amp's gain and noise, to place with :meth:`parts` (see :func:`noisy_opamp`).

    Parameters are those of :func:`noisy_opamp`; the values are checked when parts are built.
    """

    dc_gain: float
    gbw_hz: float
    en_v_per_rthz: float = 0.0
    en_corner_hz: float = 0.0
    in_plus_a_per_rthz: float = 0.0
    in_minus_a_per_rthz: float = 0.0
    in_corner_hz: float = 0.0

    def parts(self, name: str, plus: str, minus: str, output: str) -> tuple[Part, ...]:
        """The op amp and its noise sources, named under ``name``."""
        return noisy_opamp(
            name,
            plus,
            minus,
            output,
            dc_gain=self.dc_gain,
            gbw_hz=self.gbw_hz,
            en_v_per_rthz=self.en_v_per_rthz,
            en_corner_hz=self.en_corner_hz,
            in_plus_a_per_rthz=self.in_plus_a_per_rthz,
            in_minus_a_per_rthz=self.in_minus_a_per_rthz,
            in_corner_hz=self.in_corner_hz,
        )
