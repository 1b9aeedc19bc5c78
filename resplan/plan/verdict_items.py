"""The one verdict, read by the plan for everything the plan does not allocate itself.

The plan shares out the noise and sizes the open parts; every other item of the
verdict (:mod:`resplan.chain.verdict`) — the input window, headroom, each stated
interferer, pass-band flatness, settling and the per-channel rate — is judged on the
provisional chain by the same checks ``resplan check`` runs, so that on a complete
design (nothing open) the plan and the check give the same failures, text, JSON and
exit code.

What the plan sizes is left to the plan:

* ``noise`` is the allocation itself (the plan is infeasible when the fixed parts
  alone exceed it); on a complete design it is the check's noise item.
* ``interferer[i]``: an open filter is sized against the stated interferers (the
  plan's order and cut-off rows), so with an open filter they are not judged on its
  placeholder.
* ``passband_flatness`` with an open analog stage: the placeholder's assumed shape
  (an open filter at the band top, an assumed amplifier bandwidth) is not the part
  that will be chosen, so only the digital filter's own droop is judged
  (the plan's own check); with every analog stage given, the verdict's.
"""

from __future__ import annotations

from ..chain.budget import Budget
from ..chain.design import Design
from ..chain.signal_chain import Chain
from ..chain.verdict import Failure, judge, stated_interferers
from ..units.formatting import format_si
from .provisional import Slot

__all__ = ["unallocated_failures"]


def unallocated_failures(
    design: Design, chain: Chain, budget: Budget, slots: list[Slot]
) -> tuple[Failure, ...]:
    """Failures of the verdict items the plan does not allocate, on the provisional chain.

    Parameters
    ----------
    design : Design
        The design as loaded.
    chain : Chain
        Its provisional chain (open parts as noiseless placeholders).
    budget : Budget
        The forward budget of ``chain`` with the design's requirement.
    slots : list of Slot
        The open parts.

    Returns
    -------
    tuple of Failure
        In the verdict's order; ``noise`` only when nothing is open.
    """
    open_filter = any(s.index is not None and s.part.kind == "filter" for s in slots)
    open_stage = any(s.index is not None for s in slots)
    residues = ()
    stated = stated_interferers(design)
    if stated and not open_filter and budget.requirement is not None:
        from ..chain.interference import interference_residues

        residues = interference_residues(chain, stated, budget.requirement, design.band.f_low_hz)
    verdict = judge(budget, chain, residues)
    skip = set() if not slots else {"noise"}
    if open_stage:
        skip.add("passband_flatness")
    out = [f for f in verdict.failures if f.item not in skip]
    if open_stage:
        out.extend(_digital_flatness(design, chain))
    return tuple(out)


def _digital_flatness(design: Design, chain: Chain) -> list[Failure]:
    """The digital filter's own droop at the band top against the stated flatness.

    An analog filter only adds to it, so a digital path that alone breaks the
    flatness cannot be planned away.
    """
    from ..chain.passband import passband_droop

    req = design.requirement
    top = design.band.f_high_hz
    if req.passband_flatness_db is None or top is None or chain.digital is None:
        return []
    digital_db = passband_droop(chain, top).digital_db
    limit = req.passband_flatness_db
    if abs(digital_db) <= limit * (1 + 1e-12):
        return []
    return [
        Failure(
            "passband_flatness",
            abs(digital_db),
            limit,
            "dB",
            f"the digital filter alone is {digital_db:+.3f} dB at the band top "
            f"{format_si(top, 'Hz')}, past the ±{format_si(limit, 'dB')} allowed",
        )
    ]
