"""The nodal noise solver, the section tables and synthesis, against published closed forms.

Every circuit here is INVENTED: round values, not the data of any real part.
Each check names its source beside it. Closed forms hold exactly for ideal op
amps (infinite gain and GBW), so those checks are at 1e-9 relative or tighter
(rounding only); integrals with scipy.integrate.quad are at 1e-7 (quad's own
error estimate is far below that).
"""

from __future__ import annotations

import math
import subprocess
import sys

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from invented import invented_filter_chain, invented_non_inverting, invented_transimpedance

from resplan.errors import DesignError
from resplan.noise.netlist import (
    BOLTZMANN_J_PER_K,
    ELEMENTARY_CHARGE_C,
    Capacitor,
    CircuitError,
    CurrentNoise,
    CurrentSource,
    Netlist,
    OpAmp,
    OpAmpModel,
    Resistor,
    ShotNoise,
    VoltageNoise,
    VoltageSource,
    noisy_opamp,
)
from resplan.noise.nodal import (
    build_mna,
    check_stability,
    circuit_poles,
    integrate_psd,
    solve_noise,
)
from resplan.noise.sections import (
    filter_sections,
    lowpass_cascade_parts,
    multiple_feedback_lowpass,
    multiple_feedback_parts,
    real_pole_resistance,
    sallen_key_lowpass,
    sallen_key_parts,
)

T = 300.0
IDEAL = OpAmpModel(dc_gain=math.inf, gbw_hz=math.inf)
FREQS = np.array([0.3, 3.0, 30.0, 300.0, 3e3, 3e4, 3e5])


def quad_0_inf(function) -> float:
    """∫₀^∞ of a scalar function with scipy.integrate.quad, split at 1 so both halves converge."""
    from scipy import integrate

    low, _ = integrate.quad(function, 0.0, 1.0, limit=200, epsabs=0.0, epsrel=1e-12)
    high, _ = integrate.quad(function, 1.0, np.inf, limit=400, epsabs=0.0, epsrel=1e-12)
    return low + high


# ---------------------------------------------------------------------------
# constants and single sources


def test_constants_are_the_si_2019_exact_values() -> None:
    # Source: scipy.constants (CODATA 2018 = SI 2019 exact values).
    from scipy import constants

    assert BOLTZMANN_J_PER_K == constants.k
    assert ELEMENTARY_CHARGE_C == constants.e


@pytest.mark.parametrize(
    ("resistance_ohm", "temperature_k", "expected_v_per_rthz", "rel"),
    [
        # DOMAIN §10: 1 kΩ at 300 K is 4.07 nV/√Hz (3 significant figures).
        (1e3, 300.0, 4.07e-9, 2e-3),
        # Johnson-Nyquist √(4kTR) with scipy.constants.k, to rounding.
        (10e3, 300.0, math.sqrt(4 * 1.380649e-23 * 300.0 * 10e3), 1e-12),
        (1e6, 77.0, math.sqrt(4 * 1.380649e-23 * 77.0 * 1e6), 1e-12),
    ],
)
def test_open_resistor_gives_johnson_nyquist_density(
    resistance_ohm, temperature_k, expected_v_per_rthz, rel
) -> None:
    net = Netlist(
        [Resistor("R", "out", "0", resistance_ohm)], output="out", temperature_k=temperature_k
    )
    density = solve_noise(net, FREQS).total_density_v_per_rthz
    assert density == pytest.approx(np.full(FREQS.size, expected_v_per_rthz), rel=rel)


def test_shot_noise_into_a_resistor_is_sqrt_2qi_times_r() -> None:
    # Source: Schottky (1918), i = √(2qI); q from scipy.constants.
    from scipy import constants

    net = Netlist(
        [ShotNoise("d.shot", "0", "out", 1e-6), Resistor("R", "out", "0", 1e3, noiseless=True)],
        output="out",
    )
    density = solve_noise(net, FREQS).psd_of("d.shot") ** 0.5
    assert density == pytest.approx(math.sqrt(2 * constants.e * 1e-6) * 1e3, rel=1e-12)


def test_flicker_corner_density() -> None:
    # Model: density² = white²·(1 + f_c/f) (Motchenbacher & Connelly).
    net = Netlist([VoltageNoise("en", "out", "0", 5e-9, corner_hz=10.0)], output="out")
    sol = solve_noise(net, FREQS)
    assert sol.psd_of("en") == pytest.approx(25e-18 * (1 + 10.0 / FREQS), rel=1e-12)
    assert sol.units == ("V/V",)


# ---------------------------------------------------------------------------
# closed forms of stages


