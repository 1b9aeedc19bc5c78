"""Interferer residues through the whole chain, against independent computations.

Every chain here is INVENTED. References: the analog responses from scipy.signal's
prototypes (``bessel(..., analog=True, norm="mag")``, ``butter``) evaluated with
``freqs``; the digital responses from the filters' impulse responses (k boxcars of
length R convolved) evaluated with ``freqz`` — Hogenauer, IEEE Trans. ASSP 29 (1981)
155 for the sinc^k filter. The residue of a tone is A·|H_a(f)|·|H_d(f)| and that of
a spectrum √∫ S |H_a|² |H_d|² df (DOMAIN §4, §12).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import signal
from scipy.integrate import trapezoid

from resplan import (
    ADC,
    ActiveFilter,
    DigitalPath,
    NoiseAtRate,
    RCFilter,
    Requirement,
    Sensor,
    SincFilter,
    TransitionNoise,
)
from resplan.chain.interference import (
    Broadband,
    Mains,
    Tone,
    interference_residue,
    worst_in_window,
)
from resplan.chain.signal_chain import Chain
from resplan.errors import DesignError

REQ = Requirement(10.0, dynamic_range_db=90.0)


def bessel_sar_chain(order=4, cutoff=40e3, fs=100e3, digital=None):
    """INVENTED: Bessel anti-alias filter ahead of an 18-bit SAR."""
    return Chain(
        Sensor(10.0, 100.0, bipolar=True),
        (ActiveFilter("invented Bessel", "bessel", order, cutoff, gain=0.8),),
        ADC("invented SAR", "sar", 18, 8.192, fs, TransitionNoise(0.7)),
        digital=digital,
    )


def sinc_chain(k=3, fs=6.4e3, odr=10.0, rc_hz=1.6e3):
    """INVENTED: an RC ahead of a delta-sigma ADC with a sinc^k decimator."""
    r = 1e3
    c = 1 / (2 * math.pi * (r + 350.0) * rc_hz)
    n = int(fs / odr)
    return Chain(
        Sensor(10e-3, 350.0),
        (RCFilter("invented RC", r, c),),
        ADC(
            "invented delta-sigma",
            "delta-sigma",
            24,
            5.0,
            fs,
            NoiseAtRate(0.2e-6, odr),
            data_rate_hz=odr,
        ),
        digital=DigitalPath((SincFilter(k, n, fs),)),
    ), n


def scipy_sinc_gain(k: int, n: int, fs: float, f: np.ndarray) -> np.ndarray:
    """|H_d(f)| of k boxcars of length n at rate fs, by scipy.signal.freqz."""
    h = np.ones(n) / n
    for _ in range(k - 1):
        h = np.convolve(h, np.ones(n) / n)
    _, resp = signal.freqz(h, worN=f, fs=fs)
    return np.abs(resp)


def scipy_analog_gain(kind: str, order: int, cutoff: float, f: np.ndarray) -> np.ndarray:
    if kind == "bessel":
        b, a = signal.bessel(order, 2 * np.pi * cutoff, analog=True, norm="mag")
    elif kind == "butterworth":
        b, a = signal.butter(order, 2 * np.pi * cutoff, analog=True)
    else:
        b, a = [2 * np.pi * cutoff], [1, 2 * np.pi * cutoff]
    _, h = signal.freqs(b, a, worN=2 * np.pi * np.asarray(f))
    return np.abs(h)


@pytest.mark.parametrize(
    "order, cutoff, f",
    [(4, 40e3, 82e3), (2, 20e3, 130e3), (6, 30e3, 95e3)],
)
def test_tone_through_bessel_and_sar_matches_scipy_freqs(order, cutoff, f):
    chain = bessel_sar_chain(order, cutoff)
    r = interference_residue(chain, Tone(f, 12e-3), REQ)
    expected = 12e-3 * scipy_analog_gain("bessel", order, cutoff, np.array([f]))[0]
    assert r.residue_v == pytest.approx(expected, rel=1e-9)
    # where it lands: |f − m·fs| folded into [0, fs/2]
    assert r.components[0].alias_hz == pytest.approx(abs(f - round(f / 100e3) * 100e3))


@pytest.mark.parametrize("f", [37.0, 6_410.0, 1234.5])
def test_tone_through_rc_and_sinc3_matches_scipy(f):
    chain, n = sinc_chain()
    r = interference_residue(chain, Tone(f, 1e-3), REQ)
    rc = chain.stage_responses(0)[0].cutoff_hz
    ha = scipy_analog_gain("rc", 1, rc, np.array([f]))[0]
    hd = scipy_sinc_gain(3, n, 6.4e3, np.array([f]))[0]
    assert r.residue_v == pytest.approx(1e-3 * ha * hd, rel=1e-6)


@pytest.mark.parametrize("tolerance", [0.01, 0.002])
def test_mains_is_judged_at_its_worst_frequency_never_the_null(tolerance):
    chain, n = sinc_chain()
    mains = Mains((50.0,), (1e-3, 1e-3, 1e-3), tolerance)
    r = interference_residue(chain, mains, REQ)
    assert [c.nominal_hz for c in r.components] == [50.0, 100.0, 150.0]
    rc = chain.stage_responses(0)[0].cutoff_hz
    total = 0.0
    for c in r.components:
        # brute force over the window with scipy: the worst point of a dense grid
        f = np.linspace(c.nominal_hz * (1 - tolerance), c.nominal_hz * (1 + tolerance), 20001)
        g = scipy_analog_gain("rc", 1, rc, f) * scipy_sinc_gain(3, n, 6.4e3, f)
        worst = 1e-3 * g.max()
        assert c.residue_v == pytest.approx(worst, rel=1e-4)
        assert math.isfinite(c.digital_db) and c.digital_db < 200  # not the exact null
        total += c.residue_v**2
    assert r.residue_v == pytest.approx(math.sqrt(total), rel=1e-12)


def test_exact_mains_frequency_sits_on_a_sinc_null():
    # Without tolerance the 50 Hz tone lands on a null of sinc3 at 10 Hz output: the
    # tool never checks there unless told the tolerance is zero.
    chain, _ = sinc_chain()
    exact = interference_residue(chain, Tone(50.0, 1e-3), REQ)
    assert exact.components[0].digital_db > 200
    worst = interference_residue(chain, Mains((50.0,), (1e-3,), 0.01), REQ)
    assert worst.residue_v > 1e6 * exact.residue_v


def test_both_mains_systems_the_worse_counts():
    chain, _ = sinc_chain()
    both = interference_residue(chain, Mains((50.0, 60.0), (1e-3,), 0.01), REQ)
    only50 = interference_residue(chain, Mains((50.0,), (1e-3,), 0.01), REQ)
    only60 = interference_residue(chain, Mains((60.0,), (1e-3,), 0.01), REQ)
    assert both.residue_v == pytest.approx(max(only50.residue_v, only60.residue_v))


def test_worst_in_window_finds_a_lobe_peak():
    chain, n = sinc_chain()
    f = worst_in_window(chain, 45.0, 55.0)
    grid = np.linspace(45.0, 55.0, 100001)
    g = scipy_sinc_gain(3, n, 6.4e3, grid)
    assert abs(f - grid[np.argmax(g)]) < 0.01


@pytest.mark.parametrize(
    "table",
    [
        ((2e3, 50e3), (1e-6, 1e-6)),
        ((3e3, 10e3, 80e3), (2e-6, 5e-7, 1e-7)),
    ],
)
def test_spectrum_folded_like_noise_matches_a_direct_integral(table):
    # SAR at 10 kHz, RC at 1 kHz, average of 4: the digital response is periodic, so
    # integrating S |H_a|² |H_d|² over the physical frequency axis folds it exactly.
    fs = 10e3
    r_ohm, c_f = 1e3, 1 / (2 * math.pi * (1e3 + 100.0) * 1e3)
    chain = Chain(
        Sensor(4.0, 100.0, bipolar=True),
        (RCFilter("invented RC", r_ohm, c_f),),
        ADC("invented SAR", "sar", 16, 10.0, fs, TransitionNoise(0.5)),
        digital=DigitalPath((SincFilter(1, 4, fs),)),
    )
    spectrum = Broadband(*table)
    r = interference_residue(chain, spectrum, REQ)
    f = np.linspace(table[0][0], table[0][-1], 2_000_001)
    s = np.exp(np.interp(np.log(f), np.log(table[0]), 2 * np.log(table[1])))
    ha = scipy_analog_gain("rc", 1, 1e3, f)
    hd = scipy_sinc_gain(1, 4, fs, f)
    expected = math.sqrt(trapezoid(s * ha**2 * hd**2, f))
    assert r.residue_v == pytest.approx(expected, rel=0.02)


@pytest.mark.parametrize(
    "make",
    [
        lambda: Tone(-1.0, 1e-3),
        lambda: Tone(1e3, -1e-3),
        lambda: Mains((), (1e-3,)),
        lambda: Mains((50.0,), (1e-3,), 0.5),
        lambda: Broadband((1e3,), (1e-6,)),
        lambda: Broadband((2e3, 1e3), (1e-6, 1e-6)),
    ],
)
def test_bad_interferers_are_refused(make):
    with pytest.raises(DesignError):
        make()


def test_spectrum_through_sinc3_folds_into_the_narrow_pass_band():
    # An RC and a sinc3 decimator: only the bands near multiples of the modulator rate
    # reach the output. Reference: the sinc^k closed form (Hogenauer 1981) on a grid of
    # 64 points per output-rate lobe over the whole table, trapezoid rule.
    chain, n = sinc_chain()
    table = ((1e3, 1e5), (1e-6, 1e-7))
    r = interference_residue(chain, Broadband(*table), REQ)
    f = np.linspace(1e3, 1e5, 640_001)
    s = np.exp(np.interp(np.log(f), np.log(table[0]), 2 * np.log(table[1])))
    rc = chain.stage_responses(0)[0].cutoff_hz
    x = np.pi * f / 6.4e3
    hd2 = (np.sin(n * x) / (n * np.sin(x))) ** 6
    expected = math.sqrt(trapezoid(s * hd2 / (1 + (f / rc) ** 2), f))
    assert r.residue_v == pytest.approx(expected, rel=0.01)  # 0.2 % found
