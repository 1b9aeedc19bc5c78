"""The block diagram of the chain, drawn from the design as reportlab shapes.

Sensor → each analog stage → ADC → digital filter, left to right (in rows when
they do not fit one), each block with its place in the design file, its kind and
the one or two figures that set its part in the noise: gain, corner, order,
sample and output rate. The reference, when given, is drawn under the ADC. Open
parts are drawn dashed. The drawing is vector, like the figures.
"""

from __future__ import annotations

import math
from typing import Any

from ...chain.design import Design, OpenPart
from ...units.formatting import format_si
from .style import GREY, INK, SHADE

#: Block size and gaps, points.
_BOX_W, _MAX_W, _BOX_H, _GAP, _ROW_GAP = 72.0, 150.0, 46.0, 12.0, 22.0
_SIZE = 6.4


def _gain(value: float) -> str:
    return "gain " + format_si(value, "V/V")


def block_lines(part: Any) -> tuple[str, str, list[str]]:
    """(place, kind, figure lines) of one block."""
    from ...chain.converter import ADC
    from ...chain.stages import (
        ActiveFilter,
        IntegratedAmplifier,
        InvertingStage,
        NonInvertingStage,
        RCFilter,
        Reference,
        Sensor,
        TransimpedanceStage,
    )

    if isinstance(part, OpenPart):
        return part.field_path, f"open {part.kind}", ["to be planned"]
    if isinstance(part, Sensor):
        if part.output == "current":
            shunt = f"R_sh {format_si(part.resistance_ohm, 'Ω')}"
            if part.capacitance_f is not None:
                shunt += f", C {format_si(part.capacitance_f, 'F')}"
            lines = [f"span {format_si(part.span_v, 'A')}", shunt]
            return "sensor", "current-output sensor", lines
        return (
            "sensor",
            "sensor",
            [
                f"span {format_si(part.span_v, 'V')}",
                f"R {format_si(part.resistance_ohm, 'Ω')}",
            ],
        )
    if isinstance(part, TransimpedanceStage):
        # The gain is R_f itself (V/A); the two parts that set the noise gain and the band.
        lines = [f"R_f {format_si(part.rf_ohm, 'Ω')}"]
        lines.append("no C_f" if part.cf_f is None else f"C_f {format_si(part.cf_f, 'F')}")
        return "", "transimpedance stage", lines
    if isinstance(part, InvertingStage):
        return "", "inverting stage", [_gain(part.gain)]
    if isinstance(part, NonInvertingStage):
        return "", "op-amp stage", [_gain(part.gain)]
    if isinstance(part, IntegratedAmplifier):
        lines = [_gain(part.gain)]
        if part.bandwidth_hz is not None:
            lines.append(f"BW {format_si(part.bandwidth_hz, 'Hz')}")
        return "", "integrated amplifier", lines
    if isinstance(part, RCFilter):
        return "", "RC filter", [f"corner {format_si(part.cutoff_hz, 'Hz')}"]
    if isinstance(part, ActiveFilter) and part.sections:
        return (
            "",
            f"{part.topology} filter",
            [
                f"order {part.order}, corner {format_si(part.cutoff_hz, 'Hz')}",
                f"{len(part.sections)} sections by value",
            ],
        )
    if isinstance(part, ActiveFilter):
        return (
            "",
            f"{part.response} filter",
            [
                f"order {part.order}, corner {format_si(part.cutoff_hz, 'Hz')}",
                _gain(part.gain),
            ],
        )
    if isinstance(part, Reference):
        return "reference", "reference", [format_si(part.voltage_v, "V")]
    if isinstance(part, ADC):
        return (
            "adc",
            f"{part.architecture} ADC",
            [
                f"{part.bits} bits, f_s {format_si(part.sample_rate_hz, 'Hz')}",
                f"output {format_si(part.output_rate_hz, 'Hz')}",
            ],
        )
    # A stage type this drawing does not know yet: its gain and corner if it has them.
    lines = []
    if getattr(part, "gain", None) is not None:
        lines.append(_gain(part.gain))
    if getattr(part, "cutoff_hz", None) is not None:
        lines.append(f"corner {format_si(part.cutoff_hz, 'Hz')}")
    return "", type(part).__name__, lines


def _digital_lines(design: Design) -> list[str]:
    from ...noise.responses import IdealLowpass, SincFilter

    lines = []
    for stage in design.digital.stages if design.digital is not None else ():
        if isinstance(stage, SincFilter):
            what = "average" if stage.order == 1 else f"sinc{stage.order}"
            lines.append(f"{what} ÷{stage.length} → {format_si(stage.output_rate_hz, 'Hz')}")
        elif isinstance(stage, IdealLowpass):
            lines.append(f"band limit {format_si(stage.cutoff_hz, 'Hz')}")
    return lines[:3]


def _fit(text: str, font: str, width: float) -> str:
    from reportlab.pdfbase.pdfmetrics import stringWidth

    if stringWidth(text, font, _SIZE) <= width:
        return text
    while text and stringWidth(text + "…", font, _SIZE) > width:
        text = text[:-1]
    return text + "…"


