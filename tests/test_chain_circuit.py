"""The forward budget of whole chains, solved as circuits, against ngspice and closed forms.

Each case is an INVENTED chain (demo values only). The budget sums the analog
contributions at the ADC input; the same circuit, written here part by part as an
independent netlist (op amps with A₀ = 1e9 where the chain's are ideal in DC gain),
goes through ngspice's ``.noise`` from 10 mHz to 100 GHz on 100 points a decade. The
budget integrates from 10 mHz to infinity; above 100 GHz every case has less than 1e-4
of its power (the
highest pole is a 10 MHz op-amp pole: (1e7/1e11)/(π/2) = 6e-5), and ngspice's k
differs from the SI value by 3.5e-7, so agreement within 1e-3 is asked, as the issue
states; it comes out better than 1e-4.

The "closed form" columns are the hand method (docs/formulas.md): they are exact for
the two-RC cascade (equipartition, √(kT/C₂); Nyquist 1928) and the balanced source
(i_n·R_s/2 in each leg), and the tests show where the old single-formula estimates
depart.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import constants
from scipy.integrate import trapezoid  # numpy.trapezoid is numpy ≥ 2 only
from spice_harness import require_ngspice, run_noise

from resplan import ADC, Band, NoiseDensity, Sensor, TransitionNoise, forward_budget
from resplan.chain.circuit_checks import check_circuit
from resplan.chain.netlists import (
    POINTS_PER_DECADE,
    build_circuit,
    transfer_table,
)
from resplan.chain.signal_chain import Chain
from resplan.chain.stages import (
    ActiveFilter,
    IntegratedAmplifier,
    NonInvertingStage,
    RCFilter,
    TransimpedanceStage,
)
from resplan.errors import DesignError
from resplan.noise.netlist import (
    Capacitor,
    CurrentNoise,
    CurrentSource,
    Netlist,
    OpAmp,
    OpAmpModel,
    Resistor,
    ShotNoise,
    VoltageSource,
    noisy_opamp,
)
from resplan.noise.sections import lowpass_cascade_parts

T = 300.0
F_LOW = 0.01
F_TOP = 1e11
TOLERANCE = 1e-3


def _adc() -> ADC:
    """An INVENTED noiseless 24-bit SAR, so that only the front end is counted."""
    return ADC("invented SAR", "sar", 24, 10.0, 1e6, TransitionNoise(0.0))


def _analog_rms(chain: Chain) -> tuple[float, dict]:
    budget = forward_budget(chain, Band(F_LOW))
    analog = [c for c in budget.contributions if c.kind not in ("adc", "quantisation")]
    return math.sqrt(sum(c.adc_rms_v**2 for c in analog)), {c.id: c for c in analog}


def _spice_rms(net: Netlist) -> float:
    require_ngspice()
    return run_noise(net, F_LOW, F_TOP, 100).onoise_total_v


# --- the table, row by row ----------------------------------------------------


def test_unity_gain_sallen_key_op_amp_noise_is_not_low_passed():
    # e_n 10 nV/√Hz, GBW 10 MHz, 2nd-order Butterworth at 1 kHz: the noise gain of a unity
    # Sallen-Key stays 1 above f_c up to the GBW, so e_n integrates over ~π/2·GBW:
    # 10 nV·√(π/2·10 MHz) = 39.6 µV (the single-pole closed form for the part above f_c).
    flt = ActiveFilter(
        "invented SK",
        "butterworth",
        2,
        1e3,
        topology="sallen-key",
        en=NoiseDensity(10e-9),
        gbw_hz=10e6,
    )
    chain = Chain(Sensor(1.0, 1.0), (flt,), _adc(), temperature_k=T)
    total, got = _analog_rms(chain)
    en = got["stages[0].sections[0].opamp.en"].adc_rms_v
    assert en == pytest.approx(10e-9 * math.sqrt(math.pi / 2 * 10e6), rel=2e-3)
    ref = Netlist(
        [
            VoltageSource("vin", "src", "0"),
            Resistor("Rs", "src", "in", 1.0),
            *lowpass_cascade_parts(
                "f", "butterworth", 2, 1e3, "in", "out", OpAmpModel(1e9, 10e6, 10e-9)
            ),
        ],
        output="out",
        signal_input="vin",
        temperature_k=T,
    )
    assert total == pytest.approx(_spice_rms(ref), rel=TOLERANCE)


@pytest.mark.parametrize("order", [2, 4])
def test_sallen_key_resistor_noise_each_with_its_own_transfer(order):
    # Each resistor of the sections has its own transfer to the output; the old estimate
    # passed 4kT·ΣR through the filter response and was optimistic.
    flt = ActiveFilter("invented SK", "butterworth", order, 1e3, topology="sallen-key", gbw_hz=1e9)
    chain = Chain(Sensor(1.0, 1.0), (flt,), _adc(), temperature_k=T)
    total, got = _analog_rms(chain)
    resistors = [c for c in got.values() if c.kind == "thermal" and c.stage == "invented SK"]
    assert len(resistors) == 2 * (order // 2)
    ref = Netlist(
        [
            VoltageSource("vin", "src", "0"),
            Resistor("Rs", "src", "in", 1.0),
            *lowpass_cascade_parts(
                "f", "butterworth", order, 1e3, "in", "out", OpAmpModel(1e9, 1e9)
            ),
        ],
        output="out",
        signal_input="vin",
        temperature_k=T,
    )
    assert total == pytest.approx(_spice_rms(ref), rel=TOLERANCE)
    # The hand estimate: 4kT·ΣR through the Butterworth ENBW f_c·(π/2n)/sin(π/2n).
    r_sum = sum(p.resistance_ohm for p in ref.parts if isinstance(p, Resistor) and p.name != "Rs")
    enbw = 1e3 * (math.pi / (2 * order)) / math.sin(math.pi / (2 * order))
    hand = math.sqrt(4 * constants.k * T * r_sum * enbw)
    r_only = math.sqrt(sum(c.adc_rms_v**2 for c in resistors))
    assert hand < r_only  # the hand estimate is optimistic


def test_two_rc_sections_in_cascade_integrate_to_kt_over_c2():
    # Equipartition (Nyquist 1928): with every resistor at T and every capacitor to ground,
    # ⟨v²⟩ at the last capacitor is kT/C₂ whatever the resistors (k: scipy.constants).
    c2 = 2.2e-9
    chain = Chain(
        Sensor(1.0, 1e3),
        (RCFilter("invented RC1", 10e3, 10e-9), RCFilter("invented RC2", 47e3, c2)),
        _adc(),
        temperature_k=T,
    )
    total, _ = _analog_rms(chain)
    assert total == pytest.approx(math.sqrt(constants.k * T / c2), rel=1e-4)
    ref = Netlist(
        [
            VoltageSource("vin", "src", "0"),
            Resistor("Rs", "src", "a", 1e3),
            Resistor("R1", "a", "b", 10e3),
            Capacitor("C1", "b", "0", 10e-9),
            Resistor("R2", "b", "out", 47e3),
            Capacitor("C2", "out", "0", c2),
        ],
        output="out",
        signal_input="vin",
        temperature_k=T,
    )
    assert total == pytest.approx(_spice_rms(ref), rel=TOLERANCE)


def test_capacitor_shunts_the_current_noise_after_an_rc():
    # source 10 kΩ → RC (10 kΩ, 80 Hz with the source) → follower: above 80 Hz the
    # capacitor shunts i_n. The old estimate used the DC resistance at every frequency
    # over the follower's whole band and was several times too large.
    c = 1 / (2 * math.pi * 80.0 * 20e3)
    amp = NonInvertingStage(
        "invented follower", 0.0, None, NoiseDensity(0.0), NoiseDensity(10e-12), gbw_hz=1e6
    )
    chain = Chain(
        Sensor(1.0, 10e3), (RCFilter("invented RC", 10e3, c), amp), _adc(), temperature_k=T
    )
    total, got = _analog_rms(chain)
    current = got["stages[1].in_plus"].adc_rms_v
    exact = 10e-12 * 20e3 * math.sqrt(math.pi / 2 * 80.0)  # i_n into R‖C: an 80 Hz pole
    assert current == pytest.approx(exact, rel=2e-3)
    old = 10e-12 * 20e3 * math.sqrt(math.pi / 2 * 1e6)  # DC resistance over the 1 MHz pole
    assert old / current > 5
    ref = Netlist(
        [
            VoltageSource("vin", "src", "0"),
            Resistor("Rs", "src", "a", 10e3),
            Resistor("R1", "a", "p", 10e3),
            Capacitor("C1", "p", "0", c),
            CurrentNoise("in", "0", "p", 10e-12),
            OpAmp("U", "p", "out", "out", 1e9, 1e6),
        ],
        output="out",
        signal_input="vin",
        temperature_k=T,
    )
    assert total == pytest.approx(_spice_rms(ref), rel=TOLERANCE)


def test_balanced_source_splits_its_resistance_between_the_inputs():
    # Each input's i_n flows in its own half of R_s: i_n·R_s/2 per leg, i_n·R_s/√2 in
    # all, against i_n·R_s for a single-ended source (Motchenbacher & Connelly ch. 2).
    rs, i_n, g, bw = 10e3, 1e-12, 10.0, 10e3
    amp = IntegratedAmplifier(
        "invented in-amp", g, NoiseDensity(0.0), current_noise=NoiseDensity(i_n), bandwidth_hz=bw
    )
    chain = Chain(Sensor(0.1, rs, differential=True), (amp,), _adc(), temperature_k=T)
    total, got = _analog_rms(chain)
    legs = math.hypot(got["stages[0].in_plus"].rms_v, got["stages[0].in_minus"].rms_v)
    assert legs == pytest.approx(i_n * rs / math.sqrt(2) * math.sqrt(math.pi / 2 * bw), rel=1e-4)
    ref = Netlist(
        [
            VoltageSource("vin", "src", "0"),
            Resistor("Rp", "src", "p", rs / 2),
            Resistor("Rm", "0", "m", rs / 2),
            CurrentNoise("inp", "0", "p", i_n),
            CurrentNoise("inm", "0", "m", i_n),
            OpAmp("U", "p", "m", "out", g, g * bw),
        ],
        output="out",
        signal_input="vin",
        temperature_k=T,
    )
    assert total == pytest.approx(_spice_rms(ref), rel=TOLERANCE)


def test_photodiode_transimpedance_stage_against_ngspice():
    # An INVENTED photodiode: 1 GΩ shunt, 100 pF, 1 nA dark current, 1 µA full scale, into
    # 1 MΩ ∥ 2 pF with e_n 10 nV/√Hz, i_n 1 fA/√Hz, GBW 10 MHz. e_n sees the noise gain
    # 1 + C_in/C_F = 51 above the RF·C_in zero: the solver gives that peaking.
    sensor = Sensor(
        1e-6, 1e9, capacitance_f=100e-12, dark_current_a=1e-9, output="current", name="pd"
    )
    tia = TransimpedanceStage(
        "invented TIA", 1e6, NoiseDensity(10e-9), NoiseDensity(1e-15), cf_f=2e-12, gbw_hz=10e6
    )
    chain = Chain(sensor, (tia,), _adc(), temperature_k=T)
    total, got = _analog_rms(chain)
    assert {"sensor.thermal", "sensor.dark_current", "sensor.signal_shot"} <= got.keys()
    assert "stages[0].opamp.en" in got
    ref = Netlist(
        [
            CurrentSource("iin", "0", "in"),
            Resistor("Rsh", "in", "0", 1e9),
            Capacitor("Cj", "in", "0", 100e-12),
            ShotNoise("dark", "in", "0", 1e-9),
            ShotNoise("sig", "in", "0", 1e-6),
            Resistor("RF", "in", "out", 1e6),
            Capacitor("CF", "in", "out", 2e-12),
            *noisy_opamp(
                "U",
                "0",
                "in",
                "out",
                dc_gain=1e9,
                gbw_hz=10e6,
                en_v_per_rthz=10e-9,
                in_minus_a_per_rthz=1e-15,
            ),
        ],
        output="out",
        signal_input="iin",
        temperature_k=T,
    )
    assert total == pytest.approx(_spice_rms(ref), rel=TOLERANCE)
    # Referred to the sensor the budget is in A: divided by the 1 MΩ transimpedance.
    budget = forward_budget(chain, Band(F_LOW))
    assert budget.gain == pytest.approx(1e6)


# --- the table itself and bad input ---------------------------------------------------


@pytest.mark.parametrize("order", [2, 8])
def test_table_interpolation_against_a_dense_direct_solve(order):
    # The table (80 points a decade, cubic in log-log) against the same circuit solved
    # directly on 400 points a decade, integrated by the same rule: within 1e-5.
    flt = ActiveFilter("f", "butterworth", order, 1e3, topology="sallen-key", gbw_hz=1e9)
    circuit = build_circuit(Sensor(1.0, 1.0), (flt,), T, T)
    table = transfer_table(circuit, F_LOW)
    f = np.geomspace(1.0, 1e6, 4001)
    direct = circuit.power_transfers(f)
    read = table.power_gain(f)
    live = table.live
    ratio = trapezoid(read[live], f, axis=1) / trapezoid(direct[live], f, axis=1)
    assert np.max(np.abs(ratio - 1)) < 1e-5
    assert POINTS_PER_DECADE == 80


def test_op_amp_that_cannot_reach_the_gain_at_the_band_top_is_refused():
    amp = NonInvertingStage(
        "invented slow", 99e3, 1e3, NoiseDensity(5e-9), NoiseDensity(1e-12), gbw_hz=100e3
    )
    chain = Chain(Sensor(0.01, 100.0), (amp,), _adc(), temperature_k=T)
    with pytest.raises(DesignError) as err:
        forward_budget(chain, Band(F_LOW, 10e3))
    assert err.value.field == "stages[0].gbw"


def test_transimpedance_needs_a_current_sensor():
    tia = TransimpedanceStage("t", 1e6, NoiseDensity(1e-9), cf_f=1e-12, gbw_hz=1e7)
    with pytest.raises(DesignError) as err:
        check_circuit(build_circuit(Sensor(1.0, 1.0), (tia,), T, T))
    assert err.value.field == "stages[0].type"


# --- design files ---------------------------------------------------------------------


def _pipeline_text(replace: dict[str, str]) -> str:
    from resplan.designfile.examples import example_text

    text = example_text("pipeline-vibration")  # an INVENTED example
    for old, new in replace.items():
        assert old in text
        text = text.replace(old, new)
    return text


def test_design_file_active_filter_by_topology_and_sensor_fields():
    from resplan.designfile.load import check_design, loads_design

    text = _pipeline_text(
        {
            'noise_resistance = "4 kohm"\n': "",
            "gain = 0.8\n": 'gain = 1\ntopology = "sallen-key"\ngbw = "20 MHz"\nin = "1 pA/√Hz"\n',
            'resistance = "100 ohm"\n': 'resistance = "100 ohm"\ncapacitance = "1 nF"\n'
            'dark_current = "1 nA"\n',
        }
    )
    budget = check_design(loads_design(text))
    ids = {c.id for c in budget.contributions}
    assert {"stages[0].sections[1].opamp.en", "stages[0].sections[0].R1.thermal"} <= ids
    assert "sensor.dark_current" in ids


def test_design_file_inverting_stage():
    from resplan.designfile.load import check_design, loads_design

    text = _pipeline_text(
        {
            "[[stages]]\n": '[[stages]]\ntype = "inverting"\nname = "invented inverter"\n'
            'rf = "10 kohm"\nrin = "10 kohm"\nen = "5 nV/√Hz"\nin = "1 pA/√Hz"\n'
            'gbw = "10 MHz"\n\n[[stages]]\n',
        }
    )
    budget = check_design(loads_design(text))
    ids = {c.id for c in budget.contributions}
    assert {"stages[0].opamp.en", "stages[0].Rin.thermal", "stages[0].RF.thermal"} <= ids


def test_design_file_topology_needs_order_two():
    from resplan.designfile.load import loads_design

    text = _pipeline_text(
        {"order = 4\n": "order = 1\n", "gain = 0.8\n": 'topology = "sallen-key"\n'}
    )
    from resplan.errors import DesignErrors

    with pytest.raises(DesignErrors) as err:
        loads_design(text)
    assert "stages[0].order: got 1" in str(err.value)


def test_differential_rc_before_an_in_amp_is_kt_over_c_across():
    # Balanced source → R/2 in each leg → C across → in-amp: the differential voltage on
    # C holds kT/C (equipartition, Nyquist 1928; k from scipy.constants).
    amp = IntegratedAmplifier("invented in-amp", 1.0, NoiseDensity(0.0), bandwidth_hz=1e9)
    chain = Chain(
        Sensor(0.1, 2e3, differential=True),
        (RCFilter("invented RC", 2e3, 1e-9), amp),
        _adc(),
        temperature_k=T,
    )
    total, got = _analog_rms(chain)
    assert {"stages[0].R+.thermal", "stages[0].R-.thermal"} <= got.keys()
    assert total == pytest.approx(math.sqrt(constants.k * T / 1e-9), rel=1e-4)
