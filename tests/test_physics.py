"""Noise physics checked against outside references.

Sources are named beside every check. Tolerances: exact SI constants compare
exactly; closed forms compare to ~1e-12 (float rounding); numerical references
(scipy.integrate.quad, a quantised numpy ramp) at the accuracy they reach.
"""

from __future__ import annotations

import math
from itertools import pairwise

import numpy as np
import pytest
from scipy import constants, integrate, special

from resplan.errors import DesignError, ResplanError
from resplan.noise import physics

K_B = constants.k  # CODATA 2018 / SI 2019, exact
Q_E = constants.e  # CODATA 2018 / SI 2019, exact


# --- constants ------------------------------------------------------------------------


def test_boltzmann_constant_is_the_exact_si_value():
    # SI 2019 redefinition (CODATA 2018): k = 1.380649e-23 J/K exactly; scipy.constants.k.
    assert physics.BOLTZMANN_J_PER_K == K_B == 1.380649e-23


def test_elementary_charge_is_the_exact_si_value():
    # SI 2019 redefinition (CODATA 2018): e = 1.602176634e-19 C exactly; scipy.constants.e.
    assert physics.ELEMENTARY_CHARGE_C == Q_E == 1.602176634e-19


# --- thermal and shot noise ------------------------------------------------------------


@pytest.mark.parametrize(
    ("resistance_ohm", "temperature_k"),
    [(1.0, 300.0), (50.0, 77.0), (1e3, 300.0), (350.0, 298.15), (1e6, 400.0), (0.0, 300.0)],
)
def test_thermal_noise_density_is_johnson_nyquist(resistance_ohm, temperature_k):
    # Johnson (1928), Nyquist (1928): e = sqrt(4kTR), k from scipy.constants (exact).
    expected = math.sqrt(4 * K_B * temperature_k * resistance_ohm)
    got = float(physics.thermal_noise_density(resistance_ohm, temperature_k))
    assert got == pytest.approx(expected, rel=1e-14, abs=0.0)


def test_one_kilohm_at_room_temperature_is_about_four_nanovolts():
    # Rule of thumb "1 kΩ ≈ 4 nV/√Hz" (common practice, no source); exact value at 300 K is
    # sqrt(4·k·300·1000) = 4.0703 nV/√Hz (Johnson–Nyquist with the exact k).
    e = float(physics.thermal_noise_density(1e3, 300.0))
    assert e == pytest.approx(4.0703e-9, rel=1e-4)
    assert e == pytest.approx(4e-9, rel=0.02)


def test_thermal_noise_is_vectorised():
    r = np.array([1e2, 1e3, 1e4])
    got = physics.thermal_noise_density(r, 300.0)
    assert got.shape == (3,)
    # sqrt(R) scaling: ten times the resistance gives sqrt(10) times the density.
    np.testing.assert_allclose(got[1:] / got[:-1], math.sqrt(10), rtol=1e-14)


@pytest.mark.parametrize("current_a", [1e-12, 1e-9, 1e-6, 1e-3, -1e-3])
def test_shot_noise_density_is_schottky(current_a):
    # Schottky (1918): i = sqrt(2 q |I|), q from scipy.constants (exact).
    expected = math.sqrt(2 * Q_E * abs(current_a))
    assert float(physics.shot_noise_density(current_a)) == pytest.approx(expected, rel=1e-14)


def test_shot_noise_of_one_milliamp():
    # sqrt(2 · 1.602e-19 C · 1 mA) = 17.90 pA/√Hz (hand calculation from the Schottky formula).
    assert float(physics.shot_noise_density(1e-3)) == pytest.approx(17.90e-12, rel=1e-3)


# --- 1/f + white -----------------------------------------------------------------------


def test_flicker_density_at_the_corner_is_root_two_times_white():
    # At f = f_c the 1/f power equals the white power (definition of the corner,
    # Motchenbacher & Connelly ch. 1), so the density is sqrt(2)·e_w.
    got = physics.flicker_white_density([1.0, 10.0, 100.0], 3e-9, [1.0, 10.0, 100.0])
    np.testing.assert_allclose(got, math.sqrt(2) * 3e-9, rtol=1e-14)


def test_flicker_density_is_white_with_no_corner():
    got = physics.flicker_white_density(np.geomspace(1e-3, 1e6, 7), 5e-9, 0.0)
    np.testing.assert_allclose(got, 5e-9, rtol=0)


