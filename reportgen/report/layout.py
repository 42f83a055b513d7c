"""Shared layout pieces: the practice header with its logo, figure cards, tables, chart blocks."""

from __future__ import annotations

from collections.abc import Sequence
from functools import cache
from pathlib import Path
from typing import Any

from reportlab.graphics.shapes import Drawing
from reportlab.lib import colors
from reportlab.lib.units import mm
from reportlab.platypus import (
    CondPageBreak,
    Flowable,
    Image,
    KeepTogether,
    Spacer,
    Table,
    TableStyle,
)

from reportgen.config import Config

from . import theme as T
from .para import Paragraph
from .pdfbuild import ChartBox, ChartSlot, mark_heading
from .theme import Theme
from .wording import blocks, esc, keep_units

LOGO_MAX_H = 16 * mm
LOGO_MAX_W = 48 * mm


class LogoError(ValueError):
    """The configured logo cannot be used (the message names the file)."""


@cache
def _svg_drawing(path: str, mtime: float) -> Drawing:
    try:
        from svglib.svglib import svg2rlg
    except ImportError as exc:  # pragma: no cover - svglib is a declared dependency
        raise LogoError(f"{path}: SVG logos need the svglib package") from exc
    drawing = svg2rlg(path)
    if drawing is None:
        raise LogoError(f"{path}: not a readable SVG file")
    _embed_text_font(drawing)
    return drawing


def _embed_text_font(node: object) -> None:
    """Text in an SVG logo is set in DejaVu: svglib maps SVG fonts to non-embedded Helvetica."""
    from reportlab.graphics.shapes import String

    if isinstance(node, String):
        bold = "bold" in str(getattr(node, "fontName", "")).lower()
        node.fontName = T.FONT_BOLD if bold else T.FONT
    for child in getattr(node, "contents", ()):
        _embed_text_font(child)


def logo_flowable(config: Config) -> Flowable | None:
    """The practice logo scaled into the header box, or None when none is configured."""
    path = config.resolve_path(config.practice.logo)
    if path is None:
        return None
    if not path.is_file():
        raise LogoError(f"{path}: logo file not found")
    from reportgen.io.guard import MAX_LOGO_BYTES

    if path.stat().st_size > MAX_LOGO_BYTES:
        raise LogoError(f"{path}: the logo is larger than {MAX_LOGO_BYTES / 1e6:.0f} MB")
    if path.suffix.lower() == ".svg":
        import copy

        d = copy.deepcopy(_svg_drawing(str(path), path.stat().st_mtime))
        w, h = float(d.width), float(d.height)
        scale = min(LOGO_MAX_W / w, LOGO_MAX_H / h)
        d.width, d.height = w * scale, h * scale
        d.scale(scale, scale)
        return _SvgLogo(d)
    img = _png(str(path))
    iw, ih = img.imageWidth, img.imageHeight
    scale = min(LOGO_MAX_W / iw, LOGO_MAX_H / ih)
    return Image(str(path), width=iw * scale, height=ih * scale, hAlign="RIGHT")


class _SvgLogo(Flowable):
    """An SVG drawing drawn with DejaVu as the initial font.

    reportlab's drawing renderer starts every drawing by selecting its default font
    (Helvetica, never embedded) even when the drawing has no text; the default is swapped
    for the duration of the draw so no standard font is referenced.
    """

    def __init__(self, drawing: Drawing) -> None:
        super().__init__()
        self.drawing = drawing
        self.hAlign = "RIGHT"

    def wrap(self, availWidth: float, availHeight: float) -> tuple[float, float]:
        return self.drawing.wrap(availWidth, availHeight)

    def draw(self) -> None:
        from reportlab.graphics import shapes

        saved = shapes.STATE_DEFAULTS["fontName"]
        shapes.STATE_DEFAULTS["fontName"] = T.FONT
        try:
            self.drawing.drawOn(self.canv, 0, 0)
        finally:
            shapes.STATE_DEFAULTS["fontName"] = saved


@cache
def _png(path: str) -> Image:
    try:
        return Image(path)
    except Exception as exc:
        raise LogoError(f"{Path(path)}: not a readable PNG image ({exc})") from exc


