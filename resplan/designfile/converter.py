"""Design-file tables → core objects, the converter side: reference, ADC, digital path, band.

The ``[reference]``, ``[adc]`` and ``[digital]`` tables, and the band the
requirement asks for, which is bounded by the output data rate the converter
and its digital filters deliver. Values are read with a
:class:`resplan.designfile.parts.TableReader`, which collects every problem.
The ADC's noise may be given in any one of seven data-sheet forms; a
peak-to-peak figure needs the factor it was quoted with, none is assumed.

Examples
--------
>>> from resplan.designfile.models import AdcTable
>>> r = TableReader("demo.toml")
>>> adc = read_adc(r, AdcTable(architecture="sar", bits=16, full_scale_range="5 V",
...                            sample_rate="100 kHz", snr="90 dB"), None, None)
>>> adc.bits, adc.full_scale_range_v, r.errors
(16, 5.0, [])
"""

from __future__ import annotations

import math
from typing import Any

from ..chain.converter import (
    ADC,
    InputNoiseDensity,
    NoiseAtRate,
    NoiseTable,
    SnrNoise,
    TransitionNoise,
)
from ..chain.design import OpenPart
from ..chain.signal_chain import Band
from ..chain.stages import Reference
from ..errors import DesignError
from ..noise.bandwidth import DigitalPath
from ..noise.responses import IdealLowpass, SincFilter
from ..units.formatting import format_number, format_si
from .models import AdcTable, DigitalTable, ReferenceTable, RequirementTable
from .parts import TableReader, put_known

__all__ = [
    "read_reference",
    "read_adc",
    "read_digital",
    "read_band",
    "MAX_DECIMATION",
    "MAX_AVERAGE",
]

#: Largest decimation ratio accepted (2^20): beyond it the design is implausible.
MAX_DECIMATION = 2**20
#: Largest post-average accepted, samples.
MAX_AVERAGE = 2**20


def _close(a: float, b: float) -> bool:
    return math.isclose(a, b, rel_tol=1e-6)


# ---------------------------------------------------------------------------
# reference


def read_reference(r: TableReader, t: ReferenceTable) -> Any:
    p = "reference"
    name = t.name or "reference"
    voltage = r.q(t.voltage, "voltage", f"{p}.voltage", required=not t.open, minimum="> 0")
    cutoff = r.q(t.filter_cutoff, "frequency", f"{p}.filter_cutoff", minimum="> 0")
    corner = r.q(t.noise_corner, "frequency", f"{p}.noise_corner", minimum="≥ 0")
    if t.open:
        r.refuse_open(t, p, ("noise", "noise_pp", "pp_factor", "noise_band", "noise_density"))
        if t.ratiometric:
            r.bad(
                f"{p}.ratiometric",
                True,
                "false for an open reference (a ratiometric "
                "reference's noise cancels: there is nothing to size)",
            )
        known: dict[str, Any] = {}
        put_known(known, "voltage_v", voltage, t.voltage)
        put_known(known, "filter_cutoff_hz", cutoff, t.filter_cutoff)
        put_known(known, "noise_corner_hz", corner, t.noise_corner)
        return r.build(p, OpenPart, "reference", name, p, known)
    forms = [k for k in ("noise", "noise_pp", "noise_density") if getattr(t, k) is not None]
    noise = None
    if len(forms) > 1:
        r.bad(
            f"{p}.{forms[1]}",
            getattr(t, forms[1]),
            "one noise figure only: noise (rms in noise_band), noise_pp or noise_density",
        )
    elif not forms:
        if not t.ratiometric:
            r.missing(
                f"{p}.noise",
                "the reference noise (noise or noise_pp with noise_band and "
                "noise_corner, or noise_density), or ratiometric = true",
            )
    elif forms[0] == "noise_density":
        noise = r.density(t.noise_density, t.noise_corner, p, "noise_density", "noise_corner")
    else:
        noise = _band_noise(r, t, p, corner)
    if forms and forms[0] == "noise_density" and t.noise_band is not None:
        r.bad(f"{p}.noise_band", t.noise_band, "no band with a noise density")
    if t.pp_factor is not None and (not forms or forms[0] != "noise_pp"):
        r.bad(f"{p}.pp_factor", t.pp_factor, "a factor only with noise_pp")
    if (
        voltage is None
        or (forms and noise is None)
        or (t.filter_cutoff is not None and cutoff is None)
    ):
        return None
    return r.build(p, Reference, voltage, noise, cutoff, bool(t.ratiometric), name)


