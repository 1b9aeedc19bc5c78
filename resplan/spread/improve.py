"""What to improve first: the bits of noise-free resolution each figure 10 % better gains.

For every figure the noise depends on (each amplifier's e_n and i_n, the source
resistance, the ADC's and the reference's noise, 1/f corners, filter cut-offs,
the data rate, the temperature, the gain of a stage), the design is rebuilt with
that figure 10 % better, the forward budget solved again, and the gain in
noise-free bits over the sensor span recorded: the finite-difference form of
d(bits)/d(figure) × 10 %. Ranked largest first, it is the quantitative form of
"put the gain early" and of "ignore a source under 1/5 of the largest" (such a
source's 10 % gains almost nothing). For a noise term of power share s, 10 %
less density gains −½·log2(1 − 0.19·s) bits; the tests hold the two to each other.

"Better" is lower for noise, resistance, corners, cut-offs, data rate and
temperature (10 % lower in kelvin), higher for a gain; an SNR figure rises by
20·log10(1/0.9) = 0.915 dB (10 % less noise). A figure whose change the design
refuses (a data rate the noise table does not list, a gain the noise was not
quoted at) is listed as not evaluated, with the reason.

The ranking is computed without a full budget per figure where none is needed
(the same sums, to rounding): the ADC's or the reference's noise 10 % lower scales
that one contribution's power by 0.81 exactly; a figure that moves only densities
of the front end (an e_n, an i_n, a 1/f corner, a temperature: the circuit's parts
and the ADC, reference, digital path, band, requirement, gain and span all come out
unchanged when the design is rebuilt) scales each moved source's variance
e_w²·(W + f_c·F) with its path integrals W and F, read back from the typical
budget. Figures that move a corner or a rate take a full forward budget.
``tests/test_spread.py`` holds the ranking to one with a full budget per figure.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

import numpy as np

from ..chain.budget import Budget, forward_budget
from ..chain.design import Design
from ..chain.resolution import noise_free_bits
from ..errors import ResplanError
from .model import exact_budget

__all__ = ["Improvement", "improvements", "STEP", "MAX_FIGURE_STAGES"]

#: How much better each figure is made.
STEP = 0.10
#: What to improve is evaluated while figures × (stages + 1) stays at or under this.
#: Each figure needs a budget of the whole chain, so the work grows as the square of a
#: long chain's length; a chain of 10 stages with 50 figures stays under it (about half a
#: second), and a longer one is checked in linear time without the ranking (common
#: practice, no source).
MAX_FIGURE_STAGES = 600
_SNR_STEP_DB = 20 * math.log10(1 / (1 - STEP))

# (pattern on the field path, what it is, factor) — the first match wins.
_RULES: tuple[tuple[str, str, float], ...] = (
    (r"^stages\[\d+\]\.(en|en_out)$", "voltage noise", 1 - STEP),
    (r"^stages\[\d+\]\.(in|in_minus)$", "current noise", 1 - STEP),
    (r"^stages\[\d+\]\.\w*corner$", "1/f corner", 1 - STEP),
    (r"^stages\[\d+\]\.(resistance|noise_resistance)$", "resistance", 1 - STEP),
    (r"^stages\[\d+\]\.cutoff$", "cut-off", 1 - STEP),
    (r"^stages\[\d+\]\.capacitance$", "cut-off 10 % lower (capacitance ÷ 0.9)", 1 / (1 - STEP)),
    (r"^stages\[\d+\]\.gain$", "gain", 1 + STEP),
    (r"^sensor\.resistance$", "source resistance R_s", 1 - STEP),
    (r"^sensor\.noise_density$", "sensor noise", 1 - STEP),
    (r"^sensor\.noise_corner$", "1/f corner", 1 - STEP),
    (r"^sensor\.temperature$", "sensor temperature (K)", 1 - STEP),
    (r"^reference\.(noise|noise_pp|noise_density)$", "reference noise", 1 - STEP),
    (r"^reference\.noise_corner$", "1/f corner", 1 - STEP),
    (r"^reference\.filter_cutoff$", "cut-off", 1 - STEP),
    (r"^adc\.(noise|noise_pp|noise_density|transition_noise)$", "ADC noise", 1 - STEP),
    (r"^adc\.noise_table(_pp)?\[\d+\]\[1\]$", "ADC noise", 1 - STEP),
    (r"^adc\.noise_corner$", "1/f corner", 1 - STEP),
    (r"^adc\.snr$", "ADC noise (SNR + 0.915 dB)", math.nan),
    (r"^digital\.band_limit$", "cut-off", 1 - STEP),
    (r"^requirement\.temperature$", "temperature (K)", 1 - STEP),
    (r"^(requirement|adc)\.data_rate$", "data rate", 1 - STEP),
)


@dataclass(frozen=True)
class Improvement:
    """One figure made 10 % better and what it gains.

    Attributes
    ----------
    label : str
        What is improved, such as ``"stages[0].en: voltage noise 10 % lower"``.
    fields : tuple of str
        The design-file fields changed together.
    bits_gained : float or None
        Noise-free bits over the sensor span gained (None when not evaluated).
    noise_rms_v : float or None
        Total noise at the sensor after the change, V rms.
    reason : str
        Why it was not evaluated, if so.
    """

    label: str
    fields: tuple[str, ...]
    bits_gained: float | None
    noise_rms_v: float | None = None
    reason: str = ""

    def to_dict(self) -> dict:
        return {
            "label": self.label,
            "fields": list(self.fields),
            "bits_gained": self.bits_gained,
            "noise_rms_v": self.noise_rms_v,
            "not_evaluated": self.reason or None,
        }


def _candidates(
    design: Design, limit: float = math.inf
) -> list[tuple[str, str, tuple[str, ...], dict[str, float]]]:
    """The figures to improve, grouped, as (label, rule, fields, values); the search stops
    once more than ``limit`` are found."""
    groups: dict[str, tuple[str, list[str], dict[str, float]]] = {}
    for path, value in design.variant.fields():
        if len(groups) > limit:
            break
        for pattern, what, factor in _RULES:
            if not re.match(pattern, path):
                continue
            if what == "data rate":
                key = "data rate"
            elif "noise_table" in path:
                key = re.sub(r"\[\d+\]\[1\]$", "", path)
            else:
                key = path
            new = value + _SNR_STEP_DB if math.isnan(factor) else value * factor
            if value == 0 and not math.isnan(factor):
                break
            label, fields, values = groups.setdefault(key, (what, [], {}))
            fields.append(path)
            values[path] = new
            break
    out = []
    for key, (what, fields, values) in groups.items():
        better = "higher" if what == "gain" else "lower"
        if what.startswith("ADC noise (SNR") or what.startswith("cut-off 10 %"):
            text = f"{key}: {what}"
        else:
            text = f"{key}: {what} {int(STEP * 100)} % {better}"
        out.append((text, what, tuple(fields), values))
    return out


#: Rules whose figure is one contribution's noise, scaled: (rule, contribution id).
_SCALES_ONE = {
    "ADC noise": "adc.noise",
    "ADC noise (SNR + 0.915 dB)": "adc.noise",
    "reference noise": "reference.noise",
}


class _Quick:
    """The design's budget with one figure changed, without a full budget where none is
    needed (see the module notes)."""

    def __init__(self, design: Design, base: Budget):
        from ..chain.netlists import circuit_of
        from .exact import _numbers, _structure

        self.design = design
        self.base = base
        self.chain = design.chain()
        circuit = circuit_of(self.chain)
        self.structure = _structure(circuit)
        self.impedances = _numbers(circuit)[: -2 * len(circuit.sources)]
        self.white_sq, self.corner_hz = circuit.white_sq, circuit.corner_hz
        self.source_ids = [s.contribution_id for s in circuit.sources]
        self.power = {c.id: c.rms_v**2 for c in base.contributions}
        self.by_id = {c.id: c for c in base.contributions}

    def scaled(self, contribution: str) -> float | None:
        """Total noise with one contribution's rms 10 % lower, V rms (None: not there)."""
        if contribution not in self.power:
            return None
        power = dict(self.power)
        power[contribution] *= (1 - STEP) ** 2
        return math.sqrt(sum(power.values()))

    def total(self, values: dict[str, float]) -> float:
        """Total noise of the design with ``values``, V rms."""
        variant = self.design.variant(values)
        chain = variant.chain()
        c0 = self.chain
        same = (
            chain.adc == c0.adc
            and chain.reference == c0.reference
            and chain.digital == c0.digital
            and chain.total_gain == c0.total_gain
            and chain.sensor.span_v == c0.sensor.span_v
            and chain.sensor.output_range_v == c0.sensor.output_range_v
            and variant.band == self.design.band
            and variant.requirement == self.design.requirement
        )
        found = self._densities_only(chain) if same else None
        if found is not None:
            return found
        return forward_budget(chain, variant.band, requirement=variant.requirement).total_rms_v

    def _densities_only(self, chain) -> float | None:
        """Total noise when only the front end's densities moved (its transfers did not), V
        rms: each source's variance e_w²(W + f_c·F) with its path integrals W, F read back
        from the typical budget; None when anything else moved."""
        from ..chain.netlists import circuit_of
        from .exact import _numbers, _structure

        circuit = circuit_of(chain)
        if _structure(circuit) != self.structure:
            return None
        if not np.array_equal(_numbers(circuit)[: self.impedances.size], self.impedances):
            return None
        white, corner = circuit.white_sq, circuit.corner_hz
        gain = chain.total_gain
        power = dict(self.power)
        for j, cid in enumerate(self.source_ids):
            w0, c0, w1, c1 = self.white_sq[j], self.corner_hz[j], white[j], corner[j]
            if w1 == w0 and c1 == c0:
                continue
            item = self.by_id.get(cid)
            if item is None or w0 == 0:
                return None  # a source silent when typical: its path is not in the budget
            variance = (item.rms_v * gain) ** 2
            if c1 == c0:
                variance *= w1 / w0
            else:
                # W from the contribution's noise bandwidth and density (Budget's definitions:
                # noise_bandwidth_hz = W/scale, density = √(e_w²·scale)/G), F from the rest.
                scale = (item.density_v_per_rthz * gain) ** 2 / w0
                bw = item.noise_bandwidth_hz * scale
                flicker = (variance / w0 - bw) / c0 if c0 else 0.0
                if c0 == 0 and c1 != 0:
                    return None
                variance = w1 * (bw + c1 * flicker)
            power[cid] = max(variance, 0.0) / gain**2
        return math.sqrt(sum(power.values()))


