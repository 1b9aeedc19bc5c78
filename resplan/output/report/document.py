"""The requirements appendix: a PDF a design review can file.

:func:`write_report` lays out, with reportlab's platypus, a title block that
traces the document to its design file (SHA-256) and resplan version, then

1. a one-page summary (verdict, resolution over the sensor span and the ADC
   range, margin, coverage factor, SNR, dynamic range, band, temperature, rate);
2. the requirement and every assumption;
3. the allocation and per-part requirements of the backward plan;
4. the forward budget of every contributor;
5. figures (:mod:`resplan.output.figures`), embedded as PNG images (200 dpi by
   default; vector SVG copies are written to the figures folder when one is given);
6. the formulas used, each with its published source;
7. measurement-safety cautions.

Every number goes through :mod:`resplan.units.formatting`, the same writer the
command line uses, so the figures printed here match ``resplan check`` to the
printed precision. reportlab and matplotlib are imported only when a report
is written.

The PDF is written to a temporary file in the target folder and renamed into
place: a failed run leaves no partial file, and an existing report is only
replaced by a complete one.
"""

from __future__ import annotations

import datetime as _dt
import importlib.util
import io
import math
import os
from collections.abc import Sequence
from pathlib import Path
from typing import Any
from xml.sax.saxutils import escape

from ... import __version__
from ...chain.budget import Budget, forward_budget
from ...chain.design import Design, OpenPart
from ...errors import DesignError, ResplanError
from ...units.formatting import (
    ascii_units,
    format_bits,
    format_counts,
    format_db,
    format_percent,
    format_si,
    format_temperature,
)
from ..atomic import atomic_path
from ..budget_text import interferer_check
from ..figures import DEFAULT_DPI, FIGURE_TITLES, caption, figure_png, make_figures, save_figures

__all__ = ["write_report", "PAPER_SIZES", "SECTION_TITLES"]

#: Paper sizes accepted, in points (1/72 in): ISO 216 A4 and US Letter.
PAPER_SIZES: dict[str, tuple[float, float]] = {
    "a4": (595.2755905511812, 841.8897637795277),
    "letter": (612.0, 792.0),
}
_MM = 72.0 / 25.4
_MARGIN = 20 * _MM

# Restrained colours: near-black text, one grey, and two Okabe–Ito hues for the verdict.
_INK = "#1a1a1a"
_GREY = "#6b6b6b"
_RULE = "#bdbdbd"
_SHADE = "#f2f2f2"
_MEETS = "#009E73"  # Okabe–Ito bluish green
_SHORT = "#D55E00"  # Okabe–Ito vermillion


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

#: (quantity, formula, published source) of every formula the numbers rest on.
FORMULAS: tuple[tuple[str, str, str], ...] = (
    (
        "Thermal noise of a resistor",
        "e = √(4kTR); k = 1.380649 × 10⁻²³ J/K (exact)",
        "J. B. Johnson, Phys. Rev. 32, 97 (1928); H. Nyquist, Phys. Rev. 32, 110 (1928); "
        "k from the SI (2019), CODATA 2018",
    ),
    (
        "Shot noise of a DC current",
        "i = √(2qI); q = 1.602176634 × 10⁻¹⁹ C (exact)",
        "W. Schottky, Ann. Phys. 57, 541 (1918)",
    ),
    (
        "1/f + white density and its integral",
        "e(f)² = e_w²(1 + f_c/f); v² = e_w²(f_c·ln(f_H/f_L) + f_H − f_L)",
        "C. D. Motchenbacher and J. A. Connelly, Low-Noise Electronic System Design, "
        "Wiley (1993), ch. 1",
    ),
    (
        "Current noise into a resistance",
        "e = i_n·R at each amplifier input",
        "Motchenbacher and Connelly, ch. 1–2",
    ),
    (
        "Non-inverting stage, referred to its input",
        "e² = e_n² + (i_n+·R_s)² + (i_n−·RF‖RG)² + 4kT·(RF‖RG)",
        "Motchenbacher and Connelly, ch. 2",
    ),
    (
        "Integrated amplifier, referred to its input",
        "e² = e_in² + (e_out/G)² + (i_n·R_s)²",
        "Motchenbacher and Connelly, ch. 2 (two-stage model)",
    ),
    (
        "Noise of an RC filter",
        "v = √(kT/C), independent of R",
        "standard result; Motchenbacher and Connelly, ch. 1",
    ),
    (
        "Referring to the sensor; uncorrelated sources",
        "σ² = σ₁² + σ₂²/G₁² + σ₃²/(G₁G₂)² + …",
        "Motchenbacher and Connelly, ch. 2 (cascaded stages)",
    ),
    (
        "Equivalent noise bandwidth",
        "ENBW = ∫₀^∞ |H(f)|² df / |H(0)|²",
        "definition; Motchenbacher and Connelly, ch. 1",
    ),
    (
        "Butterworth ENBW",
        "ENBW = f_c·(π/2n)/sin(π/2n); RC: (π/2)·f_c",
        "closed form of ∫ df/(1 + (f/f_c)^2n), Gradshteyn and Ryzhik 3.241.2",
    ),
    (
        "Butterworth attenuation",
        "A(f) = 10·log10(1 + (f/f_c)^2n) dB",
        "S. Butterworth, Wireless Engineer 7, 536 (1930) (from memory)",
    ),
    (
        "Bessel low-pass",
        "H(s) = a₀/θ_n(s), θ_n the reverse Bessel polynomial",
        "W. E. Thomson, Proc. IEE 96, 487 (1949)",
    ),
    (
        "Sinc decimation filter",
        "|H(f)|² = [sin(πfR/f_s)/(R·sin(πf/f_s))]^2k",
        "E. B. Hogenauer, IEEE Trans. ASSP 29, 155 (1981)",
    ),
    (
        "ENBW of a digital filter",
        "∫₀^(f_s/2) |H|² df = (f_s/2)·Σ h[n]²",
        "Parseval's theorem: A. V. Oppenheim and R. W. Schafer, Discrete-Time Signal "
        "Processing, 3rd ed., §2.9",
    ),
    (
        "Noise of a sampled chain, aliases included",
        "σ² = ∫ S(f)·|H_a(f)|²·|H_d(f)|² df, |H_d| periodic in f_s (folded into 0…f_s/2)",
        "sampling theorem: C. E. Shannon, Proc. IRE 37, 10 (1949) (from memory); periodic "
        "digital response, Oppenheim and Schafer",
    ),
    (
        "Where an interferer aliases, and what is left of it",
        "f_alias = |f_i − m·f_s| in 0…f_s/2; residue = A_i·10^(−(A_analog + A_digital)/20)",
        "sampling theorem (as above); attenuation from the responses' closed forms",
    ),
    (
        "Quantisation noise",
        "σ_q = q/√12, q = FSR/2^N",
        "W. R. Bennett, Bell Syst. Tech. J. 27, 446 (1948)",
    ),
    (
        "Ideal SNR; ENOB",
        "SNR = 6.02N + 1.76 dB; ENOB = (SINAD − 1.76)/6.02",
        "IEEE Std 1241-2010",
    ),
    (
        "Noise from a data-sheet SNR",
        "σ = (FSR/(2√2))·10^(−SNR/20)",
        "IEEE Std 1241-2010 (full-scale sine definition of SNR)",
    ),
    (
        "Oversampling; delta-sigma quantisation",
        "gain 10·log10(OSR) dB, OSR = f_s/(2f_B); SQNR = 6.02N + 1.76 − 10·log10(π^2L/(2L+1)) "
        "+ (2L+1)·10·log10(OSR)",
        "R. Schreier and G. C. Temes, Understanding Delta-Sigma Data Converters, "
        "IEEE Press/Wiley (2005), ch. 1 and 4",
    ),
    (
        "Reference noise",
        "error = V_in·σ_ref/V_ref, at the largest input; cancels when ratiometric",
        "follows from the converter's transfer function code = V_in/V_ref (standard result)",
    ),
    (
        "Coverage factor",
        "k_pp = 2√2·erf⁻¹(P): 6.58 at 99.9 %, 6.0 at 99.73 %",
        "Gaussian coverage, JCGM 100:2008 (GUM), annex G",
    ),
    (
        "Resolution figures",
        "effective bits = log2(S/σ); noise-free bits = log2(S/(k_pp·σ)); "
        "noise-free counts = S/(k_pp·σ)",
        "W. Kester (ed.), Data Conversion Handbook, Newnes (2005), ch. 5",
    ),
    (
        "Dynamic range",
        "DR = 20·log10((S/(2√2))/σ) dB",
        "IEEE Std 1241-2010 (full-scale sine)",
    ),
    (
        "Allowed noise",
        "σ_allowed = S/(counts·k_pp), less the interference allowance in power",
        "inverse of the noise-free count definition above",
    ),
)

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


