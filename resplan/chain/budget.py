"""The forward noise budget: every contribution of a chain, referred to the sensor.

Each source is a 1/f + white density at the point where it enters (or, for the
ADC, a figure quoted by its data sheet). Densities are integrated through the
analog responses between their entry point and the ADC and through the digital
filtering after it, aliases included (:mod:`resplan.noise.bandwidth`); the result is
divided by the gain in front of the entry point to refer it to the sensor:

    σ_RTI² = σ₁² + σ₂²/G₁² + σ₃²/(G₁G₂)² + …

Uncorrelated sources add in power. Reference noise is evaluated at the largest
input the sensor produces: an input V_in sees an error V_in·σ_ref/V_ref, zero at
zero input.

Contribution ids
----------------
Every contribution carries a stable ``id``, ``<place>.<source>``, built by
:func:`contribution_id`; it is the same in Python (``budget["stages[0].en"]``),
in the JSON of ``resplan check`` (the ``"id"`` of each contributor) and in the
report. The place says where the source enters, the source what it is:

=====================  ==========================  ====================================
place                  source                      contribution
=====================  ==========================  ====================================
``sensor``             ``thermal``                 √(4kTR) of the source resistance
``sensor``             ``noise``                   the sensor's own stated noise
``sensor``             ``thermal+``, ``thermal-``  each half of a balanced source
``sensor``             ``dark_current``            shot noise of the dark current
``sensor``             ``signal_shot``             shot noise of the full-scale current
``stages[i]``          ``en``                      gain-stage or amplifier input voltage
                                                   noise (an in-amp's input stage)
``stages[i]``          ``in_plus``, ``in_minus``   a gain stage's i_n+ and i_n−
``stages[i]``          ``RF.thermal``              a gain stage's RF (and ``RG.thermal``)
``stages[i]``          ``eno``                     output voltage noise, referred by 1/G
``stages[i]``          ``in``                      amplifier current noise (single-ended)
``stages[i]``          ``R.thermal``               thermal noise of an RC filter's R
``stages[i]``          ``R_eq.thermal``            an active filter's equivalent R
``stages[i]``          ``<solver source id>``      every other part of a solved stage:
                                                   the solver's own ids (``Rin.thermal``,
                                                   ``opamp.en``, ``sections[0].R1.thermal``)
``reference``          ``noise``                   reference noise at the largest input
``adc``                ``noise``                   converter noise (any way it is quoted)
``adc``                ``quantisation``            q/√12 when the figure excludes it
``adc``                ``jitter``                  aperture jitter
``interference``       ``allowance``               the requirement's interference allowance
=====================  ==========================  ====================================

``i`` counts the chain's stages from 0 in signal order. Ids are unique within
a budget; the display ``name`` is for people and may change.
"""

from __future__ import annotations

import difflib
import math
from dataclasses import dataclass, field
from functools import lru_cache
from typing import Any

import numpy as np

from ..errors import ChainError
from ..noise.bandwidth import NoiseBandwidth, integrate_psd, noise_bandwidth
from ..noise.physics import (
    enob_from_sinad,
    noise_rms_to_snr,
    peak_to_peak_factor,
)
from ..units.formatting import format_number, format_percent, format_si
from .circuit_checks import check_circuit
from .converter import (
    InputNoiseDensity,
    NoiseAtRate,
    NoiseTable,
    SnrNoise,
    TransitionNoise,
    jitter_noise_rms,
)
from .netlists import (
    UNBOUNDED_SLOPE,
    ChainCircuit,
    SourcePath,
    circuit_of,
    transfer_table,
)
from .requirement import DEFAULT_COVERAGE, Requirement
from .resolution import dynamic_range_db, effective_bits, noise_free_bits, noise_free_counts
from .signal_chain import Band, Chain, describe_reference
from .stages import NoiseDensity

