"""Page assembly: reportlab platypus with invariant output, then charts placed as form XObjects.

Charts are drawn by matplotlib to small PDFs.  The layout reserves a box for each chart
(:class:`ChartBox`), records where the box landed, and afterwards pikepdf copies each
chart's page into the report as a form XObject under a fixed resource name (``/Chart0``,
``/Chart1``...), drawn by a short content stream.  Fixed names plus
``deterministic_id=True`` keep the output byte-identical from run to run; this is also the
fastest vector route measured (see docs in the engineering notes).
"""

from __future__ import annotations

import io
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import pikepdf
from reportlab.lib import colors
from reportlab.pdfgen.canvas import Canvas
from reportlab.platypus import BaseDocTemplate, Flowable, Frame, PageTemplate, Paragraph

from .theme import FONT, FONT_BOLD, MARGIN, RULE, SIZE_SMALL, Theme, register_fonts

if TYPE_CHECKING:
    from .charts import ChartPages


@dataclass
class ChartSlot:
    """Where a chart box landed: 1-based page and absolute lower-left corner in points."""

    key: str
    width: float
    height: float
    page: int = 0
    x: float = 0.0
    y: float = 0.0


class ChartBox(Flowable):
    """An empty box of fixed size that remembers where it was drawn."""

    def __init__(self, slot: ChartSlot) -> None:
        super().__init__()
        self.slot = slot
        self.width = slot.width
        self.height = slot.height

    def wrap(self, availWidth: float, availHeight: float) -> tuple[float, float]:
        return self.slot.width, self.slot.height

    def draw(self) -> None:
        x, y = self.canv.absolutePosition(0, 0)
        self.slot.page = self.canv.getPageNumber()
        self.slot.x, self.slot.y = float(x), float(y)


class _Canvas(Canvas):
    """A canvas whose initial font is DejaVu (so no Helvetica is ever referenced) and
    which defines the "total pages" form just before saving (for "page x of y")."""

    total_form = "PageTotal"
    _code: list[str]  # reportlab's page content so far (set by Canvas, not in its stubs)

    def __init__(self, *args: object, **kwargs: object) -> None:
        kwargs.setdefault("initialFontName", FONT)
        kwargs.setdefault("initialFontSize", 8)
        kwargs["invariant"] = 1
        super().__init__(*args, **kwargs)  # type: ignore[arg-type]

    def save(self) -> None:
        total = self.getPageNumber() - 1 if not self._code else self.getPageNumber()
        self.beginForm(self.total_form)
        self.setFont(FONT, SIZE_SMALL)
        self.setFillColor(colors.HexColor("#5C6770"))
        self.drawString(0, 0, str(total))
        self.endForm()
        super().save()


@dataclass
class Document:
    """A flowable story and what the pages around it need to say."""

    title: str
    author: str
    subject: str
    pagesize: tuple[float, float]
    footer_left: str = ""  # e.g. "page {n} of" is formed by page_label
    footer_right: str = ""
    header: str = ""  # running header from page 2 on (plain text, escaped by caller)
    page_label: Callable[[int], str] = field(default=lambda n: f"page {n} of")
    margin: float = MARGIN
    top_extra: float = 0.0
    bookmarks: list[tuple[str, int]] = field(default_factory=list)


