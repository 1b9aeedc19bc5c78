r"""Checks a front end must pass before its noise is worth computing.

Each segment of the front end (:mod:`resplan.chain.netlists`) that holds an op amp is
checked for

- a circuit that cannot be solved (singular: a node no part holds, an op amp without
  feedback);
- a natural frequency (pole) in the right half-plane: the circuit oscillates;
- a complex pole pair with Q above :data:`~resplan.chain.stages.MAX_SECTION_Q`: a loop
  that rings near oscillation (a transimpedance stage without enough C_f, a filter
  section built for too sharp a peak), whose noise figures a 1 % part change moves by
  several dB;
- an op amp that cannot hold the stage's gain at the band top: its open-loop gain
  GBW/f is below the gain the loop must hold there. For a voltage-input stage that is
  the signal gain; for a transimpedance stage it is the noise gain
  1 + Z_f/Z_in, which the photodiode's capacitance raises (the e_n·C peaking).

Each problem is one :class:`~resplan.errors.DesignError` naming the stage and the field
to change. Poles come from the shift-and-invert form of the generalised eigenproblem
of the segment's nodal matrices; the Q of a pole pair p is |p| / (−2·Re p).

This module imports numpy only.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from ..errors import DesignError
from ..noise.netlist import CircuitError, Netlist, OpAmp, VoltageSource
from ..noise.nodal import build_mna
from ..units.formatting import format_complex, format_number, format_si
from .netlists import ChainCircuit, Segment
from .stages import MAX_SECTION_Q, ActiveFilter, TransimpedanceStage

__all__ = ["check_circuit", "poles_rad_per_s", "pole_q", "transimpedance_noise_gain"]


def poles_rad_per_s(net: Netlist) -> np.ndarray:
    """Finite natural frequencies of a netlist, rad/s (numpy only).

    With a shift σ₀ where G + σ₀C is regular, (G + sC)x = 0 becomes
    Mx = x/(σ₀ − s) with M = (G + σ₀C)⁻¹C, so the eigenvalues μ ≠ 0 of M give the
    poles s = σ₀ − 1/μ (the shift-and-invert form of the generalised eigenproblem;
    Golub & Van Loan, *Matrix Computations*, §7.7, from memory).

    Raises
    ------
    numpy.linalg.LinAlgError, CircuitError
        When the circuit is singular.
    """
    mna = build_mna(net)
    g, c = mna.conductance, mna.capacitance
    if not np.any(c):
        return np.zeros(0, dtype=complex)
    scale = float(np.linalg.norm(g) / np.linalg.norm(c))
    sigma = scale * (0.6180339887 + 0.3141592654j)
    m = np.linalg.solve(g + sigma * c, c.astype(complex))
    if not np.all(np.isfinite(m)):
        raise np.linalg.LinAlgError("singular")
    mu = np.linalg.eigvals(m)
    finite = np.abs(mu) > 1e-9 * max(float(np.abs(mu).max()), 1e-300)
    return sigma - 1.0 / mu[finite]


def pole_q(poles: np.ndarray) -> np.ndarray:
    """Q of each complex pole, |p| / (−2·Re p); 0 for a real pole (dimensionless).

    Examples
    --------
    >>> w0 = 2 * math.pi * 1e3
    >>> p = w0 * np.exp(1j * (math.pi - math.acos(1 / (2 * 0.7071))))  # Q = 0.7071
    >>> round(float(pole_q(np.array([p]))[0]), 4)
    0.7071
    """
    p = np.asarray(poles, dtype=complex)
    complex_pair = np.abs(p.imag) > 1e-9 * np.abs(p)
    with np.errstate(divide="ignore"):
        q = np.abs(p) / np.maximum(-2.0 * p.real, 1e-300)
    return np.where(complex_pair, q, 0.0)


def transimpedance_noise_gain(
    stage: TransimpedanceStage, sensor: Any, frequency_hz: float
) -> float:
    r"""|1 + Z_f/Z_in| of a transimpedance stage at ``frequency_hz`` (V/V).

    Z_f = R_f ∥ C_f; Z_in = R_sh ∥ (C_sensor + C_in). It is the gain the op amp's loop
    must hold for e_n, and the gain its open-loop gain GBW/f must exceed (Graeme,
    *Photodiode Amplifiers*, 1996, from memory).
    """
    s = 2j * math.pi * frequency_hz
    y_f = 1.0 / stage.rf_ohm + s * (stage.cf_f or 0.0)
    c_in = (sensor.capacitance_f or 0.0) + stage.input_capacitance_f
    y_in = 1.0 / sensor.resistance_ohm + s * c_in
    return float(abs(1.0 + y_in / y_f))


def _q_field(seg: Segment, chain: Any) -> tuple[str, str]:
    """The field to change for a ringing loop, and the advice."""
    stage = _stage(seg, chain)
    if isinstance(stage, TransimpedanceStage) and stage.gbw_hz is not None:
        c_in = (chain.sensor.capacitance_f or 0.0) + stage.input_capacitance_f
        # C_f for a 45° phase margin: √(C_in / (2π·R_f·GBW)) (Graeme 1996, from memory).
        cf = math.sqrt(max(c_in, 1e-300) / (2 * math.pi * stage.rf_ohm * stage.gbw_hz))
        return (
            f"{seg.where}.cf",
            "a feedback capacitor that keeps the loop's poles at "
            f"Q ≤ {format_number(MAX_SECTION_Q)}: about √(C_in/(2π·R_f·GBW)) = "
            f"{format_si(cf, 'F')} or more (45° phase margin)",
        )
    if isinstance(stage, ActiveFilter):
        return (
            f"{seg.where}.gbw" if stage.gbw_hz is not None else seg.where,
            f"sections whose poles stay at Q ≤ {format_number(MAX_SECTION_Q)} with this op amp "
            "(a faster op amp or a lower cut-off)",
        )
    return (
        seg.where,
        f"a circuit whose poles stay at Q ≤ {format_number(MAX_SECTION_Q)} (common practice, no "
        "source: a higher Q rings near oscillation)",
    )


def _stage(seg: Segment, chain: Any) -> Any:
    if chain is None or not seg.where.startswith("stages["):
        return None
    try:
        return chain.stages[int(seg.where[len("stages[") : -1])]
    except (ValueError, IndexError):  # pragma: no cover - every segment ends at a stage
        return None


def check_circuit(
    circuit: ChainCircuit, band_top_hz: float | None = None, chain: Any = None
) -> None:
    """Refuse a front end that is singular, unstable, ringing, or out of loop gain in the band.

    Parameters
    ----------
    circuit : ChainCircuit
        The front end.
    band_top_hz : float, optional
        Top of the signal band, Hz; the gain checks need it.
    chain : Chain, optional
        The chain the circuit is of: names the field to change and gives a
        transimpedance stage's noise gain.

    Raises
    ------
    DesignError
        ``<stage>`` for a singular circuit or a right-half-plane pole; ``<stage>.cf``
        (a transimpedance stage), ``<stage>.gbw`` (an active filter) or ``<stage>``
        for a pole pair with Q > 50; ``<stage>.gbw`` when an op amp's open-loop gain at
        the band top, GBW/f, is below the gain its loop must hold there.
    """
    for seg in circuit.segments:
        amps = [p for p in seg.netlist.parts if isinstance(p, OpAmp)]
        if not amps:
            continue
        try:
            poles = poles_rad_per_s(seg.netlist)
        except (np.linalg.LinAlgError, CircuitError):
            raise DesignError(
                seg.where,
                "a singular circuit",
                "a circuit that fixes every node (a DC path at each node, feedback round "
                "each op amp)",
            ) from None
        bad = poles[poles.real > 1e-7 * np.abs(poles)]
        if bad.size:
            p0 = bad[0] / (2 * math.pi)
            raise DesignError(
                seg.where,
                f"unstable: a pole at {format_complex(p0, 'Hz')}",
                "a stable circuit (every pole in the left half-plane)",
            )
        q = pole_q(poles)
        if q.size and float(q.max()) > MAX_SECTION_Q:
            field, expected = _q_field(seg, chain)
            k = int(np.argmax(q))
            raise DesignError(
                field,
                f"a pole pair with Q = {format_number(float(q[k]))} at "
                f"{format_si(abs(poles[k]) / (2 * math.pi), 'Hz')}",
                expected,
            )
        if band_top_hz is not None:
            _check_loop_gain(seg, band_top_hz, chain)


def _check_loop_gain(seg: Segment, band_top_hz: float, chain: Any) -> None:
    amps = [p for p in seg.netlist.parts if isinstance(p, OpAmp) and math.isfinite(p.gbw_hz)]
    if not amps:
        return
    stage = _stage(seg, chain)
    if isinstance(stage, TransimpedanceStage):
        gain = transimpedance_noise_gain(stage, chain.sensor, band_top_hz)
        what = "noise gain 1 + Z_f/Z_in"
    elif isinstance(seg.netlist.part(seg.netlist.signal_input), VoltageSource):
        f = np.array([band_top_hz * 1e-4])  # the asked (pass-band) gain
        gain = float(np.sqrt(seg.power_transfers(f)[1])[0])
        what = "gain"
    else:
        return
    for amp in amps:
        if amp.gbw_hz / band_top_hz < gain:
            raise DesignError(
                f"{seg.where}.gbw",
                format_si(amp.gbw_hz, "Hz"),
                f"a gain-bandwidth product above {format_si(gain * band_top_hz, 'Hz')}: the "
                f"stage's {what} {format_si(gain, 'V/V')} at the band top "
                f"{format_si(band_top_hz, 'Hz')} needs it",
            )