__all__ = [
    "Contribution",
    "Budget",
    "forward_budget",
    "contribution_id",
    "KINDS",
    "DOMINANCE_RATIO",
]

#: Kinds of contribution.
KINDS = (
    "thermal",
    "sensor",
    "voltage",
    "current",
    "reference",
    "adc",
    "quantisation",
    "jitter",
)
#: A source under 1/5 of the largest adds only ~2 % to the total (common practice, no source).
DOMINANCE_RATIO = 0.2


def contribution_id(place: str, source: str) -> str:
    """The stable id of a contribution: ``<place>.<source>`` (see the module's table).

    Parameters
    ----------
    place : str
        Where the source enters: ``"sensor"``, ``"stages[i]"``, ``"reference"``,
        ``"adc"`` or ``"interference"``.
    source : str
        What it is within that place, such as ``"en"`` or a netlist solver's
        source id such as ``"R3.thermal"``.

    Examples
    --------
    >>> contribution_id("stages[2]", "R3.thermal")
    'stages[2].R3.thermal'
    """
    return f"{place}.{source}"


def stage_place(index: int) -> str:
    """The place of stage ``index`` in contribution ids: ``"stages[<index>]"``."""
    return f"stages[{index}]"


@dataclass(frozen=True)
class Contribution:
    """One noise source of a chain.

    Attributes
    ----------
    name : str
        What the source is, such as ``"e_n"`` or ``"i_n+ · R_source"``.
    stage : str
        The stage it belongs to.
    kind : str
        One of :data:`KINDS`.
    rms_v : float
        RMS referred to the sensor, V, over the chain's noise band.
    adc_rms_v : float
        The same at the ADC input, V.
    share : float
        Fraction of the total noise power.
    density_v_per_rthz : float or None
        White density referred to the sensor, V/√Hz, for density sources.
    corner_hz : float or None
        Its 1/f corner, Hz.
    noise_bandwidth_hz : float or None
        White noise bandwidth of its path, Hz.
    note : str
        How the figure was obtained.
    id : str
        Stable id, ``<place>.<source>`` (see :func:`contribution_id`), such as
        ``"stages[0].en"``; unique within a budget.
    """

    name: str
    stage: str
    kind: str
    rms_v: float
    adc_rms_v: float
    share: float = 0.0
    density_v_per_rthz: float | None = None
    corner_hz: float | None = None
    noise_bandwidth_hz: float | None = None
    note: str = ""
    #: Analog responses between its entry point and the ADC (for spectra and figures).
    responses: tuple = field(default=(), repr=False, compare=False)
    #: DC gain from the sensor to its entry point, V/V.
    gain_in_front: float = 1.0
    id: str = ""