def practice_header(config: Config, theme: Theme, width: float) -> list[Flowable]:
    """Practice name and contact on the left, logo on the right, an accent rule below."""
    p = config.practice
    left: list[Flowable] = []
    if p.name:
        left.append(Paragraph(esc(p.name), theme["practice"]))
    lines = [x for x in (p.address,) if x] + [
        " · ".join(x for x in (p.phone, p.email, p.website) if x)
    ]
    for line in lines:
        if line:
            left.append(Paragraph(esc(line), theme["header"]))
    logo = logo_flowable(config)
    if not left and logo is None:
        return [Rule(width, theme.accent, 1.2), Spacer(1, 5 * mm)]
    t = Table(
        [[left or "", logo or ""]],
        colWidths=[width - LOGO_MAX_W - 4 * mm, LOGO_MAX_W + 4 * mm],
        hAlign="LEFT",
        style=TableStyle(
            [
                ("FONTNAME", (0, 0), (-1, -1), T.FONT),
                ("VALIGN", (0, 0), (-1, -1), "BOTTOM"),
                ("ALIGN", (1, 0), (1, 0), "RIGHT"),
                ("LEFTPADDING", (0, 0), (-1, -1), 0),
                ("RIGHTPADDING", (0, 0), (-1, -1), 0),
                ("BOTTOMPADDING", (0, 0), (-1, -1), 3),
                ("TOPPADDING", (0, 0), (-1, -1), 0),
            ]
        ),
    )
    return [t, Rule(width, theme.accent, 1.2), Spacer(1, 5 * mm)]


class Rule(Flowable):
    def __init__(self, width: float, colour: colors.Color, thickness: float = 0.5) -> None:
        super().__init__()
        self.width, self.colour, self.thickness = width, colour, thickness
        self.height = thickness

    def wrap(self, availWidth: float, availHeight: float) -> tuple[float, float]:
        return self.width, self.thickness

    def draw(self) -> None:
        self.canv.setStrokeColor(self.colour)
        self.canv.setLineWidth(self.thickness)
        self.canv.line(0, 0, self.width, 0)


def cards(
    items: Sequence[tuple[str, str, bool, str]], theme: Theme, width: float, columns: int = 4
) -> Table:
    """Headline figure cards: (label, value, known, note markup) in a grid."""
    gap = 2.5 * mm
    col_w = (width - gap * (columns - 1)) / columns
    cells: list[list[object]] = []
    row: list[object] = []
    for label, value, known, note in items:
        body = [
            Paragraph(esc(label), theme["label"]),
            Spacer(1, 1.2 * mm),
            Paragraph(
                _split_unit(value) if known else value,
                theme["figure" if known else "figure_missing"],
            ),
            Spacer(1, 1.0 * mm),
            Paragraph(keep_units(note), theme["detail"]),
        ]
        row.append(body)
        if len(row) == columns:
            cells.append(row)
            row = []
    if row:
        row += [""] * (columns - len(row))
        cells.append(row)
    # gaps are empty spacer columns so each card gets its own background
    data = [[c for pair in zip(r, [""] * columns, strict=True) for c in pair][:-1] for r in cells]
    widths = [w for _ in range(columns) for w in (col_w, gap)][:-1]
    style: list[tuple[Any, ...]] = [
        ("FONTNAME", (0, 0), (-1, -1), T.FONT),
        ("VALIGN", (0, 0), (-1, -1), "TOP"),
        ("LEFTPADDING", (0, 0), (-1, -1), 2.8 * mm),
        ("RIGHTPADDING", (0, 0), (-1, -1), 2.2 * mm),
        ("TOPPADDING", (0, 0), (-1, -1), 2.2 * mm),
        ("BOTTOMPADDING", (0, 0), (-1, -1), 2.6 * mm),
    ]
    for r in range(len(data)):
        for c in range(0, 2 * columns - 1, 2):
            style.append(("BACKGROUND", (c, r), (c, r), colors.HexColor(T.PANEL)))
            style.append(("LINEABOVE", (c, r), (c, r), 1.2, theme.accent))
        for c in range(1, 2 * columns - 1, 2):
            style.append(("LEFTPADDING", (c, r), (c, r), 0))
            style.append(("RIGHTPADDING", (c, r), (c, r), 0))
    t = Table(
        data, colWidths=widths, style=TableStyle(style), spaceBefore=0, spaceAfter=0, hAlign="LEFT"
    )
    # rows separated by a gap: add space between rows via row heights is not possible with
    # auto heights, so split into one table per row
    return t


