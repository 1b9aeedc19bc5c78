"""The backward planner: allocation, data-sheet limits, round trip, infeasible plans.

All chains here are invented for the tests. The reference checks are the
requirement arithmetic (σ = S/(counts·k_pp), DOMAIN §7), the Gaussian coverage
factor (scipy.special.erfinv) and the round trip: a chain built with every open
part exactly at its limit must meet the requirement with zero margin.
"""

from __future__ import annotations

import math

import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st
from scipy.special import erfinv

from resplan import (
    ADC,
    Band,
    DigitalPath,
    IntegratedAmplifier,
    NoiseAtRate,
    NoiseDensity,
    Reference,
    Requirement,
    Sensor,
    SincFilter,
    forward_budget,
)
from resplan.chain.design import Design, Meta, OpenPart
from resplan.errors import DesignError, ResplanError
from resplan.plan.allocation import parse_weights, plan_design, realise

FS = 256_000.0


def _design(
    counts=20_000,
    span=10e-3,
    r_source=350.0,
    amp_open=True,
    amp_gain=None,
    filter_open=True,
    reference="open",
    adc_open=True,
    interference=0.0,
    weights=None,
    ratio=25_600,
    averaging=1,
    architecture="delta-sigma",
):
    """An invented bridge chain; every part may be open or given."""
    req = Requirement(span, noise_free_counts=counts, interference_rms_v=interference)
    sensor = Sensor(span_v=span, resistance_ohm=r_source)
    stages = []
    if filter_open:
        stages.append(
            OpenPart(
                "filter",
                "input filter",
                "stages[0]",
                {"response": "rc", "order": 1, "cutoff_hz": 2000.0},
            )
        )
    if amp_open:
        known = {"en_corner_hz": 1.0, "bandwidth_hz": 50e3}
        if amp_gain is not None:
            known["gain"] = amp_gain
        stages.append(OpenPart("amplifier", "front end", f"stages[{len(stages)}]", known))
    else:
        stages.append(
            IntegratedAmplifier(
                "front end (invented)", 64.0, NoiseDensity(10e-9, 2.0), bandwidth_hz=50e3
            )
        )
    rate = FS if architecture == "sar" else FS / ratio
    if adc_open:
        adc = OpenPart(
            "adc",
            "converter",
            "adc",
            {
                "architecture": architecture,
                "bits": 24 if architecture == "delta-sigma" else 16,
                "full_scale_range_v": 5.0,
                "sample_rate_hz": FS,
                **({"data_rate_hz": rate} if architecture == "delta-sigma" else {}),
            },
        )
    else:
        adc = ADC(
            "converter (invented)",
            architecture,
            24,
            5.0,
            FS,
            NoiseAtRate(0.3e-6, rate),
            data_rate_hz=rate if architecture == "delta-sigma" else None,
        )
    if reference == "open":
        ref = OpenPart(
            "reference", "reference", "reference", {"voltage_v": 2.5, "noise_corner_hz": 5.0}
        )
    elif reference == "ratiometric":
        ref = Reference(2.5, ratiometric=True)
    else:
        ref = None
    digital_stages = []
    if architecture == "delta-sigma":
        digital_stages.append(SincFilter(3, ratio, FS))
    if averaging > 1:
        digital_stages.append(SincFilter(1, averaging, rate))
    digital = DigitalPath(tuple(digital_stages)) if digital_stages else None
    return Design(
        meta=Meta("plan test (invented)"),
        requirement=req,
        band=Band(0.01, rate / (2 * averaging)),
        sensor=sensor,
        stages=tuple(stages),
        adc=adc,
        reference=ref,
        digital=digital,
        weights=weights or {},
    )


def test_allowed_noise_from_requirement():
    # σ = S/(counts·k_pp), k_pp = 2√2·erfinv(0.999) (GUM coverage; scipy.special reference).
    d = _design()
    plan = plan_design(d)
    expected = 10e-3 / (20_000 * 2 * math.sqrt(2) * erfinv(0.999))
    assert plan.allowed_total_rms_v == pytest.approx(expected, rel=1e-12)
    assert plan.k_pp == pytest.approx(6.58, abs=0.005)


def test_interference_taken_out_in_power():
    d = _design(interference=30e-9)
    plan = plan_design(d)
    assert plan.allowed_noise_rms_v == pytest.approx(
        math.sqrt(plan.allowed_total_rms_v**2 - 30e-9**2), rel=1e-12
    )


def test_equal_weights_give_equal_power():
    plan = plan_design(_design())
    shares = [a.share for a in plan.allocations]
    assert shares == pytest.approx([1 / len(shares)] * len(shares))
    total = math.sqrt(sum(a.rms_v**2 for a in plan.allocations) + plan.fixed_rms_v**2)
    assert total == pytest.approx(plan.allowed_noise_rms_v, rel=1e-12)