def _density(nd: Any, unit: str) -> str:
    if nd is None:
        return "—"
    text = format_si(nd.white, unit)
    if nd.corner_hz:
        text += f" (1/f corner {format_si(nd.corner_hz, 'Hz')})"
    return text


def describe_part(part: Any) -> tuple[str, str, str]:
    """(name, kind, the figures the budget uses) of one part of a design, for a table."""
    from ...chain.converter import ADC
    from ...chain.stages import (
        ActiveFilter,
        IntegratedAmplifier,
        NonInvertingStage,
        RCFilter,
        Reference,
        Sensor,
    )

    if isinstance(part, OpenPart):
        known = "; ".join(
            f"{k} = {v:g}" if isinstance(v, float) else f"{k} = {v}" for k, v in part.known.items()
        )
        return (
            part.name,
            f"open {part.kind}",
            "to be planned" + (f"; known: {known}" if known else ""),
        )
    if isinstance(part, Sensor):
        figures = (
            f"span {format_si(part.span_v, 'V')} ({'bipolar' if part.bipolar else 'unipolar'}); "
            f"source resistance {format_si(part.resistance_ohm, 'Ω')}"
        )
        if part.noise is not None:
            figures += f"; own noise {_density(part.noise, 'V/√Hz')}"
        if part.temperature_k is not None:
            figures += f"; at {format_temperature(part.temperature_k)}"
        return part.name, "sensor", figures
    if isinstance(part, NonInvertingStage):
        figures = (
            f"gain {format_si(part.gain, 'V/V')} (RF {format_si(part.rf_ohm, 'Ω')}, RG "
            f"{'—' if part.rg_ohm is None else format_si(part.rg_ohm, 'Ω')}); "
            f"e_n {_density(part.en, 'V/√Hz')}; i_n+ {_density(part.in_plus, 'A/√Hz')}"
        )
        if part.in_minus is not None:
            figures += f"; i_n− {_density(part.in_minus, 'A/√Hz')}"
        if part.gbw_hz is not None:
            figures += f"; GBW {format_si(part.gbw_hz, 'Hz')}"
        return part.name, "op-amp stage", figures
    if isinstance(part, IntegratedAmplifier):
        figures = (
            f"gain {format_si(part.gain, 'V/V')}; input noise {_density(part.input_noise, 'V/√Hz')}"
        )
        if part.output_noise is not None:
            figures += f"; output noise {_density(part.output_noise, 'V/√Hz')}"
        if part.current_noise is not None:
            figures += f"; current noise {_density(part.current_noise, 'A/√Hz')}"
        if part.bandwidth_hz is not None:
            figures += f"; bandwidth {format_si(part.bandwidth_hz, 'Hz')}"
        return part.name, "integrated amplifier", figures
    if isinstance(part, RCFilter):
        return (
            part.name,
            "RC filter",
            (
                f"R {format_si(part.resistance_ohm, 'Ω')}, C {format_si(part.capacitance_f, 'F')}; "
                f"corner {format_si(part.cutoff_hz, 'Hz')}"
            ),
        )
    if isinstance(part, ActiveFilter):
        figures = (
            f"{part.response}, order {part.order}, corner {format_si(part.cutoff_hz, 'Hz')}; "
            f"gain {format_si(part.gain, 'V/V')}"
        )
        if part.noise_resistance_ohm:
            figures += f"; equivalent noise resistance {format_si(part.noise_resistance_ohm, 'Ω')}"
        if part.en is not None:
            figures += f"; e_n {_density(part.en, 'V/√Hz')}"
        return part.name, "active filter", figures
    if isinstance(part, Reference):
        figures = f"{format_si(part.voltage_v, 'V')}"
        if part.ratiometric:
            figures += "; ratiometric (excitation from the reference)"
        else:
            figures += f"; noise {_density(part.noise, 'V/√Hz')}"
        if part.filter_cutoff_hz is not None:
            figures += f"; filter {format_si(part.filter_cutoff_hz, 'Hz')}"
        return part.name, "reference", figures
    if isinstance(part, ADC):
        figures = (
            f"{part.architecture}, {part.bits} bits, full-scale range "
            f"{format_si(part.full_scale_range_v, 'V')} peak to peak; sample rate "
            f"{format_si(part.sample_rate_hz, 'Hz')}; output rate "
            f"{format_si(part.output_rate_hz, 'Hz')}; gain {format_si(part.gain, 'V/V')}"
        )
        return part.name, "ADC", figures
    return str(getattr(part, "name", part)), type(part).__name__, ""