@dataclass(frozen=True)
class Budget:
    """A forward noise budget and the resolution it gives.

    Every rms is referred to the sensor unless its name says ``adc``. Spans are
    peak-to-peak ranges. See :func:`forward_budget`.
    """

    contributions: tuple[Contribution, ...]
    total_rms_v: float
    gain: float
    span_v: float
    adc_full_scale_v: float
    adc_alone_rms_v: float
    coverage: float
    temperature_k: float
    sensor_temperature_k: float
    f_low_hz: float
    f_high_hz: float | None
    output_rate_hz: float
    reference_note: str
    requirement: Requirement | None = None
    warnings: tuple[str, ...] = field(default_factory=tuple)
    #: The sensor's output range at the ADC (offset included) leaves its input window.
    outside_window: bool = False
    #: Unit of the span and of every figure referred to the sensor: "V", or "A" for a
    #: current-output sensor (the gain is then a transimpedance, V/A).
    sensor_unit: str = "V"

    def __post_init__(self) -> None:
        seen: set[str] = set()
        for c in self.contributions:
            if c.id and c.id in seen:
                raise ValueError(f"two contributions share the id {c.id!r}")
            seen.add(c.id)

    @property
    def ids(self) -> tuple[str, ...]:
        """The contributions' ids, in the budget's order (largest first)."""
        return tuple(c.id for c in self.contributions)

    def contribution(self, id: str) -> Contribution:
        """The contribution with this id, such as ``"stages[0].en"``.

        Raises
        ------
        KeyError
            When no contribution has it; the message lists the closest ids.
        """
        for c in self.contributions:
            if c.id == id:
                return c
        close = difflib.get_close_matches(str(id), [c.id for c in self.contributions], n=4)
        hint = f"; closest: {', '.join(close)}" if close else ""
        raise KeyError(
            f"no contribution {id!r} in this budget{hint} "
            f"(all ids: {', '.join(c.id for c in self.contributions)})"
        )

    def __getitem__(self, id: str) -> Contribution:
        return self.contribution(id)

    def __contains__(self, id: object) -> bool:
        return any(c.id == id for c in self.contributions)

    @property
    def k_pp(self) -> float:
        """Peak-to-peak factor of the coverage (6.58 at 99.9 %)."""
        return peak_to_peak_factor(self.coverage)

    @property
    def gain_unit(self) -> str:
        """Unit of :attr:`gain`: "V/V", or "V/A" after a current-output sensor."""
        return f"V/{self.sensor_unit}"

    @property
    def total_adc_rms_v(self) -> float:
        """Total noise at the ADC input, V rms."""
        return self.total_rms_v * self.gain

    @property
    def adc_span_at_sensor_v(self) -> float:
        """The ADC's full-scale range referred to the sensor, V."""
        return self.adc_full_scale_v / self.gain

    @property
    def adc_range_used(self) -> float:
        """Fraction of the ADC's range the sensor span uses (> 1 overloads)."""
        return self.span_v * self.gain / self.adc_full_scale_v

    @property
    def effective_bits(self) -> float:
        return effective_bits(self.span_v, self.total_rms_v)

    @property
    def noise_free_bits(self) -> float:
        return noise_free_bits(self.span_v, self.total_rms_v, self.k_pp)

    @property
    def noise_free_counts(self) -> float:
        return noise_free_counts(self.span_v, self.total_rms_v, self.k_pp)

    @property
    def effective_bits_adc_range(self) -> float:
        return effective_bits(self.adc_full_scale_v, self.total_adc_rms_v)

    @property
    def noise_free_bits_adc_range(self) -> float:
        return noise_free_bits(self.adc_full_scale_v, self.total_adc_rms_v, self.k_pp)

    @property
    def noise_free_counts_adc_range(self) -> float:
        return noise_free_counts(self.adc_full_scale_v, self.total_adc_rms_v, self.k_pp)

    @property
    def dynamic_range_db(self) -> float:
        """Full-scale sine over the sensor span against the total noise, dB."""
        return dynamic_range_db(self.span_v, self.total_rms_v)

    @property
    def snr_db(self) -> float:
        """Full-scale sine of the ADC range against the total noise at its input, dB."""
        return float(noise_rms_to_snr(self.total_adc_rms_v, self.adc_full_scale_v))

    @property
    def adc_enob(self) -> float:
        """ENOB of the ADC alone (its own noise and quantisation at its own data rate, before
        any post-averaging), IEEE Std 1241."""
        return float(enob_from_sinad(noise_rms_to_snr(self.adc_alone_rms_v, self.adc_full_scale_v)))

    @property
    def dominant(self) -> tuple[Contribution, ...]:
        """Contributors within 1/5 of the largest (common practice, no source)."""
        if not self.contributions:
            return ()
        top = max(c.rms_v for c in self.contributions)
        return tuple(c for c in self.contributions if c.rms_v >= DOMINANCE_RATIO * top and top > 0)

    @property
    def overloaded(self) -> bool:
        """The span needs more than the ADC range, or leaves its input window."""
        return self.adc_range_used > 1.0 + 1e-12 or self.outside_window

    @property
    def allowed_rms_v(self) -> float | None:
        """Noise the requirement allows after the interference allowance, V rms."""
        return None if self.requirement is None else self.requirement.allowed_noise_rms_v

    @property
    def margin_bits(self) -> float | None:
        """log2(allowed/actual): bits of noise-free resolution to spare (negative: short)."""
        allowed = self.allowed_rms_v
        if allowed is None:
            return None
        if allowed == 0:
            return -math.inf
        return math.inf if self.total_rms_v == 0 else math.log2(allowed / self.total_rms_v)

    @property
    def meets_requirement(self) -> bool | None:
        """Whether the budget's own items pass: total noise within the allowed noise and
        the sensor inside the ADC input window (None without a requirement).

        A budget knows nothing of the design's interferers, pass-band flatness,
        headroom or timing requirements: the whole verdict of a design is
        :func:`resplan.chain.verdict.judge_design`, which ``resplan check`` and its
        JSON ``meets_requirement`` read.
        """
        if self.requirement is None:
            return None
        return (not self.overloaded) and self.total_rms_v <= self.allowed_rms_v * (1 + 1e-12)

    def to_records(self) -> list[dict[str, Any]]:
        """One flat row per contribution (id, name, stage, kind, rms_v, …; SI values).

        Ready for ``pandas.DataFrame(budget.to_records())`` or CSV; see
        :func:`resplan.chain.tables.budget_records`.
        """
        from .tables import budget_records

        return budget_records(self)

    def _repr_html_(self) -> str:
        from .tables import budget_html

        return budget_html(self)

    def to_dict(self) -> dict[str, Any]:
        """Plain data with stable keys (SI units; the key names the unit)."""
        req = self.requirement
        return {
            "total_noise_rms_v": self.total_rms_v,
            "total_noise_adc_rms_v": self.total_adc_rms_v,
            "effective_bits": self.effective_bits,
            "noise_free_bits": self.noise_free_bits,
            "noise_free_counts": self.noise_free_counts,
            "adc_range": {
                "full_scale_range_v": self.adc_full_scale_v,
                "effective_bits": self.effective_bits_adc_range,
                "noise_free_bits": self.noise_free_bits_adc_range,
                "noise_free_counts": self.noise_free_counts_adc_range,
            },
            "coverage": self.coverage,
            "coverage_factor_pp": self.k_pp,
            "snr_db": self.snr_db,
            "dynamic_range_db": self.dynamic_range_db,
            "adc_enob": self.adc_enob,
            "adc_range_used": self.adc_range_used,
            "outside_adc_window": self.outside_window,
            "gain": self.gain,
            # A current-output sensor: every figure at the sensor (span_v, rms_v, ...) in A.
            "sensor_unit": self.sensor_unit,
            "span_v": self.span_v,
            "temperature_k": self.temperature_k,
            "sensor_temperature_k": self.sensor_temperature_k,
            "band": {"f_low_hz": self.f_low_hz, "f_high_hz": self.f_high_hz},
            "output_rate_hz": self.output_rate_hz,
            "reference": self.reference_note,
            "meets_requirement": self.meets_requirement,
            "margin_bits": self.margin_bits,
            "requirement": None
            if req is None
            else {
                "description": req.description,
                "allowed_total_rms_v": req.allowed_total_rms_v,
                "interference_rms_v": req.interference_rms_v,
                "allowed_noise_rms_v": req.allowed_noise_rms_v,
                "noise_free_bits": req.required_noise_free_bits,
                "noise_free_counts": req.noise_free_counts,
                "dynamic_range_db": req.dynamic_range_db,
            },
            "dominant": [c.name + " (" + c.stage + ")" for c in self.dominant],
            "dominant_ids": [c.id for c in self.dominant],
            "warnings": list(self.warnings),
            "contributors": [
                {
                    "id": c.id,
                    "name": c.name,
                    "stage": c.stage,
                    "kind": c.kind,
                    "rms_v": c.rms_v,
                    "adc_rms_v": c.adc_rms_v,
                    "share": c.share,
                    "density_v_per_rthz": c.density_v_per_rthz,
                    "corner_hz": c.corner_hz,
                    "noise_bandwidth_hz": c.noise_bandwidth_hz,
                    "note": c.note,
                }
                for c in self.contributions
            ],
        }


