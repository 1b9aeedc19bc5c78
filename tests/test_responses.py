"""Filter responses checked against scipy.signal prototypes and closed forms.

scipy.signal and scipy.integrate are the outside references; resplan builds its
responses without them (closed-form Butterworth magnitude, reverse Bessel
polynomial, sinc^k formula), so agreement is an independent check.
"""

from __future__ import annotations

import math
from itertools import pairwise

import numpy as np
import pytest
from scipy import integrate, signal

from resplan.errors import DesignError
from resplan.noise.responses import (
    AnalogLowpass,
    IdealLowpass,
    SincFilter,
    bessel_polynomial,
    butterworth_enbw_ratio,
)

ORDERS = range(1, 9)
FC = 1000.0


def _scipy_power_gain(b, a, f):
    _, h = signal.freqs(b, a, worN=2 * np.pi * np.atleast_1d(np.asarray(f, dtype=float)))
    return np.abs(h) ** 2


def _quad_enbw(b, a, fc):
    """∫₀^∞ |H|² df of a scipy analog prototype by scipy.integrate.quad, split at decades.

    Above X = 1e3·f_c the substitution f = X/t maps the tail onto t ∈ (0, 1], where the
    integrand |H(X/t)|²·X/t² stays finite (it tends to a constant for a single pole).
    """

    def h2(f):
        return float(_scipy_power_gain(b, a, f)[0])

    top = 1e3 * fc
    edges = [0.0, fc, 10 * fc, 100 * fc, top]
    body = sum(integrate.quad(h2, lo, hi, limit=200)[0] for lo, hi in pairwise(edges))
    tail = integrate.quad(lambda t: h2(top / t) * top / t**2, 1e-300, 1.0, limit=200)[0]
    return body + tail


# --- Butterworth -----------------------------------------------------------------------


@pytest.mark.parametrize("order", ORDERS)
def test_butterworth_enbw_closed_form_matches_quad_of_scipy_prototype(order):
    # Closed form f_c·(π/2n)/sin(π/2n) (Gradshteyn & Ryzhik 3.241.2) against
    # scipy.integrate.quad of |H|² of scipy.signal.butter(n, 2π f_c, analog=True) evaluated by
    # scipy.signal.freqs. quad reaches ~1e-14 here; tolerance 1e-10.
    b, a = signal.butter(order, 2 * np.pi * FC, analog=True)
    reference = _quad_enbw(b, a, FC)
    assert FC * butterworth_enbw_ratio(order) == pytest.approx(reference, rel=1e-10)
    assert AnalogLowpass("butterworth", order, FC).noise_bandwidth_hz() == pytest.approx(
        reference, rel=1e-10
    )


@pytest.mark.parametrize(
    ("order", "ratio"),
    # The trade's table of Butterworth ENBW/f_c (DOMAIN.md §4; values from memory, rounded to
    # the digits quoted): π/2 for one pole, 1.111, 1.047, 1.026.
    [(1, 1.571), (2, 1.111), (3, 1.047), (4, 1.026)],
)
def test_butterworth_enbw_table(order, ratio):
    assert butterworth_enbw_ratio(order) == pytest.approx(ratio, abs=5e-4)


@pytest.mark.parametrize("order", ORDERS)
def test_butterworth_power_gain_matches_scipy(order):
    # |H|² of scipy.signal.butter(analog=True) via freqs, from 1e-3 f_c to 1e3 f_c. Both are
    # exact formulas evaluated in float: relative agreement 1e-10 even 48 dB/oct deep.
    f = np.geomspace(1e-3, 1e3, 301) * FC
    b, a = signal.butter(order, 2 * np.pi * FC, analog=True)
    np.testing.assert_allclose(
        AnalogLowpass("butterworth", order, FC).power_gain(f),
        _scipy_power_gain(b, a, f),
        rtol=1e-10,
    )


@pytest.mark.parametrize("order", ORDERS)
def test_butterworth_attenuation_formula_and_scipy(order):
    # A(f) = 10·log10(1 + (f/f_c)^2n) dB (DOMAIN.md §4) against −20·log10|H| from
    # scipy.signal.freqs; tolerance 1e-8 dB (float rounding of two exact formulas).
    f = np.array([0.1, 0.5, 1.0, 2.0, 5.0, 10.0, 64.0]) * FC
    lp = AnalogLowpass("butterworth", order, FC)
    b, a = signal.butter(order, 2 * np.pi * FC, analog=True)
    from_scipy = -10 * np.log10(_scipy_power_gain(b, a, f))
    np.testing.assert_allclose(
        lp.attenuation_db(f), 10 * np.log10(1 + (f / FC) ** (2 * order)), atol=1e-8
    )
    np.testing.assert_allclose(lp.attenuation_db(f), from_scipy, atol=1e-8)


