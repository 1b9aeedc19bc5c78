"""Design-file loading: valid forms, every refusal as one clean line, and robustness.

All designs here are INVENTED (derived from the embedded invented examples).
Numeric checks name their outside source; arithmetic that follows from a
definition says so.
"""

from __future__ import annotations

import math
import re
import tomllib

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from resplan.chain.converter import (
    InputNoiseDensity,
    NoiseAtRate,
    NoiseTable,
    SnrNoise,
    TransitionNoise,
)
from resplan.chain.design import PART_KINDS, OpenPart
from resplan.chain.stages import ActiveFilter, IntegratedAmplifier, NonInvertingStage, RCFilter
from resplan.designfile.examples import EXAMPLE_NAMES, example_text
from resplan.designfile.load import (
    DesignFileError,
    check_design,
    design_from_mapping,
    design_schema,
    load_design,
    loads_design,
)
from resplan.errors import DesignError, DesignErrors, ResplanError
from resplan.noise.responses import IdealLowpass, SincFilter

HIVE = example_text("hive-scale")
SOIL = example_text("soil-temperature")
VIBRATION = example_text("pipeline-vibration")
KICKOFF = example_text("kickoff-bridge")


def edit(text: str, old: str, new: str, count: int = 1) -> str:
    """Replace ``old`` (which must be present) by ``new``."""
    assert text.count(old) == 1, f"{old!r} is not in the base design exactly once"
    return text.replace(old, new, count)


def problems(text: str) -> list[str]:
    """The problem lines a design text raises (it must raise)."""
    with pytest.raises(ResplanError) as info:
        loads_design(text, "d.toml")
    return str(info.value).splitlines()


# ---------------------------------------------------------------------------
# valid forms


def test_requirement_from_sensitivity_and_excitation():
    # Bridge full-scale output = sensitivity × excitation (definition of mV/V):
    # 2 mV/V × 5 V = 10 mV; 10 g of 200 kg = 20 000 counts.
    d = loads_design(HIVE, "hive.toml")
    assert d.requirement.span_v == pytest.approx(10e-3, rel=1e-12)
    assert d.sensor.span_v == d.requirement.span_v
    assert d.requirement.noise_free_counts == pytest.approx(20_000, rel=1e-12)
    assert d.requirement.engineering_unit == "g"
    # 200 000 g over 10 mV
    assert d.requirement.engineering_per_volt == pytest.approx(2e7, rel=1e-12)
    assert d.requirement.description == "10 g noise-free out of 200 kg at 99.9 % coverage"
    assert d.requirement.interference_rms_v == pytest.approx(20e-9)
    # T/K = t/°C + 273.15 (SI Brochure, 9th ed., 2.3.1)
    assert d.temperature_k == pytest.approx(303.15)
    assert d.source == "hive.toml" and len(d.sha256) == 64


@pytest.mark.parametrize(
    ("lines", "counts", "dr"),
    [
        # counts = 2^bits (definition)
        ("noise_free_bits = 14", 2.0**14, None),
        ("noise_free_counts = 5000", 5000, None),
        ('dynamic_range = "96 dB"', None, 96.0),
        # 200 kg / 0.5 kg = 400 counts; "0.5 kg" and "500 g" are the same mass
        ('resolution = "500 g"', 400, None),
        ('resolution = "0.5 kg"', 400, None),
    ],
)
def test_resolution_forms(lines, counts, dr):
    d = loads_design(edit(HIVE, 'resolution = "10 g"', lines), "d.toml")
    if counts is None:
        assert d.requirement.noise_free_counts is None
        assert d.requirement.dynamic_range_db == dr
    else:
        assert d.requirement.noise_free_counts == pytest.approx(counts, rel=1e-12)


def test_temperature_resolution_is_a_difference():
    # 0.01 degC out of a 70 degC range: 7000 counts. degC as a difference is 1 K
    # (SI Brochure, 9th ed., 2.3.1); an absolute reading would give nonsense.
    d = loads_design(SOIL, "soil.toml")
    assert d.requirement.noise_free_counts == pytest.approx(7000, rel=1e-9)
    assert d.requirement.engineering_unit == "degC"
    assert d.requirement.engineering_per_volt == pytest.approx(70 / 26.95e-3, rel=1e-9)
    assert d.sensor.temperature_k == pytest.approx(298.15)


