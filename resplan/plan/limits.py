"""Turning a part's share of the noise into the figures its data sheet quotes.

Every conversion goes through the same noise bandwidths the forward budget uses
(aliases included), so a part exactly at its limit uses exactly its share.
"""

from __future__ import annotations

import math

from ..chain.alias import allowed_residue, path_attenuation_db
from ..chain.converter import NoiseAtRate
from ..chain.design import Design, OpenPart
from ..chain.resolution import sine_rms
from ..chain.signal_chain import Chain
from ..chain.stages import ActiveFilter, NoiseDensity
from ..noise.bandwidth import noise_bandwidth
from ..noise.physics import enob_from_sinad, noise_rms_to_snr
from ..noise.responses import AnalogLowpass
from ..units.formatting import format_number, format_percent, format_si
from .provisional import Slot, signal_band_top
from .rows import PartRequirement
from .stage_limits import filter_noise_rows, first_gain_index, gain_stage_rows

__all__ = [
    "PartRequirement",
    "part_limits",
    "gain_limits",
    "first_gain_index",
    "UNSUPPRESSED",
]


def _v(value: float) -> str:
    return format_si(value, "V")


def _ohm(value: float) -> str:
    return format_si(value, "Ω")


def _band_text(nb) -> str:
    return f"white noise bandwidth {format_si(nb.white_hz, 'Hz')}"


def _filter_rows(slot: Slot, var: float, chain: Chain, design: Design, band, grid_points):
    rows, limit = filter_noise_rows(slot, var, chain)
    rows.extend(_alias_rows(slot.part, chain.stages[slot.index], chain, design))
    return rows, limit


def _alias_rows(part: OpenPart, stage: ActiveFilter, chain: Chain, design: Design) -> list:
    req = design.requirement
    fs = chain.adc.sample_rate_hz
    top = signal_band_top(design)
    response = stage._lowpass.kind
    known_cutoff = part.known.get("cutoff_hz")
    cutoff = known_cutoff if known_cutoff is not None else top
    candidates = _stated_tones(design, chain, stage)
    if not candidates:
        f_i = fs - top
        candidates = [
            (
                f_i,
                sine_rms(req.span_v),
                None,
                f"a full-scale sine at the first alias band, f_s − f_B = {format_si(f_i, 'Hz')} "
                "(no interferer stated)",
            )
        ]
    # Size the filter against the stated tone that needs the highest order.
    best = None
    for f_i, amplitude, own_allowance, source in candidates:
        residue, residue_text = allowed_residue(req)
        if own_allowance is not None:
            residue, residue_text = own_allowance, "its own allowance"
        needed_db = 20 * math.log10(amplitude / residue) if amplitude > residue else 0.0
        helped_db = sum(path_attenuation_db(chain, f_i, skip=stage))
        filter_db = max(0.0, needed_db - helped_db)
        order = _min_order(response, cutoff, f_i, filter_db)
        key = (math.inf if order is None else order, filter_db)
        if best is None or key > best[0]:
            best = (key, f_i, amplitude, source, residue, residue_text, needed_db, helped_db)
    _, f_i, amplitude, source, residue, residue_text, needed_db, helped_db = best
    filter_db = max(0.0, needed_db - helped_db)
    rows = [
        PartRequirement(
            part.name,
            part.field_path,
            f"attenuation at {format_si(f_i, 'Hz')}",
            filter_db,
            "dB",
            "min",
            f"{source}; residue ≤ {_v(residue)} rms ({residue_text}); digital filter and "
            f"other stages give {helped_db:.1f} dB of the {needed_db:.1f} dB",
            "A = 20·log10(A_i/residue) − A_digital − A_other",
        )
    ]
    if f_i <= 0:
        return rows
    known_order = part.known.get("order")
    min_order = _min_order(response, cutoff, f_i, filter_db)
    rows.append(
        PartRequirement(
            part.name,
            part.field_path,
            f"{response} order for a cut-off of {format_si(cutoff, 'Hz')}",
            float(min_order) if min_order is not None else math.inf,
            "",
            "min",
            f"{UNSUPPRESSED}: raise the sample rate, lower the cut-off, or reduce the "
            "interferer at its source"
            if min_order is None
            else ("cut-off as stated" if known_cutoff is not None else "cut-off at the band top"),
            "A(f) = 10·log10(1 + (f/f_c)^(2n)) for Butterworth; numerical otherwise",
        )
    )
    order = int(known_order) if known_order is not None else (min_order or 8)
    if response == "rc":
        order = 1
    fc_max = _max_cutoff(response, order, f_i, filter_db)
    rows.append(
        PartRequirement(
            part.name,
            part.field_path,
            f"cut-off of an order-{order} {response} filter",
            fc_max,
            "Hz",
            "max",
            f"inside the signal band (top {format_si(top, 'Hz')}): not usable, the signal would "
            "droop; "
            "raise the order or the sample rate"
            if fc_max < top
            else f"the signal band top is {format_si(top, 'Hz')}",
            "f_c = f / (10^(A/10) − 1)^(1/2n) for Butterworth",
        )
    )
    return rows