def _split_unit(value: str) -> str:
    """'1,960 kcal/day' -> the number at figure size, the unit smaller on the same line."""
    number, _, unit = value.partition(" ")
    if not unit:
        return number
    return f'{number}<font size="{T.SIZE_BODY}"> {unit}</font>'


def card_grid(
    items: Sequence[tuple[str, str, bool, str]], theme: Theme, width: float, columns: int = 4
) -> list[Flowable]:
    out: list[Flowable] = []
    for i in range(0, len(items), columns):
        out.append(cards(items[i : i + columns], theme, width, columns))
        out.append(Spacer(1, 2.5 * mm))
    return out


def data_table(
    header: Sequence[str],
    rows: Sequence[Sequence[str]],
    widths: Sequence[float],
    theme: Theme,
    *,
    right_from: int = 1,
    right_to: int | None = None,
    bold_first: bool = False,
    repeat: int = 1,
    dense: bool = False,
) -> Table:
    """A striped table of Paragraph cells; ``header`` is markup, rows are already escaped.

    Columns ``right_from`` up to (not including) ``right_to`` are right-aligned (numbers).
    """
    stop = len(header) if right_to is None else right_to

    def is_right(i: int) -> bool:
        return right_from <= i < stop

    head = [
        Paragraph(h, theme["cell_head_r" if is_right(i) else "cell_head"])
        for i, h in enumerate(header)
    ]
    body = []
    for row in rows:
        cells = []
        for i, value in enumerate(row):
            cell_style = (
                "cell_right" if is_right(i) else ("cell_bold" if bold_first and i == 0 else "cell")
            )
            cells.append(Paragraph(value, theme[cell_style]))
        body.append(cells)
    style: list[tuple[Any, ...]] = [
        ("FONTNAME", (0, 0), (-1, -1), T.FONT),
        ("VALIGN", (0, 0), (-1, -1), "TOP"),
        ("LEFTPADDING", (0, 0), (-1, -1), 2.0),
        ("RIGHTPADDING", (0, 0), (-1, -1), 2.0),
        ("TOPPADDING", (0, 0), (-1, -1), 0.6 if dense else 2.2),
        ("BOTTOMPADDING", (0, 0), (-1, -1), 1.0 if dense else 2.6),
        ("LINEBELOW", (0, 0), (-1, 0), 0.8, theme.accent),
        ("VALIGN", (0, 0), (-1, 0), "BOTTOM"),
    ]
    for r in range(1, len(body) + 1):
        if r % 2 == 0:
            style.append(("BACKGROUND", (0, r), (-1, r), colors.HexColor(T.PANEL)))
    style.append(("LINEBELOW", (0, len(body)), (-1, len(body)), 0.5, colors.HexColor(T.RULE)))
    return Table(
        [head, *body],
        colWidths=list(widths),
        repeatRows=repeat,
        style=TableStyle(style),
        hAlign="LEFT",
    )


def chart_block(
    title: str,
    slot: ChartSlot | None,
    missing: str,
    caption: str,
    theme: Theme,
    legend: Sequence[tuple[str, str, str]] = (),
) -> Flowable:
    """Heading, legend line, chart box (or the one line saying what to log) and caption."""
    head = Paragraph(esc(title), theme["h2"])
    mark_heading(head, 1)
    parts: list[Flowable] = [head]
    if slot is not None:
        if legend:
            entries = [
                f'<font color="{colour}">{symbol}</font>\u00a0{esc(label)}'
                for symbol, colour, label in legend
            ]
            gap = "&nbsp;" * 5
            parts.append(Paragraph(gap.join(entries), theme["legend"]))
        parts.append(ChartBox(slot))
        parts.extend(blocks(caption, theme))
    else:
        parts.append(Paragraph(missing.strip(), theme["body"]))
        parts.append(Spacer(1, 3 * mm))
    return KeepTogether(parts)


def section_break(height: float = 60 * mm) -> Flowable:
    return CondPageBreak(height)