def test_span_given_directly():
    text = edit(
        HIVE,
        'sensitivity = "2 mV/V"\nexcitation = "5 V"',
        'span = "10 mV"',
    )
    assert loads_design(text, "d.toml").requirement.span_v == pytest.approx(10e-3)


@pytest.mark.parametrize(
    ("input_range", "fsr_v"),
    [
        # FSR = V_ref unipolar, 2·V_ref for ±V_ref, divided by the gain (DOMAIN §5)
        ("unipolar", 5.0 / 128),
        ("bipolar", 10.0 / 128),
        ("differential", 10.0 / 128),
    ],
)
def test_full_scale_from_reference(input_range, fsr_v):
    text = edit(HIVE, 'input_range = "bipolar"', f'input_range = "{input_range}"')
    adc = loads_design(text, "d.toml").adc
    assert adc.full_scale_range_v == pytest.approx(fsr_v, rel=1e-12)
    assert adc.gain == 128


def test_explicit_full_scale_is_divided_by_gain():
    text = edit(HIVE, 'input_range = "bipolar"', 'full_scale_range = "5 V"')
    d = loads_design(text, "d.toml")
    assert d.adc.full_scale_range_v == pytest.approx(5.0 / 128, rel=1e-12)
    assert any("full_scale_range / gain" in n for n in d.notes)


#: The example's ADC noise (a table of invented rows), and one figure at its data rate.
ADC_NOISE = (
    'noise_table = [\n  ["2.5 Hz", "28 nV"],\n  ["5 Hz", "35 nV"],\n  ["10 Hz", "45 nV"],\n'
    '  ["20 Hz", "60 nV"],\n  ["40 Hz", "83 nV"],\n  ["80 Hz", "115 nV"],\n'
    '  ["160 Hz", "160 nV"],\n  ["320 Hz", "230 nV"],\n]\nnoise_gain = 128'
)
ONE_FIGURE = 'noise = "45 nV"\nnoise_data_rate = "10 Hz"\nnoise_gain = 128'


@pytest.mark.parametrize(
    ("lines", "kind", "check"),
    [
        (ONE_FIGURE, NoiseAtRate, lambda n: n.rms_v == pytest.approx(45e-9)),
        # a p-p figure divided by the stated factor: 297 nV / 6.6 = 45 nV
        (
            'noise_pp = "297 nV"\npp_factor = 6.6\nnoise_data_rate = "10 Hz"\nnoise_gain = 128',
            NoiseAtRate,
            lambda n: n.rms_v == pytest.approx(45e-9, rel=1e-12),
        ),
        (
            'noise_table = [["5 Hz", "32 nV"], ["10 Hz", "45 nV"]]\nnoise_gain = 128',
            NoiseTable,
            lambda n: n.rows[1] == pytest.approx((10.0, 45e-9)),
        ),
        (
            'noise_table_pp = [["10 Hz", "330 nV"]]\npp_factor = 6.6\nnoise_gain = 128',
            NoiseTable,
            lambda n: n.rows[0][1] == pytest.approx(50e-9, rel=1e-12),
        ),
        ('snr = "120 dB"', SnrNoise, lambda n: n.snr_db == 120.0),
        ("transition_noise = 0.8", TransitionNoise, lambda n: n.lsb_rms == 0.8),
        (
            'noise_density = "30 nV/√Hz"\nnoise_corner = "1 Hz"',
            InputNoiseDensity,
            lambda n: n.density.white == pytest.approx(30e-9) and n.density.corner_hz == 1.0,
        ),
    ],
)
def test_adc_noise_forms(lines, kind, check):
    d = loads_design(edit(HIVE, ADC_NOISE, lines), "d.toml")
    assert isinstance(d.adc.noise, kind)
    assert check(d.adc.noise)


def test_scale_with_rate_carries_the_figure():
    text = edit(
        HIVE,
        ADC_NOISE,
        ONE_FIGURE.replace('"10 Hz"', '"40 Hz"') + "\nscale_with_rate = true",
    )
    d = loads_design(text, "d.toml")
    budget = check_design(d)
    adc = next(c for c in budget.contributions if c.kind == "adc")
    # White noise scales as √(ODR/ODR_quoted): 45 nV × √(10/40) = 22.5 nV (common practice,
    # the white-noise assumption stated by the user)
    assert adc.adc_rms_v == pytest.approx(22.5e-9, rel=1e-9)


