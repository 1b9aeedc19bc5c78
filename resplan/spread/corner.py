"""The worst-case corner: every spread at its adverse end, in one forward budget.

Each spread figure has two ends (:attr:`resplan.chain.tolerance.Spread.ends`: a
normal spread's ±3σ, cut at zero; a uniform spread's bounds; a temperature
range's coldest and hottest). The adverse end is found, not guessed: the exact
budget is evaluated with the figure at each end, the others typical, and the end
that leaves less margin is kept (a figure the budget gets worse with at both
ends, such as a gain that overloads when high and lets later noise in when low,
is judged by its verdict first, then by its noise). With every figure at its
adverse end, one forward budget and its verdict give the corner. Sources still
add in power within one board.

Taking each figure's adverse end separately is exact when each figure moves
the budget one way across its spread (monotone), which holds for every density,
resistance, temperature and gain of a noise budget; a figure with a minimum
inside its spread would need a search.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..chain.budget import Budget
from ..chain.design import Design
from ..chain.tolerance import Spread
from ..chain.verdict import Verdict, judge_design
from .model import exact_budget

__all__ = ["Corner", "worst_case", "adverse_end"]


@dataclass(frozen=True)
class Corner:
    """The worst-case corner of a design.

    Attributes
    ----------
    values : dict
        Each spread figure at its adverse end, SI.
    ends : dict
        ``"low"`` or ``"high"`` for each figure.
    budget : Budget
        The forward budget at the corner.
    verdict : Verdict
        Its verdict.
    design : Design
        The design rebuilt at the corner.
    spreads : tuple of Spread
    """

    values: dict[str, float]
    ends: dict[str, str]
    budget: Budget
    verdict: Verdict
    design: Design
    spreads: tuple[Spread, ...]

    def to_records(self) -> list[dict]:
        """One flat row per spread figure (field, end, value_si); see :mod:`.tables`."""
        from .tables import corner_records

        return corner_records(self)

    def _repr_html_(self) -> str:
        from .tables import corner_html

        return corner_html(self)

    def to_dict(self) -> dict:
        return {
            "corner": "worst case: every spread at its adverse end",
            "values_si": dict(self.values),
            "ends": dict(self.ends),
            "readings": {s.field: s.describe() for s in self.spreads},
        }


def _score(design: Design, budget: Budget) -> tuple[int, float]:
    """Larger is worse: (verdict items failing, log of noise against its limit)."""
    verdict = judge_design(design, budget)
    limit = budget.allowed_rms_v or budget.span_v
    noise = math.log(budget.total_rms_v / limit) if budget.total_rms_v > 0 and limit else 0.0
    return (len(verdict.failures), noise)


def _end_values(s: Spread) -> tuple[float, float]:
    low, high = s.ends
    if s.typical > 0:
        low = max(low, 0.0)
    return low, high


def adverse_end(design: Design, spread: Spread) -> tuple[str, float]:
    """The end of ``spread`` that leaves the design less margin: ("low"|"high", SI value)."""
    low, high = _end_values(spread)
    scores = []
    for value in (low, high):
        variant = design.variant({spread.field: value})
        scores.append(_score(variant, exact_budget(variant)))
    return ("high", high) if scores[1] >= scores[0] else ("low", low)


def worst_case(design: Design) -> Corner:
    """Every spread of ``design`` at its adverse end, in one forward budget.

    Figures with only a temperature coefficient follow the temperature's end.

    Examples
    --------
    >>> from resplan.designfile.examples import load_example
    >>> corner = worst_case(load_example("hive-spread"))
    >>> corner.ends["adc.noise_table[2][1]"], corner.ends["requirement.temperature"]
    ('high', 'high')
    """
    spreads = tuple(s for s in design.spreads if s.varies)
    values: dict[str, float] = {}
    ends: dict[str, str] = {}
    for s in spreads:
        end, value = adverse_end(design, s)
        values[s.field] = value
        ends[s.field] = end
    corner = design.variant(values) if values else design
    budget = exact_budget(corner)
    return Corner(values, ends, budget, judge_design(corner, budget), corner, spreads)