@pytest.mark.parametrize(
    ("rs", "rf", "rg", "en", "fc", "in_plus", "in_minus"),
    [
        (1e3, 9e3, 1e3, 5e-9, 10.0, 1e-12, 1e-12),
        (100e3, 99e3, 1e3, 2e-9, 0.0, 0.5e-12, 2e-12),
        (50.0, 1e3, 1e3, 1e-9, 100.0, 3e-12, 0.0),
    ],
)
def test_non_inverting_rti_density_matches_motchenbacher(
    rs, rf, rg, en, fc, in_plus, in_minus
) -> None:
    """e_RTI² = 4kTR_s + e_n² + (i_n+·R_s)² + (i_n−·RF‖RG)² + 4kT·RF‖RG.

    Source: Motchenbacher & Connelly, Low-Noise Electronic System Design (1993),
    the non-inverting amplifier with an ideal op amp; RTI = RTO / (1 + RF/RG).
    """
    parts = [
        VoltageSource("vin", "src", "0"),
        Resistor("Rs", "src", "p", rs),
        *noisy_opamp(
            "U1",
            "p",
            "m",
            "out",
            dc_gain=math.inf,
            gbw_hz=math.inf,
            en_v_per_rthz=en,
            en_corner_hz=fc,
            in_plus_a_per_rthz=in_plus,
            in_minus_a_per_rthz=in_minus,
            in_corner_hz=fc,
        ),
        Resistor("RF", "out", "m", rf),
        Resistor("RG", "m", "0", rg),
    ]
    sol = solve_noise(Netlist(parts, output="out", signal_input="vin", temperature_k=T), FREQS)
    par = rf * rg / (rf + rg)
    flicker = 1 + fc / FREQS
    kt4 = 4 * BOLTZMANN_J_PER_K * T
    expected = (
        kt4 * rs
        + en**2 * flicker
        + (in_plus * rs) ** 2 * flicker
        + (in_minus * par) ** 2 * flicker
        + kt4 * par
    )
    assert sol.signal_transfer.real == pytest.approx(1 + rf / rg, rel=1e-12)
    assert sol.input_referred_psd() == pytest.approx(expected, rel=1e-10)


def test_sallen_key_sees_noise_gain_d_plus_sr1c1_over_d() -> None:
    """Unity-gain Sallen-Key: e_n's transfer is (D + sR1C1)/D, D the filter's denominator.

    Source: DOMAIN §11 (the noise gain of a unity-gain Sallen-Key); derived again
    from the nodal equations of the follower. With an ideal op amp it is exact; with
    GBW 10 MHz it stays within 1 % of 1 from 100·f_c to GBW/100.
    """
    v = sallen_key_lowpass(1e3, 1 / math.sqrt(2))
    f = np.geomspace(1.0, 1e5, 41)
    s = 2j * np.pi * f
    d = 1 + s * v.c2_f * (v.r1_ohm + v.r2_ohm) + s**2 * v.r1_ohm * v.r2_ohm * v.c1_f * v.c2_f
    ideal = OpAmpModel(dc_gain=math.inf, gbw_hz=math.inf, en_v_per_rthz=10e-9)
    net = Netlist(
        [VoltageSource("vin", "in", "0"), *sallen_key_parts("sk", v, "in", "out", ideal)],
        output="out",
        signal_input="vin",
    )
    h = solve_noise(net, f).transfer_of("sk.opamp.en")
    np.testing.assert_allclose(h, (d + s * v.r1_ohm * v.c1_f) / d, rtol=1e-9)
    real = OpAmpModel(dc_gain=1e6, gbw_hz=10e6, en_v_per_rthz=10e-9)
    net = Netlist(
        [VoltageSource("vin", "in", "0"), *sallen_key_parts("sk", v, "in", "out", real)],
        output="out",
        signal_input="vin",
    )
    band = np.geomspace(1e5, 1e5, 1)
    assert abs(solve_noise(net, band).transfer_of("sk.opamp.en")[0]) == pytest.approx(1.0, abs=0.01)


def test_transimpedance_noise_gain_and_shot_noise() -> None:
    """e_n sees 1 + Z_f/Z_in; the photodiode's shot noise √(2qI) flows into Z_f.

    Source: the transimpedance noise gain (Graeme, Photodiode Amplifiers, 1996,
    from memory), exact for an ideal op amp; Schottky (1918) for 2qI.
    """
    rsh, cj, rf, cf, idark = 100e6, 100e-12, 10e6, 1e-12, 1e-9
    net = Netlist(
        [
            CurrentSource("iph", "0", "m"),
            Resistor("Rsh", "m", "0", rsh),
            Capacitor("Cj", "m", "0", cj),
            ShotNoise("pd.shot", "0", "m", idark),
            Resistor("RF", "m", "out", rf),
            Capacitor("CF", "m", "out", cf),
            *noisy_opamp(
                "U1", "0", "m", "out", dc_gain=math.inf, gbw_hz=math.inf, en_v_per_rthz=10e-9
            ),
        ],
        output="out",
        signal_input="iph",
    )
    sol = solve_noise(net, FREQS)
    s = 2j * np.pi * FREQS
    zf = rf / (1 + s * rf * cf)
    zin = rsh / (1 + s * rsh * cj)
    np.testing.assert_allclose(np.abs(sol.transfer_of("U1.en")), np.abs(1 + zf / zin), rtol=1e-9)
    np.testing.assert_allclose(
        sol.psd_of("pd.shot"), 2 * ELEMENTARY_CHARGE_C * idark * np.abs(zf) ** 2, rtol=1e-9
    )
    # photocurrent into the inverting node comes out as −I·Z_f
    np.testing.assert_allclose(sol.signal_transfer, -zf, rtol=1e-9)
    assert sol.units[sol.source_ids.index("pd.shot")] == "V/A"