def describe_adc_noise(adc: Any) -> str:
    """How the ADC's own noise is given, and the conditions it holds at."""
    from ...chain.converter import (
        ADC,
        InputNoiseDensity,
        NoiseAtRate,
        NoiseTable,
        SnrNoise,
        TransitionNoise,
    )

    if not isinstance(adc, ADC):
        return ""
    n = adc.noise
    gain = "" if getattr(n, "gain", None) is None else f" at gain {format_si(n.gain, 'V/V')}"
    if isinstance(n, NoiseAtRate):
        text = (
            f"{_rms(n.rms_v)} at its input, quoted at {format_si(n.data_rate_hz, 'Hz')} data "
            f"rate{gain}, quantisation included"
        )
        if n.scale_with_rate:
            text += "; carried to other data rates as white noise (√ODR)"
        return text + "."
    if isinstance(n, NoiseTable):
        rows = ", ".join(f"{format_si(r, 'Hz')}: {_rms(v)}" for r, v in n.rows)
        return f"table of rms against data rate{gain} ({rows}); quantisation included."
    if isinstance(n, SnrNoise):
        at = "" if n.sample_rate_hz is None else f" at {format_si(n.sample_rate_hz, 'Hz')}"
        return (
            f"from an SNR of {format_db(n.snr_db)}{at} for a full-scale sine; "
            "quantisation included."
        )
    if isinstance(n, TransitionNoise):
        return f"transition noise {n.lsb_rms:g} LSB rms per sample; quantisation q/√12 added."
    if isinstance(n, InputNoiseDensity):
        return (
            f"input-referred density {_density(n.density, 'V/√Hz')}, flat over the first "
            "Nyquist zone; quantisation q/√12 added."
        )
    return ""


def describe_digital(design: Design) -> str:
    """The digital filter stages in the order they run."""
    from ...noise.responses import IdealLowpass, SincFilter

    parts = []
    for stage in design.digital.stages if design.digital is not None else ():
        if isinstance(stage, SincFilter):
            what = "average" if stage.order == 1 else f"sinc^{stage.order}"
            parts.append(
                f"{what} of {stage.length} at {format_si(stage.input_rate_hz, 'Hz')} → "
                f"{format_si(stage.output_rate_hz, 'Hz')}"
            )
        elif isinstance(stage, IdealLowpass):
            parts.append(
                f"band limit {format_si(stage.cutoff_hz, 'Hz')} at "
                f"{format_si(stage.input_rate_hz, 'Hz')}"
            )
    return "; then ".join(parts)


# --------------------------------------------------------------------------- fonts


_FONTS: dict[str, str] | None = None


def _font_files() -> dict[str, Path] | None:
    """DejaVu Sans files, as shipped with matplotlib (or the system's copy)."""
    names = {
        "regular": "DejaVuSans.ttf",
        "bold": "DejaVuSans-Bold.ttf",
        "italic": "DejaVuSans-Oblique.ttf",
        "mono": "DejaVuSansMono.ttf",
    }
    folders = []
    spec = importlib.util.find_spec("matplotlib")
    if spec is not None and spec.submodule_search_locations:
        folders.append(Path(spec.submodule_search_locations[0]) / "mpl-data" / "fonts" / "ttf")
    folders.append(Path("/usr/share/fonts/truetype/dejavu"))
    for folder in folders:
        files = {k: folder / v for k, v in names.items()}
        if all(f.is_file() for f in files.values()):
            return files
    return None


def _fonts() -> dict[str, str]:
    """Register the fonts once; fall back to the PDF core fonts (ASCII text) without them."""
    global _FONTS
    if _FONTS is not None:
        return _FONTS
    from reportlab.lib.fonts import addMapping
    from reportlab.pdfbase import pdfmetrics
    from reportlab.pdfbase.ttfonts import TTFont

    files = _font_files()
    if files is None:
        _FONTS = {
            "regular": "Helvetica",
            "bold": "Helvetica-Bold",
            "italic": "Helvetica-Oblique",
            "mono": "Courier",
            "unicode": "",
        }
        return _FONTS
    registered = {
        "regular": "ResplanSans",
        "bold": "ResplanSans-Bold",
        "italic": "ResplanSans-Oblique",
        "mono": "ResplanMono",
    }
    for key, face in registered.items():
        pdfmetrics.registerFont(TTFont(face, str(files[key])))
    addMapping("ResplanSans", 0, 0, "ResplanSans")
    addMapping("ResplanSans", 1, 0, "ResplanSans-Bold")
    addMapping("ResplanSans", 0, 1, "ResplanSans-Oblique")
    addMapping("ResplanSans", 1, 1, "ResplanSans-Bold")
    _FONTS = {**registered, "unicode": "yes"}
    return _FONTS


# --------------------------------------------------------------------------- text helpers