@pytest.mark.parametrize(
    ("white", "corner_hz", "f_low_hz", "f_high_hz"),
    [
        (10e-9, 0.0, 1.0, 101.0),
        (10e-9, 10.0, 0.1, 10.0),
        (4e-9, 100.0, 0.01, 1e3),
        (1e-6, 1.0, 1e-3, 1e5),
        (2.5e-12, 50.0, 0.5, 2.0),
    ],
)
def test_integrate_flicker_white_matches_quad_of_the_density(white, corner_hz, f_low_hz, f_high_hz):
    # Reference: scipy.integrate.quad of e_w²(1 + f_c/f) over [f_L, f_H] (the density model of
    # Motchenbacher & Connelly ch. 1), split at each decade so quad resolves the 1/f end.
    # quad reaches ~1e-12 relative here; the tolerance 1e-9 leaves room for float rounding.
    def density_sq(f):
        return float(physics.flicker_white_density(f, white, corner_hz)) ** 2

    edges = np.unique(np.concatenate([np.geomspace(f_low_hz, f_high_hz, 12)]))
    reference = sum(integrate.quad(density_sq, a, b)[0] for a, b in pairwise(edges))
    got = float(physics.integrate_flicker_white(white, corner_hz, f_low_hz, f_high_hz))
    assert got == pytest.approx(math.sqrt(reference), rel=1e-9)


def test_flicker_noise_grows_with_log_of_band_ratio():
    # 1/f noise: each decade adds the same power e_w²·f_c·ln10 (closed-form integral of 1/f).
    one = float(physics.integrate_flicker_white(1.0, 1.0, 0.1, 1.0)) ** 2 - 0.9
    two = float(physics.integrate_flicker_white(1.0, 1.0, 0.01, 0.1)) ** 2 - 0.09
    assert one == pytest.approx(math.log(10), rel=1e-12)
    assert two == pytest.approx(math.log(10), rel=1e-12)


@pytest.mark.parametrize(
    ("f_low", "f_high", "field"),
    [
        (0.0, 10.0, "band.f_low"),
        (-1.0, 10.0, "band.f_low"),
        (math.nan, 10.0, "band.f_low"),
        (math.inf, 10.0, "band.f_low"),
        (10.0, 10.0, "band.f_high"),
        (10.0, 1.0, "band.f_high"),
        (1.0, math.inf, "band.f_high"),
        (1.0, math.nan, "band.f_high"),
    ],
)
def test_integrate_flicker_white_rejects_bad_bands(f_low, f_high, field):
    with pytest.raises(DesignError) as info:
        physics.integrate_flicker_white(1e-9, 1.0, f_low, f_high)
    assert info.value.field == field
    assert "expected" in str(info.value) and field in str(info.value)


# --- current noise, kT/C, combining ------------------------------------------------------


def test_current_noise_voltage_is_ohms_law():
    # i·R (Ohm's law on the noise current): 1 pA/√Hz in 10 kΩ is 10 nV/√Hz.
    assert float(physics.current_noise_voltage(1e-12, 10e3)) == pytest.approx(10e-9, rel=1e-15)


def test_ktc_of_one_picofarad_at_300_k():
    # Standard result sqrt(kT/C) (DOMAIN.md §2; Motchenbacher & Connelly ch. 1):
    # 1 pF at 300 K ≈ 64 µV rms; exact value with k from scipy.constants.
    got = float(physics.ktc_noise_rms(1e-12, 300.0))
    assert got == pytest.approx(math.sqrt(K_B * 300.0 / 1e-12), rel=1e-14)
    assert got == pytest.approx(64.4e-6, rel=1e-3)


def test_ktc_equals_4ktr_times_rc_noise_bandwidth():
    # 4kTR · (π/2)·1/(2πRC) = kT/C for any R: the single-pole ENBW (π/2)f_c (closed form).
    for r in (10.0, 1e3, 1e6):
        c = 1e-9
        nbw = math.pi / 2 / (2 * math.pi * r * c)
        via_r = float(physics.thermal_noise_density(r, 300.0)) * math.sqrt(nbw)
        assert via_r == pytest.approx(float(physics.ktc_noise_rms(c, 300.0)), rel=1e-13)


def test_two_equal_sources_give_root_two():
    # Uncorrelated sources add in power: two equal give sqrt(2)·one
    # (common practice, no source; follows from variances adding).
    assert float(physics.root_sum_square([1.0, 1.0])) == pytest.approx(math.sqrt(2), rel=1e-15)


def test_a_fifth_adds_about_two_percent():
    # Rule of thumb "a source 1/5 of another adds ≈ 2 %" (common practice, no source):
    # sqrt(1 + 0.2²) = 1.0198.
    total = float(physics.root_sum_square([1.0, 0.2]))
    assert total == pytest.approx(1.0198039, rel=1e-7)
    assert total - 1 == pytest.approx(0.02, abs=0.001)


