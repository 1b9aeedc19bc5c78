"""Curves for figures (resplan.output.spectra) and the figures themselves (resplan.output.figures).

The curves are checked against closed forms and theorems from outside the
project (named beside each check); the figures are checked for what a reader
needs: every complete embedded example draws, axes carry units, files are
written at the resolution asked for. Every chain built here is INVENTED.
"""

from __future__ import annotations

import math
import struct

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
from resplan.chain.signal_chain import Chain
from resplan.designfile.examples import EXAMPLE_NAMES, load_example
from resplan.errors import DesignError
from resplan.noise.physics import BOLTZMANN_J_PER_K
from resplan.output.figures import (
    DEFAULT_DPI,
    FIGURE_TITLES,
    OKABE_ITO,
    caption,
    make_figures,
    save_figures,
)
from resplan.output.spectra import cumulative_noise, noise_spectra, resolution_sweep

#: Sweep counts kept short so the tests stay fast.
FEW_COUNTS = (1, 2, 4)


def invented_rc_chain(**overrides) -> Chain:
    """INVENTED: 10 kΩ source → RC (1 kΩ, 100 nF: 145 Hz with the source) → 16-bit SAR, 1 MHz."""
    defaults = dict(
        sensor=Sensor(span_v=1.0, resistance_ohm=10e3, name="invented source"),
        stages=(RCFilter("invented RC", 1e3, 100e-9),),
        adc=ADC("invented SAR", "sar", 16, 5.0, 1e6, TransitionNoise(0.5)),
    )
    return Chain(**{**defaults, **overrides})


def invented_quiet_sar_chain(digital=None) -> Chain:
    """INVENTED: 1 Ω source so that the ADC's own noise dominates; 12-bit SAR at 100 kHz."""
    return Chain(
        sensor=Sensor(span_v=4.0, resistance_ohm=1.0, name="invented low-impedance source"),
        stages=(RCFilter("invented RC", 10.0, 1e-6),),
        adc=ADC("invented SAR", "sar", 12, 5.0, 100e3, TransitionNoise(2.0)),
        digital=digital,
    )


def invented_delta_sigma_chain() -> Chain:
    """INVENTED: 350 Ω bridge → RC at 1.6 kHz → delta-sigma, sinc3 from 256 kHz to 100 Hz."""
    rate = 256_000.0
    return Chain(
        sensor=Sensor(span_v=10e-3, resistance_ohm=350.0, name="invented bridge"),
        stages=(RCFilter("invented RC", 1e3, 100e-9),),
        adc=ADC(
            "invented delta-sigma",
            "delta-sigma",
            24,
            5.0,
            rate,
            NoiseAtRate(1e-6, 100.0),
            data_rate_hz=100.0,
        ),
        digital=DigitalPath((SincFilter(3, 2560, rate),)),
    )


# ----------------------------------------------------------------------------- spectra


def test_cumulative_of_rc_filtered_thermal_noise_follows_the_arctangent():
    # ∫ e² / (1 + (f/f_c)²) df = e²·f_c·atan(f/f_c) (standard integral, e.g.
    # Gradshteyn & Ryzhik 2.141); e² = 4kTR (Johnson 1928, Nyquist 1928).
    chain = invented_rc_chain()
    budget = forward_budget(chain, Band(0.01))
    spectra = noise_spectra(chain, budget)
    source = next(c for c in spectra.contributors if c.stage == "invented source")
    fc = chain.stage_responses(0)[0].cutoff_hz  # the RC pole with the source in series
    e2 = 4 * BOLTZMANN_J_PER_K * chain.temperature_k * 10e3
    f = spectra.edges_hz[1:]
    expected = e2 * fc * (np.arctan(f / fc) - np.arctan(0.01 / fc))
    # Midpoint rule on a 4000-point logarithmic grid: error far below 1e-4.
    np.testing.assert_allclose(np.cumsum(source.bin_power_v2), expected, rtol=1e-4)


