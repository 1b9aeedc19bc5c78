"""Budgets as rows and as HTML tables, for scripts and notebooks.

:func:`budget_records` gives one flat row (a dict of plain values, SI, the key
naming the unit) per contribution, ready for ``pandas.DataFrame(rows)`` or
:class:`csv.DictWriter` — pandas is not needed. :func:`budget_html` is what a
:class:`~resplan.chain.budget.Budget` shows in Jupyter: its conditions, the
contributions table with every id, the resolution figures and the verdict.
:func:`html_table` is the one table writer (every cell escaped), shared by the
plan's display.

Numbers for people go through :mod:`resplan.units.formatting`.

Examples
--------
>>> markup = html_table(["a", "b"], [["<1>", "2 & 3"]])
>>> markup[markup.index("<tbody>"):]
'<tbody><tr><td>&lt;1&gt;</td><td>2 &amp; 3</td></tr></tbody></table>'
"""

from __future__ import annotations

import html
import math
from collections.abc import Iterable, Sequence
from typing import TYPE_CHECKING, Any

from ..units.formatting import (
    format_bits,
    format_counts,
    format_db,
    format_number,
    format_percent,
    format_si,
    format_temperature,
)

if TYPE_CHECKING:  # pragma: no cover
    from .budget import Budget
    from .verdict import Verdict

__all__ = [
    "resolution_rows",
    "RECORD_FIELDS",
    "budget_records",
    "budget_html",
    "html_table",
    "verdict_html",
    "write_records_csv",
]

#: The keys of each row :func:`budget_records` gives, in order.
RECORD_FIELDS = (
    "id",
    "name",
    "stage",
    "kind",
    "rms_v",
    "adc_rms_v",
    "share",
    "density_v_per_rthz",
    "corner_hz",
    "noise_bandwidth_hz",
    "note",
)


def budget_records(budget: Budget) -> list[dict[str, Any]]:
    """One flat row per contribution, largest first (keys :data:`RECORD_FIELDS`, SI values).

    Examples
    --------
    >>> from resplan.designfile.examples import load_example
    >>> from resplan.designfile.load import check_design
    >>> rows = budget_records(check_design(load_example("hive-scale")))
    >>> sorted(rows[0]) == sorted(RECORD_FIELDS)
    True
    """
    return [{key: getattr(c, key) for key in RECORD_FIELDS} for c in budget.contributions]


def write_records_csv(rows: Sequence[dict[str, Any]], stream) -> None:
    """Write rows (from any ``to_records()``) as CSV to an open text stream."""
    import csv

    if not rows:
        return
    writer = csv.DictWriter(stream, fieldnames=list(rows[0]))
    writer.writeheader()
    writer.writerows(rows)


def _cell(value: Any) -> str:
    return html.escape("" if value is None else str(value))


def html_table(
    headers: Sequence[str],
    rows: Iterable[Sequence[Any]],
    *,
    right: Iterable[int] = (),
    caption: str | None = None,
    total_row: Sequence[Any] | None = None,
) -> str:
    """An HTML table with every header and cell escaped.

    Parameters
    ----------
    headers : sequence of str
    rows : iterable of sequences
        Cell values (``str()`` of each, escaped; None is blank).
    right : iterable of int
        Columns to align right (numbers).
    caption : str, optional
    total_row : sequence, optional
        A last row set apart (bold), such as a total.
    """
    align = set(right)

    def row(cells: Sequence[Any], tag: str, bold: bool = False) -> str:
        out = []
        for i, v in enumerate(cells):
            style = ' style="text-align:right"' if i in align and tag == "td" else ""
            text = _cell(v)
            out.append(f"<{tag}{style}>{'<b>' + text + '</b>' if bold else text}</{tag}>")
        return "<tr>" + "".join(out) + "</tr>"

    parts = ['<table class="resplan">']
    if caption:
        parts.append(f"<caption>{_cell(caption)}</caption>")
    parts.append("<thead>" + row(headers, "th") + "</thead><tbody>")
    parts.extend(row(r, "td") for r in rows)
    if total_row is not None:
        parts.append(row(total_row, "td", bold=True))
    parts.append("</tbody></table>")
    return "".join(parts)


def _hz(value: float | None) -> str:
    return "not stated" if value is None else format_si(value, "Hz")


def _margin(bits: float | None) -> str:
    if bits is None or math.isnan(bits):
        return "n/a"
    if math.isinf(bits):
        return "∞ bits" if bits > 0 else "−∞ bits"
    return f"{bits:+.2f} bits"