def test_weights_split_power():
    plan = plan_design(
        _design(), weights={"front end": 2, "converter": 1, "reference": 1, "input filter": 0}
    )
    by_name = {a.part: a for a in plan.allocations}
    assert by_name["front end"].rms_v ** 2 == pytest.approx(2 * by_name["converter"].rms_v ** 2)
    assert by_name["input filter"].rms_v == 0


@pytest.mark.parametrize(
    "weights, field",
    [
        ({"front end": -1}, "weights.front end"),
        ({"nonexistent": 1}, "weights.nonexistent"),
        ({"front end": 0, "converter": 0, "reference": 0, "input filter": 0}, "weights"),
    ],
)
def test_bad_weights(weights, field):
    with pytest.raises(ResplanError) as err:
        plan_design(_design(), weights=weights)
    assert field in str(err.value)


def test_parse_weights():
    assert parse_weights("amp=2,adc=1") == {"amp": 2.0, "adc": 1.0}
    with pytest.raises(ResplanError, match="NAME=NUMBER"):
        parse_weights("amp:2")


def test_counts_below_one_refused():
    with pytest.raises(DesignError, match="count ≥ 1"):
        Requirement(1.0, noise_free_counts=0.5)


@pytest.mark.parametrize(
    "kwargs",
    [
        {},
        {"amp_gain": 100.0},
        {"filter_open": False},
        {"reference": "ratiometric"},
        {"reference": None, "adc_open": False},
        {"architecture": "sar", "averaging": 16, "reference": "ratiometric", "counts": 1000},
        {"amp_open": False, "interference": 10e-9},
        {"averaging": 4, "weights": {"front end": 3}},
    ],
)
def test_round_trip_zero_margin(kwargs):
    d = _design(**kwargs)
    plan = plan_design(d)
    assert plan.feasible
    chain = realise(plan, d)
    b = forward_budget(chain, d.band, requirement=d.requirement)
    # Every open part at its limit: the forward check equals the target. The planner
    # solves its limits against the same circuit the check solves (a unit-density probe
    # scaled to the allowance), so they agree to rounding: 1e-9 relative.
    assert b.total_rms_v == pytest.approx(plan.allowed_noise_rms_v, rel=1e-9)
    assert b.margin_bits == pytest.approx(0.0, abs=2e-9)


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    counts=st.floats(100, 1e6),
    span=st.floats(1e-3, 1.0),
    r_source=st.floats(10.0, 10e3),
    amp_open=st.booleans(),
    filter_open=st.booleans(),
    reference=st.sampled_from(["open", "ratiometric", None]),
    adc_open=st.booleans(),
    ratio=st.sampled_from([256, 2560, 25_600]),
    averaging=st.sampled_from([1, 4]),
    weight=st.floats(0.1, 10.0),
)
def test_round_trip_property(
    counts, span, r_source, amp_open, filter_open, reference, adc_open, ratio, averaging, weight
):
    assume(amp_open or filter_open or adc_open or reference == "open")
    d = _design(
        counts=counts,
        span=span,
        r_source=r_source,
        amp_open=amp_open,
        filter_open=filter_open,
        reference=reference,
        adc_open=adc_open,
        ratio=ratio,
        averaging=averaging,
    )
    names = [p.name for p in d.open_parts]
    plan = plan_design(d, weights={names[0]: weight})
    assume(plan.feasible)
    b = forward_budget(realise(plan, d), d.band, requirement=d.requirement)
    assert b.total_rms_v == pytest.approx(plan.allowed_noise_rms_v, rel=1e-9)


def test_limits_are_datasheet_figures():
    plan = plan_design(_design())
    rows = {(r.part, r.quantity.split(" (")[0]): r for r in plan.requirements}
    en = rows[("front end", "white voltage noise e_n")]
    assert en.unit == "V/√Hz" and en.bound == "max" and 0 < en.value < 1e-6
    # The converter is delta-sigma: noise at the data rate in V rms and V p-p, the
    # effective resolution in bits; no SNR, ENOB or LSB (see test_plan_delta_sigma.py).
    adc = {r.quantity.split(" at ")[0]: r for r in plan.requirements if r.part == "converter"}
    assert not {"SNR, full-scale sine", "ENOB", "transition noise"} & set(adc)
    sigma = adc["input-referred noise"]
    assert sigma.unit == "V" and sigma.bound == "max"
    # k_pp = 2√2·erf⁻¹(P) (JCGM 100:2008 coverage of a normal distribution; scipy erfinv).
    k_pp = 2 * math.sqrt(2) * float(erfinv(plan.coverage))
    assert adc["input-referred noise peak-to-peak"].value == pytest.approx(k_pp * sigma.value)
    fsr = 5.0  # the converter's full-scale range in _design
    assert adc["effective resolution"].value == pytest.approx(math.log2(fsr / sigma.value))
    # An open SAR keeps SNR, ENOB and transition noise: test_plan_delta_sigma.py.
    ppm = rows[("reference", "noise relative to V_ref")]
    vrms = rows[("reference", "noise in the chain's band")]
    assert ppm.value == pytest.approx(vrms.value / 2.5 * 1e6)
    gmax = rows[("front end", "front-end gain the ADC range allows")]
    assert gmax.value == pytest.approx(5.0 / 10e-3)


