"""The hand-method helpers against their published formulas.

References, named at each check:
- Motchenbacher & Connelly, *Low-Noise Electronic System Design* (Wiley 1993),
  ch. 1 and 4: the non-inverting stage's input-referred density and the cascade
  σ_RTI² = σ₁² + σ₂²/G₁² + …, written out here term by term with
  ``scipy.constants.k`` (exact, SI 2019).
- Resistor-network noise: RF and RG referred to the input one by one (RF's
  4kTRF at the output divided by NG, RG's 4kTRG times RF/RG at the output
  divided by NG) give 4kT·RF‖RG — a derivation, no lookup (from memory of the
  standard result).
- Schreier & Temes, *Understanding Delta-Sigma Data Converters* (2005), ch. 1:
  OSR = fs/(2f_B), processing gain 10·log10(OSR) dB, half a bit per doubling.
- Kester, ed., *Data Conversion Handbook* (2005), ch. 5: effective and
  noise-free resolution; Gaussian coverage via ``scipy.special.erfinv``.
Values of parts are INVENTED round numbers.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import constants, special

import resplan
from resplan import (
    Band,
    Requirement,
    amplifier_input_density,
    cascade_input_noise,
    coverage_factor,
    coverage_for_factor,
    effective_bits_from_rms,
    forward_budget,
    noise_free_bits_from_rms,
    non_inverting_input_density,
    oversampling_bits,
    oversampling_gain_db,
    oversampling_ratio,
    peak_to_peak_factor,
    refer_through_gains,
    reference_noise_at_input,
)
from resplan.errors import DesignError

K = constants.k


def _m_and_c(en, rs, ip, im, rf, rg, t):
    """Motchenbacher & Connelly's non-inverting e_RTI², term by term."""
    rp = rf * rg / (rf + rg)
    return 4 * K * t * rs + en**2 + (ip * rs) ** 2 + (im * rp) ** 2 + 4 * K * t * rp


@pytest.mark.parametrize(
    "en, rs, ip, im, rf, rg, t",
    [
        (5e-9, 1e3, 1e-12, 1e-12, 10e3, 1e3, 300.0),
        (1e-9, 350.0, 2e-12, 4e-12, 99e3, 1e3, 273.15),
        (20e-9, 100e3, 10e-15, 10e-15, 1e3, 1e3, 350.0),
    ],
)
def test_non_inverting_density_is_motchenbacher_connelly(en, rs, ip, im, rf, rg, t):
    got = non_inverting_input_density(
        en,
        source_resistance_ohm=rs,
        in_plus_a_per_rthz=ip,
        in_minus_a_per_rthz=im,
        feedback_ohm=rf,
        gain_resistor_ohm=rg,
        temperature_k=t,
    )
    assert float(got) ** 2 == pytest.approx(_m_and_c(en, rs, ip, im, rf, rg, t), rel=1e-12)


def test_rf_rg_terms_refer_to_the_parallel_resistance():
    # RF's noise at the output is 4kT·RF (gain 1 from its own node), RG's is 4kT·RG·(RF/RG)²;
    # divided by NG² = (1 + RF/RG)² they sum to 4kT·RF‖RG (derivation, see the module note).
    rf, rg, t = 49e3, 1e3, 300.0
    ng = 1 + rf / rg
    out = 4 * K * t * rf + 4 * K * t * rg * (rf / rg) ** 2
    got = non_inverting_input_density(0.0, feedback_ohm=rf, gain_resistor_ohm=rg, temperature_k=t)
    assert float(got) ** 2 == pytest.approx(out / ng**2, rel=1e-12)


def test_one_kilohm_is_four_nanovolts():
    # √(4kTR) of 1 kΩ at 300 K = 4.07 nV/√Hz (DOMAIN.md §10; scipy.constants.k).
    got = non_inverting_input_density(0.0, source_resistance_ohm=1e3, temperature_k=300.0)
    assert float(got) == pytest.approx(math.sqrt(4 * K * 300 * 1e3), rel=1e-12)
    assert float(got) == pytest.approx(4.07e-9, abs=0.005e-9)


def test_follower_and_source_switch():
    # A follower (RG = inf) sees RF in series at its − input; RF = 0 removes those terms.
    f = non_inverting_input_density(3e-9, source_resistance_ohm=1e3, include_source=False)
    assert float(f) == pytest.approx(3e-9, rel=1e-15)
    rs_only = non_inverting_input_density(3e-9, source_resistance_ohm=1e3)
    assert float(rs_only) ** 2 == pytest.approx(9e-18 + 4 * K * 300 * 1e3, rel=1e-12)


def test_non_inverting_density_is_vectorised():
    rs = np.array([10.0, 1e3, 1e5])
    got = non_inverting_input_density(5e-9, source_resistance_ohm=rs, in_plus_a_per_rthz=1e-12)
    want = [math.sqrt(_m_and_c(5e-9, r, 1e-12, 1e-12, 0.0, 1.0, 300.0)) for r in rs]
    assert got.shape == (3,)
    assert got == pytest.approx(want, rel=1e-12)


