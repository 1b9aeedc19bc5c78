"""Design-file stages marked ``open = true`` whose op amp the planner sizes.

An open inverting or transimpedance stage, and an open active filter built as a circuit
(``topology``), keep their circuit values (rin, rf, cf, the op amp's input capacitance,
the filter's shape and starting capacitor) and whatever is decided of the op amp (a
GBW, the 1/f corners of its part class); its noise densities are what ``resplan plan``
sets, so they are refused. The result is an :class:`~resplan.chain.design.OpenPart` whose
``known`` fields use the names of :data:`resplan.chain.design.PART_KINDS`.
"""

from __future__ import annotations

from typing import Any

from ..chain.design import OpenPart

__all__ = ["open_inverting", "open_transimpedance", "open_filter_circuit"]


def _op_amp_known(r, p: str, t, known: dict[str, Any]) -> None:
    """The op amp's decided figures: GBW and the 1/f corners of its class."""
    from .parts import put_known

    gbw = r.q(t.gbw, "frequency", f"{p}.gbw", minimum="> 0")
    en_c = r.q(t.en_corner, "frequency", f"{p}.en_corner", minimum="≥ 0")
    in_c = r.q(t.in_corner, "frequency", f"{p}.in_corner", minimum="≥ 0")
    put_known(known, "gbw_hz", gbw, t.gbw)
    put_known(known, "en_corner_hz", en_c, t.en_corner)
    put_known(known, "in_corner_hz", in_c, t.in_corner)


def open_inverting(r, p: str, name: str, t) -> Any:
    """An open inverting stage: rin known, rf known or left to the planner (largest gain)."""
    from .parts import put_known

    r.refuse_open(t, p, ("en", "in_"))
    known: dict[str, Any] = {}
    rin = r.q(t.rin, "resistance", f"{p}.rin", required=True, minimum="> 0")
    rf = r.q(t.rf, "resistance", f"{p}.rf", minimum="> 0")
    put_known(known, "rin_ohm", rin, t.rin)
    put_known(known, "rf_ohm", rf, t.rf)
    _op_amp_known(r, p, t, known)
    if rin is None:
        return None
    return r.build(p, OpenPart, "inverting", name, p, known)


def open_transimpedance(r, p: str, name: str, t) -> Any:
    """An open transimpedance stage: cf known, rf known or the largest the ADC allows."""
    from .parts import put_known

    r.refuse_open(t, p, ("en", "in_"))
    known: dict[str, Any] = {}
    rf = r.q(t.rf, "resistance", f"{p}.rf", minimum="> 0")
    cf = r.q(
        t.cf, "capacitance", f"{p}.cf", minimum="> 0", required=True
    )  # the planner needs the feedback capacitor: it sets the loop and the noise gain
    c_in = r.q(t.input_capacitance, "capacitance", f"{p}.input_capacitance", minimum="≥ 0")
    put_known(known, "rf_ohm", rf, t.rf)
    put_known(known, "cf_f", cf, t.cf)
    put_known(known, "input_capacitance_f", c_in, t.input_capacitance)
    _op_amp_known(r, p, t, known)
    if cf is None:
        return None
    return r.build(p, OpenPart, "transimpedance", name, p, known)


def open_filter_circuit(r, p: str, t, known: dict[str, Any]) -> None:
    """An open active filter with a topology: its op amps are sized, its shape kept."""
    from .parts import put_known

    r.refuse_open(t, p, ("noise_resistance", "en", "in_"))
    put_known(known, "topology", t.topology, t.topology)
    cap = r.q(t.capacitor, "capacitance", f"{p}.capacitor", minimum="> 0")
    put_known(known, "capacitor_f", cap, t.capacitor)
    _op_amp_known(r, p, t, known)