def test_digital_path_from_rates():
    d = loads_design(HIVE, "d.toml")
    (sinc,) = d.digital.stages
    # ratio = modulator rate / data rate = 64 kHz / 10 Hz
    assert sinc == SincFilter(3, 6400, 64_000.0)
    soil = loads_design(SOIL, "s.toml")
    assert soil.digital.stages == (SincFilter(1, 100, 1000.0),)
    vib = loads_design(VIBRATION, "v.toml")
    assert vib.digital.stages == (IdealLowpass(10_000.0, 200_000.0),)


def test_stage_types():
    soil = loads_design(SOIL, "s.toml")
    amp, rc = soil.stages
    assert isinstance(amp, NonInvertingStage) and amp.gain == pytest.approx(20.0)
    assert amp.en.white == pytest.approx(22e-9) and amp.in_plus.white == pytest.approx(0.2e-12)
    assert isinstance(rc, RCFilter) and rc.capacitance_f == pytest.approx(15e-9)
    vib = loads_design(VIBRATION, "v.toml")
    (flt,) = vib.stages
    assert isinstance(flt, ActiveFilter)
    assert (flt.response, flt.order, flt.cutoff_hz, flt.gain) == ("butterworth", 4, 20e3, 0.8)
    text = edit(
        HIVE,
        "[reference]",
        '[[stages]]\ntype = "amplifier"\nname = "PGA"\ngain = 4\nen = "10 nV/rtHz"\n'
        'en_corner = "1 Hz"\nen_out = "100 nV/rtHz"\nin = "1 pA/rtHz"\nbandwidth = "20 kHz"\n\n'
        "[reference]",
    )
    amp = loads_design(text, "d.toml").stages[1]
    assert isinstance(amp, IntegratedAmplifier)
    assert amp.output_noise.white == pytest.approx(100e-9)
    assert amp.current_noise.white == pytest.approx(1e-12)


def test_reference_noise_from_band_rms():
    # The density that integrates back to the stated rms over the band:
    # v² = e²(f_c ln(f_H/f_L) + f_H − f_L) (1/f + white; Motchenbacher & Connelly).
    text = edit(
        VIBRATION,
        'noise_density = "60 nV/√Hz"\nnoise_corner = "10 Hz"',
        'noise = "2 µV"\nnoise_band = ["0.1 Hz", "10 Hz"]\nnoise_corner = "10 Hz"',
    )
    ref = loads_design(text, "v.toml").reference
    e, fc = ref.noise.white, ref.noise.corner_hz
    assert math.sqrt(e**2 * (fc * math.log(10 / 0.1) + 9.9)) == pytest.approx(2e-6, rel=1e-12)


def test_open_parts_carry_known_fields_in_si():
    d = loads_design(KICKOFF, "k.toml")
    assert not d.is_complete
    parts = {p.field_path: p for p in d.open_parts}
    assert set(parts) == {"stages[0]", "reference", "adc"}
    for p in parts.values():
        assert isinstance(p, OpenPart) and set(p.known) <= set(PART_KINDS[p.kind])
    assert parts["stages[0]"].known == {"en_corner_hz": 1.0, "bandwidth_hz": 10e3}
    assert parts["stages[0]"].weight == 2
    assert isinstance(d.stages[1], RCFilter)
    assert parts["reference"].known == {"voltage_v": 2.5, "noise_corner_hz": 10.0}
    assert parts["adc"].known == {
        "architecture": "delta-sigma",
        "bits": 24,
        "full_scale_range_v": 5.0,
        "sample_rate_hz": 256e3,
        "data_rate_hz": 10.0,
    }
    assert d.digital.stages == (SincFilter(3, 25_600, 256e3),)
    assert d.weights == {"front end": 2, "reference": 1, "ADC": 1}
    with pytest.raises(DesignErrors) as info:
        d.chain()
    assert len(str(info.value).splitlines()) == 3


def test_open_adc_without_rates_has_no_digital_path():
    text = edit(KICKOFF, 'sample_rate = "256 kHz"\ndata_rate = "10 Hz"', "")
    text = edit(text, 'decimation = "sinc3"', "")
    assert loads_design(text, "k.toml").digital is None


