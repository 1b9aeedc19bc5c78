r"""The gain-bandwidth product (or bandwidth) an open gain stage needs: a limit to state.

An open part's GBW is an output of the plan, never an input to refuse. For each open
gain stage the planner states the least GBW that

* ``check`` accepts: the op amp's open-loop gain at the band top, GBW/f_top, at least
  the stage's gain (the criterion of :func:`resplan.chain.netlists.check_circuit`);
* keeps the stated pass-band flatness F with this stage alone: the solver's op amp is
  a single pole with infinite DC gain, so the closed loop is G/(1 + j·f·NG/GBW) and its
  droop at f_top is 10·log10(1 + (f_top·NG/GBW)²) dB, giving
  GBW ≥ NG·f_top / √(10^(F/10) − 1) (the single-pole closed loop, e.g. Franco,
  *Design with Operational Amplifiers and Analog Integrated Circuits*, ch. 6, from memory);
* for a transimpedance stage, gives a flat response (no peaking, Q ≤ 1/√2). With
  A = ω_t/s, feedback admittance Y_f = G_f + sC_f and input admittance
  Y_in = G_sh + sC_in (shunt resistance, sensor and op-amp capacitance), the loop
  1 + Aβ = 0 with β = Y_f/(Y_f + Y_in) is

  .. math:: C_T s^2 + (G_f + G_{sh} + ω_t C_f)\,s + ω_t G_f = 0, \quad C_T = C_{in} + C_f,

  so Q² = ω_t G_f C_T / (G_f + G_sh + ω_t C_f)², and Q² ≤ 1/2 above the larger root of
  C_f²ω_t² + 2(G_tot C_f − G_f C_T)ω_t + G_tot² = 0 (G_tot = G_f + G_sh). Asking for a
  Butterworth (Q = 0.707) closed loop is common practice (no source); the root is exact
  for the solver's op-amp model. Where no GBW peaks the response, the common
  45° phase-margin rule GBW = C_T/(2π·R_f·C_f²) (Graeme, *Photodiode Amplifiers*,
  1996, from memory) is stated instead.

A transimpedance stage's e_n noise gain rises to 1 + C_in/C_f and stays there up to the
loop's crossover, so its noise depends on the GBW: with none stated the planner takes
the least GBW above for the noise and says so (a faster op amp passes more e_n·C_in
noise). A stated GBW or bandwidth below what ``check`` accepts (or below the flatness
GBW when a flatness is stated) makes the plan infeasible, naming the field given; the
planner carries on with the least GBW, so every other figure is still computed. A
stated TIA GBW below the flat-response one is only said (a rule of thumb, not a check).
"""

from __future__ import annotations

import math

from ..chain.design import Design
from ..chain.signal_chain import Chain
from ..chain.stages import IntegratedAmplifier, InvertingStage, TransimpedanceStage
from ..units.formatting import format_si
from .limits import PartRequirement
from .provisional import Slot

__all__ = ["settle_gbw", "transimpedance_flat_gbw_hz", "flatness_gbw_hz"]


def flatness_gbw_hz(noise_gain: float, f_top_hz: float, flatness_db: float) -> float:
    """Least GBW for a single-pole closed loop to droop at most ``flatness_db`` at f_top, Hz.

    Examples
    --------
    >>> round(flatness_gbw_hz(10.0, 1e3, 10 * math.log10(2)))  # −3.01 dB at 1 kHz
    10000
    """
    return noise_gain * f_top_hz / math.sqrt(10 ** (flatness_db / 10) - 1)


def transimpedance_flat_gbw_hz(
    rf_ohm: float, cf_f: float, c_in_f: float, shunt_ohm: float = math.inf
) -> float | None:
    """Least GBW for a transimpedance closed loop with Q ≤ 1/√2, Hz; None if none peaks.

    See the module notes for the characteristic equation.

    Examples
    --------
    >>> f = transimpedance_flat_gbw_hz(1e6, 1e-12, 99e-12)
    >>> round(f / 1e6, 2)  # ≈ C_T/(π·R_f·C_f²) = 31.8 MHz for C_in ≫ C_f
    31.51
    """
    g_f = 1.0 / rf_ohm
    g_tot = g_f + (0.0 if math.isinf(shunt_ohm) else 1.0 / shunt_ohm)
    c_t = c_in_f + cf_f
    b = g_f * c_t - g_tot * cf_f
    disc = b * b - cf_f * cf_f * g_tot * g_tot
    if b <= 0 or disc < 0:
        return None
    return (b + math.sqrt(disc)) / (cf_f * cf_f) / (2 * math.pi)


def _input_capacitance(design: Design, stage: TransimpedanceStage) -> float:
    return (design.sensor.capacitance_f or 0.0) + stage.input_capacitance_f


def _gbw_row(slot: Slot, value: float, unit: str, quantity: str, condition: str, formula: str):
    part = slot.part
    return PartRequirement(
        part.name, part.field_path, quantity, value, unit, "min", condition, formula
    )


