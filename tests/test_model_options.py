"""Model options of the Python API and the design file.

- A converter figure stated without quantisation gets q/√12 added (Bennett,
  "Spectra of quantized signals", Bell Syst. Tech. J. 27, 1948); with it, nothing.
Chains are INVENTED (tests/invented.py); the design text is the embedded
hive-scale example (invented).
"""

from __future__ import annotations

import math
from dataclasses import replace

import pytest
from invented import invented_bridge_chain

from resplan import Band, NoiseAtRate, NoiseTable, forward_budget
from resplan.designfile.examples import example_text
from resplan.designfile.load import check_design, loads_design
from resplan.errors import DesignErrors


def _with_noise(noise):
    chain = invented_bridge_chain()
    return replace(chain, adc=replace(chain.adc, noise=noise))


@pytest.mark.parametrize(
    "make",
    [
        lambda q: NoiseAtRate(0.2e-6, 10.0, includes_quantisation=q),
        lambda q: NoiseTable(((10.0, 0.2e-6),), includes_quantisation=q),
    ],
)
def test_a_figure_without_quantisation_gets_q_over_root_12(make):
    with_q = forward_budget(_with_noise(make(True)), Band(0.1, 10.0))
    without = forward_budget(_with_noise(make(False)), Band(0.1, 10.0))
    assert "adc.quantisation" not in with_q
    q = without["adc.quantisation"]
    lsb = invented_bridge_chain().adc.full_scale_range_v / 2 ** invented_bridge_chain().adc.bits
    assert q.adc_rms_v == pytest.approx(lsb / math.sqrt(12), rel=1e-12)  # Bennett 1948
    assert without["adc.noise"].adc_rms_v == with_q["adc.noise"].adc_rms_v
    assert without.total_rms_v**2 == pytest.approx(with_q.total_rms_v**2 + q.rms_v**2, rel=1e-12)


def _hive(extra: str) -> str:
    text = example_text("hive-scale")
    return text.replace("[adc]\n", "[adc]\n" + extra + "\n", 1)


def test_design_file_states_a_figure_without_quantisation():
    base = check_design(loads_design(example_text("hive-scale"), "h.toml"))
    noise = loads_design(_hive("noise_includes_quantisation = false"), "h.toml").chain().adc.noise
    assert noise.includes_quantisation is False
    other = check_design(loads_design(_hive("noise_includes_quantisation = false"), "h.toml"))
    assert "adc.quantisation" in other and "adc.quantisation" not in base


def test_design_file_refuses_it_with_a_figure_that_holds_quantisation_by_definition():
    # An SNR holds quantisation by definition (IEEE Std 1241): the option is refused with it.
    import re

    text = _hive("noise_includes_quantisation = true")
    text = re.sub(r"(?ms)^noise_table = \[.*?^\]\nnoise_gain = 128\n", 'snr = "100 dB"\n', text)
    assert "noise_table" not in text
    with pytest.raises(DesignErrors) as info:
        loads_design(text, "h.toml")
    assert "adc.noise_includes_quantisation" in str(info.value)


# --- a sensor and a requirement in engineering units ------------------------------------------


def test_sensor_and_requirement_from_engineering_units_match_the_design_file():
    # The embedded hive-scale example (invented): 2 mV/V × 5 V, 10 g out of 200 kg, 99.9 %,
    # 20 nV interference. The API path must give the design file's numbers exactly.
    from resplan import Requirement, Sensor

    design = loads_design(example_text("hive-scale"), "h.toml")
    sensor = Sensor.from_sensitivity("2 mV/V", "5 V", 350.0, capacity="200 kg")
    assert sensor.span_v == design.chain().sensor.span_v
    req = Requirement.from_resolution(sensor, "10 g", coverage=0.999, interference_rms_v=20e-9)
    want = design.requirement
    assert req.noise_free_counts == pytest.approx(want.noise_free_counts, rel=1e-15)
    assert req.engineering_unit == want.engineering_unit == "g"
    assert req.engineering_per_volt == pytest.approx(want.engineering_per_volt, rel=1e-15)
    assert req.allowed_total_rms_v == pytest.approx(want.allowed_total_rms_v, rel=1e-15)


