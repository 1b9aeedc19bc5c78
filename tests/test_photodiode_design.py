"""Design files with a current-output sensor and a transimpedance stage.

Every circuit here is INVENTED for the tests: round values, no real part's data.
References: shot noise i = √(2qI) (Schottky 1918) with q from ``scipy.constants``
(exact in SI 2019); Johnson-Nyquist current noise of a resistor √(4kT/R) (Johnson
1928, Nyquist 1928) with k from ``scipy.constants``.
"""

from __future__ import annotations

import json
import math

import pytest
import scipy.constants as sc
from click.testing import CliRunner

from resplan.cli import main
from resplan.designfile.load import check_design, design_schema, loads_design
from resplan.errors import DesignErrors

#: An INVENTED photodiode into an INVENTED transimpedance stage, then an RC and a SAR ADC.
PHOTODIODE = """\
[meta]
title = "invented photodiode front end"

[requirement]
span = "10 µA"
noise_free_bits = 12
f_low = "0.1 Hz"
f_high = "1 kHz"

[sensor]
name = "invented photodiode"
shunt_resistance = "1 Gohm"
capacitance = "100 pF"
dark_current = "1 nA"

[[stages]]
type = "transimpedance"
name = "invented TIA"
rf = "100 kohm"
cf = "10 pF"
en = "10 nV/√Hz"
en_corner = "10 Hz"
in = "1 fA/√Hz"
gbw = "10 MHz"
input_capacitance = "5 pF"

[[stages]]
type = "rc_filter"
name = "invented RC"
resistance = "1 kohm"
capacitance = "10 nF"

[reference]
voltage = "2.5 V"
noise_density = "50 nV/√Hz"

[adc]
architecture = "sar"
bits = 16
input_range = "unipolar"
sample_rate = "10 kHz"
snr = "90 dB"
snr_sample_rate = "10 kHz"
"""


def _edit(old: str, new: str) -> str:
    assert old in PHOTODIODE, old
    return PHOTODIODE.replace(old, new)


def test_current_sensor_and_transimpedance_stage_are_read_in_si():
    design = loads_design(PHOTODIODE, "pd.toml")
    sensor, tia = design.sensor, design.stages[0]
    assert sensor.output == "current" and sensor.unit == "A"
    assert sensor.span_v == pytest.approx(10e-6) and sensor.resistance_ohm == pytest.approx(1e9)
    assert sensor.capacitance_f == pytest.approx(100e-12)
    assert sensor.dark_current_a == pytest.approx(1e-9)
    assert (tia.rf_ohm, tia.cf_f, tia.gbw_hz) == pytest.approx((1e5, 10e-12, 10e6))
    assert (tia.en.white, tia.en.corner_hz) == pytest.approx((10e-9, 10.0))
    assert tia.in_minus.white == pytest.approx(1e-15)
    assert tia.input_capacitance_f == pytest.approx(5e-12)


def test_budget_is_referred_to_the_sensor_in_amperes():
    budget = check_design(loads_design(PHOTODIODE, "pd.toml"))
    assert budget.sensor_unit == "A" and budget.gain_unit == "V/A"
    assert budget.gain == pytest.approx(1e5)  # RF, V/A
    ids = set(budget.ids)
    assert {"sensor.thermal", "sensor.dark_current", "sensor.signal_shot"} <= ids
    assert {"stages[0].opamp.en", "stages[0].opamp.in-", "stages[0].RF.thermal"} <= ids


@pytest.mark.parametrize(
    ("source_id", "current_a"),
    [("sensor.signal_shot", 10e-6), ("sensor.dark_current", 1e-9)],
)
def test_shot_noise_densities_are_2qI(source_id, current_a):
    # Schottky 1918: i² = 2qI per hertz, q = scipy.constants.e (exact, SI 2019). Referred
    # to the sensor (a current), the density is the source's own.
    item = check_design(loads_design(PHOTODIODE))[source_id]
    assert item.density_v_per_rthz == pytest.approx(math.sqrt(2 * sc.e * current_a), rel=1e-9)


def test_shunt_resistance_thermal_current_is_4kT_over_R():
    # Johnson 1928, Nyquist 1928: i² = 4kT/R per hertz at 25 °C (298.15 K).
    item = check_design(loads_design(PHOTODIODE))["sensor.thermal"]
    expected = math.sqrt(4 * sc.k * 298.15 / 1e9)
    assert item.density_v_per_rthz == pytest.approx(expected, rel=1e-6)


def test_check_text_and_json_state_amperes_at_the_sensor(tmp_path):
    runner = CliRunner()
    path = tmp_path / "pd.toml"
    path.write_text(PHOTODIODE, encoding="utf-8")
    text = runner.invoke(main, ["check", str(path)])
    data = runner.invoke(main, ["check", "--json", str(path)])
    assert text.exit_code in (0, 1), text.output
    assert "over the sensor span (10.0 µA)" in text.output
    assert "kV/A" in text.output and "pA rms" in text.output
    got = json.loads(data.stdout)
    assert got["sensor_unit"] == "A" and got["span_v"] == pytest.approx(10e-6)


