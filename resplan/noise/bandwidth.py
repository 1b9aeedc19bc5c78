r"""Noise integrals through analog and digital filtering, aliases included.

The faithful computation of the noise a sampled chain reports is

.. math:: \sigma^2 = \int_{f_L}^{\infty} S(f)\,|H_a(f)|^2\,|H_d(f)|^2\,df

with S the density at the point where the noise enters, H_a the analog
response from there to the sampler, and H_d the digital response, periodic in
the sample rate f_s. Because H_d repeats, the integral over [0, ∞) equals an
integral over the first Nyquist zone of the folded analog product

.. math:: P_{fold}(u) = \sum_{m \ge 0} P(m f_s + u) + \sum_{m \ge 1} P(m f_s - u),
          \quad 0 \le u \le f_s/2 ,

which is how wideband noise aliases into the band. resplan evaluates the
folded sum exactly for the images where the analog product still changes
within one period, and uses the period mean of |H_d|² for the far images where
it does not. The digital response is resolved on a grid of at least eight points a
side lobe near the pass band; further out its lobes are replaced by their mean
(the product of a slowly varying envelope and a fast periodic factor whose mean
over a period is computed once).

Closed forms serve as checks (see ``tests/test_bandwidth.py``): a brick-wall band
gives f_H − f_L and ln(f_H/f_L); a Butterworth low-pass gives
f_c·(π/2n)/sin(π/2n); a sinc^k filter gives (f_s/2)·Σh² by Parseval.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from ..errors import ChainError, DesignError
from ..units.formatting import format_si
from .responses import AnalogLowpass, DigitalFilter, IdealLowpass, SincFilter

__all__ = ["DigitalPath", "NoiseBandwidth", "noise_bandwidth", "integrate_psd"]

#: Points per side lobe where the digital response is resolved.
_POINTS_PER_LOBE = 8
#: The digital response is resolved up to this many output-rate periods.
_RESOLVED_PERIODS = 32
#: The analog product is integrated up to this multiple of its highest corner,
#: then an exact power-law tail is added.
_ANALOG_TOP_FACTOR = 1e3
#: An image whose share of the running total is below this ends the exact folding early.
_NEGLIGIBLE_IMAGE = 1e-10


@dataclass(frozen=True)
class DigitalPath:
    """Digital filters in the order they run; each runs at the previous one's output rate.

    Parameters
    ----------
    stages : tuple of SincFilter or IdealLowpass
        The first runs at the ADC's sample (modulator) rate.

    Examples
    --------
    >>> p = DigitalPath((SincFilter(3, 256, 256_000.0), SincFilter(1, 4, 1000.0)))
    >>> p.output_rate_hz
    250.0
    """

    stages: tuple[DigitalFilter, ...]

    def __post_init__(self) -> None:
        if not self.stages:
            raise DesignError("digital_filter", "[]", "at least one digital filter stage")
        for i in range(1, len(self.stages)):
            before, here = self.stages[i - 1], self.stages[i]
            if not math.isclose(here.input_rate_hz, before.output_rate_hz, rel_tol=1e-9):
                raise DesignError(
                    f"digital_filter[{i}].input_rate",
                    here.input_rate_hz,
                    f"the previous stage's output rate, {format_si(before.output_rate_hz, 'Hz')}",
                )

    @property
    def sample_rate_hz(self) -> float:
        return self.stages[0].input_rate_hz

    @property
    def output_rate_hz(self) -> float:
        return self.stages[-1].output_rate_hz

    def power_gain(self, frequency_hz: np.ndarray) -> np.ndarray:
        """|H_d(f)|², the product of every stage's response."""
        g = np.ones_like(np.asarray(frequency_hz, dtype=float))
        for stage in self.stages:
            g = g * stage.power_gain(frequency_hz)
        return g

    # The split D(u) = envelope(u) · fast(u), fast periodic in ``fast_period_hz``.
    @property
    def _decimator(self) -> SincFilter | None:
        first = self.stages[0]
        return first if isinstance(first, SincFilter) and first.length > 1 else None

    @property
    def fast_period_hz(self) -> float:
        dec = self._decimator
        return dec.output_rate_hz if dec else self.sample_rate_hz

    @property
    def finest_lobe_hz(self) -> float:
        widths = [s.lobe_width_hz for s in self.stages]
        return min(widths)

    def envelope(self, u: np.ndarray) -> np.ndarray:
        """Slowly varying factor (R·sin(πu/f_s))^(−2k) of a first sinc stage; 1 otherwise."""
        dec = self._decimator
        if dec is None:
            return np.ones_like(u)
        return (dec.length * np.sin(np.pi * u / dec.input_rate_hz)) ** (-2 * dec.order)

    def fast(self, u: np.ndarray) -> np.ndarray:
        """Fast periodic factor, so that envelope · fast = power_gain."""
        dec = self._decimator
        g = np.ones_like(u)
        rest = self.stages
        if dec is not None:
            g = np.sin(np.pi * u / dec.output_rate_hz) ** (2 * dec.order)
            rest = self.stages[1:]
        for stage in rest:
            g = g * stage.power_gain(u)
        return g

    @property
    def breakpoints_hz(self) -> tuple[float, ...]:
        """Frequencies in the first Nyquist zone where the response jumps."""
        fs = self.sample_rate_hz
        points = []
        for stage in self.stages:
            if isinstance(stage, IdealLowpass):
                period = stage.input_rate_hz
                k = 0
                while k * period <= fs / 2:
                    for edge in (k * period - stage.cutoff_hz, k * period + stage.cutoff_hz):
                        if 0 < edge < fs / 2:
                            points.append(edge)
                    k += 1
        return tuple(sorted(points))


