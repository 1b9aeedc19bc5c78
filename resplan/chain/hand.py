r"""The hand method as functions: the steps engineers work through on paper.

Each function is standalone, pure and vectorised (numpy broadcasting over every
argument), SI in and out. They are the same formulas the forward budget
applies to a whole chain (:mod:`resplan.chain.budget`), exposed for scripts,
notebooks and quick checks:

- :func:`non_inverting_input_density` — input-referred density of an op-amp
  gain stage (Motchenbacher & Connelly);
- :func:`amplifier_input_density` — an integrated amplifier given as input and
  output noise;
- :func:`refer_through_gains` and :func:`cascade_input_noise` — referring a
  source through a cascade of gains (Friis-style cascade, in voltage);
- :func:`reference_noise_at_input` — V_in·σ_ref/V_ref;
- :func:`oversampling_ratio`, :func:`oversampling_gain_db` and
  :func:`oversampling_bits` — processing gain for white noise;
- :func:`effective_bits_from_rms` and :func:`noise_free_bits_from_rms` — the
  resolution figures, with the coverage as a probability or as k_pp.

Examples
--------
>>> import resplan
>>> round(float(resplan.oversampling_bits(256)), 3)
4.0
>>> float(resplan.reference_noise_at_input(1.0, 2e-6, 2.5))
8e-07
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike

from ..errors import DesignError
from ..noise.physics import (
    BOLTZMANN_J_PER_K,
    coverage_for_factor,
    oversampling_gain_db,
    peak_to_peak_factor,
)

__all__ = [
    "non_inverting_input_density",
    "amplifier_input_density",
    "refer_through_gains",
    "cascade_input_noise",
    "reference_noise_at_input",
    "oversampling_ratio",
    "oversampling_gain_db",
    "oversampling_bits",
    "effective_bits_from_rms",
    "noise_free_bits_from_rms",
    "coverage_factor",
]

#: Temperature the helpers assume when none is given, K (27 °C).
ROOM_TEMPERATURE_K = 300.0


def _array(name: str, value: ArrayLike, *, positive: bool = False) -> np.ndarray:
    a = np.asarray(value, dtype=float)
    bad = ~np.isfinite(a) | ((a <= 0) if positive else (a < 0))
    if np.any(bad):
        shown = a[bad].flat[0]
        raise DesignError(name, float(shown), "a finite value " + ("> 0" if positive else "≥ 0"))
    return a


def non_inverting_input_density(
    en_v_per_rthz: ArrayLike,
    *,
    source_resistance_ohm: ArrayLike = 0.0,
    in_plus_a_per_rthz: ArrayLike = 0.0,
    in_minus_a_per_rthz: ArrayLike | None = None,
    feedback_ohm: ArrayLike = 0.0,
    gain_resistor_ohm: ArrayLike = math.inf,
    temperature_k: ArrayLike = ROOM_TEMPERATURE_K,
    include_source: bool = True,
) -> np.ndarray:
    r"""Input-referred white density of a non-inverting op-amp stage, V/√Hz.

    Parameters
    ----------
    en_v_per_rthz : array_like
        Op-amp voltage noise e_n, V/√Hz.
    source_resistance_ohm : array_like
        Resistance R_s the + input sees, Ω.
    in_plus_a_per_rthz : array_like
        Current noise of the + input i_n+, A/√Hz.
    in_minus_a_per_rthz : array_like, optional
        Current noise of the − input i_n−, A/√Hz; ``in_plus_a_per_rthz`` if omitted.
    feedback_ohm : array_like
        Feedback resistor RF, Ω (0 for a follower).
    gain_resistor_ohm : array_like
        Resistor RG from the − input to ground, Ω (``inf`` for a follower).
    temperature_k : array_like
        Temperature of the resistors, K.
    include_source : bool
        Count the source resistance's own thermal noise 4kTR_s (the first term).

    Returns
    -------
    numpy.ndarray
        e_RTI, V/√Hz, broadcast over the arguments.

    Notes
    -----
    With NG = 1 + RF/RG the noise gain,

    .. math:: e_{RTI}^2 = 4kTR_s + e_n^2 + (i_{n+}R_s)^2
              + (i_{n-}\,R_F\|R_G)^2 + 4kT\,(R_F\|R_G)

    (C. D. Motchenbacher and J. A. Connelly, *Low-Noise Electronic System
    Design*, Wiley 1993, ch. 1 and 4). RF and RG's noise appears at the output
    as that of RF‖RG at the input: each resistor's term, referred through its
    own gain, sums to 4kT·RF‖RG·NG². k is exact (SI 2019).

    Examples
    --------
    >>> e = non_inverting_input_density(0.0, source_resistance_ohm=1e3)  # 1 kΩ alone
    >>> round(float(e) * 1e9, 3)  # nV/√Hz at 300 K
    4.07
    """
    en = _array("en", en_v_per_rthz)
    rs = _array("source_resistance", source_resistance_ohm)
    i_plus = _array("in_plus", in_plus_a_per_rthz)
    i_minus = i_plus if in_minus_a_per_rthz is None else _array("in_minus", in_minus_a_per_rthz)
    rf = _array("feedback", feedback_ohm)
    rg = np.asarray(gain_resistor_ohm, dtype=float)
    if np.any(np.isnan(rg) | (rg <= 0)):
        raise DesignError("gain_resistor", float(rg[(np.isnan(rg) | (rg <= 0))].flat[0]), "> 0 Ω")
    t = _array("temperature", temperature_k, positive=True)
    rp = rf / (1.0 + rf / rg)  # RF‖RG; RF for a follower (RG = inf), 0 for RF = 0
    four_kt = 4.0 * BOLTZMANN_J_PER_K * t
    power = en**2 + (i_plus * rs) ** 2 + (i_minus * rp) ** 2 + four_kt * rp
    if include_source:
        power = power + four_kt * rs
    return np.sqrt(power)


def amplifier_input_density(
    input_v_per_rthz: ArrayLike, output_v_per_rthz: ArrayLike, gain: ArrayLike
) -> np.ndarray:
    r"""Input-referred density of an amplifier quoted as input and output noise, V/√Hz.

    Notes
    -----
    .. math:: e_{RTI}^2 = e_{in}^2 + (e_{out}/G)^2

    the usual data-sheet model of instrumentation amplifiers and PGAs (e.g.
    W. Kester, ed., *Data Conversion Handbook*, Newnes 2005, ch. 5).

    Examples
    --------
    >>> float(amplifier_input_density(3e-9, 400e-9, 100.0))
    5e-09
    """
    e_in = _array("input_noise", input_v_per_rthz)
    e_out = _array("output_noise", output_v_per_rthz)
    g = _array("gain", gain, positive=True)
    return np.sqrt(e_in**2 + (e_out / g) ** 2)


def refer_through_gains(noise: ArrayLike, gains: ArrayLike, *, axis: int = -1) -> np.ndarray:
    """Refer a noise back through the gains in front of it: noise / (G₁·G₂·…).

    Parameters
    ----------
    noise : array_like
        Noise (rms, V, or a density, V/√Hz) where it enters.
    gains : array_like
        The gains between the reference point and the entry point, V/V, along ``axis``.
    axis : int
        The axis of ``gains`` that holds the cascade.

    Examples
    --------
    >>> float(refer_through_gains(1e-3, [10.0, 100.0]))
    1e-06
    """
    g = _array("gains", gains, positive=True)
    return np.asarray(noise, dtype=float) / np.prod(g, axis=axis)


def cascade_input_noise(noise: ArrayLike, gains: ArrayLike) -> np.ndarray:
    r"""Total noise of a cascade referred to its input.

    Parameters
    ----------
    noise : array_like, shape (..., n)
        Noise of each stage at its own input (rms V, or V/√Hz), in signal order.
    gains : array_like, shape (..., n) or (..., n − 1)
        Each stage's gain, V/V; the last stage's gain, if given, does not matter.

    Returns
    -------
    numpy.ndarray, shape (...)
        σ_RTI, in the unit of ``noise``.

    Notes
    -----
    .. math:: \sigma_{RTI}^2 = \sigma_1^2 + \frac{\sigma_2^2}{G_1^2}
              + \frac{\sigma_3^2}{(G_1 G_2)^2} + \dots

    uncorrelated sources adding in power, each divided by the gain in front of
    it (Motchenbacher & Connelly, ch. 1; the voltage form of Friis's cascade,
    H. T. Friis, Proc. IRE 32, 1944).

    Examples
    --------
    >>> float(cascade_input_noise([3.0, 40.0], [10.0]))
    5.0
    """
    s = _array("noise", noise)
    g = _array("gains", gains, positive=True)
    n = s.shape[-1] if s.ndim else 1
    s = np.atleast_1d(s)
    g = np.atleast_1d(g)
    if g.shape[-1] == n:
        g = g[..., :-1]
    if g.shape[-1] != n - 1:
        raise DesignError("gains", g.shape[-1], f"{n - 1} or {n} gains for {n} stages")
    in_front = np.concatenate([np.ones(g.shape[:-1] + (1,)), np.cumprod(g, axis=-1)], axis=-1)
    return np.sqrt(np.sum((s / in_front) ** 2, axis=-1))


def reference_noise_at_input(
    input_v: ArrayLike, reference_noise_rms_v: ArrayLike, reference_v: ArrayLike
) -> np.ndarray:
    r"""The error reference noise gives an input V_in, V rms: V_in·σ_ref/V_ref.

    Notes
    -----
    A converter's code is V_in/V_ref, so a reference error δV_ref moves it by
    V_in·δV_ref/V_ref² — seen at the input, V_in·σ_ref/V_ref. It is largest at
    full scale and zero at zero input; a ratiometric chain cancels it to first
    order (Kester, *Data Conversion Handbook*, ch. 7).

    Examples
    --------
    >>> float(reference_noise_at_input([0.0, 2.5], 5e-6, 2.5)[1])
    5e-06
    """
    v_in = np.asarray(input_v, dtype=float)
    sigma = _array("reference_noise", reference_noise_rms_v)
    v_ref = _array("reference_voltage", reference_v, positive=True)
    return np.abs(v_in) * sigma / v_ref


def oversampling_ratio(sample_rate_hz: ArrayLike, bandwidth_hz: ArrayLike) -> np.ndarray:
    """OSR = f_s / (2·f_B) (Schreier & Temes, *Understanding Delta-Sigma Data Converters*, ch. 1).

    Examples
    --------
    >>> float(oversampling_ratio(1e6, 1e3))
    500.0
    """
    fs = _array("sample_rate", sample_rate_hz, positive=True)
    fb = _array("bandwidth", bandwidth_hz, positive=True)
    return fs / (2.0 * fb)


def oversampling_bits(osr: ArrayLike) -> np.ndarray:
    r"""Bits gained by oversampling white noise: ½·log2(OSR), half a bit per doubling.

    Notes
    -----
    The processing gain is 10·log10(OSR) dB (:func:`oversampling_gain_db`),
    and 20·log10(2) ≈ 6.02 dB is one bit, so the gain in bits is
    10·log10(OSR)/(20·log10 2) = ½·log2(OSR) exactly (Schreier & Temes, ch. 1).
    It holds for white noise only: 1/f noise and noise correlated between
    samples do not average down.

    Examples
    --------
    >>> float(oversampling_bits(4))
    1.0
    """
    return 0.5 * np.log2(_array("osr", osr, positive=True))


def effective_bits_from_rms(span_v: ArrayLike, noise_rms_v: ArrayLike) -> np.ndarray:
    """Effective resolution log2(S/σ), bits (inf for zero noise).

    Kester, *Data Conversion Handbook*, ch. 5 (effective resolution).

    Examples
    --------
    >>> float(effective_bits_from_rms(1.0, 2.0**-20))
    20.0
    """
    span = _array("span", span_v, positive=True)
    sigma = _array("noise", noise_rms_v)
    with np.errstate(divide="ignore"):
        return np.log2(span / sigma)


def coverage_factor(*, coverage: float | None = None, k_pp: float | None = None) -> float:
    """The peak-to-peak factor from exactly one of a coverage probability or k_pp itself.

    A k_pp given is returned as given (no round trip through a probability).

    Examples
    --------
    >>> coverage_factor(k_pp=6.6)
    6.6
    >>> round(coverage_factor(coverage=0.999), 3)
    6.581
    """
    if (coverage is None) == (k_pp is None):
        raise DesignError("coverage", f"{coverage!r}, k_pp {k_pp!r}", "exactly one of the two")
    if k_pp is not None:
        coverage_for_factor(k_pp)  # validates it
        return float(k_pp)
    return peak_to_peak_factor(coverage)


def noise_free_bits_from_rms(
    span_v: ArrayLike,
    noise_rms_v: ArrayLike,
    *,
    coverage: float | None = None,
    k_pp: float | None = None,
) -> np.ndarray:
    r"""Noise-free resolution log2(S/(k_pp·σ)), bits.

    Parameters
    ----------
    span_v : array_like
        Span S, V peak-to-peak.
    noise_rms_v : array_like
        Noise σ at the same point, V rms.
    coverage : float, optional
        Coverage probability P (0.999 for 99.9 %); k_pp = 2√2·erf⁻¹(P).
    k_pp : float, optional
        The peak-to-peak factor itself (6.6, say). Give exactly one of the two.

    Notes
    -----
    Noise-free code resolution (Kester, *Data Conversion Handbook*, ch. 5);
    Gaussian coverage (JCGM 100:2008, annex G).

    Examples
    --------
    >>> float(noise_free_bits_from_rms(6.6, 1e-3, k_pp=6.6)) == math.log2(1000)
    True
    """
    factor = coverage_factor(coverage=coverage, k_pp=k_pp)
    span = _array("span", span_v, positive=True)
    sigma = _array("noise", noise_rms_v)
    with np.errstate(divide="ignore"):
        return np.log2(span / (factor * sigma))
