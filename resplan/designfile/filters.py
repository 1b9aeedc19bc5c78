"""Design-file active filters given by their component values (``[[stages.sections]]``).

An ``active_filter`` stage with a ``topology`` may give, instead of (response,
order, cutoff, gain), the component values of each section in signal order:

- a Sallen-Key pair: ``r1``, ``r2``, ``c1``, ``c2``, and ``rf``, ``rg`` for a gain
  1 + rf/rg (a follower without them);
- a multiple-feedback pair: ``r1``, ``r2``, ``r3``, ``c1``, ``c2`` (gain −r2/r1);
- a real pole buffered by a follower: ``r``, ``c``.

The stage then takes its response, order, cut-off and gain from the values
(:meth:`resplan.chain.stages.ActiveFilter.from_sections`), and a section whose poles
lie in the right half-plane or whose Q exceeds 50 is one problem naming it.

Examples
--------
>>> from resplan.designfile.models import ActiveFilterTable
>>> from resplan.designfile.parts import TableReader
>>> t = ActiveFilterTable(type="active_filter", topology="sallen-key",
...     sections=[{"r1": "11.25 kohm", "r2": "11.25 kohm", "c1": "20 nF", "c2": "10 nF"}])
>>> f = read_filter_sections(TableReader("demo"), "stages[0]", "f", t)
>>> f.order, round(f.cutoff_hz)
(2, 1000)
"""

from __future__ import annotations

from typing import Any

from ..chain.stages import ActiveFilter
from ..noise.sections import MultipleFeedbackValues, RealPoleValues, SallenKeyValues
from .models import ActiveFilterTable, FilterSectionTable

__all__ = ["read_filter_sections", "SECTION_FIELDS"]

#: The fields each kind of section takes.
SECTION_FIELDS = {
    "sallen-key": ("r1", "r2", "c1", "c2"),
    "multiple-feedback": ("r1", "r2", "r3", "c1", "c2"),
    "real pole": ("r", "c"),
}
_ALL = ("r1", "r2", "r3", "c1", "c2", "rf", "rg", "r", "c")
_DIMENSION = {"c1": "capacitance", "c2": "capacitance", "c": "capacitance"}
_WITH_SECTIONS = (
    "not given with sections: the component values set the response, order, cut-off and gain"
)


def read_filter_sections(r: Any, p: str, name: str, t: ActiveFilterTable) -> ActiveFilter | None:
    """The active filter of table ``t`` at place ``p`` from its sections, or None (problems
    recorded on ``r``, a :class:`~resplan.designfile.parts.TableReader`)."""
    if t.open:
        r.bad(f"{p}.open", True, "a given filter: sections are component values, not limits")
        return None
    if t.topology is None:
        r.missing(f"{p}.topology", '"sallen-key" or "multiple-feedback", the topology of sections')
        return None
    r.refuse(
        t,
        p,
        ("response", "order", "cutoff", "gain", "capacitor", "noise_resistance"),
        _WITH_SECTIONS,
    )
    if not t.sections:
        r.bad(f"{p}.sections", "[]", "at least one section")
        return None
    sections = [_section(r, f"{p}.sections[{k}]", t.topology, s) for k, s in enumerate(t.sections)]
    en = in_noise = None
    if t.en is not None or t.en_corner is not None:
        en = r.density(t.en, t.en_corner, p, "en", "en_corner", required=True)
    else:
        r.notes.append(f"{name}: no op-amp noise (en) given, none counted")
    if t.in_ is not None or t.in_corner is not None:
        in_noise = r.density(
            t.in_, t.in_corner, p, "in", "in_corner", "current_density", required=True
        )
    gbw = r.q(t.gbw, "frequency", f"{p}.gbw", minimum="> 0")
    if None in sections or any(
        given is not None and value is None
        for given, value in ((t.en, en), (t.in_, in_noise), (t.gbw, gbw))
    ):
        return None
    return r.build(
        p,
        ActiveFilter.from_sections,
        name,
        t.topology,
        tuple(sections),
        en=en,
        in_noise=in_noise,
        gbw_hz=gbw,
    )


def _listed(keys: set[str]) -> str:
    return ", ".join(sorted(keys, key=_ALL.index))


def _section(r: Any, path: str, topology: str, s: FilterSectionTable) -> Any:
    given = {k for k in _ALL if getattr(s, k) is not None}
    kind = "real pole" if given & {"r", "c"} else topology
    allowed = set(SECTION_FIELDS[kind]) | ({"rf", "rg"} if kind == "sallen-key" else set())
    for key in sorted(given - allowed, key=_ALL.index):
        r.bad(
            f"{path}.{key}",
            getattr(s, key),
            f"not a field of a {kind} section (it takes {_listed(allowed)})",
        )
    values = {
        key: r.q(
            getattr(s, key),
            _DIMENSION.get(key, "resistance"),
            f"{path}.{key}",
            required=key in SECTION_FIELDS[kind],
            minimum="> 0",
        )
        for key in allowed
    }
    if (
        given - allowed
        or any(values[k] is None for k in SECTION_FIELDS[kind])
        or any(getattr(s, k) is not None and values[k] is None for k in allowed)
    ):
        return None
    if kind == "real pole":
        return RealPoleValues(values["r"], values["c"])
    if kind == "multiple-feedback":
        return MultipleFeedbackValues(
            values["r1"],
            values["r2"],
            values["r3"],
            values["c1"],
            values["c2"],
            values["r2"] / values["r1"],
        )
    rf, rg = values["rf"], values["rg"]
    if (rf is None) != (rg is None):
        missing = "rg" if rg is None else "rf"
        r.missing(
            f"{path}.{missing}", "both rf and rg for a gain 1 + rf/rg, or neither (a follower)"
        )
        return None
    gain = 1.0 if rf is None else 1.0 + rf / rg
    return SallenKeyValues(values["r1"], values["r2"], values["c1"], values["c2"], gain, rf, rg)
