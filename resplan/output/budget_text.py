"""The forward budget as text and as plain data: what ``resplan check`` prints.

:func:`format_budget` writes the aligned table (contributors sorted by share,
totals, resolution over the sensor span and over the ADC range, the
requirement, margin and verdict), with a unit on every number and the
conditions the numbers hold at: coverage and its k_pp, band, temperature,
output data rate, reference. :func:`check_data` gives the same as plain data
with stable keys for ``--json``; :func:`json_safe` turns inf and NaN into null with a reason, values
JSON can hold.

Examples
--------
>>> from resplan.designfile.examples import load_example
>>> from resplan.designfile.load import check_design
>>> design = load_example("hive-scale")
>>> verdict(check_design(design)).startswith("MEETS")
True
"""

from __future__ import annotations

import math
from typing import Any

from ..chain.budget import Budget
from ..chain.design import Design
from ..chain.tables import resolution_rows
from ..chain.verdict import Verdict, judge_design
from ..units.formatting import (
    ascii_units,
    format_bits,
    format_counts,
    format_db,
    format_in_unit,
    format_percent,
    format_si,
    format_temperature,
)
from .interference_text import interference_lines, passband_timing_lines

__all__ = [
    "format_budget",
    "verdict",
    "failure_lines",
    "check_data",
    "json_safe",
    "engineering_figures",
]


def _v(value: float | None, unit: str = "V") -> str:
    return "n/a" if value is None else format_si(value, unit)


def _hz(value: float | None) -> str:
    return "n/a" if value is None else format_si(value, "Hz")


def _margin(bits: float | None) -> str:
    if bits is None or math.isnan(bits):
        return "n/a"
    if math.isinf(bits):
        return "∞ bits" if bits > 0 else "-∞ bits"
    return f"{bits:+.2f} bits"


def verdict(budget: Budget, judged: Verdict | None = None) -> str:
    """The one-line verdict: MEETS … with N bits to spare / DOES NOT MEET …, N items fail.

    Parameters
    ----------
    budget : Budget
    judged : Verdict, optional
        The design's verdict (:func:`resplan.chain.verdict.judge_design`); without it
        the budget alone is judged (noise and the ADC range).

    Examples
    --------
    >>> from resplan.chain.verdict import Failure, Verdict
    >>> class B:  # a stand-in with the fields the line reads
    ...     requirement, margin_bits = object(), 1.584
    >>> verdict(B(), Verdict((), ("noise",)))
    'MEETS the requirement with 1.58 bits to spare'
    >>> verdict(B(), Verdict((Failure("interferer[0]", 2e-3, 1e-6, "V", "..."),), ()))
    'DOES NOT MEET the requirement: 1 item fails (interferer[0])'
    """
    if budget.requirement is None:
        return "NO REQUIREMENT given: nothing to judge"
    if judged is None:
        from ..chain.verdict import judge

        judged = judge(budget)
    if judged.meets:
        margin = budget.margin_bits
        spare = "∞ bits" if math.isinf(margin) else f"{margin:.2f} bits"
        return f"MEETS the requirement with {spare} to spare"
    n = len(judged.failures)
    if judged.failed_items == ("noise",):
        margin = budget.margin_bits
        if math.isinf(margin):
            return (
                "DOES NOT MEET the requirement: the interference allowance alone uses up the budget"
            )
        return f"DOES NOT MEET the requirement: short by {-margin:.2f} bits"
    items = ", ".join(judged.failed_items)
    return f"DOES NOT MEET the requirement: {n} item{'s fail' if n > 1 else ' fails'} ({items})"


def failure_lines(judged: Verdict) -> list[str]:
    """One line per failure: the item, then its message."""
    return [f"  - {f.item}: {f.message}" for f in judged.failures]


def engineering_figures(budget: Budget) -> dict[str, Any] | None:
    """Noise in the requirement's engineering unit, when it was stated in one.

    Returns
    -------
    dict or None
        ``unit``, ``noise_rms`` (total rms), ``noise_free_resolution`` (k_pp·σ, the
        smallest step resolved noise-free) and ``required_resolution``, all in ``unit``.
    """
    req = budget.requirement
    if req is None or not req.engineering_unit or not req.engineering_per_volt:
        return None
    per_volt = req.engineering_per_volt
    return {
        "unit": req.engineering_unit,
        "noise_rms": budget.total_rms_v * per_volt,
        "noise_free_resolution": budget.k_pp * budget.total_rms_v * per_volt,
        "required_resolution": req.span_v * per_volt / req.noise_free_counts
        if req.noise_free_counts
        else None,
    }


def _eng(value: float | None, unit: str) -> str:
    return "n/a" if value is None else format_in_unit(value, unit)


def _table(rows: list[list[str]], right: set[int], indent: str = "  ") -> list[str]:
    widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
    out = []
    for r in rows:
        cells = [
            c.rjust(w) if i in right else c.ljust(w)
            for i, (c, w) in enumerate(zip(r, widths, strict=True))
        ]
        out.append((indent + "  ".join(cells)).rstrip())
    return out