#: Condition of the order row when no order suppresses the interferer (the plan is infeasible).
UNSUPPRESSED = "no order up to 8 reaches it"


def _min_order(response: str, cutoff: float, f_i: float, filter_db: float) -> int | None:
    """Lowest order of ``response`` at ``cutoff`` that attenuates ``f_i`` by ``filter_db``."""
    if f_i <= 0:
        return None
    for n in range(1, 9):
        if response == "rc" and n > 1:
            break
        if float(AnalogLowpass(response, n, cutoff).attenuation_db(f_i)) >= filter_db:
            return n
    return None


def _stated_tones(design: Design, chain: Chain, stage) -> list:
    """(frequency, amplitude, own allowance, description) of each stated tone and mains
    harmonic (at its worst frequency inside the tolerance); spectra are not sized here."""
    from ..chain.interference import Mains, Tone, worst_in_window
    from ..chain.verdict import stated_interferers

    out = []
    for x in stated_interferers(design):
        if isinstance(x, Tone):
            out.append(
                (
                    x.frequency_hz,
                    x.amplitude_v,
                    x.allowance_v,
                    f"{x.name}: {_v(x.amplitude_v)} rms at {format_si(x.frequency_hz, 'Hz')} (at "
                    "the sensor)",
                )
            )
        elif isinstance(x, Mains):
            for f0 in x.frequencies_hz:
                for h, a in enumerate(x.amplitudes_v, start=1):
                    f = worst_in_window(
                        chain, h * f0 * (1 - x.tolerance), h * f0 * (1 + x.tolerance)
                    )
                    out.append(
                        (
                            f,
                            a,
                            x.allowance_v,
                            f"{x.name}: harmonic {h} of {format_si(f0, 'Hz')}, {_v(a)} rms, worst "
                            "at "
                            f"{format_si(f, 'Hz')} within ±{format_percent(x.tolerance)}",
                        )
                    )
    return out


def _max_cutoff(response: str, order: int, f_i: float, needed_db: float) -> float:
    if needed_db <= 0:
        return math.inf
    if response in ("rc", "butterworth"):
        return f_i / (10 ** (needed_db / 10) - 1) ** (1 / (2 * order))
    lo, hi = f_i * 1e-9, f_i
    for _ in range(200):
        mid = math.sqrt(lo * hi)
        if float(AnalogLowpass(response, order, mid).attenuation_db(f_i)) >= needed_db:
            lo = mid
        else:
            hi = mid
    return lo