def verdict_html(budget: Budget, judged: Verdict) -> str:
    """The verdict as an HTML paragraph and, when anything fails, one item per failure."""
    if budget.requirement is None:
        return "<p><b>NO REQUIREMENT given:</b> nothing to judge.</p>"
    if judged.meets:
        checked = _cell(", ".join(judged.checked))
        return (
            "<p><b>MEETS the requirement</b>, margin "
            f"{_cell(_margin(budget.margin_bits))} (checked: {checked}).</p>"
        )
    items = "".join(
        f"<li><code>{_cell(f.item)}</code>: {_cell(f.message)}</li>" for f in judged.failures
    )
    n = len(judged.failures)
    return (
        f"<p><b>DOES NOT MEET the requirement</b>: {n} item{'s' if n != 1 else ''} "
        f"fail{'s' if n == 1 else ''}.</p><ul>{items}</ul>"
    )


def resolution_rows(budget: Budget, name_db: bool = False) -> list[list[str]]:
    """The resolution table of a budget: a header row, then one row per figure.

    Columns: the figure, over the sensor span, over the ADC range. With ``name_db``
    the last row says which dB figure each column holds (dynamic range, SNR).
    """
    span_db, adc_db = format_db(budget.dynamic_range_db), format_db(budget.snr_db)
    if name_db:
        span_db, adc_db = f"{span_db} (dynamic range)", f"{adc_db} (SNR)"
    return [
        [
            "",
            f"over the sensor span ({format_si(budget.span_v, budget.sensor_unit)})",
            f"over the ADC range ({format_si(budget.adc_full_scale_v, 'V')})",
        ],
        [
            "effective resolution",
            format_bits(budget.effective_bits),
            format_bits(budget.effective_bits_adc_range),
        ],
        [
            "noise-free resolution",
            format_bits(budget.noise_free_bits),
            format_bits(budget.noise_free_bits_adc_range),
        ],
        [
            "noise-free counts",
            format_counts(budget.noise_free_counts),
            format_counts(budget.noise_free_counts_adc_range),
        ],
        ["dynamic range / SNR", span_db, adc_db],
    ]


def budget_html(budget: Budget, judged: Verdict | None = None) -> str:
    """The budget as HTML: conditions, contributions (with ids), resolution, verdict.

    Parameters
    ----------
    budget : Budget
    judged : Verdict, optional
        The verdict to show; the budget alone is judged (noise and the ADC range)
        when omitted.
    """
    if judged is None:
        from .verdict import judge

        judged = judge(budget)
    temp = format_temperature(budget.temperature_k)
    if budget.sensor_temperature_k != budget.temperature_k:
        temp += f"; sensor {format_temperature(budget.sensor_temperature_k)}"
    conditions = (
        f"coverage {format_percent(budget.coverage, 4)} (k_pp = {format_number(budget.k_pp)}); "
        f"band f_low {_hz(budget.f_low_hz)}, top {_hz(budget.f_high_hz)}; output data rate "
        f"{_hz(budget.output_rate_hz)}; temperature {temp}; reference: {budget.reference_note}"
    )
    contributions = html_table(
        ["id", "contributor", "stage", "kind", "at sensor (rms)", "at ADC input (rms)", "share"],
        (
            [
                c.id,
                c.name,
                c.stage,
                c.kind,
                format_si(c.rms_v, "V"),
                format_si(c.adc_rms_v, "V"),
                format_percent(c.share),
            ]
            for c in budget.contributions
        ),
        right=(4, 5, 6),
        caption="Noise contributions, referred to the sensor (RTI), largest first",
        total_row=[
            "total",
            "root sum of squares",
            "",
            "",
            format_si(budget.total_rms_v, "V"),
            format_si(budget.total_adc_rms_v, "V"),
            format_percent(1.0),
        ],
    )
    resolution = html_table(
        resolution_rows(budget)[0],
        resolution_rows(budget)[1:],
        right=(1, 2),
        caption=f"Resolution; ADC range used {format_percent(budget.adc_range_used)}",
    )
    warnings = "".join(f"<li>{_cell(w)}</li>" for w in budget.warnings)
    return (
        '<div class="resplan-budget">'
        f"<p><small>{_cell(conditions)}</small></p>"
        f"{contributions}{resolution}"
        + (f"<p>Warnings:</p><ul>{warnings}</ul>" if warnings else "")
        + verdict_html(budget, judged)
        + "</div>"
    )
