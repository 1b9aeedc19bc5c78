"""The nodal noise solver against ngspice, an independent circuit simulator.

Reference: ngspice (its ``.noise`` analysis: ``onoise_spectrum`` and
``onoise_total``; its ``.ac`` analysis for signal gains), run through
``tests/spice_harness.py``, which writes each netlist as an independent deck
(op amps as controlled-source macros, noise sources as scaled resistor noise
generators; see the harness docstring).

Every circuit here is INVENTED: round values of the size the trade meets, not
the data of any real part.

Each case is compared on

- the output density at 5 frequencies spread over the sweep, and
- the integrated output rms over the sweep, which is the stated band (ngspice
  integrates each generator as a power law between grid points; so does
  :func:`resplan.noise.nodal.integrate_psd`),
- the signal transfer (complex) on the whole grid when a signal input is named,

each within 1e-5 relative (the project asks for 1e-3; the tighter bound catches
more). What limits agreement: ngspice's Boltzmann constant (CODATA 2014, 3.5e-7
relative in power from the exact SI value, 1.75e-7 in density) and its split of a
1/f + white generator into two power-law integrals. Observed worst differences
are below 3e-7 on every case (densities, rms and signal transfers).

The tests skip, with the reason shown, when ngspice is not installed, and fail
when the environment variable CI is "true".
"""

from __future__ import annotations

import math
import sys
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parent))

from spice_harness import require_ngspice, run_noise  # noqa: E402

from resplan.noise.netlist import (  # noqa: E402
    BOLTZMANN_J_PER_K,
    Capacitor,
    CurrentSource,
    Netlist,
    OpAmpModel,
    Resistor,
    ShotNoise,
    VoltageSource,
)
from resplan.noise.nodal import solve_noise  # noqa: E402
from resplan.noise.sections import (  # noqa: E402
    filter_sections,
    lowpass_cascade_parts,
    multiple_feedback_lowpass,
    multiple_feedback_parts,
    sallen_key_lowpass,
    sallen_key_parts,
)

TOLERANCE = 1e-5


# ---------------------------------------------------------------------------
# the invented circuits


def rc_lowpass() -> Netlist:
    """1: 10 kΩ with 10 nF to ground (f_c = 1.59 kHz)."""
    return Netlist(
        [
            VoltageSource("vin", "in", "0"),
            Resistor("R1", "in", "out", 10e3),
            Capacitor("C1", "out", "0", 10e-9),
        ],
        output="out",
        signal_input="vin",
    )


def rc_ladder() -> Netlist:
    """2: two RC sections in cascade, the second loading the first (caps to ground)."""
    return Netlist(
        [
            VoltageSource("vin", "in", "0"),
            Resistor("R1", "in", "a", 10e3),
            Capacitor("C1", "a", "0", 10e-9),
            Resistor("R2", "a", "out", 47e3),
            Capacitor("C2", "out", "0", 2.2e-9),
        ],
        output="out",
        signal_input="vin",
    )


def non_inverting() -> Netlist:
    """3: non-inverting gain 10 from a 10 kΩ source; e_n 5 nV (10 Hz corner), i_n± 1 pA."""
    amp = OpAmpModel(
        dc_gain=1e6,
        gbw_hz=1e6,
        en_v_per_rthz=5e-9,
        en_corner_hz=10.0,
        in_plus_a_per_rthz=1e-12,
        in_minus_a_per_rthz=1e-12,
        in_corner_hz=100.0,
    )
    return Netlist(
        [
            VoltageSource("vin", "src", "0"),
            Resistor("Rs", "src", "p", 10e3),
            *amp.parts("U1", "p", "m", "out"),
            Resistor("RF", "out", "m", 9e3),
            Resistor("RG", "m", "0", 1e3),
        ],
        output="out",
        signal_input="vin",
    )


def follower_from_source(source_ohm: float) -> Callable[[], Netlist]:
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
        return Netlist(
            [
                VoltageSource("vin", "src", "0"),
                Resistor("Rs", "src", "p", source_ohm),
                *amp.parts("U1", "p", "out", "out"),
            ],
            output="out",
            signal_input="vin",
        )

    return build


def rc_into_amplifier() -> Netlist:
    """5: 100 kΩ source, 19.9 nF to ground (80 Hz), into a gain-10 stage with i_n 1 pA."""
    c = 1.0 / (2 * math.pi * 100e3 * 80.0)
    amp = OpAmpModel(
        dc_gain=1e6,
        gbw_hz=2e6,
        en_v_per_rthz=6e-9,
        in_plus_a_per_rthz=1e-12,
        in_minus_a_per_rthz=1e-12,
    )
    return Netlist(
        [
            VoltageSource("vin", "src", "0"),
            Resistor("Rs", "src", "p", 100e3),
            Capacitor("Cf", "p", "0", c),
            *amp.parts("U1", "p", "m", "out"),
            Resistor("RF", "out", "m", 9e3),
            Resistor("RG", "m", "0", 1e3),
        ],
        output="out",
        signal_input="vin",
    )