def test_root_sum_square_along_an_axis():
    got = physics.root_sum_square([[3.0, 5.0], [4.0, 12.0]], axis=0)
    np.testing.assert_allclose(got, [5.0, 13.0], rtol=1e-15)


# --- Gaussian coverage --------------------------------------------------------------------


@pytest.mark.parametrize(
    "coverage", [0.5, 0.6827, 0.9, 0.95, 0.99, 0.9973, 0.999, 0.9999, 1 - 1e-9]
)
def test_peak_to_peak_factor_is_two_root_two_erfinv(coverage):
    # Gaussian coverage (JCGM 100:2008 annex G): k_pp = 2·sqrt(2)·erfinv(P); reference
    # scipy.special.erfinv. The code uses statistics.NormalDist().inv_cdf((1 + P)/2). Near
    # P → 1 the inverse is ill-conditioned: the float rounding of 1 − P (relative 1e-7 at
    # P = 1 − 1e-9) moves k_pp by ~3e-9 relative, hence the tolerance 1e-8.
    expected = 2 * math.sqrt(2) * float(special.erfinv(coverage))
    assert physics.peak_to_peak_factor(coverage) == pytest.approx(expected, rel=1e-8)


@pytest.mark.parametrize("factor", [0.5, 1.0, 2.0, 4.0, 6.0, 6.6, 8.0])
def test_coverage_for_factor_is_erf(factor):
    # P = erf(k_pp/(2√2)) (Gaussian coverage); reference scipy.special.erf.
    expected = float(special.erf(factor / (2 * math.sqrt(2))))
    assert physics.coverage_for_factor(factor) == pytest.approx(expected, rel=1e-14)


def test_six_sigma_covers_99_73_percent():
    # ±3σ of a Gaussian covers 99.73 % (any statistics table; scipy.special.erf(3/√2)).
    assert physics.coverage_for_factor(6.0) == pytest.approx(0.9973002, rel=1e-7)
    assert physics.peak_to_peak_factor(0.9973) == pytest.approx(6.0, abs=1e-3)


def test_six_point_six_sigma_is_the_trades_rounding_of_99_9_percent():
    # k_pp(99.9 %) = 2√2·erfinv(0.999) = 6.5811; the trade rounds it to 6.6 (common practice,
    # no source), which covers 99.903 %.
    assert physics.peak_to_peak_factor(0.999) == pytest.approx(6.5811, abs=1e-4)
    assert physics.peak_to_peak_factor(0.999) == pytest.approx(6.6, abs=0.02)
    assert physics.coverage_for_factor(6.6) == pytest.approx(0.999, abs=5e-5)


@pytest.mark.parametrize("coverage", [0.001, 0.5, 0.99, 0.999999])
def test_coverage_round_trip(coverage):
    factor = physics.peak_to_peak_factor(coverage)
    assert physics.coverage_for_factor(factor) == pytest.approx(coverage, rel=1e-12)


@pytest.mark.parametrize("coverage", [0.0, 1.0, -0.1, 1.5, math.nan, math.inf, "0.99"])
def test_peak_to_peak_factor_rejects_bad_coverage(coverage):
    with pytest.raises(ResplanError) as info:
        physics.peak_to_peak_factor(coverage)
    assert info.value.field == "requirement.coverage"
    assert "probability between 0 and 1" in str(info.value)


@pytest.mark.parametrize("factor", [0.0, -1.0, math.nan, math.inf])
def test_coverage_for_factor_rejects_bad_factor(factor):
    with pytest.raises(DesignError) as info:
        physics.coverage_for_factor(factor)
    assert info.value.field == "coverage_factor"


# --- quantisation and converter figures ----------------------------------------------------


@pytest.mark.parametrize(("fsr", "bits"), [(5.0, 12), (4.096, 16), (10.0, 18), (2.5, 24), (1.0, 1)])
def test_quantisation_noise_is_bennett(fsr, bits):
    # Bennett (1948): q = FSR/2^N, σ_q = q/sqrt(12).
    expected = fsr / 2**bits / math.sqrt(12)
    assert float(physics.quantisation_noise_rms(fsr, bits)) == pytest.approx(expected, rel=1e-15)


def test_quantisation_noise_matches_a_quantised_ramp():
    # Independent check: quantise a dense uniform ramp spanning many LSBs with numpy (rounding
    # quantiser) and take the variance of the error. For a ramp the error is a sawtooth whose
    # variance is q²/12; with 2e6 samples over a non-integer number of LSBs the estimate is
    # within ~1e-4 (end effects of the partial LSB), so the tolerance is 1e-3.
    fsr, bits = 2.0, 10
    q = fsr / 2**bits
    x = np.linspace(-fsr / 2, fsr / 2 - 0.37 * q, 2_000_001)
    error = x - q * np.round(x / q)
    sigma = float(np.std(error))
    assert sigma == pytest.approx(float(physics.quantisation_noise_rms(fsr, bits)), rel=1e-3)


