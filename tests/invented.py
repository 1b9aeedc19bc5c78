"""Invented chains and designs shared by the tests.

Every part here is INVENTED for testing: round numbers of the size the trade
meets, not the data of any real product. Each builder takes keyword overrides
of the :class:`resplan.Chain` fields (``sensor``, ``stages``, ``adc``,
``reference``, ``digital``, ``temperature_k``) so one test can swap one part.

conftest.py exposes the chain builders as fixtures returning the builder, so a
test asks for ``bridge_chain`` and calls ``bridge_chain(adc=...)``; test modules
import this module directly (``from invented import ...``; pytest puts tests/ on
the path).
"""

from __future__ import annotations

from dataclasses import fields

from resplan import (
    ADC,
    ActiveFilter,
    DigitalPath,
    IdealLowpass,
    IntegratedAmplifier,
    NoiseAtRate,
    NoiseDensity,
    NonInvertingStage,
    RCFilter,
    Reference,
    Sensor,
    SincFilter,
    TransitionNoise,
)
from resplan.chain.design import Design, Meta
from resplan.chain.requirement import Requirement
from resplan.chain.signal_chain import Band, Chain

__all__ = [
    "invented_bridge_chain",
    "invented_vibration_chain",
    "invented_four_stage_chain",
    "INVENTED_MODULATOR_RATE_HZ",
    "INVENTED_DATA_RATE_HZ",
    "design_of",
]

#: Invented delta-sigma modulator rate and output data rate, Hz.
INVENTED_MODULATOR_RATE_HZ = 256_000.0
INVENTED_DATA_RATE_HZ = 10.0


def _chain(defaults: dict, overrides: dict) -> Chain:
    unknown = set(overrides) - {f.name for f in fields(Chain)}
    if unknown:
        raise TypeError(f"unknown chain field(s): {', '.join(sorted(unknown))}")
    return Chain(**{**defaults, **overrides})


def invented_bridge_chain(**overrides) -> Chain:
    """INVENTED load-cell chain: 350 Ω bridge, 10 mV span → RC → PGA ×128 → 24-bit delta-sigma.

    Bridge: 2 mV/V at 5 V excitation (10 mV span, unipolar), 350 Ω output
    resistance. Input RC: 1 kΩ, 100 nF (1.59 kHz). PGA: 12 nV/√Hz white with a
    2 Hz 1/f corner, 0.3 pA/√Hz, 50 kHz bandwidth.
    ADC: ±2.5 V (5 V peak-to-peak), modulator 256 kHz, sinc3 to 10 Hz,
    0.2 µV rms at 10 Hz at its own gain 1. Reference: 2.5 V, 3 µV rms 0.1–10 Hz
    with a 10 Hz corner, not ratiometric. All invented.
    """
    rate = INVENTED_MODULATOR_RATE_HZ
    ratio = int(rate / INVENTED_DATA_RATE_HZ)
    defaults = dict(
        sensor=Sensor(span_v=10e-3, resistance_ohm=350.0, name="invented bridge"),
        stages=(
            RCFilter("invented input RC", 1e3, 100e-9),
            IntegratedAmplifier(
                "invented PGA",
                gain=128.0,
                input_noise=NoiseDensity(12e-9, 2.0),
                current_noise=NoiseDensity(0.3e-12, 0.0),
                bandwidth_hz=50e3,
            ),
        ),
        adc=ADC(
            "invented delta-sigma ADC",
            "delta-sigma",
            24,
            5.0,
            rate,
            NoiseAtRate(0.2e-6, INVENTED_DATA_RATE_HZ),
            data_rate_hz=INVENTED_DATA_RATE_HZ,
        ),
        reference=Reference(
            2.5,
            Reference.density_from_band_rms(3e-6, 0.1, 10.0, 10.0),
            filter_cutoff_hz=100.0,
            name="invented reference",
        ),
        digital=DigitalPath((SincFilter(3, ratio, rate),)),
    )
    return _chain(defaults, overrides)