class _Writer:
    """Paragraph and table builders bound to one set of fonts and one page width."""

    def __init__(self, width: float):
        from reportlab.lib.styles import ParagraphStyle

        self.width = width
        f = _fonts()
        self.unicode = bool(f["unicode"])
        self.f = f
        base = ParagraphStyle(
            "body", fontName=f["regular"], fontSize=9, leading=12, textColor=_INK, spaceAfter=4
        )
        self.body = base
        self.small = ParagraphStyle("small", base, fontSize=7.5, leading=9.5, spaceAfter=0)
        self.cell = ParagraphStyle("cell", base, fontSize=7.5, leading=9.2, spaceAfter=0)
        self.cell_grey = ParagraphStyle("cellgrey", self.cell, textColor=_GREY, fontSize=6.8)
        self.caption = ParagraphStyle(
            "caption", base, fontSize=7.8, leading=10, textColor=_GREY, spaceAfter=10
        )
        self.h1 = ParagraphStyle(
            "h1", base, fontName=f["bold"], fontSize=13, leading=16, spaceBefore=6, spaceAfter=6
        )
        self.h2 = ParagraphStyle(
            "h2", base, fontName=f["bold"], fontSize=10, leading=13, spaceBefore=8, spaceAfter=3
        )
        self.title = ParagraphStyle(
            "title", base, fontName=f["bold"], fontSize=18, leading=22, spaceAfter=2
        )
        self.subtitle = ParagraphStyle(
            "subtitle", base, fontSize=10.5, leading=14, textColor=_GREY, spaceAfter=10
        )
        self.bullet = ParagraphStyle("bullet", base, leftIndent=10, bulletIndent=0, spaceAfter=2)
        self.mono = ParagraphStyle("mono", self.cell, fontName=f["mono"], fontSize=7)

    def text(self, value: str) -> str:
        """Escape for paragraph markup; ASCII spellings when no Unicode font was found."""
        value = value if self.unicode else ascii_units(value)
        return escape(value)

    def p(self, text: str, style=None, *, markup: bool = False):
        from reportlab.platypus import Paragraph

        return Paragraph(text if markup else self.text(text), style or self.body)

    def bullets(self, items: Sequence[str]) -> list:
        return [self.p(item, self.bullet) for item in items]

    def bullet_items(self, items: Sequence[str]) -> list:
        from reportlab.platypus import Paragraph

        return [
            Paragraph(self.text(item), self.bullet, bulletText="•" if self.unicode else "-")
            for item in items
        ]

    def table(
        self,
        rows: Sequence[Sequence[Any]],
        widths: Sequence[float],
        *,
        header: bool = True,
        total_row: bool = False,
        align_right: Sequence[int] = (),
        label_column: bool = False,
        font_size: float | None = None,
    ):
        """A table; str cells become paragraphs (they wrap), flowables pass through."""
        from reportlab.lib import colors
        from reportlab.lib.styles import ParagraphStyle
        from reportlab.platypus import Table, TableStyle

        scale = self.width / sum(widths)
        col_widths = [w * scale for w in widths]
        cell = self.cell
        if font_size is not None:
            cell = ParagraphStyle("cellsized", cell, fontSize=font_size, leading=font_size * 1.25)
        right = ParagraphStyle("right", cell, alignment=2)
        body = []
        for r, row in enumerate(rows):
            cells = []
            for c, value in enumerate(row):
                if isinstance(value, str):
                    style = cell
                    if header and r == 0:
                        text = f"<b>{self.text(value)}</b>"
                        cells.append(self.p(text, style, markup=True))
                        continue
                    if label_column and c == 0:
                        cells.append(self.p(f"<b>{self.text(value)}</b>", style, markup=True))
                        continue
                    if c in align_right:
                        style = right
                    cells.append(self.p(value, style))
                else:
                    cells.append(value)
            body.append(cells)
        t = Table(
            body,
            colWidths=col_widths,
            repeatRows=1 if header else 0,
            hAlign="LEFT",
            spaceAfter=6,
        )
        commands = [
            ("VALIGN", (0, 0), (-1, -1), "TOP"),
            ("LEFTPADDING", (0, 0), (-1, -1), 3),
            ("RIGHTPADDING", (0, 0), (-1, -1), 3),
            ("TOPPADDING", (0, 0), (-1, -1), 2),
            ("BOTTOMPADDING", (0, 0), (-1, -1), 2.5),
            ("LINEBELOW", (0, 0), (-1, -1), 0.25, colors.HexColor(_RULE)),
        ]
        if header:
            commands += [
                ("BACKGROUND", (0, 0), (-1, 0), colors.HexColor(_SHADE)),
                ("LINEBELOW", (0, 0), (-1, 0), 0.6, colors.HexColor(_GREY)),
            ]
        if total_row:
            commands += [("LINEABOVE", (0, -1), (-1, -1), 0.8, colors.HexColor(_GREY))]
        t.setStyle(TableStyle(commands))
        return t


# --------------------------------------------------------------------------- numbers


def _rms(value: float) -> str:
    return format_si(value, "V") + " rms"


def _signed_bits(value: float) -> str:
    text = format_bits(value)
    return ("+" + text) if value > 0 and math.isfinite(value) else text


def _k(k_pp: float) -> str:
    return format(k_pp, ".3g")


def _coverage_text(coverage: float, k_pp: float) -> str:
    return f"noise-free figures at {format_percent(coverage)} coverage, k_pp = {_k(k_pp)}"


def _maybe_hz(value: float | None, none: str = "none given") -> str:
    return none if value is None else format_si(value, "Hz")


def _after_allowance(req: Any) -> str:
    if req.interference_rms_v > 0:
        return f"after the interference allowance of {_rms(req.interference_rms_v)}"
    return "no interference allowance reserved"


def _today() -> str:
    return _dt.date.today().isoformat()


# --------------------------------------------------------------------------- sections


def _title_block(w: _Writer, design: Design) -> list:
    from reportlab.platypus import Spacer

    meta = design.meta
    rows = [
        ["Project", meta.project or "—"],
        ["Revision", meta.revision or "—"],
        ["Author", meta.author or "—"],
        ["Date", meta.date or f"{_today()} (date of this report; the design gives none)"],
        ["Design file", design.source or "— (built in code)"],
        [
            "SHA-256 of the design file",
            w.p(design.sha256, w.mono) if design.sha256 else "not recorded (no design file)",
        ],
        ["Written by", f"resplan {__version__} on {_today()}"],
    ]
    return [
        w.p(meta.title or "Untitled design", w.title),
        w.p("Noise and resolution requirements appendix", w.subtitle),
        w.table(rows, [45, 125], header=False, label_column=True),
        Spacer(1, 10),
    ]


def _requirement_line(design: Design) -> str:
    req = design.requirement
    if req.noise_free_counts is not None:
        target = (
            f"{format_counts(req.noise_free_counts)} noise-free counts "
            f"({format_bits(req.required_noise_free_bits)}) over "
            f"{format_si(req.span_v, 'V')}"
        )
    else:
        target = (
            f"{format_db(req.dynamic_range_db)} dynamic range over {format_si(req.span_v, 'V')}"
        )
    statement = req.description or "no statement given"
    return f"{statement} — {target}"


