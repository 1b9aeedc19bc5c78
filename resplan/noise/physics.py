"""Noise physics: the densities of the intrinsic sources and how they combine.

Every function is pure and vectorised over numpy arrays; every quantity is SI
(V, A, Ω, F, Hz, K; densities one-sided in V/√Hz or A/√Hz). The formulas and
their sources are listed in ``docs/formulas.md``.

This module imports numpy only, so that the command line starts quickly: the
Gaussian coverage factor uses the standard library's normal distribution
instead of ``scipy.special`` (the tests check one against the other).
"""

from __future__ import annotations

import math
from statistics import NormalDist

import numpy as np
from numpy.typing import ArrayLike

from ..errors import DesignError

__all__ = [
    "BOLTZMANN_J_PER_K",
    "ELEMENTARY_CHARGE_C",
    "thermal_noise_density",
    "shot_noise_density",
    "flicker_white_density",
    "integrate_flicker_white",
    "current_noise_voltage",
    "ktc_noise_rms",
    "root_sum_square",
    "peak_to_peak_factor",
    "coverage_for_factor",
    "CoverageProbability",
    "quantisation_noise_rms",
    "ideal_snr_db",
    "enob_from_sinad",
    "snr_to_noise_rms",
    "noise_rms_to_snr",
    "delta_sigma_sqnr_db",
    "oversampling_gain_db",
]

#: Boltzmann constant, J/K. Exact by definition of the SI (2019 revision; CODATA 2018).
BOLTZMANN_J_PER_K = 1.380649e-23
#: Elementary charge, C. Exact by definition of the SI (2019 revision; CODATA 2018).
ELEMENTARY_CHARGE_C = 1.602176634e-19

# 20·log10(2) and 10·log10(1.5): the exact forms behind the rounded 6.02 and 1.76 dB.
_DB_PER_BIT = 20.0 * math.log10(2.0)
_SINE_FS_DB = 10.0 * math.log10(1.5)


def thermal_noise_density(resistance_ohm: ArrayLike, temperature_k: ArrayLike) -> np.ndarray:
    r"""Open-circuit thermal (Johnson–Nyquist) noise voltage density of a resistor.

    Parameters
    ----------
    resistance_ohm : array_like
        Resistance, Ω (≥ 0).
    temperature_k : array_like
        Absolute temperature, K (> 0).

    Returns
    -------
    numpy.ndarray
        One-sided noise density, V/√Hz.

    Notes
    -----
    .. math:: e = \sqrt{4 k T R}

    J. B. Johnson, "Thermal agitation of electricity in conductors", Phys. Rev. 32, 97 (1928);
    H. Nyquist, "Thermal agitation of electric charge in conductors", Phys. Rev. 32, 110 (1928).

    Examples
    --------
    >>> float(thermal_noise_density(1e3, 300.0))  # doctest: +ELLIPSIS
    4.0703...e-09
    """
    r = np.asarray(resistance_ohm, dtype=float)
    t = np.asarray(temperature_k, dtype=float)
    return np.sqrt(4.0 * BOLTZMANN_J_PER_K * t * r)


def shot_noise_density(current_a: ArrayLike) -> np.ndarray:
    r"""Shot noise current density of a DC current.

    Parameters
    ----------
    current_a : array_like
        DC current, A (its sign does not matter).

    Returns
    -------
    numpy.ndarray
        One-sided noise density, A/√Hz.

    Notes
    -----
    .. math:: i = \sqrt{2 q |I|}

    W. Schottky, "Über spontane Stromschwankungen in verschiedenen
    Elektrizitätsleitern", Ann. Phys. 57, 541 (1918).

    Examples
    --------
    >>> float(shot_noise_density(1e-3))  # doctest: +ELLIPSIS
    1.7900...e-11
    """
    return np.sqrt(2.0 * ELEMENTARY_CHARGE_C * np.abs(np.asarray(current_a, dtype=float)))


def flicker_white_density(
    frequency_hz: ArrayLike, white_density: ArrayLike, corner_hz: ArrayLike = 0.0
) -> np.ndarray:
    r"""Density of a 1/f + white noise source at the given frequencies.

    Parameters
    ----------
    frequency_hz : array_like
        Frequencies, Hz (> 0).
    white_density : array_like
        Density well above the corner, in any density unit (V/√Hz or A/√Hz).
    corner_hz : array_like, optional
        1/f corner frequency, Hz (≥ 0): where the 1/f power equals the white power.

    Returns
    -------
    numpy.ndarray
        Density at each frequency, in the unit of ``white_density``.

    Notes
    -----
    .. math:: e(f)^2 = e_w^2 \left(1 + \frac{f_c}{f}\right)

    The standard 1/f + white model: C. D. Motchenbacher and J. A. Connelly,
    *Low-Noise Electronic System Design*, Wiley (1993), ch. 1.

    Examples
    --------
    >>> float(flicker_white_density(10.0, 1e-9, 10.0) / 1e-9)  # doctest: +ELLIPSIS
    1.4142...
    """
    f = np.asarray(frequency_hz, dtype=float)
    return np.asarray(white_density, dtype=float) * np.sqrt(1.0 + np.asarray(corner_hz) / f)


