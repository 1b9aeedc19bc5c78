"""An open analog stage's data-sheet limits, solved against the model ``check`` uses.

The forward budget integrates every source of the solved circuit
(:mod:`resplan.chain.netlists`): a source of white density e and 1/f corner f_c gives
the variance e²·(W_j + f_c·F_j) at the ADC input, W_j and F_j being the white and 1/f
noise bandwidths of its own path. The variance is exactly proportional to e², so the
planner runs the same budget once on a *probe* chain in which every open figure is a
unit density (1 V/√Hz for e_n, 1 A/√Hz for i_n, with the stated corners): each probe's
contribution, referred to the sensor, is then σ₁ = √(W_j + f_c·F_j)/G, and the limit
for an allowance σ is σ/σ₁ (the sources of one figure — every section's op amp of an
active filter — add in power: σ₁² = Σ_j σ₁ⱼ²). A chain built with the figure at its
limit is the same circuit with the probe scaled, so it uses exactly its allowance.
"""

from __future__ import annotations

import math
from dataclasses import replace

from ..chain.budget import forward_budget
from ..chain.design import Design
from ..chain.signal_chain import Chain
from ..chain.stages import (
    ActiveFilter,
    IntegratedAmplifier,
    InvertingStage,
    NoiseDensity,
    NonInvertingStage,
    TransimpedanceStage,
)
from ..noise.physics import BOLTZMANN_J_PER_K
from ..units.formatting import format_si
from .provisional import Slot
from .rows import PartRequirement

__all__ = ["probe_paths", "gain_stage_rows", "filter_noise_rows", "first_gain_index"]

#: Stage types that set the chain's gain (the first one is the front end).
GAIN_STAGES = (IntegratedAmplifier, NonInvertingStage, InvertingStage, TransimpedanceStage)


def first_gain_index(chain: Chain) -> int | None:
    for i, stage in enumerate(chain.stages):
        if isinstance(stage, GAIN_STAGES):
            return i
    return None


def probe_paths(design: Design, chain: Chain, slots: list[Slot], band, grid_points: int) -> None:
    """Set ``slot.paths`` of every open analog stage from one budget of the probe chain.

    ``paths["voltage"]`` and ``paths["current"]``: rms at the sensor per unit white
    density of the stage's voltage-noise and current-noise sources (V or A per V/√Hz or
    A/√Hz); ``paths["bandwidth_hz"]``: the noise bandwidth of its largest voltage source.
    """
    probing = [s for s in slots if s.index is not None]
    if not probing:
        return
    stages = list(chain.stages)
    for slot in probing:
        stages[slot.index] = slot.stage(1.0, 1.0)
    probe = replace(chain, stages=tuple(stages))
    budget = forward_budget(probe, band, requirement=design.requirement, grid_points=grid_points)
    for slot in probing:
        place = f"stages[{slot.index}]."
        mine = [c for c in budget.contributions if c.id.startswith(place)]
        volts = [c for c in mine if c.kind == "voltage"]
        amps = [c for c in mine if c.kind == "current"]
        slot.paths = {
            "voltage": math.sqrt(sum(c.rms_v**2 for c in volts)),
            "current": math.sqrt(sum(c.rms_v**2 for c in amps)),
            "sources": len(volts),
            "bandwidth_hz": max(volts, key=lambda c: c.rms_v).noise_bandwidth_hz if volts else 0.0,
        }


def _band_text(slot: Slot) -> str:
    paths = slot.paths
    n = paths["sources"]
    many = f", {n} op amps" if n > 1 else ""
    return f"noise bandwidth {format_si(paths['bandwidth_hz'], 'Hz')} of the solved circuit{many}"


def _corner_text(slot: Slot, key: str) -> str:
    fc = slot.part.known.get(key, 0.0)
    return f"1/f corner {format_si(fc, 'Hz')}" + (
        "" if key in slot.stated else " (assumed: state it)"
    )