def _verdict(w: _Writer, budget: Budget | None, plan: Any) -> Any:
    if budget is not None and budget.meets_requirement is not None:
        meets = budget.meets_requirement
        margin = budget.margin_bits
        if meets:
            text = f"Meets the requirement, margin {_signed_bits(margin)}."
        else:
            why = " (the ADC overloads)" if budget.overloaded else ""
            text = f"Does not meet the requirement{why}, margin {_signed_bits(margin)}."
        colour = _MEETS if meets else _SHORT
    elif plan is not None:
        feasible = bool(getattr(plan, "feasible", False))
        text = (
            "The plan is feasible: limits for every open part are in section 3."
            if feasible
            else "The plan is infeasible: the fixed parts alone exceed the allowed noise."
        )
        colour = _MEETS if feasible else _SHORT
    else:
        text = "No verdict: the design has open parts and no plan was computed."
        colour = _GREY
    return w.p(
        f'<font color="{colour}"><b>{w.text(text)}</b></font>',
        w.h2,
        markup=True,
    )


def _summary(w: _Writer, design: Design, budget: Budget | None, plan: Any) -> list:
    req = design.requirement
    out = [w.p(SECTION_TITLES[0], w.h1), _verdict(w, budget, plan)]
    rows: list[list[Any]] = [["Requirement", _requirement_line(design)]]
    if budget is not None:
        b = budget
        rows += [
            [
                "Verdict",
                ("meets" if b.meets_requirement else "does not meet")
                + f" the requirement; margin {_signed_bits(b.margin_bits)}",
            ],
            [
                "Noise-free resolution, sensor span",
                f"{format_bits(b.noise_free_bits)} · "
                f"{format_counts(b.noise_free_counts)} counts over {format_si(b.span_v, 'V')}",
            ],
            ["Effective resolution, sensor span", format_bits(b.effective_bits)],
            [
                "Noise-free resolution, ADC range",
                f"{format_bits(b.noise_free_bits_adc_range)} · "
                f"{format_counts(b.noise_free_counts_adc_range)} counts over "
                f"{format_si(b.adc_full_scale_v, 'V')}",
            ],
            ["Effective resolution, ADC range", format_bits(b.effective_bits_adc_range)],
            ["ADC range used by the sensor span", format_percent(b.adc_range_used)],
            [
                "Total noise",
                f"{_rms(b.total_rms_v)} at the sensor · {_rms(b.total_adc_rms_v)} at the ADC input",
            ],
            ["Allowed noise", f"{_rms(b.allowed_rms_v)} at the sensor, {_after_allowance(req)}"],
            [
                "Margin",
                f"{_signed_bits(b.margin_bits)} of noise-free resolution "
                "(log2 of allowed over actual noise)",
            ],
            ["Coverage", _coverage_text(b.coverage, b.k_pp)],
            [
                "SNR",
                f"{format_db(b.snr_db)} (full-scale sine of the ADC range against the total "
                "noise at its input)",
            ],
            [
                "Dynamic range",
                f"{format_db(b.dynamic_range_db)} (full-scale sine over the sensor span)",
            ],
            ["ADC alone", f"ENOB {format_bits(b.adc_enob)} (its own noise and quantisation)"],
            ["Gain, sensor to ADC", format_si(b.gain, "V/V")],
            [
                "Band",
                f"f_L = {format_si(b.f_low_hz, 'Hz')} (bounds the 1/f noise); top of the signal "
                f"band {_maybe_hz(b.f_high_hz)}; the noise band is what the filters pass",
            ],
            [
                "Temperature",
                f"electronics {format_temperature(b.temperature_k)}; sensor "
                f"{format_temperature(b.sensor_temperature_k)}",
            ],
            ["Output data rate", format_si(b.output_rate_hz, "Hz")],
            [
                "Dominant contributors",
                "; ".join(f"{c.name} ({c.stage})" for c in b.dominant) or "none",
            ],
        ]
        if req.engineering_per_volt and req.engineering_unit:
            unit = req.engineering_unit
            per_v = req.engineering_per_volt
            text = (
                f"noise {format_si(b.total_rms_v * per_v, unit)} rms; noise-free step "
                f"{format_si(b.k_pp * b.total_rms_v * per_v, unit)} at k_pp = {_k(b.k_pp)}"
            )
            if req.noise_free_counts:
                step = req.span_v * per_v / req.noise_free_counts
                text += f"; required step {format_si(step, unit)}"
            rows.append(["In the measurand", text])
    else:
        rows += [
            ["Forward budget", "not computed: the design has open parts (section 3 sizes them)"],
            [
                "Allowed noise",
                f"{_rms(req.allowed_noise_rms_v)} at the sensor, {_after_allowance(req)}",
            ],
            ["Coverage", _coverage_text(req.coverage, req.k_pp)],
            [
                "Band",
                f"f_L = {format_si(design.band.f_low_hz, 'Hz')} (bounds the 1/f noise); top of "
                f"the signal band {_maybe_hz(design.band.f_high_hz)}",
            ],
            ["Temperature", f"electronics {format_temperature(design.temperature_k)}"],
            [
                "Open parts",
                "; ".join(f"{p.name} ({p.field_path}, {p.kind})" for p in design.open_parts),
            ],
        ]
        if plan is not None:
            rows += [
                ["Fixed by given parts", _rms(plan.fixed_rms_v) + " at the sensor"],
                ["Left for the open parts", _rms(plan.remaining_rms_v) + " at the sensor"],
            ]
            if getattr(plan, "output_rate_hz", None):
                rows.append(["Output data rate", format_si(plan.output_rate_hz, "Hz")])
    out.append(w.table(rows, [55, 115], header=False, label_column=True))
    if budget is not None and budget.warnings:
        out.append(w.p("Warnings from the budget:", w.h2))
        out += w.bullet_items(list(budget.warnings))
    out.append(w.p(SUMMARY_CAUTION, w.small))
    return out