class _Collector:
    """Builds contributions for one chain."""

    def __init__(self, chain: Chain, band: Band, grid_points: int):
        self.chain = chain
        self.band = band
        self.grid_points = grid_points
        self.gain = chain.total_gain
        self.items: list[Contribution] = []

    def bandwidth(self, responses, where: str, folded_source: bool = False) -> NoiseBandwidth:
        try:
            return noise_bandwidth(
                responses,
                self.chain.digital,
                self.band.f_low_hz,
                grid_points=self.grid_points,
                folded_source=folded_source,
            )
        except ChainError as err:
            raise ChainError(
                where,
                "no band limit",
                "an analog bandwidth (gbw, bandwidth or a filter stage) that bounds the noise "
                f"of {where} before the ADC samples it (a digital filter cannot: white noise "
                "aliases without end)",
            ) from err

    def density(
        self,
        name: str,
        stage: str,
        kind: str,
        noise: NoiseDensity,
        gain_in_front: float,
        responses: tuple,
        note: str = "",
        *,
        id: str,
    ) -> None:
        """A density entering after ``gain_in_front`` of gain, filtered by ``responses``.

        ``id`` is the contribution's stable id (:func:`contribution_id`).
        """
        if noise.white == 0:
            return
        nb = self.bandwidth(responses, stage)
        rms_at_entry = nb.rms(noise.white, noise.corner_hz)
        rti = rms_at_entry / gain_in_front
        self.items.append(
            Contribution(
                name=name,
                stage=stage,
                kind=kind,
                rms_v=rti,
                adc_rms_v=rti * self.gain,
                density_v_per_rthz=noise.white / gain_in_front,
                corner_hz=noise.corner_hz,
                noise_bandwidth_hz=nb.white_hz,
                note=note,
                responses=tuple(responses),
                gain_in_front=gain_in_front,
                id=id,
            )
        )

    def at_adc(
        self, name: str, stage: str, kind: str, adc_rms_v: float, note: str, *, id: str
    ) -> None:
        self.items.append(
            Contribution(name, stage, kind, adc_rms_v / self.gain, adc_rms_v, note=note, id=id)
        )


