"""Spreads in design files: the forms, their readings, their errors (docs/design-file.md)."""

from __future__ import annotations

import pytest

from resplan.chain.tolerance import Spread
from resplan.designfile.examples import example_text
from resplan.designfile.load import check_design, loads_design
from resplan.designfile.spreads import split_spreads
from resplan.errors import DesignError, DesignErrors

HIVE = example_text("hive-scale")


def _with(old: str, new: str, text: str = HIVE) -> str:
    assert old in text
    return text.replace(old, new)


# (spread as written, distribution, typical, sigma, low, high) in SI. The typ/max
# reading (max at +3σ of a normal) is common practice, no source.
FORMS = [
    ('{ typ = "4 nV/√Hz", max = "6 nV/√Hz" }', "normal", 4e-9, 2e-9 / 3, 2e-9, 6e-9),
    ('{ value = "1 kohm", tolerance = "1 %" }', "uniform", 1e3, 0.0, 990.0, 1010.0),
    ('{ value = "1 kohm", tolerance = "5 ohm" }', "uniform", 1e3, 0.0, 995.0, 1005.0),
    ('{ min = "1 kohm", max = "3 kohm" }', "uniform", 2e3, 0.0, 1e3, 3e3),
    ('{ value = "10 nV", sigma = "1 nV" }', "normal", 10e-9, 1e-9, 7e-9, 13e-9),
]


@pytest.mark.parametrize(("text", "dist", "typ", "sigma", "low", "high"), FORMS)
def test_forms(text, dist, typ, sigma, low, high):
    import tomllib

    data = tomllib.loads(f"[sensor]\nx = {text}\n")
    typical, spreads, _, _ = split_spreads(data)
    (s,) = spreads
    assert (s.field, s.distribution) == ("sensor.x", dist)
    assert s.typical == pytest.approx(typ, rel=1e-12)
    assert s.sigma == pytest.approx(sigma, rel=1e-12)
    assert s.ends == pytest.approx((low, high), rel=1e-12)
    assert "x" in typical["sensor"] and not isinstance(typical["sensor"]["x"], dict)


def test_plain_values_stay_typical_and_the_budget_does_not_move():
    text = _with('resistance = "350 ohm"', 'resistance = { value = "350 ohm", tolerance = "1 %" }')
    text = _with('["10 Hz", "45 nV"]', '["10 Hz", { typ = "45 nV", max = "60 nV" }]', text)
    spread = loads_design(text, "s.toml")
    plain = loads_design(HIVE, "h.toml")
    assert [s.field for s in spread.spreads] == ["sensor.resistance", "adc.noise_table[2][1]"]
    assert check_design(spread).total_rms_v == check_design(plain).total_rms_v


def test_temperature_range_and_yield():
    text = _with(
        'temperature = "30 degC"',
        'temperature = { typ = "30 degC", min = "-10 degC", max = "60 degC" }\nyield = "99 %"',
    )
    d = loads_design(text, "t.toml")
    (s,) = d.spreads
    assert s.is_temperature and s.ends == pytest.approx((263.15, 333.15))
    assert d.temperature_k == pytest.approx(303.15) and d.yield_required == pytest.approx(0.99)
    hot = d.variant({"requirement.temperature": 333.15})
    assert hot.temperature_k == pytest.approx(333.15)


def test_tempco_scales_from_25_degC():
    # 45 nV at 25 °C, +0.5 %/K: at 30 °C 45·(1 + 0.005·5) = 46.125 nV (hand calculation).
    text = _with('["10 Hz", "45 nV"]', '["10 Hz", { value = "45 nV", tempco = "0.5 %/K" }]')
    d = loads_design(text, "t.toml")
    assert dict(d.adc.noise.rows)[10.0] == pytest.approx(46.125e-9, rel=1e-12)
    hot = d.variant({"requirement.temperature": 273.15 + 85})
    assert dict(hot.adc.noise.rows)[10.0] == pytest.approx(45e-9 * (1 + 0.005 * 60), rel=1e-12)


BAD = [
    ('{ typ = "4 nV/√Hz", max = "3 nV/√Hz" }', "stages[0].en.max"),
    ('{ typ = "4 nV/√Hz", max = "3 kohm" }', "stages[0].en.typ"),
    ('{ typ = "4 nV/√Hz", sigma = "1 nV/√Hz" }', "stages[0].en"),
    ('{ value = "4 nV/√Hz", tolerance = "150 %" }', "stages[0].en.tolerance"),
    ('{ value = "4 nV/√Hz", tempco = "3 nV" }', "stages[0].en.tempco"),
]


@pytest.mark.parametrize(("text", "field"), BAD)
def test_bad_spreads_name_the_field(text, field):
    import tomllib

    with pytest.raises(DesignErrors) as info:
        split_spreads(tomllib.loads(f"[[stages]]\nen = {text}\n"))
    (err,) = info.value.errors
    assert err.field.startswith(field.rsplit(".", 1)[0]) and "\n" not in str(err)


def test_spread_validates_itself():
    with pytest.raises(DesignError):
        Spread("x", "typ-max", 1.0, "normal", sigma=-1.0, low=0.0, high=2.0)
