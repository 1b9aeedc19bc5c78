"""Monte Carlo across boards: sample every spread, judge every trial, count the yield.

Each spread figure j draws from its own stream, ``numpy.random.default_rng([seed, j])``
(standard normals for a normal figure, uniforms for a uniform one), in the
order the figures appear in the design file. Chunks take consecutive values of
every stream, so the chunk size never changes a number: the same seed gives the
same trials on any machine.

A trial meets when every verdict item passes (:mod:`resplan.chain.verdict`): the
total noise against the noise allowed, and the share of the ADC range used
against the range less any stated headroom, per trial; the other items (stated
interferers, the window edges, pass-band flatness, settling, channel rate) are
judged once at the typical figures.

The yield's interval is Clopper and Pearson's exact binomial interval
(C. J. Clopper, E. S. Pearson, Biometrika 26 (1934) 404), from the beta
quantiles; the tests hold it to ``scipy.stats.binomtest(k, n).proportion_ci``.

Drivers: each figure's first-order share of the variance of the total noise
power, Var(E[P | θ_j]) / Var(P) (Sobol's first-order index; I. M. Sobol',
Math. Comput. Simul. 55 (2001) 271, from memory). With the budget written as
contributions × independent factors, E[P | θ_j] is exact from the factors' means
and covariances, gathered chunk by chunk.
"""

from __future__ import annotations

import math
import time
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..chain.tolerance import Spread
from ..chain.verdict import noise_exceeds, range_exceeds
from ..errors import DesignError
from .model import SpreadModel

__all__ = [
    "TrialResult",
    "Driver",
    "sample",
    "run_trials",
    "clopper_pearson",
    "PERCENTILES",
    "CHUNK",
]

#: Percentiles reported, %.
PERCENTILES = (1, 5, 50, 95, 99)
#: Trials per chunk: bounds memory (about 8 B per trial per output and figure in flight).
CHUNK = 1 << 16
#: Most trials in one run.
MAX_TRIALS = 100_000_000


def clopper_pearson(k: int, n: int, confidence: float = 0.95) -> tuple[float, float]:
    """Exact (Clopper–Pearson) interval of a binomial proportion k/n.

    Examples
    --------
    >>> lo, hi = clopper_pearson(95, 100)
    >>> round(lo, 4), round(hi, 4)
    (0.8872, 0.9836)
    """
    from scipy.special import betaincinv

    alpha = 1.0 - confidence
    lo = 0.0 if k == 0 else float(betaincinv(k, n - k + 1, alpha / 2))
    hi = 1.0 if k == n else float(betaincinv(k + 1, n - k, 1 - alpha / 2))
    return lo, hi


def streams(seed: int, count: int) -> tuple[np.random.Generator, ...]:
    """One generator per spread figure: ``numpy.random.default_rng([seed, j])``."""
    return tuple(np.random.default_rng([seed, j]) for j in range(count))


def sample(params: tuple[Spread, ...], n: int, rngs: tuple[np.random.Generator, ...]) -> np.ndarray:
    """The next ``n`` trials of every figure, (len(params), n), SI; normals cut at zero.

    Each figure has its own stream (standard normals or uniforms), so consecutive
    calls continue every stream and the split into chunks changes nothing.
    """
    theta = np.empty((len(params), n))
    for j, (p, rng) in enumerate(zip(params, rngs, strict=True)):
        row = theta[j]
        if p.distribution == "normal":
            rng.standard_normal(out=row)
            row *= p.sigma
            row += p.typical
            if p.typical > 0:
                np.maximum(row, 0.0, out=row)
        else:
            rng.random(out=row)
            row *= p.high - p.low
            row += p.low
    return theta


@dataclass(frozen=True)
class Driver:
    """One figure's share of the variance of the total noise power."""

    field: str
    share: float
    reading: str


