"""A reportlab Paragraph that does not break its lines again for a width it has just used.

Tables, ``KeepTogether`` and frames ask each paragraph for its size several times at the
same width while placing it (about three times per paragraph in a client report), and
every call re-runs the line breaking.  The lines only depend on the width, so a repeat
call at the width of the previous one returns the size already computed; any other width
breaks the lines afresh, so the result is exactly what reportlab would have laid out.
"""

from __future__ import annotations

from reportlab.platypus import Paragraph as _Paragraph


class Paragraph(_Paragraph):
    _wrapped_at: float | None = None

    def wrap(self, availWidth: float, availHeight: float) -> tuple[float, float]:
        if availWidth == self._wrapped_at and "blPara" in self.__dict__:
            return self.width, self.height
        size = super().wrap(availWidth, availHeight)
        # reportlab's "cannot fit" answer (no width) lays out no lines: nothing to reuse then
        fitted = size == (self.width, self.height) and self.width == availWidth
        self._wrapped_at = availWidth if fitted else None
        return size

    def split(self, availWidth: float, availHeight: float) -> list[_Paragraph]:
        self._wrapped_at = None  # splitting may drop or replace the lines
        return super().split(availWidth, availHeight)