def sallen_key_unity() -> Netlist:
    """6: unity-gain Sallen-Key Butterworth, 1 kHz; e_n 10 nV/√Hz, GBW 10 MHz."""
    (section,) = filter_sections("butterworth", 2)
    values = sallen_key_lowpass(1e3 * section.f0_ratio, section.q)
    amp = OpAmpModel(dc_gain=1e6, gbw_hz=10e6, en_v_per_rthz=10e-9)
    return Netlist(
        [VoltageSource("vin", "in", "0"), *sallen_key_parts("sk", values, "in", "out", amp)],
        output="out",
        signal_input="vin",
    )


def sallen_key_fourth() -> Netlist:
    """7: 4th-order Butterworth, two unity Sallen-Key sections, 2 kHz: resistor noise."""
    amp = OpAmpModel(dc_gain=1e6, gbw_hz=10e6)
    return Netlist(
        [
            VoltageSource("vin", "in", "0"),
            *lowpass_cascade_parts("lp", "butterworth", 4, 2e3, "in", "out", amp),
        ],
        output="out",
        signal_input="vin",
    )


def mfb_gain() -> Netlist:
    """8: multiple-feedback Butterworth section, 10 kHz, gain −10; e_n 5 nV, i_n 0.5 pA."""
    values = multiple_feedback_lowpass(10e3, 1 / math.sqrt(2), gain=10.0, capacitor_f=1e-9)
    amp = OpAmpModel(
        dc_gain=1e6,
        gbw_hz=10e6,
        en_v_per_rthz=5e-9,
        in_plus_a_per_rthz=0.5e-12,
        in_minus_a_per_rthz=0.5e-12,
    )
    return Netlist(
        [
            VoltageSource("vin", "in", "0"),
            *multiple_feedback_parts("mfb", values, "in", "out", amp),
        ],
        output="out",
        signal_input="vin",
    )


def inverting() -> Netlist:
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
    return Netlist(
        [
            VoltageSource("vin", "in", "0"),
            Resistor("Rin", "in", "m", 1e3),
            Resistor("RF", "m", "out", 10e3),
            Resistor("Rb", "p", "0", 909.0),
            *amp.parts("U1", "p", "m", "out"),
        ],
        output="out",
        signal_input="vin",
    )


def transimpedance() -> Netlist:
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


def balanced_source() -> Netlist:
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


def bessel_fourth_mfb() -> Netlist:
    """12: 4th-order Bessel, two multiple-feedback sections, 1 kHz; e_n 5 nV (2 Hz), i_n 0.5 pA."""
    amp = OpAmpModel(
        dc_gain=1e6,
        gbw_hz=10e6,
        en_v_per_rthz=5e-9,
        en_corner_hz=2.0,
        in_plus_a_per_rthz=0.5e-12,
        in_minus_a_per_rthz=0.5e-12,
    )
    return Netlist(
        [
            VoltageSource("vin", "in", "0"),
            *lowpass_cascade_parts(
                "lp", "bessel", 4, 1e3, "in", "out", amp, topology="multiple-feedback"
            ),
        ],
        output="out",
        signal_input="vin",
    )


def resistor_elsewhere_warm() -> Netlist:
    """13: RC whose resistor sits at 350 K (its own temperature), no signal input."""
    return Netlist(
        [
            Resistor("R1", "out", "0", 4.7e3, temperature_k=350.0),
            Resistor("R2", "out", "0", 10e3, noiseless=True),
            Capacitor("C1", "out", "0", 1e-9),
        ],
        output="out",
    )


@dataclass(frozen=True)
class SpiceCase:
    """A circuit and the band it is compared over (a decade sweep: f_high = f_low·10^k)."""

    name: str
    build: Callable[[], Netlist]
    f_low_hz: float
    f_high_hz: float


