"""Fonts, colours, paragraph styles and paper sizes shared by the certificate and the receipt.

Text is set in embedded Noto Sans with a fallback face per script (see fonts.py), so names in
most of the world's scripts print as typed.
"""

from __future__ import annotations

from reportlab.lib import colors
from reportlab.lib.pagesizes import A4, LETTER
from reportlab.lib.styles import ParagraphStyle
from reportlab.lib.units import mm

from .fonts import FONT, FONT_BOLD, register

PAPER_SIZES = {"A4": A4, "Letter": LETTER}
MARGIN = 16 * mm
# Baseline of the page footer above the paper's bottom edge: below the text frame, whose
# bottom margin is MARGIN, with room for the rule drawn above it.
FOOTER_OFFSET = 9 * mm

register()
BODY_SIZE = 9
SMALL_SIZE = 7.5

INK = colors.HexColor("#1b1b1b")
MUTED = colors.HexColor("#555555")
RULE = colors.HexColor("#9a9a9a")
SHADE = colors.HexColor("#eeeeee")
WARNING = colors.HexColor("#a11d21")
# Outcome words are also printed in full, so the colour only repeats what the words say.
OUTCOME_COLOURS = {
    "pass": colors.HexColor("#1a6b3a"),
    "marginal": colors.HexColor("#8a5a00"),
    "fail": WARNING,
    "inconclusive": colors.HexColor("#3c4f7a"),
}


def _style(name: str, **overrides) -> ParagraphStyle:
    # shaping=1 lets HarfBuzz shape the scripts whose faces ask for it (fonts.py).
    base = {
        "fontName": FONT,
        "fontSize": BODY_SIZE,
        "leading": BODY_SIZE * 1.25,
        "textColor": INK,
        "shaping": 1,
    }
    return ParagraphStyle(name, **{**base, **overrides})


STYLES = {
    "body": _style("body", spaceAfter=3),
    "small": _style("small", fontSize=SMALL_SIZE, leading=SMALL_SIZE * 1.25),
    "muted": _style("muted", fontSize=SMALL_SIZE, leading=SMALL_SIZE * 1.25, textColor=MUTED),
    "label": _style(
        "label", fontName=FONT_BOLD, fontSize=SMALL_SIZE, leading=SMALL_SIZE * 1.3, textColor=MUTED
    ),
    "cell": _style("cell", fontSize=SMALL_SIZE, leading=SMALL_SIZE * 1.2),
    "cell_header": _style(
        "cell_header", fontName=FONT_BOLD, fontSize=SMALL_SIZE, leading=SMALL_SIZE * 1.2
    ),
    "shop": _style("shop", fontName=FONT_BOLD, fontSize=13, leading=16),
    "title": _style("title", fontName=FONT_BOLD, fontSize=17, leading=21, spaceBefore=6),
    "subtitle": _style("subtitle", fontSize=10, leading=13, spaceAfter=8),
    "heading": _style(
        "heading", fontName=FONT_BOLD, fontSize=11, leading=14, spaceBefore=10, spaceAfter=4
    ),
    "subheading": _style(
        "subheading",
        fontName=FONT_BOLD,
        fontSize=BODY_SIZE,
        leading=BODY_SIZE * 1.3,
        spaceBefore=6,
        spaceAfter=3,
    ),
    "outcome": _style("outcome", fontName=FONT_BOLD, fontSize=16, leading=19),
    "warning": _style("warning", textColor=WARNING),
    "list": _style(
        "list",
        leftIndent=15,
        bulletIndent=0,
        spaceAfter=2,
        bulletFontName=FONT,
        bulletFontSize=BODY_SIZE,
    ),
    "caveat": _style(
        "caveat",
        fontSize=8,
        leading=10,
        leftIndent=15,
        bulletIndent=0,
        spaceAfter=1.5,
        bulletFontName=FONT,
        bulletFontSize=8,
    ),
}


def page_size(paper_size: str) -> tuple[float, float]:
    """The (width, height) in points of a paper size named in a snapshot."""
    try:
        return PAPER_SIZES[paper_size]
    except KeyError:
        raise ValueError(
            f"paper_size must be one of {', '.join(PAPER_SIZES)} (got {paper_size!r})"
        ) from None