def integrate_flicker_white(
    white_density: ArrayLike, corner_hz: ArrayLike, f_low_hz: float, f_high_hz: float
) -> np.ndarray:
    r"""RMS of a 1/f + white source over a brick-wall band [f_L, f_H].

    Parameters
    ----------
    white_density : array_like
        White density, V/√Hz (or A/√Hz).
    corner_hz : array_like
        1/f corner, Hz (≥ 0).
    f_low_hz, f_high_hz : float
        Band edges, Hz, with 0 < f_L < f_H. f_L is about 1/(observation time).

    Returns
    -------
    numpy.ndarray
        RMS value in the band, V (or A).

    Notes
    -----
    .. math:: v_{rms}^2 = e_w^2 \left( f_c \ln\frac{f_H}{f_L} + f_H - f_L \right)

    The closed-form integral of the model in :func:`flicker_white_density`
    (Motchenbacher & Connelly, ch. 1). 1/f noise grows with the logarithm of the
    band ratio, so it does not average down with a longer record as white noise does.

    Examples
    --------
    >>> float(integrate_flicker_white(10e-9, 0.0, 1.0, 101.0) / 1e-9)
    100.0
    """
    if not (math.isfinite(f_low_hz) and f_low_hz > 0):
        raise DesignError("band.f_low", f_low_hz, "a lower band edge > 0 Hz")
    if not (math.isfinite(f_high_hz) and f_high_hz > f_low_hz):
        raise DesignError("band.f_high", f_high_hz, f"an upper band edge > f_low = {f_low_hz} Hz")
    w = np.asarray(white_density, dtype=float)
    fc = np.asarray(corner_hz, dtype=float)
    return w * np.sqrt(fc * math.log(f_high_hz / f_low_hz) + (f_high_hz - f_low_hz))


def current_noise_voltage(current_density: ArrayLike, resistance_ohm: ArrayLike) -> np.ndarray:
    """Voltage density a noise current develops in the resistance it flows through.

    Parameters
    ----------
    current_density : array_like
        Current noise density, A/√Hz.
    resistance_ohm : array_like
        Resistance the current sees, Ω.

    Returns
    -------
    numpy.ndarray
        Voltage noise density i·R, V/√Hz.

    Notes
    -----
    Ohm's law applied to the noise current (Motchenbacher & Connelly, ch. 1):
    each amplifier input's current noise flows in the resistance at that input.

    Examples
    --------
    >>> float(current_noise_voltage(1e-12, 10e3))
    1e-08
    """
    return np.asarray(current_density, dtype=float) * np.asarray(resistance_ohm, dtype=float)


def ktc_noise_rms(capacitance_f: ArrayLike, temperature_k: ArrayLike) -> np.ndarray:
    r"""Total rms thermal noise on a capacitor charged through any resistance.

    Parameters
    ----------
    capacitance_f : array_like
        Capacitance, F (> 0).
    temperature_k : array_like
        Temperature, K.

    Returns
    -------
    numpy.ndarray
        RMS voltage, V.

    Notes
    -----
    .. math:: v_{rms} = \sqrt{kT/C}

    Integrating 4kTR over the RC low-pass noise bandwidth π/2 · 1/(2πRC) = 1/(4RC);
    R cancels (standard result, e.g. Motchenbacher & Connelly, ch. 1).

    Examples
    --------
    >>> round(float(ktc_noise_rms(1e-12, 300.0)) * 1e6, 1)  # µV rms
    64.4
    """
    c = np.asarray(capacitance_f, dtype=float)
    return np.sqrt(BOLTZMANN_J_PER_K * np.asarray(temperature_k, dtype=float) / c)