class _DocTemplate(BaseDocTemplate):
    def __init__(self, buf: io.BytesIO, doc: Document, theme: Theme) -> None:
        self._doc_info = doc
        self._theme = theme
        self._bm = 0
        super().__init__(
            buf,
            pagesize=doc.pagesize,
            leftMargin=doc.margin,
            rightMargin=doc.margin,
            topMargin=doc.margin + doc.top_extra,
            bottomMargin=doc.margin,
            title=doc.title,
            author=doc.author,
            subject=doc.subject,
            creator="reportgen",
            producer="reportgen",
            invariant=1,
            pageCompression=1,
            initialFontName=FONT,
        )
        w, h = doc.pagesize
        frame = Frame(
            doc.margin,
            doc.margin,
            w - 2 * doc.margin,
            h - 2 * doc.margin - doc.top_extra,
            id="body",
            leftPadding=0,
            rightPadding=0,
            topPadding=0,
            bottomPadding=0,
        )
        self.addPageTemplates([PageTemplate(id="page", frames=[frame], onPage=self._decorate)])

    def _decorate(self, canv: Canvas, _doc: BaseDocTemplate) -> None:
        d = self._doc_info
        w, h = d.pagesize
        n = canv.getPageNumber()
        canv.saveState()
        canv.setStrokeColor(colors.HexColor(RULE))
        canv.setLineWidth(0.5)
        y = d.margin - 6 * 2.835
        canv.line(d.margin, y + 9, w - d.margin, y + 9)
        canv.setFont(FONT, SIZE_SMALL)
        canv.setFillColor(colors.HexColor("#5C6770"))
        label = d.page_label(n) + " "
        canv.drawString(d.margin, y, label)
        canv.saveState()
        canv.translate(d.margin + canv.stringWidth(label, FONT, SIZE_SMALL), y)
        canv.doForm(_Canvas.total_form)
        canv.restoreState()
        if d.footer_right:
            canv.drawRightString(w - d.margin, y, d.footer_right)
        if d.header and n > 1:
            canv.setFont(FONT_BOLD, SIZE_SMALL)
            canv.setFillColor(self._theme.accent)
            canv.drawString(d.margin, h - d.margin + 8, d.header)
            canv.setStrokeColor(colors.HexColor(RULE))
            canv.line(d.margin, h - d.margin + 4, w - d.margin, h - d.margin + 4)
        canv.restoreState()

    def afterFlowable(self, flowable: Flowable) -> None:
        level = getattr(flowable, "outline_level", None)
        if level is None or not isinstance(flowable, Paragraph):
            return
        key = f"s{self._bm}"
        self._bm += 1
        self.canv.bookmarkPage(key)
        title = getattr(flowable, "outline_title", None) or flowable.getPlainText()
        self.canv.addOutlineEntry(title, key, level=level, closed=False)


def mark_heading(para: Paragraph, level: int, title: str | None = None) -> None:
    """Make a heading paragraph appear in the PDF outline (bookmarks), optionally as ``title``."""
    para.outline_level = level  # type: ignore[attr-defined]
    para.outline_title = title  # type: ignore[attr-defined]


def build(
    story: Sequence[Flowable],
    doc: Document,
    theme: Theme,
    charts: ChartPages | None = None,
    slots: Sequence[ChartSlot] = (),
) -> bytes:
    """Lay out the story, then place each chart (a page of ``charts``) into its slot."""
    register_fonts()
    buf = io.BytesIO()
    template = _DocTemplate(buf, doc, theme)
    template.build(list(story), canvasmaker=_Canvas)
    data = buf.getvalue()
    placed = [s for s in slots if charts is not None and s.key in charts.pages and s.page > 0]
    if charts is None or not placed:
        return data
    return _embed(data, charts, placed)


def _embed(report: bytes, charts: ChartPages, slots: Sequence[ChartSlot]) -> bytes:
    """Each chart page becomes a form XObject ``/Chart<i>`` drawn into its slot.

    All charts come from one source file, so objects they share (the embedded fonts) are
    copied into the report once.
    """
    with (
        pikepdf.open(io.BytesIO(report)) as pdf,
        pikepdf.open(io.BytesIO(charts.pdf)) as src,
    ):
        for i, slot in enumerate(slots):
            source_page = src.pages[charts.pages[slot.key]]
            form = pdf.copy_foreign(source_page.as_form_xobject())
            page = pdf.pages[slot.page - 1]
            name = pikepdf.Name(f"/Chart{i}")
            page.add_resource(form, pikepdf.Name.XObject, name)
            box = source_page.mediabox
            cw, ch = float(box[2]) - float(box[0]), float(box[3]) - float(box[1])
            sx, sy = slot.width / cw, slot.height / ch
            ops = f"q {sx:.5f} 0 0 {sy:.5f} {slot.x:.3f} {slot.y:.3f} cm {name} Do Q".encode()
            page.contents_add(pikepdf.Stream(pdf, ops), prepend=False)
        out = io.BytesIO()
        pdf.save(out, deterministic_id=True, compress_streams=True)
    return out.getvalue()