def _assumptions(w: _Writer, design: Design, budget: Budget | None, plan: Any) -> list:
    req = design.requirement
    out = [w.p(SECTION_TITLES[1], w.h1), w.p("The requirement", w.h2)]
    swing = "bipolar, ±" + format_si(req.span_v / 2, "V") if design.sensor.bipolar else "unipolar"
    rows: list[list[Any]] = [
        ["Statement", req.description or "no statement given"],
        [
            "Sensor span",
            f"{format_si(req.span_v, 'V')} peak to peak at the sensor output ({swing})",
        ],
    ]
    if req.noise_free_counts is not None:
        rows.append(
            [
                "Resolution required",
                f"{format_counts(req.noise_free_counts)} noise-free counts "
                f"({format_bits(req.required_noise_free_bits)})",
            ]
        )
    else:
        rows.append(["Resolution required", f"{format_db(req.dynamic_range_db)} dynamic range"])
    rows += [
        ["Coverage", _coverage_text(req.coverage, req.k_pp)],
        ["Allowed total", _rms(req.allowed_total_rms_v) + " at the sensor"],
        ["Interference allowance", _rms(req.interference_rms_v) + " at the sensor"],
        ["Allowed noise", _rms(req.allowed_noise_rms_v) + " at the sensor (in power, after it)"],
    ]
    out.append(w.table(rows, [55, 115], header=False, label_column=True))

    out.append(w.p("The chain", w.h2))
    parts: list[tuple[str, Any]] = [("sensor", design.sensor)]
    parts += [(f"stages[{i}]", s) for i, s in enumerate(design.stages)]
    if design.reference is not None:
        parts.append(("reference", design.reference))
    parts.append(("adc", design.adc))
    rows = [["Place", "Part", "Kind", "Figures used"]]
    for place, part in parts:
        name, kind, figures = describe_part(part)
        rows.append([getattr(part, "field_path", place), name, kind, figures])
    if design.digital is not None:
        rows.append(["digital_filter", "digital filtering", "digital", describe_digital(design)])
    out.append(w.table(rows, [20, 38, 24, 88]))

    out.append(w.p("Assumptions", w.h2))
    items = [
        f"Lower band edge f_L = {format_si(design.band.f_low_hz, 'Hz')}: it bounds the 1/f "
        "noise, which does not average down (about 1/observation time). The noise band above "
        "it is what the chain's analog and digital filters pass, aliases included.",
        "Top of the signal band: "
        + _maybe_hz(design.band.f_high_hz, "not given (the filters set the noise band)")
        + ".",
        f"Temperature of the electronics {format_temperature(design.temperature_k)}"
        + (
            f"; sensor {format_temperature(design.sensor.temperature_k)}."
            if design.sensor.temperature_k is not None
            else "; the sensor at the same temperature."
        ),
        "Noise is Gaussian and the sources are uncorrelated: they add in power. Peak-to-peak "
        f"figures are k_pp·σ with k_pp = {_k(req.k_pp)} at {format_percent(req.coverage)} "
        "coverage; true Gaussian noise has no bounded peak, so k_pp is a choice.",
        "Interference is not noise: mains pickup, RF rectification, ground loops and switching "
        "spurs are fixed by shielding, layout, filtering and grounding, not by the choice of "
        + (
            f"parts. An allowance of {_rms(req.interference_rms_v)} is reserved for them, "
            "taken out of the budget in power."
            if req.interference_rms_v > 0
            else "parts. No allowance is reserved for them in this design."
        ),
        "Every source is referred to the sensor by dividing by the DC gain in front of it.",
        "Current noise flows in the DC source resistance at each input; a filter capacitor's "
        "shunting at high frequency is neglected, which overstates current noise.",
    ]
    if budget is not None:
        items.append("Reference: " + budget.reference_note + ".")
    elif design.reference is None:
        items.append("Reference: none given; reference noise is not counted.")
    adc_note = describe_adc_noise(design.adc)
    if adc_note:
        items.append("ADC noise: " + adc_note)
    if budget is not None:
        for c in budget.contributions:
            if c.note:
                items.append(f"{c.name} ({c.stage}): {c.note}.")
        items += [f"Budget warning: {x}" for x in budget.warnings]
    notes = tuple(getattr(design, "notes", ()) or ())
    items += [f"From the design file: {x}." for x in notes]
    if plan is not None:
        items += [f"Plan: {x}" for x in getattr(plan, "assumptions", ()) or () if x not in notes]
    out += w.bullet_items(items)
    return out


_BOUND_WORDS = {"max": "at most", "min": "at least", "info": ""}


def _allocation(w: _Writer, design: Design, plan: Any, plan_note: str) -> list:
    out = [w.p(SECTION_TITLES[2], w.h1)]
    if plan is None:
        out.append(w.p(plan_note or "The plan was not computed."))
        return out
    feasible = bool(getattr(plan, "feasible", False))
    out.append(
        w.p(
            "The plan is feasible." if feasible else "The plan is infeasible.",
            w.h2,
        )
    )
    rows = [
        ["Allowed total", _rms(plan.allowed_total_rms_v)],
        ["Interference allowance", _rms(plan.interference_rms_v)],
        ["Allowed noise", _rms(plan.allowed_noise_rms_v)],
        ["Fixed by given parts", _rms(plan.fixed_rms_v)],
        ["Left for the open parts", _rms(plan.remaining_rms_v)],
    ]
    out.append(w.p("All figures referred to the sensor.", w.small))
    out.append(w.table(rows, [55, 115], header=False, label_column=True))
    for reason in getattr(plan, "reasons", ()) or ():
        out.append(w.p(reason))
    fixed = [c for c in getattr(plan, "fixed", ()) or () if c.rms_v > 0]
    if fixed:
        out.append(w.p("Noise fixed by the given parts", w.h2))
        rows = [["Contributor", "Stage", "Kind", "RMS at sensor"]]
        rows += [[c.name, c.stage, c.kind, _rms(c.rms_v)] for c in fixed]
        out.append(w.table(rows, [60, 50, 25, 35], align_right=(3,)))
    allocations = getattr(plan, "allocations", ()) or ()
    if allocations:
        out.append(w.p("Allocation among the open parts", w.h2))
        rows = [["Part", "Kind", "Field", "Weight", "Share", "RMS at sensor", "RMS at ADC"]]
        rows += [
            [
                a.part,
                a.kind,
                a.field_path,
                format(a.weight, ".3g"),
                format_percent(a.share),
                _rms(a.rms_v),
                _rms(a.adc_rms_v),
            ]
            for a in allocations
        ]
        out.append(w.table(rows, [34, 18, 22, 13, 15, 24, 24], align_right=(3, 4, 5, 6)))
    elif not design.open_parts:
        out.append(w.p("Every part is given: there is nothing to allocate."))
    requirements = getattr(plan, "requirements", ()) or ()
    if requirements:
        out.append(w.p("Per-part requirements", w.h2))
        rows = [["Part", "Quantity", "Limit", "Condition", "Formula"]]
        for r in requirements:
            bound = _BOUND_WORDS.get(getattr(r, "bound", ""), getattr(r, "bound", ""))
            value = format_si(r.value, r.unit) if r.value is not None else "—"
            rows.append(
                [
                    f"{r.part} ({r.field_path})",
                    r.quantity,
                    f"{bound} {value}".strip(),
                    r.condition,
                    r.formula,
                ]
            )
        out.append(w.table(rows, [30, 30, 24, 40, 46]))
    levers = getattr(plan, "levers", ()) or ()
    if levers:
        out.append(w.p("Levers", w.h2))
        rows = [["Lever", "Value", "What it means"]]
        rows += [
            [
                lv.name,
                "—" if lv.value is None else format_si(lv.value, lv.unit),
                lv.description,
            ]
            for lv in levers
        ]
        out.append(w.table(rows, [35, 25, 110]))
    return out