def _current_label(chain: Chain, index: int) -> tuple[str, str]:
    """Where the current noise flows: a label for the row and a note for its condition."""
    stage = chain.stages[index]
    if isinstance(stage, IntegratedAmplifier | NonInvertingStage):
        r_seen = chain.resistance_seen_by(index)
        return f"current noise i_n into {format_si(r_seen, 'Ω')}", "at its inputs"
    return "current noise i_n", "at the inverting input, through the feedback network"


#: Where data sheets quote a part's 1/f noise (common practice, no source), Hz.
LOW_FREQUENCY_HZ = 10.0


def _low_frequency_rows(slot: Slot, white: float, key: str, what: str, unit: str) -> list:
    """The density limit at :data:`LOW_FREQUENCY_HZ` when a 1/f corner matters.

    e(f) = e_w·√(1 + f_c/f) (the 1/f + white model, Motchenbacher & Connelly).
    """
    fc = slot.part.known.get(key, 0.0)
    if not fc > 0 or not math.isfinite(white):
        return []
    f = LOW_FREQUENCY_HZ
    return [
        PartRequirement(
            slot.part.name,
            slot.part.field_path,
            f"{what} noise density at {format_si(f, 'Hz')} (the same part)",
            white * math.sqrt(1 + fc / f),
            unit,
            "max",
            f"the white limit above with its 1/f corner {format_si(fc, 'Hz')}",
            "e(f) = e_w·√(1 + f_c/f)",
        )
    ]


def gain_stage_rows(slot: Slot, var: float, chain: Chain, design: Design):
    """e_n, i_n (alone and half each), the output density and GBW of an open gain stage.

    ``var`` is the stage's allowance at the sensor (V² or A²). Returns the rows and the
    limits (``stage``: the stage at its e_n limit with no current noise;
    ``stage_split``: e_n and i_n at half the power each).
    """
    part = slot.part
    stage = chain.stages[slot.index]
    sigma = math.sqrt(var)
    e_path, i_path = slot.paths["voltage"], slot.paths["current"]
    en_max = sigma / e_path if e_path > 0 else math.inf
    in_max = sigma / i_path if i_path > 0 else math.inf
    band = _band_text(slot)
    if isinstance(stage, TransimpedanceStage):
        band = "the e_n·C_in noise-gain peaking solved with the loop"
    rows = [
        PartRequirement(
            part.name,
            part.field_path,
            "white voltage noise e_n (current noise negligible)",
            en_max,
            "V/√Hz",
            "max",
            f"{_corner_text(slot, 'en_corner_hz')}; {band}",
            "e_n = σ / σ₁ (σ₁: the solved budget's rms for e_n = 1 V/√Hz)",
        )
    ]
    rows += _low_frequency_rows(slot, en_max, "en_corner_hz", "voltage", "V/√Hz")
    if math.isfinite(in_max):
        rows += _low_frequency_rows(slot, in_max, "in_corner_hz", "current", "A/√Hz")
        label, where = _current_label(chain, slot.index)
        rows += [
            PartRequirement(
                part.name,
                part.field_path,
                f"{label} (voltage noise negligible)",
                in_max,
                "A/√Hz",
                "max",
                f"{_corner_text(slot, 'in_corner_hz')}; {where}; solved circuit",
                "i_n = σ / σ₁ (σ₁: the solved budget's rms for i_n = 1 A/√Hz)",
            ),
            PartRequirement(
                part.name,
                part.field_path,
                "e_n and i_n with half the share each",
                en_max / math.sqrt(2),
                "V/√Hz",
                "max",
                f"with i_n ≤ {format_si(in_max / math.sqrt(2), 'A/√Hz')}",
                "each term σ²/2",
            ),
        ]
    if isinstance(stage, IntegratedAmplifier | NonInvertingStage):
        role = "front end" if slot.index == first_gain_index(chain) else "driver"
        rows.append(
            PartRequirement(
                part.name,
                part.field_path,
                "output noise density (as a " + role + ")",
                en_max * stage.gain,
                "V/√Hz",
                "max",
                f"at its output, gain {format_si(stage.gain, 'V/V')}; {band}",
                "e_out = e_n · G",
            )
        )
    rows.extend(slot.gbw_rows)
    split = slot.stage(en_max / math.sqrt(2), in_max / math.sqrt(2)) if i_path > 0 else None
    limit = {
        "en": NoiseDensity(en_max, slot.en_corner_hz),
        "in": NoiseDensity(in_max if math.isfinite(in_max) else 0.0, slot.in_corner_hz),
        "gain": stage.gain,
        "stage": slot.stage(en_max, 0.0),
        "stage_split": split,
        "bandwidth_hz": stage.responses[0].cutoff_hz if stage.responses else None,
    }
    return rows, limit


