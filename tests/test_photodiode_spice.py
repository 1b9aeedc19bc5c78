"""The invented photodiode example against ngspice and against the transimpedance closed form.

The circuit of the embedded example ``turbidity-photodiode`` (INVENTED values: a
500 MΩ ∥ 2 nF photodiode with 2 nA dark current and a 2 µA span, a 1 MΩ ∥ 5 pF
transimpedance stage with e_n 15 nV/√Hz (1/f corner 100 Hz), i_n 2 fA/√Hz, GBW
20 MHz and 5 pF input capacitance, then a 1 kΩ / 3.3 nF RC) is written here part
by part from the values the design file gives, as an independent netlist, and
run through ngspice's ``.noise`` (``tests/spice_harness.py``; its op amp is a
single-pole macro with A₀ = 1e9 where resplan's DC gain is infinite: below
GBW/A₀ = 20 mHz only, outside the band).

The resplan side is what the forward budget integrates: each analog contribution's
density at the ADC input, (density referred to the sensor × gain)² × (1 + f_c/f) ×
its path's power gain (the solver's table, interpolated). Compared:

- the total density at the ADC input at 5 frequencies, and
- the output rms integrated over the stated band 0.1 Hz … 1 MHz (whole decades, so
  that ngspice's grid ends on the band edge), the same power law between grid points
  on both sides (``resplan.noise.nodal.integrate_psd``),

each within 1e-3 (the issue's bound). What limits agreement: ngspice's Boltzmann
constant (CODATA 2014, 3.5e-7 in power from SI 2019), the A₀ of its op-amp macro, and
the interpolation of the budget's table (80 points a decade, four-point Lagrange in
ln f, about 1e-5).

The e_n noise gain is also held to the closed form of a single-pole op amp in a
transimpedance loop: v_o/e_n = NG/(1 + NG·s/ω_t), NG = 1 + Z_f/Z_in (the feedback
relation A/(1 + Aβ) with A = ω_t/s and β = 1/NG; Graeme, *Photodiode Amplifiers*,
1996, from memory).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from spice_harness import require_ngspice, run_noise

from resplan.designfile.examples import load_example
from resplan.designfile.load import check_design
from resplan.noise.netlist import (
    Capacitor,
    CurrentSource,
    Netlist,
    Resistor,
    ShotNoise,
    noisy_opamp,
)
from resplan.noise.nodal import integrate_psd

F_START, F_STOP, PER_DECADE = 0.1, 1e6, 100
TOLERANCE = 1e-3
CHECK_HZ = (1.0, 100.0, 3e3, 30e3, 300e3)


@pytest.fixture(scope="module")
def example():
    design = load_example("turbidity-photodiode")
    return design, check_design(design)


def _netlist(design) -> Netlist:
    s, tia, rc = design.sensor, design.stages[0], design.stages[1]
    assert s.output == "current" and s.offset_v == 0.0 and not s.bipolar
    return Netlist(
        [
            CurrentSource("Iph", "0", "pd"),
            Resistor("Rsh", "pd", "0", s.resistance_ohm),
            Capacitor("Cj", "pd", "0", s.capacitance_f),
            Capacitor("Cin", "pd", "0", tia.input_capacitance_f),
            ShotNoise("Idark", "pd", "0", s.dark_current_a),
            ShotNoise("Ifull", "pd", "0", s.span_v),  # full scale of a span from 0
            Resistor("Rf", "pd", "tia", tia.rf_ohm),
            Capacitor("Cf", "pd", "tia", tia.cf_f),
            *noisy_opamp(
                "U1",
                "0",
                "pd",
                "tia",
                dc_gain=1e9,
                gbw_hz=tia.gbw_hz,
                en_v_per_rthz=tia.en.white,
                en_corner_hz=tia.en.corner_hz,
                in_minus_a_per_rthz=tia.in_minus.white,
            ),
            Resistor("Raa", "tia", "adc", rc.resistance_ohm),
            Capacitor("Caa", "adc", "0", rc.capacitance_f),
        ],
        output="adc",
        signal_input="Iph",
        temperature_k=design.temperature_k,
    )


def _budget_density_sq(budget, f: np.ndarray) -> np.ndarray:
    """Σ of every analog contribution's density² at the ADC input, V²/Hz, as the budget has it."""
    total = np.zeros_like(f)
    for c in budget.contributions:
        if c.density_v_per_rthz is None:  # converter and reference figures: not analog
            continue
        white_sq = (c.density_v_per_rthz * budget.gain) ** 2
        (path,) = c.responses
        total += white_sq * (1.0 + (c.corner_hz or 0.0) / f) * path.power_gain(f)
    return total


def test_example_density_and_band_rms_agree_with_ngspice(example):
    require_ngspice()
    design, budget = example
    spice = run_noise(_netlist(design), F_START, F_STOP, PER_DECADE)
    f = spice.frequency_hz
    assert f[0] == pytest.approx(F_START) and f[-1] == pytest.approx(F_STOP)
    ours = _budget_density_sq(budget, f)
    rms_ours = math.sqrt(float(integrate_psd(f, ours)))
    assert rms_ours == pytest.approx(spice.onoise_total_v, rel=TOLERANCE)
    for fc in CHECK_HZ:
        k = int(np.argmin(np.abs(np.log(f / fc))))
        assert math.sqrt(ours[k]) == pytest.approx(spice.onoise_v_per_rthz[k], rel=TOLERANCE), fc


def test_en_noise_gain_peaking_against_the_closed_form(example):
    design, budget = example
    s, tia = design.sensor, design.stages[0]
    f = np.array(CHECK_HZ)
    w = 2j * math.pi * f
    c_total = s.capacitance_f + tia.input_capacitance_f
    z_f = tia.rf_ohm / (1 + w * tia.rf_ohm * tia.cf_f)
    z_in = s.resistance_ohm / (1 + w * s.resistance_ohm * c_total)
    ng = 1 + z_f / z_in
    closed_loop = ng / (1 + ng * w / (2 * math.pi * tia.gbw_hz))
    rc = 1 / (1 + w * design.stages[1].resistance_ohm * design.stages[1].capacitance_f)
    expected = np.abs(closed_loop * rc) ** 2
    c = budget["stages[0].opamp.en"]
    white_sq = (c.density_v_per_rthz * budget.gain) ** 2
    (path,) = c.responses
    solved = white_sq * path.power_gain(f) / tia.en.white**2
    np.testing.assert_allclose(solved, expected, rtol=1e-4)
    # The peaking itself: ~1 at DC, 1 + C_total/C_f ≈ 402 on the plateau.
    assert abs(ng[0]) == pytest.approx(1.0, abs=0.01)
    assert abs(1 + c_total / tia.cf_f) == pytest.approx(402.0)


def test_en_is_the_largest_contribution_and_far_above_its_dc_estimate(example):
    _, budget = example
    en = budget["stages[0].opamp.en"]
    assert budget.contributions[0].id == "stages[0].opamp.en"
    # The hand estimate e_n/R_f over the 10 kHz band (flat noise gain 1): 1.5 pA rms.
    flat = 15e-9 / 1e6 * math.sqrt(10e3)
    assert en.rms_v > 50 * flat