@lru_cache(maxsize=256)
def _fast_mean(path: DigitalPath) -> float:
    """Mean of the fast factor over one of its periods."""
    period = path.fast_period_hz
    lobes = max(1.0, period / path.finest_lobe_hz) if math.isfinite(path.finest_lobe_hz) else 1.0
    n = int(min(2_000_000, 64 * lobes + 64))
    u = (np.arange(n) + 0.5) * (period / n)
    return float(np.mean(path.fast(u)))


@dataclass(frozen=True)
class NoiseBandwidth:
    r"""How a 1/f + white source integrates through a path.

    Attributes
    ----------
    white_hz : float
        ∫ |H_a|²|H_d|² df from f_L, Hz: the white noise bandwidth.
    flicker : float
        ∫ |H_a|²|H_d|² / f df from f_L (dimensionless): for a brick-wall band, ln(f_H/f_L).

    Notes
    -----
    A source with density e_w²(1 + f_c/f) contributes σ² = e_w²(white_hz + f_c·flicker).
    """

    white_hz: float
    flicker: float

    def variance(self, white_density: float, corner_hz: float = 0.0) -> float:
        """σ² of a source of white density (V/√Hz) and 1/f corner (Hz), V²."""
        return white_density**2 * (self.white_hz + corner_hz * self.flicker)

    def rms(self, white_density: float, corner_hz: float = 0.0) -> float:
        """σ of a source of white density (V/√Hz) and 1/f corner (Hz), V rms."""
        return math.sqrt(self.variance(white_density, corner_hz))


def _analog_power_gain(analog: Sequence[AnalogLowpass], f: np.ndarray) -> np.ndarray:
    g = np.ones_like(f)
    for response in analog:
        g = g * response.power_gain(f)
    return g


def _power_law_tail(f_top: float, value_at_top: np.ndarray, order: int) -> np.ndarray:
    """∫_{f_top}^∞ of a function falling as f^(−2·order) that equals value_at_top at f_top."""
    return value_at_top * f_top / (2 * order - 1)