def invented_vibration_chain(**overrides) -> Chain:
    """INVENTED vibration chain: ±2 V sensor → driver → RC → 18-bit SAR at 1 MHz → band limit.

    Sensor: 4 V bipolar span, 100 Ω. Driver: gain 1, 4 nV/√Hz, 20 MHz bandwidth.
    RC: 100 Ω, 2.7 nF (589 kHz). SAR: ±5 V (10 V peak-to-peak), 18 bits,
    1 MHz, 0.7 LSB rms transition noise. Digital: ideal band limit at 20 kHz.
    Reference: 5 V, 10 nV/√Hz white with a 1 kHz filter. All invented.
    """
    rate = 1e6
    defaults = dict(
        sensor=Sensor(
            span_v=4.0, resistance_ohm=100.0, bipolar=True, name="invented accelerometer"
        ),
        stages=(
            IntegratedAmplifier(
                "invented driver", gain=1.0, input_noise=NoiseDensity(4e-9), bandwidth_hz=20e6
            ),
            RCFilter("invented RC", 100.0, 2.7e-9),
        ),
        adc=ADC("invented SAR ADC", "sar", 18, 10.0, rate, TransitionNoise(0.7)),
        reference=Reference(
            5.0, NoiseDensity(10e-9), filter_cutoff_hz=1e3, name="invented reference"
        ),
        digital=DigitalPath((IdealLowpass(20e3, rate),)),
    )
    return _chain(defaults, overrides)


def invented_four_stage_chain(**overrides) -> Chain:
    """INVENTED four-stage chain for the benchmark: PGA → op-amp gain → Butterworth → RC → ADC."""
    rate = 512_000.0
    defaults = dict(
        sensor=Sensor(span_v=20e-3, resistance_ohm=1e3, bipolar=True, name="invented sensor"),
        stages=(
            IntegratedAmplifier(
                "invented in-amp",
                gain=10.0,
                input_noise=NoiseDensity(8e-9, 5.0),
                output_noise=NoiseDensity(60e-9, 20.0),
                current_noise=NoiseDensity(0.1e-12, 10.0),
                bandwidth_hz=200e3,
            ),
            NonInvertingStage(
                "invented gain stage",
                rf_ohm=9e3,
                rg_ohm=1e3,
                en=NoiseDensity(5e-9, 3.0),
                in_plus=NoiseDensity(0.5e-12, 50.0),
                gbw_hz=10e6,
            ),
            ActiveFilter(
                "invented anti-alias",
                "butterworth",
                4,
                20e3,
                noise_resistance_ohm=2e3,
                en=NoiseDensity(6e-9, 10.0),
            ),
            RCFilter("invented RC", 50.0, 10e-9),
        ),
        adc=ADC(
            "invented delta-sigma ADC",
            "delta-sigma",
            24,
            5.0,
            rate,
            NoiseAtRate(1.5e-6, 1000.0),
            data_rate_hz=1000.0,
        ),
        reference=Reference(2.5, NoiseDensity(40e-9, 5.0), filter_cutoff_hz=10.0),
        digital=DigitalPath((SincFilter(3, 512, rate),)),
    )
    return _chain(defaults, overrides)


def design_of(chain: Chain, counts: float = 1000.0, **fields) -> Design:
    """An INVENTED design around ``chain``: a requirement of ``counts`` noise-free counts.

    Keyword ``fields`` override any :class:`resplan.chain.design.Design` field (``meta``,
    ``requirement``, ``band``, ``source``, ...).
    """
    defaults = dict(
        meta=Meta(title="Invented test design"),
        requirement=Requirement(span_v=chain.sensor.span_v, noise_free_counts=counts),
        band=Band(0.01),
        sensor=chain.sensor,
        stages=chain.stages,
        adc=chain.adc,
        reference=chain.reference,
        digital=chain.digital,
        temperature_k=chain.temperature_k,
    )
    return Design(**{**defaults, **fields})
