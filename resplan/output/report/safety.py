"""Section 7: the measurement-safety cautions every report carries."""

from __future__ import annotations

from .style import SECTION_TITLES
from .writer import Writer

#: The cautions every report carries.
SAFETY_PARAGRAPHS: tuple[str, ...] = (
    "Sensors can sit on mains or high-voltage circuits. Input protection, isolation, creepage "
    "and clearance distances, and the measurement category of the inputs (IEC 61010-1) decide "
    "whether a measurement is safe — not noise. Nothing in this appendix addresses them.",
    "Medical electrical equipment (IEC 60601-1) and equipment for explosive atmospheres "
    "(IEC 60079 series) need certified review; a noise plan is no part of it.",
    "This plan is an estimate from typical data and the stated assumptions. Verify it on the "
    "bench, over the temperature range, with the real layout, wiring and grounding, before "
    "relying on it.",
    "Follow local codes and regulations and defer to licensed practice wherever they apply.",
)


#: One line on the summary page pointing to the cautions.
SUMMARY_CAUTION = (
    "This appendix estimates noise only. Whether a measurement on mains or high-voltage "
    "circuits is safe (IEC 61010-1), and the review medical (IEC 60601-1) and hazardous-area "
    "(IEC 60079) equipment needs, are decided elsewhere: see section 7."
)


def safety_section(w: Writer) -> list:
    from reportlab.platypus import KeepTogether

    out = [w.heading(SECTION_TITLES[6], 0)]
    out += [w.p(text) for text in SAFETY_PARAGRAPHS]
    return [KeepTogether(out)]
