"""Filter responses: analog low-pass prototypes and digital decimation filters.

Every response is a frozen dataclass with a vectorised ``power_gain(f)``
returning |H(f)|² normalised to 1 at DC. Digital responses are periodic in the
rate they run at, so a frequency above half that rate sees the response of its
alias. Noise integrals over these responses live in :mod:`resplan.noise.bandwidth`.

Only numpy is imported: the Bessel prototype is built from the closed-form
reverse Bessel polynomial instead of ``scipy.signal`` (the tests check one
against the other), so that the command line starts quickly.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cache

import numpy as np
from numpy.typing import ArrayLike

from ..errors import DesignError
from ..units.formatting import format_si

__all__ = [
    "ANALOG_KINDS",
    "AnalogLowpass",
    "SectionsLowpass",
    "SincFilter",
    "IdealLowpass",
    "DigitalFilter",
    "butterworth_enbw_ratio",
    "bessel_polynomial",
]

#: Analog low-pass responses resplan models.
ANALOG_KINDS = ("rc", "butterworth", "bessel")
MAX_ORDER = 8


def _positive(field: str, value: float, what: str) -> None:
    if not (isinstance(value, int | float) and math.isfinite(value) and value > 0):
        raise DesignError(field, value, what)


def _not_whole(value) -> bool:
    # bool is an int subclass: True must not pass for an order or a length of 1.
    return isinstance(value, bool) or not isinstance(value, int)


def butterworth_enbw_ratio(order: int) -> float:
    r"""ENBW of an n-th order Butterworth low-pass divided by its −3 dB frequency.

    Notes
    -----
    .. math:: \frac{\mathrm{ENBW}}{f_c} = \frac{\pi/2n}{\sin(\pi/2n)}

    From ∫₀^∞ df / (1 + (f/f_c)^{2n}) (standard integral, e.g. Gradshteyn & Ryzhik
    3.241.2). n = 1 gives π/2 (single-pole RC); 1.111 (n=2), 1.047 (3), 1.026 (4).

    Examples
    --------
    >>> round(butterworth_enbw_ratio(2), 4)
    1.1107
    """
    x = math.pi / (2 * order)
    return x / math.sin(x)


def bessel_polynomial(order: int) -> np.ndarray:
    r"""Coefficients a_k (k = 0…n) of the reverse Bessel polynomial θ_n(s).

    Notes
    -----
    .. math:: a_k = \frac{(2n-k)!}{2^{n-k}\,k!\,(n-k)!}

    The Bessel–Thomson (maximally flat delay) low-pass is H(s) = a_0/θ_n(s)
    (W. E. Thomson, Proc. IEE 96, 487 (1949)).

    Examples
    --------
    >>> bessel_polynomial(3).tolist()
    [15.0, 15.0, 6.0, 1.0]
    """
    n = order
    return np.array(
        [
            math.factorial(2 * n - k) / (2 ** (n - k) * math.factorial(k) * math.factorial(n - k))
            for k in range(n + 1)
        ]
    )


@cache
def _bessel_magnitude_poly(order: int) -> tuple[np.ndarray, float]:
    """|θ(jw)|²/a0² as a polynomial in w² (highest power first) and the −3 dB w."""
    a = bessel_polynomial(order)
    # θ(jw) = Σ a_k j^k w^k: real part from even k, imaginary part from odd k.
    re = np.zeros(order + 1)
    im = np.zeros(order + 1)
    for k, ak in enumerate(a):
        sign = (-1) ** (k // 2)
        (re if k % 2 == 0 else im)[k] = sign * ak
    mag = np.polynomial.polynomial.polyadd(
        np.polynomial.polynomial.polymul(re, re), np.polynomial.polynomial.polymul(im, im)
    )
    mag = mag / a[0] ** 2
    # Only even powers of w remain; rewrite as a polynomial in x = w².
    in_x = mag[::2]
    # −3 dB where |θ|²/a0² = 2: the one positive real root in x.
    shifted = in_x.copy()
    shifted[0] -= 2.0
    roots = np.polynomial.polynomial.polyroots(shifted)
    real = roots[np.abs(roots.imag) < 1e-9 * np.abs(roots)].real
    w3 = math.sqrt(float(real[real > 0].min()))
    return in_x[::-1].copy(), w3


@cache
def _numerical_enbw_ratio(kind: str, order: int) -> float:
    """ENBW/f_c of a prototype by integrating |H|² on a dense logarithmic grid."""
    proto = AnalogLowpass(kind, order, 1.0)
    x = np.geomspace(1e-6, 1e4, 200_001)
    y = proto.power_gain(x)
    body = float(np.sum(0.5 * (y[1:] + y[:-1]) * np.diff(x)))
    # Below 1e-6 the gain is 1; above 1e4 it falls as x^(-2n): integrate the tail exactly.
    tail = float(y[-1]) * x[-1] / (2 * order - 1)
    return 1e-6 + body + tail


@dataclass(frozen=True)
class AnalogLowpass:
    """An analog low-pass response, normalised to unit gain at DC.

    Parameters
    ----------
    kind : {"rc", "butterworth", "bessel"}
        ``"rc"`` is a single real pole (order 1).
    order : int
        Filter order, 1–8.
    cutoff_hz : float
        −3 dB frequency, Hz (for Bessel too: the magnitude-normalised prototype).

    Examples
    --------
    >>> f = AnalogLowpass("butterworth", 4, 1000.0)
    >>> round(float(f.attenuation_db(2000.0)), 2)
    24.1
    >>> round(f.noise_bandwidth_hz(), 1)
    1026.2
    """

    kind: str
    order: int
    cutoff_hz: float

    def __post_init__(self) -> None:
        if self.kind not in ANALOG_KINDS:
            raise DesignError("filter.response", self.kind, f"one of {', '.join(ANALOG_KINDS)}")
        if not isinstance(self.order, int) or isinstance(self.order, bool):
            raise DesignError("filter.order", self.order, "a whole number from 1 to 8")
        if not 1 <= self.order <= MAX_ORDER:
            raise DesignError("filter.order", self.order, "a whole number from 1 to 8")
        if self.kind == "rc" and self.order != 1:
            raise DesignError("filter.order", self.order, "1 for an RC (single-pole) response")
        _positive("filter.cutoff", self.cutoff_hz, "a cut-off frequency > 0 Hz")

    def power_gain(self, frequency_hz: ArrayLike) -> np.ndarray:
        """|H(f)|² at the given frequencies (Hz), 1 at DC."""
        x = np.abs(np.asarray(frequency_hz, dtype=float)) / self.cutoff_hz
        if self.kind in ("rc", "butterworth"):
            return 1.0 / (1.0 + x ** (2 * self.order))
        poly, w3 = _bessel_magnitude_poly(self.order)
        return 1.0 / np.polyval(poly, (w3 * x) ** 2)

    def attenuation_db(self, frequency_hz: ArrayLike) -> np.ndarray:
        """Attenuation −10·log10|H(f)|², dB (positive in the stop band).

        For Butterworth this is 10·log10(1 + (f/f_c)^{2n}).
        """
        return -10.0 * np.log10(self.power_gain(frequency_hz))

    def noise_bandwidth_hz(self) -> float:
        """Equivalent noise bandwidth ∫₀^∞ |H(f)|² df, Hz.

        Closed form for RC and Butterworth (:func:`butterworth_enbw_ratio`); Bessel
        responses are integrated numerically once per order.
        """
        if self.kind in ("rc", "butterworth"):
            return self.cutoff_hz * butterworth_enbw_ratio(self.order)
        return self.cutoff_hz * _numerical_enbw_ratio(self.kind, self.order)

    @property
    def rolloff_order(self) -> int:
        """Asymptotic slope of |H|² is f^(-2·order)."""
        return self.order


@dataclass(frozen=True)
class SectionsLowpass:
    r"""An analog low-pass given by its sections: pole pairs (f₀, Q) and real poles.

    The response of a filter built from component values rather than from a named
    prototype, normalised to unit gain at DC:

    .. math:: |H(f)|^2 = \prod_{\text{pairs}} \frac{1}{(1 - x^2)^2 + (x/Q)^2}
              \prod_{\text{real}} \frac{1}{1 + x^2}, \qquad x = f/f_0 .

    Parameters
    ----------
    sections : tuple of (float, float or None)
        (f₀ in Hz, Q) of each section; Q None for a real pole.

    Examples
    --------
    >>> f = SectionsLowpass(((1000.0, 1 / math.sqrt(2)),))  # a 2nd-order Butterworth
    >>> round(f.cutoff_hz, 3), round(float(f.attenuation_db(2000.0)), 2)
    (1000.0, 12.3)
    """

    sections: tuple[tuple[float, float | None], ...]

    def __post_init__(self) -> None:
        if not self.sections:
            raise DesignError("sections", "none", "at least one section")
        for f0, q in self.sections:
            _positive("sections.f0", f0, "a natural frequency > 0 Hz")
            if q is not None:
                _positive("sections.q", q, "a Q > 0")

    def power_gain(self, frequency_hz: ArrayLike) -> np.ndarray:
        """|H(f)|² at the given frequencies (Hz), 1 at DC."""
        f = np.abs(np.asarray(frequency_hz, dtype=float))
        out = np.ones(f.shape)
        for f0, q in self.sections:
            x2 = (f / f0) ** 2
            out = out / ((1.0 + x2) if q is None else ((1.0 - x2) ** 2 + x2 / (q * q)))
        return out

    def attenuation_db(self, frequency_hz: ArrayLike) -> np.ndarray:
        """Attenuation −10·log10|H(f)|², dB (positive in the stop band)."""
        return -10.0 * np.log10(self.power_gain(frequency_hz))

    @property
    def order(self) -> int:
        return sum(1 if q is None else 2 for _, q in self.sections)

    @property
    def rolloff_order(self) -> int:
        """Asymptotic slope of |H|² is f^(-2·order)."""
        return self.order

    @property
    def cutoff_hz(self) -> float:
        """The highest frequency where |H|² = 1/2 (−3 dB), Hz, found by bisection in ln f."""
        return _half_power_hz(self)

    def noise_bandwidth_hz(self) -> float:
        """Equivalent noise bandwidth ∫₀^∞ |H(f)|² df, Hz (numerically, on a log grid)."""
        top = max(f0 for f0, _ in self.sections)
        f = np.geomspace(top * 1e-6, top * 1e4, 20001)
        g = self.power_gain(f)
        # ∫₀^{f₀} ≈ f·g at the bottom; the tail above falls as f^(-2n), n ≥ 1.
        body = float(np.sum((g[1:] + g[:-1]) * np.diff(f)) / 2.0)
        return f[0] * g[0] + body


@cache
def _half_power_hz(response: SectionsLowpass) -> float:
    lo = min(f0 for f0, _ in response.sections) * 1e-3
    hi = max(f0 for f0, _ in response.sections) * 1e3
    grid = np.geomspace(lo, hi, 4001)
    above = np.flatnonzero(response.power_gain(grid) >= 0.5)
    a, b = math.log(grid[above[-1]]), math.log(grid[min(above[-1] + 1, grid.size - 1)])
    for _ in range(60):
        mid = 0.5 * (a + b)
        if float(response.power_gain(math.exp(mid))) >= 0.5:
            a = mid
        else:
            b = mid
    return math.exp(0.5 * (a + b))


@dataclass(frozen=True)
class SincFilter:
    """A sinc^k (cascaded moving-sum) digital filter of length R, normalised to DC gain 1.

    A plain average of N samples is ``SincFilter(order=1, length=N, ...)``; a
    delta-sigma decimation filter is ``SincFilter(order=3, length=fmod/odr, ...)``.

    Parameters
    ----------
    order : int
        k, 1–5.
    length : int
        Decimation ratio R (samples per moving sum), ≥ 1.
    input_rate_hz : float
        Rate of the samples it filters, Hz (the modulator rate for a delta-sigma ADC).

    Notes
    -----
    .. math:: |H(f)|^2 = \\left[\\frac{\\sin(\\pi f R / f_s)}{R \\sin(\\pi f / f_s)}\\right]^{2k}

    (E. B. Hogenauer, IEEE Trans. ASSP 29, 155 (1981)). Periodic in f_s, nulls at
    multiples of the output rate f_s/R.

    Examples
    --------
    >>> s = SincFilter(3, 64, 64_000.0)
    >>> s.output_rate_hz
    1000.0
    >>> float(s.power_gain(1000.0)) < 1e-20
    True
    """

    order: int
    length: int
    input_rate_hz: float

    def __post_init__(self) -> None:
        if _not_whole(self.order) or not 1 <= self.order <= 5:
            raise DesignError("digital_filter.order", self.order, "a sinc order from 1 to 5")
        if _not_whole(self.length) or self.length < 1:
            raise DesignError("digital_filter.length", self.length, "a whole number of samples ≥ 1")
        _positive("digital_filter.input_rate", self.input_rate_hz, "a sample rate > 0 Hz")

    @property
    def output_rate_hz(self) -> float:
        return self.input_rate_hz / self.length

    @property
    def period_hz(self) -> float:
        """The response repeats every ``period_hz``."""
        return self.input_rate_hz

    @property
    def lobe_width_hz(self) -> float:
        """Width of one side lobe: the output rate."""
        return self.output_rate_hz

    def power_gain(self, frequency_hz: ArrayLike) -> np.ndarray:
        x = np.pi * np.asarray(frequency_hz, dtype=float) / self.input_rate_hz
        s = np.sin(x)
        # At the replicas (x = mπ) the ratio tends to ±1.
        ratio = np.divide(
            np.sin(self.length * x), self.length * s, out=np.ones_like(x), where=np.abs(s) > 1e-12
        )
        return ratio ** (2 * self.order)

    def noise_bandwidth_hz(self) -> float:
        """ENBW over the first Nyquist zone, ∫₀^{fs/2} |H|² df, Hz, exact by Parseval.

        Notes
        -----
        For a filter with impulse response h (Σh = 1) running at f_s,
        ∫₀^{f_s/2} |H|² df = (f_s/2)·Σ h[n]² (Parseval's theorem for the DTFT,
        Oppenheim & Schafer, *Discrete-Time Signal Processing*, 3rd ed., §2.9).
        For large R this tends to ODR × {0.5, 0.275, 0.240} for k = 1, 3, 4.
        """
        return 0.5 * self.input_rate_hz * float(np.sum(self.impulse_response() ** 2))

    def impulse_response(self) -> np.ndarray:
        """Impulse response h[n] with Σh = 1 (k boxcars of length R convolved).

        Long filters are convolved through the FFT (O(n log n) rather than O(n²));
        round-off there is about 1e-16 of the largest tap.
        """
        box = np.full(self.length, 1.0 / self.length)
        if self.order == 1:
            return box
        n = self.order * (self.length - 1) + 1
        if n <= 4096:
            h = box
            for _ in range(self.order - 1):
                h = np.convolve(h, box)
            return h
        size = 1 << (n - 1).bit_length()
        return np.fft.irfft(np.fft.rfft(box, size) ** self.order, size)[:n]


@dataclass(frozen=True)
class IdealLowpass:
    """An ideal (brick-wall) digital band limit at ``cutoff_hz``, periodic in the input rate.

    Models a measurement whose output is restricted to [0, f_c] after sampling,
    for example by a sharp FIR filter or by keeping FFT bins up to f_c. Noise that
    aliases into [0, f_c] still counts.

    Examples
    --------
    >>> b = IdealLowpass(10_000.0, 50_000.0)
    >>> b.power_gain([5e3, 20e3, 45e3]).tolist()
    [1.0, 0.0, 1.0]

    With ``decimate_to_hz`` it also drops the rate to that output rate after the
    band limit: an ideal decimator. A delta-sigma converter whose own filter is
    not modelled is taken this way, its output band-limited to ``cutoff_hz`` ≤
    half its data rate (see :class:`resplan.chain.signal_chain.Chain`).

    >>> IdealLowpass(10.0, 256e3, decimate_to_hz=20.0).output_rate_hz
    20.0
    """

    cutoff_hz: float
    input_rate_hz: float
    #: Length of the FIR filter that realises it, taps (None: not stated); sets its settling.
    taps: int | None = None
    #: Output rate after an ideal decimation, Hz (None: no decimation).
    decimate_to_hz: float | None = None

    def __post_init__(self) -> None:
        _positive("digital_filter.input_rate", self.input_rate_hz, "a sample rate > 0 Hz")
        _positive("band.f_high", self.cutoff_hz, "a band edge > 0 Hz")
        if self.taps is not None and (_not_whole(self.taps) or self.taps < 1):
            raise DesignError("digital.band_limit_taps", self.taps, "a whole number of taps ≥ 1")
        if self.cutoff_hz > self.input_rate_hz / 2:
            raise DesignError(
                "band.f_high",
                self.cutoff_hz,
                f"a band edge ≤ half the sample rate ({format_si(self.input_rate_hz / 2, 'Hz')})",
            )
        if self.decimate_to_hz is not None:
            _positive("digital_filter.output_rate", self.decimate_to_hz, "a data rate > 0 Hz")
            if self.decimate_to_hz > self.input_rate_hz * (1 + 1e-9):
                raise DesignError(
                    "digital_filter.output_rate",
                    self.decimate_to_hz,
                    f"a data rate ≤ the input rate ({format_si(self.input_rate_hz, 'Hz')})",
                )
            if self.cutoff_hz > self.decimate_to_hz / 2 * (1 + 1e-9):
                raise DesignError(
                    "band.f_high",
                    self.cutoff_hz,
                    "a band edge ≤ half the data rate "
                    f"({format_si(self.decimate_to_hz / 2, 'Hz')})",
                )

    @property
    def output_rate_hz(self) -> float:
        return self.input_rate_hz if self.decimate_to_hz is None else self.decimate_to_hz

    @property
    def period_hz(self) -> float:
        return self.input_rate_hz

    @property
    def lobe_width_hz(self) -> float:
        return math.inf

    def power_gain(self, frequency_hz: ArrayLike) -> np.ndarray:
        f = np.abs(np.asarray(frequency_hz, dtype=float)) % self.input_rate_hz
        folded = np.minimum(f, self.input_rate_hz - f)
        return (folded <= self.cutoff_hz).astype(float)


DigitalFilter = SincFilter | IdealLowpass
