"""Resolution against output data rate (resplan.output.spectra.resolution_sweep) and its figure.

Every point of the sweep is a full forward budget of a chain variant; these tests
check that the variants are the ones a designer means (the converter's own data
rates, or a post-average), that the design's own point is its budget, and that
the points follow the white-noise law where it holds: noise power proportional to
the noise bandwidth, which is proportional to the output data rate — half a bit
per doubling (oversampling gain 10·log10(OSR) dB, Schreier & Temes,
*Understanding Delta-Sigma Data Converters*, ch. 1). Every chain here is INVENTED.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from resplan import (
    ADC,
    Band,
    DigitalPath,
    IdealLowpass,
    NoiseAtRate,
    RCFilter,
    Requirement,
    Sensor,
    SincFilter,
    TransitionNoise,
    forward_budget,
)
from resplan.chain.converter import InputNoiseDensity, NoiseTable, SnrNoise
from resplan.chain.design import Design, Meta
from resplan.chain.signal_chain import Chain
from resplan.chain.stages import NoiseDensity
from resplan.errors import DesignError
from resplan.noise.physics import peak_to_peak_factor
from resplan.output.figures import caption, make_figures
from resplan.output.spectra import (
    SWEEP_AVERAGING,
    SWEEP_DATA_RATE,
    rate_carry,
    resolution_sweep,
)

#: Modulator rate of the invented delta-sigma converters, Hz.
FS = 256_000.0


def invented_delta_sigma(noise, rate=100.0, post=(), bits=32, span_v=10e-3, source_ohm=1.0):
    """INVENTED: a low-impedance bridge → RC → delta-sigma, sinc3 from 256 kHz to ``rate``.

    A 1 Ω source, a 1 Ω / 1 µF RC and a 32-bit word keep the analog and quantisation
    noise far below the converter's own, so that the converter dominates.
    """
    stages = [SincFilter(3, round(FS / rate), FS)]
    for make in post:
        stages.append(make(stages[-1].output_rate_hz))
    return Chain(
        sensor=Sensor(span_v=span_v, resistance_ohm=source_ohm, name="invented bridge"),
        stages=(RCFilter("invented RC", 1.0, 1e-6),),
        adc=ADC("invented delta-sigma", "delta-sigma", bits, 0.5, FS, noise, data_rate_hz=rate),
        digital=DigitalPath(tuple(stages)),
    )


def invented_sar(digital=None) -> Chain:
    """INVENTED: 1 Ω source, 12-bit SAR at 100 kHz whose own noise dominates."""
    return Chain(
        sensor=Sensor(span_v=4.0, resistance_ohm=1.0, name="invented source"),
        stages=(RCFilter("invented RC", 10.0, 1e-6),),
        adc=ADC("invented SAR", "sar", 12, 5.0, 100e3, TransitionNoise(2.0)),
        digital=digital,
    )


#: INVENTED noise table: rms against data rate, flattening at low rates.
INVENTED_TABLE = NoiseTable(
    (
        (2.5, 30e-9),
        (3.0, 31e-9),  # 256 kHz / 3 Hz is not a whole decimation ratio
        (5.0, 36e-9),
        (10.0, 45e-9),
        (20.0, 60e-9),
        (40.0, 83e-9),
        (70.0, 110e-9),  # 256 kHz / 70 Hz is not whole either
        (80.0, 116e-9),
    )
)


def adc_rms(point) -> float:
    return next(c for c in point.budget.contributions if c.name == "converter noise").adc_rms_v


# ------------------------------------------------------------------ which sweep, which points


@pytest.mark.parametrize(
    ("chain", "carry"),
    [
        (invented_delta_sigma(INVENTED_TABLE, 10.0), "table"),
        (invented_delta_sigma(NoiseAtRate(45e-9, 10.0, scale_with_rate=True), 10.0), "white"),
        (invented_delta_sigma(InputNoiseDensity(NoiseDensity(20e-9)), 10.0), "density"),
        (invented_delta_sigma(NoiseAtRate(45e-9, 10.0), 10.0), ""),
        (invented_delta_sigma(SnrNoise(120.0, 10.0), 10.0), ""),
        (invented_sar(), ""),
    ],
    ids=["table", "white", "density", "single figure", "snr", "sar"],
)
def test_the_data_rate_is_swept_only_where_the_noise_is_known_there(chain, carry):
    assert rate_carry(chain) == carry
    sweep = resolution_sweep(chain, Band(0.01), counts=(1, 2))
    assert sweep.swept == (SWEEP_DATA_RATE if carry else SWEEP_AVERAGING)
    if not carry:
        assert sweep.note


@pytest.mark.parametrize(
    "chain",
    [
        invented_delta_sigma(INVENTED_TABLE, 10.0),
        invented_delta_sigma(NoiseAtRate(45e-9, 10.0, scale_with_rate=True), 10.0),
        invented_delta_sigma(
            InputNoiseDensity(NoiseDensity(20e-9)), 100.0, post=(lambda r: SincFilter(1, 4, r),)
        ),
        invented_sar(DigitalPath((SincFilter(1, 4, 100e3),))),
    ],
    ids=["table", "white", "density with an average", "sar with an average"],
)
def test_the_designs_own_point_is_its_budget_exactly(chain):
    band = Band(0.01, 1.0)
    requirement = Requirement(span_v=chain.sensor.span_v, noise_free_counts=1000)
    own = forward_budget(chain, band, requirement=requirement)
    sweep = resolution_sweep(chain, band, requirement, counts=(1, 4, 16))
    point = sweep.current
    assert point is not None
    assert point.budget == own
    assert point.budget.to_dict() == own.to_dict()
    assert point.noise_free_bits == own.noise_free_bits
    assert point.output_rate_hz == own.output_rate_hz


def test_table_points_are_exactly_the_rows_with_whole_decimation_ratios():
    chain = invented_delta_sigma(INVENTED_TABLE, 10.0)
    sweep = resolution_sweep(chain, Band(0.01))
    # A decimator by R keeps every R-th sample: R must be a whole number (Crochiere &
    # Rabiner, Multirate Digital Signal Processing, 1983, ch. 2; from memory).
    whole = [r for r, _ in INVENTED_TABLE.rows if (FS / r).is_integer()]
    assert whole == [2.5, 5.0, 10.0, 20.0, 40.0, 80.0]
    assert [p.data_rate_hz for p in sweep.points] == whole
    assert [r for r, _ in sweep.skipped] == [3.0, 70.0]
    assert all("not a whole number" in why for _, why in sweep.skipped)
    rows = dict(INVENTED_TABLE.rows)
    for p in sweep.points:
        # Each point takes its own row (the table's figure, not a scaled one).
        assert adc_rms(p) == rows[p.data_rate_hz]
        # The sinc3 of the variant decimates by fs/ODR; its output is the point's rate.
        assert p.budget.output_rate_hz == p.data_rate_hz


def test_generated_rates_are_powers_of_two_within_twenty_f_low_and_fs_over_16():
    chain = invented_delta_sigma(NoiseAtRate(1e-6, 100.0, scale_with_rate=True), 100.0)
    sweep = resolution_sweep(chain, Band(0.1))
    # [20 × 0.1 Hz, 256 kHz / 16] = [2 Hz, 16 kHz]: 100 Hz × 2^k for k = −5 … 7.
    expected = [100.0 * 2.0**k for k in range(-5, 8)]
    assert [p.data_rate_hz for p in sweep.points] == expected
    assert sweep.skipped == ()


def test_rates_asked_for_are_used_and_refused_where_the_rate_cannot_move():
    chain = invented_delta_sigma(NoiseAtRate(1e-6, 100.0, scale_with_rate=True), 100.0)
    sweep = resolution_sweep(chain, Band(0.1), rates=(50.0, 400.0, 300.0))
    # 256 kHz / 300 Hz is not whole; the design's own 100 Hz is always there.
    assert [p.data_rate_hz for p in sweep.points] == [50.0, 100.0, 400.0]
    assert [r for r, _ in sweep.skipped] == [300.0]
    with pytest.raises(DesignError, match="rates"):
        resolution_sweep(invented_sar(), Band(1.0), rates=(10.0,))
    with pytest.raises(DesignError, match="rates"):
        resolution_sweep(chain, Band(0.1), rates=(-5.0,))


# ------------------------------------------------------------------ the white-noise law


def test_white_adc_noise_scales_as_the_root_of_the_rate():
    # σ(r) = σ0·√(r/r0): white noise power is proportional to the noise bandwidth,
    # itself proportional to ODR (DOMAIN §5; Schreier & Temes, ch. 1). With the
    # converter dominating, noise-free bits fall by ½ per doubling.
    sigma0, r0 = 1e-6, 100.0
    chain = invented_delta_sigma(NoiseAtRate(sigma0, r0, scale_with_rate=True), r0)
    sweep = resolution_sweep(chain, Band(0.1))
    for p in sweep.points:
        assert adc_rms(p) == pytest.approx(sigma0 * math.sqrt(p.data_rate_hz / r0), rel=1e-12)
    bits = sweep.noise_free_bits
    assert np.allclose(np.diff(np.log2(sweep.data_rates_hz)), 1.0)
    # The analog terms (1 Ω, 1 Ω RC: about 0.1 nV rms) and quantisation add well
    # under 1e-4 of the converter's power, so the steps are ½ bit within 1e-3.
    np.testing.assert_allclose(np.diff(bits), -0.5, atol=1e-3)


def test_input_density_is_integrated_over_each_rates_sinc3():
    # ENBW of a sinc3 decimator by R at modulator rate fs: (fs/2)·Σh² with h the
    # triple convolution of a length-R box of height 1/R (Parseval's theorem,
    # Oppenheim & Schafer, Discrete-Time Signal Processing, 3rd ed., §2.9), ≈ 0.275·ODR.
    density, f_low = 20e-9, 0.1
    chain = invented_delta_sigma(InputNoiseDensity(NoiseDensity(density)), 1000.0)
    sweep = resolution_sweep(chain, Band(f_low), rates=(250.0, 500.0, 2000.0, 4000.0))
    assert [p.data_rate_hz for p in sweep.points] == [250.0, 500.0, 1000.0, 2000.0, 4000.0]
    for p in sweep.points:
        length = round(FS / p.data_rate_hz)
        box = np.full(length, 1.0 / length)
        h = np.convolve(np.convolve(box, box), box)
        enbw = FS / 2 * float(np.sum(h**2))
        assert enbw == pytest.approx(0.275 * p.data_rate_hz, rel=1e-2)
        # The budget integrates from f_L, hence enbw − f_L; 1e-5 covers its grid.
        assert adc_rms(p) == pytest.approx(density * math.sqrt(enbw - f_low), rel=1e-5)
    np.testing.assert_allclose(np.diff(sweep.noise_free_bits), -0.5, atol=2e-3)


# ------------------------------------------------------------------ later stages, skips


def test_a_post_average_keeps_its_length_at_each_rate():
    # Var(mean of N) = σ²/N for independent samples; after a sinc3 the decimator's
    # outputs are correlated, which the budget's post factor counts. The average
    # keeps N = 4, so every output rate is the converter's rate over 4.
    chain = invented_delta_sigma(
        NoiseAtRate(1e-6, 100.0, scale_with_rate=True),
        100.0,
        post=(lambda r: SincFilter(1, 4, r),),
    )
    sweep = resolution_sweep(chain, Band(0.1), rates=(50.0, 200.0))
    assert sweep.current_count == 4
    for p in sweep.points:
        assert p.averaging_count == 4
        assert p.output_rate_hz == pytest.approx(p.data_rate_hz / 4, rel=1e-12)
    assert sweep.post_stage_count == 1


def test_a_band_limit_that_no_longer_fits_leaves_the_rate_out():
    # A band limit at 20 Hz needs a rate of at least 40 Hz (the sampling theorem).
    chain = invented_delta_sigma(
        NoiseAtRate(1e-6, 100.0, scale_with_rate=True),
        100.0,
        post=(lambda r: IdealLowpass(20.0, r),),
    )
    sweep = resolution_sweep(chain, Band(0.1), rates=(25.0, 50.0, 200.0))
    assert [p.data_rate_hz for p in sweep.points] == [50.0, 100.0, 200.0]
    assert len(sweep.skipped) == 1
    rate, why = sweep.skipped[0]
    assert rate == 25.0 and "band limit at 20.0 Hz" in why


def test_rates_below_twice_the_band_top_are_kept_and_marked():
    chain = invented_delta_sigma(INVENTED_TABLE, 10.0)
    sweep = resolution_sweep(chain, Band(0.01, 2.0))
    # Twice the 2 Hz band top is 4 Hz: 2.5 Hz no longer passes the band (sampling theorem).
    marks = {p.data_rate_hz: p.passes_band for p in sweep.points}
    assert marks == {2.5: False, 5.0: True, 10.0: True, 20.0: True, 40.0: True, 80.0: True}


def test_averaging_sweep_keeps_counts_below_the_band_and_marks_them():
    sar = invented_sar()
    sweep = resolution_sweep(sar, Band(1.0, 5e3), counts=(1, 4, 16))
    # 100 kHz / 16 = 6.25 kHz is under 2 × 5 kHz.
    assert [(p.averaging_count, p.passes_band) for p in sweep.points] == [
        (1, True),
        (4, True),
        (16, False),
    ]


def test_required_line_is_where_the_verdict_changes_in_a_rate_sweep():
    # log2(S/(k_pp·σ_allowed)): noise-free bits = log2(S/(k_pp·σ)) (DOMAIN §6), so a
    # point meets exactly when its bits reach the line.
    chain = invented_delta_sigma(NoiseAtRate(1e-6, 100.0, scale_with_rate=True), 100.0)
    requirement = Requirement(span_v=10e-3, noise_free_counts=1000, interference_rms_v=1e-7)
    sweep = resolution_sweep(chain, Band(0.1), requirement)
    k = peak_to_peak_factor(0.999)
    assert sweep.k_pp == pytest.approx(k, rel=1e-12)
    expected = math.log2(10e-3 / (k * requirement.allowed_noise_rms_v))
    assert sweep.required_noise_free_bits == pytest.approx(expected, rel=1e-12)
    verdicts = {p.meets_requirement for p in sweep.points}
    assert verdicts == {True, False}
    for p in sweep.points:
        assert p.meets_requirement == (p.noise_free_bits >= sweep.required_noise_free_bits)


# ------------------------------------------------------------------ the figure


def design_of(chain: Chain, band: Band, counts: float = 1000.0) -> Design:
    """An INVENTED design around a chain."""
    return Design(
        meta=Meta(title="Invented sweep design"),
        requirement=Requirement(span_v=chain.sensor.span_v, noise_free_counts=counts),
        band=band,
        sensor=chain.sensor,
        stages=chain.stages,
        adc=chain.adc,
        reference=chain.reference,
        digital=chain.digital,
        temperature_k=chain.temperature_k,
    )


def resolution_figure(design: Design):
    budget = forward_budget(design.chain(), design.band, requirement=design.requirement)
    return budget, make_figures(design, budget)["resolution_vs_rate"]


def test_figure_of_a_table_sweep_names_skips_band_and_coverage():
    design = design_of(invented_delta_sigma(INVENTED_TABLE, 10.0), Band(0.01, 2.0))
    budget, fig = resolution_figure(design)
    text = caption(fig)
    assert "full forward budget" in text and "not a scaled estimate" in text
    assert "noise table" in text
    assert "Left out (decimation ratio" in text and "3.00 Hz" in text and "70.0 Hz" in text
    assert "no longer pass the signal band" in text and "4.00 Hz" in text
    assert "k_pp = 6.58" in text and "99.9 %" in text
    assert "interference allowance" in text
    (ax,) = fig.axes
    assert ax.get_xscale() == "log"
    assert ax.get_xlabel() == "output data rate"
    assert "(bits)" in ax.get_ylabel()
    # One hollow marker (2.5 Hz), the design's diamond at its own point.
    hollow = [line for line in ax.lines if line.get_markerfacecolor() == "white"]
    assert len(hollow) == 1 and list(hollow[0].get_xdata()) == [2.5]
    diamond = [line for line in ax.lines if line.get_marker() == "D"]
    assert len(diamond) == 1
    assert list(diamond[0].get_xdata()) == [budget.output_rate_hz]
    assert list(diamond[0].get_ydata()) == [budget.noise_free_bits]


def test_figure_of_an_averaging_sweep_says_why_the_rate_is_not_swept():
    design = design_of(invented_sar(), Band(1.0, 5e3))
    budget = forward_budget(design.chain(), design.band, requirement=design.requirement)
    fig = make_figures(design, budget, sweep_counts=(1, 4, 16))["resolution_vs_rate"]
    text = caption(fig)
    assert "N output samples averaged" in text and "SAR" in text
    assert "no longer pass the signal band" in text