def settle_gbw(design: Design, chain: Chain, slots: list[Slot]) -> None:
    """Settle every open gain stage's GBW: the rows to state, assumptions and reasons.

    Sets ``slot.gbw_rows``; may add ``gbw_hz`` (a TIA's assumed GBW, or the least one
    when a stated figure is too low) to the part's known fields.
    """
    req = design.requirement
    top = design.band.f_high_hz
    for slot in slots:
        slot.gbw_rows = []
        if slot.index is None or slot.part.kind == "filter":
            continue
        stage = chain.stages[slot.index]
        known = slot.part.known
        in_amp = isinstance(stage, IntegratedAmplifier) and not known.get("op_amp")
        if slot.part.kind == "transimpedance":
            _transimpedance(design, slot, stage, top)
            continue
        noise_gain = stage.noise_gain if isinstance(stage, InvertingStage) else stage.gain
        needs: list[tuple[float, str, str]] = []
        if top is not None:
            held = (
                f"its gain {format_si(stage.gain, 'V/V')} held up to the band top "
                f"{format_si(top, 'Hz')}, as check requires"
            )
            needs.append(
                (
                    stage.gain * top,
                    held if in_amp else f"open-loop gain GBW/f_top ≥ the stage's gain: {held}",
                    "GBW ≥ G·f_top",
                )
            )
            if req.passband_flatness_db is not None:
                needs.append(
                    (
                        flatness_gbw_hz(noise_gain, top, req.passband_flatness_db),
                        "this stage alone within the stated "
                        f"±{format_si(req.passband_flatness_db, 'dB')} flatness at the band top "
                        "(single-pole closed loop)",
                        "GBW ≥ NG·f_top / √(10^(F/10) − 1)",
                    )
                )
        if not needs:
            continue
        gbw_min, why, formula = max(needs)
        stated_key = "bandwidth_hz" if in_amp and "bandwidth_hz" in known else "gbw_hz"
        stated = known.get(stated_key) if stated_key in slot.stated else None
        if stated is not None:
            _check_stated(slot, stage.gain, stated_key, stated, gbw_min, why)
        elif in_amp:
            slot.gbw_rows.append(
                _gbw_row(
                    slot,
                    gbw_min / stage.gain,
                    "Hz",
                    "bandwidth (−3 dB, at this gain)",
                    why,
                    formula.replace("GBW", "bandwidth·G"),
                )
            )
        else:
            slot.gbw_rows.append(
                _gbw_row(slot, gbw_min, "Hz", "gain-bandwidth product GBW", why, formula)
            )


def _check_stated(
    slot: Slot, gain: float, key: str, stated: float, gbw_min: float, why: str
) -> None:
    """A stated GBW or bandwidth below the least needed: a reason, and the least used."""
    got = stated * (gain if key == "bandwidth_hz" else 1.0)
    if got >= gbw_min * (1 - 1e-12):
        return
    name = key.removesuffix("_hz")
    need = gbw_min / gain if key == "bandwidth_hz" else gbw_min
    slot.reasons.append(
        f"{slot.part.field_path}.{name}: the stated {format_si(stated, 'Hz')} is below "
        f"the {format_si(need, 'Hz')} needed: {why}"
    )
    slot.part = _with_known(slot, {key: need})
    slot.assumptions.append(
        f"{slot.part.name}: figures computed with the {name} raised to "
        f"{format_si(need, 'Hz')}, the least that works"
    )


def _with_known(slot: Slot, extra: dict):
    from dataclasses import replace

    return replace(slot.part, known={**slot.part.known, **extra})


def _transimpedance(
    design: Design, slot: Slot, stage: TransimpedanceStage, top: float | None
) -> None:
    c_in = _input_capacitance(design, stage)
    shunt = design.sensor.resistance_ohm
    cf = stage.cf_f
    flat = transimpedance_flat_gbw_hz(stage.rf_ohm, cf, c_in, shunt)
    if flat is not None:
        gbw = flat
        slot.gbw_rows.append(
            _gbw_row(
                slot,
                flat,
                "Hz",
                "gain-bandwidth product GBW for a flat response",
                f"Q ≤ 0.707 with C_in = {format_si(c_in, 'F')} (sensor and op amp), "
                f"CF = {format_si(cf, 'F')}, RF = {format_si(stage.rf_ohm, 'Ω')}, "
                f"shunt {format_si(shunt, 'Ω')} (common practice, no source)",
                "C_T s² + (G_f + G_sh + ω_t C_f)s + ω_t G_f = 0, Q² ≤ 1/2",
            )
        )
    else:
        gbw = (c_in + cf) / (2 * math.pi * stage.rf_ohm * cf * cf)
        slot.gbw_rows.append(
            _gbw_row(
                slot,
                gbw,
                "Hz",
                "gain-bandwidth product GBW for 45° phase margin",
                "no GBW peaks this response; 45° phase margin rule (Graeme 1996, from memory)",
                "GBW = (C_in + C_f) / (2π·R_f·C_f²)",
            )
        )
    known = slot.part.known
    if known.get("gbw_hz") is None:
        slot.part = _with_known(slot, {"gbw_hz": gbw})
        slot.assumptions.append(
            f"{slot.part.name}: gbw not stated; {format_si(gbw, 'Hz')} (the least above) "
            "assumed for the e_n·C_in noise: a faster op amp passes more of it, so state gbw "
            "and plan again"
        )
    elif known["gbw_hz"] < gbw * (1 - 1e-12):
        # A rule of thumb, not an item check judges: said, not refused.
        slot.assumptions.append(
            f"{slot.part.name}: the stated gbw {format_si(known['gbw_hz'], 'Hz')} is below the "
            f"{format_si(gbw, 'Hz')} of a flat response: expect peaking near the loop's "
            "crossover (the figures use the stated gbw)"
        )
