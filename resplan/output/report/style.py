"""The page and its fixed furniture: paper sizes, margins, colours, section titles."""

from __future__ import annotations

#: Paper sizes accepted, in points (1/72 in): ISO 216 A4 and US Letter.
PAPER_SIZES: dict[str, tuple[float, float]] = {
    "a4": (595.2755905511812, 841.8897637795277),
    "letter": (612.0, 792.0),
}
MM = 72.0 / 25.4
MARGIN = 20 * MM

# Restrained colours: near-black text, one grey, and two Okabe–Ito hues for the verdict.
INK = "#1a1a1a"
GREY = "#6b6b6b"
RULE = "#bdbdbd"
SHADE = "#f2f2f2"
MEETS = "#009E73"  # Okabe–Ito bluish green
SHORT = "#D55E00"  # Okabe–Ito vermillion


# --------------------------------------------------------------------------- fixed text

#: Section titles, in order (tests look for them in the PDF).
SECTION_TITLES = (
    "1 Summary",
    "2 Requirement and assumptions",
    "3 Allocation and per-part requirements",
    "4 Forward noise budget",
    "5 Figures",
    "6 Formulas and sources",
    "7 Measurement safety",
)