def test_span_is_sensitivity_times_excitation():
    # 2 mV/V at 5 V = 10 mV (definition of a ratiometric sensitivity).
    from resplan import Sensor

    s = Sensor.from_sensitivity(2e-3, 5.0, 350.0)
    assert s.span_v == pytest.approx(10e-3, rel=1e-15)
    assert s.capacity is None


@pytest.mark.parametrize(
    "capacity, resolution, field",
    [
        ("200 kg", "1 m", "resolution"),
        ("200 kg", "300 kg", "resolution"),
        ("-1 kg", "1 g", "capacity"),
    ],
)
def test_engineering_units_refused_with_the_field(capacity, resolution, field):
    from resplan import Requirement
    from resplan.errors import DesignError

    with pytest.raises(DesignError) as info:
        Requirement.from_resolution(10e-3, resolution, capacity)
    assert info.value.field == field


# --- an ideal band limit at a delta-sigma converter's output rate ----------------------------


def _ideal_band_chain(cutoff_hz: float, odr_hz: float = 20.0):
    """INVENTED: 1 kΩ source → RC (1 kΩ, 100 nF) → delta-sigma, 0.2 µV rms at 20 SPS, and an
    ideal band limit at its output with no model of its decimator."""
    from resplan import ADC, Chain, DigitalPath, IdealLowpass, RCFilter, Sensor

    return Chain(
        Sensor(10e-3, 1e3, name="invented source"),
        (RCFilter("invented RC", 1e3, 100e-9),),
        ADC(
            "invented converter",
            "delta-sigma",
            24,
            5.0,
            256e3,
            NoiseAtRate(0.2e-6, odr_hz),
            data_rate_hz=odr_hz,
        ),
        digital=DigitalPath((IdealLowpass(cutoff_hz, odr_hz),)),
    )


@pytest.mark.parametrize("cutoff", [10.0, 5.0])
def test_an_ideal_band_after_the_converter_output(cutoff):
    from scipy import constants

    chain = _ideal_band_chain(cutoff)
    assert chain.output_rate_hz == 20.0
    budget = forward_budget(chain, Band(0.1, cutoff))
    # The converter's figure at 20 SPS holds its noise over 0 … ODR/2 (taken flat); an ideal
    # band to f_c keeps f_c/(ODR/2) of its power.
    assert budget["adc.noise"].adc_rms_v == pytest.approx(
        0.2e-6 * math.sqrt(cutoff / 10.0), rel=1e-6
    )
    # The source's thermal noise 4kTR through the RC's pole f_p = 1/(2π(R_s + R)C), over
    # 0.1 Hz … f_c: ∫ df/(1 + (f/f_p)²) = f_p·(atan(f_c/f_p) − atan(0.1/f_p)) (standard
    # integral). Images near multiples of 256 kHz add ~1e-4 through the pole: rel 5e-4.
    fp = 1.0 / (2 * math.pi * 2e3 * 100e-9)
    enbw = fp * (math.atan(cutoff / fp) - math.atan(0.1 / fp))
    want = math.sqrt(4 * constants.k * chain.temperature_k * 1e3 * enbw)
    assert budget["sensor.thermal"].rms_v == pytest.approx(want, rel=5e-4)


def test_a_band_at_the_output_rate_with_a_sinc_after_it_is_still_refused():
    from resplan import ADC, Chain, DigitalPath, IdealLowpass, RCFilter, Sensor, SincFilter
    from resplan.errors import DesignError

    with pytest.raises(DesignError) as info:
        Chain(
            Sensor(10e-3, 1e3),
            (RCFilter("invented RC", 1e3, 100e-9),),
            ADC(
                "invented",
                "delta-sigma",
                24,
                5.0,
                256e3,
                NoiseAtRate(0.2e-6, 20.0),
                data_rate_hz=20.0,
            ),
            digital=DigitalPath((IdealLowpass(10.0, 20.0), SincFilter(1, 2, 20.0))),
        )
    assert info.value.field.startswith("digital_filter")
