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

from resplan import ADC, Chain, DigitalPath, NoiseAtRate, Sensor, SincFilter


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