def forward_budget(
    chain: Chain,
    band: Band | None = None,
    coverage: float | None = None,
    requirement: Requirement | None = None,
    *,
    grid_points: int = 2000,
) -> Budget:
    """Compute every noise contribution of a chain and the resolution it gives.

    Parameters
    ----------
    chain : Chain
        The chain, every part given.
    band : Band, optional
        Lower band edge (bounds the 1/f noise) and signal band; ``Band()`` (10 mHz) if omitted.
    coverage : float, optional
        Coverage probability for peak-to-peak figures; the requirement's, else 99.9 %.
    requirement : Requirement, optional
        When given, the budget says whether it is met and by what margin.
    grid_points : int
        Points of the integration grid.

    Returns
    -------
    Budget

    Raises
    ------
    ChainError
        When a noise band is unbounded or ADC noise is quoted at other conditions.
    """
    band = band or Band()
    if coverage is None:
        coverage = requirement.coverage if requirement else DEFAULT_COVERAGE
    peak_to_peak_factor(coverage)
    c = _Collector(chain, band, grid_points)
    sensor = chain.sensor
    t = chain.temperature_k
    t_sensor = chain.sensor_temperature_k
    warnings: list[str] = []

    _circuit_contributions(c, chain, band)

    _reference_contribution(c, chain, band)
    adc_alone_rms = _adc_contributions(c, chain, band, warnings)
    _jitter_contribution(c, chain, band, requirement, warnings)

    total = math.sqrt(sum(x.rms_v**2 for x in c.items))
    items = sorted(c.items, key=lambda x: x.rms_v, reverse=True)
    total_power = total**2
    items = [
        Contribution(**{**x.__dict__, "share": (x.rms_v**2 / total_power) if total_power else 0.0})
        for x in items
    ]
    budget = Budget(
        contributions=tuple(items),
        total_rms_v=total,
        gain=chain.total_gain,
        span_v=sensor.span_v,
        adc_full_scale_v=chain.adc.full_scale_range_v,
        adc_alone_rms_v=adc_alone_rms,
        coverage=coverage,
        temperature_k=t,
        sensor_temperature_k=t_sensor,
        f_low_hz=band.f_low_hz,
        f_high_hz=band.f_high_hz,
        output_rate_hz=chain.output_rate_hz,
        reference_note=describe_reference(chain.reference),
        requirement=requirement,
        warnings=(),
        sensor_unit=sensor.unit,
    )
    if budget.adc_range_used > 1.0 + 1e-12:
        warnings.append(
            f"the sensor span at the ADC is {format_percent(budget.adc_range_used)} of its "
            "full-scale range: the ADC overloads; lower the gain"
        )
    outside = False
    window = chain.adc.input_window_v
    low, high = (v * chain.total_gain for v in sensor.output_range_v)
    if window is not None and (
        low < window[0] - 1e-12 * abs(window[1]) or high > window[1] * (1 + 1e-12)
    ):
        outside = True
        warnings.append(
            f"the sensor output at the ADC runs from {format_si(low, 'V')} to "
            f"{format_si(high, 'V')}, outside its "
            f"{chain.adc.input_polarity} input window {format_si(window[0], 'V')} … "
            f"{format_si(window[1], 'V')}: "
            "shift the offset or change the gain"
        )
    return Budget(**{**budget.__dict__, "warnings": tuple(warnings), "outside_window": outside})