def test_open_gain_from_resistors_and_rc_cutoff():
    text = edit(
        KICKOFF,
        'type = "amplifier"\nname = "front end"\nopen = true',
        'type = "noninverting"\nname = "front end"\nopen = true\nrf = "99 kohm"\nrg = "1 kohm"',
    )
    text = edit(text, 'bandwidth = "10 kHz"', 'gbw = "10 MHz"')
    text = edit(
        text,
        'name = "ADC input RC (invented)"',
        'name = "ADC input RC (invented)"\nopen = true',
    )
    d = loads_design(text, "k.toml")
    assert d.stages[0].known["gain"] == pytest.approx(100.0)
    assert d.stages[0].known["gbw_hz"] == pytest.approx(10e6)
    # f_c = 1/(2πRC) (single-pole RC): 1 kΩ, 100 nF
    assert d.stages[1].known["cutoff_hz"] == pytest.approx(1 / (2 * math.pi * 1e-4), rel=1e-12)
    assert d.stages[1].known["response"] == "rc"


def test_weights_may_name_a_part_by_its_table():
    text = edit(KICKOFF, "reference = 1, ADC = 1", "reference = 1, adc = 3")
    assert loads_design(text, "k.toml").weights == {"front end": 2, "reference": 1, "ADC": 3}


def test_alias_interferer():
    d = loads_design(VIBRATION, "v.toml")
    assert d.alias_interferer == pytest.approx((190e3, 20e-3))


def test_data_rate_sets_band_top_when_not_stated():
    d = loads_design(SOIL, "s.toml")
    assert d.band.f_high_hz == pytest.approx(5.0)
    assert any("half the output data rate" in n for n in d.notes)


def test_toml_dates_are_kept_as_text():
    d = loads_design(edit(HIVE, 'date = "2024-05-01"', "date = 2024-05-01"), "d.toml")
    assert d.meta.date == "2024-05-01"


# ---------------------------------------------------------------------------
# refusals: one clean line per problem, naming file, field, value and expectation