def integrate_psd(
    psd: Callable[[np.ndarray], np.ndarray],
    analog: Sequence[AnalogLowpass] = (),
    digital: DigitalPath | None = None,
    f_low_hz: float = 0.01,
    *,
    f_high_hz: float | None = None,
    grid_points: int = 2000,
    folded_source: bool = False,
) -> np.ndarray:
    r"""Integrate a density through analog and digital filtering, aliases included.

    Parameters
    ----------
    psd : callable
        Power density S(f) (for example V²/Hz) of an array of frequencies in Hz. It
        may return extra leading axes (several densities at once); the last axis is
        frequency.
    analog : sequence of AnalogLowpass
        Analog responses between the source and the sampler.
    digital : DigitalPath, optional
        Digital filtering after the sampler. Without it, every frequency the analog
        path passes reaches the output.
    f_low_hz : float
        Lower integration limit, Hz (> 0): about 1/(observation time).
    f_high_hz : float, optional
        Brick-wall upper limit, Hz, for an analog-only integral (no digital path).
    grid_points : int
        Points of the logarithmic grid (the resolved digital response may add more).
    folded_source : bool
        The density is already the in-band equivalent of a sampled source (an ADC's
        input-referred noise density): integrate it over the first Nyquist zone only.

    Returns
    -------
    numpy.ndarray
        ∫ S |H_a|² |H_d|² df with the leading axes of ``psd``'s result.

    Raises
    ------
    ChainError
        If nothing limits the bandwidth (no analog response, no digital filter, no f_high).
    """
    if not (math.isfinite(f_low_hz) and f_low_hz > 0):
        raise DesignError("band.f_low", f_low_hz, "a lower band edge > 0 Hz")
    if f_high_hz is not None and not (math.isfinite(f_high_hz) and f_high_hz > f_low_hz):
        raise DesignError(
            "band.f_high", f_high_hz, f"an upper band edge > f_low = {format_si(f_low_hz, 'Hz')}"
        )
    if digital is None:
        return _integrate_analog(psd, analog, f_low_hz, f_high_hz, grid_points)
    if f_high_hz is not None:
        raise ValueError(
            "f_high_hz applies to an analog-only integral; with a digital path put an "
            "IdealLowpass stage in it"
        )
    return _integrate_folded(psd, analog, digital, f_low_hz, grid_points, folded_source)


def _integrate_analog(psd, analog, f_low, f_high, grid_points):
    if f_high is None and not analog:
        raise ChainError(
            "band",
            "unbounded",
            "a filter, an amplifier bandwidth, a digital filter or a band limit",
        )
    order = sum(r.rolloff_order for r in analog)
    top = f_high if f_high is not None else _ANALOG_TOP_FACTOR * max(r.cutoff_hz for r in analog)
    if top <= f_low:
        raise DesignError("band.f_low", f_low, f"a lower band edge below {format_si(top, 'Hz')}")
    edges = np.geomspace(f_low, top, grid_points + 1)
    mid = 0.5 * (edges[1:] + edges[:-1])
    width = np.diff(edges)
    values = psd(mid) * _analog_power_gain(analog, mid)
    total = np.sum(values * width, axis=-1)
    if f_high is None:
        at_top = psd(np.array([top]))[..., 0] * _analog_power_gain(analog, np.array([top]))[..., 0]
        total = total + _power_law_tail(top, at_top, order)
    return total


def _base_grid(digital: DigitalPath, f_low: float, grid_points: int) -> tuple:
    """Cell midpoints, widths and the digital gain on [f_low, f_s/2]."""
    fs = digital.sample_rate_hz
    half = fs / 2
    if f_low >= half:
        raise DesignError(
            "band.f_low", f_low, f"a lower band edge below f_s/2 = {format_si(half, 'Hz')}"
        )
    has_envelope = digital._decimator is not None
    resolved_top = min(half, _RESOLVED_PERIODS * digital.fast_period_hz) if has_envelope else half
    nodes = [np.geomspace(f_low, resolved_top, grid_points + 1)]
    lobe = digital.finest_lobe_hz
    if math.isfinite(lobe):
        step = lobe / _POINTS_PER_LOBE
        count = min(int(resolved_top / step), 200_000)
        nodes.append(np.linspace(0.0, resolved_top, count + 1)[1:])
    if resolved_top < half:
        nodes.append(np.geomspace(resolved_top, half, 257))
    nodes.append(np.array(digital.breakpoints_hz))
    edges = np.unique(np.concatenate(nodes))
    edges = edges[(edges >= f_low) & (edges <= half)]
    mid = 0.5 * (edges[1:] + edges[:-1])
    width = np.diff(edges)
    gain = np.empty_like(mid)
    inside = mid <= resolved_top
    gain[inside] = digital.power_gain(mid[inside])
    outside = ~inside
    if np.any(outside):
        gain[outside] = digital.envelope(mid[outside]) * _fast_mean(digital)
    return mid, width, gain


@lru_cache(maxsize=256)
def _cached_base_grid(digital: DigitalPath, f_low: float, grid_points: int):
    return _base_grid(digital, f_low, grid_points)


#: Chebyshev nodes per panel where the analog product of an image is interpolated.
_PANEL_NODES = 8
#: Panels are this wide in ln f: the lattice of the circuit's transfer table
#: (:data:`resplan.chain.netlists.POINTS_PER_DECADE` points a decade; a test holds the two
#: equal), inside each of whose steps a table response is one smooth piece.
_PANEL_STEP = math.log(10.0) / 80
#: Set False to evaluate every image point exactly (the reference in the tests).
PANEL_IMAGES = True


