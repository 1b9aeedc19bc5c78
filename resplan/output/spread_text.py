"""Spread results as text and plain data: yield runs, the worst-case corner, what to improve.

Every block says which figures it uses: typical (plain values), the worst-case
corner, or sampled spreads, with the reading of each spread.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from ..units.formatting import (
    ascii_units,
    format_bits,
    format_number,
    format_percent,
    format_si,
    format_temperature,
)

if TYPE_CHECKING:  # pragma: no cover
    from ..chain.design import Design
    from ..spread.corner import Corner
    from ..spread.improve import Improvement
    from ..spread.trials import TrialResult

__all__ = [
    "figures_line",
    "format_improvements",
    "improvements_data",
    "format_corner",
    "format_trials",
    "trials_data",
]


def _value(value: float, unit: str) -> str:
    if unit == "K":
        return format_temperature(value)
    return format_si(value, unit) if unit else format_number(value, digits=4)


def _yield_percent(fraction: float) -> str:
    """A yield or bound with enough digits to tell it from 100 % (99.999631 %)."""
    import math

    if fraction >= 1.0 or fraction < 0.99:
        return format_percent(fraction, 3 if fraction < 0.99 else 4)
    return format_percent(fraction, 2 + math.ceil(-math.log10(1.0 - fraction)))


def figures_line(design: Design, corner: bool = False) -> str:
    """Which figures the budget above used."""
    n = sum(1 for s in design.spreads if s.varies)
    if corner:
        return f"figures: worst-case corner ({n} spreads at their adverse ends; the rest typical)"
    if n:
        return (
            f"figures: typical (plain values and the typical of {n} spreads; "
            "see check --worst-case and resplan yield)"
        )
    return "figures: typical (plain values; no spreads given)"


def format_improvements(items: tuple[Improvement, ...], *, ascii_only: bool = False) -> str:
    """What to improve first, ranked, one line each."""
    lines = ["What to improve first (each figure 10 % better, typical values, bits over the span):"]
    shown = [i for i in items if i.bits_gained is not None]
    if not items:
        lines.append("  no figure the noise depends on was found")
    width = max((len(i.label) for i in shown), default=0)
    for i in shown:
        lines.append(f"  {i.label.ljust(width)}  {i.bits_gained:+.3f} bits")
    for i in items:
        if i.bits_gained is None:
            lines.append(f"  {i.label}: not evaluated ({i.reason})")
    text = "\n".join(lines)
    return ascii_units(text) if ascii_only else text


def improvements_data(items: tuple[Improvement, ...]) -> list[dict[str, Any]]:
    return [i.to_dict() for i in items]


def format_corner(corner: Corner, *, ascii_only: bool = False) -> str:
    """The corner's figures, one line each (printed above its budget)."""
    lines = ["Worst-case corner: every spread at its adverse end"]
    units = {s.field: s.unit for s in corner.spreads}
    for s in corner.spreads:
        v = corner.values[s.field]
        lines.append(
            f"  {s.field} = {_value(v, units[s.field])} ({corner.ends[s.field]} end; "
            f"{s.describe()})"
        )
    if not corner.spreads:
        lines.append("  no spreads given: the corner is the typical design")
    text = "\n".join(lines)
    return ascii_units(text) if ascii_only else text


def format_trials(result: TrialResult, design: Design, *, ascii_only: bool = False) -> str:
    """A Monte Carlo run as an aligned text report, ending with its verdict line."""
    lo, hi = result.interval
    units = {s.field: s.unit for s in design.spreads}
    lines = [
        f"Monte Carlo yield: {design.meta.title}",
        f"  {result.trials:,} trials, seed {result.seed}; coverage "
        f"{format_percent(result.coverage)} for noise-free figures",
        "",
        "Spreads sampled (independent from part to part):",
    ]
    for s in design.spreads:
        if s.varies:
            lines.append(f"  {s.field}: {s.text} → {s.describe()}")
    if not any(s.varies for s in design.spreads):
        lines.append("  none: every trial is the typical design")
    lines += [
        "",
        f"Yield: {_yield_percent(result.yield_fraction)} of boards meet every verdict item "
        f"({result.met:,} of {result.trials:,})",
        f"  95 % interval (Clopper–Pearson exact): {_yield_percent(lo)} … {_yield_percent(hi)}",
    ]
    if result.fixed_failures:
        lines.append(
            "  failing at the typical figures whatever the spreads: "
            + ", ".join(result.fixed_failures)
        )
    lines += ["", "Percentiles          noise at sensor   noise-free bits"]
    for q in result.noise_percentiles_v:
        lines.append(
            f"  {q:>3d} %             {format_si(result.noise_percentiles_v[q], 'V'):>12} rms"
            f"   {format_bits(result.bits_percentiles[q]):>10}"
        )
    lines.append(
        f"  typical           {format_si(result.typical_noise_v, 'V'):>12} rms"
        f"   {format_bits(result.typical_bits):>10}"
    )
    if result.required_bits is not None:
        lines.append(
            f"  required                              {format_bits(result.required_bits):>10}"
        )
    lines += ["", "Drivers (share of the variance of total noise power, first order):"]
    for d in result.drivers:
        lines.append(f"  {d.field:<28} {d.share * 100:6.2f} %")
    if not result.drivers:
        lines.append("  none")
    lines += ["", "Worst trial found:"]
    for field, v in result.worst.items():
        lines.append(f"  {field} = {_value(v, units.get(field, ''))}")
    lines.append(
        f"  noise {format_si(result.worst_noise_v, 'V')} rms, {format_bits(result.worst_bits)} "
        f"noise-free, {'meets' if result.worst_meets else 'does not meet'}"
    )
    how = (
        (
            "every trial solved exactly: its front end batched as the forward budget solves "
            f"it ({result.checks} trials held to full budgets within "
            f"{format_percent(result.deviation)}), the rest by the factor model's closed-form laws"
        )
        if result.batched
        else "every trial solved with a full budget"
        if result.exact
        else (
            f"factor model; {result.checks} trials solved exactly differ from it by at most "
            f"{format_percent(result.deviation)} in total noise"
        )
    )
    lines += ["", f"Method: {how}; {result.seconds:.2f} s."]
    req = result.required_yield
    if req is None:
        lines.append('VERDICT: no yield requirement stated (set requirement.yield, such as "99 %")')
    elif result.meets:
        lines.append(
            f"VERDICT: MEETS the yield requirement: lower bound {_yield_percent(lo)} ≥ "
            f"{format_percent(req)}"
        )
    else:
        lines.append(
            f"VERDICT: DOES NOT MEET the yield requirement: lower bound {_yield_percent(lo)} < "
            f"{format_percent(req)}"
        )
    lines.append(
        "Estimates from the stated spreads; verify on the bench, over temperature, with the real "
        "layout. Sensors on mains or high voltage: follow local codes and licensed practice."
    )
    text = "\n".join(lines)
    return ascii_units(text) if ascii_only else text


def trials_data(result: TrialResult, design: Design) -> dict[str, Any]:
    """Plain data of a run (SI; the key names the unit)."""
    data = result.to_dict()
    data["design"] = {"title": design.meta.title, "source": design.source, "sha256": design.sha256}
    data["spreads"] = [
        {
            "field": s.field,
            "as_written": s.text,
            "distribution": s.distribution,
            "typical_si": s.typical,
            "sigma_si": s.sigma,
            "low_si": s.low,
            "high_si": s.high,
            "unit": s.unit,
            "tempco_per_k": s.tempco_per_k,
            "reading": s.describe(),
        }
        for s in design.spreads
    ]
    return data