def test_filter_order_and_cutoff_are_butterworth_consistent():
    # Butterworth attenuation A = 10·log10(1 + (f/fc)^(2n)) (closed form of |H|²).
    d = _design()
    d = Design(
        **{
            **d.__dict__,
            "stages": (
                OpenPart(
                    "filter",
                    "input filter",
                    "stages[0]",
                    {"response": "butterworth", "cutoff_hz": 20.0},
                ),
                d.stages[1],
            ),
            "alias_interferer": (FS - 5.0, 1e-3),
        }
    )
    plan = plan_design(d)
    rows = {r.quantity: r for r in plan.requirements if r.part == "input filter"}
    need = next(r for q, r in rows.items() if q.startswith("attenuation at")).value
    order = next(r for q, r in rows.items() if q.startswith("butterworth order")).value
    fc = next(r for q, r in rows.items() if q.startswith("cut-off of an order")).value
    f_i = FS - 5.0
    assert 10 * math.log10(1 + (f_i / 20.0) ** (2 * order)) >= need
    if order > 1:
        assert 10 * math.log10(1 + (f_i / 20.0) ** (2 * (order - 1))) < need
    assert 10 * math.log10(1 + (f_i / fc) ** (2 * order)) == pytest.approx(need, rel=1e-9)


def test_infeasible_explained_with_levers():
    # 2 000 000 counts of 10 mV at 99.9 % → 0.76 nV rms; a 350 Ω source alone gives
    # √(4kTR·ENBW) ≈ 2.4 nV/√Hz × √2.7 Hz ≈ 4 nV rms (Johnson–Nyquist).
    d = _design(counts=2_000_000)
    plan = plan_design(d)
    assert not plan.feasible
    assert "fixed parts alone" in plan.reasons[0]
    assert any("thermal noise of source resistance" in r for r in plan.reasons)
    levers = {lever.name: lever for lever in plan.levers}
    for name in (
        "larger span",
        "lower source resistance",
        "colder sensor",
        "longer averaging / narrower band",
    ):
        assert name in levers
    # Each lever, applied alone, makes the plan feasible.
    span = levers["larger span"].value
    assert plan_design(_design(counts=2_000_000, span=span * 1.001)).feasible
    r = levers["lower source resistance"].value
    assert plan_design(_design(counts=2_000_000, r_source=r * 0.999)).feasible
    # The band top here is half the output rate: more averaging would put the output
    # rate below twice the band top, so the lever says it is not possible within the band.
    averaging = levers["longer averaging / narrower band"]
    assert averaging.value is None and "below twice the band top" in averaging.description
    # A narrower band is a change of requirement: with it, that averaging fits.
    assert any(plan_design(_design(counts=2_000_000, averaging=2**k)).feasible for k in range(1, 9))


def test_interference_that_uses_everything_is_infeasible():
    d = _design(interference=1e-6)
    plan = plan_design(d)
    assert not plan.feasible
    assert "interference allowance" in plan.reasons[0]


def test_gain_conflict_is_infeasible():
    # A noisy given ADC needs more front-end gain than its range allows.
    d = _design(
        adc_open=False, amp_open=True, counts=200_000, reference="ratiometric", filter_open=False
    )
    noisy = ADC(
        "converter (invented)",
        "delta-sigma",
        24,
        5.0,
        FS,
        NoiseAtRate(50e-6, FS / 25_600),
        data_rate_hz=FS / 25_600,
    )
    d = Design(**{**d.__dict__, "adc": noisy})
    plan = plan_design(d)
    assert not plan.feasible
    assert any("front-end gain of at least" in r for r in plan.reasons)


def test_plan_to_dict_is_plain():
    import json

    text = json.dumps(plan_design(_design()).to_dict(), allow_nan=True)
    data = json.loads(text)
    assert {"feasible", "allocations", "requirements", "levers", "assumptions"} <= set(data)


def test_a_misspelt_weight_key_gets_a_suggestion():
    # Same "did you mean" as other keys (difflib.get_close_matches, Python stdlib).
    from resplan.designfile.examples import load_example
    from resplan.errors import DesignErrors
    from resplan.plan.allocation import plan_design

    with pytest.raises(DesignErrors, match='did you mean "front end"'):
        plan_design(load_example("kickoff-bridge"), {"frnt end": 1.0})