def improvements(design: Design, *, exact: bool = False) -> tuple[Improvement, ...]:
    """Every figure of ``design`` 10 % better, ranked by the noise-free bits it gains.

    ``exact=True`` solves a full forward budget for every figure (the reference the
    default way is tested against).

    Examples
    --------
    >>> from resplan.designfile.examples import load_example
    >>> first = improvements(load_example("hive-scale"))[0]
    >>> first.label, round(first.bits_gained, 3)
    ('adc.noise_table: ADC noise 10 % lower', 0.143)
    """
    if design.variant is None:
        return ()
    stages = len(design.chain().stages)
    candidates = _candidates(design, limit=MAX_FIGURE_STAGES / (stages + 1))
    if len(candidates) * (stages + 1) > MAX_FIGURE_STAGES:
        reason = (
            f"a chain of {stages} stages: each figure needs a budget of the whole chain, "
            f"and the ranking is made while figures × (stages + 1) ≤ {MAX_FIGURE_STAGES}"
        )
        return (Improvement("every figure", (), None, None, reason),)
    base = exact_budget(design)
    quick = None if exact else _Quick(design, base)
    found: list[Improvement] = []
    for label, what, fields, values in candidates:
        try:
            total = None
            if quick is not None and what in _SCALES_ONE:
                total = quick.scaled(_SCALES_ONE[what])
            if total is None:
                total = (
                    quick.total(values)
                    if quick is not None
                    else exact_budget(design, values).total_rms_v
                )
        except ResplanError as err:
            reason = str(err).splitlines()[0]
            found.append(Improvement(label, fields, None, None, reason))
            continue
        bits = noise_free_bits(base.span_v, total, base.k_pp)
        gained = bits - base.noise_free_bits
        found.append(Improvement(label, fields, gained, total))
    return tuple(sorted(found, key=lambda i: (i.bits_gained is None, -(i.bits_gained or 0.0))))
