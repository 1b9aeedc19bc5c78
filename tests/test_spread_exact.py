"""Monte Carlo trials solved exactly in batches, against full forward budgets.

The reference for every trial is :func:`resplan.spread.model.exact_budget`: the design
rebuilt from its file with the trial's figures and a complete forward budget solved
(modified nodal analysis of the front end, Ho, Ruehli, Brennan 1975; the folded noise
integrals of resplan.noise.bandwidth). The batched path must give the same
contributions to 1e-9 relative (rounding of a different order of the same sums is
about 1e-14). The designs are invented variants of the embedded examples (invented data).
"""

from __future__ import annotations

import numpy as np
import pytest

from resplan.chain.budget import _path_bandwidths
from resplan.chain.netlists import circuit_of, transfer_table
from resplan.designfile.examples import example_text, load_example
from resplan.designfile.load import loads_design
from resplan.spread.exact import exact_trials
from resplan.spread.fold import FoldRules, fold_tables, table_order
from resplan.spread.model import build_model, exact_budget
from resplan.spread.trials import run_trials, sample, streams

#: Agreement with a full budget per trial (the brief's bound; measured about 1e-14).
PER_TRIAL = 1e-9


def _filter_and_rc():
    """hive-scale with a 2nd-order Sallen-Key Butterworth ahead of its RC, spreads on the
    filter's capacitor and op-amp noise and on the RC's R and C (invented)."""
    text = example_text("hive-scale")
    pairs = (
        (
            '[[stages]]\ntype = "rc_filter"',
            '[[stages]]\ntype = "active_filter"\nname = "anti-alias filter (invented)"\n'
            'response = "butterworth"\norder = 2\n'
            'cutoff = "400 Hz"\ntopology = "sallen-key"\n'
            'capacitor = { value = "22 nF", tolerance = "5 %" }\n'
            'en = { typ = "10 nV/√Hz", max = "15 nV/√Hz" }\ngbw = "2 MHz"\n\n'
            '[[stages]]\ntype = "rc_filter"',
        ),
        ('resistance = "2 kohm"', 'resistance = { value = "2 kohm", tolerance = "1 %" }'),
        ('capacitance = "10 nF"', 'capacitance = { value = "10 nF", tolerance = "10 %" }'),
    )
    for old, new in pairs:
        assert old in text, old
        text = text.replace(old, new)
    return loads_design(text, "filter-and-rc.toml")


def _rc_tolerances():
    """hive-scale with 1 % on R and 10 % on C of its RC (the benchmark's design, invented)."""
    text = example_text("hive-scale")
    for old, new in (
        ('resistance = "2 kohm"', 'resistance = { value = "2 kohm", tolerance = "1 %" }'),
        ('capacitance = "10 nF"', 'capacitance = { value = "10 nF", tolerance = "10 %" }'),
    ):
        text = text.replace(old, new)
    return loads_design(text, "rc-tolerances.toml")


@pytest.fixture(scope="module")
def hive_spread():
    return build_model(load_example("hive-spread"))


@pytest.fixture(scope="module")
def filter_and_rc():
    return build_model(_filter_and_rc())


# ---------------------------------------------------------------------------
# the fold on fewer points


@pytest.mark.parametrize(
    "name", ["hive-scale", "soil-temperature", "pipeline-vibration", "tank-pressure"]
)
def test_fold_equals_the_forward_budgets_path_integrals(name):
    # Reference: the forward budget's own path integrals (_path_bandwidths: integrate_psd
    # over the table of every source), the same sums on every point.
    design = load_example(name)
    chain = design.chain()
    f_low = design.band.f_low_hz
    circuit = circuit_of(chain)
    table = transfer_table(circuit, f_low)
    white, flicker = _path_bandwidths(circuit, f_low, chain.digital, 2000)
    rows = table.log_power.shape[0]
    rules = FoldRules(
        chain.digital,
        f_low,
        2000,
        table.log_f0,
        table.step,
        table.log_power.shape[1],
        table.log_power[table.live],
    )
    got_w, got_f = fold_tables(
        rules,
        table.log_power,
        np.zeros(rows, int),
        np.full(rows, 1e3 * table.settled_hz),
        np.full(rows, table_order(table.final_slope, table.live)),
    )
    live = table.live
    np.testing.assert_allclose(got_w[live], white[live], rtol=1e-12)
    np.testing.assert_allclose(got_f[live], flicker[live], rtol=1e-12)
    # fewer points than the forward budget reads: its base grid alone has more
    assert rules.points < 3 * rules.block(0, 0).frequency_hz.size


