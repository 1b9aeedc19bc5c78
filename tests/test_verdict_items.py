"""Pass-band droop, settling, per-channel rate, headroom, aperture jitter and the planner's
interferer and band checks, against their closed forms.

Every chain and design here is INVENTED. Sources: the sinc^k response
|sin(πfR/f_s)/(R·sin(πf/f_s))|^k and its settling in k output periods (E. B. Hogenauer,
IEEE Trans. ASSP 29 (1981) 155); analog prototypes from scipy.signal; aperture jitter
σ = 2π·f·A_rms·σ_j (W. Kester (ed.), Data Conversion Handbook, 2005, ch. 2, from memory;
the term is defined in IEEE Std 1241).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from invented import design_of, invented_vibration_chain
from scipy import signal

from resplan import (
    ADC,
    ActiveFilter,
    DigitalPath,
    IdealLowpass,
    NoiseAtRate,
    RCFilter,
    Requirement,
    Sensor,
    SincFilter,
    TransitionNoise,
    forward_budget,
)
from resplan.chain.converter import jitter_noise_rms
from resplan.chain.passband import passband_droop
from resplan.chain.signal_chain import Band, Chain
from resplan.chain.timing import digital_timing
from resplan.chain.verdict import judge, judge_design
from resplan.output.interference_text import format_attenuation, format_residue
from resplan.plan.allocation import plan_design


def sinc_adc_chain(k=3, fs=64e3, odr=10.0, channels=1, post=(), stages=()):
    n = int(round(fs / odr))
    adc = ADC(
        "invented delta-sigma",
        "delta-sigma",
        24,
        5.0,
        fs,
        NoiseAtRate(0.1e-6, odr),
        data_rate_hz=odr,
        channels=channels,
    )
    return Chain(
        Sensor(10e-3, 350.0), stages, adc, digital=DigitalPath((SincFilter(k, n, fs), *post))
    )


#: INVENTED input RC (1 kΩ, 100 nF) that bounds the noise for budgets.
RC = (RCFilter("invented RC", 1e3, 100e-9),)


# ---------------------------------------------------------------------------
# pass-band droop


@pytest.mark.parametrize("k, odr, top", [(3, 10.0, 5.0), (1, 10.0, 2.0), (4, 50.0, 10.0)])
def test_sinc_droop_matches_the_closed_form(k, odr, top):
    chain = sinc_adc_chain(k, 64e3, odr)
    r = 64e3 / odr
    x = math.pi * top / 64e3
    expected = 20 * k * math.log10(abs(math.sin(r * x) / (r * math.sin(x))))
    d = passband_droop(chain, top)
    assert d.total_db == pytest.approx(expected, abs=1e-9)
    assert d.analog_db == 0.0


def test_sinc3_at_10_hz_is_minus_11_8_db_at_5_hz():
    # The closed form above gives −11.8 dB (rounded) at half the output rate.
    assert round(passband_droop(sinc_adc_chain(), 5.0).total_db, 1) == -11.8


def test_analog_droop_matches_scipy_butterworth():
    chain = Chain(
        Sensor(4.0, 100.0, bipolar=True),
        (ActiveFilter("invented Butterworth", "butterworth", 4, 20e3),),
        ADC("invented SAR", "sar", 18, 10.0, 200e3, TransitionNoise(0.5)),
    )
    b, a = signal.butter(4, 2 * np.pi * 20e3, analog=True)
    _, h = signal.freqs(b, a, worN=[2 * np.pi * 10e3])
    assert passband_droop(chain, 10e3).total_db == pytest.approx(20 * np.log10(abs(h[0])), abs=1e-9)


def test_flatness_fails_the_verdict_and_droop_is_always_reported():
    chain = sinc_adc_chain(stages=RC)
    req = Requirement(10e-3, noise_free_counts=100, passband_flatness_db=1.0)
    b = forward_budget(chain, Band(0.01, 5.0), requirement=req)
    v = judge(b, chain)
    assert v.droop is not None and v.droop.total_db < -11
    assert "passband_flatness" in v.failed_items
    f = next(x for x in v.failures if x.item == "passband_flatness")
    assert f.unit == "dB" and f.limit == 1.0 and f.value == pytest.approx(11.8, abs=0.05)
    plain = judge(
        forward_budget(chain, Band(0.01, 5.0), requirement=Requirement(10e-3, 100)), chain
    )
    assert plain.droop is not None and "passband_flatness" not in plain.checked


# ---------------------------------------------------------------------------
# settling, latency, per-channel rate


@pytest.mark.parametrize("k", [1, 2, 3, 4, 5])
def test_sinc_settles_in_k_output_periods(k):
    t = digital_timing(sinc_adc_chain(k, 64e3, 10.0))
    assert t.settling_s == pytest.approx(k / 10.0)
    # group delay of a symmetric FIR of k(R−1)+1 taps: k(R−1)/2 input periods
    assert t.latency_s == pytest.approx(k * (6400 - 1) / 2 / 64e3)


def test_averaging_and_fir_add_their_lengths():
    post = (SincFilter(1, 8, 10.0),)
    t = digital_timing(sinc_adc_chain(3, 64e3, 10.0, post=post))
    assert t.settling_s == pytest.approx(3 / 10.0 + 8 / 10.0)
    sar = Chain(
        Sensor(4.0, 100.0, bipolar=True),
        (ActiveFilter("invented Butterworth", "butterworth", 4, 20e3),),
        ADC("invented SAR", "sar", 18, 10.0, 1e6, TransitionNoise(0.5)),
        digital=DigitalPath((IdealLowpass(20e3, 1e6, taps=255),)),
    )
    t = digital_timing(sar)
    assert t.settling_s == pytest.approx(1e-6 + 255e-6)
    assert t.latency_s == pytest.approx(1e-6 + 127e-6)


def test_unknown_fir_length_cannot_pass_a_stated_settling():
    sar = invented_vibration_chain()  # its band limit states no length
    req = Requirement(4.0, noise_free_counts=100, settling_time_s=1e-3)
    v = judge(forward_budget(sar, Band(1.0, 20e3), requirement=req), sar)
    assert "settling" in v.failed_items


def test_multiplexed_channels_share_the_settled_rate():
    chain = sinc_adc_chain(3, 64e3, 10.0, channels=4, stages=RC)
    t = digital_timing(chain)
    assert t.channel_rate_hz == pytest.approx(1 / (4 * 0.3))
    req = Requirement(10e-3, noise_free_counts=100, channel_rate_hz=1.0, settling_time_s=0.25)
    v = judge(forward_budget(chain, Band(0.01, 2.0), requirement=req), chain)
    assert {"channel_rate", "settling"} <= set(v.failed_items)
    f = next(x for x in v.failures if x.item == "channel_rate")
    assert f.value == pytest.approx(0.8333, rel=1e-3) and f.unit == "Hz"


# ---------------------------------------------------------------------------
# headroom


def test_headroom_is_checked_and_kept_by_the_planner():
    chain = invented_vibration_chain()  # 4 V span into a 10 V range: 40 % used
    design = design_of(chain, requirement=Requirement(4.0, noise_free_counts=100, headroom=0.65))
    from resplan.designfile.load import check_design

    v = judge_design(design, check_design(design))
    f = next(x for x in v.failures if x.item == "headroom")
    assert f.value == pytest.approx(0.4) and f.limit == pytest.approx(0.35)
    ok = design_of(chain, requirement=Requirement(4.0, noise_free_counts=100, headroom=0.5))
    assert "headroom" not in judge_design(ok, check_design(ok)).failed_items


def test_planner_gain_keeps_the_headroom():
    from resplan.designfile.examples import example_text
    from resplan.designfile.load import loads_design

    text = example_text("kickoff-bridge")
    plain = plan_design(loads_design(text, "k.toml"))
    kept = plan_design(
        loads_design(text.replace("[requirement]", '[requirement]\nheadroom = "10 %"', 1), "k.toml")
    )

    def g_max(plan):
        return next(
            r.value for r in plan.requirements if r.quantity.startswith("front-end gain the ADC")
        )

    assert g_max(kept) == pytest.approx(0.9 * g_max(plain), rel=1e-9)


# ---------------------------------------------------------------------------
# aperture jitter


@pytest.mark.parametrize("f, a, sj", [(1e5, 1.0, 1e-12), (20e3, 3.0, 5e-12), (1e6, 0.1, 1e-13)])
def test_jitter_formula(f, a, sj):
    assert float(jitter_noise_rms(f, a, sj)) == pytest.approx(2 * math.pi * f * a * sj, rel=1e-15)
    # SNR_jitter = −20·log10(2π f σ_j), independent of amplitude
    snr = 20 * math.log10(a / float(jitter_noise_rms(f, a, sj)))
    assert snr == pytest.approx(-20 * math.log10(2 * math.pi * f * sj))


def test_jitter_enters_the_budget_as_adc_jitter():
    base = invented_vibration_chain(digital=None)
    adc = ADC(
        "invented SAR ADC", "sar", 18, 10.0, 1e6, TransitionNoise(0.7), aperture_jitter_s=1e-9
    )
    chain = invented_vibration_chain(adc=adc, digital=None)
    req = Requirement(4.0, noise_free_counts=100, signal_frequency_hz=20e3)
    b = forward_budget(chain, Band(1.0, 20e3), requirement=req)
    c = b["adc.jitter"]
    amplitude = 4.0 / (2 * math.sqrt(2))  # full span sine, gain 1
    assert c.rms_v == pytest.approx(2 * math.pi * 20e3 * amplitude * 1e-9, rel=1e-12)
    assert "adc.jitter" not in forward_budget(base, Band(1.0, 20e3), requirement=req)
    assert b.total_rms_v > forward_budget(base, Band(1.0, 20e3), requirement=req).total_rms_v


# ---------------------------------------------------------------------------
# the planner: interferers and the band


def test_averaging_lever_never_leaves_the_band():
    chain = invented_vibration_chain(digital=None)
    design = design_of(chain, counts=1e6, band=Band(1.0, 400e3))
    plan = plan_design(design)
    assert not plan.feasible
    lever = next(x for x in plan.levers if x.name.startswith("longer averaging"))
    assert lever.value is None and "below twice the band top" in lever.description


# ---------------------------------------------------------------------------
# no absurd figures


@pytest.mark.parametrize(
    "db, text",
    [(984.5, "> 200 dB, at a null"), (math.inf, "> 200 dB, at a null"), (60.0, "60.0 dB")],
)
def test_attenuation_floor(db, text):
    assert format_attenuation(db) == text


def test_residue_floor():
    assert format_residue(5.91e-54) == "below 1.00 fV"
    assert format_residue(0.0) == "below 1.00 fV"
    assert format_residue(2.4e-6) == "2.40 µV rms"


def test_plan_is_infeasible_when_the_given_digital_path_breaks_timing_or_flatness():
    from resplan.designfile.examples import example_text
    from resplan.designfile.load import loads_design

    text = example_text("kickoff-bridge")
    plain = plan_design(loads_design(text, "k.toml"))
    strict = text.replace(
        "[requirement]",
        '[requirement]\nsettling_time = "1 ms"\npassband_flatness = "0.001 dB"',
        1,
    )
    plan = plan_design(loads_design(strict, "k.toml"))
    assert plain.feasible and not plan.feasible
    assert any(r.startswith("settling:") for r in plan.reasons)
    assert any(r.startswith("passband_flatness:") for r in plan.reasons)
