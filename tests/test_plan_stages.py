"""Open stages of every type: data-sheet limits solved against the model ``check`` uses.

Every chain here is INVENTED for the tests. The law checked is the round trip (DOMAIN §7):
a chain built with every open part exactly at its limit meets the requirement with zero
margin. The planner's limits come from the same solved circuit as the forward budget, so
the round trip holds to rounding (1e-9 relative) for every stage type. The GBW limits are
checked against their closed forms: the single-pole closed loop G/(1 + j·f·NG/GBW) and
the transimpedance loop's characteristic equation (resplan.plan.bandwidth_needs), and
against the solver itself (the response at the limit has Q = 1/√2: no peak above DC).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from resplan import (
    ADC,
    Band,
    DigitalPath,
    IntegratedAmplifier,
    NoiseAtRate,
    NoiseDensity,
    RCFilter,
    Reference,
    Requirement,
    Sensor,
    SincFilter,
    forward_budget,
)
from resplan.chain.design import Design, Meta, OpenPart
from resplan.chain.netlists import circuit_of
from resplan.plan.allocation import plan_design, realise
from resplan.plan.bandwidth_needs import flatness_gbw_hz, transimpedance_flat_gbw_hz

FS = 200_000.0


def _adc(open_adc: bool, fsr: float = 5.0):
    if open_adc:
        return OpenPart(
            "adc",
            "converter",
            "adc",
            {"architecture": "sar", "bits": 18, "full_scale_range_v": fsr, "sample_rate_hz": FS},
        )
    return ADC("converter (invented)", "sar", 18, fsr, FS, NoiseAtRate(20e-6, FS))


def _design(sensor, stages, *, counts, open_adc=False, top=1e3, averaging=16, flatness=None):
    req = Requirement(sensor.span_v, noise_free_counts=counts, passband_flatness_db=flatness)
    digital = DigitalPath((SincFilter(1, averaging, FS),)) if averaging > 1 else None
    return Design(
        meta=Meta("open stages (invented)"),
        requirement=req,
        band=Band(0.1, top),
        sensor=sensor,
        stages=tuple(stages),
        adc=_adc(open_adc),
        reference=Reference(2.5, ratiometric=True),
        digital=digital,
    )


def inverting_design(r_source=1e3, gain=None, rin=10e3, open_adc=False, counts=2000.0, **kw):
    known = {"rin_ohm": rin, "en_corner_hz": 10.0, "in_corner_hz": 100.0}
    if gain is not None:
        known["gain"] = gain
    stages = [
        OpenPart("inverting", "inverting front end", "stages[0]", known),
        RCFilter("ADC input RC (invented)", 470.0, 10e-9),
    ]
    sensor = Sensor(span_v=20e-3, resistance_ohm=r_source, bipolar=True)
    return _design(sensor, stages, counts=counts, open_adc=open_adc, **kw)


def transimpedance_design(c_sensor=50e-12, rf=None, cf=1e-12, open_adc=False, counts=2000.0, **kw):
    known = {"cf_f": cf, "input_capacitance_f": 5e-12, "en_corner_hz": 100.0}
    if rf is not None:
        known["rf_ohm"] = rf
    sensor = Sensor(
        span_v=2e-6,
        resistance_ohm=1e9,
        output="current",
        capacitance_f=c_sensor,
        dark_current_a=1e-9,
    )
    stages = [
        OpenPart("transimpedance", "photodiode amplifier", "stages[0]", known),
        RCFilter("ADC input RC (invented)", 1e3, 10e-9),
    ]
    return _design(sensor, stages, counts=counts, open_adc=open_adc, **kw)


def filter_design(topology="sallen-key", order=4, open_adc=False, counts=1000.0, **kw):
    sensor = Sensor(span_v=10e-3, resistance_ohm=350.0)
    stages = [
        IntegratedAmplifier("front end (invented)", 200.0, NoiseDensity(2e-9, 1.0)),
        OpenPart(
            "filter",
            "anti-alias filter",
            "stages[1]",
            {
                "response": "butterworth",
                "order": order,
                "cutoff_hz": 5e3,
                "topology": topology,
                "gbw_hz": 10e6,
                "en_corner_hz": 3.0,
            },
        ),
    ]
    return _design(sensor, stages, counts=counts, open_adc=open_adc, **kw)


def noninverting_design(open_adc=False, counts=5000.0, **kw):
    sensor = Sensor(span_v=10e-3, resistance_ohm=350.0)
    known = {"rf_ohm": 99e3, "rg_ohm": 1e3, "en_corner_hz": 2.0, "gain": 100.0}
    stages = [
        OpenPart("amplifier", "front end", "stages[0]", known),
        RCFilter("ADC input RC (invented)", 1e3, 100e-9),
    ]
    return _design(sensor, stages, counts=counts, open_adc=open_adc, **kw)


BUILDERS = {
    "inverting": inverting_design,
    "transimpedance": transimpedance_design,
    "sallen-key": filter_design,
    "multiple-feedback": lambda **kw: filter_design(topology="multiple-feedback", **kw),
    "noninverting": noninverting_design,
}


def _round_trip(design, split=False):
    plan = plan_design(design)
    assert plan.feasible, plan.reasons
    chain = realise(plan, design)
    if split:  # e_n and i_n at half the power each
        stages = list(chain.stages)
        for slot_path, limit in plan.limits.items():
            if limit.get("stage_split") is not None:
                stages[int(slot_path[7:-1])] = limit["stage_split"]
        from dataclasses import replace

        chain = replace(chain, stages=tuple(stages))
    b = forward_budget(chain, design.band, requirement=design.requirement)
    return plan, b


@pytest.mark.parametrize("kind", sorted(BUILDERS))
@pytest.mark.parametrize("open_adc", [False, True])
@pytest.mark.parametrize("split", [False, True])
def test_round_trip_every_stage_type(kind, open_adc, split):
    plan, b = _round_trip(BUILDERS[kind](open_adc=open_adc), split=split)
    assert b.total_rms_v == pytest.approx(plan.allowed_noise_rms_v, rel=1e-9)


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    kind=st.sampled_from(sorted(BUILDERS)),
    counts=st.floats(200.0, 20_000.0),
    open_adc=st.booleans(),
    top=st.sampled_from([300.0, 1e3, 2e3]),
    averaging=st.sampled_from([1, 4, 16]),
    split=st.booleans(),
)
def test_round_trip_property_across_stage_types(kind, counts, open_adc, top, averaging, split):
    design = BUILDERS[kind](open_adc=open_adc, counts=counts, top=top, averaging=averaging)
    plan = plan_design(design)
    assume(plan.feasible)
    _, b = _round_trip(design, split=split)
    assert b.total_rms_v == pytest.approx(plan.allowed_noise_rms_v, rel=1e-9)


def _rows(plan, part):
    return {r.quantity: r for r in plan.requirements if r.part == part}


def test_open_inverting_gets_en_in_and_gbw():
    plan = plan_design(inverting_design())
    rows = _rows(plan, "inverting front end")
    en = rows["white voltage noise e_n (current noise negligible)"]
    assert en.unit == "V/√Hz" and en.bound == "max" and 0 < en.value < 1e-6
    assert rows["current noise i_n (voltage noise negligible)"].unit == "A/√Hz"
    gbw = rows["gain-bandwidth product GBW"]
    # The largest gain the 5 V range allows: 5 V / 20 mV = 250 V/V; the check's criterion
    # GBW/f_top ≥ G at the 1 kHz band top gives 250 kHz.
    assert gbw.value == pytest.approx(250.0 * 1e3, rel=1e-12)


def test_flatness_gbw_is_the_single_pole_closed_loop():
    # 10·log10(1 + (f·NG/GBW)²) at the limit equals the stated flatness (single-pole
    # closed loop G/(1 + j·f·NG/GBW); the solver's op amp has exactly this model).
    plan = plan_design(inverting_design(gain=100.0, flatness=0.1))
    gbw = _rows(plan, "inverting front end")["gain-bandwidth product GBW"].value
    assert 10 * math.log10(1 + (1e3 * 101.0 / gbw) ** 2) == pytest.approx(0.1, rel=1e-9)
    assert gbw == pytest.approx(flatness_gbw_hz(101.0, 1e3, 0.1), rel=1e-12)


def test_transimpedance_flat_gbw_has_no_peak_in_the_solved_circuit():
    # At the GBW the plan states, the solved closed loop has Q = 1/√2 (Butterworth):
    # |H(f)|² = 1/(1 + (f/f0)^4) for a second-order low-pass with Q = 1/√2, so it never
    # rises above its DC value and is 3 dB down at f0 (Butterworth, any filter text).
    design = transimpedance_design(rf=1e6)
    plan = plan_design(design)
    gbw = _rows(plan, "photodiode amplifier")["gain-bandwidth product GBW for a flat response"]
    c_in = 55e-12
    assert gbw.value == pytest.approx(transimpedance_flat_gbw_hz(1e6, 1e-12, c_in, 1e9))
    chain = realise(plan, design)
    seg = circuit_of(chain).segments[0]
    f = np.geomspace(1.0, 1e8, 4000)
    signal = seg.power_transfers(f)[1]
    assert signal.max() <= signal[0] * (1 + 1e-6)
    # Q = 1/√2 exactly: C_T s² + (G_f + G_sh + ω_t C_f) s + ω_t G_f = 0 (module notes).
    w_t = 2 * math.pi * gbw.value
    g_f, g_sh, c_t = 1e-6, 1e-9, c_in + 1e-12
    q = math.sqrt(w_t * g_f * c_t) / (g_f + g_sh + w_t * 1e-12)
    assert q == pytest.approx(1 / math.sqrt(2), rel=1e-9)


def test_open_transimpedance_gets_the_largest_rf_the_range_allows():
    plan = plan_design(transimpedance_design())
    gain = [r for r in plan.requirements if r.quantity.startswith("front-end gain the ADC")]
    assert gain[0].unit == "V/A"
    # 5 V range over a 2 µA span: 2.5 MΩ.
    assert gain[0].value == pytest.approx(5.0 / 2e-6, rel=1e-12)


def test_open_filter_with_topology_limits_its_op_amps():
    plan = plan_design(filter_design())
    rows = _rows(plan, "anti-alias filter")
    en = rows["white voltage noise e_n of each of its 2 op amps (current noise negligible)"]
    assert en.bound == "max" and en.value > 0
    assert "equivalent noise resistance of the filter" not in rows