def chain_blocks(design: Design) -> list[tuple[str, str, str, list[str], bool]]:
    """(place, name, kind, lines, open) of each block, in signal order."""
    blocks = []
    parts = [design.sensor, *design.stages, design.adc]
    places = ["sensor", *[f"stages[{i}]" for i in range(len(design.stages))], "adc"]
    for place, part in zip(places, parts, strict=True):
        where, kind, lines = block_lines(part)
        name = getattr(part, "name", kind)
        blocks.append((where or place, name, kind, lines, isinstance(part, OpenPart)))
    if design.digital is not None and design.digital.stages:
        blocks.append(
            ("digital_filter", "digital filter", "decimation", _digital_lines(design), False)
        )
    return blocks


def block_diagram(design: Design, width: float, fonts: dict[str, str], text=str) -> Any:
    """A reportlab Drawing of the chain, ``width`` points wide."""
    from reportlab.graphics.shapes import Drawing, Line, Polygon, Rect, String
    from reportlab.lib import colors

    blocks = chain_blocks(design)
    # As wide as the page allows with every block on one row, within limits.
    box_w = min(_MAX_W, max(_BOX_W, (width - (len(blocks) - 1) * _GAP) / len(blocks)))
    per_row = max(1, int((width + _GAP) / (box_w + _GAP) + 1e-9))
    rows = -(-len(blocks) // per_row)
    reference = design.reference is not None
    height = rows * _BOX_H + (rows - 1) * _ROW_GAP + (_BOX_H * 0.7 + _ROW_GAP if reference else 0)
    height += 4  # clear of the caption below
    drawing = Drawing(width, height)
    ink, grey = colors.HexColor(INK), colors.HexColor(GREY)
    where: dict[str, tuple[float, float]] = {}

    def box(x, y, h, place, name, kind, lines, dashed):
        drawing.add(
            Rect(
                x,
                y,
                box_w,
                h,
                rx=3,
                ry=3,
                fillColor=colors.HexColor(SHADE),
                strokeColor=grey,
                strokeWidth=0.6,
                strokeDashArray=(2, 2) if dashed else None,
            )
        )
        top = y + h - 9
        texts = [(place, fonts["regular"], grey), (name, fonts["bold"], ink)]
        texts += [(kind, fonts["italic"], ink)] + [(ln, fonts["regular"], ink) for ln in lines]
        for i, (t, font, colour) in enumerate(texts):
            if top - i * 7.6 < y + 2:
                break
            drawing.add(
                String(
                    x + 4,
                    top - i * 7.6,
                    _fit(text(t), font, box_w - 8),
                    fontName=font,
                    fontSize=_SIZE,
                    fillColor=colour,
                )
            )

    def arrow(x1, y1, x2, y2):
        drawing.add(Line(x1, y1, x2, y2, strokeColor=ink, strokeWidth=0.7))
        length = math.hypot(x2 - x1, y2 - y1) or 1.0
        ux, uy = (x2 - x1) / length, (y2 - y1) / length
        tip = 3.2
        bx, by = x2 - ux * tip * 1.5, y2 - uy * tip * 1.5
        pts = [x2, y2, bx - uy * tip, by + ux * tip, bx + uy * tip, by - ux * tip]
        drawing.add(Polygon(pts, fillColor=ink, strokeColor=ink, strokeWidth=0.3))

    h = _BOX_H
    for i, (place, name, kind, lines, dashed) in enumerate(blocks):
        row, col = divmod(i, per_row)
        x = col * (box_w + _GAP)
        y = height - (row + 1) * h - row * _ROW_GAP
        box(x, y, h, place, name, kind, lines, dashed)
        where[place] = (x, y)
        if i:
            if col:
                arrow(x - _GAP, y + h / 2, x, y + h / 2)
            else:  # wrap to the next row: down from the end of the last row
                px, py = x + (per_row - 1) * (box_w + _GAP) + box_w / 2, y + h + _ROW_GAP
                drawing.add(Line(px, py, px, py - _ROW_GAP / 2, strokeColor=ink, strokeWidth=0.7))
                drawing.add(
                    Line(
                        px,
                        py - _ROW_GAP / 2,
                        box_w / 2,
                        py - _ROW_GAP / 2,
                        strokeColor=ink,
                        strokeWidth=0.7,
                    )
                )
                arrow(box_w / 2, py - _ROW_GAP / 2, box_w / 2, y + h)
    if reference:
        x, y = where["adc"]
        rh = _BOX_H * 0.7
        ry = min(y for _, y in where.values()) - _ROW_GAP - rh
        _, kind, lines = block_lines(design.reference)
        box(x, ry, rh, "reference", design.reference.name, kind, lines, False)
        arrow(x + box_w / 2, ry + rh, x + box_w / 2, y)
    drawing.hAlign = "LEFT"
    return drawing
