"""Invented chains and designs shared by the tests.

Every part here is INVENTED for testing: round numbers of the size the trade
meets, not the data of any real product. Each chain builder takes keyword overrides
of the :class:`resplan.Chain` fields (``sensor``, ``stages``, ``adc``,
``reference``, ``digital``, ``temperature_k``) so one test can swap one part.

conftest.py exposes the chain builders as fixtures returning the builder, so a
test asks for ``bridge_chain`` and calls ``bridge_chain(adc=...)``; test modules
import this module directly (``from invented import ...``; pytest puts tests/ on
the path).

The netlists at the end (circuits 1 to 14, numbered as the ngspice cases) are
shared by the nodal-solver tests, the ngspice comparison and
``benchmarks/bench_nodal.py`` (which puts tests/ on its path).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import fields

from resplan import (
    ADC,
    ActiveFilter,
    DigitalPath,
    IdealLowpass,
    IntegratedAmplifier,
    NoiseAtRate,
    NoiseDensity,
    NonInvertingStage,
    RCFilter,
    Reference,
    Sensor,
    SincFilter,
    TransitionNoise,
)
from resplan.chain.design import Design, Meta
from resplan.chain.requirement import Requirement
from resplan.chain.signal_chain import Band, Chain
from resplan.noise.netlist import (
    Capacitor,
    CurrentSource,
    Netlist,
    OpAmpModel,
    Part,
    Resistor,
    ShotNoise,
    VoltageSource,
)
from resplan.noise.sections import (
    filter_sections,
    lowpass_cascade_parts,
    multiple_feedback_lowpass,
    multiple_feedback_parts,
    sallen_key_lowpass,
    sallen_key_parts,
)

__all__ = [
    "invented_bridge_chain",
    "invented_vibration_chain",
    "invented_four_stage_chain",
    "INVENTED_MODULATOR_RATE_HZ",
    "INVENTED_DATA_RATE_HZ",
    "design_of",
    "invented_balanced_source",
    "invented_bessel_fourth_mfb",
    "invented_filter_chain",
    "invented_follower",
    "invented_inverting",
    "invented_mfb_gain",
    "invented_non_inverting",
    "invented_rc_into_amplifier",
    "invented_rc_ladder",
    "invented_rc_lowpass",
    "invented_sallen_key_fourth",
    "invented_sallen_key_unity",
    "invented_transimpedance",
    "invented_warm_resistor",
]

#: Invented delta-sigma modulator rate and output data rate, Hz.
INVENTED_MODULATOR_RATE_HZ = 256_000.0
INVENTED_DATA_RATE_HZ = 10.0


def _chain(defaults: dict, overrides: dict) -> Chain:
    unknown = set(overrides) - {f.name for f in fields(Chain)}
    if unknown:
        raise TypeError(f"unknown chain field(s): {', '.join(sorted(unknown))}")
    return Chain(**{**defaults, **overrides})


def invented_bridge_chain(**overrides) -> Chain:
    """INVENTED load-cell chain: 350 Ω bridge, 10 mV span → RC → PGA ×128 → 24-bit delta-sigma.

    Bridge: 2 mV/V at 5 V excitation (10 mV span, unipolar), 350 Ω output
    resistance. Input RC: 1 kΩ, 100 nF (1.59 kHz). PGA: 12 nV/√Hz white with a
    2 Hz 1/f corner, 0.3 pA/√Hz, 50 kHz bandwidth.
    ADC: ±2.5 V (5 V peak-to-peak), modulator 256 kHz, sinc3 to 10 Hz,
    0.2 µV rms at 10 Hz at its own gain 1. Reference: 2.5 V, 3 µV rms 0.1–10 Hz
    with a 10 Hz corner, not ratiometric. All invented.
    """
    rate = INVENTED_MODULATOR_RATE_HZ
    ratio = int(rate / INVENTED_DATA_RATE_HZ)
    defaults = dict(
        sensor=Sensor(span_v=10e-3, resistance_ohm=350.0, name="invented bridge"),
        stages=(
            RCFilter("invented input RC", 1e3, 100e-9),
            IntegratedAmplifier(
                "invented PGA",
                gain=128.0,
                input_noise=NoiseDensity(12e-9, 2.0),
                current_noise=NoiseDensity(0.3e-12, 0.0),
                bandwidth_hz=50e3,
            ),
        ),
        adc=ADC(
            "invented delta-sigma ADC",
            "delta-sigma",
            24,
            5.0,
            rate,
            NoiseAtRate(0.2e-6, INVENTED_DATA_RATE_HZ),
            data_rate_hz=INVENTED_DATA_RATE_HZ,
        ),
        reference=Reference(
            2.5,
            Reference.density_from_band_rms(3e-6, 0.1, 10.0, 10.0),
            filter_cutoff_hz=100.0,
            name="invented reference",
        ),
        digital=DigitalPath((SincFilter(3, ratio, rate),)),
    )
    return _chain(defaults, overrides)


def invented_vibration_chain(**overrides) -> Chain:
    """INVENTED vibration chain: ±2 V sensor → driver → RC → 18-bit SAR at 1 MHz → band limit.

    Sensor: 4 V bipolar span, 100 Ω. Driver: gain 1, 4 nV/√Hz, 20 MHz bandwidth.
    RC: 100 Ω, 2.7 nF (589 kHz). SAR: ±5 V (10 V peak-to-peak), 18 bits,
    1 MHz, 0.7 LSB rms transition noise. Digital: ideal band limit at 20 kHz.
    Reference: 5 V, 10 nV/√Hz white with a 1 kHz filter. All invented.
    """
    rate = 1e6
    defaults = dict(
        sensor=Sensor(
            span_v=4.0, resistance_ohm=100.0, bipolar=True, name="invented accelerometer"
        ),
        stages=(
            IntegratedAmplifier(
                "invented driver", gain=1.0, input_noise=NoiseDensity(4e-9), bandwidth_hz=20e6
            ),
            RCFilter("invented RC", 100.0, 2.7e-9),
        ),
        adc=ADC("invented SAR ADC", "sar", 18, 10.0, rate, TransitionNoise(0.7)),
        reference=Reference(
            5.0, NoiseDensity(10e-9), filter_cutoff_hz=1e3, name="invented reference"
        ),
        digital=DigitalPath((IdealLowpass(20e3, rate),)),
    )
    return _chain(defaults, overrides)


def invented_four_stage_chain(**overrides) -> Chain:
    """INVENTED four-stage chain for the benchmark: PGA → op-amp gain → Butterworth → RC → ADC."""
    rate = 512_000.0
    defaults = dict(
        sensor=Sensor(span_v=20e-3, resistance_ohm=1e3, bipolar=True, name="invented sensor"),
        stages=(
            IntegratedAmplifier(
                "invented in-amp",
                gain=10.0,
                input_noise=NoiseDensity(8e-9, 5.0),
                output_noise=NoiseDensity(60e-9, 20.0),
                current_noise=NoiseDensity(0.1e-12, 10.0),
                bandwidth_hz=200e3,
            ),
            NonInvertingStage(
                "invented gain stage",
                rf_ohm=9e3,
                rg_ohm=1e3,
                en=NoiseDensity(5e-9, 3.0),
                in_plus=NoiseDensity(0.5e-12, 50.0),
                gbw_hz=10e6,
            ),
            ActiveFilter(
                "invented anti-alias",
                "butterworth",
                4,
                20e3,
                noise_resistance_ohm=2e3,
                en=NoiseDensity(6e-9, 10.0),
            ),
            RCFilter("invented RC", 50.0, 10e-9),
        ),
        adc=ADC(
            "invented delta-sigma ADC",
            "delta-sigma",
            24,
            5.0,
            rate,
            NoiseAtRate(1.5e-6, 1000.0),
            data_rate_hz=1000.0,
        ),
        reference=Reference(2.5, NoiseDensity(40e-9, 5.0), filter_cutoff_hz=10.0),
        digital=DigitalPath((SincFilter(3, 512, rate),)),
    )
    return _chain(defaults, overrides)


def design_of(chain: Chain, counts: float = 1000.0, **fields) -> Design:
    """An INVENTED design around ``chain``: a requirement of ``counts`` noise-free counts.

    Keyword ``fields`` override any :class:`resplan.chain.design.Design` field (``meta``,
    ``requirement``, ``band``, ``source``, ...).
    """
    defaults = dict(
        meta=Meta(title="Invented test design"),
        requirement=Requirement(span_v=chain.sensor.span_v, noise_free_counts=counts),
        band=Band(0.01),
        sensor=chain.sensor,
        stages=chain.stages,
        adc=chain.adc,
        reference=chain.reference,
        digital=chain.digital,
        temperature_k=chain.temperature_k,
    )
    return Design(**{**defaults, **fields})


# ---------------------------------------------------------------------------
# invented circuits (netlists for the nodal solver; numbered as the ngspice cases)


def _driven(at: str, *parts: Part) -> Netlist:
    """A netlist driven by the signal source ``vin`` from node ``at`` to ground, output "out"."""
    return Netlist([VoltageSource("vin", at, "0"), *parts], output="out", signal_input="vin")


def invented_rc_lowpass() -> Netlist:
    """1: 10 kΩ with 10 nF to ground (f_c = 1.59 kHz)."""
    return _driven(
        "in",
        Resistor("R1", "in", "out", 10e3),
        Capacitor("C1", "out", "0", 10e-9),
    )


def invented_rc_ladder() -> Netlist:
    """2: two RC sections in cascade, the second loading the first (caps to ground)."""
    return _driven(
        "in",
        Resistor("R1", "in", "a", 10e3),
        Capacitor("C1", "a", "0", 10e-9),
        Resistor("R2", "a", "out", 47e3),
        Capacitor("C2", "out", "0", 2.2e-9),
    )


def invented_non_inverting(extra: Sequence[Part] = ()) -> Netlist:
    """3: non-inverting gain 10 from a 10 kΩ source; e_n 5 nV (10 Hz corner), i_n± 1 pA.

    ``extra`` parts are added as they are (a test's added noise source).
    """
    amp = OpAmpModel(
        dc_gain=1e6,
        gbw_hz=1e6,
        en_v_per_rthz=5e-9,
        en_corner_hz=10.0,
        in_plus_a_per_rthz=1e-12,
        in_minus_a_per_rthz=1e-12,
        in_corner_hz=100.0,
    )
    return _driven(
        "src",
        Resistor("Rs", "src", "p", 10e3),
        *amp.parts("U1", "p", "m", "out"),
        Resistor("RF", "out", "m", 9e3),
        Resistor("RG", "m", "0", 1e3),
        *extra,
    )


def invented_follower(source_ohm: float) -> Callable[[], Netlist]:
    """4: a follower's i_n (2 pA, 1/f corner 50 Hz) flowing in the source resistance."""

    def build() -> Netlist:
        amp = OpAmpModel(
            dc_gain=1e5,
            gbw_hz=5e6,
            en_v_per_rthz=8e-9,
            en_corner_hz=3.0,
            in_plus_a_per_rthz=2e-12,
            in_corner_hz=50.0,
        )
        return _driven(
            "src",
            Resistor("Rs", "src", "p", source_ohm),
            *amp.parts("U1", "p", "out", "out"),
        )

    return build


def invented_rc_into_amplifier() -> Netlist:
    """5: 100 kΩ source, 19.9 nF to ground (80 Hz), into a gain-10 stage with i_n 1 pA."""
    c = 1.0 / (2 * math.pi * 100e3 * 80.0)
    amp = OpAmpModel(
        dc_gain=1e6,
        gbw_hz=2e6,
        en_v_per_rthz=6e-9,
        in_plus_a_per_rthz=1e-12,
        in_minus_a_per_rthz=1e-12,
    )
    return _driven(
        "src",
        Resistor("Rs", "src", "p", 100e3),
        Capacitor("Cf", "p", "0", c),
        *amp.parts("U1", "p", "m", "out"),
        Resistor("RF", "out", "m", 9e3),
        Resistor("RG", "m", "0", 1e3),
    )


def invented_sallen_key_unity() -> Netlist:
    """6: unity-gain Sallen-Key Butterworth, 1 kHz; e_n 10 nV/√Hz, GBW 10 MHz."""
    (section,) = filter_sections("butterworth", 2)
    values = sallen_key_lowpass(1e3 * section.f0_ratio, section.q)
    amp = OpAmpModel(dc_gain=1e6, gbw_hz=10e6, en_v_per_rthz=10e-9)
    return _driven("in", *sallen_key_parts("sk", values, "in", "out", amp))


def invented_sallen_key_fourth() -> Netlist:
    """7: 4th-order Butterworth, two unity Sallen-Key sections, 2 kHz: resistor noise."""
    amp = OpAmpModel(dc_gain=1e6, gbw_hz=10e6)
    return _driven(
        "in",
        *lowpass_cascade_parts("lp", "butterworth", 4, 2e3, "in", "out", amp),
    )


def invented_mfb_gain() -> Netlist:
    """8: multiple-feedback Butterworth section, 10 kHz, gain −10; e_n 5 nV, i_n 0.5 pA."""
    values = multiple_feedback_lowpass(10e3, 1 / math.sqrt(2), gain=10.0, capacitor_f=1e-9)
    amp = OpAmpModel(
        dc_gain=1e6,
        gbw_hz=10e6,
        en_v_per_rthz=5e-9,
        in_plus_a_per_rthz=0.5e-12,
        in_minus_a_per_rthz=0.5e-12,
    )
    return _driven(
        "in",
        *multiple_feedback_parts("mfb", values, "in", "out", amp),
    )


def invented_inverting() -> Netlist:
    """9: inverting gain −10 (1 kΩ in, 10 kΩ feedback), 909 Ω bias resistor at the + input."""
    amp = OpAmpModel(
        dc_gain=2e5,
        gbw_hz=5e6,
        en_v_per_rthz=4e-9,
        en_corner_hz=5.0,
        in_plus_a_per_rthz=2e-12,
        in_minus_a_per_rthz=2e-12,
        in_corner_hz=200.0,
    )
    return _driven(
        "in",
        Resistor("Rin", "in", "m", 1e3),
        Resistor("RF", "m", "out", 10e3),
        Resistor("Rb", "p", "0", 909.0),
        *amp.parts("U1", "p", "m", "out"),
    )


def invented_transimpedance() -> Netlist:
    """10: photodiode (100 MΩ shunt, 100 pF, 1 nA dark) into 10 MΩ ∥ 1 pF; e_n 10 nV."""
    amp = OpAmpModel(
        dc_gain=1e6, gbw_hz=10e6, en_v_per_rthz=10e-9, en_corner_hz=20.0, in_minus_a_per_rthz=5e-15
    )
    return Netlist(
        [
            CurrentSource("iph", "0", "m"),
            Resistor("Rsh", "m", "0", 100e6),
            Capacitor("Cj", "m", "0", 100e-12),
            ShotNoise("pd.shot", "0", "m", 1e-9),
            Resistor("RF", "m", "out", 10e6),
            Capacitor("CF", "m", "out", 1e-12),
            *amp.parts("U1", "0", "m", "out"),
        ],
        output="out",
        signal_input="iph",
    )


def invented_balanced_source() -> Netlist:
    """11: balanced 20 kΩ source (10 kΩ per leg) into two followers, differential output."""
    amp = OpAmpModel(dc_gain=1e6, gbw_hz=1e6, en_v_per_rthz=3e-9, in_plus_a_per_rthz=2e-12)
    return Netlist(
        [
            VoltageSource("vin", "sp", "sn"),
            VoltageSource("vcm", "sn", "0"),
            Resistor("Rsp", "sp", "ip", 10e3),
            Resistor("Rsn", "sn", "in", 10e3),
            *amp.parts("UA", "ip", "oa", "oa"),
            *amp.parts("UB", "in", "ob", "ob"),
        ],
        output="oa",
        output_reference="ob",
        signal_input="vin",
    )


def invented_bessel_fourth_mfb() -> Netlist:
    """12: 4th-order Bessel, two multiple-feedback sections, 1 kHz; e_n 5 nV (2 Hz), i_n 0.5 pA."""
    amp = OpAmpModel(
        dc_gain=1e6,
        gbw_hz=10e6,
        en_v_per_rthz=5e-9,
        en_corner_hz=2.0,
        in_plus_a_per_rthz=0.5e-12,
        in_minus_a_per_rthz=0.5e-12,
    )
    return _driven(
        "in",
        *lowpass_cascade_parts(
            "lp", "bessel", 4, 1e3, "in", "out", amp, topology="multiple-feedback"
        ),
    )


def invented_warm_resistor() -> Netlist:
    """13: RC whose resistor sits at 350 K (its own temperature), no signal input."""
    return Netlist(
        [
            Resistor("R1", "out", "0", 4.7e3, temperature_k=350.0),
            Resistor("R2", "out", "0", 10e3, noiseless=True),
            Capacitor("C1", "out", "0", 1e-9),
        ],
        output="out",
    )


def invented_filter_chain() -> Netlist:
    """14: gain 10, 8th-order Butterworth Sallen-Key (20 kHz), 4th-order Bessel MFB (50 kHz).

    30 nodes besides ground, 45 unknowns; every op amp with e_n, i_n± and a finite
    GBW, every resistor noisy (the nodal benchmark's circuit).
    """
    amp = OpAmpModel(
        dc_gain=1e6,
        gbw_hz=10e6,
        en_v_per_rthz=5e-9,
        en_corner_hz=10.0,
        in_plus_a_per_rthz=1e-12,
        in_minus_a_per_rthz=1e-12,
        in_corner_hz=100.0,
    )
    return _driven(
        "src",
        Resistor("sensor.R", "src", "cable", 1e3),
        Resistor("cable.R", "cable", "p", 10.0),
        *amp.parts("stages[0].opamp", "p", "m", "g"),
        Resistor("stages[0].RF", "g", "m", 9e3),
        Resistor("stages[0].RG", "m", "0", 1e3),
        *lowpass_cascade_parts("stages[1]", "butterworth", 8, 20e3, "g", "f1", amp),
        *lowpass_cascade_parts(
            "stages[2]", "bessel", 4, 50e3, "f1", "out", amp, topology="multiple-feedback"
        ),
    )