def test_butterworth_is_three_db_down_at_cutoff_and_falls_6n_db_per_octave():
    # Definition of the cut-off (|H|² = 1/2: 3.0103 dB) and the asymptotic 6.02·n dB/octave.
    for order in ORDERS:
        lp = AnalogLowpass("butterworth", order, FC)
        assert float(lp.attenuation_db(FC)) == pytest.approx(10 * math.log10(2), abs=1e-12)
        slope = float(lp.attenuation_db(2e5 * FC) - lp.attenuation_db(1e5 * FC))
        assert slope == pytest.approx(order * 20 * math.log10(2), abs=1e-6)


def test_rc_is_the_first_order_butterworth():
    # A single real pole: |H|² = 1/(1 + (f/f_c)²), ENBW (π/2)·f_c (DOMAIN.md §4).
    rc = AnalogLowpass("rc", 1, FC)
    f = np.geomspace(1.0, 1e7, 50)
    np.testing.assert_allclose(rc.power_gain(f), 1 / (1 + (f / FC) ** 2), rtol=1e-14)
    assert rc.noise_bandwidth_hz() == pytest.approx(math.pi / 2 * FC, rel=1e-15)


# --- Bessel ----------------------------------------------------------------------------


def test_bessel_polynomial_coefficients():
    # Reverse Bessel polynomials (Thomson 1949; any filter handbook table): θ₂ = s² + 3s + 3,
    # θ₄ = s⁴ + 10s³ + 45s² + 105s + 105; coefficients a_0 … a_n.
    assert bessel_polynomial(1).tolist() == [1.0, 1.0]
    assert bessel_polynomial(2).tolist() == [3.0, 3.0, 1.0]
    assert bessel_polynomial(4).tolist() == [105.0, 105.0, 45.0, 10.0, 1.0]


@pytest.mark.parametrize("order", ORDERS)
def test_bessel_polynomial_matches_scipy_denominator(order):
    # scipy.signal.bessel(n, 1, analog=True, norm='delay') has denominator θ_n(s) (monic,
    # highest power first) — the same polynomial resplan builds in closed form.
    _, a = signal.bessel(order, 1.0, analog=True, norm="delay")
    np.testing.assert_allclose(bessel_polynomial(order)[::-1], a / a[0], rtol=1e-12)


@pytest.mark.parametrize("order", ORDERS)
def test_bessel_power_gain_matches_scipy_magnitude_normalised(order):
    # resplan's closed-form |H|² of the reverse Bessel polynomial, scaled to −3 dB at f_c,
    # against scipy.signal.bessel(n, 2π f_c, analog=True, norm='mag') via freqs at 401
    # frequencies from 1e-3 to 1e3 f_c. Observed agreement ~1e-13; tolerance 1e-9 relative.
    f = np.geomspace(1e-3, 1e3, 401) * FC
    b, a = signal.bessel(order, 2 * np.pi * FC, analog=True, norm="mag")
    np.testing.assert_allclose(
        AnalogLowpass("bessel", order, FC).power_gain(f), _scipy_power_gain(b, a, f), rtol=1e-9
    )


@pytest.mark.parametrize("order", ORDERS)
def test_bessel_is_three_db_down_at_cutoff(order):
    # norm='mag' convention: |H(f_c)|² = 1/2.
    assert float(AnalogLowpass("bessel", order, FC).power_gain(FC)) == pytest.approx(0.5, rel=1e-9)


@pytest.mark.parametrize("order", ORDERS)
def test_bessel_enbw_matches_quad_of_scipy_prototype(order):
    # Bessel ENBW has no simple closed form (DOMAIN.md §4: integrate numerically). Reference:
    # scipy.integrate.quad of |H|² of scipy.signal.bessel(norm='mag'). resplan integrates its
    # own response with the trapezoid rule on 200 001 log-spaced points plus an exact
    # power-law tail: observed ~2e-9; tolerance 1e-7.
    b, a = signal.bessel(order, 2 * np.pi * FC, analog=True, norm="mag")
    reference = _quad_enbw(b, a, FC)
    assert AnalogLowpass("bessel", order, FC).noise_bandwidth_hz() == pytest.approx(
        reference, rel=1e-7
    )