@lru_cache(maxsize=256)
def _path_bandwidths(
    circuit: ChainCircuit, f_low_hz: float, digital, grid_points: int
) -> tuple[np.ndarray, np.ndarray]:
    """White (Hz·|H|²) and 1/f (|H|²) noise bandwidths of every source's path to the output.

    One pass of :func:`resplan.noise.bandwidth.integrate_psd` over the stacked table of
    power transfers, aliases included: column j gives ∫|H_j|²|H_d|² df and
    ∫|H_j|²|H_d|²/f df, so a source of density e_w²(1 + f_c/f) has variance
    e_w²(W_j + f_c·F_j) at the ADC input, its path kept apart from its density.
    """
    table = transfer_table(circuit, f_low_hz)

    def kernels(f: np.ndarray) -> np.ndarray:
        return np.stack([np.ones_like(f), 1.0 / f])[:, None, :]

    white, flicker = integrate_psd(kernels, (table,), digital, f_low_hz, grid_points=grid_points)
    return np.asarray(white, dtype=float), np.asarray(flicker, dtype=float)


def _stage_index(where: str) -> int | None:
    if where.startswith("stages[") and where.endswith("]"):
        return int(where[7:-1])
    return None


def _circuit_contributions(c: _Collector, chain: Chain, band: Band) -> None:
    """Every source of the analog front end, from the solved circuit (one contribution each)."""
    circuit = circuit_of(chain)
    check_circuit(circuit, band.f_high_hz, chain)
    sources = circuit.sources
    if not sources:
        return
    table = transfer_table(circuit, band.f_low_hz)
    white_sq = circuit.white_sq
    corner = circuit.corner_hz
    white_bw, flicker = _path_bandwidths(circuit, band.f_low_hz, chain.digital, c.grid_points)
    at_low = table.power_gain(np.array([band.f_low_hz]))[:, 0]
    peak = np.exp(table.log_power.max(axis=1))
    t_sensor = chain.sensor_temperature_k
    for j, info in enumerate(sources):
        if white_sq[j] == 0 or not table.live[j]:
            continue
        if table.final_slope[j] > UNBOUNDED_SLOPE:
            raise ChainError(
                info.stage,
                "no band limit",
                "an analog bandwidth (gbw, bandwidth or a filter stage) that bounds the noise "
                f"of {info.stage} ({info.name}) before the ADC samples it (a digital filter "
                "cannot: white noise aliases without end)",
            )
        variance = white_sq[j] * (white_bw[j] + corner[j] * flicker[j])
        adc_rms = math.sqrt(max(float(variance), 0.0))
        scale = float(at_low[j]) if at_low[j] > 1e-30 * peak[j] else float(peak[j])
        index = _stage_index(info.where)
        note = "solved with the whole front end (nodal analysis)"
        if info.source_id.startswith("sensor.thermal"):
            law = "√(4kT/R)" if chain.sensor.output == "current" else "√(4kTR)"
            note = f"{law} at {t_sensor:.2f} K, " + note
        c.items.append(
            Contribution(
                name=info.name,
                stage=info.stage,
                kind=info.kind,
                rms_v=adc_rms / c.gain,
                adc_rms_v=adc_rms,
                density_v_per_rthz=math.sqrt(white_sq[j] * scale) / c.gain,
                corner_hz=float(corner[j]),
                noise_bandwidth_hz=float(white_bw[j]) / scale,
                note=note,
                responses=(SourcePath(table, j, scale),),
                gain_in_front=1.0 if index is None else chain.gain_before(index),
                id=info.contribution_id,
            )
        )


