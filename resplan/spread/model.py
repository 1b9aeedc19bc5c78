"""The budget as a fast function of the spread figures: fixed integrals, varying weights.

Every contribution's power at the sensor is a path integral that the spreads do
not change, times a weight that does: a density enters squared, a 1/f corner
linearly, thermal noise in proportion to the temperature, a gain in front as
1/G². So each output of the budget (each contribution's power, the span, the
gain, the allowed noise, the ADC range) is written

    y(θ) = y(θ₀) · Π_j g_j(θ_j),

one factor per spread figure θ_j. The factors are found, not assumed: the exact
budget (:func:`resplan.chain.budget.forward_budget` on the design rebuilt with one
figure moved) is evaluated at three points of each spread, and each output's
ratio is matched to a power law (θ/θ₀)^a, an affine law 1 + b·(θ − θ₀) or a
quadratic one; an output none of them fits (a filter corner that moves with R or
C) is tabulated at 17 exact budgets across the spread and interpolated. Factors
are exact for the first three; products across figures are exact whenever the
figures act on separate factors of a power, and otherwise (two figures inside
one sum, such as R_source and a series filter resistor) miss a cross term of
second order in the spreads. :func:`build_model` therefore compares the model
with exact budgets at a few random trials and keeps the largest deviation;
``tests/test_spread.py`` holds it to 1e-3 on the percentiles.

Spreads are taken as independent from part to part (a matched pair is not
modelled as such).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field

import numpy as np

from ..chain.budget import Budget, forward_budget
from ..chain.design import Design
from ..chain.tolerance import Spread
from ..errors import DesignError

__all__ = [
    "Law",
    "SpreadModel",
    "build_model",
    "exact_budget",
    "parameters_of",
    "TABLE_POINTS",
    "FIT_TOLERANCE",
]

#: Points of a tabulated factor across its spread.
TABLE_POINTS = 17
#: Relative agreement a closed-form law must reach at its check point.
FIT_TOLERANCE = 1e-9
#: Scalar outputs after the contributions.
SCALARS = ("span_v", "gain", "allowed_rms_v", "adc_full_scale_v")


@dataclass(frozen=True)
class Law:
    """How one output scales with one figure: ratio y(θ)/y(θ₀).

    ``kind`` is ``"power"`` ((θ/θ₀)^a), ``"affine"`` (1 + b(θ − θ₀)),
    ``"quadratic"`` (1 + b(θ − θ₀) + c(θ − θ₀)²), ``"polynomial"`` (fitted to a
    table of exact budgets within 1e-9; coefficients in ``ratio``, scale in ``a``)
    or ``"table"`` (interpolated linearly in ``grid``, held at its ends).
    """

    output: int
    kind: str
    theta0: float
    a: float = 0.0
    b: float = 0.0
    c: float = 0.0
    grid: tuple[float, ...] = ()
    ratio: tuple[float, ...] = ()

    def factor(self, theta: np.ndarray) -> np.ndarray:
        """The ratio at each θ (same shape)."""
        if self.kind == "power":
            x = np.maximum(theta, 0.0) / self.theta0
            if self.a == 2.0:
                return x * x
            if self.a == 1.0:
                return x
            if self.a == -2.0:
                return 1.0 / (x * x)
            return x**self.a
        d = theta - self.theta0
        if self.kind == "affine":
            return 1.0 + self.b * d
        if self.kind == "quadratic":
            return 1.0 + d * (self.b + self.c * d)
        if self.kind == "polynomial":  # Horner in x = (θ − θ₀)/scale, scale in ``a``
            x = d / self.a
            acc = np.full_like(x, self.ratio[-1])
            for coef in self.ratio[-2::-1]:
                acc *= x
                acc += coef
            return acc
        return np.interp(theta, self.grid, self.ratio)


def _table_law(output: int, theta0: float, grid: np.ndarray, ratio: np.ndarray) -> Law:
    """A tabulated ratio as a polynomial when one of degree ≤ 6 fits it to 1e-9, else a table."""
    from numpy.polynomial import polynomial as P

    scale = float(np.max(np.abs(grid - theta0))) or 1.0
    x = (grid - theta0) / scale
    for degree in range(2, 7):
        coef = P.polyfit(x, ratio, degree)
        if np.max(np.abs(P.polyval(x, coef) - ratio)) <= FIT_TOLERANCE * np.max(np.abs(ratio)):
            return Law(output, "polynomial", theta0, a=scale, grid=tuple(grid), ratio=tuple(coef))
    return Law(output, "table", theta0, grid=tuple(grid), ratio=tuple(ratio))


@dataclass(frozen=True)
class SpreadModel:
    """A design's budget as outputs × factors of its spread figures.

    Attributes
    ----------
    design : Design
    parameters : tuple of Spread
        The figures that vary (temperature ranges included), in sampling order.
    keys : tuple of str
        Contribution ids, in output order.
    base : numpy.ndarray
        Outputs at the typical figures: each contribution's power at the sensor
        (V²), then span (V), gain, allowed noise (V rms; NaN without a
        requirement) and ADC range (V).
    laws : tuple of tuple of Law
        For each parameter, the laws of the outputs it moves.
    budget : Budget
        The exact budget at the typical figures.
    fixed_failures : tuple of str
        Verdict items that fail at the typical figures and are not modelled per
        trial (stated interferers, the ADC window edges, pass-band flatness,
        settling, channel rate): every trial fails them. Noise, the share of the
        ADC range used and the headroom are judged per trial.
    deviation : float
        Largest relative deviation of the modelled total noise from exact budgets
        at the check trials.
    checks : int
        How many check trials were solved exactly.
    """

    design: Design
    parameters: tuple[Spread, ...]
    keys: tuple[str, ...]
    base: np.ndarray
    laws: tuple[tuple[Law, ...], ...]
    budget: Budget
    fixed_failures: tuple[str, ...] = ()
    deviation: float = 0.0
    checks: int = 0
    notes: tuple[str, ...] = field(default=())

    @property
    def n_contributions(self) -> int:
        return len(self.keys)

    def outputs(self, theta: np.ndarray, factors: list | None = None) -> np.ndarray:
        """Every output at each trial: ``theta`` (parameters, n) → (outputs, n).

        Rows are trials' columns, contiguous per output. When ``factors`` is a
        list, each parameter's [(output, factor array), ...] is appended to it
        (for the variance shares).
        """
        theta = np.asarray(theta, dtype=float)
        if theta.ndim == 1:
            theta = theta[:, None]
        n = theta.shape[1]
        out = np.empty((self.base.size, n))
        out[:] = self.base[:, None]
        for j, laws in enumerate(self.laws):
            mine = []
            for law in laws:
                f = law.factor(theta[j])
                out[law.output] *= f
                mine.append((law.output, f))
            if factors is not None:
                factors.append(mine)
        return out

    def typical_values(self) -> dict[str, float]:
        return {p.field: p.typical for p in self.parameters}


def parameters_of(design: Design) -> tuple[Spread, ...]:
    """The spread figures a Monte Carlo run samples: those that vary."""
    return tuple(s for s in design.spreads if s.varies)


def exact_budget(design: Design, values: Mapping[str, float] | None = None) -> Budget:
    """The forward budget of ``design`` with some figures set to other SI values."""
    if values:
        if design.variant is None:
            raise DesignError("design", "spreads", "a design read from a design file")
        design = design.variant(values)
    chain = design.chain()
    return forward_budget(chain, design.band, requirement=design.requirement)


def _outputs_of(budget: Budget, keys: tuple[str, ...]) -> np.ndarray:
    power = {c.id: c.rms_v**2 for c in budget.contributions}
    allowed = budget.allowed_rms_v
    return np.array(
        [power.get(k, 0.0) for k in keys]
        + [
            budget.span_v,
            budget.gain,
            math.nan if allowed is None else allowed,
            budget.adc_full_scale_v,
        ]
    )


def _probe_points(p: Spread) -> tuple[float, float, float]:
    """Three points other than the typical at which a figure's laws are found."""
    t0 = p.typical
    hi = p.high if p.high > t0 else t0 + max(abs(t0), 1.0) * 0.1
    lo = p.low if p.low < t0 else t0 - (hi - t0)
    if t0 > 0 and lo <= 0:
        lo = 0.5 * t0
    return hi, lo, 0.5 * (t0 + hi)