def test_amplifier_input_and_output_noise():
    # e_RTI² = e_in² + (e_out/G)² (Kester, Data Conversion Handbook, ch. 5).
    g = np.array([1.0, 10.0, 1000.0])
    got = amplifier_input_density(10e-9, 100e-9, g)
    assert got == pytest.approx(np.hypot(10e-9, 100e-9 / g), rel=1e-15)


def test_cascade_is_the_textbook_sum():
    # σ² = σ₁² + σ₂²/G₁² + σ₃²/(G₁G₂)² (Motchenbacher & Connelly, ch. 1).
    s, g = [1e-6, 20e-6, 300e-6], [10.0, 5.0]
    want = math.sqrt(1e-12 + (20e-6 / 10) ** 2 + (300e-6 / 50) ** 2)
    assert float(cascade_input_noise(s, g)) == pytest.approx(want, rel=1e-14)
    assert float(cascade_input_noise(s, [*g, 123.0])) == pytest.approx(want, rel=1e-14)
    batch = cascade_input_noise(np.array([s, s]), np.array([g, [1.0, 1.0]]))
    assert batch[1] == pytest.approx(math.sqrt(1e-12 + 400e-12 + 90000e-12), rel=1e-14)
    with pytest.raises(DesignError):
        cascade_input_noise(s, [1.0])


def test_refer_through_gains():
    assert float(refer_through_gains(1e-3, [10.0, 100.0])) == pytest.approx(1e-6, rel=1e-15)
    assert refer_through_gains([1.0, 2.0], 4.0) == pytest.approx([0.25, 0.5])


def test_reference_noise_scales_with_input():
    # V_in·σ_ref/V_ref (DOMAIN.md §5; Kester, ch. 7): zero at zero input, σ_ref at V_ref.
    v = np.array([0.0, 1.25, 2.5, -2.5])
    got = reference_noise_at_input(v, 4e-6, 2.5)
    assert got == pytest.approx([0.0, 2e-6, 4e-6, 4e-6], rel=1e-15)


@pytest.mark.parametrize("osr", [2, 4, 16, 256, 1000])
def test_oversampling_gain(osr):
    # 10·log10(OSR) dB and half a bit per doubling (Schreier & Temes, ch. 1); 6.02 dB per bit.
    assert float(oversampling_gain_db(osr)) == pytest.approx(10 * math.log10(osr), rel=1e-15)
    assert float(oversampling_bits(osr)) == pytest.approx(
        10 * math.log10(osr) / (20 * math.log10(2)), rel=1e-14
    )
    assert float(oversampling_bits(2 * osr) - oversampling_bits(osr)) == pytest.approx(0.5)


def test_oversampling_ratio():
    assert float(oversampling_ratio(256e3, 10.0)) == pytest.approx(12800.0)


def test_effective_bits():
    # log2(S/σ) (Kester, ch. 5).
    got = effective_bits_from_rms(np.array([1.0, 10.0]), np.array([2.0**-20, 1e-6]))
    assert got == pytest.approx([20.0, math.log2(1e7)], rel=1e-15)
    assert effective_bits_from_rms(1.0, 0.0) == math.inf


@pytest.mark.parametrize("coverage", [0.9973, 0.999, 0.99999])
def test_noise_free_bits_with_a_coverage(coverage):
    # k_pp = 2√2·erfinv(P) (JCGM 100:2008 annex G; scipy.special.erfinv).
    k = 2 * math.sqrt(2) * float(special.erfinv(coverage))
    got = noise_free_bits_from_rms(5.0, 1e-6, coverage=coverage)
    assert float(got) == pytest.approx(math.log2(5.0 / (k * 1e-6)), rel=1e-12)


def test_noise_free_bits_with_a_factor_keeps_it():
    assert float(noise_free_bits_from_rms(6.6, 1e-3, k_pp=6.6)) == math.log2(1000.0)
    assert coverage_factor(k_pp=6.6) == 6.6
    with pytest.raises(DesignError):
        noise_free_bits_from_rms(1.0, 1e-3)
    with pytest.raises(DesignError):
        noise_free_bits_from_rms(1.0, 1e-3, coverage=0.999, k_pp=6.6)


def test_a_stated_factor_survives_requirement_and_budget():
    # 6.6 is the trade's rounding of 99.9 % (common practice, no source): stated as a
    # factor it must come back exactly, not as 6.599999999999994.
    p = coverage_for_factor(6.6)
    assert peak_to_peak_factor(p) == 6.6
    assert p == pytest.approx(float(special.erf(6.6 / (2 * math.sqrt(2)))), rel=1e-14)
    req = Requirement(span_v=10e-3, noise_free_counts=1000, coverage=p)
    assert req.k_pp == 6.6
    from invented import invented_bridge_chain

    budget = forward_budget(invented_bridge_chain(), Band(0.1, 10.0), requirement=req)
    assert budget.k_pp == 6.6
    assert budget.to_dict()["coverage_factor_pp"] == 6.6


def test_helpers_are_public():
    for name in ("non_inverting_input_density", "cascade_input_noise", "oversampling_bits"):
        assert name in resplan.__all__
