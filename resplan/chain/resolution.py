r"""Resolution figures from a span and an rms noise.

With σ the total rms noise and S the span, both referred to the same point:

- effective resolution = log2(S/σ) bits
- noise-free resolution = log2(S/(k_pp·σ)) bits; noise-free counts = S/(k_pp·σ)
- dynamic range = 20·log10((S/(2√2))/σ) dB, for a full-scale sine

k_pp is the Gaussian peak-to-peak factor of a coverage probability
(:func:`resplan.noise.physics.peak_to_peak_factor`); it is a choice, so every output names it.
These are the trade's usual definitions (for example W. Kester, ed., *Data
Conversion Handbook*, Newnes 2005, ch. 5: "noise-free code resolution").
"""

from __future__ import annotations

import math

from ..errors import DesignError

__all__ = [
    "effective_bits",
    "noise_free_counts",
    "noise_free_bits",
    "dynamic_range_db",
    "sine_rms",
]


def _check(span_v: float, noise_rms_v: float) -> None:
    if not (math.isfinite(span_v) and span_v > 0):
        raise DesignError("span", span_v, "a span > 0 V")
    if not (math.isfinite(noise_rms_v) and noise_rms_v >= 0):
        raise DesignError("noise", noise_rms_v, "an rms noise ≥ 0 V")


def effective_bits(span_v: float, noise_rms_v: float) -> float:
    """log2(S/σ), bits (infinite for zero noise).

    Examples
    --------
    >>> effective_bits(1.0, 2.0**-20)
    20.0
    """
    _check(span_v, noise_rms_v)
    return math.inf if noise_rms_v == 0 else math.log2(span_v / noise_rms_v)


def noise_free_counts(span_v: float, noise_rms_v: float, k_pp: float) -> float:
    """S/(k_pp·σ): distinguishable steps across the span.

    Examples
    --------
    >>> noise_free_counts(6.0, 1.0e-3, 6.0)
    1000.0
    """
    _check(span_v, noise_rms_v)
    return math.inf if noise_rms_v == 0 else span_v / (k_pp * noise_rms_v)


def noise_free_bits(span_v: float, noise_rms_v: float, k_pp: float) -> float:
    """log2(S/(k_pp·σ)), bits."""
    counts = noise_free_counts(span_v, noise_rms_v, k_pp)
    return math.log2(counts) if math.isfinite(counts) else math.inf


def sine_rms(span_v: float) -> float:
    """RMS of a sine that fills the span: S/(2√2), V."""
    return span_v / (2.0 * math.sqrt(2.0))


def dynamic_range_db(span_v: float, noise_rms_v: float) -> float:
    """20·log10((S/(2√2))/σ), dB: a full-scale sine against the noise.

    Examples
    --------
    >>> round(dynamic_range_db(2 * 2**0.5, 1e-5), 1)
    100.0
    """
    _check(span_v, noise_rms_v)
    return math.inf if noise_rms_v == 0 else 20.0 * math.log10(sine_rms(span_v) / noise_rms_v)
