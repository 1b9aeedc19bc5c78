"""The forward budget checked term by term against hand formulas.

Chains here are INVENTED (demo values, see conftest.py). A SAR ADC without a
digital filter passes all the analog noise (DOMAIN.md §4), so a single pole
gives closed-form noise bandwidths:

    ∫_{f_L}^∞ df / (1 + (f/f_p)²)      = f_p·(π/2 − atan(f_L/f_p))
    ∫_{f_L}^∞ df / (f·(1 + (f/f_p)²))  = ½·ln(1 + (f_p/f_L)²)

(standard integrals; partial fractions). The budget integrates numerically
(midpoint rule on a log grid, ~1e-5); tolerances of 3e-5 relative on variances.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from scipy import constants

from resplan import (
    ADC,
    ActiveFilter,
    Band,
    DigitalPath,
    IdealLowpass,
    InputNoiseDensity,
    IntegratedAmplifier,
    NoiseAtRate,
    NoiseDensity,
    NoiseTable,
    NonInvertingStage,
    RCFilter,
    Reference,
    Requirement,
    Sensor,
    SincFilter,
    SnrNoise,
    TransitionNoise,
    forward_budget,
)
from resplan.chain.signal_chain import Chain
from resplan.errors import ChainError, DesignError, ResplanError

K_B = constants.k  # exact (SI 2019)
T = 300.0
F_LOW = 0.01
RTOL = 3e-5


def _pole_white(fp, f_low=F_LOW):
    return fp * (math.pi / 2 - math.atan(f_low / fp))


def _pole_flicker(fp, f_low=F_LOW):
    return 0.5 * math.log1p((fp / f_low) ** 2)


def _variance(white, corner, fp):
    return white**2 * (_pole_white(fp) + corner * _pole_flicker(fp))


def _by_name(budget):
    return {(c.stage, c.name): c for c in budget.contributions}


def _sar(noise=None, bits=16, fsr=10.0, rate=1e6):
    """An INVENTED SAR converter (demo values)."""
    return ADC("invented SAR", "sar", bits, fsr, rate, noise or TransitionNoise(0.0))


# --- stages referred to the input ------------------------------------------------------


def test_non_inverting_stage_matches_the_hand_formula():
    # Motchenbacher & Connelly, Low-Noise Electronic System Design, ch. 2 (DOMAIN.md §2):
    # e_RTI² = 4kTR_s + e_n² + (i_n+·R_s)² + (i_n−·RF‖RG)² + 4kT·(RF‖RG), each term with its
    # own 1/f corner, integrated over the closed-loop pole GBW/(1 + RF/RG). The solver keeps
    # RF and RG as two sources, 4kT/RF and 4kT/RG into RF‖RG: together 4kT·(RF‖RG).
    rs, rf, rg = 2e3, 99e3, 1e3
    en, in_p, in_m = NoiseDensity(3e-9, 2.0), NoiseDensity(1e-12, 30.0), NoiseDensity(2e-12, 50.0)
    stage = NonInvertingStage("invented op-amp", rf, rg, en, in_p, in_m, gbw_hz=10e6)
    chain = Chain(Sensor(20e-3, rs, name="invented source"), (stage,), _sar(), temperature_k=T)
    budget = forward_budget(chain, Band(F_LOW))
    fp = 10e6 / 100.0
    rp = rf * rg / (rf + rg)
    expected = {
        ("invented source", "thermal noise of source resistance"): (
            math.sqrt(4 * K_B * T * rs),
            0.0,
        ),
        ("invented op-amp", "e_n"): (3e-9, 2.0),
        ("invented op-amp", "i_n+"): (1e-12 * rs, 30.0),
        ("invented op-amp", "i_n−"): (2e-12 * rp, 50.0),
        ("invented op-amp", "thermal noise of RF"): (math.sqrt(4 * K_B * T / rf) * rp, 0.0),
        ("invented op-amp", "thermal noise of RG"): (math.sqrt(4 * K_B * T / rg) * rp, 0.0),
    }
    got = _by_name(budget)
    for key, (white, corner) in expected.items():
        assert got[key].rms_v ** 2 == pytest.approx(_variance(white, corner, fp), rel=RTOL), key
        assert got[key].density_v_per_rthz == pytest.approx(white, rel=1e-9)
        assert got[key].adc_rms_v == pytest.approx(got[key].rms_v * 100.0, rel=1e-12)
    rti_sq = sum(_variance(w, c, fp) for w, c in expected.values())
    analog_sq = sum(c.rms_v**2 for c in budget.contributions if c.stage != "invented SAR")
    assert analog_sq == pytest.approx(rti_sq, rel=RTOL)


def test_follower_has_no_feedback_terms():
    stage = NonInvertingStage(
        "invented follower", 0.0, None, NoiseDensity(5e-9), NoiseDensity(1e-12)
    )
    assert stage.gain == 1.0 and stage.feedback_parallel_ohm == 0.0
    budget = forward_budget(
        Chain(Sensor(1.0, 1e3), (stage, RCFilter("rc", 100.0, 1e-9)), _sar()), Band(F_LOW)
    )
    names = {c.name for c in budget.contributions if c.stage == "invented follower"}
    assert names == {"e_n", "i_n+"}


def test_integrated_amplifier_matches_input_plus_output_over_gain():
    # Two-stage in-amp model (Motchenbacher & Connelly ch. 2; DOMAIN.md §2):
    # e_RTI² = e_in² + (e_out/G)² (+ (i_n·R_s)²), here over its own 20 kHz pole.
    g = 50.0
    amp = IntegratedAmplifier(
        "invented in-amp",
        g,
        NoiseDensity(10e-9, 1.0),
        NoiseDensity(100e-9, 5.0),
        NoiseDensity(0.5e-12, 0.0),
        bandwidth_hz=20e3,
    )
    rs = 5e3
    budget = forward_budget(Chain(Sensor(0.1, rs), (amp,), _sar(), temperature_k=T), Band(F_LOW))
    got = _by_name(budget)
    fp = 20e3
    assert got[("invented in-amp", "input noise")].rms_v ** 2 == pytest.approx(
        _variance(10e-9, 1.0, fp), rel=RTOL
    )
    assert got[("invented in-amp", "output noise / G")].rms_v ** 2 == pytest.approx(
        _variance(100e-9 / g, 5.0, fp), rel=RTOL
    )
    assert got[("invented in-amp", "i_n")].rms_v ** 2 == pytest.approx(
        _variance(0.5e-12 * rs, 0.0, fp), rel=RTOL
    )


def test_later_stages_are_divided_by_the_gain_in_front():
    # Cascade (DOMAIN.md §3, Friis-style referral): σ_RTI² = σ₁² + σ₂²/G₁². Stage 1 sees both
    # poles: ∫ df/((1+(f/a)²)(1+(f/b)²)) = (π/2)·ab/(a+b) (standard integral); stage 2 its own.
    a, b = 1e6, 20e3
    first = IntegratedAmplifier("first", 10.0, NoiseDensity(4e-9), bandwidth_hz=a)
    second = IntegratedAmplifier("second", 20.0, NoiseDensity(30e-9), bandwidth_hz=b)
    chain = Chain(Sensor(0.01, 10.0), (first, second), _sar(), temperature_k=T)
    got = _by_name(forward_budget(chain, Band(F_LOW)))
    two_poles = math.pi / 2 * a * b / (a + b)
    assert got[("first", "input noise")].rms_v == pytest.approx(
        4e-9 * math.sqrt(two_poles), rel=RTOL
    )
    assert got[("second", "input noise")].rms_v == pytest.approx(
        30e-9 * math.sqrt(_pole_white(b)) / 10.0, rel=RTOL
    )
    assert got[("second", "input noise")].gain_in_front == 10.0


def test_current_noise_sees_passive_filter_resistance_and_not_through_an_active_stage():
    # Each input's current noise flows in the resistance at that input (DOMAIN.md §2): the
    # source plus the RC's series resistor; an active stage's output resets it to zero.
    amp = IntegratedAmplifier("amp", 1.0, NoiseDensity(1e-9), current_noise=NoiseDensity(1e-12))
    after = IntegratedAmplifier("after", 1.0, NoiseDensity(1e-9), current_noise=NoiseDensity(1e-12))
    chain = Chain(
        Sensor(1.0, 1e3),
        (RCFilter("rc", 4e3, 1e-9), amp, after, RCFilter("rc2", 10.0, 1e-9)),
        _sar(),
    )
    got = _by_name(forward_budget(chain))
    assert got[("amp", "i_n")].density_v_per_rthz == pytest.approx(5e3 * 1e-12)
    assert ("after", "i_n") not in got


@pytest.mark.parametrize("resistance_ohm", [1e3, 100e3])
def test_rc_filter_alone_integrates_to_ktc_independent_of_r(resistance_ohm):
    # kT/C (DOMAIN.md §2; Motchenbacher & Connelly ch. 1): the thermal noise of all the
    # resistance in series with C, over that RC's ENBW 1/(4(R+R_s)C), is kT/C whatever R.
    # Here the source (R_s) and the filter resistor share it in proportion to R.
    # 1 nF at 300 K: 2.035 µV rms. The f_L = 0.01 Hz left out of the integral is below
    # 1e-5 of either band; tolerance 3e-5.
    c = 1e-9
    r_source = 1.0
    chain = Chain(
        Sensor(1.0, r_source),
        (RCFilter("invented RC", resistance_ohm, c),),
        _sar(),
        None,
        temperature_k=T,
    )
    got = _by_name(forward_budget(chain, Band(F_LOW)))
    rc = got[("invented RC", "thermal noise of R")]
    source = got[("sensor", "thermal noise of source resistance")]
    ktc = K_B * T / c
    assert math.hypot(rc.rms_v, source.rms_v) == pytest.approx(math.sqrt(ktc), rel=RTOL)
    assert rc.rms_v**2 == pytest.approx(
        ktc * resistance_ohm / (resistance_ohm + r_source), rel=RTOL
    )
    assert math.hypot(rc.rms_v, source.rms_v) == pytest.approx(2.035e-6, rel=1e-3)


def test_sensor_temperature_sets_its_thermal_noise():
    # √(4kTR) at the sensor's own temperature, not the electronics' (Johnson–Nyquist).
    hot = Sensor(1.0, 1e3, temperature_k=400.0, name="hot")
    chain = Chain(hot, (RCFilter("rc", 1.0, 1e-9),), _sar(), temperature_k=T)
    got = _by_name(forward_budget(chain))
    assert got[("hot", "thermal noise of source resistance")].density_v_per_rthz == pytest.approx(
        math.sqrt(4 * K_B * 400.0 * 1e3), rel=1e-12
    )


def test_active_filter_noise_terms():
    flt = ActiveFilter(
        "invented filter",
        "butterworth",
        4,
        10e3,
        gain=2.0,
        noise_resistance_ohm=5e3,
        en=NoiseDensity(7e-9),
    )
    chain = Chain(Sensor(1.0, 1.0), (flt,), _sar(), temperature_k=T)
    got = _by_name(forward_budget(chain, Band(F_LOW)))
    enbw = 10e3 * (math.pi / 8) / math.sin(math.pi / 8)  # Butterworth closed form
    assert got[("invented filter", "e_n")].rms_v == pytest.approx(7e-9 * math.sqrt(enbw), rel=RTOL)
    assert got[("invented filter", "thermal noise of equivalent R")].rms_v == pytest.approx(
        math.sqrt(4 * K_B * T * 5e3 * enbw), rel=RTOL
    )


# --- reference ---------------------------------------------------------------------------


@pytest.mark.parametrize(("bipolar", "peak"), [(True, 2.0), (False, 4.0)])
def test_reference_error_is_input_over_reference_times_its_noise(bipolar, peak):
    # DOMAIN.md §5: an input V_in at the ADC sees V_in·σ_ref/V_ref, evaluated at the largest
    # input (span/2 for a bipolar sensor, the span for a unipolar one; gain 1 here).
    ref = Reference(5.0, NoiseDensity(20e-9, 0.0), filter_cutoff_hz=100.0)
    chain = Chain(Sensor(4.0, 10.0, bipolar=bipolar), (RCFilter("rc", 10.0, 1e-9),), _sar(), ref)
    got = _by_name(forward_budget(chain, Band(F_LOW)))
    sigma_ref = 20e-9 * math.sqrt(_pole_white(100.0))
    assert got[("reference", "reference noise at full input")].adc_rms_v == pytest.approx(
        peak * sigma_ref / 5.0, rel=RTOL
    )


def test_ratiometric_reference_counts_zero(bridge_chain):
    # Ratiometric excitation cancels reference noise to first order (DOMAIN.md §5).
    ref = Reference(5.0, NoiseDensity(20e-9), filter_cutoff_hz=100.0, ratiometric=True)
    budget = forward_budget(bridge_chain(reference=ref))
    (c,) = [c for c in budget.contributions if c.kind == "reference"]
    assert c.rms_v == 0.0 and "ratiometric" in c.note
    assert "ratiometric" in budget.reference_note


def test_reference_without_a_filter_is_flat_to_half_the_sample_rate():
    # The chain's stated assumption (Chain.reference_bandwidth, named in the reference note):
    # with no reference filter the density is flat to f_s/2 and zero above, so
    # σ_ref = e·√(f_s/2 − f_L) (brick-wall closed form) without a digital filter.
    ref = Reference(5.0, NoiseDensity(20e-9))
    chain = Chain(Sensor(1.0, 10.0), (RCFilter("rc", 10.0, 1e-9),), _sar(), ref)
    b = forward_budget(chain, Band(F_LOW))
    got = _by_name(b)[("reference", "reference noise at full input")]
    assert got.adc_rms_v == pytest.approx(1.0 / 5.0 * 20e-9 * math.sqrt(0.5e6 - F_LOW), rel=1e-9)
    assert "no reference filter" in b.reference_note


def test_reference_density_from_a_band_figure_round_trips():
    # Inverting v² = e_w²(f_c·ln(f_H/f_L) + f_H − f_L) (DOMAIN.md §2) and integrating back.
    density = Reference.density_from_band_rms(3e-6, 0.1, 10.0, 10.0)
    from resplan.noise.physics import integrate_flicker_white

    back = float(integrate_flicker_white(density.white, density.corner_hz, 0.1, 10.0))
    assert back == pytest.approx(3e-6, rel=1e-12)


# --- ADC noise forms -------------------------------------------------------------------------


def _adc_terms(budget):
    return {c.kind: c for c in budget.contributions if c.kind in ("adc", "quantisation")}


def test_snr_form_converts_to_rms():
    # σ = FSR/(2√2)·10^(−SNR/20) (IEEE Std 1241 definitions; DOMAIN.md §5).
    chain = Chain(Sensor(1.0, 10.0), (RCFilter("rc", 10.0, 1e-9),), _sar(SnrNoise(100.0)))
    terms = _adc_terms(forward_budget(chain))
    assert terms["adc"].adc_rms_v == pytest.approx(10.0 / (2 * math.sqrt(2)) * 1e-5, rel=1e-12)
    assert "quantisation" not in terms  # an SNR already includes it


def test_snr_at_another_sample_rate_is_refused():
    chain = Chain(Sensor(1.0, 10.0), (RCFilter("rc", 10.0, 1e-9),), _sar(SnrNoise(100.0, 500e3)))
    with pytest.raises(ChainError) as info:
        forward_budget(chain)
    assert info.value.field == "adc.snr_sample_rate"
    assert "1.00 MHz" in str(info.value)


def test_transition_noise_and_bennett_quantisation():
    # Transition noise in LSB rms; quantisation q/√12 added separately (Bennett 1948).
    chain = Chain(Sensor(1.0, 10.0), (RCFilter("rc", 10.0, 1e-9),), _sar(TransitionNoise(0.7)))
    terms = _adc_terms(forward_budget(chain))
    lsb = 10.0 / 2**16
    assert terms["adc"].adc_rms_v == pytest.approx(0.7 * lsb, rel=1e-14)
    assert terms["quantisation"].adc_rms_v == pytest.approx(lsb / math.sqrt(12), rel=1e-14)


def test_averaging_divides_sample_noise_by_root_n():
    # Mean of N independent conversions: σ/√N (statistics; Parseval on the N-average).
    digital = DigitalPath((SincFilter(1, 16, 1e6),))
    chain = Chain(
        Sensor(1.0, 10.0),
        (RCFilter("rc", 10.0, 1e-9),),
        _sar(TransitionNoise(0.7)),
        digital=digital,
    )
    terms = _adc_terms(forward_budget(chain))
    lsb = 10.0 / 2**16
    assert terms["adc"].adc_rms_v == pytest.approx(0.7 * lsb / 4, rel=1e-5)
    assert terms["quantisation"].adc_rms_v == pytest.approx(lsb / math.sqrt(12) / 4, rel=1e-5)


def test_input_noise_density_over_the_nyquist_zone_and_a_band_limit():
    # A density flat over the first Nyquist zone: σ² = e²·(f_s/2 − f_L); through an ideal
    # band limit at f_c: e²·(f_c − f_L) (brick-wall closed form).
    form = InputNoiseDensity(NoiseDensity(50e-9))
    plain = Chain(Sensor(1.0, 10.0), (RCFilter("rc", 10.0, 1e-9),), _sar(form))
    assert _adc_terms(forward_budget(plain, Band(F_LOW)))["adc"].adc_rms_v == pytest.approx(
        50e-9 * math.sqrt(0.5e6 - F_LOW), rel=1e-9
    )
    limited = Chain(
        Sensor(1.0, 10.0),
        (RCFilter("rc", 10.0, 1e-9),),
        _sar(form),
        digital=DigitalPath((IdealLowpass(20e3, 1e6),)),
    )
    assert _adc_terms(forward_budget(limited, Band(F_LOW)))["adc"].adc_rms_v == pytest.approx(
        50e-9 * math.sqrt(20e3 - F_LOW), rel=1e-9
    )


def _delta_sigma(noise, gain=1.0):
    """INVENTED delta-sigma converter at 256 kHz, 10 Hz data rate (demo values)."""
    return ADC(
        "invented delta-sigma", "delta-sigma", 24, 5.0, 256e3, noise, data_rate_hz=10.0, gain=gain
    )


def test_noise_quoted_at_another_data_rate_is_refused(bridge_chain):
    chain = bridge_chain(adc=_delta_sigma(NoiseAtRate(0.2e-6, 20.0)))
    with pytest.raises(ChainError) as info:
        forward_budget(chain)
    err = info.value
    assert err.field == "adc.noise_data_rate" and err.value == 20.0
    assert "scale_with_rate" in str(err) and "10.0 Hz" in str(err)


def test_noise_carried_to_another_data_rate_scales_as_root_rate(bridge_chain):
    # White noise: σ ∝ √(ODR) (noise bandwidth ∝ ODR), only when the design says so.
    chain = bridge_chain(adc=_delta_sigma(NoiseAtRate(0.2e-6, 20.0, scale_with_rate=True)))
    terms = _adc_terms(forward_budget(chain))
    assert terms["adc"].adc_rms_v == pytest.approx(0.2e-6 * math.sqrt(10.0 / 20.0), rel=1e-14)
    assert "scaled from 20.0 Hz to 10.0 Hz" in terms["adc"].note


def test_noise_quoted_at_another_gain_is_refused(bridge_chain):
    chain = bridge_chain(adc=_delta_sigma(NoiseAtRate(0.2e-6, 10.0, gain=64.0)))
    with pytest.raises(ChainError) as info:
        forward_budget(chain)
    assert info.value.field == "adc.noise_gain" and info.value.value == 64.0
    assert "(1 V/V)" in str(info.value)


def test_noise_at_the_adc_gain_is_accepted(bridge_chain):
    chain = bridge_chain(adc=_delta_sigma(NoiseAtRate(0.2e-6, 10.0, gain=4.0), gain=4.0))
    assert _adc_terms(forward_budget(chain))["adc"].adc_rms_v == 0.2e-6


def test_noise_table_picks_the_row_of_the_data_rate(bridge_chain):
    table = NoiseTable(((5.0, 0.15e-6), (10.0, 0.2e-6), (20.0, 0.3e-6)))
    terms = _adc_terms(forward_budget(bridge_chain(adc=_delta_sigma(table))))
    assert terms["adc"].adc_rms_v == 0.2e-6
    assert "10.0 Hz" in terms["adc"].note


def test_noise_table_without_the_data_rate_lists_the_rates(bridge_chain):
    table = NoiseTable(((5.0, 0.15e-6), (20.0, 0.3e-6)))
    with pytest.raises(ChainError) as info:
        forward_budget(bridge_chain(adc=_delta_sigma(table)))
    assert info.value.field == "adc.noise_table" and info.value.value == 10.0
    assert "(5.00 Hz, 20.0 Hz)" in str(info.value)


# --- bad input ---------------------------------------------------------------------------


GOOD_NOISE = NoiseDensity(1e-9)
BAD_INPUT = [
    # (builder of the bad part, given the invented bridge-chain builder; field; a fragment of
    # the expectation)
    (lambda bridge: Sensor(10e-3, 0.0), "resistance", "> 0 ohm"),
    (lambda bridge: Sensor(10e-3, -350.0), "resistance", "> 0 ohm"),
    (lambda bridge: Sensor(10e-3, math.nan), "resistance", "> 0 ohm"),
    (lambda bridge: Sensor(10e-3, math.inf), "resistance", "> 0 ohm"),
    (lambda bridge: Sensor(0.0, 350.0), "span", "> 0 V"),
    (lambda bridge: Sensor(10e-3, 350.0, temperature_k=0.0), "temperature", "above 0 K"),
    (lambda bridge: Sensor(10e-3, 350.0, temperature_k=-20.0), "temperature", "above 0 K"),
    (lambda bridge: NoiseDensity(math.nan), "white", "≥ 0"),
    (lambda bridge: NoiseDensity(-1e-9), "white", "≥ 0"),
    (lambda bridge: NoiseDensity(1e-9, math.inf), "corner", "≥ 0 Hz"),
    (lambda bridge: NonInvertingStage("a", -1.0, 1e3, GOOD_NOISE, GOOD_NOISE), "rf", "≥ 0 ohm"),
    (lambda bridge: NonInvertingStage("a", 1e3, 0.0, GOOD_NOISE, GOOD_NOISE), "rg", "> 0 ohm"),
    (lambda bridge: NonInvertingStage("a", 1e3, None, GOOD_NOISE, GOOD_NOISE), "rg", "> 0 ohm"),
    (
        lambda bridge: NonInvertingStage("a", 1e3, 1e3, GOOD_NOISE, GOOD_NOISE, gbw_hz=math.nan),
        "gbw",
        "> 0 Hz",
    ),
    (lambda bridge: IntegratedAmplifier("a", 0.0, GOOD_NOISE), "gain", "> 0 V/V"),
    (
        lambda bridge: IntegratedAmplifier("a", 10.0, GOOD_NOISE, bandwidth_hz=-1.0),
        "bandwidth",
        "> 0",
    ),
    (lambda bridge: RCFilter("rc", 0.0, 1e-9), "resistance", "> 0 ohm"),
    (lambda bridge: RCFilter("rc", 100.0, -1e-9), "capacitance", "> 0 F"),
    (lambda bridge: ActiveFilter("f", "butterworth", 9, 1e3), "order", "1 to 8"),
    (lambda bridge: ActiveFilter("f", "butterworth", 0, 1e3), "order", "1 to 8"),
    (lambda bridge: ActiveFilter("f", "elliptic", 4, 1e3), "response", "one of rc"),
    (
        lambda bridge: ActiveFilter("f", "bessel", 4, 1e3, noise_resistance_ohm=-5.0),
        "noise_resistance",
        "≥ 0 ohm",
    ),
    (lambda bridge: Reference(0.0), "voltage", "> 0 V"),
    (lambda bridge: Reference(2.5, filter_cutoff_hz=0.0), "filter_cutoff", "> 0 Hz"),
    (lambda bridge: ADC("x", "flash", 16, 5.0, 1e6, TransitionNoise(1)), "architecture", "sar"),
    (lambda bridge: ADC("x", "sar", 0, 5.0, 1e6, TransitionNoise(1)), "bits", "1 to 32"),
    (lambda bridge: ADC("x", "sar", 33, 5.0, 1e6, TransitionNoise(1)), "bits", "1 to 32"),
    (lambda bridge: ADC("x", "sar", 16.5, 5.0, 1e6, TransitionNoise(1)), "bits", "1 to 32"),
    (lambda bridge: ADC("x", "sar", 16, 0.0, 1e6, TransitionNoise(1)), "full_scale_range", "> 0 V"),
    (
        lambda bridge: ADC("x", "sar", 16, 5.0, math.inf, TransitionNoise(1)),
        "sample_rate",
        "> 0 Hz",
    ),
    (
        lambda bridge: ADC("x", "sar", 16, 5.0, 1e6, TransitionNoise(1), data_rate_hz=1e5),
        "data_rate",
        "the sample rate for a SAR",
    ),
    (
        lambda bridge: ADC("x", "delta-sigma", 24, 5.0, 1e6, TransitionNoise(1), data_rate_hz=2e6),
        "data_rate",
        "at most the sample rate",
    ),
    (lambda bridge: NoiseAtRate(-1e-6, 10.0), "noise", "≥ 0 V rms"),
    (lambda bridge: NoiseAtRate(1e-6, 0.0), "noise_data_rate", "> 0 Hz"),
    (lambda bridge: NoiseTable(()), "noise_table", "at least one"),
    (lambda bridge: NoiseTable(((10.0, -1.0),)), "noise_table[0].noise", "≥ 0 V rms"),
    (lambda bridge: SnrNoise(-3.0), "snr", "> 0 dB"),
    (lambda bridge: TransitionNoise(-0.5), "transition_noise", "≥ 0 LSB"),
    (lambda bridge: Band(0.0), "band.f_low", "> 0 Hz"),
    (lambda bridge: Band(math.nan), "band.f_low", "> 0 Hz"),
    (lambda bridge: Band(10.0, 10.0), "band.f_high", "above f_low"),
    (lambda bridge: Band(10.0, 1.0), "band.f_high", "above f_low"),
    (lambda bridge: bridge(temperature_k=0.0), "temperature", "above 0 K"),
    (lambda bridge: bridge(temperature_k=-5.0), "temperature", "above 0 K"),
    (lambda bridge: bridge(digital=None), "digital_filter", "sinc decimation filter"),
    (
        lambda bridge: bridge(digital=DigitalPath((SincFilter(3, 1000, 256e3),))),
        "digital_filter[0].length",
        "10.0 Hz",
    ),
    (
        lambda bridge: bridge(digital=DigitalPath((SincFilter(3, 25600, 128e3),))),
        "digital_filter[0].input_rate",
        "256 kHz",
    ),
    (lambda bridge: Requirement(10e-3), "requirement.resolution", "exactly one"),
    (lambda bridge: Requirement(10e-3, 1000, 100.0), "requirement.resolution", "exactly one"),
    (lambda bridge: Requirement(10e-3, 0.5), "requirement.noise_free_counts", "≥ 1"),
    (lambda bridge: Requirement(10e-3, math.nan), "requirement.noise_free_counts", "≥ 1"),
    (
        lambda bridge: Requirement(10e-3, 1000, coverage=1.0),
        "requirement.coverage",
        "between 0 and 1",
    ),
    (
        lambda bridge: Requirement(10e-3, 1000, interference_rms_v=-1e-9),
        "requirement.interference",
        "≥ 0",
    ),
]


@pytest.mark.parametrize(("build", "field", "expected"), BAD_INPUT)
def test_bad_input_raises_one_clear_error(build, field, expected, bridge_chain):
    # One line naming the field, the value given and what was expected; no silent clamp.
    with pytest.raises(ResplanError) as info:
        build(bridge_chain)
    err = info.value
    assert isinstance(err, DesignError) and isinstance(err, ValueError)
    assert err.field == field
    message = str(err)
    assert "\n" not in message
    # An absent value (None) reads "missing", never "got None".
    assert message.startswith((f"{field}: got ", f"{field}: missing, expected"))
    assert "None" not in message
    assert expected in message


# --- whole invented chains ------------------------------------------------------------------


def test_invented_bridge_budget_figures(bridge_chain):
    # INVENTED load cell + PGA + delta-sigma (conftest.py). Each figure is checked against its
    # definition (DOMAIN.md §6) and the parts' data.
    chain = bridge_chain()
    req = Requirement(span_v=10e-3, noise_free_counts=20_000, description="invented 1 in 20 000")
    b = forward_budget(chain, Band(F_LOW), requirement=req)
    powers = np.array([c.rms_v for c in b.contributions]) ** 2
    assert b.total_rms_v == pytest.approx(math.sqrt(powers.sum()), rel=1e-12)
    assert sum(c.share for c in b.contributions) == pytest.approx(1.0, rel=1e-12)
    # sorted, largest first; the PGA's input noise dominates this invented chain
    assert [c.rms_v for c in b.contributions] == sorted(powers**0.5, reverse=True)
    assert b.contributions[0].stage == "invented PGA" and b.contributions[0].name == "input noise"
    # noise bandwidth: sinc3 at 10 Hz → ≈ 0.275·ODR = 2.75 Hz (DOMAIN.md §4) with a little
    # aliasing from near 256 kHz through the PGA's 50 kHz pole; sensor noise sees the RC too
    pga = _by_name(b)[("invented PGA", "input noise")]
    assert 2.74 < pga.noise_bandwidth_hz < 3.2
    sensor = _by_name(b)[("invented bridge", "thermal noise of source resistance")]
    assert sensor.noise_bandwidth_hz == pytest.approx(2.75 - F_LOW, rel=1e-3)
    # ADC noise: 0.2 µV rms at the ADC, /128 at the sensor
    adc = _by_name(b)[("invented delta-sigma ADC", "converter noise")]
    assert adc.adc_rms_v == 0.2e-6 and adc.rms_v == pytest.approx(0.2e-6 / 128, rel=1e-14)
    # reference: 10 mV·128 = 1.28 V at the ADC, unipolar, against 2.5 V
    ref = _by_name(b)[("invented reference", "reference noise at full input")]
    assert ref.adc_rms_v / 1.28 * 2.5 < 3.5e-6  # σ_ref, of the order of its 3 µV 0.1–10 Hz figure
    # resolution figures (DOMAIN.md §6)
    k_pp = 2 * math.sqrt(2) * 2.326  # ≈ 6.58 at 99.9 %
    assert b.k_pp == pytest.approx(k_pp, rel=1e-3)
    assert b.effective_bits == pytest.approx(math.log2(10e-3 / b.total_rms_v), rel=1e-14)
    assert b.noise_free_bits == pytest.approx(b.effective_bits - math.log2(b.k_pp), rel=1e-12)
    assert b.noise_free_counts == pytest.approx(10e-3 / (b.k_pp * b.total_rms_v), rel=1e-12)
    assert b.dynamic_range_db == pytest.approx(
        20 * math.log10(10e-3 / (2 * math.sqrt(2)) / b.total_rms_v), rel=1e-12
    )
    assert b.adc_range_used == pytest.approx(10e-3 * 128 / 5.0, rel=1e-14)
    assert b.effective_bits_adc_range == pytest.approx(
        math.log2(5.0 / (b.total_rms_v * 128)), rel=1e-12
    )
    assert b.snr_db == pytest.approx(
        20 * math.log10(5.0 / (2 * math.sqrt(2)) / (b.total_rms_v * 128)), rel=1e-12
    )
    # requirement: 10 mV/(20 000·6.58) = 76 nV rms allowed
    assert b.allowed_rms_v == pytest.approx(10e-3 / (20_000 * b.k_pp), rel=1e-12)
    assert b.meets_requirement is (b.total_rms_v <= b.allowed_rms_v)
    assert b.margin_bits == pytest.approx(math.log2(b.allowed_rms_v / b.total_rms_v), rel=1e-12)
    assert not b.warnings
    assert b.temperature_k == 298.15 and b.f_low_hz == F_LOW and b.output_rate_hz == 10.0


def test_invented_bridge_budget_with_interference_allowance(bridge_chain):
    # Interference reserved in power (DOMAIN.md §8): allowed noise = √(allowed² − I²).
    req = Requirement(10e-3, 20_000, interference_rms_v=70e-9)
    b = forward_budget(bridge_chain(), requirement=req)
    allowed = math.sqrt((10e-3 / (20_000 * b.k_pp)) ** 2 - 70e-9**2)
    assert b.allowed_rms_v == pytest.approx(allowed, rel=1e-12)
    assert b.meets_requirement is False and b.margin_bits < 0


def test_invented_bridge_budget_to_dict_is_json(bridge_chain):
    d = forward_budget(bridge_chain()).to_dict()
    text = json.dumps(d)
    assert json.loads(text)["total_noise_rms_v"] == d["total_noise_rms_v"]
    assert {"total_noise_rms_v", "noise_free_bits", "coverage", "band", "contributors"} <= set(d)
    assert d["band"] == {"f_low_hz": 0.01, "f_high_hz": None}
    assert all(set(c) >= {"name", "stage", "kind", "rms_v", "share"} for c in d["contributors"])


def test_invented_vibration_budget_figures(vibration_chain):
    # INVENTED SAR vibration chain (conftest.py): ±2 V sensor, driver, RC 589 kHz, 18-bit SAR
    # at 1 MHz, ideal band limit at 20 kHz.
    chain = vibration_chain()
    b = forward_budget(chain, Band(F_LOW))
    got = _by_name(b)
    lsb = 10.0 / 2**18
    post = math.sqrt(2 * 20e3 / 1e6)  # white samples kept over 20 kHz of the 500 kHz zone
    assert got[("invented SAR ADC", "transition noise")].adc_rms_v == pytest.approx(
        0.7 * lsb * post, rel=1e-5
    )
    assert got[("invented SAR ADC", "quantisation")].adc_rms_v == pytest.approx(
        lsb / math.sqrt(12) * post, rel=1e-5
    )
    # driver noise: the 20 kHz band plus its images 2·20 kHz wide around each multiple of
    # 1 MHz, weighted by the analog gain there (an estimate independent of the folding code,
    # good to ~2e-4 because the gain varies little across ±20 kHz).
    drv = got[("invented driver", "input noise")]
    m = np.arange(1, 5000) * 1e6
    gain = np.ones_like(m)
    for r in chain.responses_from(0):
        gain = gain * r.power_gain(m)
    estimate = 20e3 - F_LOW + 2 * 20e3 * float(np.sum(gain))
    assert drv.noise_bandwidth_hz == pytest.approx(estimate, rel=1e-3)
    assert drv.rms_v == pytest.approx(4e-9 * math.sqrt(drv.noise_bandwidth_hz), rel=1e-12)
    # reference: 10 nV/√Hz through its 1 kHz pole ≈ 10 nV·√(π/2·1 kHz) = 0.396 µV, at 2 V of 5 V
    ref = got[("invented reference", "reference noise at full input")]
    assert ref.adc_rms_v == pytest.approx(
        2.0 / 5.0 * 10e-9 * math.sqrt(math.pi / 2 * 1e3), rel=0.05
    )
    assert b.gain == 1.0 and b.adc_range_used == pytest.approx(0.4)
    assert b.dominant[0].name == "transition noise"
    assert b.adc_enob == pytest.approx(
        (20 * math.log10(10.0 / (2 * math.sqrt(2)) / b.adc_alone_rms_v) - 1.7609) / 6.0206,
        rel=1e-4,
    )


def test_overload_is_a_warning_not_a_clamp(bridge_chain):
    b = forward_budget(
        bridge_chain(
            stages=(
                RCFilter("invented input RC", 1e3, 100e-9),
                IntegratedAmplifier(
                    "invented PGA", 1024.0, NoiseDensity(12e-9, 2.0), bandwidth_hz=50e3
                ),
            )
        )
    )
    assert b.overloaded and b.adc_range_used == pytest.approx(10e-3 * 1024 / 5.0)
    assert any("overloads" in w for w in b.warnings)


def test_unbounded_noise_band_names_the_stage():
    chain = Chain(
        Sensor(1.0, 1e3, name="invented source"),
        (IntegratedAmplifier("amp", 1.0, NoiseDensity(1e-9)),),
        _sar(),
    )
    with pytest.raises(ChainError) as info:
        forward_budget(chain)
    assert info.value.field == "invented source"