def _reference_rows(slot: Slot, var: float, chain: Chain, design: Design, band, grid_points):
    part = slot.part
    ref = chain.reference
    peak = chain.sensor.peak_v
    sigma_ref = math.sqrt(var) * ref.voltage_v / peak
    nb = chain.reference_bandwidth(band.f_low_hz, grid_points)
    fc = part.known.get("noise_corner_hz", 0.0)
    density = sigma_ref / math.sqrt(nb.white_hz + fc * nb.flicker)
    rms_01_10 = density * math.sqrt(fc * math.log(100.0) + 9.9)
    corner_text = f"1/f corner {format_si(fc, 'Hz')}" + (
        "" if "noise_corner_hz" in part.known else " (assumed: state it)"
    )
    rows = [
        PartRequirement(
            part.name,
            part.field_path,
            "noise in the chain's band",
            sigma_ref,
            "V",
            "max",
            f"evaluated at the largest input ({_v(peak)} at the sensor); {_band_text(nb)}",
            "σ_ref = σ_share · V_ref / V_in,max",
        ),
        PartRequirement(
            part.name,
            part.field_path,
            "noise relative to V_ref",
            sigma_ref / ref.voltage_v * 1e6,
            "ppm",
            "max",
            f"of {format_si(ref.voltage_v, 'V')}, rms",
            "σ_ref / V_ref",
        ),
        PartRequirement(
            part.name,
            part.field_path,
            "white noise density",
            density,
            "V/√Hz",
            "max",
            corner_text,
            "e = σ_ref / √(ENBW + f_c·K_1/f)",
        ),
        PartRequirement(
            part.name,
            part.field_path,
            "equivalent rms noise 0.1–10 Hz",
            rms_01_10,
            "V",
            "max",
            f"for that density and corner (peak-to-peak ≈ 6.6× rms at 99.9 %); {corner_text}",
            "e·√(f_c·ln 100 + 9.9 Hz)",
        ),
    ]
    return rows, {"noise": NoiseDensity(density, fc)}


def _converter_bandwidth_hz(chain: Chain, post: float, grid_points: int) -> float | None:
    """Noise bandwidth of the converter's own output (its decimator), Hz; None if not modelled.

    The same bandwidths as :meth:`Chain.post_variance_factor`: the whole digital
    path's over the post factor is the converter's own.
    """
    if chain.digital is None:
        return None
    f_low = chain.output_rate_hz * 1e-6
    full = noise_bandwidth(
        (), chain.digital, f_low, folded_source=True, grid_points=grid_points
    ).white_hz
    return (full + f_low) / post


def _delta_sigma_rows(
    slot: Slot, at_rate: float, post: float, chain: Chain, design: Design, grid_points: int
) -> list[PartRequirement]:
    """A delta-sigma converter's limits in the forms its data sheet quotes.

    Noise referred to its input in V rms and V p-p at the chain's data rate and
    gain, the equivalent density over the decimator's noise bandwidth, and the
    effective and noise-free resolution at that rate; never LSB or a full-scale-sine
    SNR, which such data sheets do not quote per data rate.
    """
    part = slot.part
    adc = chain.adc
    rate = adc.output_rate_hz
    req = design.requirement
    k_pp = req.k_pp
    fsr = adc.full_scale_range_v
    at = f"at {format_si(rate, 'Hz')} data rate, gain {format_si(adc.gain, 'V/V')}"
    after = (
        ""
        if post == 1
        else "; before the post-filter, which divides its power by "
        + format_number(1 / post, digits=4)
    )
    rows = [
        PartRequirement(
            part.name,
            part.field_path,
            f"input-referred noise {at}",
            at_rate,
            "V",
            "max",
            f"rms, quantisation included{after}",
            "σ_ADC = σ_share · G_total / √(post factor)",
        ),
        PartRequirement(
            part.name,
            part.field_path,
            f"input-referred noise peak-to-peak {at}",
            k_pp * at_rate,
            "V",
            "max",
            f"k_pp = {format_number(k_pp)} × rms, {format_percent(req.coverage, 4)} coverage of "
            "Gaussian noise",
            "σ_pp = k_pp · σ_ADC, k_pp = 2√2·erf⁻¹(P) (JCGM 100:2008)",
        ),
    ]
    own_hz = _converter_bandwidth_hz(chain, post, grid_points)
    if own_hz is not None and own_hz > 0:
        rows.append(
            PartRequirement(
                part.name,
                part.field_path,
                f"equivalent input noise density {at}",
                at_rate / math.sqrt(own_hz),
                "V/√Hz",
                "max",
                f"white, over the decimator's noise bandwidth {format_si(own_hz, 'Hz')}",
                "e = σ_ADC / √ENBW_decimator",
            )
        )
    if at_rate > 0:
        rows += [
            PartRequirement(
                part.name,
                part.field_path,
                f"effective resolution {at}",
                math.log2(fsr / at_rate),
                "bits",
                "min",
                f"of the full-scale range {_v(fsr)} p-p, rms noise",
                "log2(FSR / σ_ADC)",
            ),
            PartRequirement(
                part.name,
                part.field_path,
                f"noise-free resolution {at}",
                math.log2(fsr / (k_pp * at_rate)),
                "bits",
                "min",
                f"of the full-scale range {_v(fsr)} p-p, peak-to-peak noise at "
                f"k_pp = {format_number(k_pp)}",
                "log2(FSR / (k_pp · σ_ADC))",
            ),
        ]
    return rows


