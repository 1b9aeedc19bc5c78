"""Stated interferers through the chain, written for people (text and report share it).

Attenuation at an exact null, or past what double precision can resolve, is
written as a floor (``"> 200 dB, at a null"``) and a residue below 1 fV as
``"below 1.00 fV"``, never as a figure like 984.5 dB or 5.91e-54 V that no
bench could confirm.

Examples
--------
>>> format_attenuation(984.5)
'> 200 dB, at a null'
>>> format_attenuation(42.04)
'42.0 dB'
>>> format_residue(5.91e-54)
'below 1.00 fV'
"""

from __future__ import annotations

import math

from ..chain.interference import ATTENUATION_FLOOR_DB, RESIDUE_FLOOR_V, Residue
from ..units.formatting import format_db, format_si

__all__ = [
    "format_attenuation",
    "format_residue",
    "interference_lines",
    "residue_summary",
    "passband_timing_lines",
]


def format_attenuation(db: float) -> str:
    """Attenuation in dB, or the floor past :data:`ATTENUATION_FLOOR_DB`."""
    if math.isinf(db) or db > ATTENUATION_FLOOR_DB:
        return f"> {ATTENUATION_FLOOR_DB:.0f} dB, at a null"
    return format_db(db)


def format_residue(volts: float) -> str:
    """An rms residue in V, or ``below 1.00 fV``."""
    if volts < RESIDUE_FLOOR_V:
        return f"below {format_si(RESIDUE_FLOOR_V, 'V')}"
    return format_si(volts, "V") + " rms"


def residue_summary(r: Residue) -> str:
    """One sentence: what is left, against what, and whether it fits."""
    verdict = "within it" if r.within_allowance else "EXCEEDS it"
    return (
        f"{format_residue(r.residue_v)} at the sensor; allowed {format_si(r.allowed_v, 'V')} "
        f"rms ({r.allowed_reason}): {verdict}"
    )


def interference_lines(residues: tuple[Residue, ...]) -> list[str]:
    """The text section: each interferer, each of its tones, where it lands, its residue."""
    if not residues:
        return []
    lines = ["Stated interferers (interference, not noise; residues referred to the sensor)"]
    for r in residues:
        lines.append(f"  {r.item}  {r.name} ({r.kind}): {residue_summary(r)}")
        if r.kind == "broadband":
            lines.append(f"      folded through the analog and digital responses; {r.lands}")
        for c in r.components:
            where = (
                f"{format_si(c.nominal_hz, 'Hz')}"
                if c.frequency_hz == c.nominal_hz
                else f"{format_si(c.nominal_hz, 'Hz')} (worst at {format_si(c.frequency_hz, 'Hz')})"
            )
            lines.append(
                f"      {format_si(c.amplitude_v, 'V')} rms at {where} lands at "
                f"{format_si(c.alias_hz, 'Hz')}; attenuation {format_attenuation(c.analog_db)} "
                f"analog + {format_attenuation(c.digital_db)} digital; left "
                f"{format_residue(c.residue_v)}"
            )
    return lines


def _seconds(value: float | None) -> str:
    return "not known (state digital.band_limit_taps)" if value is None else format_si(value, "s")


def passband_timing_lines(judged) -> list[str]:
    """Pass-band droop and the digital path's settling, latency and per-channel rate."""
    lines: list[str] = []
    req_flat = None
    d, t = judged.droop, judged.timing
    if d is None and t is None:
        return lines
    lines.append("Pass band and timing")
    if d is not None:
        req_flat = f"{d.total_db:+.3f} dB"
        lines.append(
            f"  gain at the band top {format_si(d.frequency_hz, 'Hz')}: {req_flat} "
            f"({d.analog_db:+.3f} dB analog, {d.digital_db:+.3f} dB digital, relative to DC)"
        )
    else:
        lines.append("  gain at the band top: no band top stated (requirement.f_high)")
    if t is not None:
        steps = (
            "; ".join(f"{s.name}: {_seconds(s.settling_s)} ({s.rule})" for s in t.stages)
            or "no digital filtering"
        )
        lines.append(f"  settling after a step or a channel switch: {_seconds(t.settling_s)}")
        lines.append(f"      {steps}")
        lines.append(f"  latency (conversion and group delay): {_seconds(t.latency_s)}")
        per = "not known" if t.channel_rate_hz is None else format_si(t.channel_rate_hz, "Hz")
        lines.append(
            f"  output rate {format_si(t.output_rate_hz, 'Hz')}; {t.channels} channel"
            f"{'s' if t.channels > 1 else ''}: {per} of settled results per channel"
        )
    return lines