def filter_noise_rows(slot: Slot, var: float, chain: Chain):
    """Noise rows of an open filter: its equivalent noise resistance, or with a topology
    the e_n and i_n of its op amps (its resistors are then fixed by the synthesis)."""
    part = slot.part
    stage: ActiveFilter = chain.stages[slot.index]
    sigma = math.sqrt(var)
    e_path = slot.paths["voltage"]
    e_max = sigma / e_path if e_path > 0 else math.inf
    if stage.topology is not None:
        rows, limit = _op_amp_filter_rows(slot, sigma, e_max)
        return rows, limit
    t = chain.temperature_k
    r_max = e_max**2 / (4 * BOLTZMANN_J_PER_K * t)
    rows = [
        PartRequirement(
            part.name,
            part.field_path,
            "equivalent noise resistance of the filter",
            r_max,
            "Ω",
            "max",
            f"thermal noise 4kTR at {t:.2f} K at its input; {_band_text(slot)}",
            "R = (σ/σ₁)² / 4kT (σ₁: the solved budget's rms for 1 V/√Hz at its input)",
        )
    ]
    realised = replace(slot.stage(), en=None, noise_resistance_ohm=r_max)
    return rows, {"noise_resistance_ohm": r_max, "filter": stage, "stage": realised}


def _op_amp_filter_rows(slot: Slot, sigma: float, e_max: float):
    part = slot.part
    i_path = slot.paths["current"]
    in_max = sigma / i_path if i_path > 0 else math.inf
    n = slot.paths["sources"]
    rows = [
        PartRequirement(
            part.name,
            part.field_path,
            f"white voltage noise e_n of each of its {n} op amps (current noise negligible)"
            if n > 1
            else "white voltage noise e_n of its op amp (current noise negligible)",
            e_max,
            "V/√Hz",
            "max",
            f"{_corner_text(slot, 'en_corner_hz')}; {_band_text(slot)}; the resistors of the "
            "synthesis are counted as fixed",
            "e_n = σ / √(Σ σ₁ⱼ²) over its op amps",
        )
    ]
    rows += _low_frequency_rows(slot, e_max, "en_corner_hz", "voltage", "V/√Hz")
    if math.isfinite(in_max):
        rows.append(
            PartRequirement(
                part.name,
                part.field_path,
                "current noise i_n at each op amp's inputs (voltage noise negligible)",
                in_max,
                "A/√Hz",
                "max",
                f"{_corner_text(slot, 'in_corner_hz')}; solved circuit",
                "i_n = σ / √(Σ σ₁ⱼ²) over its op amps' inputs",
            )
        )
    split = slot.stage(e_max / math.sqrt(2), in_max / math.sqrt(2)) if i_path > 0 else None
    limit = {
        "en": NoiseDensity(e_max, slot.en_corner_hz),
        "filter": slot.stage(),
        "stage": slot.stage(e_max, 0.0),
        "stage_split": split,
    }
    return rows, limit