def test_unfolded_tail_of_rc_noise_is_the_final_step():
    # Without a digital filter the budget integrates to infinity; the plotted axis
    # stops at 100 f_c. The missing tail is e²·f_c·(π/2 − atan(100)) for each RC-shaped
    # density source (same standard integral), and the final step carries exactly it.
    # A noiseless 24-bit converter keeps the tail above the 0.1 % the curve may round off.
    chain = invented_rc_chain(
        sensor=Sensor(span_v=1.0, resistance_ohm=10.0, name="invented source"),
        adc=ADC("invented SAR", "sar", 24, 5.0, 1e6, TransitionNoise(0.0)),
    )
    budget = forward_budget(chain, Band(0.01))
    spectra = noise_spectra(chain, budget)
    cumulative = cumulative_noise(spectra, budget)
    fc = chain.stage_responses(0)[0].cutoff_hz  # the RC pole with the source in series
    top = spectra.f_top_hz
    tail = 0.0
    for c in budget.contributions:
        if c.density_v_per_rthz is not None:
            tail += c.density_v_per_rthz**2 * fc * (math.pi / 2 - math.atan(top / fc))
    assert cumulative.remainder_rms_v == pytest.approx(math.sqrt(tail), rel=2e-3)
    assert math.hypot(cumulative.plotted_rms_v, cumulative.remainder_rms_v) == pytest.approx(
        budget.total_rms_v, rel=1e-12
    )


def test_sinc_response_on_the_plotting_grid_integrates_to_parseval():
    # ∫₀^{f_s/2} |H|² df = (f_s/2)·Σh² (Parseval's theorem, Oppenheim & Schafer,
    # Discrete-Time Signal Processing, 3rd ed., §2.9); the grid starts at f_L, where
    # |H|² is 1 to within 1e-9, so f_L is subtracted.
    chain = invented_delta_sigma_chain()
    budget = forward_budget(chain, Band(0.01))
    spectra = noise_spectra(chain, budget)
    sinc = chain.digital.stages[0]
    integral = float(np.sum(spectra.digital_power_gain * spectra.widths_hz))
    assert integral == pytest.approx(sinc.noise_bandwidth_hz() - 0.01, rel=2e-3)


def test_quoted_terms_are_drawn_with_exactly_their_rms():
    # A white sequence of variance σ² at rate r has one-sided density σ²/(r/2) over
    # 0 … r/2 (Parseval, as above): the flat curve integrates back to σ.
    chain = invented_delta_sigma_chain()
    budget = forward_budget(chain, Band(0.01))
    spectra = noise_spectra(chain, budget)
    quoted = [c for c in spectra.contributors if c.quoted]
    assert quoted
    for c in quoted:
        assert c.plotted_rms_v == pytest.approx(c.rms_v, rel=1e-12)
        assert np.all(c.bin_power_v2[spectra.edges_hz[:-1] >= spectra.quoted_top_hz] == 0)


def test_quoted_terms_follow_the_digital_stages_after_the_converter():
    # The converter's white noise at rate r passes the band limit after it; none of it
    # is left above the limit, and it still integrates to the budget's rms (Parseval).
    rate = 100e3
    chain = invented_quiet_sar_chain(DigitalPath((IdealLowpass(1e3, rate),)))
    budget = forward_budget(chain, Band(1.0))
    spectra = noise_spectra(chain, budget)
    for c in (c for c in spectra.contributors if c.quoted):
        assert c.plotted_rms_v == pytest.approx(c.rms_v, rel=1e-12)
        assert np.all(c.bin_power_v2[spectra.edges_hz[:-1] > 1e3 * 1.001] == 0)


def test_cumulative_curve_ends_at_the_budget_total_with_aliases_as_the_last_step():
    chain = invented_delta_sigma_chain()
    budget = forward_budget(chain, Band(0.01))
    spectra = noise_spectra(chain, budget)
    cumulative = cumulative_noise(spectra, budget)
    # Folding only adds power (|H|² ≥ 0), so no source shows more on the unfolded axis.
    for c in spectra.contributors:
        assert c.plotted_rms_v <= c.rms_v * (1 + 1e-3)
    assert np.all(np.diff(cumulative.rms_v) >= 0)
    end = math.hypot(cumulative.plotted_rms_v, cumulative.remainder_rms_v)
    assert end == pytest.approx(budget.total_rms_v, rel=1e-9)
    assert cumulative.scale == pytest.approx(1.0, abs=1e-3)
    assert "budget's total" in cumulative.caption