@dataclass(frozen=True)
class TrialResult:
    """What a Monte Carlo run found. Noise figures are V rms at the sensor."""

    trials: int
    seed: int
    met: int
    interval: tuple[float, float]
    noise_percentiles_v: dict[int, float]
    bits_percentiles: dict[int, float]
    drivers: tuple[Driver, ...]
    worst: dict[str, float]
    worst_noise_v: float
    worst_bits: float
    worst_meets: bool
    required_yield: float | None
    coverage: float
    fixed_failures: tuple[str, ...]
    deviation: float
    checks: int
    seconds: float
    typical_noise_v: float
    typical_bits: float
    required_bits: float | None
    histogram: tuple[tuple[float, ...], tuple[int, ...]]
    exact: bool = False
    #: Every trial's front end solved in batches (:mod:`.exact`) rather than by full budgets.
    batched: bool = False

    @property
    def yield_fraction(self) -> float:
        return self.met / self.trials

    @property
    def meets(self) -> bool | None:
        """Lower bound of the interval ≥ the required yield (None without one)."""
        if self.required_yield is None:
            return None
        return self.interval[0] >= self.required_yield

    def to_records(self) -> list[dict[str, Any]]:
        """One flat row per driver (field, variance_share, reading); see :mod:`.tables`."""
        from .tables import trial_records

        return trial_records(self)

    def _repr_html_(self) -> str:
        from .tables import trial_html

        return trial_html(self)

    def to_dict(self) -> dict[str, Any]:
        return {
            "trials": self.trials,
            "seed": self.seed,
            "met": self.met,
            "yield": self.yield_fraction,
            "yield_interval_95": list(self.interval),
            "interval_method": "Clopper-Pearson exact, 95 %",
            "required_yield": self.required_yield,
            "meets_yield": self.meets,
            "coverage": self.coverage,
            "noise_rms_v_percentiles": {str(k): v for k, v in self.noise_percentiles_v.items()},
            "noise_free_bits_percentiles": {str(k): v for k, v in self.bits_percentiles.items()},
            "typical": {"noise_rms_v": self.typical_noise_v, "noise_free_bits": self.typical_bits},
            "required_noise_free_bits": self.required_bits,
            "drivers": [
                {"field": d.field, "variance_share": d.share, "reading": d.reading}
                for d in self.drivers
            ],
            "worst_trial": {
                "values_si": self.worst,
                "noise_rms_v": self.worst_noise_v,
                "noise_free_bits": self.worst_bits,
                "meets": self.worst_meets,
            },
            "failing_at_typical": list(self.fixed_failures),
            "model_check": {
                "exact_trials": self.checks,
                "max_relative_deviation": self.deviation,
                "every_trial_exact": self.exact,
                "front_end_batched": self.batched,
            },
            "seconds": self.seconds,
        }


def run_trials(
    model: SpreadModel,
    trials: int,
    seed: int,
    *,
    chunk: int = CHUNK,
    progress: Callable[[int, int], None] | None = None,
    exact: bool = False,
) -> TrialResult:
    """Run ``trials`` Monte Carlo trials of the model.

    Parameters
    ----------
    model : SpreadModel
    trials : int
        Number of boards, 1 … 1e8.
    seed : int
        Seed of ``numpy.random.default_rng``: the same seed gives the same result.
    chunk : int
        Trials evaluated at once (memory); never changes a result.
    progress : callable, optional
        Called with (done, total) after each chunk.
    exact : bool
        Solve every trial exactly instead of through the factor model: the front end of
        every trial solved and integrated as the forward budget does, batched
        (:mod:`.exact`), or, for a design that path cannot reproduce, a full budget per
        trial (slow).
    """
    if not 1 <= trials <= MAX_TRIALS:
        raise DesignError("--trials", trials, f"a number of trials from 1 to {MAX_TRIALS:,}")
    if seed < 0:
        raise DesignError("--seed", seed, "a seed ≥ 0")
    start = time.perf_counter()
    params = model.parameters
    p, m = len(params), model.n_contributions
    rngs = streams(seed, p)
    budget = model.budget
    k_pp = budget.k_pp
    p0 = float(model.base[:m].sum()) or 1.0
    sigma_all = np.empty(trials)
    bits_all = np.empty(trials)
    scratch_all = np.empty(min(chunk, trials))
    met = 0
    s1 = np.zeros((p, m))
    s2 = np.zeros((p, m, m))
    touched = np.zeros((p, m), dtype=bool)
    sy = sy2 = 0.0
    worst_margin, worst_row, worst_meets = math.inf, None, True
    worst_sigma = worst_bits = math.nan
    fixed_ok = not model.fixed_failures
    has_requirement = bool(np.isfinite(model.base[m + 2]))
    headroom = getattr(budget.requirement, "headroom", 0.0) or 0.0
    range_limit = 1.0 - headroom  # the headroom item, or the range itself when none
    engine = None
    if exact:
        from .exact import Unsupported, exact_trials

        engine = exact_trials(model)
    done = 0
    while done < trials:
        n = min(chunk, trials - done)
        theta = sample(params, n, rngs)
        factors: list = []
        out = model.outputs(theta, factors)
        if engine is not None:
            try:
                powers = engine.contribution_powers(theta, out[m + 1])
            except Unsupported:  # a chunk whose parts moved too far for the update
                engine = None
                _solve_exactly(model, theta, out)
            else:
                rows = engine.front_end_rows
                out[rows] = powers[rows]
        elif exact:
            _solve_exactly(model, theta, out)
        power = out[0].copy()
        for k in range(1, m):
            power += out[k]
        sigma = np.sqrt(power, out=sigma_all[done : done + n])
        span, gain, allowed, fsr = out[m], out[m + 1], out[m + 2], out[m + 3]
        bits = bits_all[done : done + n]
        np.log2(span / (k_pp * sigma), out=bits)
        ok = ~range_exceeds(span * gain / fsr, range_limit)
        if has_requirement:
            ok &= ~noise_exceeds(sigma, allowed)
            margin = np.log2(allowed / sigma)
        else:
            margin = bits
        ok &= fixed_ok
        met += int(np.count_nonzero(ok))
        i = int(np.argmin(margin))
        if margin[i] < worst_margin:
            worst_margin, worst_row, worst_meets = float(margin[i]), theta[:, i].copy(), bool(ok[i])
            worst_sigma, worst_bits = float(sigma[i]), float(bits[i])
        power /= p0
        sy += float(power.sum())
        # Products summed without BLAS: a threaded dot of one vector costs more than it saves.
        scratch = scratch_all[:n]
        sy2 += float(np.multiply(power, power, out=scratch).sum())
        for j, mine in enumerate(factors):
            mine = [(k, f) for k, f in mine if k < m]
            for a, (ka, fa) in enumerate(mine):
                touched[j, ka] = True
                s1[j, ka] += float(fa.sum())
                for kb, fb in mine[a:]:
                    v = float(np.multiply(fa, fb, out=scratch).sum())
                    s2[j, ka, kb] += v
                    if kb != ka:
                        s2[j, kb, ka] += v
        done += n
        if progress is not None:
            progress(done, trials)
    drivers = _drivers(model, s1, s2, touched, sy, sy2, trials, p0)
    qs = np.array(PERCENTILES, dtype=float)
    noise_pct = np.percentile(sigma_all, qs)
    # The q-th percentile of noise-free bits is the (100 − q)-th of noise when the span
    # does not vary; taken directly it holds whatever varies.
    bits_pct = np.percentile(bits_all, qs)
    req = budget.requirement
    required_bits = None if req is None else float(req.required_noise_free_bits)
    lo = float(min(bits_all.min(), budget.noise_free_bits))
    hi = float(max(bits_all.max(), budget.noise_free_bits))
    if required_bits is not None and math.isfinite(required_bits):
        lo, hi = min(lo, required_bits), max(hi, required_bits)
    if hi - lo < 1e-6:
        lo, hi = lo - 0.05, hi + 0.05
    counts, edges = np.histogram(bits_all, bins=40, range=(lo, hi))
    del sigma_all, bits_all
    return TrialResult(
        trials=trials,
        seed=seed,
        met=met,
        interval=clopper_pearson(met, trials),
        noise_percentiles_v={q: float(v) for q, v in zip(PERCENTILES, noise_pct, strict=True)},
        bits_percentiles={q: float(v) for q, v in zip(PERCENTILES, bits_pct, strict=True)},
        drivers=drivers,
        worst={q.field: float(v) for q, v in zip(params, worst_row, strict=True)}
        if worst_row is not None
        else {},
        worst_noise_v=worst_sigma,
        worst_bits=worst_bits,
        worst_meets=worst_meets,
        required_yield=model.design.yield_required,
        coverage=budget.coverage,
        fixed_failures=model.fixed_failures,
        deviation=model.deviation if engine is None else engine.deviation,
        checks=model.checks if engine is None else engine.checks,
        seconds=time.perf_counter() - start,
        typical_noise_v=budget.total_rms_v,
        typical_bits=budget.noise_free_bits,
        required_bits=required_bits,
        histogram=(tuple(float(e) for e in edges), tuple(int(c) for c in counts)),
        exact=exact,
        batched=engine is not None,
    )


