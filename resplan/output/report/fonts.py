"""Fonts for the report: DejaVu Sans when it can be found, the PDF core fonts otherwise."""

from __future__ import annotations

import importlib.util
from pathlib import Path

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


def fonts() -> dict[str, str]:
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


_SVG_FONTS = False


def register_svg_fonts() -> None:
    """Let svglib draw the figures' text (DejaVu Sans, as matplotlib writes it) in the PDF."""
    global _SVG_FONTS
    if _SVG_FONTS:
        return
    files = _font_files()
    if files is not None:
        from svglib.fonts import register_font

        register_font("DejaVu Sans", str(files["regular"]))
        register_font("DejaVu Sans", str(files["bold"]), weight="bold")
    _SVG_FONTS = True