BAD = [
    # (what changes, field named, words in the message)
    ('span = "10 µA"', 'span = "10 mV"', "requirement.span", "current span"),
    ('shunt_resistance = "1 Gohm"', 'resistance = "1 Gohm"', "requirement.span", "voltage span"),
    (
        'shunt_resistance = "1 Gohm"',
        'shunt_resistance = "1 Gohm"\nresistance = "1 kohm"',
        "sensor.shunt_resistance",
        "not both",
    ),
    ('shunt_resistance = "1 Gohm"', 'shunt_resistance = "-1 Gohm"', "sensor.shunt_resistance", ""),
    ('shunt_resistance = "1 Gohm"', 'shunt_resistance = "1 nF"', "sensor.shunt_resistance", ""),
    ('span = "10 µA"', 'sensitivity = "1 mV/V"\nexcitation = "5 V"', "requirement.sensitivity", ""),
    ('dark_current = "1 nA"', 'dark_current = "-1 nA"', "sensor.dark_current", ""),
    ('rf = "100 kohm"\n', "", "stages[0].rf", ""),
    ('cf = "10 pF"', 'cf = "10 pV"', "stages[0].cf", "capacitance"),
    ('cf = "10 pF"', 'cff = "10 pF"', "stages[0].cff", 'did you mean "cf"'),
    ('gbw = "10 MHz"', 'gbw = "0 Hz"', "stages[0].gbw", ""),
    ('input_capacitance = "5 pF"', 'input_capacitance = "5 pA"', "stages[0].input_capacitance", ""),
    ('in = "1 fA/√Hz"', 'in = "1 nV/√Hz"', "stages[0].in", "current noise density"),
    ('type = "transimpedance"', 'type = "transimpedence"', "stages[0].type", "transimpedance"),
    ("[sensor]\n", "[sensor]\ndifferential = true\n", "sensor.differential", ""),
]


@pytest.mark.parametrize(("old", "new", "field", "words"), BAD)
def test_bad_fields_get_one_line_naming_the_field(old, new, field, words):
    with pytest.raises(DesignErrors) as err:
        loads_design(_edit(old, new), "pd.toml")
    lines = str(err.value).splitlines()
    assert len(lines) == 1, lines
    assert f"pd.toml: {field}" in lines[0]
    assert words in lines[0]


def test_transimpedance_after_a_voltage_sensor_is_one_line_at_the_cli(tmp_path):
    text = _edit('shunt_resistance = "1 Gohm"', 'resistance = "1 kohm"').replace(
        'span = "10 µA"', 'span = "10 mV"'
    )
    path = tmp_path / "pd.toml"
    path.write_text(text, encoding="utf-8")
    result = CliRunner().invoke(main, ["check", str(path)])
    assert result.exit_code == 2
    lines = result.stderr.splitlines()
    assert len(lines) == 1 and "stages[0].type" in lines[0], lines
    assert "Traceback" not in result.output


def test_schema_knows_the_new_fields():
    schema = design_schema()
    defs = schema["$defs"]
    assert "shunt_resistance" in defs["SensorTable"]["properties"]
    tia = defs["TransimpedanceTable"]["properties"]
    assert {"rf", "cf", "en", "en_corner", "in", "in_corner", "gbw", "input_capacitance"} <= set(
        tia
    )
    assert all(tia[k].get("description") for k in tia)


def test_stated_interferers_are_refused_for_a_current_sensor_in_one_line():
    text = _edit(
        "[sensor]\n", 'interferer = { frequency = "150 kHz", amplitude = "10 mV" }\n\n[sensor]\n'
    )
    with pytest.raises(DesignErrors) as err:
        loads_design(text, "pd.toml")
    lines = str(err.value).splitlines()
    assert len(lines) == 1 and "pd.toml: requirement.interferer" in lines[0], lines
    # The allowance, in A rms, is the way to reserve room for interference.
    design = loads_design(_edit('f_high = "1 kHz"', 'f_high = "1 kHz"\ninterference = "10 pA"'))
    assert design.requirement.interference_rms_v == pytest.approx(10e-12)


def test_photodiode_example_report_end_to_end(tmp_path):
    # The INVENTED turbidity-photodiode example through `resplan report`: the PDF states
    # the figures at the sensor in A, the gain in V/A, and draws the stage by R_f and C_f.
    from pypdf import PdfReader

    from resplan.designfile.examples import example_text

    path = tmp_path / "pd.toml"
    path.write_text(example_text("turbidity-photodiode"), encoding="utf-8")
    out = tmp_path / "pd.pdf"
    result = CliRunner().invoke(main, ["report", str(path), "-o", str(out)])
    assert result.exit_code == 0, result.output
    text = "\n".join(p.extract_text() for p in PdfReader(out).pages)
    for words in ("2.00 µA", "MV/A", "pA rms at the sensor", "R_f 1.00 MΩ", "C_f 5.00 pF"):
        assert words in text, words
    assert "transimpedance stage" in text and "current-output sensor" in text
    assert "stages[0].opamp.en" in text and "sensor.signal_shot" in text
    assert "IEC 61010-1" in text  # the safety caution