def test_averaging_n_samples_lowers_white_adc_noise_by_root_n():
    # Var(mean of N independent samples) = σ²/N (any statistics text); with the ADC's
    # own white noise dominating, the total falls by √N and noise-free bits rise by
    # ½·log2 N.
    chain = invented_quiet_sar_chain()
    sweep = resolution_sweep(chain, Band(1.0), counts=(1, 4, 16))
    by_count = {p.averaging_count: p for p in sweep.points}
    assert set(by_count) == {1, 4, 16}
    for n in (4, 16):
        ratio = by_count[1].total_rms_v / by_count[n].total_rms_v
        assert ratio == pytest.approx(math.sqrt(n), rel=2e-3)
        gain_bits = by_count[n].noise_free_bits - by_count[1].noise_free_bits
        assert gain_bits == pytest.approx(0.5 * math.log2(n), abs=2e-3)
        assert by_count[n].output_rate_hz == pytest.approx(100e3 / n)


def test_sweep_replaces_an_existing_average_and_moves_later_stages():
    rate = 100e3
    chain = invented_quiet_sar_chain(
        DigitalPath((SincFilter(1, 4, rate), IdealLowpass(1e3, rate / 4)))
    )
    sweep = resolution_sweep(chain, Band(1.0), counts=(1, 4, 8, 64))
    assert sweep.current_count == 4
    counts = [p.averaging_count for p in sweep.points]
    assert counts == [1, 4, 8]
    # N = 64 gives 1.5625 kHz, too slow for a 1 kHz band limit: left out, with the reason.
    assert [n for n, _ in sweep.skipped] == [64]
    own = forward_budget(chain, Band(1.0))
    assert sweep.points[1].total_rms_v == own.total_rms_v


def test_sweep_keeps_rates_below_the_signal_band_and_marks_them():
    # 100 Hz / 4 = 25 Hz is under twice the 20 Hz band top (the sampling theorem):
    # kept, marked as no longer passing the band.
    chain = invented_delta_sigma_chain()
    sweep = resolution_sweep(chain, Band(0.01, 20.0), counts=(1, 2, 4))
    assert [p.averaging_count for p in sweep.points] == [1, 2, 4]
    assert [p.passes_band for p in sweep.points] == [True, True, False]
    assert sweep.skipped == ()


def test_sweep_required_line_is_where_the_verdict_changes():
    chain = invented_quiet_sar_chain()
    requirement = Requirement(span_v=4.0, noise_free_counts=300, interference_rms_v=1e-4)
    sweep = resolution_sweep(chain, Band(1.0), requirement, counts=(1, 2, 4, 8, 16, 32))
    for p in sweep.points:
        assert p.meets_requirement == (p.noise_free_bits >= sweep.required_noise_free_bits)


def test_spectra_reject_bad_bins():
    chain = invented_rc_chain()
    budget = forward_budget(chain, Band(0.01))
    with pytest.raises(DesignError, match="bins"):
        noise_spectra(chain, budget, bins=3)


# ----------------------------------------------------------------------------- figures


def test_palette_is_the_okabe_ito_set():
    # M. Okabe and K. Ito, "Color Universal Design" (2008); hex values from memory.
    assert OKABE_ITO == {
        "black": "#000000",
        "orange": "#E69F00",
        "sky blue": "#56B4E9",
        "bluish green": "#009E73",
        "yellow": "#F0E442",
        "blue": "#0072B2",
        "vermillion": "#D55E00",
        "reddish purple": "#CC79A7",
    }


@pytest.fixture(scope="module")
def example_figures():
    out = {}
    for name in EXAMPLE_NAMES:
        design = load_example(name)
        if not design.is_complete:
            continue
        budget = forward_budget(design.chain(), design.band, requirement=design.requirement)
        out[name] = make_figures(design, budget, sweep_counts=FEW_COUNTS)
    return out