def test_balanced_source_current_noise_totals_in_rs_over_sqrt2() -> None:
    """Balanced source: each input's i_n flows in its own half; total i_n·R_s/√2.

    Source: DOMAIN §11 (the hand formula): two uncorrelated i_n·R_s/2 add in power.
    """
    rs, i_n = 20e3, 2e-12
    parts = [
        VoltageSource("vin", "sp", "sn"),
        VoltageSource("vcm", "sn", "0"),
        Resistor("Rsp", "sp", "ip", rs / 2, noiseless=True),
        Resistor("Rsn", "sn", "in", rs / 2, noiseless=True),
    ]
    for name, pin, out in (("UA", "ip", "oa"), ("UB", "in", "ob")):
        parts += noisy_opamp(
            name, pin, out, out, dc_gain=math.inf, gbw_hz=math.inf, in_plus_a_per_rthz=i_n
        )
    sol = solve_noise(Netlist(parts, output="oa", output_reference="ob", signal_input="vin"), FREQS)
    assert sol.total_density_v_per_rthz == pytest.approx(i_n * rs / math.sqrt(2), rel=1e-12)
    assert sol.signal_transfer.real == pytest.approx(1.0, rel=1e-12)


def test_capacitor_shunts_current_noise_above_its_corner() -> None:
    """i_n into R_s ∥ C: i_n·R_s/√(1 + (f/f_c)²), f_c = 1/(2πR_sC). Source: Ohm's law."""
    rs, c = 100e3, 1 / (2 * math.pi * 100e3 * 80.0)
    net = Netlist(
        [
            Resistor("Rs", "p", "0", rs, noiseless=True),
            Capacitor("C", "p", "0", c),
            CurrentNoise("in", "0", "p", 1e-12),
        ],
        output="p",
    )
    expected = 1e-12 * rs / np.sqrt(1 + (FREQS / 80.0) ** 2)
    assert solve_noise(net, FREQS).total_density_v_per_rthz == pytest.approx(expected, rel=1e-12)


# ---------------------------------------------------------------------------
# integrals: kT/C and noise bandwidths


def _scalar(net: Netlist, what):
    return lambda f: float(what(solve_noise(net, [f])))


def test_rc_total_noise_is_ktc_and_enbw_is_pi_over_2_fc() -> None:
    """∫₀^∞ of an RC's output PSD is kT/C; its ENBW is (π/2)·f_c.

    Sources: Nyquist (1928) equipartition; the single-pole ENBW (DOMAIN §4).
    Integrated with scipy.integrate.quad.
    """
    from scipy import constants

    r, c = 10e3, 10e-9
    net = Netlist(
        [
            VoltageSource("vin", "in", "0"),
            Resistor("R", "in", "out", r),
            Capacitor("C", "out", "0", c),
        ],
        output="out",
        signal_input="vin",
        temperature_k=T,
    )
    power = quad_0_inf(_scalar(net, lambda s: s.total_psd_v2_per_hz[0]))
    assert power == pytest.approx(constants.k * T / c, rel=1e-7)
    enbw = quad_0_inf(_scalar(net, lambda s: abs(s.signal_transfer[0]) ** 2))
    assert enbw == pytest.approx(math.pi / 2 / (2 * math.pi * r * c), rel=1e-7)


@pytest.mark.parametrize("order", [1, 2, 3, 4, 5, 6])
def test_butterworth_cascade_enbw_closed_form(order: int) -> None:
    """ENBW of an n-th order Butterworth = f_c·(π/2n)/sin(π/2n).

    Source: DOMAIN §4 (the Butterworth closed form); scipy.integrate.quad over the
    synthesised Sallen-Key cascade with ideal op amps.
    """
    fc = 1e3
    net = Netlist(
        [
            VoltageSource("vin", "in", "0"),
            *lowpass_cascade_parts("lp", "butterworth", order, fc, "in", "out", IDEAL),
        ],
        output="out",
        signal_input="vin",
    )
    enbw = quad_0_inf(_scalar(net, lambda s: abs(s.signal_transfer[0]) ** 2))
    x = math.pi / (2 * order)
    assert enbw == pytest.approx(fc * x / math.sin(x), rel=1e-7)


