"""How each part of a design is described in the chain table (section 2)."""

from __future__ import annotations

from typing import Any

from ...chain.design import Design, OpenPart
from ...units.formatting import format_counts, format_db, format_si, format_temperature
from .writer import rms

# The unit a known figure's key names by its suffix ("gbw_hz", "voltage_v").
_KEY_UNITS = (("_hz", "Hz"), ("_v", "V"), ("gain", "V/V"))


def _known_value(key: str, value: Any) -> str:
    if not isinstance(value, float):
        return str(value)
    unit = next((u for suffix, u in _KEY_UNITS if key.endswith(suffix)), "")
    return format_si(value, unit)


def _gbw_text(part: Any) -> str:
    """"; GBW …" for a part with a stated gain-bandwidth product, else nothing."""
    return "" if part.gbw_hz is None else f"; GBW {format_si(part.gbw_hz, 'Hz')}"


def _density(nd: Any, unit: str) -> str:
    if nd is None:
        return "—"
    text = format_si(nd.white, unit)
    if nd.corner_hz:
        text += f" (1/f corner {format_si(nd.corner_hz, 'Hz')})"
    return text


def describe_part(part: Any) -> tuple[str, str, str]:
    """(name, kind, the figures the budget uses) of one part of a design, for a table."""
    from ...chain.converter import ADC
    from ...chain.stages import (
        ActiveFilter,
        IntegratedAmplifier,
        InvertingStage,
        NonInvertingStage,
        RCFilter,
        Reference,
        Sensor,
        TransimpedanceStage,
    )

    if isinstance(part, OpenPart):
        known = "; ".join(f"{k} = {_known_value(k, v)}" for k, v in part.known.items())
        return (
            part.name,
            f"open {part.kind}",
            "to be planned" + (f"; known: {known}" if known else ""),
        )
    if isinstance(part, Sensor):
        current = part.output == "current"
        figures = (
            f"span {format_si(part.span_v, part.unit)} "
            f"({'bipolar' if part.bipolar else 'unipolar'}); "
            f"{'shunt' if current else 'source'} resistance {format_si(part.resistance_ohm, 'Ω')}"
        )
        if part.capacitance_f is not None:
            figures += f"; capacitance {format_si(part.capacitance_f, 'F')}"
        if part.dark_current_a:
            figures += f"; dark current {format_si(part.dark_current_a, 'A')}"
        if part.noise is not None:
            figures += f"; own noise {_density(part.noise, part.unit + '/√Hz')}"
        if part.temperature_k is not None:
            figures += f"; at {format_temperature(part.temperature_k)}"
        return part.name, "current-output sensor" if current else "sensor", figures
    if isinstance(part, TransimpedanceStage):
        figures = (
            f"R_f {format_si(part.rf_ohm, 'Ω')} (gain {format_si(part.rf_ohm, 'V/A')}), "
            f"C_f {'none' if part.cf_f is None else format_si(part.cf_f, 'F')}; "
            f"e_n {_density(part.en, 'V/√Hz')}; i_n− {_density(part.in_minus, 'A/√Hz')}"
        )
        if part.input_capacitance_f:
            figures += f"; input capacitance {format_si(part.input_capacitance_f, 'F')}"
        figures += _gbw_text(part)
        return part.name, "transimpedance stage", figures
    if isinstance(part, InvertingStage):
        figures = (
            f"gain {format_si(part.gain, 'V/V')} (RF {format_si(part.rf_ohm, 'Ω')}, R_in "
            f"{format_si(part.rin_ohm, 'Ω')}); e_n {_density(part.en, 'V/√Hz')}; "
            f"i_n− {_density(part.in_minus, 'A/√Hz')}"
        )
        figures += _gbw_text(part)
        return part.name, "inverting stage", figures
    if isinstance(part, NonInvertingStage):
        figures = (
            f"gain {format_si(part.gain, 'V/V')} (RF {format_si(part.rf_ohm, 'Ω')}, RG "
            f"{'—' if part.rg_ohm is None else format_si(part.rg_ohm, 'Ω')}); "
            f"e_n {_density(part.en, 'V/√Hz')}; i_n+ {_density(part.in_plus, 'A/√Hz')}"
        )
        if part.in_minus is not None:
            figures += f"; i_n− {_density(part.in_minus, 'A/√Hz')}"
        figures += _gbw_text(part)
        return part.name, "op-amp stage", figures
    if isinstance(part, IntegratedAmplifier):
        figures = (
            f"gain {format_si(part.gain, 'V/V')}; input noise {_density(part.input_noise, 'V/√Hz')}"
        )
        if part.output_noise is not None:
            figures += f"; output noise {_density(part.output_noise, 'V/√Hz')}"
        if part.current_noise is not None:
            figures += f"; current noise {_density(part.current_noise, 'A/√Hz')}"
        if part.bandwidth_hz is not None:
            figures += f"; bandwidth {format_si(part.bandwidth_hz, 'Hz')}"
        return part.name, "integrated amplifier", figures
    if isinstance(part, RCFilter):
        return (
            part.name,
            "RC filter",
            (
                f"R {format_si(part.resistance_ohm, 'Ω')}, C {format_si(part.capacitance_f, 'F')}"
                + (
                    f", C to ground per leg {format_si(part.leg_capacitance_f, 'F')}"
                    if part.leg_capacitance_f
                    else ""
                )
                + f"; corner {format_si(part.cutoff_hz, 'Hz')}"
            ),
        )
    if isinstance(part, ActiveFilter) and part.sections:
        figures = (
            f"{part.topology}, order {part.order}, corner {format_si(part.cutoff_hz, 'Hz')}, "
            f"gain {format_si(part.gain, 'V/V')}; sections by value: "
            + "; ".join(_section_text(v) for v in part.sections)
        )
        if part.en is not None:
            figures += f"; e_n {_density(part.en, 'V/√Hz')}"
        figures += _gbw_text(part)
        return part.name, "active filter", figures
    if isinstance(part, ActiveFilter):
        figures = (
            f"{part.response}, order {part.order}, corner {format_si(part.cutoff_hz, 'Hz')}; "
            f"gain {format_si(part.gain, 'V/V')}"
        )
        if part.noise_resistance_ohm:
            figures += f"; equivalent noise resistance {format_si(part.noise_resistance_ohm, 'Ω')}"
        if part.en is not None:
            figures += f"; e_n {_density(part.en, 'V/√Hz')}"
        return part.name, "active filter", figures
    if isinstance(part, Reference):
        figures = f"{format_si(part.voltage_v, 'V')}"
        if part.ratiometric:
            figures += "; ratiometric (excitation from the reference)"
        else:
            figures += f"; noise {_density(part.noise, 'V/√Hz')}"
        if part.filter_cutoff_hz is not None:
            figures += f"; filter {format_si(part.filter_cutoff_hz, 'Hz')}"
        return part.name, "reference", figures
    if isinstance(part, ADC):
        figures = (
            f"{part.architecture}, {part.bits} bits, full-scale range "
            f"{format_si(part.full_scale_range_v, 'V')} peak to peak; sample rate "
            f"{format_si(part.sample_rate_hz, 'Hz')}; output rate "
            f"{format_si(part.output_rate_hz, 'Hz')}; gain {format_si(part.gain, 'V/V')}"
        )
        return part.name, "ADC", figures
    return str(getattr(part, "name", part)), type(part).__name__, ""