def _budget_section(w: _Writer, design: Design, budget: Budget | None) -> list:
    out = [w.p(SECTION_TITLES[3], w.h1)]
    if budget is None:
        names = ", ".join(f"{p.field_path} ({p.kind})" for p in design.open_parts)
        out.append(
            w.p(
                "The forward budget needs every part given; these parts are open: "
                + names
                + ". Their limits are in section 3."
            )
        )
        return out
    out.append(
        w.p(
            "Every contributor, largest first. RMS (V rms) over the chain's noise band, referred "
            "to the sensor (RTI) and at the ADC input; share of the total noise power; white "
            "density referred to the sensor and its 1/f corner where the source is a density; "
            "the white noise bandwidth of its path.",
            w.small,
        )
    )
    rows: list[list[Any]] = [
        [
            "Contributor",
            "Kind",
            "RMS at sensor",
            "RMS at ADC",
            "Share",
            "Density (RTI)",
            "1/f corner",
            "Noise BW",
            "Note",
        ]
    ]
    for c in budget.contributions:
        name = w.p(
            f"{w.text(c.name)}<br/><font color='{_GREY}' size='6.5'>{w.text(c.stage)}</font>",
            w.cell,
            markup=True,
        )
        rows.append(
            [
                name,
                c.kind,
                format_si(c.rms_v, "V"),
                format_si(c.adc_rms_v, "V"),
                format_percent(c.share),
                "—" if c.density_v_per_rthz is None else format_si(c.density_v_per_rthz, "V/√Hz"),
                "—" if c.corner_hz is None else format_si(c.corner_hz, "Hz"),
                "—" if c.noise_bandwidth_hz is None else format_si(c.noise_bandwidth_hz, "Hz"),
                w.p(c.note, w.cell_grey) if c.note else "",
            ]
        )
    rows.append(
        [
            "Total (root sum of squares)",
            "",
            format_si(budget.total_rms_v, "V"),
            format_si(budget.total_adc_rms_v, "V"),
            format_percent(1.0),
            "",
            "",
            "",
            "",
        ]
    )
    out.append(
        w.table(
            rows,
            [31, 17, 14, 14, 15, 19, 13, 13, 34],
            total_row=True,
            align_right=(2, 3, 4, 5, 6, 7),
            font_size=7,
        )
    )
    out.append(
        w.p(
            f"Gain from the sensor to the ADC {format_si(budget.gain, 'V/V')}; ADC full-scale "
            f"range {format_si(budget.adc_full_scale_v, 'V')}; reference: {budget.reference_note}.",
            w.small,
        )
    )
    alias = interferer_check(budget, design)
    if alias is not None:
        verdict_text = "within it" if alias.within_allowance else "it EXCEEDS the allowance"
        out.append(
            w.p(
                f"Stated interferer (interference, not noise): {format_si(alias.amplitude_v, 'V')} "
                f"rms at {format_si(alias.frequency_hz, 'Hz')} at the sensor lands at "
                f"{format_si(alias.alias_hz, 'Hz')} after sampling; the analog path attenuates "
                f"it by {format_db(alias.analog_db)} and the digital filter by "
                f"{format_db(alias.digital_db)}, leaving {format_si(alias.residue_v, 'V')} rms "
                f"against {format_si(alias.allowed_v, 'V')} rms allowed ({alias.allowed_reason}): "
                f"{verdict_text}.",
                w.small,
            )
        )
    return out


def _figures_section(w: _Writer, figs: dict, pngs: dict[str, bytes], dpi: int) -> list:
    from reportlab.platypus import Image, KeepTogether

    out = [w.p(SECTION_TITLES[4], w.h1)]
    if not figs:
        out.append(w.p("No figures: the design has open parts and no plan to draw."))
        return out
    out.append(
        w.p(
            f"Figures are embedded as PNG images at {dpi} dpi; the curves are for reading, and "
            "every number printed comes from the forward budget. Colours are the Okabe–Ito "
            "colour-blind-safe set.",
            w.small,
        )
    )
    for number, (name, fig) in enumerate(figs.items(), start=1):
        width_in, height_in = fig.get_size_inches()
        width = min(w.width, width_in * 72.0)
        height = width * height_in / width_in
        image = Image(io.BytesIO(pngs[name]), width=width, height=height)
        title = FIGURE_TITLES.get(name, name)
        text = f"<b>Figure {number}. {w.text(title)}.</b> {w.text(caption(fig))}"
        out.append(KeepTogether([image, w.p(text, w.caption, markup=True)]))
    return out


def _formulas_section(w: _Writer) -> list:
    out = [w.p(SECTION_TITLES[5], w.h1)]
    rows = [["Quantity", "Formula", "Source"]]
    rows += [list(row) for row in FORMULAS]
    out.append(w.table(rows, [38, 62, 70]))
    return out


def _safety_section(w: _Writer) -> list:
    from reportlab.platypus import KeepTogether

    out = [w.p(SECTION_TITLES[6], w.h1)]
    out += [w.p(text) for text in SAFETY_PARAGRAPHS]
    return [KeepTogether(out)]


