"""Alias-aware noise integrals checked against closed forms and brute force.

The key check is :func:`test_folded_integral_matches_brute_force`: the integrand
S·|H_a|²·|H_d|² is summed with numpy on a fine *linear* grid out to hundreds of
sample rates — no folding, no lobe averaging — and compared with
:func:`resplan.noise_bandwidth`, which folds the images into the first Nyquist
zone and averages far side lobes.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from resplan import AnalogLowpass, DigitalPath, IdealLowpass, SincFilter, noise_bandwidth
from resplan.errors import ChainError, DesignError
from resplan.noise.bandwidth import integrate_psd
from resplan.noise.responses import butterworth_enbw_ratio

# --- closed forms ---------------------------------------------------------------------


@pytest.mark.parametrize(("f_low", "f_high"), [(0.01, 10.0), (0.1, 1e3), (1.0, 1e5), (5.0, 6.0)])
def test_brick_wall_band_gives_width_and_log_ratio(f_low, f_high):
    # Closed forms ∫df = f_H − f_L and ∫df/f = ln(f_H/f_L) (DOMAIN.md §2, the 1/f + white
    # integral). The midpoint rule is exact for a constant; for 1/f on a 2000-cell geometric
    # grid its error is (ln r)²/24 per cell, below 1e-5 relative; tolerance 1e-5.
    nb = noise_bandwidth(f_low_hz=f_low, f_high_hz=f_high)
    assert nb.white_hz == pytest.approx(f_high - f_low, rel=1e-12)
    assert nb.flicker == pytest.approx(math.log(f_high / f_low), rel=1e-5)


def test_noise_bandwidth_variance_is_the_flicker_white_closed_form():
    # v² = e_w²(f_c·ln(f_H/f_L) + f_H − f_L) (DOMAIN.md §2).
    nb = noise_bandwidth(f_low_hz=0.1, f_high_hz=10.0)
    expected = (10e-9) ** 2 * (3.0 * math.log(100.0) + 9.9)
    assert nb.variance(10e-9, 3.0) == pytest.approx(expected, rel=1e-5)
    assert nb.rms(10e-9, 3.0) == pytest.approx(math.sqrt(expected), rel=1e-5)


@pytest.mark.parametrize(("kind", "order"), [("rc", 1)] + [("butterworth", n) for n in range(1, 9)])
def test_numerical_path_matches_butterworth_closed_form(kind, order):
    # resplan's numerical analog path (midpoint rule on a 2000-cell log grid from f_L to
    # 1000·f_c plus an exact power-law tail) against the closed form f_c·(π/2n)/sin(π/2n)
    # (Gradshteyn & Ryzhik 3.241.2). Observed −9e-6: the midpoint error (ln r)²/24 ≈ 4e-6
    # per cell plus the 1e-3 Hz below f_L left out. Tolerance 3e-5.
    fc = 1000.0
    f_low = 1e-3
    nb = noise_bandwidth([AnalogLowpass(kind, order, fc)], f_low_hz=f_low)
    assert nb.white_hz + f_low == pytest.approx(fc * butterworth_enbw_ratio(order), rel=3e-5)


@pytest.mark.parametrize("order", range(1, 9))
def test_numerical_path_matches_bessel_enbw(order):
    # Same midpoint path against the densely integrated Bessel ENBW (itself checked against
    # scipy.integrate.quad in test_responses.py); tolerance 3e-5 as above.
    lp = AnalogLowpass("bessel", order, 1000.0)
    nb = noise_bandwidth([lp], f_low_hz=1e-3)
    assert nb.white_hz + 1e-3 == pytest.approx(lp.noise_bandwidth_hz(), rel=3e-5)


@pytest.mark.parametrize(("fc", "f_low"), [(1000.0, 0.01), (10.0, 0.1), (1e5, 1.0)])
def test_flicker_through_a_single_pole(fc, f_low):
    # ∫_{f_L}^∞ df / (f·(1 + (f/f_c)²)) = ½·ln(1 + (f_c/f_L)²) (partial fractions, standard
    # integral); white part f_c·(π/2 − atan(f_L/f_c)). Tolerance 3e-5 (midpoint rule, above).
    nb = noise_bandwidth([AnalogLowpass("rc", 1, fc)], f_low_hz=f_low)
    assert nb.flicker == pytest.approx(0.5 * math.log1p((fc / f_low) ** 2), rel=3e-5)
    assert nb.white_hz == pytest.approx(fc * (math.pi / 2 - math.atan(f_low / fc)), rel=3e-5)


def test_cascade_of_two_poles():
    # Two equal real poles: ∫ df/(1 + x²)² = π/4 · f_c (standard integral).
    nb = noise_bandwidth([AnalogLowpass("rc", 1, 100.0)] * 2, f_low_hz=1e-4)
    assert nb.white_hz == pytest.approx(math.pi / 4 * 100.0, rel=3e-5)


def test_analog_band_with_upper_limit():
    # Single pole cut at a brick-wall f_H: f_c·(atan(f_H/f_c) − atan(f_L/f_c)).
    nb = noise_bandwidth([AnalogLowpass("rc", 1, 100.0)], f_low_hz=0.1, f_high_hz=300.0)
    assert nb.white_hz == pytest.approx(100.0 * (math.atan(3.0) - math.atan(1e-3)), rel=1e-5)


# --- digital filters, folded -----------------------------------------------------------------


@pytest.mark.parametrize("order", [1, 2, 3, 4, 5])
@pytest.mark.parametrize(("length", "rate"), [(4, 1e5), (64, 64e3), (512, 512e3)])
def test_sinc_through_folded_source_matches_parseval(order, length, rate):
    # A density already folded into the first Nyquist zone, through sinc^k: (fs/2)·Σh²
    # (Parseval, Oppenheim & Schafer §2.9). resplan resolves the lobes near DC and averages
    # the far ones; observed ≤ 6e-6 relative; tolerance 2e-5.
    s = SincFilter(order, length, rate)
    f_low = 1e-3
    nb = noise_bandwidth((), DigitalPath((s,)), f_low, folded_source=True)
    assert nb.white_hz + f_low == pytest.approx(s.noise_bandwidth_hz(), rel=2e-5)


def test_two_stage_digital_path_matches_parseval_of_the_combined_response():
    # sinc3 (R = 64) then a 4-sample average at the output rate. Reference: the combined
    # impulse response, the sinc3 response convolved with the average upsampled by 64
    # (noble identity, Oppenheim & Schafer §4.7), and Parseval (fs/2)·Σh². Tolerance 2e-5.
    sinc3 = SincFilter(3, 64, 64e3)
    average = SincFilter(1, 4, 1e3)
    upsampled = np.zeros(64 * 3 + 1)
    upsampled[::64] = 0.25
    h = np.convolve(sinc3.impulse_response(), upsampled)
    reference = 0.5 * 64e3 * float(np.sum(h**2))
    nb = noise_bandwidth((), DigitalPath((sinc3, average)), 1e-3, folded_source=True)
    assert nb.white_hz + 1e-3 == pytest.approx(reference, rel=2e-5)


def test_ideal_band_limit_on_a_folded_source():
    # A density over the first Nyquist zone cut at f_c: f_c − f_L exactly.
    nb = noise_bandwidth((), DigitalPath((IdealLowpass(10e3, 100e3),)), 1.0, folded_source=True)
    assert nb.white_hz == pytest.approx(10e3 - 1.0, rel=1e-12)
    assert nb.flicker == pytest.approx(math.log(1e4), rel=1e-5)


@pytest.mark.parametrize("ratio", [3.0, 10.0, 100.0, 1000.0])
@pytest.mark.parametrize("n", [1, 4, 16, 256])
def test_wideband_rc_sampled_and_averaged(ratio, n):
    # White noise e² through a single pole at f_c ≫ f_s, sampled at f_s and averaged over N:
    # each sample has variance e²·(π/2)·f_c (RC ENBW). The RC output's autocorrelation is
    # exp(−2π f_c τ) (Papoulis, Probability, Random Variables and Stochastic Processes, the
    # Lorentzian spectrum), so successive samples correlate by ρ = exp(−2π f_c/f_s) — below
    # 1e-8 for f_c ≥ 3 f_s — and the mean of N samples has variance
    # e²(π/2)f_c/N · (1 + 2 Σ_k (1 − k/N) ρ^k) ≈ e²(π/2)f_c/N.
    # All of it aliases into the output: this checks the image sum over ~f_c/f_s periods.
    # Observed within 1e-4; tolerance 2e-4.
    fs = 100e3
    fc = ratio * fs
    path = (
        DigitalPath((SincFilter(1, n, fs),)) if n > 1 else DigitalPath((IdealLowpass(fs / 2, fs),))
    )
    nb = noise_bandwidth([AnalogLowpass("rc", 1, fc)], path, 1e-3)
    rho = math.exp(-2 * math.pi * fc / fs)
    k = np.arange(1, n)
    correlation = 1 + 2 * float(np.sum((1 - k / n) * rho**k))
    assert nb.white_hz == pytest.approx(math.pi / 2 * fc / n * correlation, rel=2e-4)


@pytest.mark.parametrize("fc", [10.0, 100.0, 1e3, 10e3])
def test_pass_all_digital_path_keeps_the_whole_analog_bandwidth(fc):
    # A digital path that passes the whole Nyquist zone must give back the analog ENBW
    # (π/2)·f_c, however low f_c is against f_s: the folded images and their tail together
    # cover [0, ∞). Tolerance 3e-5 (midpoint rule).
    fs = 100e3
    nb = noise_bandwidth(
        [AnalogLowpass("rc", 1, fc)], DigitalPath((IdealLowpass(fs / 2, fs),)), 1e-3
    )
    assert nb.white_hz + 1e-3 == pytest.approx(math.pi / 2 * fc, rel=3e-5)


def _brute_force(analog, path, f_low, f_top, step):
    """∫ |H_a|²|H_d|² df and ∫ |H_a|²|H_d|²/f df on [f_low, f_top] by numpy, no folding.

    A geometric grid resolves the 1/f kernel up to 50 steps, a linear grid of the given
    step (64 points per digital side lobe) carries on, and beyond f_top the analog product
    falls as a power law while |H_d|² averages to its period mean: that tail is added in
    closed form (∫_X^∞ (c/f)^{2n} df = X·(c/X)^{2n}/(2n − 1)).
    """
    fs = path.sample_rate_hz

    def gain(f):
        g = path.power_gain(f)
        for response in analog:
            g = g * response.power_gain(f)
        return g

    split = f_low + 50 * step
    edges = np.geomspace(f_low, split, 100_001)
    mid = 0.5 * (edges[1:] + edges[:-1])
    g = gain(mid)
    white = float(np.sum(g * np.diff(edges)))
    flicker = float(np.sum(g / mid * np.diff(edges)))
    count = int(round((f_top - split) / step))
    for start in range(0, count, 1_000_000):
        mid = split + (np.arange(start, min(count, start + 1_000_000)) + 0.5) * step
        g = gain(mid)
        white += float(np.sum(g)) * step
        flicker += float(np.sum(g / mid)) * step
    u = (np.arange(200_000) + 0.5) * fs / 200_000
    period_mean = float(np.mean(path.power_gain(u)))
    order = sum(r.order for r in analog)
    at_top = float(np.prod([r.power_gain(f_top) for r in analog]))
    white += period_mean * at_top * f_top / (2 * order - 1)
    return white, flicker


BRUTE_FORCE_CASES = {
    # Invented paths (demo values). Delta-sigma-like: sinc3, R = 64 at 64 kHz, RC at 5 kHz.
    "delta-sigma sinc3 + RC 5 kHz": (
        [AnalogLowpass("rc", 1, 5e3)],
        DigitalPath((SincFilter(3, 64, 64e3),)),
    ),
    # SAR at 100 kHz averaging 16 samples behind an RC at 200 kHz (wideband aliasing).
    "SAR average 16 + RC 200 kHz": (
        [AnalogLowpass("rc", 1, 200e3)],
        DigitalPath((SincFilter(1, 16, 100e3),)),
    ),
    # SAR behind a slower RC (20 kHz) and an ideal band limit at 10 kHz.
    "SAR band limit + RC 20 kHz": (
        [AnalogLowpass("rc", 1, 20e3)],
        DigitalPath((IdealLowpass(10e3, 100e3),)),
    ),
    # Delta-sigma with a 2nd-order Butterworth at 20 kHz and a post-average of 4.
    "delta-sigma sinc3 + average 4 + Butterworth": (
        [AnalogLowpass("butterworth", 2, 20e3)],
        DigitalPath((SincFilter(3, 64, 64e3), SincFilter(1, 4, 1e3))),
    ),
}


@pytest.mark.parametrize("case", list(BRUTE_FORCE_CASES))
def test_folded_integral_matches_brute_force(case):
    # Independent check of the alias folding: numpy sum of S·|H_a|²·|H_d|² (S = 1 and
    # S = 1/f) on a fine linear grid out to 100–300·f_s, as described in _brute_force. The brute
    # force is accurate to ~1e-6 (64 points per lobe); resplan's log/linear grid and the
    # period-mean of far images agree within 4e-5 observed. Tolerance 1e-4.
    analog, path = BRUTE_FORCE_CASES[case]
    fs = path.sample_rate_hz
    lobe = path.finest_lobe_hz
    step = min(lobe / 64 if math.isfinite(lobe) else fs / 20_000, fs / 2000)
    f_low = 0.1
    # A single pole falls slowly: go to 300·f_s; steeper paths need only 100·f_s.
    top = (300 if sum(r.order for r in analog) == 1 else 100) * fs
    white, flicker = _brute_force(analog, path, f_low, top, step)
    nb = noise_bandwidth(analog, path, f_low)
    assert nb.white_hz == pytest.approx(white, rel=1e-4)
    assert nb.flicker == pytest.approx(flicker, rel=1e-4)


def test_integrate_psd_accepts_several_densities_at_once():
    # The last axis is frequency; leading axes are kept (two white levels, 1 and 4 V²/Hz).
    path = DigitalPath((SincFilter(3, 64, 64e3),))
    got = integrate_psd(
        lambda f: np.stack([np.ones_like(f), 4 * np.ones_like(f)]),
        [AnalogLowpass("rc", 1, 5e3)],
        path,
        0.1,
    )
    assert got.shape == (2,)
    assert got[1] == pytest.approx(4 * got[0], rel=1e-14)


def test_finer_grid_changes_little():
    # Convergence: 2000 against 8000 log points, within the 1e-5 the method claims.
    analog = [AnalogLowpass("rc", 1, 5e3)]
    path = DigitalPath((SincFilter(3, 64, 64e3),))
    coarse = noise_bandwidth(analog, path, 0.1, grid_points=2000)
    fine = noise_bandwidth(analog, path, 0.1, grid_points=8000)
    assert coarse.white_hz == pytest.approx(fine.white_hz, rel=1e-5)
    assert coarse.flicker == pytest.approx(fine.flicker, rel=1e-5)


# --- errors --------------------------------------------------------------------------------


def test_unbounded_analog_band_is_an_error():
    with pytest.raises(ChainError) as info:
        noise_bandwidth((), None, 0.01)
    assert info.value.field == "band"


def test_sampled_white_noise_without_an_analog_limit_is_an_error():
    # White noise of unlimited bandwidth aliases without end.
    with pytest.raises(ChainError) as info:
        noise_bandwidth((), DigitalPath((SincFilter(3, 64, 64e3),)), 0.01)
    assert "analog response" in str(info.value)


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        (dict(f_low_hz=0.0), "band.f_low"),
        (dict(f_low_hz=-1.0), "band.f_low"),
        (dict(f_low_hz=math.nan), "band.f_low"),
        (dict(f_low_hz=10.0, f_high_hz=10.0), "band.f_high"),
        (dict(f_low_hz=10.0, f_high_hz=1.0), "band.f_high"),
        (dict(f_low_hz=10.0, f_high_hz=math.inf), "band.f_high"),
    ],
)
def test_bad_band_edges(kwargs, field):
    with pytest.raises(DesignError) as info:
        noise_bandwidth([AnalogLowpass("rc", 1, 1e3)], **kwargs)
    assert info.value.field == field
    assert "expected" in str(info.value)


def test_lower_edge_above_half_the_sample_rate_is_an_error():
    with pytest.raises(DesignError) as info:
        noise_bandwidth([AnalogLowpass("rc", 1, 1e3)], DigitalPath((SincFilter(1, 4, 1e3),)), 600.0)
    assert info.value.field == "band.f_low"
    assert "f_s/2" in str(info.value)


def test_lower_edge_above_the_analog_top_is_an_error():
    with pytest.raises(DesignError) as info:
        noise_bandwidth([AnalogLowpass("rc", 1, 1.0)], f_low_hz=5e3)
    assert info.value.field == "band.f_low"


def test_digital_path_checks_its_rates():
    with pytest.raises(DesignError) as info:
        DigitalPath((SincFilter(3, 64, 64e3), SincFilter(1, 4, 2e3)))
    assert info.value.field == "digital_filter[1].input_rate"
    assert "1.00 kHz" in str(info.value)
    with pytest.raises(DesignError):
        DigitalPath(())