def _section_text(values: Any) -> str:
    """A filter section's component values, in the design file's names."""
    names = {
        "r1_ohm": ("R1", "Ω"),
        "r2_ohm": ("R2", "Ω"),
        "r3_ohm": ("R3", "Ω"),
        "c1_f": ("C1", "F"),
        "c2_f": ("C2", "F"),
        "rf_ohm": ("RF", "Ω"),
        "rg_ohm": ("RG", "Ω"),
        "r_ohm": ("R", "Ω"),
        "c_f": ("C", "F"),
    }
    return ", ".join(
        f"{label} {format_si(getattr(values, key), unit)}"
        for key, (label, unit) in names.items()
        if getattr(values, key, None) is not None
    )


def describe_adc_noise(adc: Any) -> str:
    """How the ADC's own noise is given, and the conditions it holds at."""
    from ...chain.converter import (
        ADC,
        InputNoiseDensity,
        NoiseAtRate,
        NoiseTable,
        SnrNoise,
        TransitionNoise,
    )

    if not isinstance(adc, ADC):
        return ""
    n = adc.noise
    gain = "" if getattr(n, "gain", None) is None else f" at gain {format_si(n.gain, 'V/V')}"
    if isinstance(n, NoiseAtRate):
        text = (
            f"{rms(n.rms_v)} at its input, quoted at {format_si(n.data_rate_hz, 'Hz')} data "
            f"rate{gain}, quantisation included"
        )
        if n.scale_with_rate:
            text += "; carried to other data rates as white noise (√ODR)"
        return text + "."
    if isinstance(n, NoiseTable):
        rows = ", ".join(f"{format_si(r, 'Hz')}: {rms(v)}" for r, v in n.rows)
        return f"table of rms against data rate{gain} ({rows}); quantisation included."
    if isinstance(n, SnrNoise):
        at = "" if n.sample_rate_hz is None else f" at {format_si(n.sample_rate_hz, 'Hz')}"
        return (
            f"from an SNR of {format_db(n.snr_db)}{at} for a full-scale sine; "
            "quantisation included."
        )
    if isinstance(n, TransitionNoise):
        return (
            f"transition noise {format_si(n.lsb_rms, 'LSB')} rms per sample; "
            "quantisation q/√12 added."
        )
    if isinstance(n, InputNoiseDensity):
        return (
            f"input-referred density {_density(n.density, 'V/√Hz')}, flat over the first "
            "Nyquist zone; quantisation q/√12 added."
        )
    return ""


def describe_digital(design: Design) -> str:
    """The digital filter stages in the order they run."""
    from ...noise.responses import IdealLowpass, SincFilter

    parts = []
    for stage in design.digital.stages if design.digital is not None else ():
        if isinstance(stage, SincFilter):
            what = "average" if stage.order == 1 else f"sinc^{stage.order}"
            parts.append(
                f"{what} of {format_counts(stage.length)} at "
                f"{format_si(stage.input_rate_hz, 'Hz')} → "
                f"{format_si(stage.output_rate_hz, 'Hz')}"
            )
        elif isinstance(stage, IdealLowpass):
            parts.append(
                f"band limit {format_si(stage.cutoff_hz, 'Hz')} at "
                f"{format_si(stage.input_rate_hz, 'Hz')}"
            )
    return "; then ".join(parts)
