"""The verdict's failures written for people: figure and limit with their units.

Text, the report's summary and any other output format the same
:class:`resplan.chain.verdict.Failure` records the same way.

Examples
--------
>>> format_figure(2.39e-3, "V")
'2.39 mV rms'
>>> format_figure(0.977, "")
'97.7 %'
>>> format_figure(float("nan"), "s")
'not known'
"""

from __future__ import annotations

import math

from ..chain.verdict import Failure, Verdict
from ..units.formatting import format_db, format_percent, format_si

__all__ = ["format_figure", "failure_rows", "verdict_sentence"]


def format_figure(value: float, unit: str) -> str:
    """A failure's value or limit: V (or A) as rms, dB, a fraction as a percentage, else SI."""
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return "not known"
    if unit in ("V", "A"):
        return format_si(value, unit) + " rms"
    if unit == "dB":
        return format_db(value)
    if unit == "":
        return format_percent(value)
    return format_si(value, unit)


def failure_rows(failures: tuple[Failure, ...]) -> list[list[str]]:
    """Rows [item, found, limit, what] with a header row."""
    rows = [["item", "found", "limit", "what fails"]]
    for f in failures:
        rows.append(
            [f.item, format_figure(f.value, f.unit), format_figure(f.limit, f.unit), f.message]
        )
    return rows


def verdict_sentence(judged: Verdict, margin_bits: float | None) -> str:
    """One sentence for a report's headline."""
    if judged.meets:
        spare = "n/a" if margin_bits is None else f"{margin_bits:+.2f} bits"
        return f"Meets the requirement: every checked item passes; noise margin {spare}."
    n = len(judged.failures)
    items = ", ".join(judged.failed_items)
    return f"Does not meet the requirement: {n} item{'s fail' if n > 1 else ' fails'} ({items})."