# --------------------------------------------------------------------------- document


def _canvas_class(footer_left: str, font: str, unicode: bool):
    """A canvas that writes "page N of M" once the page count is known."""
    from reportlab.pdfgen import canvas

    left = footer_left if unicode else ascii_units(footer_left)

    class NumberedCanvas(canvas.Canvas):
        def __init__(self, *args, **kwargs):
            super().__init__(*args, **kwargs)
            self._pages: list[dict] = []

        def showPage(self):  # noqa: N802 - reportlab's name
            self._pages.append(dict(self.__dict__))
            self._startPage()

        def save(self):
            total = len(self._pages)
            for state in self._pages:
                self.__dict__.update(state)
                self._footer(total)
                super().showPage()
            super().save()

        def _footer(self, total: int) -> None:
            width, _ = self._pagesize
            self.saveState()
            self.setFont(font, 7)
            self.setFillColor(_GREY)
            self.setStrokeColor(_RULE)
            self.setLineWidth(0.4)
            y = _MARGIN * 0.55
            self.line(_MARGIN, y + 9, width - _MARGIN, y + 9)
            self.drawString(_MARGIN, y, left)
            self.drawRightString(width - _MARGIN, y, f"page {self._pageNumber} of {total}")
            self.restoreState()

    return NumberedCanvas


def _paper(paper: str) -> tuple[float, float]:
    key = str(paper).strip().lower()
    if key not in PAPER_SIZES:
        raise DesignError("paper", paper, "A4 or letter")
    return PAPER_SIZES[key]


def _check_target(design: Design, path: str | os.PathLike) -> Path:
    target = Path(path)
    if target.is_dir():
        raise DesignError("output", str(target), "a file name for the PDF, not a folder")
    if not target.parent.is_dir():
        raise DesignError("output", str(target), "a path in an existing folder")
    if design.source and Path(design.source).exists():
        try:
            same = Path(design.source).resolve() == target.resolve()
        except OSError:  # pragma: no cover - unreadable path
            same = False
        if same:
            raise DesignError("output", str(target), "a path other than the design file")
    return target


def _plan_or_note(design: Design) -> tuple[Any, str]:
    """Call the planner if it is installed; a note saying why not otherwise."""
    try:
        from ...plan.allocation import plan_design
    except ImportError:
        return None, "The plan was not computed: the planner is not available in this installation."
    try:
        return plan_design(design), ""
    except ResplanError as err:
        return None, f"The plan was not computed: {err}"


def write_report(
    design: Design,
    path: str | os.PathLike,
    *,
    paper: str = "A4",
    figures_dir: str | os.PathLike | None = None,
    plan: Any = None,
    budget: Budget | None = None,
    dpi: int = DEFAULT_DPI,
    sweep_counts: tuple[int, ...] | None = None,
) -> Path:
    """Write the requirements appendix of a design as a PDF.

    Parameters
    ----------
    design : Design
        The design (complete, or with open parts).
    path : path
        The PDF to write. Its folder must exist. Written to a temporary file in that
        folder and renamed into place: on any error no partial file is left and an
        existing file is untouched.
    paper : {"A4", "letter"}
        Paper size (ISO 216 A4, 210 × 297 mm, or US Letter, 8.5 × 11 in).
    figures_dir : path, optional
        Also write every figure there as PNG (at ``dpi``) and SVG.
    plan : resplan.plan.allocation.Plan, optional
        The backward plan; computed with :func:`resplan.plan.allocation.plan_design` when omitted
        and the planner is installed.
    budget : Budget, optional
        The forward budget; computed when omitted and the design is complete, as
        ``forward_budget(design.chain(), design.band, requirement=design.requirement)``.
    dpi : int
        Resolution of the embedded PNG figures, dots per inch (200 by default).
    sweep_counts : tuple of int, optional
        Averaging counts for the resolution figure.

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    DesignError
        For a bad paper size or output path; ChainError when the chain cannot be computed.
    """
    from reportlab.platypus import BaseDocTemplate, Frame, PageBreak, PageTemplate

    pagesize = _paper(paper)
    if isinstance(dpi, bool) or not isinstance(dpi, int) or dpi < 50:
        raise DesignError("dpi", dpi, "a whole number of dots per inch ≥ 50")
    target = _check_target(design, path)
    if budget is None and design.is_complete:
        budget = forward_budget(design.chain(), design.band, requirement=design.requirement)
    plan_note = ""
    if plan is None:
        plan, plan_note = _plan_or_note(design)

    figs = make_figures(design, budget, plan, sweep_counts=sweep_counts)
    pngs = {name: figure_png(fig, dpi) for name, fig in figs.items()}

    width = pagesize[0] - 2 * _MARGIN
    w = _Writer(width)
    story: list = []
    story += _title_block(w, design)
    story += _summary(w, design, budget, plan)
    story.append(PageBreak())
    story += _assumptions(w, design, budget, plan)
    story += _allocation(w, design, plan, plan_note)
    story += _budget_section(w, design, budget)
    story.append(PageBreak())
    story += _figures_section(w, figs, pngs, dpi)
    story.append(PageBreak())
    story += _formulas_section(w)
    story += _safety_section(w)

    meta = design.meta
    footer = f"resplan {__version__} · {meta.title or 'Untitled design'}"
    if meta.revision:
        footer += f" · rev. {meta.revision}"
    if design.sha256:
        footer += f" · design SHA-256 {design.sha256[:12]}…"

    with atomic_path(target) as temp:
        doc = BaseDocTemplate(
            str(temp),
            pagesize=pagesize,
            leftMargin=_MARGIN,
            rightMargin=_MARGIN,
            topMargin=_MARGIN,
            bottomMargin=_MARGIN,
            title=f"{meta.title} — requirements appendix",
            author=meta.author or "",
            subject="Noise and resolution requirements appendix",
            creator=f"resplan {__version__}",
        )
        frame = Frame(_MARGIN, _MARGIN, width, pagesize[1] - 2 * _MARGIN, id="body")
        doc.addPageTemplates([PageTemplate(id="page", frames=[frame])])
        doc.build(story, canvasmaker=_canvas_class(footer, w.f["regular"], w.unicode))
        if figures_dir is not None:
            save_figures(figs, figures_dir, dpi=dpi, pngs=pngs)
    return target