def _band_noise(r: TableReader, t: ReferenceTable, p: str, corner: float | None) -> Any:
    if t.noise_pp is not None:
        value = r.q(t.noise_pp, "voltage", f"{p}.noise_pp", minimum="≥ 0")
        k = r.pp_factor(t.pp_factor, p)
        rms = None if value is None or k is None else value / k
        if rms is not None:
            r.notes.append(
                f"reference noise {t.noise_pp} p-p divided by the stated factor {format_number(k)}"
            )
    else:
        rms = r.q(t.noise, "voltage", f"{p}.noise", minimum="≥ 0")
    band = None
    if t.noise_band is None:
        r.missing(f"{p}.noise_band", 'the band of the figure, such as ["0.1 Hz", "10 Hz"]')
    elif len(t.noise_band) != 2:
        r.bad(f"{p}.noise_band", t.noise_band, 'two band edges, such as ["0.1 Hz", "10 Hz"]')
    else:
        lo = r.q(t.noise_band[0], "frequency", f"{p}.noise_band[0]", minimum="> 0")
        hi = r.q(t.noise_band[1], "frequency", f"{p}.noise_band[1]", minimum="> 0")
        if lo is not None and hi is not None:
            if hi > lo:
                band = (lo, hi)
            else:
                r.bad(f"{p}.noise_band[1]", t.noise_band[1], "an upper edge above the lower")
    if t.noise_corner is None:
        r.missing(
            f"{p}.noise_corner",
            'the 1/f corner of the reference noise, such as "10 Hz" '
            '("0 Hz" for white noise): a band figure says nothing of it',
        )
    if rms is None or band is None or corner is None:
        return None
    return r.build(p, Reference.density_from_band_rms, rms, band[0], band[1], corner)


def _reference_voltage(reference: Any) -> float | None:
    if isinstance(reference, Reference):
        return reference.voltage_v
    if isinstance(reference, OpenPart):
        return reference.known.get("voltage_v")
    return None


# ---------------------------------------------------------------------------
# ADC


def read_adc(r: TableReader, t: AdcTable, reference: Any, ref_table: ReferenceTable | None) -> Any:
    p = "adc"
    name = t.name or "ADC"
    need = not t.open
    if t.architecture is None and need:
        r.missing(f"{p}.architecture", "one of sar, delta-sigma")
    if t.bits is None and need:
        r.missing(f"{p}.bits", "a whole number of bits from 1 to 32")
    gain = r.number(t.gain, f"{p}.gain", "a gain > 0 V/V", default=1.0)
    rate = r.q(t.sample_rate, "frequency", f"{p}.sample_rate", required=need, minimum="> 0")
    data_rate = r.q(t.data_rate, "frequency", f"{p}.data_rate", minimum="> 0")
    if need and t.architecture == "delta-sigma" and t.data_rate is None:
        r.missing(f"{p}.data_rate", 'the output data rate of a delta-sigma ADC, such as "10 Hz"')
    fsr = _full_scale(r, t, gain, reference, ref_table, need)
    if t.open:
        r.refuse_open(
            t,
            p,
            (
                "noise",
                "noise_pp",
                "pp_factor",
                "noise_data_rate",
                "noise_gain",
                "scale_with_rate",
                "noise_includes_quantisation",
                "noise_table",
                "noise_table_pp",
                "snr",
                "snr_sample_rate",
                "transition_noise",
                "noise_density",
                "noise_corner",
            ),
        )
        known: dict[str, Any] = {}
        put_known(known, "architecture", t.architecture, t.architecture)
        put_known(known, "bits", t.bits, t.bits)
        put_known(known, "full_scale_range_v", fsr, fsr)
        put_known(known, "sample_rate_hz", rate, t.sample_rate)
        put_known(known, "data_rate_hz", data_rate, t.data_rate)
        put_known(known, "gain", gain, t.gain)
        return r.build(p, OpenPart, "adc", name, p, known)
    noise = _adc_noise(r, t, gain)
    if None in (t.architecture, t.bits, gain, rate, fsr, noise):
        return None
    if t.data_rate is not None and data_rate is None:
        return None
    polarity = _polarity(r, t)
    jitter = r.q(t.aperture_jitter, "time", f"{p}.aperture_jitter", minimum="> 0", default=0.0)
    channels = 1 if t.channels is None else t.channels
    if not 1 <= channels <= 4096:
        r.bad(f"{p}.channels", t.channels, "a whole number of channels from 1 to 4096")
        return None
    if jitter is None:
        return None
    adc = r.build(
        p,
        ADC,
        name,
        t.architecture,
        t.bits,
        fsr,
        rate,
        noise,
        data_rate,
        gain,
        polarity,
        aperture_jitter_s=jitter,
        channels=channels,
    )
    if adc is not None:
        _check_noise_conditions(r, adc, t)
    return adc


