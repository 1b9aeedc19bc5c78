r"""Curves for figures: noise density and cumulative noise against frequency, and
resolution against averaging.

These curves are drawn in reports; they are not where resplan's numbers come
from. Every total, share and resolution figure comes from the forward budget
(:func:`resplan.chain.budget.forward_budget`), whose integral folds aliases into the
first Nyquist zone. The curves here are built to agree with it and say where
they do not:

- :func:`noise_spectra` — each contribution's density referred to the sensor,
  through the analog responses between its entry point and the ADC
  (``Contribution.responses``) and the chain's digital response, on an
  *unfolded* frequency axis from the lower band edge to half the ADC sample
  rate. Terms the budget takes as quoted rms figures (ADC noise, quantisation,
  reference at full input when no density is known) are drawn as white noise
  at the converter's output rate r, over f_L … r/2, shaped by the digital stages
  after the converter and carrying exactly that rms.
- :func:`cumulative_noise` — the rms of everything below f, rising to the
  budget's total. What the unfolded axis cannot show (noise from above the
  plotted range that sampling folds into the band) is reported as a final step,
  so the curve ends at the budget's total.
- :func:`resolution_sweep` — noise-free bits against output data rate, each
  point a full forward budget of a chain variant: at each data rate a delta-sigma
  converter offers when its noise is known there (a table, white noise, a
  density), else with a different post-averaging count.

The shaped density of a source entering after a DC gain G is

.. math:: e_{RTI}(f) = \frac{e_w}{G}\sqrt{1 + f_c/f}\;|H_a(f)|\,|H_d(f)|

(the 1/f + white model, Motchenbacher & Connelly, *Low-Noise Electronic System
Design*, ch. 1). Each plotted value is the power mean over a logarithmic bin
(∫ e² df over the bin divided by its width), so a digital filter's side lobes,
far narrower than a bin, are drawn as the power they pass and the bins add up
to the integral.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np

from ..chain.budget import Budget, forward_budget
from ..chain.converter import InputNoiseDensity, NoiseAtRate, NoiseTable, SnrNoise
from ..chain.requirement import DEFAULT_COVERAGE, Requirement
from ..chain.signal_chain import Band, Chain
from ..errors import ChainError, DesignError
from ..noise.bandwidth import DigitalPath
from ..noise.physics import peak_to_peak_factor
from ..noise.responses import IdealLowpass, SincFilter
from ..units.formatting import format_number, format_percent, format_si

__all__ = [
    "ContributorSpectrum",
    "Spectra",
    "CumulativeNoise",
    "ResolutionPoint",
    "ResolutionSweep",
    "noise_spectra",
    "cumulative_noise",
    "resolution_sweep",
    "rate_carry",
    "DEFAULT_AVERAGING_COUNTS",
    "SWEEP_DATA_RATE",
    "SWEEP_AVERAGING",
]

#: Points of the logarithmic integration grid under the plotting bins.
_LOG_POINTS = 4000
#: Grid cells per side lobe where the digital response is resolved.
_POINTS_PER_LOBE = 8
#: Side lobes resolved are limited to this many fast periods (as in :mod:`resplan.noise.bandwidth`).
_RESOLVED_PERIODS = 32
#: Most linear grid points spent on resolving side lobes.
_MAX_LINEAR_POINTS = 200_000
#: Without a digital filter the axis runs to this multiple of the highest analog corner.
_ANALOG_SPAN = 100.0
#: A curve within this relative power of the budget total is taken as equal to it.
_POWER_TOLERANCE = 1e-3
#: Averaging counts swept by default: powers of two up to 256 (each is a full budget,
#: and the cost of one grows with the count).
DEFAULT_AVERAGING_COUNTS = tuple(2**i for i in range(9))
#: Output rates are kept at least this many times the lower band edge (common
#: practice, no source: below it the noise band would fall under f_L).
_MIN_RATE_OVER_F_LOW = 20.0
#: Converter data rates are swept up to this fraction of the modulator rate, an
#: oversampling ratio of at least 8 at the output (common practice, no source).
_MAX_RATE_OVER_SAMPLE_RATE = 1 / 16


@dataclass(frozen=True)
class ContributorSpectrum:
    """One contribution's density against frequency, referred to the sensor.

    Attributes
    ----------
    name, stage, kind : str
        As in the budget's :class:`~resplan.chain.budget.Contribution`.
    rms_v : float
        The budget's rms for it, V at the sensor.
    bin_power_v2 : numpy.ndarray
        ∫ e_RTI² df over each bin, V².
    density_v_per_rthz : numpy.ndarray
        Power-mean density in each bin, V/√Hz.
    quoted : bool
        True when the budget has it as an rms figure (drawn as white noise at the
        converter's output rate, shaped by the digital stages after it).
    """

    name: str
    stage: str
    kind: str
    rms_v: float
    bin_power_v2: np.ndarray
    density_v_per_rthz: np.ndarray
    quoted: bool

    @property
    def plotted_rms_v(self) -> float:
        """RMS over the plotted range, V (the budget's figure less folded noise)."""
        return math.sqrt(float(np.sum(self.bin_power_v2)))

    @property
    def label(self) -> str:
        return f"{self.name} ({self.stage})"


@dataclass(frozen=True)
class Spectra:
    """Densities of every contribution on one set of logarithmic bins.

    Attributes
    ----------
    edges_hz : numpy.ndarray
        Bin edges, Hz, from the lower band edge to ``f_top_hz``.
    contributors : tuple of ContributorSpectrum
        In the budget's order (largest first); contributions of zero rms are left out.
    analog_power_gain : numpy.ndarray
        Bin mean of |H_a|² of the whole analog path, sensor to ADC.
    digital_power_gain : numpy.ndarray or None
        Bin mean of |H_d|² of the digital path, if there is one.
    f_top_hz : float
        Top of the plotted range, Hz: half the ADC sample rate when there is a
        digital filter, else the larger of that and 100 × the highest analog corner.
    quoted_top_hz : float
        Quoted rms terms are spread up to here: half the converter's own output rate, Hz.
    """

    edges_hz: np.ndarray
    contributors: tuple[ContributorSpectrum, ...]
    analog_power_gain: np.ndarray
    digital_power_gain: np.ndarray | None
    f_top_hz: float
    quoted_top_hz: float

    @property
    def centres_hz(self) -> np.ndarray:
        """Geometric centre of each bin, Hz."""
        return np.sqrt(self.edges_hz[1:] * self.edges_hz[:-1])

    @property
    def widths_hz(self) -> np.ndarray:
        return np.diff(self.edges_hz)

    @property
    def total_density_v_per_rthz(self) -> np.ndarray:
        """Power sum of all contributions in each bin, V/√Hz."""
        power = sum((c.bin_power_v2 for c in self.contributors), np.zeros(len(self.widths_hz)))
        return np.sqrt(power / self.widths_hz)


@dataclass(frozen=True)
class CumulativeNoise:
    """RMS noise below each frequency, referred to the sensor.

    Attributes
    ----------
    frequencies_hz : numpy.ndarray
        Upper edge of each bin, Hz.
    rms_v : numpy.ndarray
        RMS of everything below that frequency on the unfolded axis, V (scaled by
        ``scale`` when the curve had to be brought down to the budget's total).
    total_rms_v : float
        The budget's total, V rms: where the curve plus ``remainder_rms_v`` ends.
    remainder_rms_v : float
        Noise the unfolded axis does not show, V rms, added in power as a final
        step: aliases folded into the band from above f_top and the tails above it.
    scale : float
        1, unless the unfolded integral exceeded the budget's total (grid error);
        then the curve is multiplied by total/curve and this says by how much.
    caption : str
        One sentence for the figure saying how the curve relates to the budget.
    """

    frequencies_hz: np.ndarray
    rms_v: np.ndarray
    total_rms_v: float
    remainder_rms_v: float
    scale: float
    caption: str

    @property
    def plotted_rms_v(self) -> float:
        return float(self.rms_v[-1]) if len(self.rms_v) else 0.0


@dataclass(frozen=True)
class ResolutionPoint:
    """The forward budget of one chain variant in a :class:`ResolutionSweep`.

    Attributes
    ----------
    averaging_count : int
        Length of the post-average after the converter (1 without one).
    data_rate_hz : float
        The converter's own output data rate, Hz (before any post-average).
    output_rate_hz : float
        Rate of the final results, Hz.
    total_rms_v, noise_free_bits, effective_bits, meets_requirement
        From the variant's budget (noise-free and effective bits over the sensor span).
    passes_band : bool
        False when the output rate is below twice the top of the signal band (the
        sampling theorem): such a variant no longer passes the band. True when the
        band has no top.
    budget : Budget
        The variant's full forward budget.
    """

    averaging_count: int
    data_rate_hz: float
    output_rate_hz: float
    total_rms_v: float
    noise_free_bits: float
    effective_bits: float
    meets_requirement: bool | None
    passes_band: bool
    budget: Budget = field(compare=False, repr=False)


#: What a :class:`ResolutionSweep` varies.
SWEEP_DATA_RATE = "data rate"
SWEEP_AVERAGING = "averaging"


@dataclass(frozen=True)
class ResolutionSweep:
    """Noise-free resolution against output data rate, from full forward budgets.

    Attributes
    ----------
    points : tuple of ResolutionPoint
        In increasing data rate (data-rate sweep) or averaging count (averaging
        sweep); variants that cannot be built or computed are left out and listed
        in ``skipped``.
    swept : {"data rate", "averaging"}
        What was varied: the converter's own data rate (a delta-sigma converter whose
        noise is known at other rates) or the post-averaging count.
    current_count : int
        The design's own averaging count (1 without averaging).
    current_rate_hz : float
        The design's own converter data rate, Hz.
    required_noise_free_bits : float or None
        The noise-free bits over the span at which the budget's verdict changes:
        log2(S/(k_pp·σ_allowed)), σ_allowed after the interference allowance.
    skipped : tuple of (float, str)
        Values left out and why: converter data rates in Hz when ``swept`` is
        "data rate", averaging counts otherwise.
    coverage : float
        Coverage of the noise-free figures.
    k_pp : float
        Peak-to-peak factor at that coverage.
    band_top_hz : float or None
        Top of the signal band, Hz.
    noise_carry : str
        How the converter's noise was taken at each rate of a data-rate sweep:
        "table" (a data-sheet row at each rate), "white" (the quoted figure carried
        as white noise, √(ODR/ODR_quoted)) or "density" (its input density
        integrated over each rate's filter); "" for an averaging sweep.
    decimation_order : int or None
        Order k of the sinc^k decimation filter in a data-rate sweep.
    sample_rate_hz : float
        The converter's sample (modulator) rate, Hz.
    note : str
        Why an averaging sweep was made instead of a data-rate sweep ("" otherwise).
    post_stage_count : int
        Digital stages after the converter's own output (an average, a band limit).
    """

    points: tuple[ResolutionPoint, ...]
    current_count: int
    required_noise_free_bits: float | None
    skipped: tuple[tuple[float, str], ...] = ()
    swept: str = SWEEP_AVERAGING
    current_rate_hz: float = math.nan
    coverage: float = math.nan
    k_pp: float = math.nan
    band_top_hz: float | None = None
    noise_carry: str = ""
    decimation_order: int | None = None
    sample_rate_hz: float = math.nan
    note: str = ""
    post_stage_count: int = 0

    @property
    def averaging_counts(self) -> np.ndarray:
        return np.array([p.averaging_count for p in self.points], dtype=int)

    @property
    def data_rates_hz(self) -> np.ndarray:
        return np.array([p.data_rate_hz for p in self.points])

    @property
    def output_rates_hz(self) -> np.ndarray:
        return np.array([p.output_rate_hz for p in self.points])

    @property
    def noise_free_bits(self) -> np.ndarray:
        return np.array([p.noise_free_bits for p in self.points])

    @property
    def effective_bits(self) -> np.ndarray:
        return np.array([p.effective_bits for p in self.points])

    @property
    def passes_band(self) -> np.ndarray:
        return np.array([p.passes_band for p in self.points], dtype=bool)

    @property
    def current(self) -> ResolutionPoint | None:
        """The design's own point (its budget is the design's budget)."""
        for p in self.points:
            if p.averaging_count == self.current_count and _same_rate(
                p.data_rate_hz, self.current_rate_hz
            ):
                return p
        return None


def _plot_top(chain: Chain) -> float:
    fs = chain.adc.sample_rate_hz
    if chain.digital is not None:
        return chain.digital.sample_rate_hz / 2
    corners = [r.cutoff_hz for r in chain.responses_from(0)]
    if chain.reference is not None:
        corners += [r.cutoff_hz for r in chain.reference.responses]
    return max([fs / 2] + [_ANALOG_SPAN * c for c in corners])


def _fine_grid(
    f_low: float, f_top: float, bin_edges: np.ndarray, digital: DigitalPath | None
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Midpoints, widths and |H_d|² of the integration cells, each inside one bin.

    The digital response is resolved with eight cells a side lobe up to 32 fast
    periods; beyond that its fast factor is replaced by its mean over a period,
    as in :mod:`resplan.noise.bandwidth`.
    """
    nodes = [np.geomspace(f_low, f_top, _LOG_POINTS + 1), bin_edges]
    resolved_top = f_top
    if digital is not None:
        if digital._decimator is not None:
            resolved_top = min(f_top, _RESOLVED_PERIODS * digital.fast_period_hz)
        lobe = digital.finest_lobe_hz
        if math.isfinite(lobe):
            step = lobe / _POINTS_PER_LOBE
            count = int(min(resolved_top / step, _MAX_LINEAR_POINTS))
            nodes.append(np.linspace(0.0, resolved_top, count + 1)[1:])
        nodes.append(np.asarray(digital.breakpoints_hz, dtype=float))
    edges = np.unique(np.concatenate(nodes))
    edges = edges[(edges >= f_low) & (edges <= f_top)]
    mid = 0.5 * (edges[1:] + edges[:-1])
    width = np.diff(edges)
    if digital is None:
        return mid, width, np.ones_like(mid)
    gain = np.empty_like(mid)
    inside = mid <= resolved_top
    gain[inside] = digital.power_gain(mid[inside])
    if np.any(~inside):
        period = digital.fast_period_hz
        n = int(min(2_000_000, 64 * max(1.0, period / digital.finest_lobe_hz) + 64))
        u = (np.arange(n) + 0.5) * (period / n)
        fast_mean = float(np.mean(digital.fast(u)))
        gain[~inside] = digital.envelope(mid[~inside]) * fast_mean
    return mid, width, gain


def _analog_gain(responses, f: np.ndarray) -> np.ndarray:
    g = np.ones_like(f)
    for r in responses:
        g = g * r.power_gain(f)
    return g


def noise_spectra(chain: Chain, budget: Budget, *, bins: int = 300) -> Spectra:
    """Each contribution's density referred to the sensor, for a figure.

    The curves are for figures; totals come from the budget. Each bin holds the
    power ∫ e_RTI² df the contribution puts there on the unfolded axis, from the
    budget's lower band edge f_L to ``Spectra.f_top_hz``.

    Parameters
    ----------
    chain : Chain
        The chain the budget was computed for.
    budget : Budget
        Its forward budget (``forward_budget(chain, band)``).
    bins : int
        Logarithmic bins across the plotted range (≥ 10).

    Returns
    -------
    Spectra

    Notes
    -----
    Density sources use the budget's white density (already divided by the gain
    in front of them) and 1/f corner, the analog responses between their entry
    point and the ADC and the chain's digital response. A non-ratiometric
    reference with a density enters as V_peak/V_ref times its density (the
    budget's full-input treatment). Terms the budget holds only as an rms figure
    are drawn as white noise at the converter's output rate r, over f_L … r/2, times
    |H_post|² of the digital stages after the converter, scaled to exactly that rms
    (Parseval: a white sequence of variance σ² at rate r has one-sided density
    σ²/(r/2) over 0 … r/2; Oppenheim & Schafer, *Discrete-Time Signal Processing*,
    3rd ed., §2.9).
    """
    if isinstance(bins, bool) or not isinstance(bins, int) or bins < 10:
        raise DesignError("bins", bins, "a whole number of bins ≥ 10")
    f_low = budget.f_low_hz
    f_top = _plot_top(chain)
    if not f_top > f_low:
        raise ChainError("band.f_low", f_low, f"a lower band edge below {format_si(f_top, 'Hz')}")
    bin_edges = np.geomspace(f_low, f_top, bins + 1)
    widths = np.diff(bin_edges)
    mid, width, digital_gain = _fine_grid(f_low, f_top, bin_edges, chain.digital)
    which = np.clip(np.searchsorted(bin_edges, mid, side="right") - 1, 0, bins - 1)

    def binned(cell_power: np.ndarray) -> np.ndarray:
        return np.bincount(which, weights=cell_power, minlength=bins)

    quoted_top = max(min(chain.adc.output_rate_hz / 2, f_top), f_low * (1 + 1e-9))
    quoted_shape = _quoted_shape(chain, mid, width, quoted_top, binned)
    if quoted_shape is None:  # the grid has no cell under r/2: put it all in the first bin
        quoted_shape = np.zeros(bins)
        quoted_shape[0] = 1.0

    ref = chain.reference
    out: list[ContributorSpectrum] = []
    for c in budget.contributions:
        if c.rms_v == 0:
            continue
        shape = None
        if c.density_v_per_rthz is not None:
            shape = (c.density_v_per_rthz, c.corner_hz or 0.0, c.responses)
        elif c.kind == "reference" and ref is not None and ref.noise is not None:
            scale = chain.sensor.peak_v / ref.voltage_v
            shape = (ref.noise.white * scale, ref.noise.corner_hz, ref.responses)
        if shape is None:
            power = c.rms_v**2 * quoted_shape
            quoted = True
        else:
            white, corner, responses = shape
            psd = white**2 * (1.0 + corner / mid)
            power = binned(psd * _analog_gain(responses, mid) * digital_gain * width)
            quoted = False
        out.append(
            ContributorSpectrum(
                c.name, c.stage, c.kind, c.rms_v, power, np.sqrt(power / widths), quoted
            )
        )

    analog_all = _analog_gain(chain.responses_from(0), mid)
    analog = binned(analog_all * width) / widths
    digital = None if chain.digital is None else binned(digital_gain * width) / widths
    return Spectra(bin_edges, tuple(out), analog, digital, f_top, quoted_top)


def _quoted_shape(chain: Chain, mid, width, top: float, binned) -> np.ndarray | None:
    """Fraction of a quoted rms term's power in each bin (sums to 1), or None."""
    weight = np.where(mid <= top, width, 0.0)
    post = chain.post_stages
    if post:
        weight = weight * DigitalPath(tuple(post)).power_gain(mid)
    total = float(np.sum(weight))
    if not total > 0:
        return None
    return binned(weight) / total


def cumulative_noise(spectra: Spectra, budget: Budget) -> CumulativeNoise:
    """RMS noise below each frequency, ending at the budget's total.

    For a figure: the total is the budget's. The unfolded curve leaves out noise
    from above the plotted range (the aliases the budget's folded integral
    counts, and the tails of the analog responses); that part is returned as
    ``remainder_rms_v``, a final step to the total. Should the curve exceed the
    total (a grid error larger than 0.1 % in power), it is scaled down to it
    and ``scale`` and the caption say so.
    """
    power = sum((c.bin_power_v2 for c in spectra.contributors), np.zeros(len(spectra.widths_hz)))
    running = np.cumsum(power)
    end = float(running[-1]) if len(running) else 0.0
    total_power = budget.total_rms_v**2
    scale = 1.0
    remainder = 0.0
    if total_power == 0:
        caption = "The chain has no noise."
    elif end <= total_power * (1 + _POWER_TOLERANCE):
        remainder_power = max(total_power - end, 0.0)
        if remainder_power <= total_power * _POWER_TOLERANCE:
            caption = (
                "The curve ends at the budget's total within 0.1 % in power; "
                "noise from above the plotted range is negligible."
            )
            # Within tolerance: the final point is the budget's total.
            scale = math.sqrt(total_power / end) if end > 0 else 1.0
        else:
            remainder = math.sqrt(remainder_power)
            caption = (
                f"The final step ({format_percent(remainder_power / total_power)} of the noise "
                "power) is noise from above the plotted range that sampling folds into "
                "the band, or the tails of the analog responses; with it the curve ends "
                "at the budget's total."
            )
    else:
        scale = math.sqrt(total_power / end)
        caption = (
            f"The unfolded integral exceeded the budget's total by "
            f"{format_percent(end / total_power - 1, 2)} in power (grid error); the curve is "
            f"scaled by {scale:.4f} to end at the total."
        )
    rms = np.sqrt(running) * scale
    return CumulativeNoise(spectra.edges_hz[1:], rms, budget.total_rms_v, remainder, scale, caption)


@dataclass(frozen=True)
class _AveragingSlot:
    """Where the post-averaging stage sits in a chain's digital path."""

    index: int
    count: int
    rate_hz: float
    exists: bool


def _averaging_slot(chain: Chain) -> _AveragingSlot:
    """The first first-order sinc after the ADC's own output, else the end of the path."""
    skip = 1 if chain.adc.architecture == "delta-sigma" else 0
    stages = chain.digital.stages if chain.digital is not None else ()
    for i in range(skip, len(stages)):
        stage = stages[i]
        if isinstance(stage, SincFilter) and stage.order == 1:
            return _AveragingSlot(i, stage.length, stage.input_rate_hz, True)
    return _AveragingSlot(len(stages), 1, chain.output_rate_hz, False)


def _with_averaging(chain: Chain, slot: _AveragingSlot, count: int) -> Chain:
    """The chain with ``count`` samples averaged after the ADC.

    Stages after the average are moved to its output rate; a band limit that no
    longer fits under half that rate makes the variant invalid (DesignError).
    """
    stages = list(chain.digital.stages) if chain.digital is not None else []
    if slot.exists:
        stages[slot.index] = replace(stages[slot.index], length=count)
    else:
        stages.insert(slot.index, SincFilter(1, count, slot.rate_hz))
    for i in range(slot.index + 1, len(stages)):
        stages[i] = replace(stages[i], input_rate_hz=stages[i - 1].output_rate_hz)
    return replace(chain, digital=DigitalPath(tuple(stages)))


def _same_rate(a: float, b: float) -> bool:
    return math.isclose(a, b, rel_tol=1e-9)


def rate_carry(chain: Chain) -> str:
    """How a chain's converter noise can be taken at other data rates, or "" if it cannot.

    Only a delta-sigma converter offers other data rates (a SAR's output rate is
    its conversion rate; averaging lowers it). Its noise can be carried to them
    when it is a table against data rate ("table"), a figure the design allows to
    scale as white noise ("white"), or an input density, which the budget
    integrates over whatever filter follows ("density"). A single figure at one
    rate, an SNR at its stated rate or transition noise cannot.
    """
    if chain.adc.architecture != "delta-sigma" or not isinstance(
        chain.digital.stages[0] if chain.digital else None, SincFilter
    ):
        return ""
    noise = chain.adc.noise
    if isinstance(noise, NoiseTable):
        return "table"
    if isinstance(noise, NoiseAtRate) and noise.scale_with_rate:
        return "white"
    if isinstance(noise, InputNoiseDensity):
        return "density"
    return ""


def _candidate_rates(
    chain: Chain, band: Band, carry: str, rates: tuple[float, ...] | None
) -> list[float]:
    """Converter data rates to try, in increasing order, the design's own among them."""
    own = chain.adc.output_rate_hz
    if rates is not None:
        for r in rates:
            if (
                isinstance(r, bool)
                or not isinstance(r, int | float)
                or not (math.isfinite(r) and r > 0)
            ):
                raise DesignError("rates", r, "data rates > 0 Hz")
        wanted = [float(r) for r in rates]
    elif carry == "table":
        wanted = [rate for rate, _ in chain.adc.noise.rows]
    else:
        low = _MIN_RATE_OVER_F_LOW * band.f_low_hz
        high = chain.adc.sample_rate_hz * _MAX_RATE_OVER_SAMPLE_RATE
        first = math.ceil(math.log2(low / own) - 1e-9)
        last = math.floor(math.log2(high / own) + 1e-9)
        wanted = [own * 2.0**k for k in range(first, last + 1)]
    out: list[float] = []
    for r in sorted([*wanted, own]):
        if not out or not _same_rate(out[-1], r):
            out.append(r)
    return [own if _same_rate(r, own) else r for r in out]


def _at_data_rate(chain: Chain, rate_hz: float) -> tuple[Chain | None, str]:
    """The chain with its converter at another data rate, or None and why not.

    The decimator keeps its order with the ratio fs/ODR; later stages run at the
    new rate (an average keeps its length; a band limit keeps its cut-off, which
    must stay under half the rate it runs at).
    """
    adc = chain.adc
    fs = adc.sample_rate_hz
    ratio = fs / rate_hz
    length = round(ratio)
    if length < 1 or not math.isclose(ratio, length, rel_tol=1e-9):
        return None, f"decimation ratio {format_si(fs, 'Hz')} / ODR not a whole number"
    stages = list(chain.digital.stages)
    stages[0] = replace(stages[0], length=length)
    for i in range(1, len(stages)):
        rate_in = stages[i - 1].output_rate_hz
        stage = stages[i]
        if isinstance(stage, IdealLowpass) and stage.cutoff_hz > rate_in / 2:
            return None, (
                f"band limit at {format_si(stage.cutoff_hz, 'Hz')} above half the rate it would "
                "run at"
            )
        stages[i] = replace(stage, input_rate_hz=rate_in)
    try:
        variant = replace(
            chain, adc=replace(adc, data_rate_hz=rate_hz), digital=DigitalPath(tuple(stages))
        )
    except DesignError as err:
        return None, str(err)
    return variant, ""


def _point(
    variant: Chain,
    band: Band,
    coverage: float,
    requirement: Requirement | None,
    grid_points: int,
    count: int,
) -> ResolutionPoint:
    b = forward_budget(
        variant, band, coverage=coverage, requirement=requirement, grid_points=grid_points
    )
    top = band.f_high_hz
    passes = top is None or b.output_rate_hz >= 2 * top * (1 - 1e-9)
    return ResolutionPoint(
        count,
        variant.adc.output_rate_hz,
        b.output_rate_hz,
        b.total_rms_v,
        b.noise_free_bits,
        b.effective_bits,
        b.meets_requirement,
        passes,
        b,
    )


def resolution_sweep(
    chain: Chain,
    band: Band | None = None,
    requirement: Requirement | None = None,
    *,
    counts: tuple[int, ...] | None = None,
    rates: tuple[float, ...] | None = None,
    coverage: float | None = None,
    grid_points: int = 2000,
) -> ResolutionSweep:
    """Noise-free bits against output data rate, each point a full forward budget.

    For a figure; the design's own resolution is the budget's, and the design's
    own point is its budget exactly (the chain itself, not a rebuilt copy). Every
    other point is a full :func:`~resplan.chain.budget.forward_budget` of a chain
    variant made with ``dataclasses.replace``, never a scaled estimate.

    - **Data-rate sweep** (a delta-sigma converter whose noise is known at other
      data rates, see :func:`rate_carry`): the converter's ``data_rate_hz`` is
      set to each rate the converter offers — each row of a noise table, or the
      design's rate times powers of two within [20·f_L, f_s/16] — and its
      sinc^k decimator to the ratio f_s/ODR (rates whose ratio is not a whole
      number are left out). Later digital stages run at the new rate: an average
      keeps its length; a band limit keeps its cut-off, and a rate under twice it
      is left out.
    - **Averaging sweep** (any other chain): the post-averaging stage (the first
      first-order sinc after the converter's own output) is set to another count,
      or one is appended to the digital path; later stages move to the new rate.
      White noise falls as 1/√N; 1/f noise and noise the converter's own filter
      already removed do not, which is why the curve flattens.

    Variants whose output rate falls below twice the top of the signal band are
    kept, with ``passes_band`` False: they no longer pass the band (the sampling
    theorem). Variants whose output rate falls below 20 × f_L (common practice,
    no source: the noise band would fall under f_L) are left out, as are those
    that cannot be built or computed; ``skipped`` says which and why.

    Parameters
    ----------
    chain : Chain
    band : Band, optional
    requirement : Requirement, optional
        Gives the line the figure draws and each point's verdict.
    counts : tuple of int, optional
        Averaging counts to try in an averaging sweep; powers of two to 256 and the
        design's own by default. Not used in a data-rate sweep.
    rates : tuple of float, optional
        Converter data rates to try in a data-rate sweep, Hz (the design's own is
        always added). Refused for a chain whose converter rate cannot be swept.
    coverage : float, optional
        Coverage for the noise-free figures (the requirement's, else 99.9 %).
    grid_points : int
        Integration grid of each budget.

    Returns
    -------
    ResolutionSweep
    """
    band = band or Band()
    if coverage is None:
        coverage = requirement.coverage if requirement is not None else DEFAULT_COVERAGE
    k_pp = peak_to_peak_factor(coverage)
    carry = rate_carry(chain)
    if rates is not None and not carry:
        raise DesignError(
            "rates",
            rates,
            "a delta-sigma converter whose noise is known at other data rates (a noise "
            "table, scale_with_rate, or an input density)",
        )
    slot = _averaging_slot(chain)
    floor = _MIN_RATE_OVER_F_LOW * band.f_low_hz
    too_slow = f"output rate below {format_number(_MIN_RATE_OVER_F_LOW)} × f_L"
    points: list[ResolutionPoint] = []
    skipped: list[tuple[float, str]] = []

    def add(variant: Chain, count: int, key: float) -> None:
        try:
            points.append(_point(variant, band, coverage, requirement, grid_points, count))
        except DesignError as err:  # ChainError included
            skipped.append((key, str(err)))

    if carry:
        own = chain.adc.output_rate_hz
        for rate in _candidate_rates(chain, band, carry, rates):
            if rate == own:
                add(chain, slot.count, rate)
                continue
            variant, why = _at_data_rate(chain, rate)
            if variant is None:
                skipped.append((rate, why))
            elif variant.output_rate_hz < floor:
                skipped.append((rate, too_slow))
            else:
                add(variant, slot.count, rate)
        points.sort(key=lambda p: p.output_rate_hz)
        swept = SWEEP_DATA_RATE
        order = chain.digital.stages[0].order
        note = ""
    else:
        current, rate = slot.count, slot.rate_hz
        wanted = sorted(set(counts if counts is not None else DEFAULT_AVERAGING_COUNTS) | {current})
        for n in wanted:
            if isinstance(n, bool) or not isinstance(n, int) or n < 1:
                raise DesignError("counts", n, "whole averaging counts ≥ 1")
            if n == current:
                add(chain, n, n)
                continue
            if rate / n < floor:
                skipped.append((n, too_slow))
                continue
            try:
                variant = _with_averaging(chain, slot, n)
            except DesignError as err:
                skipped.append((n, str(err)))
                continue
            add(variant, n, n)
        swept = SWEEP_AVERAGING
        order = None
        note = _why_averaging(chain)
    required = None
    if requirement is not None and requirement.allowed_noise_rms_v > 0:
        required = math.log2(requirement.span_v / (k_pp * requirement.allowed_noise_rms_v))
    return ResolutionSweep(
        points=tuple(points),
        current_count=slot.count,
        required_noise_free_bits=required,
        skipped=tuple(skipped),
        swept=swept,
        current_rate_hz=chain.adc.output_rate_hz,
        coverage=coverage,
        k_pp=k_pp,
        band_top_hz=band.f_high_hz,
        noise_carry=carry,
        decimation_order=order,
        sample_rate_hz=chain.adc.sample_rate_hz,
        note=note,
        post_stage_count=len(chain.post_stages),
    )


def _why_averaging(chain: Chain) -> str:
    """Why the converter's data rate is not swept, for a caption."""
    if chain.adc.architecture != "delta-sigma":
        return "a SAR's output rate is its conversion rate, so the post-average is varied"
    noise = chain.adc.noise
    if isinstance(noise, NoiseAtRate):
        what = "a single figure at its own data rate, not allowed to scale as white noise"
    elif isinstance(noise, SnrNoise):
        what = "an SNR at its stated rate"
    else:
        what = "known at its own data rate only"
    return f"the converter's noise is {what}, so the post-average is varied, not the data rate"
