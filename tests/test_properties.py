"""Laws the forward budget must obey, checked with hypothesis on INVENTED random chains.

- uncorrelated sources add in power, so adding one never lowers the total and the total
  is the root-sum-square of the contributions (variances of independent variables add);
- referring to the input divides by the gain in front (DOMAIN.md §3): multiplying the
  front-end gain by g divides every later stage's RTI noise by g;
- a result never depends on how the same quantity is expressed;
- shares sum to 1; RTI × total gain is the value at the ADC.

Chains are random combinations of invented parts (no real data). The front end is an
integrated amplifier with a fixed (or no) bandwidth, so changing its gain does not move
any noise band — that isolates the gain law from the GBW/gain trade of an op-amp stage.
"""

from __future__ import annotations

import dataclasses
import math

from hypothesis import given, settings
from hypothesis import strategies as st

from resplan import (
    ADC,
    ActiveFilter,
    Band,
    DigitalPath,
    IdealLowpass,
    InputNoiseDensity,
    IntegratedAmplifier,
    NoiseDensity,
    RCFilter,
    Reference,
    Sensor,
    SincFilter,
    SnrNoise,
    TransitionNoise,
    forward_budget,
)
from resplan.chain.signal_chain import Chain

FAST = settings(deadline=None, max_examples=40, derandomize=True)
SAMPLE_RATE_HZ = 1e6


def _log_floats(lo: float, hi: float):
    return st.floats(math.log10(lo), math.log10(hi)).map(lambda x: 10.0**x)


densities = st.builds(
    NoiseDensity, _log_floats(1e-9, 1e-7), st.sampled_from([0.0, 1.0, 10.0, 100.0])
)
current_densities = st.builds(NoiseDensity, _log_floats(1e-14, 1e-11), st.sampled_from([0.0, 10.0]))


@st.composite
def front_ends(draw, gain=None):
    return IntegratedAmplifier(
        "front end",
        gain if gain is not None else draw(_log_floats(1.0, 1000.0)),
        draw(densities),
        draw(st.none() | densities),
        draw(st.none() | current_densities),
        bandwidth_hz=draw(st.sampled_from([None, 200e3, 2e6])),
    )


@st.composite
def filters(draw):
    response = draw(st.sampled_from(["rc", "butterworth", "bessel"]))
    return ActiveFilter(
        "anti-alias",
        response,
        1 if response == "rc" else draw(st.integers(1, 8)),
        draw(_log_floats(1e3, 1e5)),
        gain=draw(st.sampled_from([1.0, 2.0])),
        noise_resistance_ohm=draw(_log_floats(10.0, 1e4)),
        en=draw(st.none() | densities),
    )


adc_noises = st.one_of(
    st.builds(TransitionNoise, st.floats(0.0, 3.0)),
    st.builds(SnrNoise, st.floats(80.0, 120.0)),
    st.builds(InputNoiseDensity, densities),
)


@st.composite
def chains(draw, front=None):
    sensor = Sensor(
        draw(_log_floats(1e-3, 1.0)),
        draw(_log_floats(1.0, 1e5)),
        bipolar=draw(st.booleans()),
        noise=draw(st.none() | densities),
        name="invented sensor",
    )
    stages = [front if front is not None else draw(front_ends())]
    if draw(st.booleans()):
        stages.append(RCFilter("RC", draw(_log_floats(10.0, 1e3)), 1e-9))
    stages.append(draw(filters()))
    adc = ADC(
        "invented SAR", "sar", draw(st.integers(12, 24)), 5.0, SAMPLE_RATE_HZ, draw(adc_noises)
    )
    digital = draw(
        st.sampled_from(
            [
                None,
                DigitalPath((IdealLowpass(20e3, SAMPLE_RATE_HZ),)),
                DigitalPath((SincFilter(1, 16, SAMPLE_RATE_HZ),)),
            ]
        )
    )
    reference = draw(
        st.none()
        | st.builds(
            Reference,
            st.just(2.5),
            densities,
            st.sampled_from([10.0, 1e3]),
            st.booleans(),
        )
    )
    return Chain(sensor, tuple(stages), adc, reference, digital)


def _key(c):
    return (c.stage, c.name)


def _budget(chain):
    return forward_budget(chain, Band(0.1))


# --- power addition ---------------------------------------------------------------------


@FAST
@given(chains())
def test_total_is_root_sum_square_and_shares_sum_to_one(chain):
    b = _budget(chain)
    rss = math.sqrt(sum(c.rms_v**2 for c in b.contributions))
    assert math.isclose(b.total_rms_v, rss, rel_tol=1e-12)
    assert math.isclose(sum(c.share for c in b.contributions), 1.0, rel_tol=1e-12)
    assert all(0.0 <= c.share <= 1.0 for c in b.contributions)


@FAST
@given(chains())
def test_rti_times_total_gain_is_the_value_at_the_adc(chain):
    b = _budget(chain)
    gain = chain.total_gain
    for c in b.contributions:
        assert math.isclose(c.rms_v * gain, c.adc_rms_v, rel_tol=1e-12, abs_tol=1e-300)
    assert math.isclose(b.total_adc_rms_v, b.total_rms_v * gain, rel_tol=1e-12)