def _polarity(r: TableReader, t: AdcTable) -> str | None:
    """The input window's polarity, from ``polarity`` or from ``input_range``."""
    implied = None
    if t.input_range is not None:
        implied = "unipolar" if t.input_range == "unipolar" else "bipolar"
    if t.polarity is not None and implied is not None and t.polarity != implied:
        r.bad("adc.polarity", t.polarity, f"{implied}, as input_range = {t.input_range} implies")
        return None
    return t.polarity or implied


def _range_formula(factor: float, v_ref: float, gain: float) -> str:
    """The ADC range formula with only the terms that apply.

    A factor or a gain of 1 is left out: ``"ADC range = V_ref = 2.50 V"``,
    ``"ADC range = 2·V_ref / gain = 2 × 5.00 V / 128 = 78.1 mV"``.

    Examples
    --------
    >>> _range_formula(1.0, 2.5, 1.0)
    'ADC range = V_ref = 2.50 V'
    >>> _range_formula(2.0, 5.0, 128.0)
    'ADC range = 2·V_ref / gain = 2 × 5.00 V / 128 = 78.1 mV'
    """
    symbols = "V_ref" if factor == 1 else f"{factor:.0f}·V_ref"
    figures = format_si(v_ref, "V") if factor == 1 else f"{factor:.0f} × {format_si(v_ref, 'V')}"
    if gain != 1:
        symbols += " / gain"
        figures += f" / {format_si(gain, '')}"
    result = format_si(factor * v_ref / gain, "V")
    if factor == 1 and gain == 1:
        return f"ADC range = {symbols} = {result}"
    return f"ADC range = {symbols} = {figures} = {result}"


def _full_scale(
    r: TableReader,
    t: AdcTable,
    gain: float | None,
    reference: Any,
    ref_table: ReferenceTable | None,
    need: bool,
) -> float | None:
    p = "adc"
    if t.full_scale_range is not None and t.input_range is not None:
        r.bad(f"{p}.input_range", t.input_range, "either full_scale_range or input_range, not both")
        return None
    if t.full_scale_range is not None:
        fsr = r.q(t.full_scale_range, "voltage", f"{p}.full_scale_range", minimum="> 0")
        if fsr is None or gain is None:
            return None
        if gain != 1:
            r.notes.append(
                f"ADC range = full_scale_range / gain = {t.full_scale_range} / "
                f"{format_si(gain, '')} = "
                f"{format_si(fsr / gain, 'V')} peak-to-peak"
            )
        return fsr / gain
    if t.input_range is not None:
        v_ref = _reference_voltage(reference)
        if v_ref is None:
            if ref_table is None or ref_table.voltage is None:
                r.missing(
                    "reference.voltage",
                    "a reference voltage for adc.input_range, such as "
                    '"2.5 V" (or give adc.full_scale_range)',
                )
            return None
        if gain is None:
            return None
        factor = 1.0 if t.input_range == "unipolar" else 2.0
        swing = "0 … V_ref" if factor == 1 else "±V_ref"
        r.notes.append(
            f"{_range_formula(factor, v_ref, gain)} peak-to-peak ({t.input_range} input, {swing})"
        )
        return factor * v_ref / gain
    if need:
        r.missing(
            f"{p}.full_scale_range",
            'a peak-to-peak range such as "5 V", or input_range '
            "(unipolar, bipolar or differential) with a [reference]",
        )
    return None


_NOISE_FORMS = (
    "noise",
    "noise_pp",
    "noise_table",
    "noise_table_pp",
    "snr",
    "transition_noise",
    "noise_density",
)


