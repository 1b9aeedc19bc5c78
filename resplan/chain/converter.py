"""The ADC: its range, rates and its own noise in the forms data sheets quote.

Data sheets give ADC noise in several forms; each form here says whether it
already includes quantisation, and each refuses to be used at conditions other
than those it was quoted at unless the design says how to carry it over.

- :class:`NoiseAtRate` — µV rms at a stated data rate (and gain): delta-sigma tables.
- :class:`NoiseTable` — rms against data rate; the chain's data rate picks the row.
- :class:`SnrNoise` — SNR in dB for a full-scale sine at a stated sample rate.
- :class:`TransitionNoise` — code-transition noise in LSB rms (SAR).
- :class:`InputNoiseDensity` — a density referred to the input, integrated over the
  digital filter's noise bandwidth.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import ChainError, DesignError
from ..noise.physics import quantisation_noise_rms, snr_to_noise_rms
from ..units.formatting import format_db, format_si
from .stages import NoiseDensity, check_nonnegative, check_positive

__all__ = [
    "ARCHITECTURES",
    "NoiseAtRate",
    "NoiseTable",
    "SnrNoise",
    "TransitionNoise",
    "InputNoiseDensity",
    "AdcNoise",
    "ADC",
    "jitter_noise_rms",
]

ARCHITECTURES = ("sar", "delta-sigma")


def _same(a: float, b: float) -> bool:
    return math.isclose(a, b, rel_tol=1e-6)


@dataclass(frozen=True)
class NoiseAtRate:
    """ADC noise in V rms at its input, quoted at one data rate (and gain).

    Parameters
    ----------
    rms_v : float
        Input-referred noise, V rms, at ``data_rate_hz``.
    data_rate_hz : float
        The output data rate the figure was quoted at, Hz.
    gain : float, optional
        The ADC's internal gain the figure was quoted at, V/V.
    scale_with_rate : bool
        Allow use at another data rate, scaling as √(ODR/ODR_quoted), which holds
        for white noise only. Without it a mismatch is an error.
    includes_quantisation : bool
        Whether the figure already holds quantisation noise (the usual case for a
        measured noise table). When false the budget adds q/√12 itself (Bennett 1948).
    """

    rms_v: float
    data_rate_hz: float
    gain: float | None = None
    scale_with_rate: bool = False
    includes_quantisation: bool = True

    def __post_init__(self) -> None:
        check_nonnegative("noise", self.rms_v, "a noise ≥ 0 V rms")
        check_positive("noise_data_rate", self.data_rate_hz, "a data rate > 0 Hz")
        if self.gain is not None:
            check_positive("noise_gain", self.gain, "a gain > 0 V/V")

    def rms_at(self, data_rate_hz: float, gain: float) -> tuple[float, str]:
        """Noise at the chain's conditions, V rms, and a note of any carry-over."""
        _check_gain(self.gain, gain)
        if _same(self.data_rate_hz, data_rate_hz):
            return self.rms_v, f"quoted at {format_si(self.data_rate_hz, 'Hz')} data rate"
        if not self.scale_with_rate:
            raise ChainError(
                "adc.noise_data_rate",
                self.data_rate_hz,
                f"the chain's data rate {format_si(data_rate_hz, 'Hz')}, or scale_with_rate = true "
                "to carry the figure over as white noise",
            )
        factor = math.sqrt(data_rate_hz / self.data_rate_hz)
        return self.rms_v * factor, (
            f"scaled from {format_si(self.data_rate_hz, 'Hz')} to {format_si(data_rate_hz, 'Hz')} "
            "as white noise"
        )


def _check_gain(quoted: float | None, used: float) -> None:
    if quoted is not None and not _same(quoted, used):
        raise ChainError(
            "adc.noise_gain", quoted, f"the ADC gain the chain uses ({format_si(used, 'V/V')})"
        )