# fmt: off
INVALID = [
    # (description, base, old, new, field path, fragment of the message)
    ("wrong unit", HIVE, 'resistance = "2 kohm"', 'resistance = "2 kV"',
     "stages[0].resistance", "kV is a voltage"),
    ("density as a voltage", SOIL, '"22 nV/√Hz"', '"22 nV"',
     "stages[0].en", "voltage noise density"),
    ("missing field", SOIL, 'en = "22 nV/√Hz"', "", "stages[0].en", "missing"),
    ("missing table", HIVE, "[sensor]", "[sensr]", "sensor", "missing"),
    ("unknown key", SOIL, 'gbw = "1.5 MHz"', 'gwb = "1.5 MHz"',
     "stages[0].gwb", 'did you mean "gbw"'),
    ("unknown table", HIVE, "\n[digital]", "\n[digitl]", "digitl", 'did you mean "digital"'),
    ("unknown stage type", HIVE, '"rc_filter"', '"rc-filter"',
     "stages[0].type", 'did you mean "rc_filter"'),
    ("negative value", HIVE, '"350 ohm"', '"-350 ohm"', "sensor.resistance", "> 0"),
    ("zero capacitance", HIVE, '"10 nF"', '"0 nF"', "stages[0].capacitance", "> 0"),
    ("number without unit", HIVE, '"350 ohm"', "350", "sensor.resistance", "a unit is required"),
    ("text for a boolean", HIVE, "bipolar = false", 'bipolar = "no"',
     "sensor.bipolar", "true or false"),
    ("bits not whole", HIVE, "bits = 24", "bits = 24.5", "adc.bits", "whole number"),
    ("bits out of range", HIVE, "bits = 24", "bits = 40", "adc.bits", "1 to 32"),
    ("architecture", HIVE, '"delta-sigma"', '"delta sigma"', "adc.architecture", "did you mean"),
    ("p-p without factor", HIVE, ADC_NOISE,
     ONE_FIGURE.replace('noise = "45 nV"', 'noise_pp = "297 nV"'),
     "adc.pp_factor", "refused without it"),
    ("p-p in an rms field", HIVE, ADC_NOISE, ONE_FIGURE.replace('"45 nV"', '"297 nVpp"'),
     "adc.noise", "297 nVpp"),
    ("ratio not integer", HIVE, '"64 kHz"', '"64.0005 kHz"',
     "digital.decimation", "whole decimation ratio"),
    ("noise at another data rate", HIVE, ADC_NOISE, ONE_FIGURE.replace('"10 Hz"', '"20 Hz"'),
     "adc.noise_data_rate", "scale_with_rate"),
    ("noise at another gain", HIVE, "noise_gain = 128", "noise_gain = 64", "adc.noise_gain", "128"),
    ("noise gain not stated", HIVE, "noise_gain = 128", "", "adc.noise_gain", "quoted at"),
    ("two noise forms", HIVE, ADC_NOISE, ADC_NOISE + '\nsnr = "100 dB"',
     "adc.snr", "exactly one"),
    ("no noise form", HIVE, ADC_NOISE, "noise_gain = 128", "adc.noise", "exactly one noise figure"),
    ("table row missing", HIVE, ADC_NOISE.split("\nnoise_gain")[0],
     'noise_table = [["20 Hz", "60 nV"]]', "adc.noise_table", "listed in the table"),
    ("snr at another rate", VIBRATION, 'snr_sample_rate = "200 kHz"', 'snr_sample_rate = "1 MHz"',
     "adc.snr_sample_rate", "200 kHz"),
    ("delta-sigma without decimation", HIVE, 'decimation = "sinc3"', "",
     "digital.decimation", "sinc3"),
    ("SAR with decimation", SOIL, "average = 100", 'average = 100\ndecimation = "sinc3"',
     "digital.decimation", "SAR"),
    ("band limit above Nyquist", VIBRATION, 'band_limit = "10 kHz"', 'band_limit = "150 kHz"',
     "digital.band_limit", "half the rate"),
    ("span twice", HIVE, 'excitation = "5 V"', 'excitation = "5 V"\nspan = "10 mV"',
     "requirement.span", "not both"),
    ("no span", HIVE, 'sensitivity = "2 mV/V"\nexcitation = "5 V"', "",
     "requirement.span", "missing"),
    ("two resolutions", HIVE, 'resolution = "10 g"', 'resolution = "10 g"\nnoise_free_bits = 14',
     "requirement.resolution", "exactly one"),
    ("no resolution", HIVE, 'resolution = "10 g"', "", "requirement.resolution", "exactly one"),
    ("resolution in another dimension", HIVE, '"10 g"', '"10 mV"', "requirement.resolution",
     "unit of the capacity"),
    ("resolution without capacity", HIVE, 'capacity = "200 kg"', "", "requirement.capacity",
     "missing"),
    ("coverage of 100 %", HIVE, '"99.9 %"', '"100 %"', "requirement.coverage", "between 0 and 1"),
    ("data rate mismatch", HIVE, 'data_rate = "10 Hz"\n# Electronics', 'data_rate = "20 Hz"\n#',
     "requirement.data_rate", "output data rate, 10.0 Hz"),
    ("band top above Nyquist", HIVE, 'f_high = "2 Hz"', 'f_high = "8 Hz"', "requirement.f_high",
     "half the output data rate"),
    ("band top below f_low", HIVE, 'f_high = "2 Hz"', 'f_high = "5 mHz"', "requirement.f_high",
     "above f_low"),
    ("input range without reference voltage", HIVE, 'voltage = "5 V"', "", "reference.voltage",
     "missing"),
    ("range twice", HIVE,
     'input_range = "bipolar"', 'input_range = "bipolar"\nfull_scale_range = "5 V"',
     "adc.input_range", "not both"),
    ("reference without noise", VIBRATION,
     'noise_density = "60 nV/√Hz"\nnoise_corner = "10 Hz"', "",
     "reference.noise", "ratiometric = true"),
    ("band noise without corner", VIBRATION, 'noise_density = "60 nV/√Hz"\nnoise_corner = "10 Hz"',
     'noise = "2 µV"\nnoise_band = ["0.1 Hz", "10 Hz"]', "reference.noise_corner", "1/f corner"),
    ("band edges reversed", VIBRATION, 'noise_density = "60 nV/√Hz"',
     'noise = "2 µV"\nnoise_band = ["10 Hz", "0.1 Hz"]', "reference.noise_band[1]",
     "above the lower"),
    ("gain of a given non-inverting stage", SOIL, 'rg = "1 kohm"', 'rg = "1 kohm"\ngain = 20',
     "stages[0].gain", "1 + rf/rg"),
    ("filter order", VIBRATION, "order = 4", "order = 9", "stages[0].order", "1 to 8"),
    ("noise field on an open part", KICKOFF, 'en_corner = "1 Hz"', 'en = "5 nV/rtHz"',
     "stages[0].en", "open part"),
    ("ratiometric open reference", KICKOFF, 'voltage = "2.5 V"\nnoise_corner', 'voltage = "2.5 V"\n'
     "ratiometric = true\nnoise_corner", "reference.ratiometric", "nothing to size"),
    ("unknown weight name", KICKOFF, '"front end" = 2', '"frontend" = 2', "plan.weights.frontend",
     'did you mean "front end"'),
    ("negative weight", KICKOFF, "reference = 1", "reference = -1", "plan.weights.reference",
     "≥ 0"),
    ("weight for a given part", KICKOFF, "reference = 1,",
     'reference = 1, "ADC input RC (invented)" = 1,', 'plan.weights."ADC input RC (invented)"',
     "only open parts"),
    ("duplicate names", SOIL, 'name = "ADC input RC (invented)"',
     'name = "zero-drift op-amp, gain 20 (invented)"', "stages[1].name", "no other part"),
    ("stages as one table", HIVE, "\n[[stages]]", "\n[stages]", "stages", "[[stages]]"),
    ("interferer without amplitude", VIBRATION, ', amplitude = "20 mV"', "",
     "requirement.interferer.amplitude", "missing"),
    ("temperature below absolute zero", HIVE, '"30 degC"', '"-300 degC"', "requirement.temperature",
     "absolute zero"),
    ("non-finite float", HIVE, "\ngain = 128", "\ngain = inf", "adc.gain", "gain > 0"),
]
# fmt: on


