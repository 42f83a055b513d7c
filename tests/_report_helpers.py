"""Report test helpers: the real pipeline on the sample book or on a tiny book written here,
and PDF checks (text per page, fonts embedded, characters inside the text column)."""

from __future__ import annotations

import datetime as dt
import io
from functools import cache
from pathlib import Path

from reportgen.results import ClientAnalysis


def pdf_pages_text(data: bytes) -> list[str]:
    from pypdf import PdfReader

    return [p.extract_text() or "" for p in PdfReader(io.BytesIO(data)).pages]


REPO = Path(__file__).resolve().parent.parent
SAMPLE_BOOK = REPO / "sample_inputs"
SAMPLE_MONTH = "2026-11"
SAMPLE_TODAY = dt.date(2026, 12, 1)


def analyse_book(book: Path, client_id: str, month: str = SAMPLE_MONTH) -> ClientAnalysis:
    """The real pipeline on a book: read the roster and one client, then analyse."""
    from reportgen.analysis import analyse_client
    from reportgen.config import AnalysisSettings
    from reportgen.io.book import read_client, read_roster

    roster = read_roster(book)
    client = next(c for c in roster.clients if c.client_id == client_id)
    year, mon = (int(p) for p in month.split("-"))
    month_end = dt.date(year + (mon == 12), mon % 12 + 1, 1) - dt.timedelta(days=1)
    record = read_client(
        book,
        client,
        roster.phases.get(client_id, ()),
        month_end,
        today=SAMPLE_TODAY,
        roster_problems=tuple(p for p in roster.problems if p.client_id == client_id),
    )
    assert record.ok, record.errors
    return analyse_client(record, month, AnalysisSettings())


@cache
def sample_analysis(client_id: str, month: str = SAMPLE_MONTH) -> ClientAnalysis:
    """The real pipeline on the shipped sample book (read only)."""
    return analyse_book(SAMPLE_BOOK, client_id, month)


def write_tiny_book(
    folder: Path,
    name: str,
    days: int,
    client_id: str = "t001",
    *,
    birth_date: str = "1990-05-05",
    pregnant: bool = False,
) -> Path:
    """A book with one client and only ``days`` logged days at the end of November 2026."""
    folder.mkdir(parents=True, exist_ok=True)
    (folder / "logs").mkdir(exist_ok=True)
    header = "client_id,name,sex,birth_date,height_cm,email,pregnant,goal_weight_kg\n"
    preg = "yes" if pregnant else "no"
    row = f'{client_id},"{name}",female,{birth_date},165,t@example.org,{preg},\n'
    (folder / "clients.csv").write_text(header + row, encoding="utf-8")
    (folder / "phases.csv").write_text(
        "client_id,name,start,end,kind,target_kcal\n"
        f"{client_id},First weeks,{dt.date(2026, 11, 30) - dt.timedelta(days=days - 1)},,"
        "deficit,1700\n",
        encoding="utf-8",
    )
    lines = ["date,weight_kg,intake_kcal,steps,hunger,energy,sleep_h"]
    for i in range(days):
        day = dt.date(2026, 11, 30) - dt.timedelta(days=days - 1 - i)
        lines.append(f"{day.isoformat()},{70.0 - 0.1 * i:.1f},1750,8000,4,6,7.0")
    (folder / "logs" / f"{client_id}.csv").write_text("\n".join(lines) + "\n", encoding="utf-8")
    return folder


def non_embedded_fonts(data: bytes) -> list[str]:
    """Names of fonts used anywhere (pages and form XObjects) that are not embedded."""
    import pikepdf

    missing: list[str] = []
    seen: set[tuple[int, int]] = set()

    def walk(resources: pikepdf.Object) -> None:
        fonts = resources.get("/Font")
        if fonts is not None:
            for _, font in fonts.items():
                if font.objgen in seen:
                    continue
                seen.add(font.objgen)
                target = font
                if font.get("/Subtype") == "/Type0":
                    target = font.DescendantFonts[0]
                if font.get("/Subtype") == "/Type3":
                    continue
                desc = target.get("/FontDescriptor")
                if desc is None or not any(
                    k in desc for k in ("/FontFile", "/FontFile2", "/FontFile3")
                ):
                    missing.append(str(font.get("/BaseFont")))
        xobjects = resources.get("/XObject")
        if xobjects is not None:
            for _, xo in xobjects.items():
                if xo.get("/Subtype") == "/Form" and "/Resources" in xo:
                    walk(xo.Resources)

    with pikepdf.open(io.BytesIO(data)) as pdf:
        for page in pdf.pages:
            walk(page.Resources)
    return missing


def chars_outside(data: bytes, margin_pt: float, tolerance_pt: float = 0.5) -> list[str]:
    """Characters that run outside the text column (left/right margins) or off the page."""
    import pdfplumber

    bad: list[str] = []
    with pdfplumber.open(io.BytesIO(data)) as pdf:
        for n, page in enumerate(pdf.pages, 1):
            lo, hi = margin_pt - tolerance_pt, page.width - margin_pt + tolerance_pt
            for ch in page.chars:
                if ch["text"].isspace():
                    continue
                if ch["x0"] < lo or ch["x1"] > hi or ch["top"] < 0 or ch["bottom"] > page.height:
                    bad.append(f"page {n}: {ch['text']!r} at x {ch['x0']:.1f}-{ch['x1']:.1f}")
    return bad
