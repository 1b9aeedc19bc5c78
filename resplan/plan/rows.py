"""One figure a part must meet, in the form data sheets quote (a row of the plan)."""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["PartRequirement"]


@dataclass(frozen=True)
class PartRequirement:
    """A figure a part must meet, in the form data sheets quote.

    ``value`` is SI in ``unit`` (format it with :func:`resplan.units.formatting.format_si`);
    ``bound`` says whether it is a maximum, a minimum or information.
    """

    part: str
    field_path: str
    quantity: str
    value: float
    unit: str
    bound: str
    condition: str = ""
    formula: str = ""