def _panel_lattice(analog: Sequence[AnalogLowpass]) -> tuple[float, float] | None:
    """Origin and step (ln Hz) of the panels, or None to evaluate images point by point.

    A response read from a table (``log_f0``, ``step``) is one smooth piece between table
    points, so the panels must follow its lattice; the closed-form responses are smooth
    everywhere.
    """
    if not PANEL_IMAGES:
        return None
    origins = set()
    for response in analog:
        table = getattr(response, "table", response)
        if hasattr(table, "log_f0"):
            if not math.isclose(table.step, _PANEL_STEP, rel_tol=1e-12):
                return None
            origins.add(round(math.remainder(table.log_f0, _PANEL_STEP) / _PANEL_STEP, 9))
    if len(origins) > 1:
        return None
    return (origins.pop() * _PANEL_STEP if origins else 0.0), _PANEL_STEP


@dataclass(frozen=True, eq=False)
class _ImagePanels:
    r"""Product quadrature of one alias image on the base grid.

    The image adds Σ_u S(f_u)·P(f_u)·w_u over f_u = m·f_s ± u, u the base grid's cells.
    Its thousands of points crowd into a few panels of ln f; in each, the analog product
    P is smooth and is replaced by its interpolant on :data:`_PANEL_NODES` Chebyshev
    nodes, P(f) ≈ Σ_k ℓ_k(f)·P(ξ_k), so that the sum becomes Σ_k P(ξ_k)·W_k with
    W_k = Σ_u S(f_u)·w_u·ℓ_k(f_u): the analog product (one row per noise source) is
    evaluated at the nodes only. For P = exp(cubic in ln f) changing by δ across a panel
    the interpolation error is about (δ/4)⁸/8! (Chebyshev interpolation; Trefethen,
    *Approximation Theory and Approximation Practice*, ch. 8, from memory): 1e-14 for a
    fourth-order fall (δ ≈ 0.23), and the tests hold it to the point-by-point sum.
    """

    frequency_hz: np.ndarray  # the image's points, sorted by panel
    weight: np.ndarray  # their base-grid weights
    starts: np.ndarray  # first point of each panel
    basis: np.ndarray  # (points, nodes): ℓ_k at each point
    nodes_hz: np.ndarray  # (panels · nodes,)

    def integrate(self, psd, analog) -> np.ndarray:
        sw = psd(self.frequency_hz) * self.weight
        moments = np.add.reduceat(sw[..., :, None] * self.basis, self.starts, axis=-2)
        moments = moments.reshape(moments.shape[:-2] + (-1,))
        return np.sum(moments * _analog_power_gain(analog, self.nodes_hz), axis=-1)


@lru_cache(maxsize=512)
def _image_panels(
    digital: DigitalPath, f_low: float, grid_points: int, m: int, origin: float, step: float
) -> _ImagePanels:
    mid, width, gain = _cached_base_grid(digital, f_low, grid_points)
    centre = m * digital.sample_rate_hz
    # m·f_s − u lies below m·f_s + u: both sides together run in ascending order.
    f = np.concatenate([centre - mid[::-1], centre + mid])
    weight = gain * width
    weight = np.concatenate([weight[::-1], weight])
    position = (np.log(f) - origin) / step
    panel = np.floor(position)
    starts = np.flatnonzero(np.concatenate([[True], panel[1:] != panel[:-1]]))
    basis = _chebyshev_basis(2.0 * (position - panel) - 1.0)
    lows = panel[starts]
    nodes_hz = np.exp(origin + step * (lows[:, None] + _NODES[None, :])).reshape(-1)
    return _ImagePanels(f, weight, starts, basis, nodes_hz)


#: Chebyshev nodes of the first kind on [0, 1].
_NODES = 0.5 * (1.0 - np.cos((2 * np.arange(_PANEL_NODES) + 1) * np.pi / (2 * _PANEL_NODES)))


def _chebyshev_vander(x: np.ndarray) -> np.ndarray:
    """T_0 … T_{n−1} at x, (points, n), by the three-term recurrence T_{k+1} = 2x·T_k − T_{k−1}
    (numpy.polynomial's chebvander, without importing that package on the check path)."""
    out = np.empty((x.size, _PANEL_NODES))
    out[:, 0] = 1.0
    out[:, 1] = x
    for k in range(2, _PANEL_NODES):
        out[:, k] = 2.0 * x * out[:, k - 1] - out[:, k - 2]
    return out


