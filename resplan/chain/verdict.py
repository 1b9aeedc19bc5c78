"""One verdict: every way this tool can see a measurement fail, in one list.

Each check compares one figure with its limit and, when the figure is past it,
adds a :class:`Failure` (item, value, limit, unit, message) to one list. The text
of ``resplan check``, its JSON, its exit code and the report's summary all read
that list, so nothing can pass in one output and fail in another.

Items (stable strings, the same in Python, JSON and the report):

==================  ==========================================================
``noise``           total noise at the sensor against the noise the requirement
                    allows (after the interference allowance), V rms
``input_window``    the sensor span needs more than the ADC range (value: the
                    fraction used, limit 1), or its output, offset included,
                    leaves the ADC input window (value and limit in V)
``interferer[i]``   residue of the i-th stated interferer (a tone, mains pickup
                    at its worst frequency, a spectrum) through the whole chain
                    against its allowance, V rms at the sensor
``headroom``        fraction of the ADC range the span uses against 1 − the
                    stated headroom
``passband_flatness`` gain error at the band top (analog and digital) against
                    the stated flatness, dB
``settling``        settling time of the conversion and digital path after a
                    step or a multiplexer switch against the stated limit, s
``channel_rate``    settled results per second each multiplexed channel gets
                    against the stated minimum, Hz
==================  ==========================================================

The checks on numbers (:func:`noise_exceeds`, :func:`range_exceeds`) are pure
and accept numpy arrays, so a Monte Carlo run can judge every trial at once:
noise (with jitter, which enters the budget as the contributor ``adc.jitter``),
the input window and headroom vary with spreads of gains and noise figures.
Interferer residues, pass-band droop, settling and the per-channel rate depend
only on the filter responses, the rates and the channel count; they do not
vary with spreads of noise densities (a spread of a filter's cut-off or of a
gain moves them, and a trial then needs its own chain).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np

from resplan.units.formatting import format_percent, format_si

from .interference import Residue
from .passband import Droop, passband_droop
from .timing import DigitalTiming, digital_timing

if TYPE_CHECKING:  # pragma: no cover
    from .budget import Budget
    from .design import Design
    from .requirement import Requirement
    from .signal_chain import Chain

__all__ = [
    "Failure",
    "Verdict",
    "judge",
    "judge_design",
    "noise_exceeds",
    "range_exceeds",
    "RELATIVE_SLACK",
]

#: Figures within this relative distance of their limit pass (rounding of SI floats).
RELATIVE_SLACK = 1e-12


@dataclass(frozen=True)
class Failure:
    """One item past its limit.

    Attributes
    ----------
    item : str
        Stable name of what failed: ``noise``, ``interferer[0]``, ``input_window`` ...
    value : float
        The figure found, SI (in ``unit``).
    limit : float
        The limit it passes, SI (in ``unit``).
    unit : str
        Unit of ``value`` and ``limit`` (``"V"``, ``"dB"``, ``"s"``, ``"Hz"``, ``""``
        for a plain ratio).
    message : str
        One sentence for people: what failed and by how much.
    """

    item: str
    value: float
    limit: float
    unit: str
    message: str

    def to_dict(self) -> dict[str, Any]:
        return {
            "item": self.item,
            "value": self.value,
            "limit": self.limit,
            "unit": self.unit,
            "message": self.message,
        }


@dataclass(frozen=True)
class Verdict:
    """Every failure of a design, and every item that was checked.

    Attributes
    ----------
    failures : tuple of Failure
        In the order the checks ran; empty when everything passes.
    checked : tuple of str
        Every item that was checked, failed or not.
    interference : tuple of Residue
        Every stated interferer through the chain, for the outputs to show.
    droop : Droop or None
        Pass-band gain error at the band top, always reported.
    timing : DigitalTiming or None
        Settling, latency and per-channel rate, always reported.
    """

    failures: tuple[Failure, ...] = ()
    checked: tuple[str, ...] = ()
    #: Every stated interferer through the chain, failed or not (for the outputs).
    interference: tuple[Residue, ...] = ()
    #: Gain error at the band top (None without a band top or a chain).
    droop: Droop | None = None
    #: Settling, latency and per-channel rate (None without a chain).
    timing: DigitalTiming | None = None

    @property
    def meets(self) -> bool:
        """True only when nothing failed."""
        return not self.failures

    @property
    def failed_items(self) -> tuple[str, ...]:
        return tuple(f.item for f in self.failures)

    def to_dict(self) -> dict[str, Any]:
        return {
            "meets_requirement": self.meets,
            "failures": [f.to_dict() for f in self.failures],
            "checked": list(self.checked),
            "interferers": [r.to_dict() for r in self.interference],
            "passband": None if self.droop is None else self.droop.to_dict(),
            "timing": None if self.timing is None else self.timing.to_dict(),
        }


# ---------------------------------------------------------------------------
# checks on numbers (vectorised)


def noise_exceeds(total_rms_v, allowed_rms_v):
    """True where the total noise passes the allowed noise (both V rms; arrays allowed).

    Examples
    --------
    >>> noise_exceeds([1e-6, 2e-6], 1.5e-6).tolist()
    [False, True]
    """
    total = np.asarray(total_rms_v, dtype=float)
    return total > np.asarray(allowed_rms_v, dtype=float) * (1 + RELATIVE_SLACK)


def range_exceeds(used_fraction, limit_fraction=1.0):
    """True where the fraction of the ADC range used passes ``limit_fraction`` (arrays allowed).

    Examples
    --------
    >>> bool(range_exceeds(1.02))
    True
    """
    used = np.asarray(used_fraction, dtype=float)
    return used > np.asarray(limit_fraction, dtype=float) * (1 + RELATIVE_SLACK)


# ---------------------------------------------------------------------------
# building the verdict


def _si(value: float, unit: str) -> str:
    from ..units.formatting import format_si

    return format_si(value, unit)


def _noise(budget: Budget, out: list[Failure], checked: list[str]) -> None:
    req = budget.requirement
    if req is None:
        return
    checked.append("noise")
    allowed = req.allowed_noise_rms_v
    total = budget.total_rms_v
    if not bool(noise_exceeds(total, allowed)):
        return
    unit = budget.sensor_unit
    if allowed == 0:
        message = (
            f"noise {_si(total, unit)} rms at the sensor: the interference allowance "
            f"{_si(req.interference_rms_v, unit)} rms alone uses up the "
            f"{_si(req.allowed_total_rms_v, unit)} rms the requirement allows"
        )
    else:
        short = float(np.log2(total / allowed))
        message = (
            f"noise {_si(total, unit)} rms at the sensor is over the "
            f"{_si(allowed, unit)} rms allowed: short by {short:.2f} bits"
        )
    out.append(Failure("noise", total, allowed, unit, message))


def _input_window(
    budget: Budget, chain: Chain | None, out: list[Failure], checked: list[str]
) -> None:
    checked.append("input_window")
    used = budget.adc_range_used
    if bool(range_exceeds(used)):
        out.append(
            Failure(
                "input_window",
                used,
                1.0,
                "",
                f"the sensor span needs {format_percent(used)} of the ADC range: the ADC "
                "overloads; lower the gain",
            )
        )
        return
    if chain is None or not budget.outside_window:
        return
    window = chain.adc.input_window_v
    low, high = (v * chain.total_gain for v in chain.sensor.output_range_v)
    if window is None:  # pragma: no cover - outside_window is only set with a window
        return
    if high > window[1]:
        value, limit, side = high, window[1], "above the top"
    else:
        value, limit, side = low, window[0], "below the bottom"
    out.append(
        Failure(
            "input_window",
            value,
            limit,
            "V",
            f"the sensor output at the ADC reaches {_si(value, 'V')}, {side} of the "
            f"{chain.adc.input_polarity} input window ({_si(window[0], 'V')} … "
            f"{_si(window[1], 'V')}): shift the offset or change the gain",
        )
    )


def _interferers(residues: tuple[Residue, ...], out: list[Failure], checked: list[str]) -> None:
    for r in residues:
        checked.append(r.item)
        if r.within_allowance:
            continue
        out.append(Failure(r.item, r.residue_v, r.allowed_v, "V", _residue_message(r)))


def _residue_message(r: Residue) -> str:
    if r.kind == "broadband":
        what = f"{r.name}: out-of-band spectrum"
    else:
        worst = r.worst
        what = f"{r.name}: {_si(worst.amplitude_v, 'V')} rms at {_si(worst.nominal_hz, 'Hz')}"
    return (
        f"{what} lands {r.lands} with {_si(r.residue_v, 'V')} rms left at the sensor, over "
        f"the {_si(r.allowed_v, 'V')} rms allowed ({r.allowed_reason})"
    )


def _headroom(budget: Budget, out: list[Failure], checked: list[str]) -> None:
    req = budget.requirement
    if req is None or req.headroom == 0:
        return
    checked.append("headroom")
    used, limit = budget.adc_range_used, 1.0 - req.headroom
    if bool(range_exceeds(used, limit)) and not bool(range_exceeds(used)):
        out.append(
            Failure(
                "headroom",
                used,
                limit,
                "",
                f"the sensor span uses {format_percent(used)} of the ADC range, past the "
                f"{format_percent(limit)} that keeps the stated {format_percent(req.headroom)} "
                "headroom: lower the gain",
            )
        )


def _flatness(
    req: Requirement | None, droop: Droop | None, out: list[Failure], checked: list[str]
) -> None:
    if req is None or req.passband_flatness_db is None:
        return
    checked.append("passband_flatness")
    limit = req.passband_flatness_db
    if droop is None:
        out.append(
            Failure(
                "passband_flatness",
                float("nan"),
                limit,
                "dB",
                "pass-band flatness cannot be checked: the band top (requirement.f_high) "
                "is not stated",
            )
        )
        return
    error = abs(droop.total_db)
    if error > limit * (1 + RELATIVE_SLACK):
        out.append(
            Failure(
                "passband_flatness",
                error,
                limit,
                "dB",
                f"the signal is {droop.total_db:+.3f} dB at the band top "
                f"{_si(droop.frequency_hz, 'Hz')} ({droop.analog_db:+.3f} dB analog, "
                f"{droop.digital_db:+.3f} dB digital), past the ±{format_si(limit, 'dB')} allowed",
            )
        )


def _timing(
    req: Requirement | None, timing: DigitalTiming | None, out: list[Failure], checked: list[str]
) -> None:
    if req is None or timing is None:
        return
    if req.settling_time_s is not None:
        checked.append("settling")
        limit = req.settling_time_s
        got = timing.settling_s
        if got is None:
            out.append(
                Failure(
                    "settling",
                    float("nan"),
                    limit,
                    "s",
                    "settling cannot be checked: the band-limit FIR's length "
                    "(digital.band_limit_taps) is not stated",
                )
            )
        elif got > limit * (1 + RELATIVE_SLACK):
            out.append(
                Failure(
                    "settling",
                    got,
                    limit,
                    "s",
                    f"the digital path settles in {_si(got, 's')} after a step or a channel "
                    f"switch, longer than the {_si(limit, 's')} allowed",
                )
            )
    if req.channel_rate_hz is not None:
        checked.append("channel_rate")
        limit = req.channel_rate_hz
        got = timing.channel_rate_hz
        if got is None:
            out.append(
                Failure(
                    "channel_rate",
                    float("nan"),
                    limit,
                    "Hz",
                    "the per-channel rate cannot be checked: the band-limit FIR's length "
                    "(digital.band_limit_taps) is not stated",
                )
            )
        elif got < limit * (1 - RELATIVE_SLACK):
            out.append(
                Failure(
                    "channel_rate",
                    got,
                    limit,
                    "Hz",
                    f"each of {timing.channels} channels gets {_si(got, 'Hz')} of settled "
                    f"results, below the {_si(limit, 'Hz')} required",
                )
            )


def judge(
    budget: Budget,
    chain: Chain | None = None,
    interferers: tuple[Residue, ...] = (),
) -> Verdict:
    # A chain gives the droop at the budget's band top and the timing; without one
    # only the budget's own figures are judged.
    """The verdict of a budget, its chain and the interferers checked through it.

    Parameters
    ----------
    budget : Budget
        The forward budget (with its requirement; without one only the input
        window is checked).
    chain : Chain, optional
        The chain the budget belongs to (names the input window's edges).
    interferers : tuple of Residue
        Each stated interferer through the chain
        (:func:`resplan.chain.interference.interference_residues`).

    Returns
    -------
    Verdict
    """
    failures: list[Failure] = []
    checked: list[str] = []
    req = budget.requirement
    droop = timing = None
    if chain is not None:
        if budget.f_high_hz is not None:
            droop = passband_droop(chain, budget.f_high_hz)
        timing = digital_timing(chain)
    _noise(budget, failures, checked)
    _interferers(tuple(interferers), failures, checked)
    _input_window(budget, chain, failures, checked)
    _headroom(budget, failures, checked)
    _flatness(req, droop, failures, checked)
    _timing(req, timing, failures, checked)
    return Verdict(tuple(failures), tuple(checked), tuple(interferers), droop, timing)


def stated_interferers(design: Design) -> tuple:
    """The design's interferers (a design built in Python may give only ``alias_interferer``)."""
    if design.interferers:
        return tuple(design.interferers)
    if design.alias_interferer is not None:
        from .interference import Tone

        frequency, amplitude = design.alias_interferer
        return (Tone(frequency, amplitude, "stated interferer"),)
    return ()


def interferer_checks(design: Design, budget: Budget) -> tuple[Residue, ...]:
    """Every interferer the design states, through its chain."""
    stated = stated_interferers(design)
    if not stated or budget.requirement is None:
        return ()
    from .interference import interference_residues

    return interference_residues(design.chain(), stated, budget.requirement, design.band.f_low_hz)


def judge_design(design: Design, budget: Budget) -> Verdict:
    """The verdict of a complete design and its forward budget: every check, one list.

    Examples
    --------
    >>> from resplan.designfile.examples import load_example
    >>> from resplan.designfile.load import check_design
    >>> design = load_example("hive-scale")
    >>> judge_design(design, check_design(design)).meets
    True
    """
    chain = design.chain()
    return judge(budget, chain, interferer_checks(design, budget))
