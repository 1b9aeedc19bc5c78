"""Worst case, Monte Carlo yield and what to improve first, against outside references.

The designs are invented variants of the embedded examples (invented data).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from resplan.designfile.examples import example_text
from resplan.designfile.load import check_design, loads_design
from resplan.spread.corner import worst_case
from resplan.spread.improve import improvements
from resplan.spread.model import build_model, exact_budget
from resplan.spread.trials import clopper_pearson, run_trials, sample, streams

HIVE = example_text("hive-scale")
SOIL = example_text("soil-temperature")


def _with(text: str, *pairs: tuple[str, str]) -> str:
    for old, new in pairs:
        assert old in text, old
        text = text.replace(old, new)
    return text


def _hive(*pairs):
    return loads_design(_with(HIVE, *pairs), "hive-variant.toml")


# ---------------------------------------------------------------------------
# the interval


@pytest.mark.parametrize(
    ("k", "n"),
    [(0, 10), (1, 10), (95, 100), (100, 100), (9_990, 10_000), (123_456, 1_000_000), (7, 7)],
)
def test_clopper_pearson_equals_scipy_exact_interval(k, n):
    # Reference: scipy.stats.binomtest(k, n).proportion_ci(method="exact"), the
    # Clopper-Pearson interval (Clopper & Pearson, Biometrika 26 (1934) 404).
    ref = stats.binomtest(k, n).proportion_ci(confidence_level=0.95, method="exact")
    lo, hi = clopper_pearson(k, n)
    assert lo == pytest.approx(ref.low, rel=1e-12, abs=1e-15)
    assert hi == pytest.approx(ref.high, rel=1e-12, abs=1e-15)


# ---------------------------------------------------------------------------
# a single dominant Gaussian source: the yield is a normal CDF


def test_single_gaussian_source_gives_the_normal_cdf_yield():
    # Only the ADC's noise at 10 Hz spreads, normal (45 ± 10 nV rms); the requirement
    # is tightened to 8 g so that about one board in ten fails. The converter's power
    # at the sensor is ∝ x², the rest is fixed, so a board meets when
    # x ≤ x_crit = x0·√((allowed² − P_rest)/P_adc): yield = Φ((x_crit − μ)/σ)
    # (scipy.stats.norm.cdf). The cut at zero (4.5σ below the mean) is negligible.
    d = _hive(
        ('["10 Hz", "45 nV"]', '["10 Hz", { value = "45 nV", sigma = "10 nV" }]'),
        ('resolution = "10 g"', 'resolution = "8 g"'),
    )
    budget = check_design(d)
    p_adc = budget["adc.noise"].rms_v ** 2
    p_rest = budget.total_rms_v**2 - p_adc
    x_crit = 45e-9 * math.sqrt((budget.allowed_rms_v**2 - p_rest) / p_adc)
    expected = stats.norm.cdf((x_crit - 45e-9) / 10e-9)
    result = run_trials(build_model(d), 200_000, seed=3)
    lo, hi = result.interval
    assert 0.5 < expected < 0.99
    assert lo <= expected <= hi
    # the single source carries the whole variance of the noise power
    assert result.drivers[0].share == pytest.approx(1.0, abs=1e-9)


# ---------------------------------------------------------------------------
# variance of a sum of independent normal powers


def test_variance_of_independent_normal_powers_matches_the_closed_form():
    # Two independent normal figures whose powers add: the op amp's e_n and the ADC's
    # transition noise (LSB rms). P_i = c_i·x_i² with x_i ~ N(μ_i, s_i):
    # Var P_i = c_i²(4μ_i²s_i² + 2s_i⁴) (moments of a normal: E x⁴ = μ⁴ + 6μ²s² + 3s⁴),
    # and the variance of the sum is the sum of the variances (independence).
    d = loads_design(
        _with(
            SOIL,
            ('en = "22 nV/√Hz"', 'en = { value = "22 nV/√Hz", sigma = "3 nV/√Hz" }'),
            ("transition_noise = 0.6", "transition_noise = { value = 0.6, sigma = 0.1 }"),
        ),
        "soil-variant.toml",
    )
    model = build_model(d)
    budget = model.budget
    c_en = budget["stages[0].en"].rms_v ** 2 / 22e-9**2
    c_adc = budget["adc.noise"].rms_v ** 2 / 0.6**2

    def var(c, mu, s):
        return c * c * (4 * mu * mu * s * s + 2 * s**4)

    v_en, v_adc = var(c_en, 22e-9, 3e-9), var(c_adc, 0.6, 0.1)
    theta = sample(model.parameters, 400_000, streams(11, len(model.parameters)))
    power = model.outputs(theta)[: model.n_contributions].sum(axis=0)
    # sampling error of a variance estimate from 4e5 draws of a near-normal: ~0.5 %
    assert power.var() == pytest.approx(v_en + v_adc, rel=0.02)
    shares = {dr.field: dr.share for dr in run_trials(model, 400_000, seed=11).drivers}
    assert shares["stages[0].en"] == pytest.approx(v_en / (v_en + v_adc), abs=0.01)
    assert shares["adc.transition_noise"] == pytest.approx(v_adc / (v_en + v_adc), abs=0.01)


# ---------------------------------------------------------------------------
# worst case equals a hand budget with every part at its maximum


def test_worst_case_equals_the_budget_with_every_part_at_max():
    spread = loads_design(
        _with(
            SOIL,
            ('en = "22 nV/√Hz"', 'en = { typ = "22 nV/√Hz", max = "30 nV/√Hz" }'),
            ("transition_noise = 0.6", "transition_noise = { typ = 0.6, max = 1.0 }"),
            ('temperature = "40 degC"', 'temperature = { min = "0 degC", max = "70 degC" }'),
        ),
        "soil-spread.toml",
    )
    by_hand = loads_design(
        _with(
            SOIL,
            ('en = "22 nV/√Hz"', 'en = "30 nV/√Hz"'),
            ("transition_noise = 0.6", "transition_noise = 1.0"),
            ('temperature = "40 degC"', 'temperature = "70 degC"'),
        ),
        "soil-max.toml",
    )
    corner = worst_case(spread)
    assert set(corner.ends.values()) == {"high"}
    expected = check_design(by_hand)
    assert corner.budget.total_rms_v == pytest.approx(expected.total_rms_v, rel=1e-12)
    # and a hand sum of the at-max contributions in power (DOMAIN.md §3)
    assert corner.budget.total_rms_v == pytest.approx(
        math.sqrt(sum(c.rms_v**2 for c in expected.contributions)), rel=1e-12
    )


# ---------------------------------------------------------------------------
# the factor model against full budgets


def test_factor_model_agrees_with_exact_trials_when_filter_corners_move():
    # R and C tolerances move the RC pole, temperature and a density also spread;
    # every trial solved with a full budget is the reference (1e-3 on the percentiles).
    d = _hive(
        ('resistance = "350 ohm"', 'resistance = { value = "350 ohm", tolerance = "1 %" }'),
        ('resistance = "2 kohm"', 'resistance = { value = "2 kohm", tolerance = "5 %" }'),
        ('capacitance = "10 nF"', 'capacitance = { value = "10 nF", tolerance = "20 %" }'),
        ('temperature = "30 degC"', 'temperature = { min = "-20 degC", max = "70 degC" }'),
        ('["10 Hz", "45 nV"]', '["10 Hz", { typ = "45 nV", max = "60 nV" }]'),
    )
    model = build_model(d)
    fast = run_trials(model, 120, seed=5)
    exact = run_trials(model, 120, seed=5, exact=True)
    for q in fast.noise_percentiles_v:
        assert fast.noise_percentiles_v[q] == pytest.approx(exact.noise_percentiles_v[q], rel=1e-3)
        assert fast.bits_percentiles[q] == pytest.approx(exact.bits_percentiles[q], rel=1e-3)
    assert model.deviation < 1e-3


def test_same_seed_same_numbers_whatever_the_chunks():
    d = _hive(
        ('resistance = "350 ohm"', 'resistance = { value = "350 ohm", tolerance = "1 %" }'),
        ('["10 Hz", "45 nV"]', '["10 Hz", { typ = "45 nV", max = "60 nV" }]'),
    )
    model = build_model(d)
    a = run_trials(model, 50_000, seed=9)
    b = run_trials(model, 50_000, seed=9, chunk=7_777)
    c = run_trials(model, 50_000, seed=10)
    assert a.noise_percentiles_v == b.noise_percentiles_v and a.met == b.met
    assert a.worst == b.worst
    assert a.noise_percentiles_v != c.noise_percentiles_v


def test_no_spreads_every_trial_is_the_typical_design():
    d = loads_design(HIVE, "hive.toml")
    r = run_trials(build_model(d), 1000, seed=1)
    assert r.met == 1000 and r.drivers == ()
    assert r.noise_percentiles_v[50] == pytest.approx(check_design(d).total_rms_v, rel=1e-12)


# ---------------------------------------------------------------------------
# what to improve first


def test_ten_percent_less_noise_gains_what_its_share_says():
    # A noise term of power share s made 10 % lower in rms: the total power falls by
    # s·(1 − 0.81), so the noise-free bits rise by −½·log2(1 − 0.19·s) (algebra on
    # DOMAIN.md §3 and §6).
    d = loads_design(HIVE, "hive.toml")
    share = check_design(d)["adc.noise"].share
    first = improvements(d)[0]
    assert first.fields[0].startswith("adc.noise_table")
    assert first.bits_gained == pytest.approx(-0.5 * math.log2(1 - 0.19 * share), rel=1e-9)


def test_improvements_rank_and_name_what_was_not_evaluated():
    d = loads_design(SOIL, "soil.toml")
    items = improvements(d)
    gained = [i.bits_gained for i in items if i.bits_gained is not None]
    assert gained == sorted(gained, reverse=True)
    assert items[0].fields == ("stages[0].en",)
    # the 1/5 rule (common practice, no source): a source under 1/5 of the largest
    # gains almost nothing when improved
    current = next(i for i in items if i.fields == ("stages[0].in",))
    assert abs(current.bits_gained) < 1e-3


@pytest.mark.parametrize(
    "name",
    ["hive-scale", "soil-temperature", "pipeline-vibration", "tank-pressure", "hive-spread"],
)
def test_improvements_equal_a_full_budget_per_figure(name):
    # Reference: every figure 10 % better solved with a full forward budget. The default
    # way scales a contribution or reuses the path integrals where only densities move;
    # the sums are the same, so only rounding may differ.
    from resplan.designfile.examples import load_example

    design = load_example(name)
    quick = improvements(design)
    full = improvements(design, exact=True)
    assert [(i.label, i.reason) for i in quick] == [(i.label, i.reason) for i in full]
    for a, b in zip(quick, full, strict=True):
        if b.bits_gained is None:
            assert a.bits_gained is None
            continue
        assert a.bits_gained == pytest.approx(b.bits_gained, abs=1e-12)
        assert a.noise_rms_v == pytest.approx(b.noise_rms_v, rel=1e-12)


def test_improvement_fields_leave_out_names_and_the_title_block():
    # "4.096 V reference (invented)" starts like a figure; read as one it would send its
    # words to the unit parser (and load pint on the check path).
    from resplan.designfile.examples import load_example

    paths = [p for p, _ in load_example("pipeline-vibration").variant.fields()]
    assert "reference.name" not in paths and not any(p.startswith("meta.") for p in paths)
    assert "reference.noise_density" in paths


def test_exact_budget_needs_a_design_file():
    from resplan.chain.design import Design

    d = loads_design(HIVE, "hive.toml")
    bare = Design(**{**d.__dict__, "variant": None})
    with pytest.raises(Exception, match="design"):
        exact_budget(bare, {"sensor.resistance": 1.0})
    assert np.isfinite(exact_budget(bare).total_rms_v)


def test_headroom_is_judged_per_trial():
    # The load cell's sensitivity spreads uniformly over 2 mV/V ± 0.1 %; with a
    # headroom of 87.2 % the span may use 12.8 % of the 78.125 mV range, which the
    # typical 10 mV uses exactly: a board meets when its sensitivity is at most
    # 2 mV/V, half of a uniform spread centred there (uniform CDF, by hand).
    d = _hive(
        ('sensitivity = "2 mV/V"', 'sensitivity = { value = "2 mV/V", tolerance = "0.1 %" }'),
        ('interference = "20 nV"', 'interference = "20 nV"\nheadroom = "87.2 %"'),
    )
    result = run_trials(build_model(d), 40_000, seed=2)
    lo, hi = result.interval
    assert lo <= 0.5 <= hi
    assert "headroom" not in result.fixed_failures
