"""A reportlab Paragraph that skips work whose result it already knows.

* Plain text (no markup, no entities) is not run through reportlab's markup parser: the
  parser would return one fragment with the style's font, size and colour, so that
  fragment is made once per style and copied with the text.  Most table cells are plain.
* Tables, ``KeepTogether`` and frames ask each paragraph for its size several times at the
  same width while placing it (about three times per paragraph in a client report), and
  every call re-runs the line breaking.  The lines only depend on the width, so a repeat
  call at the width of the previous one returns the size already computed; any other width
  breaks the lines afresh.

Either way the result is exactly what reportlab lays out (the report tests compare bytes).
"""

from __future__ import annotations

from typing import Any

from reportlab.lib.styles import ParagraphStyle
from reportlab.platypus import Flowable
from reportlab.platypus import Paragraph as _Paragraph
from reportlab.platypus.paragraph import cleanBlockQuotedText
from reportlab.platypus.paraparser import ParaParser

# id(style) -> (style, the fragment the parser makes of plain text in that style); the
# style is kept so its id cannot be reused by another style while it is cached
_PLAIN: dict[int, tuple[ParagraphStyle, Any]] = {}


def _plain_fragment(style: ParagraphStyle) -> Any:
    hit = _PLAIN.get(id(style))
    if hit is not None and hit[0] is style:
        return hit[1]
    _, frags, _ = ParaParser().parse("x", style)
    frag = frags[0] if frags is not None and len(frags) == 1 else None
    _PLAIN[id(style)] = (style, frag)
    return frag


class Paragraph(_Paragraph):
    _wrapped_at: float | None = None

    def __init__(self, text: str, style: ParagraphStyle | None = None, *args: Any, **kwargs: Any):
        if (
            not args
            and not kwargs
            and style is not None
            and isinstance(text, str)
            and "<" not in text
            and "&" not in text
            and not getattr(style, "textTransform", None)
        ):
            clean = cleanBlockQuotedText(text)
            frag = _plain_fragment(style) if clean else None
            if frag is not None:
                super().__init__(clean, style, frags=[frag.clone(text=clean)])
                return
        super().__init__(text, style, *args, **kwargs)

    def wrap(self, availWidth: float, availHeight: float) -> tuple[float, float]:
        if availWidth == self._wrapped_at and "blPara" in self.__dict__:
            return self.width, self.height
        size = super().wrap(availWidth, availHeight)
        # reportlab's "cannot fit" answer (no width) lays out no lines: nothing to reuse then
        fitted = size == (self.width, self.height) and self.width == availWidth
        self._wrapped_at = availWidth if fitted else None
        return size

    def split(self, availWidth: float, availHeight: float) -> list[Flowable]:
        self._wrapped_at = None  # splitting may drop or replace the lines
        return super().split(availWidth, availHeight)