@pytest.mark.parametrize(
    ("base", "old", "new", "field", "fragment"),
    [case[1:] for case in INVALID],
    ids=[case[0] for case in INVALID],
)
def test_invalid_input_gives_one_clean_line(base, old, new, field, fragment):
    lines = problems(edit(base, old, new))
    matching = [line for line in lines if line.startswith(f"d.toml: {field}:")]
    assert matching, lines
    assert any(fragment in line for line in matching), lines


def test_every_line_names_file_field_value_and_expectation():
    text = edit(HIVE, '"350 ohm"', '"350 V"')
    (line,) = problems(text)
    assert line == (
        'd.toml: sensor.resistance: got "350 V", expected a resistance such as "10 kΩ" '
        "(V is a voltage)"
    )


def test_two_problems_give_two_lines():
    text = edit(HIVE, '"350 ohm"', '"-350 ohm"')
    text = edit(text, '"10 nF"', '"10 nH"')
    lines = problems(text)
    assert [line.split(": ")[1] for line in lines] == ["sensor.resistance", "stages[0].capacitance"]


def test_structure_and_unit_problems_together():
    # An unknown key, a wrong type and two unit problems: four lines, one each.
    text = edit(HIVE, '"350 ohm"', '"-350 ohm"')
    text = edit(text, '"10 nF"', '"10 nH"')
    text = edit(text, "bits = 24", "bitz = 24")
    text = edit(text, "bipolar = false", 'bipolar = "no"')
    lines = problems(text)
    fields = sorted(line.split(": ")[1] for line in lines)
    assert fields == [
        "adc.bits",
        "adc.bitz",
        "sensor.bipolar",
        "sensor.resistance",
        "stages[0].capacitance",
    ]
    assert any("adc.bits: missing" in line for line in lines)


def test_bad_toml_is_one_line_with_position():
    (line,) = problems(edit(HIVE, "bits = 24", "bits = = 24"))
    m = re.match(r"^d\.toml:(\d+):(\d+): bad TOML syntax: ", line)
    assert m, line
    lineno = int(m.group(1))
    assert "bits = = 24" in edit(HIVE, "bits = 24", "bits = = 24").splitlines()[lineno - 1]


def test_missing_file_is_one_line(tmp_path):
    with pytest.raises(DesignFileError) as info:
        load_design(tmp_path / "nothere.toml")
    assert str(info.value) == f"{tmp_path / 'nothere.toml'}: no such design file"


@pytest.mark.parametrize(
    ("content", "fragment"),
    [(b"\xff\xfe[meta]\n", "not UTF-8"), (None, "is a folder")],
)
def test_unreadable_files(tmp_path, content, fragment):
    path = tmp_path / "d.toml"
    if content is None:
        path.mkdir()
    else:
        path.write_bytes(content)
    with pytest.raises(DesignFileError) as info:
        load_design(path)
    assert fragment in str(info.value) and "\n" not in str(info.value)