@FAST
@given(chains(), densities, current_densities)
def test_adding_a_contributor_never_lowers_the_total(chain, extra_v, extra_i):
    before = _budget(chain).total_rms_v
    # Extra sensor noise: more white power under the same 1/f corner (or a new source).
    own = chain.sensor.noise
    noisier = (
        extra_v
        if own is None
        else NoiseDensity(math.hypot(own.white, extra_v.white), own.corner_hz)
    )
    noisier_sensor = dataclasses.replace(chain.sensor, noise=noisier)
    front = chain.stages[0]
    noisier_front = dataclasses.replace(front, current_noise=front.current_noise or extra_i)
    for changed in (
        dataclasses.replace(chain, sensor=noisier_sensor),
        dataclasses.replace(chain, stages=(noisier_front, *chain.stages[1:])),
    ):
        after = _budget(changed)
        assert after.total_rms_v >= before * (1 - 1e-12)
        assert len(after.contributions) >= len(_budget(chain).contributions)


#: Agreement of two solved budgets whose circuits differ only in gain (table interpolation).
RTOL_SOLVED = 1e-8


# --- the gain law ------------------------------------------------------------------------


@FAST
@given(st.data(), _log_floats(1.0, 100.0), _log_floats(1.1, 50.0))
def test_front_end_gain_divides_every_later_stage_by_g(data, g0, g):
    # σ_RTI of a source after gain G is σ_entry/G (DOMAIN.md §3): scaling the front end by g
    # divides every later contribution (stages after it, reference, ADC) by g exactly, and
    # leaves the sensor's and the front end's own input terms unchanged.
    front = data.draw(front_ends(gain=g0))
    chain = data.draw(chains(front=front))
    scaled = dataclasses.replace(
        chain, stages=(dataclasses.replace(front, gain=g0 * g), *chain.stages[1:])
    )
    # The front end is solved as a circuit on a frequency table that follows its
    # characteristic frequencies (its GBW moves with the gain): 1e-8 covers the table.
    before = {_key(c): c for c in _budget(chain).contributions}
    after = {_key(c): c for c in _budget(scaled).contributions}
    assert before.keys() == after.keys()
    for key, c in before.items():
        stage, name = key
        if stage == "invented sensor" or (stage == "front end" and name != "output noise / G"):
            assert math.isclose(after[key].rms_v, c.rms_v, rel_tol=RTOL_SOLVED)
        elif stage == "front end":  # e_out/G referred to the input
            assert math.isclose(after[key].rms_v, c.rms_v / g, rel_tol=RTOL_SOLVED)
        elif c.kind == "reference":
            # V_in·σ_ref/V_ref: the ADC input grows with the gain too, so its RTI is unchanged
            assert math.isclose(after[key].rms_v, c.rms_v, rel_tol=RTOL_SOLVED, abs_tol=1e-300)
        else:
            assert math.isclose(after[key].rms_v, c.rms_v / g, rel_tol=RTOL_SOLVED, abs_tol=1e-300)


# --- how a quantity is expressed -------------------------------------------------------------


@FAST
@given(
    st.floats(0.1, 100.0),  # resistance in kΩ
    st.floats(0.5, 50.0),  # density in nV/√Hz
    st.floats(1.0, 500.0),  # gain
)
def test_result_does_not_depend_on_how_a_value_is_written(r_kohm, e_nv, gain):
    # The same physical value written three ways in Python (kΩ·1e3, kΩ·1000, a decimal
    # string with an exponent; nV·1e-9, nV/1e9, a string) may differ in the last bit only:
    # every figure must agree to 1e-12 relative.
    spellings = [
        (r_kohm * 1e3, e_nv * 1e-9),
        (r_kohm * 1000.0, e_nv / 1e9),
        (float(f"{r_kohm!r}e3"), float(f"{e_nv!r}e-9")),
    ]
    results = []
    for r_ohm, e in spellings:
        chain = Chain(
            Sensor(10e-3, r_ohm, name="invented sensor"),
            (
                IntegratedAmplifier(
                    "front end", gain, NoiseDensity(e, 4.5), current_noise=NoiseDensity(1e-12)
                ),
                ActiveFilter("anti-alias", "butterworth", 4, 2e3, en=NoiseDensity(e)),
            ),
            ADC("invented SAR", "sar", 24, 5.0, SAMPLE_RATE_HZ, TransitionNoise(1.0)),
        )
        results.append(_budget(chain))
    first = results[0]
    for other in results[1:]:
        assert math.isclose(other.total_rms_v, first.total_rms_v, rel_tol=1e-12)
        assert math.isclose(other.noise_free_bits, first.noise_free_bits, rel_tol=1e-12)
        # Contributions are listed by share; two of equal share may swap on a last-bit
        # difference, so match them by identity, not by position.
        mine = {_key(c): c.rms_v for c in first.contributions}
        theirs = {_key(c): c.rms_v for c in other.contributions}
        assert mine.keys() == theirs.keys()
        for key, rms_v in mine.items():
            assert math.isclose(theirs[key], rms_v, rel_tol=1e-12)


@FAST
@given(st.floats(1.0, 9.99))
def test_density_written_differently_gives_the_same_budget(mantissa):
    # 4.5e-9 against 4.5 * 1e-9 (and 45e-10): the same density in the API.
    a = NoiseDensity(float(f"{mantissa!r}e-9"))
    b = NoiseDensity(mantissa * 1e-9)
    c = NoiseDensity(mantissa * 10 * 1e-10)

    def total(density):
        chain = Chain(
            Sensor(1.0, 100.0),
            (IntegratedAmplifier("front end", 1.0, density, bandwidth_hz=50e3),),
            ADC("invented SAR", "sar", 16, 5.0, SAMPLE_RATE_HZ, TransitionNoise(0.5)),
        )
        return _budget(chain).total_rms_v

    assert math.isclose(total(a), total(b), rel_tol=1e-12)
    assert math.isclose(total(a), total(c), rel_tol=1e-12)