def test_first_order_bessel_is_a_single_pole():
    assert AnalogLowpass("bessel", 1, FC).noise_bandwidth_hz() == pytest.approx(
        math.pi / 2 * FC, rel=1e-7
    )


# --- sinc^k -----------------------------------------------------------------------------


@pytest.mark.parametrize("order", [1, 2, 3, 4, 5])
@pytest.mark.parametrize("length", [1, 2, 7, 64])
def test_sinc_power_gain_matches_freqz_of_boxcar_cascade(order, length):
    # Reference: the impulse response of k cascaded moving averages of length R built with
    # np.convolve (Hogenauer 1981), its DTFT by scipy.signal.freqz, |H|². Absolute
    # tolerance 1e-12 on a gain normalised to 1 (float rounding).
    rate = 64_000.0
    box = np.full(length, 1.0 / length)
    h = box
    for _ in range(order - 1):
        h = np.convolve(h, box)
    f = np.linspace(0.0, rate, 1001)
    _, response = signal.freqz(h, worN=f, fs=rate)
    sinc = SincFilter(order, length, rate)
    np.testing.assert_allclose(sinc.power_gain(f), np.abs(response) ** 2, atol=1e-12)
    np.testing.assert_allclose(sinc.impulse_response(), h, rtol=1e-14)


def test_sinc_impulse_response_has_unit_sum_and_length_k_r_minus_1_plus_1():
    s = SincFilter(3, 64, 64_000.0)
    h = s.impulse_response()
    assert h.size == 3 * (64 - 1) + 1
    assert float(np.sum(h)) == pytest.approx(1.0, rel=1e-14)


def test_sinc_nulls_at_multiples_of_the_output_rate_and_period_of_the_input_rate():
    # Hogenauer (1981): nulls at m·f_s/R; the response repeats every f_s (DTFT periodicity).
    s = SincFilter(3, 64, 64_000.0)
    assert s.output_rate_hz == 1000.0
    nulls = np.arange(1, 64) * 1000.0
    assert np.max(s.power_gain(nulls)) < 1e-20
    f = np.linspace(1.0, 64_000.0, 777)
    np.testing.assert_allclose(s.power_gain(f + 64_000.0), s.power_gain(f), atol=1e-12)
    assert float(s.power_gain(64_000.0)) == pytest.approx(1.0)


@pytest.mark.parametrize("order", [1, 2, 3, 4, 5])
@pytest.mark.parametrize("length", [4, 64])
def test_sinc_noise_bandwidth_parseval_matches_quad(order, length):
    # Parseval (Oppenheim & Schafer §2.9): ∫₀^{fs/2}|H|² df = (fs/2)Σh². Reference:
    # scipy.integrate.quad of the power gain, one call per side lobe; ~1e-12 relative.
    rate = 64_000.0
    s = SincFilter(order, length, rate)
    lobe = rate / length
    edges = np.arange(0.0, rate / 2 + lobe / 2, lobe)
    edges[-1] = rate / 2
    reference = sum(
        integrate.quad(lambda f: float(s.power_gain(f)), lo, hi)[0] for lo, hi in pairwise(edges)
    )
    assert s.noise_bandwidth_hz() == pytest.approx(reference, rel=1e-9)


@pytest.mark.parametrize(
    ("order", "ratio"),
    # ENBW/ODR of sinc^k at a large decimation ratio tends to ∫₀^∞ sinc(x)^{2k} dx:
    # 1/2 for k = 1 (exact: ∫ sinc² = 1/2), 1/3, 11/40 = 0.275, 151/630 = 0.2397 (the classical
    # integrals of (sin x/x)^n, from memory; checked against quad in the next test).
    [(1, 0.5), (2, 1 / 3), (3, 11 / 40), (4, 151 / 630)],
)
def test_sinc_enbw_at_large_ratio(order, ratio):
    s = SincFilter(order, 4096, 4096.0 * 10.0)
    # Finite-R correction is O(1/R²): ~1e-8 at R = 4096; tolerance 1e-6.
    assert s.noise_bandwidth_hz() / s.output_rate_hz == pytest.approx(ratio, rel=1e-6)


