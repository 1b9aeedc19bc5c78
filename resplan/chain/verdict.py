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
==================  ==========================================================

The checks on numbers (:func:`noise_exceeds`, :func:`range_exceeds`) are pure
and accept numpy arrays, so a Monte Carlo run can judge every trial at once.
Interferer residues depend on the filter responses and the sample rate; they do
not vary with spreads of noise densities.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np

from .interference import Residue

if TYPE_CHECKING:  # pragma: no cover
    from .budget import Budget
    from .design import Design
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
    """

    failures: tuple[Failure, ...] = ()
    checked: tuple[str, ...] = ()
    #: Every stated interferer through the chain, failed or not (for the outputs).
    interference: tuple[Residue, ...] = ()

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
    if allowed == 0:
        message = (
            f"noise {_si(total, 'V')} rms at the sensor: the interference allowance "
            f"{_si(req.interference_rms_v, 'V')} rms alone uses up the "
            f"{_si(req.allowed_total_rms_v, 'V')} rms the requirement allows"
        )
    else:
        short = float(np.log2(total / allowed))
        message = (
            f"noise {_si(total, 'V')} rms at the sensor is over the "
            f"{_si(allowed, 'V')} rms allowed: short by {short:.2f} bits"
        )
    out.append(Failure("noise", total, allowed, "V", message))


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
                f"the sensor span needs {used * 100:.3g} % of the ADC range: the ADC "
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


def judge(
    budget: Budget,
    chain: Chain | None = None,
    interferers: tuple[Residue, ...] = (),
) -> Verdict:
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
    _noise(budget, failures, checked)
    _interferers(tuple(interferers), failures, checked)
    _input_window(budget, chain, failures, checked)
    return Verdict(tuple(failures), tuple(checked), tuple(interferers))


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