def _solve_exactly(model: SpreadModel, theta: np.ndarray, out: np.ndarray) -> None:
    """Replace the modelled contribution powers in ``out`` by full budgets, trial by trial."""
    from .model import exact_budget

    names = [q.field for q in model.parameters]
    for i in range(theta.shape[1]):
        b = exact_budget(model.design, dict(zip(names, theta[:, i], strict=True)))
        power = {c.id: c.rms_v**2 for c in b.contributions}
        out[: model.n_contributions, i] = [power.get(k, 0.0) for k in model.keys]


def _drivers(
    model: SpreadModel,
    s1: np.ndarray,
    s2: np.ndarray,
    touched: np.ndarray,
    sy: float,
    sy2: float,
    n: int,
    p0: float,
) -> tuple[Driver, ...]:
    """First-order variance shares of the total noise power, largest first."""
    p = len(model.parameters)
    if p == 0 or n < 2:
        return ()
    var_y = max(sy2 / n - (sy / n) ** 2, 0.0)
    mean = np.where(touched, s1 / n, 1.0)  # (p, m): E[g_j] per contribution (1 if untouched)
    base = model.base[: model.n_contributions] / p0
    out = []
    for j, q in enumerate(model.parameters):
        others = np.prod(np.delete(mean, j, axis=0), axis=0) if p > 1 else np.ones_like(base)
        w = base * others
        cov = np.where(np.outer(touched[j], touched[j]), s2[j] / n - np.outer(mean[j], mean[j]), 0)
        v = float(w @ cov @ w)
        share = v / var_y if var_y > 0 else 0.0
        out.append(Driver(q.field, max(share, 0.0), q.describe()))
    return tuple(sorted(out, key=lambda d: d.share, reverse=True))