def _fit(t0: float, pts: tuple[float, float, float], r: np.ndarray) -> Law | None:
    """A closed-form law through the ratios ``r`` at ``pts``, or None."""
    (t1, t2, t3), (r1, r2, r3) = pts, r

    def close(pred: float, got: float) -> bool:
        return abs(pred - got) <= FIT_TOLERANCE * max(1.0, abs(got))

    if all(close(1.0, x) for x in r):
        return Law(-1, "none", t0)
    if t0 > 0 and min(t1, t2, t3) > 0 and r1 > 0:
        a = math.log(r1) / math.log(t1 / t0)
        if abs(a - round(a * 2) / 2) < 1e-9:
            a = round(a * 2) / 2
        if close((t2 / t0) ** a, r2) and close((t3 / t0) ** a, r3):
            return Law(-1, "power", t0, a=a)
    b = (r1 - 1.0) / (t1 - t0)
    if close(1 + b * (t2 - t0), r2) and close(1 + b * (t3 - t0), r3):
        return Law(-1, "affine", t0, b=b)
    d1, d2 = t1 - t0, t2 - t0
    # 1 + b d + c d² through (d1, r1) and (d2, r2)
    det = d1 * d2 * (d2 - d1)
    if det != 0:
        b = ((r1 - 1) * d2 * d2 - (r2 - 1) * d1 * d1) / det
        c = ((r2 - 1) * d1 - (r1 - 1) * d2) / det
        d3 = t3 - t0
        if close(1 + b * d3 + c * d3 * d3, r3):
            return Law(-1, "quadratic", t0, b=b, c=c)
    return None