# ---------------------------------------------------------------------------
# every trial against its full budget


def _per_trial_deviation(model, engine, n=6, seed=11):
    theta = sample(model.parameters, n, streams(seed, len(model.parameters)))
    gain = model.outputs(theta)[model.n_contributions + 1]
    mine = engine.contribution_powers(theta, gain)
    names = [p.field for p in model.parameters]
    worst = 0.0
    compared = 0
    for i in range(n):
        budget = exact_budget(model.design, dict(zip(names, theta[:, i], strict=True)))
        power = {c.id: c.rms_v**2 for c in budget.contributions}
        for row in engine.front_end_rows:
            ref = power.get(model.keys[row], 0.0)
            assert ref > 0
            worst = max(worst, abs(mine[row, i] / ref - 1.0))
            compared += 1
    return worst, compared


@pytest.mark.parametrize("which", ["hive_spread", "filter_and_rc"])
def test_batched_trials_equal_full_budgets(which, request):
    model = request.getfixturevalue(which)
    engine = exact_trials(model)
    worst, compared = _per_trial_deviation(model, engine)
    assert compared >= 6 * 2
    assert worst <= PER_TRIAL
    assert engine.deviation <= PER_TRIAL and engine.checks > 0


def test_filter_and_rc_moves_every_part_of_its_sections(filter_and_rc):
    engine = exact_trials(filter_and_rc)
    # the capacitor moves the section's two R and two C; R and C the RC's two
    assert [s.moved.size for s in engine.segments] == [4, 2]


def test_exact_run_agrees_with_the_factor_model_on_the_percentiles():
    # The factor model tabulates what moves a corner; every trial solved exactly is the
    # reference (the 1e-3 on the percentiles).
    model = build_model(_rc_tolerances())
    fast = run_trials(model, 3000, seed=2)
    exact = run_trials(model, 3000, seed=2, exact=True)
    assert exact.exact and exact.checks > 0 and exact.deviation <= PER_TRIAL
    for q in fast.noise_percentiles_v:
        assert fast.noise_percentiles_v[q] == pytest.approx(exact.noise_percentiles_v[q], rel=1e-3)
        assert fast.bits_percentiles[q] == pytest.approx(exact.bits_percentiles[q], rel=1e-3)
    assert exact.met == fast.met


def test_exact_run_of_the_filter_agrees_with_the_factor_model(filter_and_rc):
    fast = run_trials(filter_and_rc, 200, seed=4)
    exact = run_trials(filter_and_rc, 200, seed=4, exact=True)
    for q in fast.noise_percentiles_v:
        assert fast.noise_percentiles_v[q] == pytest.approx(exact.noise_percentiles_v[q], rel=1e-3)


def test_chunks_never_change_an_exact_number(hive_spread):
    a = run_trials(hive_spread, 700, seed=9, exact=True)
    b = run_trials(hive_spread, 700, seed=9, exact=True, chunk=128)
    assert a.noise_percentiles_v == b.noise_percentiles_v
    assert a.met == b.met


def test_a_spread_on_a_behavioural_response_falls_back_to_full_budgets():
    # A filter given by its response (not its parts) is outside the batched path: every
    # trial then gets a full budget (slow, but exact).
    text = example_text("pipeline-vibration")
    assert 'cutoff = "20 kHz"' in text
    text = text.replace('cutoff = "20 kHz"', 'cutoff = { value = "20 kHz", tolerance = "2 %" }')
    model = build_model(loads_design(text, "response-spread.toml"))
    assert exact_trials(model) is None
    result = run_trials(model, 3, seed=1, exact=True)
    assert result.exact and result.trials == 3
