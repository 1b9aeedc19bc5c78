"""The cascade (block-tridiagonal) solve of long chains and the panel sum of alias images.

References: numpy.linalg.solve (LAPACK's LU with partial pivoting) on the same
matrices is the reference for the block elimination; the point-by-point sum of
every alias image (the integration the panels replace) is the reference for the
panel quadrature. Circuits are INVENTED.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from resplan.noise import bandwidth
from resplan.noise.bandwidth import DigitalPath, noise_bandwidth
from resplan.noise.cascade import CASCADE_UNKNOWNS, plan_blocks, solve_blocks
from resplan.noise.netlist import Capacitor, Netlist, OpAmp, Resistor, VoltageSource
from resplan.noise.nodal import build_mna, solve_noise
from resplan.noise.responses import AnalogLowpass, SincFilter

GRID = 10.0 ** (np.arange(-200, 900, 3) / 80)  # 2.5 mHz … 56 GHz on the table lattice


def _ladder(count: int, *, differential: bool = False, amplifier: bool = False) -> Netlist:
    """INVENTED: a source, ``count`` RC sections (10 Ω, 1 nF) and optionally a follower."""
    parts = [VoltageSource("vin", "in", "0"), Resistor("Rs", "in", "n0", 350.0)]
    legs = ("p", "m") if differential else ("p",)
    if differential:
        parts = [VoltageSource("vin", "in", "0"), Resistor("Rs", "in", "p0", 175.0)]
        parts.append(Resistor("Rs2", "0", "m0", 175.0))
    else:
        parts[1] = Resistor("Rs", "in", "p0", 350.0)
    for i in range(count):
        for leg in legs:
            parts.append(Resistor(f"R{leg}{i}", f"{leg}{i}", f"{leg}{i + 1}", 10.0 + i % 7))
            parts.append(Capacitor(f"C{leg}{i}", f"{leg}{i + 1}", "0", 1e-9 * (1 + i % 3)))
    last = f"p{count}"
    if amplifier:
        parts.append(OpAmp("U1", last, "out", "out", 1e6, 10e6))
        parts.append(Resistor("Rload", "out", "0", 10e3))
        last = "out"
    ref = f"m{count}" if differential else "0"
    return Netlist(parts, output=last, output_reference=ref, signal_input="vin")


@pytest.mark.parametrize(
    "net",
    [_ladder(60), _ladder(40, differential=True), _ladder(60, amplifier=True)],
    ids=["ladder", "differential", "with-follower"],
)
def test_block_elimination_matches_the_dense_lu(net):
    mna = build_mna(net)
    assert mna.size >= CASCADE_UNKNOWNS
    a_real, a_per_s = mna.conductance.T.copy(), mna.capacitance.T.copy()
    plan = plan_blocks(a_real, a_per_s)
    assert plan is not None and plan.size <= 3
    s = 2j * np.pi * GRID
    y, failed = solve_blocks(plan, s, mna.output_selector())
    reference = np.linalg.solve(
        a_real[None] + s[:, None, None] * a_per_s[None],
        np.broadcast_to(mna.output_selector()[:, None], (s.size, mna.size, 1)),
    )[..., 0]
    assert not failed.any()
    # Both are backward stable; the ladders' condition numbers (about 1e4) bound the
    # difference well under 1e-9 of the largest entry.
    scale = np.abs(reference).max(axis=1, keepdims=True)
    assert np.abs(y - reference).max() <= 1e-10 * scale.max()
    assert np.all(np.abs(y - reference) <= 1e-9 * scale)


def test_solve_noise_is_the_same_with_and_without_the_cascade(monkeypatch):
    net = _ladder(50, amplifier=True)
    fast = solve_noise(net, GRID)
    from resplan.noise import nodal

    monkeypatch.setattr(nodal, "CASCADE_UNKNOWNS", 10**9)
    dense = solve_noise(net, GRID)
    big = np.abs(dense.transfer) > 1e-150 * np.abs(dense.transfer).max()
    rel = np.abs(fast.transfer - dense.transfer)[big] / np.abs(dense.transfer)[big]
    assert rel.max() < 1e-9
    np.testing.assert_allclose(fast.signal_transfer, dense.signal_transfer, rtol=1e-12, atol=0)


def test_a_densely_coupled_circuit_has_no_cascade_plan():
    rng = np.random.default_rng(7)
    g = rng.normal(size=(60, 60))
    assert plan_blocks(g, np.zeros_like(g)) is None


def test_a_frequency_the_blocks_cannot_pivot_is_flagged_for_the_dense_solve():
    # [[0, 1], [1, 1]] repeated along a chain: the first pivot is zero (no pivoting
    # crosses blocks), so every frequency is handed back.
    n = 64
    a = np.eye(n) + np.eye(n, k=1) + np.eye(n, k=-1)
    a[0, 0] = 0.0
    plan = plan_blocks(a, np.zeros_like(a))
    assert plan is not None and plan.levels[0].tolist() in ([0], [n - 1])
    if plan.levels[0].tolist() == [n - 1]:
        a = a[::-1, ::-1].copy()
        plan = plan_blocks(a, np.zeros_like(a))
    y, failed = solve_blocks(plan, np.array([1j, 2j]), np.ones(n))
    assert failed.all()


# --- alias images summed over panels ----------------------------------------------------


def test_the_panel_step_is_the_circuit_table_lattice():
    from resplan.chain.netlists import POINTS_PER_DECADE

    assert bandwidth._PANEL_STEP == pytest.approx(math.log(10.0) / POINTS_PER_DECADE, rel=1e-15)


PATHS = [
    ((AnalogLowpass("rc", 1, 1600.0),), (SincFilter(3, 6400, 64_000.0),)),
    ((AnalogLowpass("butterworth", 4, 20e3),), (SincFilter(3, 512, 512_000.0),)),
    ((AnalogLowpass("bessel", 2, 5e3), AnalogLowpass("rc", 1, 30e3)), (SincFilter(1, 64, 64e3),)),
    ((AnalogLowpass("rc", 1, 60e3),), (SincFilter(4, 16, 128e3), SincFilter(1, 4, 8e3))),
]


@pytest.mark.parametrize(("analog", "digital"), PATHS)
def test_images_summed_over_panels_match_the_point_by_point_sum(monkeypatch, analog, digital):
    path = DigitalPath(digital)
    panels = noise_bandwidth(analog, path, 0.01, grid_points=2001)
    monkeypatch.setattr(bandwidth, "PANEL_IMAGES", False)
    points = noise_bandwidth(analog, path, 0.01, grid_points=2001)
    # Degree-7 interpolation of a smooth product across 1/80 decade: rounding level.
    assert panels.white_hz == pytest.approx(points.white_hz, rel=1e-12)
    assert panels.flicker == pytest.approx(points.flicker, rel=1e-12)


@pytest.mark.parametrize(
    "name", ["hive-scale", "soil-temperature", "pipeline-vibration", "tank-pressure"]
)
def test_embedded_budgets_do_not_move_with_the_panels(monkeypatch, name):
    from resplan.chain import budget as budget_module
    from resplan.designfile.examples import load_example

    design = load_example(name)
    panels = budget_module.forward_budget(design.chain(), design.band)
    budget_module._path_bandwidths.cache_clear()
    monkeypatch.setattr(bandwidth, "PANEL_IMAGES", False)
    points = budget_module.forward_budget(design.chain(), design.band)
    budget_module._path_bandwidths.cache_clear()
    for a, b in zip(panels.contributions, points.contributions, strict=True):
        assert a.id == b.id
        assert a.rms_v == pytest.approx(b.rms_v, rel=1e-12, abs=0)