@pytest.mark.parametrize("encoding", ["utf-8", "utf-8-sig"])
def test_file_digest_is_of_the_bytes(tmp_path, encoding):
    import hashlib

    path = tmp_path / "hive.toml"
    path.write_text(HIVE.replace("\n", "\r\n"), encoding=encoding)
    design = load_design(path)
    assert design.sha256 == hashlib.sha256(path.read_bytes()).hexdigest()
    assert design.requirement.span_v == pytest.approx(10e-3)


# ---------------------------------------------------------------------------
# unit spelling never changes a result


SPELLINGS = [
    ('"22 nV/√Hz"', '"22 nV/rtHz"'),
    ('"22 nV/√Hz"', '"0.022 µV/√Hz"'),
    ('"22 nV/√Hz"', '"0.022 uV/rtHz"'),
    ('"22 nV/√Hz"', '"22e-9 V/sqrt(Hz)"'),
    ('"1.2 kohm"', '"1200 Ω"'),
    ('"1.2 kohm"', '"1.2 kΩ"'),
    ('"15 nF"', '"0.015 µF"'),
    ('"1 kHz"', '"1000 Hz"'),
    ('"40 degC"', '"313.15 K"'),
    ('"26.95 mV"', '"0.02695 V"'),
]


@pytest.mark.parametrize(("old", "new"), SPELLINGS)
def test_unit_spelling_invariance(old, new):
    base = check_design(loads_design(SOIL, "s.toml"))
    other = check_design(loads_design(edit(SOIL, old, new), "s.toml"))
    assert other.total_rms_v == pytest.approx(base.total_rms_v, rel=1e-12)
    assert [c.rms_v for c in other.contributions] == pytest.approx(
        [c.rms_v for c in base.contributions], rel=1e-12
    )


# ---------------------------------------------------------------------------
# schema


def test_schema_describes_every_field():
    schema = design_schema()
    assert set(schema["required"]) == {"requirement", "sensor", "adc"}
    for name, model in schema["$defs"].items():
        assert model.get("additionalProperties") is False, name
        for key, prop in model["properties"].items():
            assert prop.get("description"), f"{name}.{key}"
            if key not in ("type",):
                assert "examples" in prop or "$ref" in str(prop), f"{name}.{key}"
    assert "in" in schema["$defs"]["NonInvertingTable"]["properties"]


@pytest.mark.parametrize("name", EXAMPLE_NAMES)
def test_examples_validate_against_the_schema(name):
    # An independent JSON Schema validator (the jsonschema library) accepts
    # every example and refuses an unknown key.
    jsonschema = pytest.importorskip("jsonschema")
    data = tomllib.loads(example_text(name))
    jsonschema.validate(data, design_schema())
    data["sensor"]["resistence"] = "1 ohm"
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate(data, design_schema())


# ---------------------------------------------------------------------------
# robustness: random and mutated documents give clean errors only

# fmt: off
UNITS = ["V", "mV", "nV/√Hz", "pA/rtHz", "ohm", "kΩ", "nF", "Hz", "kHz", "degC", "K", "dB", "%",
         "g", "kg", "bar", "mV/V", "V/V", "s", "A", "nVpp", "µV p-p", "", "furlong"]
# fmt: on
garbage = st.one_of(
    st.text(max_size=12),
    st.integers(min_value=-(2**63), max_value=2**63 - 1),
    st.floats(allow_nan=True, allow_infinity=True),
    st.booleans(),
    st.lists(st.one_of(st.text(max_size=4), st.integers()), max_size=3),
    st.dictionaries(st.text(max_size=5), st.text(max_size=5), max_size=2),
    st.builds(
        lambda x, u: f"{x:g} {u}",
        st.floats(allow_nan=True, allow_infinity=True, width=32),
        st.sampled_from(UNITS),
    ),
)


def _paths(node, prefix=()):
    yield prefix
    if isinstance(node, dict):
        for k, v in node.items():
            yield from _paths(v, (*prefix, k))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            yield from _paths(v, (*prefix, i))


