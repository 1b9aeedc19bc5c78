"""The embedded examples: they load, are labelled invented, and their budgets agree
with hand calculations from published formulas and general-purpose libraries.

The examples are INVENTED scenarios; these checks test the tool's arithmetic on
them, not the parts.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import constants, integrate, signal, special

from resplan.chain.design import OpenPart
from resplan.chain.verdict import judge_design
from resplan.designfile.examples import (
    DEFAULT_EXAMPLE,
    EXAMPLE_NAMES,
    example_text,
    list_examples,
    load_example,
)
from resplan.designfile.load import check_design
from resplan.output.budget_text import check_data, format_budget, verdict

COMPLETE = (
    "hive-scale",
    "soil-temperature",
    "pipeline-vibration",
    "hive-spread",
    "tank-pressure",
    "turbidity-photodiode",
)


def contribution(budget, name):
    (c,) = [c for c in budget.contributions if c.name == name]
    return c


def k_pp(coverage: float) -> float:
    """Gaussian peak-to-peak factor 2√2·erfinv(P) (GUM, JCGM 100:2008 annex G; scipy.special)."""
    return 2 * math.sqrt(2) * special.erfinv(coverage)


def sinc_enbw_over_odr(order: int) -> float:
    """∫₀^∞ (sin πu / πu)^(2k) du: the ENBW of a sinc^k filter over its output rate, large R.

    Integrated numerically with scipy.integrate.quad (tail beyond u = 400 is < 1e-12).
    """
    value, _ = integrate.quad(lambda u: np.sinc(u) ** (2 * order), 0, 400, limit=4000)
    return value


def test_every_example_is_listed_loads_and_is_labelled_invented():
    assert DEFAULT_EXAMPLE == "hive-scale"
    listed = dict(list_examples())
    assert list(listed) == list(EXAMPLE_NAMES)
    for name in EXAMPLE_NAMES:
        text = example_text(name)
        assert text.startswith(f"# {name}: ")
        assert "INVENTED" in text
        design = load_example(name)
        assert "invented" in design.meta.title
        assert "invented" in design.sensor.name
        for part in (*design.stages, design.reference, design.adc):
            if part is not None and not isinstance(part, OpenPart):
                assert "(invented)" in part.name, (name, part.name)


@pytest.mark.parametrize("name", COMPLETE)
def test_complete_examples_check_as_their_description_says(name):
    design = load_example(name)
    budget = check_design(design)
    description = dict(list_examples())[name]
    says_meets = "does NOT meet" not in description
    judged = judge_design(design, budget)  # every item, not the noise alone
    assert judged.meets is says_meets
    line = verdict(budget, judged)
    assert line.startswith("MEETS" if says_meets else "DOES NOT MEET")
    text = format_budget(budget, design)
    assert text.splitlines()[-1] == line
    data = check_data(budget, design)
    assert data["verdict"] == line and data["meets_requirement"] is says_meets


def test_kickoff_is_all_open():
    design = load_example("kickoff-bridge")
    assert {p.kind for p in design.open_parts} == {"amplifier", "reference", "adc"}
    assert not design.is_complete


def test_hive_scale_against_a_hand_budget():
    budget = check_design(load_example("hive-scale"))
    # Allowed: σ = S/(counts·k_pp) with the interference allowance taken out in power.
    allowed_total = 10e-3 / (20_000 * k_pp(0.999))
    assert budget.requirement.allowed_total_rms_v == pytest.approx(allowed_total, rel=1e-9)
    assert budget.allowed_rms_v == pytest.approx(math.sqrt(allowed_total**2 - 20e-9**2), rel=1e-9)
    # Thermal noise of bridge (350 Ω) and input RC (2 kΩ) at 30 °C, √(4kTR)
    # (Johnson 1928, Nyquist 1928; k from scipy.constants), over the sinc3 noise
    # bandwidth 0.275·ODR less the 10 mHz lower edge.
    t = 303.15
    enbw = sinc_enbw_over_odr(3) * 10.0 - 0.01
    assert sinc_enbw_over_odr(3) == pytest.approx(11 / 40, rel=1e-6)  # closed form, from memory
    thermal = math.sqrt(4 * constants.k * t * (350 + 2000) * enbw)
    adc = 45e-9
    hand = math.sqrt(adc**2 + thermal**2)
    # 0.5 %: the hand budget ignores the aliases near multiples of 64 kHz that the
    # 8 kHz RC lets through (about 2.5 % of the thermal power, 0.1 % of the total).
    assert budget.total_rms_v == pytest.approx(hand, rel=5e-3)
    assert contribution(budget, "converter noise").rms_v == pytest.approx(adc, rel=1e-12)
    assert budget.margin_bits == pytest.approx(math.log2(budget.allowed_rms_v / hand), abs=0.01)
    # noise-free counts = S/(k_pp·σ)
    assert budget.noise_free_counts == pytest.approx(
        10e-3 / (k_pp(0.999) * budget.total_rms_v), rel=1e-9
    )


def test_soil_temperature_converter_terms():
    budget = check_design(load_example("soil-temperature"))
    gain = 20.0
    lsb = 2.5 / 2**16
    averaging = 1 / math.sqrt(100)  # white noise of N averaged samples falls as 1/√N
    # Quantisation q/√12 (Bennett 1948), referred to the sensor.
    q = contribution(budget, "quantisation")
    assert q.rms_v == pytest.approx(lsb / math.sqrt(12) * averaging / gain, rel=1e-6)
    tn = contribution(budget, "transition noise")
    assert tn.rms_v == pytest.approx(0.6 * lsb * averaging / gain, rel=1e-6)
    # ADC range used: span × gain / FSR
    assert budget.adc_range_used == pytest.approx(26.95e-3 * 20 / 2.5, rel=1e-12)
    # 0.01 degC needs 7000 counts over 70 K.
    assert budget.requirement.noise_free_counts == pytest.approx(7000, rel=1e-9)


def test_pipeline_vibration_against_scipy_and_ieee_1241():
    budget = check_design(load_example("pipeline-vibration"))
    fsr = 2 * 4.096
    gain = 0.8
    # SNR → rms: σ = FSR/(2√2)·10^(−SNR/20) (IEEE Std 1241-2010); an ideal 10 kHz
    # band limit at 200 kHz keeps 10/100 of the white noise power.
    sigma_adc = fsr / (2 * math.sqrt(2)) * 10 ** (-99 / 20) * math.sqrt(10e3 / 100e3)
    assert contribution(budget, "converter noise").adc_rms_v == pytest.approx(sigma_adc, rel=1e-9)
    # Sensor noise 100 nV/√Hz with a 10 Hz 1/f corner through the 4th-order
    # Butterworth (scipy.signal prototype) over 1 Hz … 10 kHz; aliases from near
    # 200 kHz are attenuated by ~78 dB and neglected.
    b, a = signal.butter(4, 2 * math.pi * 20e3, analog=True)

    def psd(f):
        _, h = signal.freqs(b, a, worN=[2 * math.pi * f])
        return (100e-9) ** 2 * (1 + 10 / f) * abs(h[0]) ** 2

    var, _ = integrate.quad(psd, 1.0, 10e3, points=[10, 100, 1000], limit=200)
    assert contribution(budget, "sensor's own noise").rms_v == pytest.approx(
        math.sqrt(var), rel=2e-3
    )
    # Dynamic range = 20·log10((S/(2√2))/σ) over the 10 V span.
    dr = 20 * math.log10(10 / (2 * math.sqrt(2)) / budget.total_rms_v)
    assert budget.dynamic_range_db == pytest.approx(dr, abs=1e-9)
    assert budget.adc_range_used == pytest.approx(10 * gain / fsr, rel=1e-12)
    assert budget.meets_requirement is False and budget.dynamic_range_db < 108


def test_turbidity_photodiode_against_a_hand_budget():
    # The INVENTED photodiode example: referred to the sensor everything is a current.
    budget = check_design(load_example("turbidity-photodiode"))
    assert budget.sensor_unit == "A" and budget.gain == pytest.approx(1e6)  # R_f, V/A
    # Shot noise of the 2 µA full-scale photocurrent, √(2qI) (Schottky 1918; q from
    # scipy.constants), over the 10 kHz digital band limit. 2 %: the analog path droops
    # 0.6 dB at the band top and sampling folds a little noise from above 100 kHz.
    shot = budget["sensor.signal_shot"]
    assert shot.density_v_per_rthz == pytest.approx(math.sqrt(2 * constants.e * 2e-6), rel=1e-9)
    assert shot.rms_v == pytest.approx(math.sqrt(2 * constants.e * 2e-6 * 10e3), rel=0.02)
    # Thermal noise current of R_f, √(4kT/R) at 30 °C (Johnson 1928, Nyquist 1928), the same band.
    rf = budget["stages[0].RF.thermal"]
    assert rf.rms_v == pytest.approx(math.sqrt(4 * constants.k * 303.15 / 1e6 * 10e3), rel=0.02)
    # Dynamic range = 20·log10((S/(2√2))/σ) for a full-scale sine over the 2 µA span.
    expected_dr = 20 * math.log10(2e-6 / (2 * math.sqrt(2)) / budget.total_rms_v)
    assert budget.dynamic_range_db == pytest.approx(expected_dr, rel=1e-12)