def _adc_noise(r: TableReader, t: AdcTable, gain: float | None) -> Any:
    p = "adc"
    form = r.one_of(
        t, p, _NOISE_FORMS, "exactly one noise figure: " + ", ".join(_NOISE_FORMS), "noise"
    )
    if form is None:
        return None
    rate_forms = ("noise", "noise_pp")
    table_forms = ("noise_table", "noise_table_pp")
    if form not in rate_forms:
        r.refuse(
            t,
            p,
            ("noise_data_rate", "scale_with_rate"),
            f"a field only with noise or noise_pp (the noise is given as {form})",
        )
    if form not in rate_forms + table_forms:
        r.refuse(
            t,
            p,
            ("noise_gain", "noise_includes_quantisation"),
            f"a field only with noise or a noise table (the noise is given as {form})",
        )
    if form != "snr":
        r.refuse(t, p, ("snr_sample_rate",), "a field only with snr")
    if form != "noise_density":
        r.refuse(t, p, ("noise_corner",), "a field only with noise_density")
    pp = form in ("noise_pp", "noise_table_pp")
    k = None
    if pp:
        k = r.pp_factor(t.pp_factor, p)
    elif t.pp_factor is not None:
        r.bad(f"{p}.pp_factor", t.pp_factor, "a factor only with noise_pp or noise_table_pp")
    noise_gain = None
    with_quantisation = t.noise_includes_quantisation is not False
    if form in rate_forms + table_forms:
        noise_gain = r.number(t.noise_gain, f"{p}.noise_gain", "a gain > 0 V/V")
        if t.noise_gain is None and gain is not None and gain != 1:
            r.missing(
                f"{p}.noise_gain",
                f"the gain the noise was quoted at (the ADC runs at gain "
                f"{format_si(gain, 'V/V')}; noise depends on it)",
            )
            return None
        if t.noise_gain is not None and noise_gain is None:
            return None
    if form in rate_forms:
        value = r.q(getattr(t, form), "voltage", f"{p}.{form}", minimum="≥ 0")
        at = r.q(
            t.noise_data_rate, "frequency", f"{p}.noise_data_rate", required=True, minimum="> 0"
        )
        if value is None or at is None or (pp and k is None):
            return None
        if pp:
            r.notes.append(
                f"ADC noise {t.noise_pp} p-p divided by the stated factor {format_number(k)}"
            )
            value /= k
        return r.build(
            p, NoiseAtRate, value, at, noise_gain, bool(t.scale_with_rate), with_quantisation
        )
    if form in table_forms:
        rows = []
        for i, (rate_text, noise_text) in enumerate(getattr(t, form)):
            rate = r.q(rate_text, "frequency", f"{p}.{form}[{i}][0]", minimum="> 0")
            value = r.q(noise_text, "voltage", f"{p}.{form}[{i}][1]", minimum="≥ 0")
            rows.append((rate, value))
        if not rows:
            r.bad(f"{p}.{form}", [], "at least one [data rate, noise] row")
            return None
        if any(a is None or b is None for a, b in rows) or (pp and k is None):
            return None
        if pp:
            r.notes.append(
                f"ADC noise table in p-p divided by the stated factor {format_number(k)}"
            )
            rows = [(a, b / k) for a, b in rows]
        return r.build(p, NoiseTable, tuple(rows), noise_gain, with_quantisation)
    if form == "snr":
        snr = r.level_db(t.snr, f"{p}.snr")
        if snr is None:
            return None
        at = r.q(t.snr_sample_rate, "frequency", f"{p}.snr_sample_rate", minimum="> 0")
        if t.snr_sample_rate is not None and at is None:
            return None
        return r.build(p, SnrNoise, snr, at)
    if form == "transition_noise":
        lsb = r.number(
            t.transition_noise, f"{p}.transition_noise", "a noise ≥ 0 LSB rms", minimum="≥ 0"
        )
        return None if lsb is None else r.build(p, TransitionNoise, lsb)
    density = r.density(t.noise_density, t.noise_corner, p, "noise_density", "noise_corner")
    return None if density is None else InputNoiseDensity(density)


def _check_noise_conditions(r: TableReader, adc: ADC, t: AdcTable) -> None:
    """Refuse now, with the other problems, noise quoted at conditions the ADC does not run at."""
    noise = adc.noise
    try:
        if isinstance(noise, NoiseAtRate | NoiseTable):
            noise.rms_at(adc.output_rate_hz, adc.gain)
        elif isinstance(noise, SnrNoise):
            noise.rms(adc.full_scale_range_v, adc.sample_rate_hz)
    except DesignError as err:
        # Show the value as written in the file, not as an SI float.
        key = err.field.removeprefix("adc.")
        written = getattr(t, key, None) if key in AdcTable.model_fields else None
        if key == "noise_table":
            written = t.data_rate
        value = err.value if written is None else written
        r.errors.append(DesignError(err.field, value, err.expected))


# ---------------------------------------------------------------------------
# digital path and band


