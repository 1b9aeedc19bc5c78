r"""The analog front end as one circuit: a netlist per stage, solved from sensor to ADC input.

Every stage type builds its own parts (:mod:`resplan.noise.netlist`), with noise ids
under its place in the chain (``stages[2].R3.thermal``, ``stages[0].opamp.en``). A
passive network loads whatever drives it and is loaded by what follows, so passive
stages are solved in one netlist with the stage ahead of them and the input of the
active stage after them. An op-amp output is an ideal source: nothing after it
changes its voltage, so the chain splits there into *segments*, each solved on its
own (work stays linear in the number of stages), and the transfer of a source to the
ADC input is its transfer to the end of its segment times the signal transfers of the
segments after it:

.. math:: |H_{j\to\mathrm{ADC}}(f)|^2 = |H_{j\to k}(f)|^2 \prod_{m>k} |T_m(f)|^2 .

Only magnitudes multiply: each source is uncorrelated with every other, so no phase
is ever recombined across segments. A behavioural filter (an active filter given by
its response, not its topology) is an ideal gain block whose response multiplies its
segment's transfers in power.

Each segment is solved by modified nodal analysis (Ho, Ruehli, Brennan 1975) with one
adjoint solve per frequency for all its sources (Rohrer, Nagel, Meyer, Weber 1971) on
a logarithmic table of :data:`POINTS_PER_DECADE` points a decade, from a quarter of the
band's lower edge to well above every pole; between table points ln|H|² is interpolated by
a cubic in ln f, and above the table the last slope goes on (the asymptotic power law).
The noise integrals of :mod:`resplan.noise.bandwidth` read the table as one stacked
response, so every source's path (white and 1/f noise bandwidths) comes from one pass,
separate from its density.

This module imports numpy only.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from ..errors import DesignError
from ..noise.netlist import (
    BOLTZMANN_J_PER_K,
    GROUND,
    Capacitor,
    CurrentNoise,
    CurrentSource,
    Netlist,
    OpAmp,
    OpAmpModel,
    Part,
    Resistor,
    ShotNoise,
    VoltageNoise,
    VoltageSource,
)
from ..noise.nodal import solve_noise
from ..noise.responses import AnalogLowpass
from ..noise.sections import (
    filter_sections,
    multiple_feedback_lowpass,
    multiple_feedback_parts,
    real_pole_parts,
    real_pole_resistance,
    sallen_key_lowpass,
    sallen_key_parts,
    section_parts,
)
from ..units.formatting import format_number, format_si
from .stages import (
    MAX_SECTION_Q,
    ActiveFilter,
    IntegratedAmplifier,
    InvertingStage,
    NoiseDensity,
    NonInvertingStage,
    RCFilter,
    Sensor,
    TransimpedanceStage,
)

__all__ = [
    "POINTS_PER_DECADE",
    "SourceInfo",
    "Segment",
    "ChainCircuit",
    "TransferTable",
    "SourcePath",
    "build_circuit",
    "transfer_table",
    "circuit_of",
    "UNBOUNDED_SLOPE",
]

#: Table points per decade. Four-point interpolation of ln|H|² in ln f between them
#: integrates an 8th-order Butterworth (section Q up to 2.6) to about 1e-5
#: (tests/test_chain_circuit.py checks it against closed forms and a dense direct solve).
POINTS_PER_DECADE = 80
#: The table reaches this factor above the highest characteristic frequency of the
#: circuit (every GBW, every 1/(2πRC)), where every transfer falls at its final slope.
_TOP_FACTOR = 1e4
#: A power transfer that still falls slower than f^(−1.5) at the top of the table has no
#: finite noise integral: nothing band-limits that source.
UNBOUNDED_SLOPE = -1.5
_TINY = 1e-300


@dataclass(frozen=True)
class SourceInfo:
    """One noise source of the chain as the budget shows it.

    Attributes
    ----------
    source_id : str
        Stable id, such as ``"stages[0].opamp.en"``; the solver's id.
    where : str
        Design-file place of the part it belongs to (``"sensor"``, ``"stages[1]"``).
    stage : str
        The part's label.
    name : str
        What the source is, for people (``"e_n"``, ``"thermal noise of RF"``).
    kind : str
        ``"thermal"``, ``"sensor"``, ``"voltage"`` or ``"current"``.
    contribution_id : str
        The budget's id of the contribution: the table of :mod:`resplan.chain.budget`
        where one fits (``stages[0].en`` for a gain stage's e_n), else the solver's id.
    """

    source_id: str
    where: str
    stage: str
    name: str
    kind: str
    contribution_id: str = ""


@dataclass(frozen=True)
class Segment:
    """A piece of the chain solved as one netlist: from a source to an active output.

    Attributes
    ----------
    netlist : Netlist
        Its circuit; the signal input is the sensor or the ideal output that drives it.
    responses : tuple of AnalogLowpass
        Behavioural responses applied in power at its output (a filter given by its
        response rather than its topology).
    sources : tuple of SourceInfo
        Its noise sources, in the netlist's order.
    where : str
        Design-file place of the stage that ends it (for error messages).
    """

    netlist: Netlist
    responses: tuple[AnalogLowpass, ...]
    sources: tuple[SourceInfo, ...]
    where: str

    def power_transfers(self, frequency_hz: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """|H_j|² of every source to the segment output (S, F) and |T|² of its signal (F,)."""
        sol = solve_noise(self.netlist, frequency_hz)
        shape = np.ones(frequency_hz.shape)
        for response in self.responses:
            shape = shape * response.power_gain(frequency_hz)
        noise = (np.abs(sol.transfer) ** 2).T * shape
        signal = np.abs(sol.signal_transfer) ** 2 * shape
        return noise, signal

    def characteristic_hz(self) -> float:
        """A frequency above every pole of the segment, Hz (a generous estimate).

        The largest finite GBW, behavioural cut-off and 1/(2π·R_min·C_min); an RC
        ladder's highest pole stays within a few times the last, an op-amp loop's
        below its GBW.
        """
        rs = [p.resistance_ohm for p in self.netlist.parts if isinstance(p, Resistor)]
        cs = [p.capacitance_f for p in self.netlist.parts if isinstance(p, Capacitor)]
        top = [r.cutoff_hz for r in self.responses]
        top += [
            p.gbw_hz for p in self.netlist.parts if isinstance(p, OpAmp) and math.isfinite(p.gbw_hz)
        ]
        if rs and cs:
            top.append(len(cs) / (2.0 * math.pi * min(rs) * min(cs)))
        return max(top, default=1.0)


@dataclass(frozen=True)
class ChainCircuit:
    """The analog front end of a chain as segments, from the sensor to the ADC input."""

    segments: tuple[Segment, ...]

    @property
    def sources(self) -> tuple[SourceInfo, ...]:
        return tuple(s for seg in self.segments for s in seg.sources)

    @property
    def white_sq(self) -> np.ndarray:
        """White density² of every source (V²/Hz or A²/Hz), in :attr:`sources` order."""
        return np.array(
            [s.white_sq for seg in self.segments for s in seg.netlist.noise_sources], dtype=float
        )

    @property
    def corner_hz(self) -> np.ndarray:
        """1/f corner of every source, Hz."""
        return np.array(
            [s.corner_hz for seg in self.segments for s in seg.netlist.noise_sources], dtype=float
        )

    def power_transfers(self, frequency_hz: np.ndarray) -> np.ndarray:
        """|H_j(f)|² of every source to the ADC input, shape (S, F): V²/V² or V²/A²."""
        f = np.asarray(frequency_hz, dtype=float)
        rows = []
        downstream = np.ones(f.shape)
        for seg in reversed(self.segments):
            noise, signal = seg.power_transfers(f)
            rows.append(noise * downstream)
            downstream = downstream * signal
        rows.reverse()
        if not rows:
            return np.zeros((0, f.size))
        return np.concatenate(rows, axis=0)

    def signal_power_transfer(self, frequency_hz: np.ndarray) -> np.ndarray:
        """|T(f)|² from the sensor to the ADC input (F,)."""
        f = np.asarray(frequency_hz, dtype=float)
        out = np.ones(f.shape)
        for seg in self.segments:
            out = out * seg.power_transfers(f)[1]
        return out

    def characteristic_hz(self) -> float:
        return max((seg.characteristic_hz() for seg in self.segments), default=1.0)


# ---------------------------------------------------------------------------
# the table and the response the noise integrals read


@dataclass(frozen=True, eq=False)
class TransferTable:
    """Power transfers of every source to the ADC input on a logarithmic table.

    Attributes
    ----------
    log_f0 : float
        ln of the first table frequency (ln Hz).
    step : float
        Table step in ln f.
    log_power : ndarray, shape (S, N)
        ln |H_j|² on the table (zero transfers floored at 1e-300).
    final_slope : ndarray, shape (S,)
        d ln|H_j|² / d ln f over the last table step.
    live : ndarray of bool, shape (S,)
        Sources whose transfer is not zero everywhere.
    top_hz : float
        Last table frequency, Hz.
    settled_hz : float
        Above this every live transfer falls within 0.05 of its final slope, Hz: the
        noise integrals run to 1000× it and add the power-law tail.
    """

    log_f0: float
    step: float
    log_power: np.ndarray
    final_slope: np.ndarray
    live: np.ndarray
    top_hz: float
    settled_hz: float

    def power_gain(self, frequency_hz: np.ndarray, rows: np.ndarray | slice | int = slice(None)):
        """|H_j(f)|² (S, F) between table points by four-point Lagrange interpolation of
        ln|H|² in ln f (error O(h⁴)); below the table the first value holds, above it the
        last slope goes on (the asymptotic power law)."""
        f = np.asarray(frequency_hz, dtype=float)
        x = (np.log(np.maximum(f, math.exp(self.log_f0))) - self.log_f0) / self.step
        n = self.log_power.shape[1]
        table = self.log_power[rows]
        start = np.clip(np.floor(x).astype(np.intp) - 1, 0, n - 4)
        tau = x - start
        above = x > n - 1
        tau = np.where(above, 2.0, tau)
        l0 = -(tau - 1) * (tau - 2) * (tau - 3) / 6
        l1 = tau * (tau - 2) * (tau - 3) / 2
        l2 = -tau * (tau - 1) * (tau - 3) / 2
        l3 = tau * (tau - 1) * (tau - 2) / 6
        log_p = (
            table[..., start] * l0
            + table[..., start + 1] * l1
            + table[..., start + 2] * l2
            + table[..., start + 3] * l3
        )
        if np.any(above):
            slope = table[..., n - 1] - table[..., n - 2]
            beyond = table[..., n - 1, None] + slope[..., None] * (x - (n - 1))
            log_p = np.where(above, beyond if np.ndim(table) > 1 else beyond[..., 0], log_p)
        return np.exp(log_p)

    @property
    def rolloff_order(self) -> int:
        """Slowest final fall of the live sources, as an order (|H|² ∝ f^(−2·order))."""
        slopes = self.final_slope[self.live]
        if slopes.size == 0:
            return 1
        return max(1, int(math.floor(-float(slopes.max()) / 2.0 + 1e-6)))

    @property
    def cutoff_hz(self) -> float:
        """The noise integrals run to 1000× this and add a power-law tail."""
        return self.settled_hz


@dataclass(frozen=True, eq=False)
class SourcePath:
    """One source's path to the ADC input as an analog response, normalised by ``scale``.

    ``power_gain(f)`` is |H_j(f)|²/``scale``; spectra multiply it by the density referred
    to the sensor (white² · scale / G²).
    """

    table: TransferTable
    row: int
    scale: float

    def power_gain(self, frequency_hz) -> np.ndarray:
        return self.table.power_gain(frequency_hz, self.row) / self.scale

    @property
    def cutoff_hz(self) -> float:
        return self.table.cutoff_hz

    @property
    def rolloff_order(self) -> int:
        return self.table.rolloff_order


@lru_cache(maxsize=128)
def transfer_table(circuit: ChainCircuit, f_low_hz: float) -> TransferTable:
    """Solve every segment of ``circuit`` once on a logarithmic table from f_low/4 up."""
    # The table lies on a fixed lattice (10^(k/POINTS_PER_DECADE) Hz, whole decades at the
    # top), so that circuits differing only in a gain are read at the same points.
    k_lo = math.floor(POINTS_PER_DECADE * math.log10(f_low_hz / 4.0))
    hi = max(_TOP_FACTOR * circuit.characteristic_hz(), 1e3 * f_low_hz)
    k_hi = POINTS_PER_DECADE * math.ceil(math.log10(hi))
    k_hi = max(k_hi, k_lo + 8)
    f = 10.0 ** (np.arange(k_lo, k_hi + 1) / POINTS_PER_DECADE)
    lo, hi = float(f[0]), float(f[-1])
    power = circuit.power_transfers(f)
    live = np.max(power, axis=1) > 0.0 if power.size else np.zeros(0, bool)
    log_power = np.log(np.maximum(power, _TINY))
    step = math.log(10.0) / POINTS_PER_DECADE
    final = (log_power[:, -1] - log_power[:, -2]) / step if power.size else np.zeros(0)
    settled = lo
    if np.any(live):
        local = np.diff(log_power[live], axis=1) / step
        moving = np.any(np.abs(local - final[live, None]) > 0.05, axis=0)
        if np.any(moving):
            settled = float(f[int(np.flatnonzero(moving)[-1]) + 1])
    settled = min(max(settled, 10.0 * lo), float(f[-1]) / 1e3)
    final = _sunk_slopes(log_power, final, live, step)
    return TransferTable(math.log(lo), step, log_power, final, live, float(f[-1]), settled)


def _sunk_slopes(log_power: np.ndarray, final: np.ndarray, live: np.ndarray, step: float):
    """Final slopes, a transfer that fell below the 1e-300 floor inside the table given
    the slope of its last step above the floor (a ladder of many poles falls out of
    double range; the floor's flat end is not its slope)."""
    floor = math.log(_TINY)
    sunk = np.flatnonzero(live & (log_power[:, -1] <= floor)) if log_power.size else []
    if len(sunk) == 0:
        return final
    rows = log_power[sunk]
    last = rows.shape[1] - 1 - np.argmax((rows > floor)[:, ::-1], axis=1)
    pick = np.arange(len(sunk))
    slope = (rows[pick, last] - rows[pick, np.maximum(last - 1, 0)]) / step
    final = final.copy()
    final[sunk] = np.where(last > 0, slope, floor / step)
    return final


# ---------------------------------------------------------------------------
# stage builders


def _label(sid: str, prefix: str) -> str:
    """A source's name for people, from its id under ``prefix``."""
    local = sid[len(prefix) + 1 :] if sid.startswith(prefix + ".") else sid
    if local.endswith(".thermal"):
        return "thermal noise of " + local[: -len(".thermal")]
    for suffix, word in ((".en", "e_n"), (".in+", "i_n+"), (".in-", "i_n−")):
        if local.endswith(suffix):
            owner = local[: -len(suffix)]
            return word if owner == "opamp" else f"{word} of {owner}"
    return local


def _kind(sid: str) -> str:
    if sid.endswith(".thermal"):
        return "thermal"
    if sid.endswith((".in+", ".in-")):
        return "current"
    return "voltage"


def _op_amp_parts(
    prefix: str,
    plus: str,
    minus: str,
    output: str,
    en: NoiseDensity | None,
    in_plus: NoiseDensity | None,
    in_minus: NoiseDensity | None,
    gbw_hz: float | None,
) -> list[Part]:
    """An op amp ``<prefix>.opamp`` with e_n in series with + and i_n at each input."""
    name = f"{prefix}.opamp"
    parts: list[Part] = []
    pin = plus
    if en is not None and en.white > 0:
        pin = f"{name}.pin"
        parts.append(VoltageNoise(f"{name}.en", pin, plus, en.white, en.corner_hz))
    if in_plus is not None and in_plus.white > 0 and plus != GROUND:
        parts.append(CurrentNoise(f"{name}.in+", GROUND, plus, in_plus.white, in_plus.corner_hz))
    if in_minus is not None and in_minus.white > 0 and minus != output:
        parts.append(CurrentNoise(f"{name}.in-", GROUND, minus, in_minus.white, in_minus.corner_hz))
    gbw = math.inf if gbw_hz is None else gbw_hz
    parts.append(OpAmp(name, pin, minus, output, math.inf, gbw))
    return parts


def _sensor_parts(sensor: Sensor, temperature_k: float, differential: bool) -> tuple:
    """Sensor parts, its output node(s) and signal input name."""
    parts: list[Part] = []
    info: dict[str, tuple[str, str]] = {}
    if sensor.output == "current":
        out = "n0"
        parts.append(CurrentSource("sensor.signal", GROUND, out))
        parts.append(
            Resistor(
                "sensor.R",
                out,
                GROUND,
                sensor.resistance_ohm,
                temperature_k,
                noise_id="sensor.thermal",
            )
        )
        info["sensor.thermal"] = ("thermal noise of shunt resistance", "thermal")
        if sensor.noise is not None and sensor.noise.white > 0:
            parts.append(
                CurrentNoise(
                    "sensor.noise", GROUND, out, sensor.noise.white, sensor.noise.corner_hz
                )
            )
            info["sensor.noise"] = ("sensor's own noise", "sensor")
        peak = sensor.peak_v
        if peak > 0:
            parts.append(ShotNoise("sensor.signal_shot", out, GROUND, peak))
            info["sensor.signal_shot"] = (
                "shot noise of the signal current at full scale",
                "sensor",
            )
        nodes = (out,)
    else:
        emf = "sensor.emf"
        parts.append(VoltageSource("sensor.signal", emf, GROUND))
        node = emf
        if sensor.noise is not None and sensor.noise.white > 0:
            node = "sensor.e"
            parts.append(
                VoltageNoise("sensor.noise", node, emf, sensor.noise.white, sensor.noise.corner_hz)
            )
            info["sensor.noise"] = ("sensor's own noise", "sensor")
        if differential:
            half = sensor.resistance_ohm / 2.0
            parts.append(
                Resistor("sensor.R+", node, "n0+", half, temperature_k, noise_id="sensor.thermal+")
            )
            parts.append(
                Resistor(
                    "sensor.R-", GROUND, "n0-", half, temperature_k, noise_id="sensor.thermal-"
                )
            )
            info["sensor.thermal+"] = ("thermal noise of source resistance (+ leg)", "thermal")
            info["sensor.thermal-"] = ("thermal noise of source resistance (− leg)", "thermal")
            nodes = ("n0+", "n0-")
        else:
            parts.append(
                Resistor(
                    "sensor.R",
                    node,
                    "n0",
                    sensor.resistance_ohm,
                    temperature_k,
                    noise_id="sensor.thermal",
                )
            )
            info["sensor.thermal"] = ("thermal noise of source resistance", "thermal")
            nodes = ("n0",)
    across = (nodes[0], nodes[1] if len(nodes) == 2 else GROUND)
    if sensor.capacitance_f is not None:
        parts.append(Capacitor("sensor.C", *across, sensor.capacitance_f))
    if sensor.dark_current_a > 0:
        parts.append(ShotNoise("sensor.dark_current", across[0], across[1], sensor.dark_current_a))
        info["sensor.dark_current"] = ("shot noise of the dark current", "sensor")
    return parts, info, nodes


def _filter_parts(stage: ActiveFilter, p: str, node_in: str, node_out: str) -> list[Part]:
    """An active filter built from sections of its topology."""
    sections = () if stage.sections else filter_sections(stage.response, stage.order)
    opamp = OpAmpModel(
        dc_gain=math.inf,
        gbw_hz=math.inf if stage.gbw_hz is None else stage.gbw_hz,
        en_v_per_rthz=stage.en.white if stage.en else 0.0,
        en_corner_hz=stage.en.corner_hz if stage.en else 0.0,
        in_plus_a_per_rthz=stage.in_noise.white if stage.in_noise else 0.0,
        in_minus_a_per_rthz=stage.in_noise.white if stage.in_noise else 0.0,
        in_corner_hz=stage.in_noise.corner_hz if stage.in_noise else 0.0,
    )
    parts: list[Part] = []
    node = node_in
    if stage.sections:  # given by its component values, checked by the stage
        for k, values in enumerate(stage.sections):
            nxt = node_out if k == len(stage.sections) - 1 else f"{p}.n{k}"
            parts += section_parts(f"{p}.sections[{k}]", values, node, nxt, opamp)
            node = nxt
        return parts
    gain_left = stage.gain
    c = stage.capacitor_f
    for k, section in enumerate(sections):
        name = f"{p}.sections[{k}]"
        nxt = node_out if k == len(sections) - 1 else f"{p}.n{k}"
        f0 = section.f0_ratio * stage.cutoff_hz
        if section.q is None:
            parts += real_pole_parts(name, real_pole_resistance(f0, c), c, node, nxt, opamp)
        else:
            if section.q > MAX_SECTION_Q:
                limit = f"a section Q ≤ {format_number(MAX_SECTION_Q)}"
                raise DesignError(f"sections[{k}].q", section.q, limit)
            gain, gain_left = gain_left, 1.0
            if stage.topology == "sallen-key":
                values = sallen_key_lowpass(f0, section.q, gain, capacitor_f=c)
                parts += sallen_key_parts(name, values, node, nxt, opamp)
            else:
                values = multiple_feedback_lowpass(f0, section.q, gain, capacitor_f=c)
                parts += multiple_feedback_parts(name, values, node, nxt, opamp)
        node = nxt
    return parts


def _stage_parts(
    i: int, stage, nodes_in: tuple[str, ...], temperature_k: float
) -> tuple[list[Part], tuple[str, ...], bool, tuple, dict]:
    """Parts of stage ``i``: (parts, output nodes, active, responses, names by id)."""
    p = f"stages[{i}]"
    names: dict[str, tuple[str, str]] = {}
    single = len(nodes_in) == 1
    n_in = nodes_in[0]
    out = f"n{i + 1}"
    if isinstance(stage, RCFilter):
        if single and stage.leg_capacitance_f > 0:
            raise DesignError(
                f"{p}.leg_capacitance",
                format_si(stage.leg_capacitance_f, "F"),
                "no capacitance to ground per leg in a single-ended RC (only after a "
                "differential sensor; give it as the capacitance)",
            )
        if single:
            parts = [
                Resistor(f"{p}.R", n_in, out, stage.resistance_ohm),
                Capacitor(f"{p}.C", out, GROUND, stage.capacitance_f),
            ]
            names[f"{p}.R.thermal"] = ("thermal noise of R", "thermal")
            return parts, (out,), False, (), names
        outs = (f"n{i + 1}+", f"n{i + 1}-")
        parts = [
            # The design file's resistance is the sum of both legs' resistors.
            Resistor(f"{p}.R+", nodes_in[0], outs[0], stage.resistance_ohm / 2),
            Resistor(f"{p}.R-", nodes_in[1], outs[1], stage.resistance_ohm / 2),
            Capacitor(f"{p}.C", outs[0], outs[1], stage.capacitance_f),
        ]
        if stage.leg_capacitance_f > 0:
            parts += [
                Capacitor(f"{p}.C+", outs[0], GROUND, stage.leg_capacitance_f),
                Capacitor(f"{p}.C-", outs[1], GROUND, stage.leg_capacitance_f),
            ]
        names[f"{p}.R+.thermal"] = ("thermal noise of R (+ leg)", "thermal")
        names[f"{p}.R-.thermal"] = ("thermal noise of R (− leg)", "thermal")
        return parts, outs, False, (), names
    if isinstance(stage, IntegratedAmplifier):
        # Output-stage noise is referred to the input as e_out/G, so that the amplifier's
        # bandwidth filters it like the rest (the usual two-stage model).
        parts: list[Part] = []
        pin = n_in
        if stage.input_noise.white > 0:
            parts.append(
                VoltageNoise(
                    f"{p}.input_noise",
                    f"{p}.amp.pin",
                    pin,
                    stage.input_noise.white,
                    stage.input_noise.corner_hz,
                )
            )
            names[f"{p}.input_noise"] = ("input noise", "voltage", "en")
            pin = f"{p}.amp.pin"
        on = stage.output_noise
        if on is not None and on.white > 0:
            parts.append(
                VoltageNoise(
                    f"{p}.output_noise", f"{p}.amp.pin2", pin, on.white / stage.gain, on.corner_hz
                )
            )
            names[f"{p}.output_noise"] = ("output noise / G", "voltage", "eno")
            pin = f"{p}.amp.pin2"
        cn = stage.current_noise
        if cn is not None and cn.white > 0:
            parts.append(CurrentNoise(f"{p}.in+", GROUND, n_in, cn.white, cn.corner_hz))
            names[f"{p}.in+"] = (
                ("i_n", "current", "in") if single else ("i_n+", "current", "in_plus")
            )
            if not single:
                parts.append(CurrentNoise(f"{p}.in-", GROUND, nodes_in[1], cn.white, cn.corner_hz))
                names[f"{p}.in-"] = ("i_n−", "current", "in_minus")
        gbw = math.inf if stage.bandwidth_hz is None else stage.gain * stage.bandwidth_hz
        minus = GROUND if single else nodes_in[1]
        parts.append(OpAmp(f"{p}.amp", pin, minus, out, stage.gain, gbw))
        return parts, (out,), True, (), names
    if not single:
        raise DesignError(
            f"{p}.type",
            type(stage).__name__,
            "an amplifier stage (a differential input) after a differential sensor",
        )
    if isinstance(stage, NonInvertingStage):
        follower = stage.rg_ohm is None or stage.rf_ohm == 0
        minus = out if follower else f"{p}.fb"
        parts = _op_amp_parts(
            p,
            n_in,
            minus,
            out,
            stage.en,
            stage.in_plus,
            stage.in_minus or stage.in_plus,
            stage.gbw_hz,
        )
        names[f"{p}.opamp.en"] = ("e_n", "voltage", "en")
        names[f"{p}.opamp.in+"] = ("i_n+", "current", "in_plus")
        names[f"{p}.opamp.in-"] = ("i_n−", "current", "in_minus")
        if not follower:
            parts += [
                Resistor(f"{p}.RF", out, minus, stage.rf_ohm),
                Resistor(f"{p}.RG", minus, GROUND, stage.rg_ohm),
            ]
        return parts, (out,), True, (), names
    if isinstance(stage, InvertingStage):
        minus = f"{p}.fb"
        parts = [
            Resistor(f"{p}.Rin", n_in, minus, stage.rin_ohm),
            Resistor(f"{p}.RF", minus, out, stage.rf_ohm),
        ]
        parts += _op_amp_parts(p, GROUND, minus, out, stage.en, None, stage.in_minus, stage.gbw_hz)
        return parts, (out,), True, (), names
    if isinstance(stage, TransimpedanceStage):
        parts = [Resistor(f"{p}.RF", n_in, out, stage.rf_ohm)]
        if stage.cf_f is not None:
            parts.append(Capacitor(f"{p}.CF", n_in, out, stage.cf_f))
        if stage.input_capacitance_f > 0:
            parts.append(Capacitor(f"{p}.C_in", n_in, GROUND, stage.input_capacitance_f))
        parts += _op_amp_parts(p, GROUND, n_in, out, stage.en, None, stage.in_minus, stage.gbw_hz)
        return parts, (out,), True, (), names
    if isinstance(stage, ActiveFilter):
        if stage.topology is not None:
            return _filter_parts(stage, p, n_in, out), (out,), True, (), names
        # A behavioural block: its input noise, an ideal gain, its response in power.
        parts = []
        node = n_in
        if stage.noise_resistance_ohm > 0:
            white = math.sqrt(4.0 * BOLTZMANN_J_PER_K * temperature_k * stage.noise_resistance_ohm)
            parts.append(VoltageNoise(f"{p}.R_eq.thermal", f"{p}.x1", node, white))
            names[f"{p}.R_eq.thermal"] = ("thermal noise of equivalent R", "thermal")
            node = f"{p}.x1"
        if stage.en is not None and stage.en.white > 0:
            parts.append(
                VoltageNoise(f"{p}.en", f"{p}.x2", node, stage.en.white, stage.en.corner_hz)
            )
            names[f"{p}.en"] = ("e_n", "voltage")
            node = f"{p}.x2"
        parts.append(OpAmp(f"{p}.block", node, GROUND, out, stage.gain, math.inf))
        return parts, (out,), True, stage.responses, names
    raise TypeError(type(stage))  # pragma: no cover - the union is closed


@lru_cache(maxsize=128)
def build_circuit(
    sensor: Sensor, stages: tuple, temperature_k: float, sensor_temperature_k: float
) -> ChainCircuit:
    """The chain's analog front end as segments (see the module notes).

    Raises
    ------
    DesignError
        A stage that cannot follow what drives it (a transimpedance stage after a
        voltage source, a single-ended stage after a differential sensor).
    """
    parts, names, nodes = _sensor_parts(sensor, sensor_temperature_k, sensor.differential)
    owner = {sid: ("sensor", sensor.name) for sid in names}
    signal = "sensor.signal"
    segments: list[Segment] = []
    responses: tuple = ()
    if sensor.output == "current" and not (stages and isinstance(stages[0], TransimpedanceStage)):
        raise DesignError(
            "stages[0].type",
            type(stages[0]).__name__ if stages else "none",
            "a transimpedance stage after a current-output sensor",
        )

    def close(output_nodes: tuple[str, ...], where: str) -> None:
        ref = output_nodes[1] if len(output_nodes) == 2 else GROUND
        net = Netlist(
            parts,
            output=output_nodes[0],
            output_reference=ref,
            signal_input=signal,
            temperature_k=temperature_k,
        )
        infos = []
        for s in net.noise_sources:
            where_s, stage_name = owner.get(s.source_id, ("", ""))
            label, kind, public = (*names.get(s.source_id, (None, None)), None)[:3]
            prefix = where_s
            infos.append(
                SourceInfo(
                    s.source_id,
                    where_s,
                    stage_name,
                    label or _label(s.source_id, prefix),
                    kind or _kind(s.source_id),
                    f"{where_s}.{public}" if public else s.source_id,
                )
            )
        segments.append(Segment(net, responses, tuple(infos), where))

    for i, stage in enumerate(stages):
        where = f"stages[{i}]"
        if isinstance(stage, TransimpedanceStage) and (i > 0 or sensor.output != "current"):
            raise DesignError(
                f"{where}.type",
                "transimpedance",
                "a transimpedance stage only as the first stage after a "
                "current-output sensor (shunt_resistance)",
            )
        new, outs, active, stage_responses, stage_names = _stage_parts(
            i, stage, nodes, temperature_k
        )
        parts += new
        names.update(stage_names)
        for part in new:
            for s in part.noise_sources(temperature_k):
                owner[s.source_id] = (where, stage.name)
        nodes = outs
        if active:
            responses = stage_responses
            close(outs, where)
            drive = f"{where}.drive"
            parts = [VoltageSource(drive, outs[0], GROUND)]
            names, owner, signal, responses = {}, {}, drive, ()
    if len(parts) > 1 or not segments:
        close(nodes, f"stages[{len(stages) - 1}]" if stages else "sensor")
    return ChainCircuit(tuple(segments))


def circuit_of(chain) -> ChainCircuit:
    """The :class:`ChainCircuit` of a :class:`~resplan.chain.signal_chain.Chain` (cached)."""
    return build_circuit(
        chain.sensor,
        tuple(chain.stages),
        float(chain.temperature_k),
        float(chain.sensor_temperature_k),
    )