def test_every_complete_example_draws_every_budget_figure(example_figures):
    assert example_figures, "no complete embedded example"
    budget_figures = {"noise_density", "cumulative_noise", "contributions", "resolution_vs_rate"}
    for name, figs in example_figures.items():
        assert set(figs) == budget_figures, name
        for fig_name, fig in figs.items():
            assert caption(fig), (name, fig_name)
            texts = [t.get_text() for t in fig.texts]
            assert FIGURE_TITLES[fig_name] in texts


def test_axes_are_labelled_with_units(example_figures):
    figs = next(iter(example_figures.values()))
    density = figs["noise_density"].axes
    assert density[0].get_xlabel() == "frequency"
    assert "(V/√Hz)" in density[0].get_ylabel()
    assert density[0].get_xscale() == density[0].get_yscale() == "log"
    assert "(dB)" in density[1].get_ylabel()
    assert "V)" in figs["cumulative_noise"].axes[0].get_ylabel()
    assert "(%)" in figs["contributions"].axes[0].get_xlabel()
    assert figs["resolution_vs_rate"].axes[0].get_xlabel() == "output data rate"
    assert "(bits)" in figs["resolution_vs_rate"].axes[0].get_ylabel()


def test_figures_need_no_budget_for_an_open_design():
    design = load_example("kickoff-bridge")
    assert not design.is_complete
    assert make_figures(design, None) == {}


def _png_size(data: bytes) -> tuple[int, int]:
    # PNG: 8-byte signature, then the IHDR chunk with width and height
    # (ISO/IEC 15948, PNG specification, §11.2.2).
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    return struct.unpack(">II", data[16:24])


def test_saved_figures_are_png_at_the_resolution_asked_for_and_svg(tmp_path, example_figures):
    figs = next(iter(example_figures.values()))
    one = {"contributions": figs["contributions"]}
    written = save_figures(one, tmp_path / "figs", dpi=60)
    assert sorted(p.name for p in written) == ["contributions.png", "contributions.svg"]
    width, height = _png_size(written[0].read_bytes())
    w_in, h_in = one["contributions"].get_size_inches()
    assert abs(width - w_in * 60) < 1 and abs(height - h_in * 60) < 1
    assert written[1].read_text(encoding="utf-8").lstrip().startswith("<?xml")
    assert not [p for p in (tmp_path / "figs").iterdir() if p.name.startswith(".")]
    assert DEFAULT_DPI >= 200


def test_save_figures_refuses_a_file_as_folder_and_a_low_dpi(tmp_path):
    blocker = tmp_path / "figs"
    blocker.write_text("not a folder")
    with pytest.raises(DesignError, match="figures"):
        save_figures({}, blocker)
    with pytest.raises(DesignError, match="dpi"):
        save_figures({}, tmp_path / "other", dpi=10)


def test_allocation_figure_for_a_plan_with_open_parts():
    plan_module = pytest.importorskip("resplan.plan.allocation")
    design = load_example("kickoff-bridge")
    plan = plan_module.plan_design(design)
    figs = make_figures(design, None, plan)
    if plan.allocations:
        assert set(figs) == {"allocation"}
        assert "V)" in figs["allocation"].axes[0].get_xlabel()


def test_frequency_ticks_carry_engineering_prefixes():
    # Numbers written one way everywhere: "10 kHz", "1 MHz", never "1e+03 k" or "10⁴".
    from resplan.designfile.examples import load_example
    from resplan.output.figures import make_figures

    design = load_example("pipeline-vibration")
    budget = forward_budget(design.chain(), design.band, requirement=design.requirement)
    figs = make_figures(design, budget, sweep_counts=(1, 2))
    for name in ("noise_density", "cumulative_noise", "resolution_vs_rate"):
        ax = figs[name].axes[0]
        figs[name].canvas.draw()
        labels = [t.get_text() for t in ax.get_xticklabels() if t.get_text()]
        assert labels, name
        for text in labels:
            assert text.endswith("Hz") and "e+" not in text and "10^" not in text, (name, text)