def _mutate(data, path, action, value, key):
    if not path:
        return data
    *head, last = path
    node = data
    for p in head:
        node = node[p]
    if action == "delete":
        del node[last]
    elif action == "replace":
        node[last] = value
    elif action == "insert" and isinstance(node[last], dict):
        node[last][key] = value
    elif action == "swap_unit" and isinstance(node[last], str):
        number = re.match(r"^\s*[-+.\deE]+", node[last])
        node[last] = (number.group(0) if number else "1") + " " + str(value)
    return data


@settings(max_examples=80, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    example=st.sampled_from(EXAMPLE_NAMES),
    mutations=st.lists(
        st.tuples(
            st.integers(min_value=0, max_value=10_000),
            st.sampled_from(["delete", "replace", "insert", "swap_unit"]),
            garbage,
            st.one_of(st.text(max_size=8), st.sampled_from(["noise", "gain", "open", "type"])),
        ),
        min_size=1,
        max_size=4,
    ),
)
def test_mutated_documents_give_clean_errors(example, mutations):
    data = tomllib.loads(example_text(example))
    for index, action, value, key in mutations:
        paths = list(_paths(data))
        path = paths[index % len(paths)]
        if action == "swap_unit":
            value = UNITS[index % len(UNITS)]
        data = _mutate(data, path, action, value, key)
    try:
        design = design_from_mapping(data, "m.toml")
    except DesignErrors as err:
        assert err.errors and all(isinstance(e, DesignError) for e in err.errors)
        assert all(line.startswith("m.toml: ") for line in str(err).splitlines())
        return
    assert design.source == "m.toml"


@settings(max_examples=60, deadline=None)
@given(
    example=st.sampled_from(EXAMPLE_NAMES),
    position=st.integers(min_value=0, max_value=10_000),
    junk=st.text(min_size=1, max_size=6),
)
def test_garbage_inserted_in_text_gives_clean_errors(example, position, junk):
    text = example_text(example)
    at = position % (len(text) + 1)
    text = text[:at] + junk + text[at:]
    try:
        loads_design(text, "g.toml")
    except DesignFileError as err:
        assert "\n" not in str(err) and str(err).startswith("g.toml:")
    except DesignErrors as err:
        assert all(line.startswith("g.toml: ") for line in str(err).splitlines())


@settings(max_examples=40, deadline=None)
@given(text=st.text(max_size=200))
def test_random_text_gives_clean_errors(text):
    with pytest.raises(ResplanError):
        loads_design(text, "r.toml")


def test_a_line_separator_in_a_key_stays_on_one_line():
    # Found by the mutation test above: U+0085 (NEL) typed into a [meta] key. Python's
    # str.splitlines breaks at NEL, so an unescaped key split the problem over two lines.
    text = example_text("hive-scale").replace("[meta]\n", '[meta]\n"\x85" = 1\n', 1)
    with pytest.raises(DesignErrors) as info:
        loads_design(text, "m.toml")
    lines = str(info.value).splitlines()
    assert all(line.startswith("m.toml: ") for line in lines)
    assert any("\\x85" in line for line in lines)


@pytest.mark.parametrize(
    ("name", "formula"),
    [
        # FSR = V_ref unipolar, 2·V_ref for ±V_ref, divided by the gain (DOMAIN §5);
        # a factor or a gain of 1 is left out of the line. 2 × 5 V / 128 = 78.125 mV,
        # 2 × 4.096 V = 8.192 V (arithmetic).
        ("soil-temperature", "ADC range = V_ref = 2.50 V peak-to-peak"),
        ("pipeline-vibration", "ADC range = 2·V_ref = 2 × 4.10 V = 8.19 V peak-to-peak"),
        ("hive-scale", "ADC range = 2·V_ref / gain = 2 × 5.00 V / 128 = 78.1 mV peak-to-peak"),
    ],
)
def test_range_formula_shows_only_the_terms_that_apply(name, formula):
    notes = [n for n in loads_design(example_text(name), "d.toml").notes if "ADC range" in n]
    assert len(notes) == 1 and notes[0].startswith(formula)
    assert " / 1 " not in notes[0] and "1 ×" not in notes[0]


def test_range_formula_unipolar_with_gain():
    # FSR = V_ref / gain (DOMAIN §5): 5 V / 128 = 39.0625 mV
    text = edit(HIVE, 'input_range = "bipolar"', 'input_range = "unipolar"')
    notes = [n for n in loads_design(text, "d.toml").notes if "ADC range" in n]
    assert notes[0].startswith("ADC range = V_ref / gain = 5.00 V / 128 = 39.1 mV")