def _adc_rows(slot: Slot, var: float, chain: Chain, design: Design, band, grid_points):
    part = slot.part
    adc = chain.adc
    post = chain.post_variance_factor()
    at_input = math.sqrt(var) * chain.total_gain
    at_rate = at_input / math.sqrt(post)
    rate = adc.output_rate_hz
    if adc.architecture == "delta-sigma":
        rows = _delta_sigma_rows(slot, at_rate, post, chain, design, grid_points)
        return rows, {"noise": NoiseAtRate(at_rate, rate)}
    snr = float(noise_rms_to_snr(at_rate, adc.full_scale_range_v)) if at_rate > 0 else math.inf
    after = (
        ""
        if post == 1
        else " (before the post-filter, which divides its power by "
        + f"{format_number(1 / post, digits=4)})"
    )
    rows = [
        PartRequirement(
            part.name,
            part.field_path,
            f"noise at its input at {format_si(rate, 'Hz')} data rate",
            at_rate,
            "V",
            "max",
            f"rms, quantisation included, gain {format_si(adc.gain, 'V/V')}{after}",
            "σ_ADC = σ_share · G_total / √(post factor)",
        ),
        PartRequirement(
            part.name,
            part.field_path,
            "SNR, full-scale sine",
            snr,
            "dB",
            "min",
            f"full-scale range {format_si(adc.full_scale_range_v, 'V')} p-p at "
            f"{format_si(rate, 'Hz')}",
            "SNR = 20·log10((FSR/2√2)/σ) (IEEE Std 1241)",
        ),
        PartRequirement(
            part.name,
            part.field_path,
            "ENOB",
            float(enob_from_sinad(snr)),
            "bits",
            "min",
            "from the SNR above",
            "ENOB = (SNR − 1.76)/6.02 (IEEE Std 1241)",
        ),
    ]
    if "bits" in part.known:
        q = adc.quantisation_rms_v
        if q > at_rate:
            osr = (q / at_rate) ** 2
            rows.append(
                PartRequirement(
                    part.name,
                    part.field_path,
                    f"oversampling ratio for an ideal {adc.bits}-bit quantiser",
                    osr,
                    "",
                    "min",
                    "white (dithered) quantisation noise averaged down, 10·log10(OSR) dB",
                    "OSR = (q/√12 / σ)²",
                )
            )
        else:
            rows.append(
                PartRequirement(
                    part.name,
                    part.field_path,
                    "transition noise",
                    math.sqrt(at_rate**2 - q**2) / adc.lsb_v,
                    "LSB",
                    "max",
                    f"rms, with quantisation q/√12 of {adc.bits} bits added",
                    "√(σ² − q²/12) / LSB",
                )
            )
    return rows, {"noise": NoiseAtRate(at_rate, rate)}


