"""Spread results as rows and as HTML tables, for scripts and notebooks.

:func:`trial_records` gives one flat row per figure that drives the spread
(its share of the variance of the total noise power), ready for
``pandas.DataFrame(rows)`` or CSV; :func:`trial_html` is what a
:class:`~resplan.spread.trials.TrialResult` shows in Jupyter: the yield and its
interval against the required yield, the noise and noise-free-bit
percentiles, the drivers. :func:`corner_records` and :func:`corner_html` do the
same for the worst-case corner (its figures, then its budget's table and verdict).
"""

from __future__ import annotations

import html
from typing import TYPE_CHECKING, Any

from ..chain.tables import budget_html, html_table
from ..units.formatting import format_bits, format_number, format_percent, format_si

if TYPE_CHECKING:  # pragma: no cover
    from .corner import Corner
    from .trials import TrialResult

__all__ = ["trial_records", "trial_html", "corner_records", "corner_html"]


def trial_records(result: TrialResult) -> list[dict[str, Any]]:
    """One row per driver: ``field``, ``variance_share``, ``reading``."""
    return [
        {"field": d.field, "variance_share": d.share, "reading": d.reading} for d in result.drivers
    ]


def _yield_verdict(result: TrialResult) -> str:
    low, high = result.interval
    text = (
        f"yield {format_percent(result.yield_fraction)} of {result.trials:,} trials "
        f"(95 % interval {format_percent(low)} … {format_percent(high)}, Clopper-Pearson)"
    )
    if result.meets is None:
        return text + "; no required yield stated"
    verdict = "MEETS" if result.meets else "DOES NOT MEET"
    return f"{verdict} the required yield {format_percent(result.required_yield)}: {text}"


def trial_html(result: TrialResult) -> str:
    """A Monte Carlo result as HTML: yield verdict, percentiles, drivers."""
    percentiles = html_table(
        ["percentile", "noise at the sensor (rms)", "noise-free resolution"],
        (
            [f"{p} %", format_si(v, "V"), format_bits(result.bits_percentiles.get(p, float("nan")))]
            for p, v in sorted(result.noise_percentiles_v.items())
        ),
        right=(1, 2),
        caption=f"Spread over the trials (coverage {format_percent(result.coverage, 4)}); "
        f"typical {format_si(result.typical_noise_v, 'V')} rms, "
        f"{format_bits(result.typical_bits)} noise-free",
    )
    drivers = html_table(
        ["figure", "share of the variance", "reading"],
        ([d.field, format_percent(d.share), d.reading] for d in result.drivers),
        right=(1,),
        caption="What drives the spread",
    )
    return (
        '<div class="resplan-spread">'
        f"<p><b>{html.escape(_yield_verdict(result))}</b></p>{percentiles}{drivers}</div>"
    )


def corner_records(corner: Corner) -> list[dict[str, Any]]:
    """One row per spread figure at the corner: ``field``, ``end``, ``value_si``."""
    return [
        {"field": k, "end": corner.ends.get(k, ""), "value_si": v} for k, v in corner.values.items()
    ]


def corner_html(corner: Corner) -> str:
    """The worst-case corner as HTML: each figure's adverse end, then its budget and verdict."""
    figures = html_table(
        ["figure", "end", "value (SI)"],
        ([k, corner.ends.get(k, ""), format_number(v, digits=6)] for k, v in corner.values.items()),
        right=(2,),
        caption="Worst case: every spread at its adverse end",
    )
    return (
        '<div class="resplan-corner">'
        + figures
        + budget_html(corner.budget, corner.verdict)
        + "</div>"
    )