def _grid(p: Spread) -> np.ndarray:
    if p.distribution == "normal":
        lo, hi = p.typical - 6 * p.sigma, p.typical + 6 * p.sigma
        if p.typical > 0:
            lo = max(lo, 1e-3 * p.typical)
    else:
        lo, hi = p.low, p.high
    return np.unique(np.concatenate([np.linspace(lo, hi, TABLE_POINTS), [p.typical]]))


def build_model(design: Design, *, checks: int = 6, seed: int = 0) -> SpreadModel:
    """Find the factors of every spread figure of ``design`` from exact budgets.

    Parameters
    ----------
    design : Design
        A complete design read from a design file (it can rebuild itself).
    checks : int
        Random trials solved exactly to measure the model's deviation.
    seed : int
        Seed of those check trials.

    Returns
    -------
    SpreadModel
    """
    from ..chain.verdict import judge_design

    budget = exact_budget(design)
    verdict = judge_design(design, budget)
    per_trial = ("noise", "input_window", "headroom")
    fixed = tuple(i for i in verdict.failed_items if i not in per_trial)
    if "input_window" in verdict.failed_items and not budget.adc_range_used > 1:
        fixed += ("input_window",)
    keys = tuple(c.id for c in budget.contributions)
    base = _outputs_of(budget, keys)
    params = parameters_of(design)
    all_laws: list[tuple[Law, ...]] = []
    notes: list[str] = []
    for p in params:
        pts = _probe_points(p)
        outs = np.array([_outputs_of(exact_budget(design, {p.field: t}), keys) for t in pts])
        laws: list[Law] = []
        table_outs: list[int] = []
        for k in range(base.size):
            y0 = base[k]
            if not np.isfinite(y0) or y0 == 0:
                continue
            law = _fit(p.typical, pts, outs[:, k] / y0)
            if law is None:
                table_outs.append(k)
            elif law.kind != "none":
                laws.append(Law(k, law.kind, law.theta0, law.a, law.b, law.c))
        if table_outs:
            grid = _grid(p)
            rows = np.array([_outputs_of(exact_budget(design, {p.field: t}), keys) for t in grid])
            for k in table_outs:
                laws.append(_table_law(k, p.typical, grid, rows[:, k] / base[k]))
            notes.append(f"{p.field}: moves a response; tabulated at {grid.size} exact budgets")
        all_laws.append(tuple(laws))
    model = SpreadModel(
        design, params, keys, base, tuple(all_laws), budget, fixed, 0.0, 0, tuple(notes)
    )
    if params and checks > 0:
        from .trials import sample, streams

        theta = sample(params, checks, streams(seed, len(params)))
        modelled = np.sqrt(model.outputs(theta)[: len(keys)].sum(axis=0))
        exact = np.array(
            [
                exact_budget(
                    design, dict(zip([p.field for p in params], row, strict=True))
                ).total_rms_v
                for row in theta.T
            ]
        )
        deviation = float(np.max(np.abs(modelled / exact - 1.0)))
        model = SpreadModel(
            design,
            params,
            keys,
            base,
            tuple(all_laws),
            budget,
            fixed,
            deviation,
            checks,
            tuple(notes),
        )
    return model