def _reference_contribution(c: _Collector, chain: Chain, band: Band) -> None:
    ref = chain.reference
    if ref is None:
        return
    name = ref.name
    if ref.ratiometric:
        c.items.append(
            Contribution(
                "reference noise",
                name,
                "reference",
                0.0,
                0.0,
                note="ratiometric: cancels to first order",
                id=contribution_id("reference", "noise"),
            )
        )
        return
    if ref.noise is None or ref.noise.white == 0:
        return
    nb = chain.reference_bandwidth(band.f_low_hz, c.grid_points)
    sigma_ref = nb.rms(ref.noise.white, ref.noise.corner_hz)
    # Error at the ADC input: V_in·σ_ref/V_ref, at the largest input the sensor produces.
    peak_at_adc = chain.sensor.peak_v * chain.total_gain
    c.at_adc(
        "reference noise at full input",
        name,
        "reference",
        peak_at_adc * sigma_ref / ref.voltage_v,
        f"{format_si(sigma_ref, 'V')} rms at the reference, scaled by V_in/V_ref at the largest "
        "input",
        id=contribution_id("reference", "noise"),
    )


def _adc_contributions(c: _Collector, chain: Chain, band: Band, warnings: list[str]) -> float:
    """Add the ADC's own noise and quantisation.

    Returns their total at its input at the converter's own output rate (before any
    post-averaging), V rms: what its ENOB is judged on.
    """
    adc = chain.adc
    noise = adc.noise
    post = chain.post_variance_factor()
    post_rms = math.sqrt(post)
    after = "" if post == 1 else f", × {format_number(post_rms)} by the digital post-filter"
    adc_id = contribution_id("adc", "noise")
    own: float
    if isinstance(noise, NoiseAtRate | NoiseTable):
        rms, how = noise.rms_at(adc.output_rate_hz, adc.gain)
        own = rms * post_rms
        c.at_adc("converter noise", adc.name, "adc", own, how + after, id=adc_id)
    elif isinstance(noise, SnrNoise):
        rms, how = noise.rms(adc.full_scale_range_v, adc.output_rate_hz)
        own = rms * post_rms
        c.at_adc("converter noise", adc.name, "adc", own, how + after, id=adc_id)
    elif isinstance(noise, TransitionNoise):
        own = noise.lsb_rms * adc.lsb_v * post_rms
        c.at_adc(
            "transition noise",
            adc.name,
            "adc",
            own,
            f"{format_si(noise.lsb_rms, 'LSB')} rms" + after,
            id=adc_id,
        )
    elif isinstance(noise, InputNoiseDensity):
        if chain.digital is None:
            nb = noise_bandwidth(
                (), None, band.f_low_hz, f_high_hz=adc.sample_rate_hz / 2, grid_points=c.grid_points
            )
        else:
            nb = c.bandwidth((), adc.name, folded_source=True)
        own = nb.rms(noise.density.white, noise.density.corner_hz)
        c.at_adc(
            "converter noise",
            adc.name,
            "adc",
            own,
            f"density integrated over {format_si(nb.white_hz, 'Hz')} noise bandwidth",
            id=adc_id,
        )
    else:  # pragma: no cover - the union is closed
        raise TypeError(type(noise))
    total_sq = own**2
    if not noise.includes_quantisation:
        q = adc.quantisation_rms_v * post_rms
        c.at_adc(
            "quantisation",
            adc.name,
            "quantisation",
            q,
            "q/√12 (Bennett 1948)" + after,
            id=contribution_id("adc", "quantisation"),
        )
        total_sq += q**2
        if post < 1:
            others = sum(x.adc_rms_v**2 for x in c.items if x.kind != "quantisation")
            if math.sqrt(others / post) < 0.5 * adc.lsb_v:
                warnings.append(
                    "noise at the ADC input is below 0.5 LSB rms per sample: averaging will not "
                    "reduce quantisation as counted (no dither)"
                )
    return math.sqrt(total_sq) / post_rms