def root_sum_square(values: ArrayLike, axis: int | None = None) -> np.ndarray:
    """Combine uncorrelated rms values (or densities) in power.

    Parameters
    ----------
    values : array_like
        RMS values or densities, all in the same unit.
    axis : int, optional
        Axis to combine along; all values when omitted.

    Returns
    -------
    numpy.ndarray
        √(Σ vᵢ²), in the unit of ``values``.

    Notes
    -----
    Variances of independent random variables add (any probability text). Two
    equal sources give √2 times one; a source one fifth of another adds about
    2 % (common practice, no source).

    Examples
    --------
    >>> float(root_sum_square([3.0, 4.0]))
    5.0
    """
    v = np.asarray(values, dtype=float)
    return np.sqrt(np.sum(v * v, axis=axis))


def _check_coverage(coverage: float) -> float:
    if not (isinstance(coverage, int | float) and math.isfinite(coverage) and 0 < coverage < 1):
        raise DesignError("requirement.coverage", coverage, "a probability between 0 and 1")
    return float(coverage)


class CoverageProbability(float):
    """A coverage probability that remembers the peak-to-peak factor it came from.

    :func:`coverage_for_factor` returns one, so a factor stated as k_pp (6.6, say)
    comes back from :func:`peak_to_peak_factor` exactly as stated instead of
    after a round trip through erf and its inverse. It is a float everywhere else.

    Examples
    --------
    >>> p = CoverageProbability(0.999, 6.6)
    >>> p.k_pp, round(p, 4)
    (6.6, 0.999)
    """

    k_pp: float

    def __new__(cls, probability: float, k_pp: float) -> CoverageProbability:
        self = super().__new__(cls, probability)
        self.k_pp = float(k_pp)
        return self

    def __reduce__(self):
        return (CoverageProbability, (float(self), self.k_pp))


def peak_to_peak_factor(coverage: float) -> float:
    r"""Peak-to-peak factor k_pp of Gaussian noise for a coverage probability.

    Parameters
    ----------
    coverage : float
        Probability that a sample lies inside ±k_pp/2 · σ, 0 < P < 1 (0.999 for 99.9 %).

    Returns
    -------
    float
        k_pp, so that peak-to-peak noise = k_pp · σ.

    Notes
    -----
    .. math:: k_{pp} = 2\sqrt{2}\,\mathrm{erf}^{-1}(P) = 2\,\Phi^{-1}\!\left(\frac{1+P}{2}\right)

    Gaussian coverage (e.g. JCGM 100:2008, the GUM, annex G). Peak-to-peak of
    Gaussian noise is unbounded, so k_pp is a choice that every output names:
    P = 99.73 % gives 6.0, P = 99.9 % gives 6.58.

    Examples
    --------
    >>> round(peak_to_peak_factor(0.999), 3)
    6.581
    """
    if isinstance(coverage, CoverageProbability):
        _check_coverage(float(coverage))
        return coverage.k_pp
    p = _check_coverage(coverage)
    return 2.0 * NormalDist().inv_cdf(0.5 * (1.0 + p))


def coverage_for_factor(factor: float) -> float:
    r"""Coverage probability of a peak-to-peak factor k_pp for Gaussian noise.

    Parameters
    ----------
    factor : float
        k_pp > 0 (peak-to-peak = k_pp · σ).

    Returns
    -------
    CoverageProbability
        P = erf(k_pp / (2√2)), a float that keeps ``k_pp`` so that
        :func:`peak_to_peak_factor` gives back exactly the factor stated.

    Examples
    --------
    >>> round(coverage_for_factor(6.0), 5)
    0.9973
    >>> peak_to_peak_factor(coverage_for_factor(6.6))
    6.6
    """
    if not (math.isfinite(factor) and factor > 0):
        raise DesignError("coverage_factor", factor, "a peak-to-peak factor > 0")
    p = math.erf(factor / (2.0 * math.sqrt(2.0)))
    if not p < 1.0:
        raise DesignError("coverage_factor", factor, "a peak-to-peak factor whose coverage is < 1")
    return CoverageProbability(p, factor)


def quantisation_noise_rms(full_scale_range_v: ArrayLike, bits: ArrayLike) -> np.ndarray:
    r"""RMS quantisation noise of an ideal N-bit converter.

    Parameters
    ----------
    full_scale_range_v : array_like
        Peak-to-peak full-scale range, V (2·V_ref for a ±V_ref input).
    bits : array_like
        Resolution N, bits.

    Returns
    -------
    numpy.ndarray
        σ_q = q/√12 with q = FSR/2^N, V rms.

    Notes
    -----
    W. R. Bennett, "Spectra of quantized signals", Bell Syst. Tech. J. 27, 446 (1948).

    Examples
    --------
    >>> float(quantisation_noise_rms(12.0, 0) ** 2)  # doctest: +ELLIPSIS
    12.0...
    """
    q = np.asarray(full_scale_range_v, dtype=float) / np.power(2.0, np.asarray(bits, dtype=float))
    return q / math.sqrt(12.0)