@dataclass(frozen=True)
class NoiseTable:
    """ADC noise in V rms against data rate, at one gain; the chain's rate picks a row."""

    rows: tuple[tuple[float, float], ...]
    gain: float | None = None
    #: Whether the rows already hold quantisation; when false the budget adds q/√12.
    includes_quantisation: bool = True

    def __post_init__(self) -> None:
        if not self.rows:
            raise DesignError("noise_table", "[]", "at least one [data rate, noise] row")
        for i, (rate, rms) in enumerate(self.rows):
            check_positive(f"noise_table[{i}].data_rate", rate, "a data rate > 0 Hz")
            check_nonnegative(f"noise_table[{i}].noise", rms, "a noise ≥ 0 V rms")

    def rms_at(self, data_rate_hz: float, gain: float) -> tuple[float, str]:
        _check_gain(self.gain, gain)
        for rate, rms in self.rows:
            if _same(rate, data_rate_hz):
                return rms, f"table row at {format_si(rate, 'Hz')} data rate"
        rates = ", ".join(format_si(r, "Hz") for r, _ in self.rows)
        raise ChainError(
            "adc.noise_table", data_rate_hz, f"a data rate listed in the table ({rates})"
        )


@dataclass(frozen=True)
class SnrNoise:
    """ADC noise from a data-sheet SNR for a full-scale sine at a stated rate.

    The rate is the conversion rate of a SAR or the output data rate of a
    delta-sigma converter, as data sheets quote them.

    σ = FSR/(2√2)·10^(−SNR/20) (IEEE Std 1241-2010); the figure includes quantisation.
    """

    snr_db: float
    sample_rate_hz: float | None = None
    includes_quantisation = True

    def __post_init__(self) -> None:
        check_positive("snr", self.snr_db, "an SNR > 0 dB")
        if self.sample_rate_hz is not None:
            check_positive("snr_sample_rate", self.sample_rate_hz, "a sample rate > 0 Hz")

    def rms(self, full_scale_range_v: float, sample_rate_hz: float) -> tuple[float, str]:
        if self.sample_rate_hz is not None and not _same(self.sample_rate_hz, sample_rate_hz):
            raise ChainError(
                "adc.snr_sample_rate",
                self.sample_rate_hz,
                f"the chain's sample rate {format_si(sample_rate_hz, 'Hz')}",
            )
        return float(snr_to_noise_rms(self.snr_db, full_scale_range_v)), (
            f"from SNR {format_db(self.snr_db)}"
        )


@dataclass(frozen=True)
class TransitionNoise:
    """Code-transition noise in LSB rms, per sample; quantisation is added separately."""

    lsb_rms: float
    includes_quantisation = False

    def __post_init__(self) -> None:
        check_nonnegative("transition_noise", self.lsb_rms, "a noise ≥ 0 LSB rms")


@dataclass(frozen=True)
class InputNoiseDensity:
    """Input-referred density of the converter, flat over its first Nyquist zone."""

    density: NoiseDensity
    includes_quantisation = False


AdcNoise = NoiseAtRate | NoiseTable | SnrNoise | TransitionNoise | InputNoiseDensity