def _no_room(slot: Slot, chain: Chain):
    """A part left with nothing: it would have to be noiseless."""
    part = slot.part
    row = PartRequirement(
        part.name,
        part.field_path,
        "noise allowance",
        0.0,
        "V",
        "max",
        "nothing is left for this part (see the reasons and levers)",
        "σ² = 0",
    )
    if slot.index is not None:
        noiseless = slot.stage()
        rows = [row, *slot.gbw_rows]
        if part.kind == "filter" and noiseless.topology is None:
            return rows, {"noise_resistance_ohm": 0.0, "stage": noiseless}
        return rows, {"en": NoiseDensity(0.0), "stage": noiseless, "stage_split": None}
    limit = {
        "reference": {"noise": NoiseDensity(0.0)},
        "adc": {"noise": NoiseAtRate(0.0, chain.adc.output_rate_hz)},
    }[part.kind]
    return [row], limit


def _gain_stage_rows(slot: Slot, var: float, chain: Chain, design: Design, band, grid_points):
    return gain_stage_rows(slot, var, chain, design)


_CONVERTERS = {
    "amplifier": _gain_stage_rows,
    "inverting": _gain_stage_rows,
    "transimpedance": _gain_stage_rows,
    "filter": _filter_rows,
    "reference": _reference_rows,
    "adc": _adc_rows,
}


def gain_limits(slots, chain: Chain, design: Design, fixed, allowed: float, reasons: list) -> list:
    """Largest gain the ADC range allows and the least the fixed ADC noise needs."""
    i = first_gain_index(chain)
    if i is None:
        return []
    stage = chain.stages[i]
    name = stage.name
    gain_unit = "V/A" if design.sensor.unit == "A" else "V/V"
    path = next((s.part.field_path for s in slots if s.index == i), f"stages[{i}]")
    g_in = chain.gain_before(i)
    others = chain.total_gain / stage.gain
    headroom = design.requirement.headroom
    g_max = (1.0 - headroom) * chain.adc.full_scale_range_v / (design.sensor.span_v * others)
    kept = f", keeping {format_percent(headroom)} headroom" if headroom > 0 else ""
    rows = [
        PartRequirement(
            name,
            path,
            "front-end gain the ADC range allows",
            g_max,
            gain_unit,
            "max",
            f"sensor span {format_si(design.sensor.span_v, design.sensor.unit)} into "
            f"{format_si(chain.adc.full_scale_range_v, 'V')} "
            f"full-scale range{kept}",
            "G_max = (1 − headroom) · FSR / (span · other gains)",
        )
    ]
    later = {s.name for s in chain.stages[i + 1 :]} | {chain.adc.name}
    post_sq = sum((c.rms_v * g_in * stage.gain) ** 2 for c in fixed if c.stage in later)
    pre_sq = sum(c.rms_v**2 for c in fixed if c.stage not in later)
    room = allowed**2 - pre_sq
    if post_sq > 0 and room > 0:
        g_min = math.sqrt(post_sq) / (math.sqrt(room) * g_in)
        rows.append(
            PartRequirement(
                name,
                path,
                "front-end gain the given later parts need",
                g_min,
                gain_unit,
                "min",
                "their noise alone fills the budget at this gain, everything else noiseless",
                "G_min = σ_after / (√(σ² − σ_before²) · G_in)",
            )
        )
        if g_min > g_max * (1 + 1e-9):
            reasons.append(
                "the ADC's noise needs a front-end gain of at least "
                f"{format_si(g_min, gain_unit)} but the ADC range allows at most "
                f"{format_si(g_max, gain_unit)}: a quieter ADC or a larger span"
            )
    return rows


def part_limits(slot: Slot, var: float, chain: Chain, design: Design, band, grid_points: int):
    """Rows of figures and the limits to realise one open part with variance ``var`` (V²)."""
    if var > 0:
        return _CONVERTERS[slot.part.kind](slot, var, chain, design, band, grid_points)
    return _no_room(slot, chain)