def ideal_snr_db(bits: ArrayLike) -> np.ndarray:
    """Ideal SNR of an N-bit converter for a full-scale sine, dB.

    Notes
    -----
    SNR = 6.02 N + 1.76 dB (IEEE Std 1241-2010), computed with the exact
    constants 20·log10(2) and 10·log10(1.5).

    Examples
    --------
    >>> round(float(ideal_snr_db(16)), 2)
    98.09
    """
    return _DB_PER_BIT * np.asarray(bits, dtype=float) + _SINE_FS_DB


def enob_from_sinad(sinad_db: ArrayLike) -> np.ndarray:
    """Effective number of bits from SINAD (or SNR) for a full-scale sine.

    Notes
    -----
    ENOB = (SINAD − 1.76)/6.02 (IEEE Std 1241-2010), exact constants as in
    :func:`ideal_snr_db`, of which it is the inverse.

    Examples
    --------
    >>> round(float(enob_from_sinad(98.09)), 2)
    16.0
    """
    return (np.asarray(sinad_db, dtype=float) - _SINE_FS_DB) / _DB_PER_BIT


def snr_to_noise_rms(snr_db: ArrayLike, full_scale_range_v: ArrayLike) -> np.ndarray:
    r"""RMS noise implied by a data-sheet SNR for a full-scale sine.

    Parameters
    ----------
    snr_db : array_like
        Signal-to-noise ratio, dB.
    full_scale_range_v : array_like
        Peak-to-peak full-scale range, V.

    Returns
    -------
    numpy.ndarray
        σ = FSR/(2√2) · 10^(−SNR/20), V rms.

    Notes
    -----
    A full-scale sine has rms FSR/(2√2) (IEEE Std 1241-2010 definitions of SNR).

    Examples
    --------
    >>> round(float(snr_to_noise_rms(ideal_snr_db(12), 4.096) / (4.096 / 2**12 / 12**0.5)), 9)
    1.0
    """
    fs_rms = np.asarray(full_scale_range_v, dtype=float) / (2.0 * math.sqrt(2.0))
    return fs_rms * np.power(10.0, -np.asarray(snr_db, dtype=float) / 20.0)


def noise_rms_to_snr(noise_rms_v: ArrayLike, full_scale_range_v: ArrayLike) -> np.ndarray:
    """SNR, dB, of a full-scale sine against an rms noise; inverse of :func:`snr_to_noise_rms`."""
    fs_rms = np.asarray(full_scale_range_v, dtype=float) / (2.0 * math.sqrt(2.0))
    return 20.0 * np.log10(fs_rms / np.asarray(noise_rms_v, dtype=float))


def delta_sigma_sqnr_db(bits: ArrayLike, order: ArrayLike, osr: ArrayLike) -> np.ndarray:
    r"""Ideal peak SQNR of an L-th order delta-sigma modulator with an N-bit quantiser.

    Notes
    -----
    .. math::
        6.02N + 1.76 - 10\log_{10}\frac{\pi^{2L}}{2L+1} + (2L+1)\,10\log_{10}\mathrm{OSR}

    R. Schreier and G. C. Temes, *Understanding Delta-Sigma Data Converters*,
    IEEE Press/Wiley (2005), ch. 1 and 4.

    Examples
    --------
    >>> round(float(delta_sigma_sqnr_db(1, 1, 1)), 2)  # 1-bit, 1st order, no oversampling
    2.6
    """
    n = np.asarray(bits, dtype=float)
    order_l = np.asarray(order, dtype=float)
    return (
        ideal_snr_db(n)
        - 10.0 * np.log10(np.pi ** (2 * order_l) / (2 * order_l + 1))
        + (2 * order_l + 1) * 10.0 * np.log10(np.asarray(osr, dtype=float))
    )


def oversampling_gain_db(osr: ArrayLike) -> np.ndarray:
    """Processing gain of oversampling white noise by OSR = fs/(2 f_B): 10·log10(OSR) dB.

    Notes
    -----
    Half a bit (3.01 dB) per doubling of the sample rate for white noise (Schreier &
    Temes, ch. 1). It does not apply to 1/f noise or to noise correlated between samples.

    Examples
    --------
    >>> round(float(oversampling_gain_db(4)), 2)
    6.02
    """
    return 10.0 * np.log10(np.asarray(osr, dtype=float))