@pytest.mark.parametrize("bits", [1, 8, 12, 16, 18, 20, 24, 32])
def test_ideal_snr_is_ieee_1241(bits):
    # IEEE Std 1241-2010: SNR = 6.02 N + 1.76 dB. The code uses the exact constants
    # 20·log10 2 = 6.0206 and 10·log10 1.5 = 1.7609, so it differs from the rounded formula by
    # at most 0.0006 dB per bit + 0.0009 dB; tolerance 0.001 dB per bit + 0.001 dB.
    got = float(physics.ideal_snr_db(bits))
    assert got == pytest.approx(6.02 * bits + 1.76, abs=0.001 * bits + 0.001)
    assert got == pytest.approx(20 * bits * math.log10(2) + 10 * math.log10(1.5), rel=1e-14)


@pytest.mark.parametrize("sinad_db", [20.0, 74.0, 98.09, 110.0, 146.0])
def test_enob_is_ieee_1241(sinad_db):
    # IEEE Std 1241-2010: ENOB = (SINAD − 1.76)/6.02; exact constants in the code, so a
    # tolerance of 0.01 bit covers the rounding (≤ 0.0025 bit at 146 dB).
    got = float(physics.enob_from_sinad(sinad_db))
    assert got == pytest.approx((sinad_db - 1.76) / 6.02, abs=0.01)
    assert float(physics.ideal_snr_db(got)) == pytest.approx(sinad_db, rel=1e-14)


@pytest.mark.parametrize("bits", [8, 12, 16, 24])
def test_snr_of_an_ideal_converter_gives_back_bennett_noise(bits):
    # IEEE Std 1241 defines the ideal SNR with a full-scale sine (rms FSR/(2√2)) against
    # q/√12 (Bennett 1948): converting that SNR back must give q/√12.
    fsr = 4.096
    sigma = float(physics.snr_to_noise_rms(physics.ideal_snr_db(bits), fsr))
    assert sigma == pytest.approx(fsr / 2**bits / math.sqrt(12), rel=1e-12)


@pytest.mark.parametrize(("snr_db", "fsr"), [(100.0, 5.0), (84.3, 10.0), (120.0, 2 * 2.5)])
def test_snr_to_noise_rms_formula_and_inverse(snr_db, fsr):
    # σ = FSR/(2√2)·10^(−SNR/20) (DOMAIN.md §5, IEEE Std 1241 definitions).
    sigma = float(physics.snr_to_noise_rms(snr_db, fsr))
    assert sigma == pytest.approx(fsr / (2 * math.sqrt(2)) * 10 ** (-snr_db / 20), rel=1e-14)
    assert float(physics.noise_rms_to_snr(sigma, fsr)) == pytest.approx(snr_db, rel=1e-13)


@pytest.mark.parametrize(
    ("order", "constant_db", "slope_db_per_decade"),
    # Schreier & Temes, Understanding Delta-Sigma Data Converters (2005), ch. 1: an ideal
    # L-th order modulator loses 10·log10(π^2L/(2L+1)) dB and gains (2L+1)·10 dB per decade of
    # OSR. 10·log10(π²/3) = 5.17 dB and 10·log10(π⁴/5) = 12.90 dB (from memory; recomputed by
    # hand, as is 10·log10(π⁶/7) = 21.38 dB).
    [(1, 5.17, 30.0), (2, 12.90, 50.0), (3, 21.38, 70.0)],
)
def test_delta_sigma_sqnr_constants(order, constant_db, slope_db_per_decade):
    base = float(physics.delta_sigma_sqnr_db(1, order, 1))
    assert base == pytest.approx(6.02 + 1.76 - constant_db, abs=0.01)
    decade = float(physics.delta_sigma_sqnr_db(1, order, 640)) - float(
        physics.delta_sigma_sqnr_db(1, order, 64)
    )
    assert decade == pytest.approx(slope_db_per_decade, rel=1e-12)


def test_oversampling_gains_half_a_bit_per_doubling():
    # Schreier & Temes ch. 1: white noise spread over fs/2, keeping f_B gives 10·log10(OSR) dB;
    # a doubling is 3.01 dB = half of 6.02 dB per bit.
    assert float(physics.oversampling_gain_db(4)) == pytest.approx(6.0206, abs=1e-4)
    per_doubling = float(physics.oversampling_gain_db(256) - physics.oversampling_gain_db(128))
    assert per_doubling == pytest.approx(20 * math.log10(2) / 2, rel=1e-12)
