"""Active filters given by component values, and an RC with C to ground per leg.

Every circuit here is INVENTED. References:

- the same filter given by (response, order, cutoff) and by the component values
  resplan synthesises for it must give the same budget (an identity of the two paths);
- the section's f₀ and Q against the prototype tables of ``scipy.signal`` (buttap,
  besselap with norm="mag"): f₀ = |p|, Q = |p|/(−2 Re p);
- ngspice (``tests/spice_harness.py``) on netlists written here from the same values:
  output density at 5 frequencies and rms over a stated band within 1e-3;
- a differential RC's differential-mode corner 1/(2πR(C + C_leg/2)) (half-circuit
  analysis, from memory) and its total noise √(kT/C_dm)·√2 summed over both legs'
  equipartition (Nyquist 1928): checked against ngspice, not assumed.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import signal
from spice_harness import require_ngspice, run_noise

from resplan.chain.netlists import build_circuit
from resplan.chain.stages import ActiveFilter, NoiseDensity, RCFilter, Sensor
from resplan.designfile.examples import example_text
from resplan.designfile.load import check_design, loads_design
from resplan.errors import DesignError, DesignErrors
from resplan.noise.netlist import Capacitor, Netlist, Resistor, VoltageSource, noisy_opamp
from resplan.noise.nodal import integrate_psd
from resplan.noise.sections import (
    MultipleFeedbackValues,
    SallenKeyValues,
    filter_sections,
    multiple_feedback_lowpass,
    sallen_key_lowpass,
    section_f0_q,
)

T = 300.0
TOLERANCE = 1e-3


def _pipeline(stage_text: str) -> str:
    """The INVENTED pipeline-vibration example with its filter stage replaced."""
    text = example_text("pipeline-vibration")
    start = text.index("[[stages]]")
    end = text.index("[reference]")
    return text[:start] + stage_text + "\n" + text[end:]


def _sections_text(values) -> str:
    rows = []
    for v in values:
        keys = [("r1", v.r1_ohm, "ohm"), ("r2", v.r2_ohm, "ohm")]
        if isinstance(v, MultipleFeedbackValues):
            keys.append(("r3", v.r3_ohm, "ohm"))
        keys += [("c1", v.c1_f, "F"), ("c2", v.c2_f, "F")]
        rows.append("{ " + ", ".join(f'{k} = "{x!r} {u}"' for k, x, u in keys) + " }")
    return "sections = [\n  " + ",\n  ".join(rows) + ",\n]\n"


FILTER_HEAD = """[[stages]]
type = "active_filter"
name = "invented anti-alias filter"
topology = "{topology}"
en = "8 nV/√Hz"
in = "1 pA/√Hz"
gbw = "20 MHz"
"""


@pytest.mark.parametrize("topology", ["sallen-key", "multiple-feedback"])
@pytest.mark.parametrize(("kind", "order"), [("butterworth", 4), ("bessel", 6)])
def test_values_and_prototype_give_the_same_budget(topology, kind, order):
    head = FILTER_HEAD.format(topology=topology)
    by_prototype = head + f'response = "{kind}"\norder = {order}\ncutoff = "20 kHz"\n'
    synth = sallen_key_lowpass if topology == "sallen-key" else multiple_feedback_lowpass
    values = [synth(s.f0_ratio * 20e3, s.q) for s in filter_sections(kind, order)]
    by_values = head + _sections_text(values)
    a = check_design(loads_design(_pipeline(by_prototype)))
    b = check_design(loads_design(_pipeline(by_values)))
    assert sorted(a.ids) == sorted(b.ids)
    # The values are written with repr(): the same floats, so the same circuit.
    assert b.total_rms_v == pytest.approx(a.total_rms_v, rel=1e-12)
    design = loads_design(_pipeline(by_values))
    assert design.stages[0].order == order
    assert design.stages[0].cutoff_hz == pytest.approx(20e3, rel=1e-6)


@pytest.mark.parametrize(("kind", "order"), [("butterworth", 5), ("bessel", 4)])
def test_section_f0_and_q_against_scipy_prototypes(kind, order):
    # scipy.signal prototypes: f₀ = |p|, Q = |p|/(−2 Re p) for each pole pair.
    z, p, k = signal.buttap(order) if kind == "butterworth" else signal.besselap(order, "mag")
    pairs = sorted((abs(x), abs(x) / (-2 * x.real)) for x in p if x.imag > 1e-12)
    got = sorted(
        section_f0_q(sallen_key_lowpass(s.f0_ratio * 1e3, s.q))[:2]
        for s in filter_sections(kind, order)
        if s.q is not None
    )
    for (f0, q), (w, q_ref) in zip(got, pairs, strict=True):
        assert f0 == pytest.approx(w * 1e3, rel=1e-9)
        assert q == pytest.approx(q_ref, rel=1e-9)


def test_values_against_ngspice():
    # An INVENTED two-section Sallen-Key with gain 1 + 5k/10k in the first section.
    require_ngspice()
    sk1 = SallenKeyValues(10e3, 22e3, 15e-9, 4.7e-9, 1.5, 5e3, 10e3)
    sk2 = SallenKeyValues(4.7e3, 4.7e3, 33e-9, 6.8e-9, 1.0, None, None)
    en, i_n, gbw = NoiseDensity(8e-9, 10.0), NoiseDensity(1e-12), 10e6
    stage = ActiveFilter.from_sections(
        "invented", "sallen-key", (sk1, sk2), en=en, in_noise=i_n, gbw_hz=gbw
    )
    assert stage.gain == 1.5
    circuit = build_circuit(Sensor(1.0, 1e3), (stage,), T, T)
    ops = dict(dc_gain=1e9, gbw_hz=gbw, en_v_per_rthz=8e-9, en_corner_hz=10.0)
    ops.update(in_plus_a_per_rthz=1e-12, in_minus_a_per_rthz=1e-12)
    ref = Netlist(
        [
            VoltageSource("V1", "src", "0"),
            Resistor("Rs", "src", "in", 1e3),
            Resistor("A1", "in", "a1", 10e3),
            Resistor("A2", "a1", "b1", 22e3),
            Capacitor("AC1", "a1", "m", 15e-9),
            Capacitor("AC2", "b1", "0", 4.7e-9),
            Resistor("AF", "m", "f1", 5e3),
            Resistor("AG", "f1", "0", 10e3),
            *noisy_opamp("UA", "b1", "f1", "m", **ops),
            Resistor("B1", "m", "a2", 4.7e3),
            Resistor("B2", "a2", "b2", 4.7e3),
            Capacitor("BC1", "a2", "out", 33e-9),
            Capacitor("BC2", "b2", "0", 6.8e-9),
            *noisy_opamp("UB", "b2", "out", "out", **ops),
        ],
        output="out",
        signal_input="V1",
        temperature_k=T,
    )
    spice = run_noise(ref, 1.0, 1e7, 100)
    f = spice.frequency_hz
    power = circuit.power_transfers(f)  # (sources, frequencies)
    density_sq = (circuit.white_sq[:, None] * (1 + circuit.corner_hz[:, None] / f) * power).sum(0)
    assert math.sqrt(float(integrate_psd(f, density_sq))) == pytest.approx(
        spice.onoise_total_v, rel=TOLERANCE
    )
    for fc in (3.0, 300.0, 3e3, 30e3, 3e6):
        k = int(np.argmin(np.abs(np.log(f / fc))))
        assert math.sqrt(density_sq[k]) == pytest.approx(spice.onoise_v_per_rthz[k], rel=TOLERANCE)


def test_differential_rc_with_c_to_ground_per_leg_against_ngspice():
    require_ngspice()
    rc = RCFilter("invented RC", 2e3, 10e-9, 2.2e-9)
    assert rc.cutoff_hz == pytest.approx(1 / (2 * math.pi * 2e3 * (10e-9 + 1.1e-9)))
    sensor = Sensor(0.01, 350.0, differential=True)
    circuit = build_circuit(sensor, (rc,), T, T)
    ref = Netlist(
        [
            VoltageSource("V1", "p", "0"),
            Resistor("Rsp", "p", "ip", 175.0),
            Resistor("Rsm", "0", "im", 175.0),
            Resistor("Rp", "ip", "op", 1e3),
            Resistor("Rm", "im", "om", 1e3),
            Capacitor("Cd", "op", "om", 10e-9),
            Capacitor("Cp", "op", "0", 2.2e-9),
            Capacitor("Cm", "om", "0", 2.2e-9),
        ],
        output="op",
        output_reference="om",
        signal_input="V1",
        temperature_k=T,
    )
    spice = run_noise(ref, 1.0, 1e9, 100)
    f = spice.frequency_hz
    density_sq = (circuit.white_sq[:, None] * circuit.power_transfers(f)).sum(0)
    assert math.sqrt(float(integrate_psd(f, density_sq))) == pytest.approx(
        spice.onoise_total_v, rel=TOLERANCE
    )
    for fc in (10.0, 1e3, 8e3, 50e3, 1e6):
        k = int(np.argmin(np.abs(np.log(f / fc))))
        assert math.sqrt(density_sq[k]) == pytest.approx(spice.onoise_v_per_rthz[k], rel=TOLERANCE)


SK_HEAD = FILTER_HEAD.format(topology="sallen-key")
BAD = [
    # (sections text, field named, words)
    (
        'sections = [{ r1 = "10 kohm", r2 = "10 kohm", c1 = "10 nF", c2 = "10 nF", '
        'rf = "30 kohm", rg = "10 kohm" }]\n',
        "stages[0].sections[0]",
        "right half-plane",
    ),
    (
        # Q = ½·√(C1/C2) = 158 for equal resistors (unity-gain Sallen-Key).
        'sections = [{ r1 = "10 kohm", r2 = "10 kohm", c1 = "100 nF", c2 = "1 pF" }]\n',
        "stages[0].sections[0]",
        "Q ≤ 50",
    ),
    (
        'sections = [{ r1 = "10 kohm", r2 = "10 kohm", c1 = "20 nF" }]\n',
        "stages[0].sections[0].c2",
        "",
    ),
    (
        'sections = [{ r1 = "10 kohm", r2 = "10 kohm", r3 = "1 kohm",'
        ' c1 = "20 nF", c2 = "1 nF" }]\n',
        "stages[0].sections[0].r3",
        "not a field of a sallen-key section",
    ),
    (
        'sections = [{ r1 = "10 kohm", r2 = "10 kohm",'
        ' c1 = "20 nF", c2 = "10 nF", rf = "1 kohm" }]\n',
        "stages[0].sections[0].rg",
        "both rf and rg",
    ),
    (
        'sections = [{ r1 = "10 kohm", r2 = "10 kohm", c1 = "20 nV", c2 = "10 nF" }]\n',
        "stages[0].sections[0].c1",
        "capacitance",
    ),
    (
        'order = 2\nsections = [{ r1 = "10 kohm", r2 = "10 kohm", c1 = "20 nF", c2 = "10 nF" }]\n',
        "stages[0].order",
        "not given with sections",
    ),
    ("sections = []\n", "stages[0].sections", "at least one section"),
    (
        'sections = [{ r1 = "10 kohm", r2 = "10 kohm",'
        ' c1 = "20 nF", c2 = "10 nF", r4 = "1 ohm" }]\n',
        "stages[0].sections[0].r4",
        "did you mean",
    ),
]


@pytest.mark.parametrize(("sections", "field", "words"), BAD)
def test_bad_sections_get_one_line_naming_the_field(sections, field, words):
    with pytest.raises(DesignErrors) as err:
        design = loads_design(_pipeline(SK_HEAD + sections), "f.toml")
        check_design(design)
    lines = str(err.value).splitlines()
    assert len(lines) == 1, lines
    assert f"f.toml: {field}" in lines[0] and words in lines[0], lines[0]


def test_leg_capacitance_after_a_single_ended_sensor_is_refused():
    rc = '[[stages]]\ntype = "rc_filter"\nname = "invented RC"\nresistance = "1 kohm"\n'
    rc += 'capacitance = "10 nF"\nleg_capacitance = "1 nF"\n'
    with pytest.raises(DesignError) as err:
        check_design(loads_design(_pipeline(rc), "f.toml"))
    assert "stages[0].leg_capacitance" in str(err.value)
    assert "differential" in str(err.value)


def test_the_sections_example_of_the_docs_loads_and_checks():
    from pathlib import Path

    text = (Path(__file__).parents[1] / "docs" / "design-file.md").read_text(encoding="utf-8")
    start = text.index('[[stages]]\ntype = "active_filter"\nname = "anti-alias filter (invented)"')
    stage = text[start : text.index("```", start)]
    design = loads_design(_pipeline(stage), "docs")
    flt = design.stages[0]
    assert flt.order == 5 and flt.gain == pytest.approx(2.0)
    assert check_design(design).total_rms_v > 0