# ---------------------------------------------------------------------------
# section tables and synthesis


@pytest.mark.parametrize("order", range(1, 9))
def test_butterworth_sections_match_the_closed_form(order: int) -> None:
    # Source: Butterworth (1930): poles on the unit circle, Q_k = 1/(2 sin((2k−1)π/2n)).
    sections = filter_sections("butterworth", order)
    expected = sorted(
        1 / (2 * math.sin((2 * k - 1) * math.pi / (2 * order))) for k in range(1, order // 2 + 1)
    )
    assert [s.q for s in sections if s.q is not None] == pytest.approx(expected, rel=1e-12)
    assert all(s.f0_ratio == pytest.approx(1.0, rel=1e-12) for s in sections)
    assert sum(s.order for s in sections) == order


def test_bessel_sections_match_published_values() -> None:
    # 2nd order: s² + 3s + 3 (Thomson 1949), Q = 1/√3 exactly.
    assert filter_sections("bessel", 2)[0].q == pytest.approx(1 / math.sqrt(3), rel=1e-12)
    # 4th order, −3 dB normalised: Q 0.5219 and 0.8055, f0/fc 1.4301 and 1.6034 (tabulated in
    # filter handbooks; from memory, 4 significant figures).
    low, high = filter_sections("bessel", 4)
    assert (low.q, high.q) == pytest.approx((0.5219, 0.8055), abs=1e-4)
    assert (low.f0_ratio, high.f0_ratio) == pytest.approx((1.4301, 1.6034), abs=1e-4)


@pytest.mark.parametrize("kind", ["butterworth", "bessel"])
@pytest.mark.parametrize("order", range(1, 9))
def test_sections_rebuild_the_scipy_prototype(kind: str, order: int) -> None:
    # Source: scipy.signal.buttap / besselap(norm="mag"): the product of the sections'
    # responses is the prototype's, and it is 3 dB down at the cutoff.
    from scipy import signal

    z, p, k = signal.buttap(order) if kind == "butterworth" else signal.besselap(order, "mag")
    w = np.geomspace(0.01, 100, 201)
    _, h = signal.freqs_zpk(z, p, k, worN=w)
    s = 1j * w
    ours = np.ones_like(s)
    for sec in filter_sections(kind, order):
        w0 = sec.f0_ratio
        ours = ours * (w0 / (s + w0) if sec.q is None else w0**2 / (s**2 + s * w0 / sec.q + w0**2))
    np.testing.assert_allclose(ours, h, rtol=1e-9)
    one = np.ones(1, dtype=complex) * 1j
    at_cutoff = np.prod(
        [
            (sec.f0_ratio / (one + sec.f0_ratio))
            if sec.q is None
            else sec.f0_ratio**2 / (one**2 + one * sec.f0_ratio / sec.q + sec.f0_ratio**2)
            for sec in filter_sections(kind, order)
        ]
    )
    assert abs(at_cutoff) ** 2 == pytest.approx(0.5, rel=1e-9)


def _second_order(f: np.ndarray, f0: float, q: float, gain: float) -> np.ndarray:
    # The standard second-order low-pass: K·ω₀²/(s² + sω₀/Q + ω₀²) (definition of f₀ and Q).
    s = 2j * np.pi * f
    w0 = 2 * np.pi * f0
    return gain * w0**2 / (s**2 + s * w0 / q + w0**2)


@pytest.mark.parametrize(
    ("f0", "q", "gain", "c1"),
    [
        (1e3, 0.7071, 1.0, None),
        (1e3, 2.0, 1.0, None),
        (5e3, 0.5412, 1.0, 100e-9),
        (2e3, 0.7071, 2.0, None),
        (2e3, 1.3066, 5.0, None),
        (1e3, 0.7071, 2.0, 10e-9),
        (1e3, 0.9, 11.0, 4.7e-9),
    ],
)
def test_sallen_key_values_give_the_section(f0, q, gain, c1) -> None:
    v = sallen_key_lowpass(f0, q, gain, c1_f=c1)
    net = Netlist(
        [VoltageSource("vin", "in", "0"), *sallen_key_parts("sk", v, "in", "out", IDEAL)],
        output="out",
        signal_input="vin",
    )
    f = np.geomspace(f0 / 100, f0 * 100, 81)
    np.testing.assert_allclose(
        solve_noise(net, f).signal_transfer, _second_order(f, f0, q, gain), rtol=1e-9
    )


@pytest.mark.parametrize(
    ("f0", "q", "gain", "c1"),
    [
        (1e3, 0.7071, 1.0, None),
        (10e3, 0.7071, 10.0, None),
        (2e3, 1.3066, 2.0, 470e-9),
        (500.0, 0.5219, 1.0, None),
    ],
)
def test_multiple_feedback_values_give_the_section(f0, q, gain, c1) -> None:
    v = multiple_feedback_lowpass(f0, q, gain, c1_f=c1)
    net = Netlist(
        [VoltageSource("vin", "in", "0"), *multiple_feedback_parts("mfb", v, "in", "out", IDEAL)],
        output="out",
        signal_input="vin",
    )
    f = np.geomspace(f0 / 100, f0 * 100, 81)
    np.testing.assert_allclose(
        solve_noise(net, f).signal_transfer, -_second_order(f, f0, q, gain), rtol=1e-9
    )


@pytest.mark.parametrize("kind", ["butterworth", "bessel"])
@pytest.mark.parametrize("topology", ["sallen-key", "multiple-feedback"])
@pytest.mark.parametrize("order", [1, 2, 3, 4, 5, 8])
def test_cascades_match_scipy_filters(kind, topology, order) -> None:
    # Source: scipy.signal.butter / bessel(norm="mag") analog designs at the same cutoff.
    from scipy import signal

    fc = 2e3
    wc = 2 * np.pi * fc
    b, a = (
        signal.butter(order, wc, analog=True)
        if kind == "butterworth"
        else signal.bessel(order, wc, analog=True, norm="mag")
    )
    f = np.geomspace(fc / 100, fc * 30, 61)
    _, h = signal.freqs(b, a, worN=2 * np.pi * f)
    net = Netlist(
        [
            VoltageSource("vin", "in", "0"),
            *lowpass_cascade_parts("lp", kind, order, fc, "in", "out", IDEAL, topology=topology),
        ],
        output="out",
        signal_input="vin",
    )
    ours = solve_noise(net, f).signal_transfer
    inversions = sum(1 for s in filter_sections(kind, order) if s.q is not None)
    sign = (-1) ** inversions if topology == "multiple-feedback" else 1
    np.testing.assert_allclose(ours, sign * h, rtol=1e-8, atol=1e-12)


def test_synthesis_rejects_impossible_values() -> None:
    with pytest.raises(DesignError, match="c1_f"):
        multiple_feedback_lowpass(1e3, 0.7071, 1.0, c1_f=1e-9)
    with pytest.raises(DesignError, match="c1_f"):
        sallen_key_lowpass(1e3, 2.0, 1.0, c1_f=10e-9)  # needs C1 ≥ 4Q²·C2
    with pytest.raises(DesignError, match="gain"):
        sallen_key_lowpass(1e3, 0.7, 0.5)
    with pytest.raises(DesignError, match="order"):
        filter_sections("bessel", 9)
    with pytest.raises(DesignError, match="kind"):
        filter_sections("elliptic", 2)  # type: ignore[arg-type]
    assert real_pole_resistance(1e3, 1e-6) == pytest.approx(1 / (2 * math.pi * 1e-3))


# ---------------------------------------------------------------------------
# the solver itself


def test_adjoint_transfers_equal_forward_solves() -> None:
    # Rohrer et al. (1971): yᵀb from one adjoint solve equals eᵀx from the forward solve.
    net = invented_non_inverting()
    sol = solve_noise(net, FREQS)
    mna = build_mna(net)
    e = mna.output_selector()
    for j, source in enumerate(net.noise_sources):
        b = np.zeros(mna.size)
        if source.kind == "voltage":
            b[mna.branch_index[source.part]] = 1.0
        else:
            for node, sign in ((source.b, 1.0), (source.a, -1.0)):
                if node in mna.node_index:
                    b[mna.node_index[node]] += sign
        for i, f in enumerate(FREQS):
            x = np.linalg.solve(mna.conductance + 2j * np.pi * f * mna.capacitance, b)
            assert sol.transfer[i, j] == pytest.approx(e @ x, rel=1e-10)


def test_batched_solution_equals_one_frequency_at_a_time() -> None:
    net = invented_non_inverting()
    whole = solve_noise(net, FREQS)
    for i, f in enumerate(FREQS):
        np.testing.assert_allclose(solve_noise(net, [f]).transfer[0], whole.transfer[i], rtol=1e-12)


@pytest.mark.parametrize(
    "build", [invented_non_inverting, invented_filter_chain, invented_transimpedance]
)
def test_schur_path_matches_the_stacked_lu(build) -> None:
    # Both are backward-stable solves of the same system: at each frequency the
    # transfers agree to rounding relative to the largest transfer there.
    net = build()
    f = np.geomspace(1e-2, 1e8, 301)
    lu = solve_noise(net, f, method="lu")
    schur = solve_noise(net, f, method="schur")
    scale = np.abs(lu.transfer).max(axis=1, keepdims=True)
    assert np.max(np.abs(schur.transfer - lu.transfer) / scale) < 1e-9
    np.testing.assert_allclose(schur.signal_transfer, lu.signal_transfer, rtol=1e-9, atol=1e-15)
    assert schur.rms_v() == pytest.approx(lu.rms_v(), rel=1e-9)


def test_schur_path_reports_singular_circuits() -> None:
    net = Netlist(
        [
            VoltageSource("vin", "in", "0"),
            Resistor("R1", "in", "0", 1e3),
            OpAmp("U1", "in", "0", "out", math.inf, math.inf),
            Resistor("RL", "out", "0", 1e3),
        ],
        output="out",
    )
    with pytest.raises(CircuitError, match="singular"):
        solve_noise(net, FREQS, method="schur")
    with pytest.raises(DesignError, match="method"):
        solve_noise(invented_non_inverting(), FREQS, method="cramer")  # type: ignore[arg-type]


def test_solution_shapes_and_lookup() -> None:
    sol = solve_noise(invented_non_inverting(), FREQS)
    assert sol.source_ids == ("Rs.thermal", "U1.en", "U1.in+", "U1.in-", "RF.thermal", "RG.thermal")
    assert sol.transfer.shape == sol.output_psd.shape == (FREQS.size, 6)
    assert sum(sol.rms_by_source().values()) >= sol.rms_v()
    assert sol.rms_v(source_id="U1.en") == pytest.approx(sol.rms_by_source()["U1.en"])
    with pytest.raises(KeyError, match="no noise source 'R9.thermal'"):
        sol.psd_of("R9.thermal")


def test_resistor_at_its_own_temperature_and_noiseless() -> None:
    net = Netlist(
        [
            Resistor("R1", "out", "0", 1e3, temperature_k=400.0),
            Resistor("R2", "x", "0", 1e3),
            Resistor("R3", "x", "out", 1e3, noiseless=True),
        ],
        output="out",
        temperature_k=300.0,
    )
    assert [s.source_id for s in net.noise_sources] == ["R1.thermal", "R2.thermal"]
    assert net.noise_sources[0].white_sq == pytest.approx(4 * BOLTZMANN_J_PER_K * 400 / 1e3)


# ---------------------------------------------------------------------------
# laws


resistances = st.floats(min_value=10.0, max_value=1e6)
capacitances = st.floats(min_value=1e-12, max_value=1e-6)


@settings(max_examples=40, deadline=None)
@given(
    r=resistances,
    density=st.floats(min_value=1e-15, max_value=1e-9),
    node=st.sampled_from(["p", "m", "out", "src"]),
)
def test_adding_a_source_never_lowers_the_total(r, density, node) -> None:
    before = solve_noise(invented_non_inverting(), FREQS).total_psd_v2_per_hz
    after = solve_noise(
        invented_non_inverting([CurrentNoise("extra", "0", node, density)]), FREQS
    ).total_psd_v2_per_hz
    assert np.all(after >= before * (1 - 1e-12))


@settings(max_examples=40, deadline=None)
@given(
    r1=resistances,
    r2=resistances,
    c1=capacitances,
    c2=capacitances,
    k=st.floats(min_value=1e-3, max_value=1e3),
)
def test_impedance_scaling_keeps_the_transfer(r1, r2, c1, c2, k) -> None:
    # Scaling every R by k and every C by 1/k keeps every RC product: the voltage
    # transfer is unchanged (impedance scaling, common to every filter text).
    def ladder(scale: float) -> Netlist:
        return Netlist(
            [
                VoltageSource("vin", "in", "0"),
                Resistor("R1", "in", "a", r1 * scale),
                Capacitor("C1", "a", "0", c1 / scale),
                Resistor("R2", "a", "b", r2 * scale),
                Capacitor("C2", "a", "out", c2 / scale),
                Capacitor("C3", "b", "0", c1 / scale),
                *IDEAL.parts("U1", "b", "out", "out"),
            ],
            output="out",
            signal_input="vin",
        )

    f = np.geomspace(1.0, 1e6, 13)
    np.testing.assert_allclose(
        solve_noise(ladder(k), f).signal_transfer,
        solve_noise(ladder(1.0), f).signal_transfer,
        rtol=1e-8,
        atol=1e-14,
    )


@settings(max_examples=30, deadline=None)
@given(t=st.floats(min_value=1.0, max_value=1000.0))
def test_resistor_noise_power_is_proportional_to_temperature(t) -> None:
    # Johnson-Nyquist: 4kTR.
    def psd(temperature: float) -> np.ndarray:
        net = Netlist(
            [Resistor("R", "out", "0", 1e3), Capacitor("C", "out", "0", 1e-9)],
            output="out",
            temperature_k=temperature,
        )
        return solve_noise(net, FREQS).total_psd_v2_per_hz

    np.testing.assert_allclose(psd(t), psd(1.0) * t, rtol=1e-12)


# ---------------------------------------------------------------------------
# integration rule


def test_integrate_psd_is_exact_for_flicker_plus_white_pieces() -> None:
    # Source: DOMAIN §2, v² = e_w²·(f_c·ln(f_H/f_L) + (f_H − f_L)); 1/f and white are each
    # exact under the power-law rule, so integrate them as two columns on a coarse grid.
    f = np.geomspace(0.1, 1e4, 6)
    ew, fc = 5e-9, 30.0
    columns = np.stack([ew**2 * fc / f, np.full(f.size, ew**2)], axis=1)
    power = integrate_psd(f, columns).sum()
    assert power == pytest.approx(ew**2 * (fc * math.log(1e5) + (1e4 - 0.1)), rel=1e-12)
    # band edges between grid points follow the same power law
    inner = integrate_psd(f, columns, 0.5, 2e3).sum()
    assert inner == pytest.approx(ew**2 * (fc * math.log(2e3 / 0.5) + (2e3 - 0.5)), rel=1e-12)


def test_integrate_psd_against_quad_on_a_filter_skirt() -> None:
    # scipy.integrate.quad on 1/(1 + (f/fc)⁴) against the rule on 100 points per decade.
    from scipy import integrate

    f = np.geomspace(1.0, 1e5, 501)
    psd = 1 / (1 + (f / 1e3) ** 4)
    expected, _ = integrate.quad(lambda x: 1 / (1 + (x / 1e3) ** 4), 1.0, 1e5, limit=200)
    assert float(integrate_psd(f, psd)) == pytest.approx(expected, rel=1e-4)


# ---------------------------------------------------------------------------
# errors


def test_floating_node_is_named() -> None:
    net = Netlist(
        [
            Resistor("R1", "out", "0", 1e3),
            CurrentNoise("i1", "0", "lonely", 1e-12),
            Resistor("R2", "lonely", "island", 1e3),
        ],
        output="out",
    )
    with pytest.raises(CircuitError, match="floating node") as info:
        solve_noise(net, FREQS)
    assert set(info.value.nodes) == {"lonely", "island"}
    assert "i1" in info.value.parts and "R2" in info.value.parts


def test_op_amp_input_alone_is_floating() -> None:
    net = Netlist(
        [OpAmp("U1", "nowhere", "out", "out", 1e6, 1e6), Resistor("R", "out", "0", 1e3)],
        output="out",
    )
    with pytest.raises(CircuitError, match="nowhere"):
        solve_noise(net, FREQS)


def test_loop_of_voltage_sources_is_named() -> None:
    net = Netlist(
        [
            VoltageSource("v1", "a", "0"),
            VoltageNoise("en", "a", "0", 1e-9),
            Resistor("R", "a", "0", 1e3),
        ],
        output="a",
    )
    with pytest.raises(CircuitError, match="loop of voltage sources") as info:
        solve_noise(net, FREQS)
    assert {"v1", "en"} <= set(info.value.parts)


def test_ideal_op_amp_without_feedback_is_singular_and_named() -> None:
    net = Netlist(
        [
            VoltageSource("vin", "in", "0"),
            Resistor("R1", "in", "0", 1e3),
            OpAmp("U1", "in", "0", "out", math.inf, math.inf),
            Resistor("RL", "out", "0", 1e3),
        ],
        output="out",
        signal_input="vin",
    )
    with pytest.raises(CircuitError, match="singular") as info:
        solve_noise(net, FREQS)
    assert "U1" in info.value.parts


def test_capacitor_only_node_is_singular_at_0_hz_only() -> None:
    net = Netlist(
        [
            Resistor("R1", "in", "0", 1e3),
            Capacitor("C1", "in", "mid", 1e-9),
            Capacitor("C2", "mid", "0", 1e-9),
        ],
        output="mid",
    )
    solve_noise(net, [1.0, 10.0])
    with pytest.raises(CircuitError, match="singular at 0 Hz") as info:
        solve_noise(net, [0.0, 1.0])
    assert info.value.nodes == ("mid",)


@pytest.mark.parametrize(
    ("build", "match"),
    [
        (lambda: Resistor("R1", "a", "b", -5.0), "R1.resistance_ohm"),
        (lambda: Resistor("R1", "a", "b", float("nan")), "R1.resistance_ohm"),
        (lambda: Capacitor("C1", "a", "b", 0.0), "C1.capacitance_f"),
        (lambda: OpAmp("U1", "a", "b", "0", 1e6, 1e6), "U1.output"),
        (lambda: OpAmp("U1", "a", "b", "c", 1e6, -1.0), "U1.gbw_hz"),
        (lambda: VoltageNoise("en", "a", "b", -1e-9), "en.white_v_per_rthz"),
        (lambda: CurrentNoise("in", "a", "b", 1e-12, corner_hz=-1.0), "in.corner_hz"),
        (lambda: ShotNoise("sh", "a", "b", math.inf), "sh.current_a"),
        (lambda: Resistor("", "a", "b", 1.0), "name"),
        (lambda: Netlist([Resistor("R", "a", "0", 1.0)], output="b"), "netlist.output"),
        (
            lambda: Netlist([Resistor("R", "a", "0", 1.0)], output="a", signal_input="R"),
            "signal_input",
        ),
        (
            lambda: solve_noise(Netlist([Resistor("R", "a", "0", 1.0)], output="a"), [-1.0]),
            "frequency_hz",
        ),
    ],
)
def test_bad_values_raise_design_errors_naming_the_field(build, match) -> None:
    with pytest.raises(DesignError, match=match):
        build()


def test_duplicate_names_and_ids_are_refused() -> None:
    with pytest.raises(CircuitError, match="share a name"):
        Netlist([Resistor("R", "a", "0", 1.0), Resistor("R", "a", "0", 2.0)], output="a")
    with pytest.raises(CircuitError, match="share the id"):
        Netlist(
            [Resistor("R1", "a", "0", 1.0, noise_id="x"), CurrentNoise("x", "0", "a", 1.0)],
            output="a",
        )


def test_flicker_source_at_0_hz_is_refused() -> None:
    net = Netlist(
        [VoltageNoise("en", "out", "0", 1e-9, corner_hz=1.0), Resistor("R", "out", "0", 1.0)],
        output="out",
    )
    with pytest.raises(CircuitError, match="0 Hz"):
        solve_noise(net, [0.0, 1.0])


# ---------------------------------------------------------------------------
# poles and stability


def test_rc_pole_is_minus_one_over_rc() -> None:
    net = Netlist(
        [Resistor("R", "out", "0", 10e3), Capacitor("C", "out", "0", 10e-9)], output="out"
    )
    assert circuit_poles(net) == pytest.approx(np.array([-1e4 + 0j]), rel=1e-12)
    assert check_stability(net).stable


@pytest.mark.parametrize(
    ("gain", "stable"), [(1.0, True), (2.0, True), (2.9, True), (3.5, False), (4.0, False)]
)
def test_equal_component_sallen_key_poles(gain, stable) -> None:
    """Equal R and C Sallen-Key: denominator (sRC)² + sRC(3 − K) + 1; unstable for K > 3.

    Source: Sallen & Key (1955) transfer function; roots by numpy.roots.
    """
    r, c = 10e3, 10e-9
    parts = [
        VoltageSource("vin", "in", "0"),
        Resistor("R1", "in", "a", r),
        Resistor("R2", "a", "b", r),
        Capacitor("C1", "a", "out", c),
        Capacitor("C2", "b", "0", c),
        OpAmp("U1", "b", "m", "out", math.inf, math.inf),
        Resistor("RF", "out", "m", (gain - 1) * 10e3 if gain > 1 else 1.0),
        Resistor("RG", "m", "0", 10e3 if gain > 1 else 1e15),
    ]
    net = Netlist(parts, output="out", signal_input="vin")
    expected = np.roots([(r * c) ** 2, r * c * (3 - gain), 1.0])
    expected = expected[np.argsort(expected.imag)]
    poles = circuit_poles(net)
    poles = poles[np.argsort(poles.imag)]
    np.testing.assert_allclose(poles, expected, rtol=1e-6)
    verdict = check_stability(net)
    assert verdict.stable is stable
    assert ("unstable" in verdict.describe()) is not stable


def test_positive_feedback_is_unstable_and_real_circuits_are_stable() -> None:
    latch = Netlist(
        [
            Resistor("R1", "p", "0", 1e3),
            Resistor("R2", "out", "p", 10e3),
            OpAmp("U1", "p", "0", "out", 1e5, 1e6),
        ],
        output="out",
    )
    verdict = check_stability(latch)
    assert not verdict.stable and verdict.right_half_plane.size == 1
    tia = Netlist(
        [
            Resistor("Rsh", "m", "0", 100e6),
            Capacitor("Cj", "m", "0", 100e-12),
            Resistor("RF", "m", "out", 10e6),
            Capacitor("CF", "m", "out", 1e-12),
            OpAmp("U1", "0", "m", "out", 1e6, 10e6),
        ],
        output="out",
    )
    assert check_stability(tia).stable
    assert check_stability(invented_non_inverting()).stable


def test_ideal_integrator_is_marginal() -> None:
    net = Netlist(
        [
            VoltageSource("vin", "in", "0"),
            Resistor("R", "in", "m", 1e3),
            Capacitor("C", "m", "out", 1e-6),
            OpAmp("U1", "0", "m", "out", math.inf, math.inf),
        ],
        output="out",
    )
    verdict = check_stability(net)
    assert not verdict.stable and verdict.on_axis.size == 1


def test_module_import_does_not_load_scipy() -> None:
    code = (
        "import sys, resplan.noise.nodal, resplan.noise.sections; "
        "print(any(m == 'scipy' or m.startswith('scipy.') for m in sys.modules))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"