def read_digital(r: TableReader, t: DigitalTable | None, adc: Any) -> DigitalPath | None:
    p = "digital"
    t = t or DigitalTable()
    if isinstance(adc, OpenPart):
        arch = adc.known.get("architecture")
        rate = adc.known.get("sample_rate_hz")
        data_rate = adc.known.get("data_rate_hz")
    elif isinstance(adc, ADC):
        arch, rate, data_rate = adc.architecture, adc.sample_rate_hz, adc.data_rate_hz
    else:
        return None
    if arch is None or rate is None:
        return None
    stages: list[Any] = []
    if arch == "delta-sigma":
        if data_rate is None:
            return None
        if t.decimation is None:
            r.missing(
                f"{p}.decimation", 'the decimation filter of the delta-sigma ADC, such as "sinc3"'
            )
            return None
        ratio = rate / data_rate
        whole = round(ratio) if math.isfinite(ratio) else 0
        if not 1 <= whole <= MAX_DECIMATION or not _close(ratio, whole):
            r.bad(
                f"{p}.decimation",
                t.decimation,
                f"a whole decimation ratio sample_rate / data_rate from 1 to {MAX_DECIMATION} "
                f"(here {format_si(rate, 'Hz')} / {format_si(data_rate, 'Hz')} = "
                f"{format_number(ratio, digits=6)})",
            )
            return None
        stages.append(SincFilter(int(t.decimation[-1]), int(whole), rate))
    elif t.decimation is not None:
        r.bad(f"{p}.decimation", t.decimation, "no decimation filter for a SAR ADC (use average)")
    here = stages[-1].output_rate_hz if stages else rate
    if t.average is not None:
        if not 1 <= t.average <= MAX_AVERAGE:
            r.bad(f"{p}.average", t.average, f"a whole number of samples from 1 to {MAX_AVERAGE}")
        else:
            stages.append(SincFilter(1, t.average, here))
            here /= t.average
    if t.band_limit_taps is not None and (t.band_limit is None or t.band_limit_taps < 1):
        r.bad(
            f"{p}.band_limit_taps",
            t.band_limit_taps,
            "a whole number of taps ≥ 1, with the band_limit it realises",
        )
        return None
    if t.band_limit is not None:
        cutoff = r.q(t.band_limit, "frequency", f"{p}.band_limit", minimum="> 0")
        if cutoff is not None:
            limit = r.build("", IdealLowpass, cutoff, here, t.band_limit_taps)
            if limit is None:
                r.errors[-1] = DesignError(
                    f"{p}.band_limit",
                    t.band_limit,
                    f"a band limit ≤ half the rate it runs at ({format_si(here / 2, 'Hz')})",
                )
            else:
                stages.append(limit)
    return DigitalPath(tuple(stages)) if stages else None


def read_band(
    r: TableReader, t: RequirementTable, digital: DigitalPath | None, adc: Any
) -> Band | None:
    p = "requirement"
    f_low = r.q(t.f_low, "frequency", f"{p}.f_low", minimum="> 0", default=0.01)
    f_high = r.q(t.f_high, "frequency", f"{p}.f_high", minimum="> 0")
    data_rate = r.q(t.data_rate, "frequency", f"{p}.data_rate", minimum="> 0")
    if f_low is None or (t.f_high is not None and f_high is None):
        return None
    out_rate = None
    if digital is not None:
        out_rate = digital.output_rate_hz
    elif isinstance(adc, ADC):
        out_rate = adc.output_rate_hz
    if data_rate is not None and out_rate is not None and not _close(data_rate, out_rate):
        r.bad(
            f"{p}.data_rate",
            t.data_rate,
            f"the chain's output data rate, {format_si(out_rate, 'Hz')} (ADC rates and [digital])",
        )
    if f_high is None and data_rate is not None:
        f_high = data_rate / 2
        r.notes.append(f"signal band top = half the output data rate = {format_si(f_high, 'Hz')}")
    nyquist = (out_rate if out_rate is not None else data_rate or math.inf) / 2
    if f_high is not None and f_high > nyquist * (1 + 1e-9):
        r.bad(
            f"{p}.f_high",
            t.f_high,
            f"a band top ≤ half the output data rate ({format_si(nyquist, 'Hz')})",
        )
        return None
    band = r.build("", Band, f_low, f_high)
    if band is None:
        err = r.errors[-1]
        r.errors[-1] = DesignError(err.field.replace("band.", f"{p}."), err.value, err.expected)
    return band