def _jitter_contribution(
    c: _Collector,
    chain: Chain,
    band: Band,
    requirement: Requirement | None,
    warnings: list[str],
) -> None:
    """Aperture jitter on a full-span sine at the signal frequency (IEEE Std 1241 / Kester).

    The error 2π·f·A_rms·σ_j (Kester, *Data Conversion Handbook*, 2005, ch. 2, from
    memory) is taken at the largest input: a sine over the whole span at the ADC,
    A_rms = span·G/(2√2). Random sample-to-sample jitter makes it white over the
    first Nyquist zone, so a SAR's digital post-filter scales it as it scales the
    converter's own noise; a delta-sigma ADC's figure is kept whole (conservative).
    """
    adc = chain.adc
    if adc.aperture_jitter_s == 0:
        return
    frequency = None
    how = ""
    if requirement is not None and requirement.signal_frequency_hz is not None:
        frequency, how = requirement.signal_frequency_hz, "the stated signal frequency"
    elif band.f_high_hz is not None:
        frequency, how = band.f_high_hz, "the band top (no signal frequency stated)"
    if frequency is None:
        warnings.append(
            "aperture jitter not counted: state requirement.signal_frequency or a band top"
        )
        return
    amplitude = chain.sensor.span_v * chain.total_gain / (2.0 * math.sqrt(2.0))
    rms = float(jitter_noise_rms(frequency, amplitude, adc.aperture_jitter_s))
    factor = chain.post_variance_factor() if adc.architecture == "sar" else 1.0
    note = (
        f"2π·f·A_rms·σ_j at {format_si(frequency, 'Hz')} ({how}), A_rms = "
        f"{format_si(amplitude, 'V')} "
        f"(full span at the ADC), σ_j = {format_si(adc.aperture_jitter_s, 's')}"
    )
    if factor != 1.0:
        note += f", × {format_number(math.sqrt(factor))} by the digital post-filter"
    c.at_adc(
        "aperture jitter",
        adc.name,
        "jitter",
        rms * math.sqrt(factor),
        note,
        id=contribution_id("adc", "jitter"),
    )