@dataclass(frozen=True)
class ADC:
    """An analog-to-digital converter.

    Parameters
    ----------
    name : str
        Label used in the budget.
    architecture : {"sar", "delta-sigma"}
        SAR: every sample is a conversion. Delta-sigma: a modulator at
        ``sample_rate_hz`` followed by a decimation filter to ``data_rate_hz``.
    bits : int
        Output word length, bits (1–32).
    full_scale_range_v : float
        Peak-to-peak input range at the ADC's gain setting, V (2·V_ref for ±V_ref).
    sample_rate_hz : float
        Conversion rate (SAR) or modulator rate (delta-sigma), Hz.
    noise : AdcNoise
        The converter's own noise in one of the data-sheet forms.
    data_rate_hz : float, optional
        Output data rate, Hz. Equal to the sample rate for a SAR.
    gain : float
        Internal gain setting, V/V; noise quoted at another gain is refused.
    input_polarity : {"unipolar", "bipolar"} or None
        Whether the input window is 0…FSR or ±FSR/2; when given, the budget checks
        that the sensor's whole output range (offset included) fits the window.
    aperture_jitter_s : float
        RMS aperture (sampling clock) jitter, s (0: not counted).
    channels : int
        Inputs multiplexed into the converter (1: none); each switch needs the
        digital path to settle, which sets the per-channel rate.
    """

    name: str
    architecture: str
    bits: int
    full_scale_range_v: float
    sample_rate_hz: float
    noise: AdcNoise
    data_rate_hz: float | None = None
    gain: float = 1.0
    input_polarity: str | None = None
    aperture_jitter_s: float = 0.0
    channels: int = 1

    def __post_init__(self) -> None:
        if self.input_polarity not in (None, "unipolar", "bipolar"):
            raise DesignError("input_polarity", self.input_polarity, "unipolar or bipolar")
        if self.architecture not in ARCHITECTURES:
            raise DesignError("architecture", self.architecture, "one of sar, delta-sigma")
        if (
            isinstance(self.bits, bool)
            or not isinstance(self.bits, int)
            or not 1 <= self.bits <= 32
        ):
            raise DesignError("bits", self.bits, "a whole number of bits from 1 to 32")
        check_positive("full_scale_range", self.full_scale_range_v, "a full-scale range > 0 V")
        check_positive("sample_rate", self.sample_rate_hz, "a sample rate > 0 Hz")
        check_positive("gain", self.gain, "a gain > 0 V/V")
        if not (
            isinstance(self.aperture_jitter_s, int | float)
            and not isinstance(self.aperture_jitter_s, bool)
            and math.isfinite(self.aperture_jitter_s)
            and 0 <= self.aperture_jitter_s < 1e-3
        ):
            raise DesignError(
                "aperture_jitter", self.aperture_jitter_s, "an rms jitter from 0 to 1 ms"
            )
        if (
            isinstance(self.channels, bool)
            or not isinstance(self.channels, int)
            or not 1 <= self.channels <= 4096
        ):
            raise DesignError(
                "channels", self.channels, "a whole number of channels from 1 to 4096"
            )
        if self.data_rate_hz is not None:
            check_positive("data_rate", self.data_rate_hz, "a data rate > 0 Hz")
            if self.data_rate_hz > self.sample_rate_hz * (1 + 1e-9):
                raise DesignError(
                    "data_rate",
                    self.data_rate_hz,
                    f"at most the sample rate {format_si(self.sample_rate_hz, 'Hz')}",
                )
        if self.architecture == "delta-sigma" and self.data_rate_hz is None:
            raise DesignError(
                "data_rate", None, "the output data rate of the delta-sigma converter, Hz"
            )
        if self.architecture == "sar" and self.data_rate_hz is not None:
            if not _same(self.data_rate_hz, self.sample_rate_hz):
                raise DesignError(
                    "data_rate",
                    self.data_rate_hz,
                    "the sample rate for a SAR (use averaging for a lower output rate)",
                )

    @property
    def output_rate_hz(self) -> float:
        """The converter's own output rate, Hz, before any post-averaging."""
        return self.data_rate_hz if self.data_rate_hz is not None else self.sample_rate_hz

    @property
    def input_window_v(self) -> tuple[float, float] | None:
        """Lowest and highest input it converts, V, when its polarity is known."""
        if self.input_polarity == "unipolar":
            return 0.0, self.full_scale_range_v
        if self.input_polarity == "bipolar":
            return -self.full_scale_range_v / 2, self.full_scale_range_v / 2
        return None

    @property
    def lsb_v(self) -> float:
        return self.full_scale_range_v / 2**self.bits

    @property
    def quantisation_rms_v(self) -> float:
        """Bennett's q/√12, V rms."""
        return float(quantisation_noise_rms(self.full_scale_range_v, self.bits))


def jitter_noise_rms(frequency_hz, amplitude_rms_v, jitter_rms_s):
    r"""RMS error from aperture jitter on a sine, V (arrays broadcast).

    Notes
    -----
    .. math:: \sigma_v = 2\pi f A_\mathrm{rms} \sigma_j

    equivalently SNR_jitter = −20·log10(2π f σ_j) for a sine of any amplitude.
    The aperture jitter is defined in IEEE Std 1241 (terminology); the formula is
    from W. Kester (ed.), *Data Conversion Handbook* (2005), ch. 2 (from memory).

    Examples
    --------
    1 ps rms on a 1 V rms sine at 100 kHz: 2π · 1e5 · 1 · 1e-12 = 628 nV rms.

    >>> round(float(jitter_noise_rms(1e5, 1.0, 1e-12)) * 1e9, 1)
    628.3
    """
    return (
        2.0
        * np.pi
        * np.asarray(frequency_hz, dtype=float)
        * np.asarray(amplitude_rms_v, dtype=float)
        * np.asarray(jitter_rms_s, dtype=float)
    )