@pytest.mark.parametrize(("order", "ratio"), [(1, 0.5), (2, 1 / 3), (3, 11 / 40), (4, 151 / 630)])
def test_sinc_integrals_by_quad(order, ratio):
    # Independent check of the constants above: scipy.integrate.quad of np.sinc(x)^{2k} over
    # [0, X], one call per lobe, plus the tail. For k = 1 the tail is 1/(2π²X) (mean of sin² is
    # 1/2); for k ≥ 2 it is below X^{1−2k} and negligible. Tolerance 1e-6.
    lobes = 2000 if order == 1 else 200
    total = sum(
        integrate.quad(lambda x: float(np.sinc(x)) ** (2 * order), j, j + 1)[0]
        for j in range(lobes)
    )
    if order == 1:
        total += 1 / (2 * math.pi**2 * lobes)
    assert total == pytest.approx(ratio, rel=1e-6)


def test_domain_values_of_sinc_enbw():
    # DOMAIN.md §4: ENBW ≈ ODR × {0.5, ≈0.275, ≈0.240} for k = 1, 3, 4 (large ratio).
    for order, approx in ((1, 0.5), (3, 0.275), (4, 0.240)):
        s = SincFilter(order, 1000, 1e6)
        assert s.noise_bandwidth_hz() / s.output_rate_hz == pytest.approx(approx, abs=5e-4)


def test_averaging_n_samples_divides_white_noise_power_by_n():
    # Mean of N independent samples: variance σ²/N (any statistics text). By Parseval,
    # ENBW of the N-average over the first Nyquist zone is (fs/2)/N.
    for n in (2, 10, 256):
        s = SincFilter(1, n, 1e5)
        assert s.noise_bandwidth_hz() == pytest.approx(0.5e5 / n, rel=1e-13)


# --- ideal band limit -------------------------------------------------------------------


def test_ideal_lowpass_is_periodic_and_folds():
    b = IdealLowpass(10e3, 50e3)
    f = np.array([0.0, 9.99e3, 10.01e3, 25e3, 39.99e3, 40.01e3, 50e3, 59.99e3])
    np.testing.assert_array_equal(b.power_gain(f), [1, 1, 0, 0, 0, 1, 1, 1])


# --- bad input --------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("build", "field", "expected"),
    [
        (lambda: AnalogLowpass("chebyshev", 2, FC), "filter.response", "one of rc"),
        (lambda: AnalogLowpass("butterworth", 0, FC), "filter.order", "1 to 8"),
        (lambda: AnalogLowpass("butterworth", 9, FC), "filter.order", "1 to 8"),
        (lambda: AnalogLowpass("bessel", 2.5, FC), "filter.order", "1 to 8"),
        (lambda: AnalogLowpass("bessel", True, FC), "filter.order", "1 to 8"),
        (lambda: AnalogLowpass("rc", 2, FC), "filter.order", "1 for an RC"),
        (lambda: AnalogLowpass("butterworth", 2, 0.0), "filter.cutoff", "> 0 Hz"),
        (lambda: AnalogLowpass("butterworth", 2, -1.0), "filter.cutoff", "> 0 Hz"),
        (lambda: AnalogLowpass("butterworth", 2, math.nan), "filter.cutoff", "> 0 Hz"),
        (lambda: AnalogLowpass("butterworth", 2, math.inf), "filter.cutoff", "> 0 Hz"),
        (lambda: SincFilter(0, 64, 64e3), "digital_filter.order", "sinc order from 1 to 5"),
        (lambda: SincFilter(6, 64, 64e3), "digital_filter.order", "sinc order from 1 to 5"),
        (lambda: SincFilter(3, 0, 64e3), "digital_filter.length", "≥ 1"),
        (lambda: SincFilter(3, 6.4, 64e3), "digital_filter.length", "≥ 1"),
        (lambda: SincFilter(True, 64, 64e3), "digital_filter.order", "sinc order from 1 to 5"),
        (lambda: SincFilter(3, True, 64e3), "digital_filter.length", "≥ 1"),
        (lambda: SincFilter(3, 64, 0.0), "digital_filter.input_rate", "> 0 Hz"),
        (lambda: SincFilter(3, 64, math.nan), "digital_filter.input_rate", "> 0 Hz"),
        (lambda: IdealLowpass(30e3, 50e3), "band.f_high", "half the sample rate"),
        (lambda: IdealLowpass(0.0, 50e3), "band.f_high", "> 0 Hz"),
        (lambda: IdealLowpass(1e3, -5.0), "digital_filter.input_rate", "> 0 Hz"),
    ],
)
def test_bad_responses_raise_one_clear_error(build, field, expected):
    with pytest.raises(DesignError) as info:
        build()
    err = info.value
    assert err.field == field
    message = str(err)
    assert message.startswith(f"{field}: got ")
    assert expected in message