def format_budget(
    budget: Budget,
    design: Design | None = None,
    *,
    ascii_only: bool = False,
    judged: Verdict | None = None,
) -> str:
    """The budget as an aligned text report, ending with the verdict line.

    Parameters
    ----------
    budget : Budget
        From :func:`resplan.chain.budget.forward_budget` (or
        :func:`resplan.designfile.load.check_design`).
    design : Design, optional
        Adds the title, file, digest and the notes made while loading.
    ascii_only : bool
        Write µ, Ω, √Hz, ° … in ASCII (``u``, ``ohm``, ``rtHz``, ``deg``).
    judged : Verdict, optional
        The verdict to print; judged from the design (or the budget alone) when omitted.
    """
    if judged is None:
        judged = _judge(budget, design)
    lines: list[str] = []
    req = budget.requirement
    if design is not None:
        title = design.meta.title
        rev = f", revision {design.meta.revision}" if design.meta.revision else ""
        lines.append(f"{title}{rev}")
        digest = f" (sha256 {design.sha256[:12]}…)" if design.sha256 else ""
        lines.append(f"design: {design.source}{digest}")
        lines.append("")

    lines.append("Conditions")
    band_top = _hz(budget.f_high_hz) if budget.f_high_hz is not None else "not stated"
    cond = [
        [
            "coverage",
            f"{format_percent(budget.coverage, 4)} (k_pp = {budget.k_pp:.2f}: "
            f"peak-to-peak = {budget.k_pp:.2f} × rms)",
        ],
        ["band", f"f_low {_hz(budget.f_low_hz)} (bounds 1/f noise), signal band top {band_top}"],
        ["output data rate", _hz(budget.output_rate_hz)],
        [
            "temperature",
            format_temperature(budget.temperature_k)
            + (
                ""
                if budget.sensor_temperature_k == budget.temperature_k
                else f"; sensor {format_temperature(budget.sensor_temperature_k)}"
            ),
        ],
        ["reference", budget.reference_note],
    ]
    lines += _table(cond, set())
    lines.append("")

    lines.append("Noise contributors (referred to the sensor, sorted by share)")
    rows = [["contributor", "stage", "kind", "at sensor", "at ADC input", "share"]]
    for c in budget.contributions:
        rows.append(
            [
                c.name,
                c.stage,
                c.kind,
                format_si(c.rms_v, budget.sensor_unit) + " rms",
                format_si(c.adc_rms_v, "V") + " rms",
                format_percent(c.share),
            ]
        )
    rows.append(
        [
            "total",
            "",
            "",
            format_si(budget.total_rms_v, budget.sensor_unit) + " rms",
            format_si(budget.total_adc_rms_v, "V") + " rms",
            format_percent(1.0),
        ]
    )
    table = _table(rows, {3, 4, 5})
    rule = "  " + "-" * (len(table[0]) - 2)
    lines += [table[0], rule, *table[1:-1], rule, table[-1]]
    lines.append(f"  gain from sensor to ADC input: {format_si(budget.gain, budget.gain_unit)}")
    lines.append("")

    lines.append("Resolution")
    res = resolution_rows(budget, name_db=True)
    lines += _table(res, set())
    lines.append(f"  ADC range used by the sensor span: {format_percent(budget.adc_range_used)}")
    lines.append(
        "  ADC alone (its own noise and quantisation, at its own data rate): "
        f"ENOB {format_bits(budget.adc_enob)}"
    )
    eng = engineering_figures(budget)
    if eng is not None:
        lines.append(
            f"  in {eng['unit']}: noise {_eng(eng['noise_rms'], eng['unit'])} rms, "
            f"noise-free resolution {_eng(eng['noise_free_resolution'], eng['unit'])}"
        )
    lines.append("")

    if req is not None:
        unit = budget.sensor_unit
        lines.append("Requirement")
        want = (
            f"{format_bits(req.required_noise_free_bits)} noise-free "
            f"({format_counts(req.noise_free_counts)} counts)"
            if req.noise_free_counts is not None
            else f"{format_db(req.dynamic_range_db)} dynamic range"
        )
        allowed = [
            ["stated as", req.description or "(no description)"],
            ["needs", want],
            ["allowed total", f"{_v(req.allowed_total_rms_v, unit)} rms at the sensor"],
        ]
        if req.interference_rms_v:
            allowed.append(["interference allowance", f"{_v(req.interference_rms_v, unit)} rms"])
            allowed.append(["allowed noise", f"{_v(req.allowed_noise_rms_v, unit)} rms"])
        if eng is not None and eng["required_resolution"] is not None:
            allowed.append(["required step", _eng(eng["required_resolution"], eng["unit"])])
        allowed.append(
            ["margin", _margin(budget.margin_bits) + " (log2 of allowed noise over total noise)"]
        )
        lines += _table(allowed, set())
        lines.append("")

    if judged.interference:
        lines += interference_lines(judged.interference)
        lines.append("")
    timing = passband_timing_lines(judged)
    if timing:
        lines += timing
        lines.append("")

    dominant = ", ".join(f"{c.name} ({c.stage})" for c in budget.dominant)
    if dominant:
        lines.append(f"Dominant: {dominant}")
    if design is not None and design.notes:
        lines.append("Notes from the design file:")
        lines += [f"  - {n}" for n in design.notes]
    if budget.warnings:
        lines.append("Warnings:")
        lines += [f"  - {w}" for w in budget.warnings]
    lines.append("")
    if judged.failures:
        lines.append("Failures:")
        lines += failure_lines(judged)
    lines.append(verdict(budget, judged))
    text = "\n".join(lines)
    return ascii_units(text) if ascii_only else text


