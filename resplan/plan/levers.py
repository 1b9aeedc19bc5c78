"""Levers for an infeasible plan: each change that alone would make it feasible.

Each is computed, not guessed: the span and resistance levers from the fixed
contributions' scaling laws (thermal noise ∝ R and ∝ T), the averaging lever by
recomputing the whole forward budget with longer averaging, so that 1/f noise,
which does not average down, is counted. No lever leaves the signal band: the
averaging lever never gives an output rate below twice the band top.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

from ..chain.budget import forward_budget
from ..chain.signal_chain import Chain
from ..errors import ChainError, DesignError
from ..noise.bandwidth import DigitalPath
from ..noise.responses import SincFilter
from ..units.formatting import format_si

__all__ = ["Lever", "find_levers"]

#: Largest post-averaging count tried when looking for a feasible data rate: 2^24.
_MAX_AVERAGING_DOUBLINGS = 24


def _v(value: float) -> str:
    return format_si(value, "V")


def _ohm(value: float) -> str:
    return format_si(value, "Ω")


@dataclass(frozen=True)
class Lever:
    """A change that alone would make an infeasible plan feasible."""

    name: str
    value: float | None
    unit: str
    description: str


def find_levers(design, chain, budget, fixed, fixed_var, req, band, grid_points) -> list[Lever]:
    out: list[Lever] = []
    allowed = req.allowed_noise_rms_v
    total_with_interference = math.sqrt(fixed_var + req.interference_rms_v**2)
    span_needed = req.span_v * total_with_interference / req.allowed_total_rms_v
    out.append(
        Lever(
            "larger span",
            span_needed,
            "V",
            f"a sensor span of at least {_v(span_needed)} (now {_v(req.span_v)}) with the "
            "same noise at the sensor",
        )
    )
    sensor_name = design.sensor.name
    thermal_s = sum(c.rms_v**2 for c in fixed if c.stage == sensor_name and c.kind == "thermal")
    room_s = allowed**2 - (fixed_var - thermal_s)
    r = design.sensor.resistance_ohm
    t_s = budget.sensor_temperature_k
    if thermal_s > 0 and room_s > 0:
        out.append(
            Lever(
                "lower source resistance",
                r * room_s / thermal_s,
                "Ω",
                f"a source resistance of at most {_ohm(r * room_s / thermal_s)} (now {_ohm(r)}), "
                "thermal noise only; current-noise terms fall too",
            )
        )
        out.append(
            Lever(
                "colder sensor",
                t_s * room_s / thermal_s,
                "K",
                f"the sensor at or below {format_si(t_s * room_s / thermal_s, 'K')} (now {t_s:.2f} "
                "K)",
            )
        )
    else:
        out.append(
            Lever(
                "lower source resistance",
                None,
                "Ω",
                "not enough alone: the other fixed parts exceed the budget at R = 0",
            )
        )
    thermal_all = sum(c.rms_v**2 for c in fixed if c.kind == "thermal")
    room_t = allowed**2 - (fixed_var - thermal_all)
    if thermal_all > 0 and room_t > 0:
        t = chain.temperature_k
        factor = room_t / thermal_all
        out.append(
            Lever(
                "lower temperature",
                factor * t,
                "K",
                f"every resistor at or below {format_si(factor * t, 'K')} (now {t:.2f} K; "
                "thermal terms scale with T)",
            )
        )
    out.append(_averaging_lever(chain, band, req, grid_points))
    return out


def _averaging_lever(chain: Chain, band, req, grid_points: int) -> Lever:
    """Find the shortest extra averaging (a narrower band) that makes the fixed parts fit."""
    rate = chain.output_rate_hz
    top = band.f_high_hz
    # Averaging N results lowers white noise power by N (and 1/f noise not at all); allow
    # a factor 16 more for noise shaped toward high frequencies. When even the longest
    # averaging cannot close the gap, say so at once rather than try every length.
    current = forward_budget(chain, band, requirement=req, grid_points=grid_points)
    allowed = req.allowed_noise_rms_v
    if not allowed > 0 or (current.total_rms_v / allowed) ** 2 > 16 * 2.0**_MAX_AVERAGING_DOUBLINGS:
        return Lever(
            "longer averaging / narrower band",
            None,
            "",
            f"not enough alone: even 2^{_MAX_AVERAGING_DOUBLINGS} averages do not fit "
            "(1/f noise does not average down)",
        )
    for k in range(1, _MAX_AVERAGING_DOUBLINGS + 1):
        n = 2**k
        if top is not None and rate / n < 2 * top * (1 - 1e-12):
            # Never an output rate below twice the band top: the band would alias.
            return Lever(
                "longer averaging / narrower band",
                None,
                "",
                f"not possible within the band: averaging {n} results would give an output "
                f"rate of {format_si(rate / n, 'Hz')}, below twice the band top "
                f"({format_si(2 * top, 'Hz')}); "
                "a narrower band is a change of requirement",
            )
        extra = SincFilter(1, n, rate)
        stages = (chain.digital.stages if chain.digital else ()) + (extra,)
        try:
            trial = replace(chain, digital=DigitalPath(stages))
            b = forward_budget(trial, band, requirement=req, grid_points=grid_points)
        except (DesignError, ChainError):
            break
        if b.total_rms_v <= req.allowed_noise_rms_v:
            return Lever(
                "longer averaging / narrower band",
                float(n),
                "",
                f"average {n} more results: output rate {format_si(rate / n, 'Hz')} (now "
                f"{format_si(rate, 'Hz')}), "
                f"computed with 1/f noise, which does not average down",
            )
    return Lever(
        "longer averaging / narrower band",
        None,
        "",
        f"not enough alone: even 2^{_MAX_AVERAGING_DOUBLINGS} averages do not fit "
        "(1/f noise does not average down)",
    )