CASES = [
    SpiceCase("1 RC low-pass", rc_lowpass, 1.0, 1e7),
    SpiceCase("2 RC ladder", rc_ladder, 1.0, 1e7),
    SpiceCase("3 non-inverting", non_inverting, 0.1, 1e7),
    SpiceCase("4a follower, 10 kOhm source", follower_from_source(10e3), 0.1, 1e7),
    SpiceCase("4b follower, 100 kOhm source", follower_from_source(100e3), 0.1, 1e7),
    SpiceCase("5 RC 80 Hz into amplifier", rc_into_amplifier, 1.0, 1e7),
    SpiceCase("6 Sallen-Key unity", sallen_key_unity, 1.0, 1e8),
    SpiceCase("7 Sallen-Key 4th order", sallen_key_fourth, 1.0, 1e7),
    SpiceCase("8 MFB gain 10", mfb_gain, 1.0, 1e7),
    SpiceCase("9 inverting", inverting, 0.1, 1e7),
    SpiceCase("10 transimpedance", transimpedance, 1.0, 1e7),
    SpiceCase("11 balanced source", balanced_source, 1.0, 1e6),
    SpiceCase("12 Bessel 4th order MFB", bessel_fourth_mfb, 1.0, 1e7),
    SpiceCase("13 resistor at its own temperature", resistor_elsewhere_warm, 1.0, 1e8),
]

POINTS_PER_DECADE = 50


def compare(case: SpiceCase) -> dict[str, float]:
    """Worst relative differences between ngspice and the solver for one case."""
    net = case.build()
    spice = run_noise(net, case.f_low_hz, case.f_high_hz, POINTS_PER_DECADE)
    assert spice.frequency_hz[-1] == pytest.approx(case.f_high_hz, rel=1e-9), (
        "align the band to the decade grid"
    )
    sol = solve_noise(net, spice.frequency_hz)
    ours = sol.total_density_v_per_rthz
    picks = np.unique(np.round(np.linspace(0, spice.frequency_hz.size - 1, 5)).astype(int))
    density = float(np.max(np.abs(ours[picks] / spice.onoise_v_per_rthz[picks] - 1.0)))
    every = float(np.max(np.abs(ours / spice.onoise_v_per_rthz - 1.0)))
    rms = abs(sol.rms_v() / spice.onoise_total_v - 1.0)
    out = {"density_5": density, "density_all": every, "rms": rms}
    if spice.ac_transfer is not None:
        h = sol.signal_transfer
        out["signal"] = float(np.max(np.abs(h - spice.ac_transfer) / np.abs(spice.ac_transfer)))
    return out


@pytest.mark.parametrize("case", CASES, ids=[c.name for c in CASES])
def test_solver_agrees_with_ngspice(case: SpiceCase) -> None:
    require_ngspice()
    worst = compare(case)
    assert worst["density_5"] <= TOLERANCE, worst
    assert worst["rms"] <= TOLERANCE, worst
    assert worst.get("signal", 0.0) <= TOLERANCE, worst


def test_rc_output_rms_over_a_wide_band_is_ktc() -> None:
    """ngspice's integral of an RC's output noise, 10 mHz to 10 GHz, against √(kT/C).

    Source: the equipartition result ½C⟨v²⟩ = ½kT (Nyquist 1928), k from
    scipy.constants (SI 2019 exact). The band misses 4e-6 of the power below
    10 mHz and 1e-7 above 10 GHz; ngspice's k differs by 3.5e-7; the power-law rule
    between grid points errs by about 3e-6 at 200 points per decade (it falls as
    1/n²: 2.8e-4 at 20 points per decade): 1e-5 covers all of them.
    """
    from scipy import constants

    require_ngspice()
    net = rc_lowpass()
    spice = run_noise(net, 1e-2, 1e10, 200)
    expected = math.sqrt(constants.k * net.temperature_k / 10e-9)
    assert spice.onoise_total_v == pytest.approx(expected, rel=1e-5)
    assert solve_noise(net, spice.frequency_hz).rms_v() == pytest.approx(expected, rel=1e-5)


def test_rc_ladder_output_rms_is_ktc_of_the_output_capacitor() -> None:
    """Two loaded RC sections: the output rms over all frequencies is √(kT/C₂) exactly.

    Source: Nyquist (1928) equipartition — with every capacitor to ground, the
    stored energy is Σ ½C_i v_i², so each node voltage has ⟨v_i²⟩ = kT/C_i,
    whatever the resistors. Band, grid and tolerance as for the single RC (the
    band misses 5e-7 of the power below 1 mHz).
    """
    require_ngspice()
    net = rc_ladder()
    spice = run_noise(net, 1e-3, 1e10, 200)
    expected = math.sqrt(BOLTZMANN_J_PER_K * net.temperature_k / 2.2e-9)
    assert spice.onoise_total_v == pytest.approx(expected, rel=1e-5)
    assert solve_noise(net, spice.frequency_hz).rms_v() == pytest.approx(expected, rel=1e-5)