#: Why a figure is written as null, by the kind of value it was.
_NULL_REASONS = {
    "inf": "unbounded: the figure is infinite (for example nothing left to divide by)",
    "-inf": "unbounded below: the figure is minus infinity (for example no room left for noise)",
    "nan": "undefined: the figure has no value here",
}


def _non_finite(value: Any) -> str | None:
    if isinstance(value, float) and not math.isfinite(value):
        return "nan" if math.isnan(value) else ("inf" if value > 0 else "-inf")
    return None


def json_safe(value: Any) -> Any:
    """Only finite numbers: inf and NaN become null, with the reason beside them, recursively.

    In a table, each such key is null and ``null_reasons`` (a table of its own in
    the same place) says why, so that every number a JSON reader sees is finite
    (RFC 8259 has no inf or NaN) and no null goes unexplained.

    Examples
    --------
    >>> safe = json_safe({"a": float("inf"), "b": [float("nan"), 1.0]})
    >>> safe["a"], safe["b"], safe["null_reasons"]["a"][:30]
    (None, [None, 1.0], 'unbounded: the figure is infin')
    """
    if isinstance(value, float):
        return None if _non_finite(value) else value
    if isinstance(value, dict):
        out = {str(k): json_safe(v) for k, v in value.items()}
        reasons = {
            str(k): _NULL_REASONS[kind] for k, v in value.items() if (kind := _non_finite(v))
        }
        if reasons:
            out["null_reasons"] = {**out.get("null_reasons", {}), **reasons}
        return out
    if isinstance(value, list | tuple):
        return [json_safe(v) for v in value]
    return value


def interferer_check(budget: Budget, design: Design | None):
    """The design's stated interferer through its chain, or None when none is stated."""
    if design is None or design.alias_interferer is None or budget.requirement is None:
        return None
    from ..chain.alias import check_interferer

    frequency, amplitude = design.alias_interferer
    return check_interferer(design.chain(), frequency, amplitude, budget.requirement)


def _judge(budget: Budget, design: Design | None) -> Verdict:
    from ..chain.verdict import judge

    if design is not None and design.is_complete:
        return judge_design(design, budget)
    return judge(budget)


def check_data(
    budget: Budget, design: Design | None = None, judged: Verdict | None = None
) -> dict[str, Any]:
    """What ``resplan check --json`` prints: the budget's data plus the design's identity.

    Keys are those of :meth:`resplan.chain.budget.Budget.to_dict` (SI values, the key
    names the unit) plus ``verdict``, ``failures`` (``[{item, value, limit, unit,
    message}]``, SI values), ``checked`` (every item judged), ``meets_requirement``
    (true only when ``failures`` is empty), ``engineering`` (or None), ``interferer``
    (the older single stated tone through the chain, or None), ``interferers`` (every
    stated interferer through the whole chain: residue, allowance, where it lands, each
    tone), ``passband`` (gain at the band top, dB: ``analog_db``, ``digital_db``,
    ``total_db``), ``timing`` (``settling_s``, ``latency_s``, ``channels``,
    ``channel_rate_hz`` and each stage), and ``design``
    (``source``, ``sha256``, ``meta``, ``notes``). Values are JSON-safe (see :func:`json_safe`).
    """
    if judged is None:
        judged = _judge(budget, design)
    data = budget.to_dict()
    data["verdict"] = verdict(budget, judged)
    if budget.requirement is not None:
        data["meets_requirement"] = judged.meets
    data["failures"] = [f.to_dict() for f in judged.failures]
    data["interferers"] = [r.to_dict() for r in judged.interference]
    data["passband"] = None if judged.droop is None else judged.droop.to_dict()
    data["timing"] = None if judged.timing is None else judged.timing.to_dict()
    data["checked"] = list(judged.checked)
    data["engineering"] = engineering_figures(budget)
    alias = interferer_check(budget, design)
    data["interferer"] = None if alias is None else alias.to_dict()
    if design is not None:
        m = design.meta
        data["design"] = {
            "source": design.source,
            "sha256": design.sha256,
            "meta": {
                "title": m.title,
                "project": m.project,
                "revision": m.revision,
                "author": m.author,
                "date": m.date,
            },
            "notes": list(design.notes),
        }
    else:
        data["design"] = None
    return json_safe(data)
