"""The visual language of every document: fonts, palette, type scale and grid, kept as data.

One embedded family (DejaVu Sans, regular and bold) is used for every style, in the
layout and in the charts, so any client name renders and nothing refers to a
non-embedded standard font.

The palette is our own and was chosen so that each series differs in lightness as
well as in hue (it stays readable printed in greyscale and for the common forms of
colour-vision deficiency); lines also differ in width and dash, and markers in shape.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache
from typing import Any

from reportlab.lib import colors
from reportlab.lib.enums import TA_LEFT, TA_RIGHT
from reportlab.lib.pagesizes import A4, landscape, letter
from reportlab.lib.styles import ParagraphStyle
from reportlab.lib.units import mm
from reportlab.pdfbase import pdfmetrics
from reportlab.pdfbase.ttfonts import TTFont

from reportgen.config import Config
from reportgen.resources import font_path

FONT = "DejaVuSans"
FONT_BOLD = "DejaVuSans-Bold"

# Palette (hex).  Lightness in brackets (CIE L*), so greyscale order is visible here.
INK = "#1D2327"  # body text (L* 13)
MUTED = "#5C6770"  # secondary text, axes (L* 43)
RULE = "#C9CFD4"  # hairlines, grid (L* 83)
PANEL = "#F2F4F5"  # table stripes, cards (L* 96)
POINTS = "#8FA3B3"  # raw weigh-ins (L* 66)
WARM = "#C76B1E"  # intake, lean mass (L* 55), reads mid-grey
DEEP = "#3B2F63"  # second dark series: energy ratings, fat mass (L* 23)
OUTLIER = "#B0282E"  # excluded weigh-ins, drawn as crosses (L* 40)
PHASE_FILLS = ("#EEF0EE", "#E2E6EA")  # alternating phase shading (L* 94 / 91)
SEVERITY = {"urgent": "#B0282E", "caution": "#C76B1E", "info": "#5C6770"}

# Type scale (pt): a 1.25 ratio from 8.5 pt body text.
SIZE_SMALL = 7.0
SIZE_BODY = 8.5
SIZE_LEAD = 10.5
SIZE_H2 = 11.5
SIZE_H1 = 15.0
SIZE_TITLE = 20.0
SIZE_FIGURE = 15.0  # headline numbers

# Grid: 18 mm outer margins, 6 mm gutter, 12-column text area.
MARGIN = 18 * mm
GUTTER = 6 * mm
HEADER_SPACE = 10 * mm
CHART_AXES_LEFT = 14 * mm  # the charts' fixed left margin: legends line up with the axes
FOOTER_SPACE = 10 * mm


@cache
def register_fonts() -> None:
    """Register DejaVu Sans (+Bold) with reportlab once per process."""
    pdfmetrics.registerFont(TTFont(FONT, str(font_path())))
    pdfmetrics.registerFont(TTFont(FONT_BOLD, str(font_path(bold=True))))
    pdfmetrics.registerFontFamily(
        FONT, normal=FONT, bold=FONT_BOLD, italic=FONT, boldItalic=FONT_BOLD
    )


def missing_glyphs(text: str) -> str:
    """The characters of ``text`` the report font cannot draw (e.g. CJK), in order, once each.

    reportlab has no per-glyph fallback, so such characters would print as blanks; the
    report says so instead of failing silently.
    """
    register_fonts()
    font = pdfmetrics.getFont(FONT)
    assert isinstance(font, TTFont)  # registered by register_fonts()
    face = font.face
    seen: list[str] = []
    for ch in text:
        if ord(ch) >= 32 and ord(ch) not in face.charToGlyph and ch not in seen:
            seen.append(ch)
    return "".join(seen)


def page_size(config: Config, *, wide: bool = False) -> tuple[float, float]:
    base = A4 if config.report.paper == "A4" else letter
    return landscape(base) if wide else base


@dataclass(frozen=True)
class Theme:
    """Paragraph styles and colours for one configuration."""

    accent: colors.Color
    accent_hex: str
    styles: dict[str, ParagraphStyle]

    def __getitem__(self, name: str) -> ParagraphStyle:
        return self.styles[name]


def _styles(accent: colors.Color) -> dict[str, ParagraphStyle]:
    ink = colors.HexColor(INK)
    muted = colors.HexColor(MUTED)
    base = ParagraphStyle(
        "body",
        fontName=FONT,
        fontSize=SIZE_BODY,
        leading=SIZE_BODY * 1.38,
        textColor=ink,
        spaceAfter=3,
        alignment=TA_LEFT,
        bulletFontName=FONT,
        allowWidows=0,
        allowOrphans=0,
    )

    def derive(name: str, **kw: Any) -> ParagraphStyle:
        return ParagraphStyle(name, parent=base, **kw)

    return {
        "body": base,
        "lead": derive("lead", fontSize=SIZE_LEAD, leading=SIZE_LEAD * 1.35, spaceAfter=5),
        "small": derive("small", fontSize=SIZE_SMALL, leading=SIZE_SMALL * 1.3, textColor=muted),
        "legend": derive(
            "legend",
            fontSize=SIZE_SMALL,
            leading=SIZE_SMALL * 1.3,
            textColor=ink,
            spaceAfter=1,
            leftIndent=CHART_AXES_LEFT,
        ),
        "fine": derive("fine", fontSize=6.2, leading=6.2 * 1.28, textColor=muted, spaceAfter=1),
        "caption": derive(
            "caption",
            fontSize=SIZE_SMALL,
            leading=SIZE_SMALL * 1.35,
            textColor=muted,
            spaceBefore=1,
            spaceAfter=6,
        ),
        "bullet": derive(
            "bullet", leftIndent=12, bulletIndent=1.5, bulletFontSize=SIZE_BODY, spaceAfter=2
        ),
        "title": derive(
            "title",
            fontName=FONT_BOLD,
            fontSize=SIZE_TITLE,
            leading=SIZE_TITLE * 1.15,
            textColor=ink,
            spaceAfter=2,
        ),
        "subtitle": derive(
            "subtitle", fontSize=SIZE_LEAD, leading=SIZE_LEAD * 1.3, textColor=muted
        ),
        "h1": derive(
            "h1",
            fontName=FONT_BOLD,
            fontSize=SIZE_H1,
            leading=SIZE_H1 * 1.2,
            textColor=accent,
            spaceBefore=4,
            spaceAfter=6,
            keepWithNext=1,
        ),
        "h2": derive(
            "h2",
            fontName=FONT_BOLD,
            fontSize=SIZE_H2,
            leading=SIZE_H2 * 1.25,
            textColor=ink,
            spaceBefore=7,
            spaceAfter=3,
            keepWithNext=1,
        ),
        "label": derive(
            "label", fontSize=SIZE_SMALL, leading=SIZE_SMALL * 1.25, textColor=muted, spaceAfter=0
        ),
        "figure": derive(
            "figure",
            fontName=FONT_BOLD,
            fontSize=SIZE_FIGURE,
            leading=SIZE_FIGURE * 1.15,
            textColor=accent,
            spaceAfter=0,
        ),
        "figure_missing": derive(
            "figure_missing",
            fontName=FONT_BOLD,
            fontSize=SIZE_BODY,
            leading=SIZE_BODY * 1.25,
            textColor=muted,
            spaceAfter=0,
        ),
        "detail": derive(
            "detail", fontSize=SIZE_SMALL, leading=SIZE_SMALL * 1.3, textColor=muted, spaceAfter=0
        ),
        "cell": derive("cell", fontSize=SIZE_SMALL, leading=SIZE_SMALL * 1.25, spaceAfter=0),
        "cell_bold": derive(
            "cell_bold",
            fontName=FONT_BOLD,
            fontSize=SIZE_SMALL,
            leading=SIZE_SMALL * 1.25,
            spaceAfter=0,
        ),
        "cell_right": derive(
            "cell_right",
            fontSize=SIZE_SMALL,
            leading=SIZE_SMALL * 1.25,
            spaceAfter=0,
            alignment=TA_RIGHT,
        ),
        "cell_head": derive(
            "cell_head",
            fontName=FONT_BOLD,
            fontSize=SIZE_SMALL - 0.5,
            leading=(SIZE_SMALL - 0.5) * 1.25,
            textColor=muted,
            spaceAfter=0,
        ),
        "cell_head_r": derive(
            "cell_head_r",
            fontName=FONT_BOLD,
            fontSize=SIZE_SMALL - 0.5,
            leading=(SIZE_SMALL - 0.5) * 1.25,
            textColor=muted,
            spaceAfter=0,
            alignment=TA_RIGHT,
        ),
        "header": derive("header", fontSize=SIZE_SMALL, leading=SIZE_SMALL * 1.3, textColor=muted),
        "practice": derive(
            "practice",
            fontName=FONT_BOLD,
            fontSize=SIZE_LEAD,
            leading=SIZE_LEAD * 1.25,
            textColor=accent,
            spaceAfter=1,
        ),
    }


@cache
def theme_for(accent_hex: str) -> Theme:
    """Styles with the configured accent colour (cached per colour)."""
    register_fonts()
    accent = colors.HexColor(accent_hex)
    return Theme(accent=accent, accent_hex=accent_hex, styles=_styles(accent))