#: Inverse of the Chebyshev matrix at the nodes (well conditioned: a scaled transpose;
#: Mason & Handscomb, *Chebyshev Polynomials*, §6.3, from memory).
_NODE_INVERSE = np.linalg.inv(_chebyshev_vander(2.0 * _NODES - 1.0))


def _chebyshev_basis(x: np.ndarray) -> np.ndarray:
    """Lagrange basis ℓ_k on the panel nodes at x ∈ [−1, 1], (points, nodes), formed through
    the Chebyshev polynomials."""
    return _chebyshev_vander(x) @ _NODE_INVERSE


def _integrate_folded(psd, analog, digital, f_low, grid_points, folded_source):
    fs = digital.sample_rate_hz
    mid, width, gain = _cached_base_grid(digital, f_low, grid_points)
    weight = gain * width
    if folded_source or not analog:
        if not folded_source:
            # White noise of unlimited bandwidth aliases without end.
            raise ChainError(
                "filter", "none", "an analog response limiting the noise bandwidth before the ADC"
            )
        return np.sum(psd(mid) * weight, axis=-1)

    order = sum(r.rolloff_order for r in analog)
    top = _ANALOG_TOP_FACTOR * max(r.cutoff_hz for r in analog)
    # Images are folded exactly while the analog product changes within one period;
    # beyond, each period contributes its mean.
    exact_images = int(min(math.ceil(top / fs), 4 * order + 8))
    total = np.sum(psd(mid) * _analog_power_gain(analog, mid) * weight, axis=-1)
    lattice = _panel_lattice(analog)
    for m in range(1, exact_images + 1):
        if lattice is None:
            image = 0.0
            for f in (m * fs - mid, m * fs + mid):
                image = image + np.sum(psd(f) * _analog_power_gain(analog, f) * weight, axis=-1)
        else:
            panels = _image_panels(digital, f_low, grid_points, m, *lattice)
            image = panels.integrate(psd, analog)
        total = total + image
        if np.all(image <= _NEGLIGIBLE_IMAGE * np.abs(total)):
            # A steep analog product: what lies beyond is left to the period-mean part.
            exact_images = m
            break
    start = (exact_images + 0.5) * fs
    # Mean of |H_d|² over a full period, from the same grid (0…f_low taken as gain 1).
    mean_gain = (2.0 / fs) * (float(np.sum(weight)) + f_low)
    if start < top:
        far = _integrate_analog(psd, analog, start, None, max(200, grid_points // 4))
    else:
        # The exact images already reach past the analog top: only the power-law tail is left.
        at_start = (
            psd(np.array([start]))[..., 0] * _analog_power_gain(analog, np.array([start]))[..., 0]
        )
        far = _power_law_tail(start, at_start, order)
    return total + mean_gain * far


@lru_cache(maxsize=1024)
def _cached_noise_bandwidth(analog, digital, f_low, f_high, grid_points, folded_source):
    def kernels(f):
        return np.stack([np.ones_like(f), 1.0 / f])

    white, flicker = integrate_psd(
        kernels,
        analog,
        digital,
        f_low,
        f_high_hz=f_high,
        grid_points=grid_points,
        folded_source=folded_source,
    )
    return NoiseBandwidth(float(white), float(flicker))


def noise_bandwidth(
    analog: Sequence[AnalogLowpass] = (),
    digital: DigitalPath | None = None,
    f_low_hz: float = 0.01,
    *,
    f_high_hz: float | None = None,
    grid_points: int = 2000,
    folded_source: bool = False,
) -> NoiseBandwidth:
    """White and 1/f noise bandwidths of a path (see :func:`integrate_psd`).

    Examples
    --------
    A brick-wall band from 1 Hz to 1 kHz (closed form: 999 Hz and ln 1000):

    >>> nb = noise_bandwidth(f_low_hz=1.0, f_high_hz=1000.0)
    >>> round(nb.white_hz, 2), round(nb.flicker, 4)
    (999.0, 6.9078)

    A single-pole RC at 1 kHz: π/2 · 1 kHz.

    >>> round(noise_bandwidth([AnalogLowpass("rc", 1, 1000.0)], f_low_hz=1e-3).white_hz, 1)
    1570.8
    """
    return _cached_noise_bandwidth(
        tuple(analog), digital, float(f_low_hz), f_high_hz, int(grid_points), bool(folded_source)
    )
