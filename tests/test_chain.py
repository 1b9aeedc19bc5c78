"""Chain-level rules: how digital post-filtering scales the converter's own noise.

Reference: Parseval's theorem for the DTFT (Oppenheim & Schafer, *Discrete-Time
Signal Processing*, 3rd ed., §2.9): for noise of flat density over the first
Nyquist zone at the modulator rate, the output variance is proportional to Σh²
of the whole digital impulse response. The impulse responses are built here with
numpy convolution, independently of resplan's frequency-domain integrals.
"""

from __future__ import annotations

import numpy as np
import pytest

from resplan import (
    ADC,
    Band,
    Chain,
    DigitalPath,
    NoiseAtRate,
    NoiseDensity,
    RCFilter,
    Reference,
    Requirement,
    Sensor,
    SincFilter,
    TransitionNoise,
    forward_budget,
)


def _sinc_impulse(order: int, length: int) -> np.ndarray:
    box = np.full(length, 1.0 / length)
    h = box
    for _ in range(order - 1):
        h = np.convolve(h, box)
    return h


def _chain(order: int, ratio: int, average: int) -> Chain:
    fs = 64_000.0
    odr = fs / ratio
    adc = ADC("converter (invented)", "delta-sigma", 24, 5.0, fs, NoiseAtRate(1e-6, odr), odr)
    digital = DigitalPath((SincFilter(order, ratio, fs), SincFilter(1, average, odr)))
    return Chain(Sensor(1e-3, 100.0), (), adc, None, digital)


@pytest.mark.parametrize(
    "order, ratio, average", [(3, 64, 4), (1, 16, 8), (4, 32, 2), (3, 128, 16)]
)
def test_post_average_after_decimator_matches_parseval(order, ratio, average):
    h_dec = _sinc_impulse(order, ratio)
    # The average of `average` decimator outputs, seen at the modulator rate:
    # the decimator's response repeated every `ratio` samples.
    h_full = np.zeros(len(h_dec) + ratio * (average - 1))
    for j in range(average):
        h_full[j * ratio : j * ratio + len(h_dec)] += h_dec / average
    expected = np.sum(h_full**2) / np.sum(h_dec**2)
    assert _chain(order, ratio, average).post_variance_factor() == pytest.approx(expected, rel=2e-4)


def test_sinc1_decimator_then_average_is_plain_average():
    # Successive outputs of a plain (sinc¹) decimator do not overlap: the factor is 1/N.
    assert _chain(1, 64, 8).post_variance_factor() == pytest.approx(1 / 8, rel=2e-4)


def test_correlated_decimator_outputs_average_less_than_one_over_n():
    # sinc³ outputs overlap three output periods: averaging 4 keeps about 0.40, not 0.25.
    factor = _chain(3, 64, 4).post_variance_factor()
    assert 0.35 < factor < 0.45


# ---------------------------------------------------------------------------
# The sensor's offset: the input window and the largest input


def _rtd_chain(offset_v: float, polarity: str | None, ratiometric: bool = False):
    # INVENTED: an RTD-like source, 38.5 mV span above an offset, into a 16-bit SAR.
    sensor = Sensor(38.5e-3, 100.0, offset_v=offset_v)
    adc = ADC(
        "SAR (invented)", "sar", 16, 2.5, 100e3, TransitionNoise(0.5), input_polarity=polarity
    )
    ref = Reference(2.5, NoiseDensity(100e-9), filter_cutoff_hz=10.0, ratiometric=ratiometric)
    return Chain(sensor, (RCFilter("RC (invented)", 1e3, 1e-6),), adc, ref), Band(0.1)


def test_reference_error_acts_on_the_largest_input_offset_included():
    # Error at the ADC input = V_in · σ_ref / V_ref (DOMAIN §5), V_in the largest input.
    chain, band = _rtd_chain(100e-3, None)
    zero, _ = _rtd_chain(0.0, None)
    with_offset = next(
        c for c in forward_budget(chain, band).contributions if c.kind == "reference"
    )
    without = next(c for c in forward_budget(zero, band).contributions if c.kind == "reference")
    assert with_offset.rms_v / without.rms_v == pytest.approx((100e-3 + 38.5e-3) / 38.5e-3)


def test_output_outside_the_adc_window_overloads():
    req = Requirement(38.5e-3, noise_free_counts=100)
    chain, band = _rtd_chain(-10e-3, "unipolar")
    b = forward_budget(chain, band, requirement=req)
    assert b.outside_window and b.overloaded and b.meets_requirement is False
    assert any("input window" in w for w in b.warnings)
    fine, _ = _rtd_chain(10e-3, "unipolar")
    assert not forward_budget(fine, band, requirement=req).overloaded
