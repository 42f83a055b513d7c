"""Report test helpers: reading PDFs back, and a hand-built analysis for layout-only checks.

``built_analysis`` makes a ``ClientAnalysis`` from the shared dataclasses with invented
numbers.  It exercises layout paths (every chart, missing data, odd names) quickly; the
golden tests run the real pipeline on the sample book instead.
"""

from __future__ import annotations

import datetime as dt
import io
from dataclasses import replace
from functools import cache
from pathlib import Path

import numpy as np

from reportgen.io.model import Client, DailyLog, Problem
from reportgen.results import (
    BodyCompResult,
    ClientAnalysis,
    DataQuality,
    Estimate,
    ExpenditureSeries,
    Flag,
    MethodUsed,
    PhaseResult,
    Projection,
    Signal,
    TrendSeries,
)


def pdf_pages_text(data: bytes) -> list[str]:
    from pypdf import PdfReader

    return [p.extract_text() or "" for p in PdfReader(io.BytesIO(data)).pages]


def _dates(start: dt.date, n: int) -> np.ndarray:
    return np.arange(np.datetime64(start, "D"), np.datetime64(start, "D") + n)


def built_analysis(name: str = "Zoë Łukasiewicz-Øster", *, days: int = 122) -> ClientAnalysis:
    """An invented client with about four months of daily data (layout checks only)."""
    rng = np.random.default_rng(7)
    start = dt.date(2026, 8, 1)
    as_of = dt.date(2026, 11, 30)
    n = min(days, (as_of - start).days + 1)
    first = as_of - dt.timedelta(days=n - 1)
    dates = _dates(first, n)
    t = np.arange(n)
    true = 84.0 - 0.055 * np.clip(t - 20, 0, None)
    w = true + rng.normal(0, 0.45, n)
    w[rng.random(n) < 0.12] = np.nan
    out = np.zeros(n, bool)
    if n > 40:
        out[40] = True
        w[40] = true[40] + 3.2
    intake = np.where(t < 20, 2500, 1950) + rng.normal(0, 180, n)
    intake[rng.random(n) < 0.1] = np.nan
    steps = 8000 + 1500 * np.sin(t / 9) - 10 * t + rng.normal(0, 1200, n)
    hunger = np.clip(np.round(2.5 + t / 80 + rng.normal(0, 0.7, n)), 1, 5)
    energy = np.clip(np.round(3.6 - t / 120 + rng.normal(0, 0.7, n)), 1, 5)
    log = DailyLog(dates, w, out, intake, steps, hunger, energy, np.full(n, 7.0))
    level = true + 0.05
    trend = TrendSeries(
        "local-linear-trend",
        dates,
        level,
        level - 0.35,
        level + 0.35,
        np.full(n, -0.055),
        np.full(n, 0.01),
        0.45,
    )
    tdee = 2520 - 2.0 * np.clip(t - 20, 0, None)
    exp = ExpenditureSeries(dates, tdee, tdee - 120, tdee + 120)
    ph1 = PhaseResult(
        "Baseline",
        "maintenance",
        first,
        first + dt.timedelta(days=19),
        first + dt.timedelta(days=19),
        20,
        17,
        18,
        84.0,
        83.9,
        -0.1,
        Estimate(-0.03, -0.2, 0.15),
        Estimate(-0.04, -0.24, 0.18),
        2505.0,
        None,
        Estimate(10.0, -120.0, 140.0),
        Estimate(2515.0, 2390.0, 2640.0),
        Estimate(2500.0, 2400.0, 2600.0),
        "resting-equation",
        Estimate(15.0, -140, 170),
        Estimate(0.6, -5.6, 6.8),
        0.4,
        None,
        None,
        None,
        None,
        None,
        "ok",
    )
    ph2 = PhaseResult(
        "Autumn cut",
        "deficit",
        first + dt.timedelta(days=20),
        None,
        as_of,
        n - 20,
        90,
        92,
        83.9,
        78.3,
        -5.6,
        Estimate(-0.39, -0.47, -0.31),
        Estimate(-0.49, -0.58, -0.39),
        1960.0,
        1950.0,
        Estimate(430.0, 330.0, 530.0),
        Estimate(2390.0, 2290.0, 2490.0),
        Estimate(2470.0, 2380.0, 2560.0),
        "own-baseline",
        Estimate(-80.0, -190.0, 30.0),
        Estimate(-3.2, -7.5, 1.2),
        17.9,
        n - 20,
        24.6,
        22.9,
        -1.9,
        -0.9,
        "running",
    )
    sessions = tuple(
        BodyCompResult(
            as_of - dt.timedelta(days=d),
            "jackson-pollock-3",
            "siri",
            s,
            ("chest", "abdominal", "thigh"),
            1.05,
            bf,
            3.4,
            wt,
            wt * bf / 100,
            wt * (1 - bf / 100),
        )
        for d, s, bf, wt in ((100, 78.0, 24.6, 84.0), (58, 72.0, 23.7, 81.4), (2, 66.0, 22.9, 78.3))
    )
    pdates = _dates(as_of + dt.timedelta(days=1), 56)
    pw = 78.3 - 0.05 * np.arange(1, 57)
    proj = Projection(
        as_of,
        1960.0,
        pdates,
        pw,
        pw - 0.02 * np.arange(1, 57) - 0.3,
        pw + 0.02 * np.arange(1, 57) + 0.3,
        75.0,
        as_of + dt.timedelta(days=66),
        {0.5: Estimate(1900.0, 1800.0, 2000.0)},
    )
    client = Client(
        "c900", name, "female", dt.date(1988, 4, 2), 168.0, "z@example.org", goal_weight_kg=75.0
    )
    return ClientAnalysis(
        client=client,
        month="2026-11",
        as_of=as_of,
        age_years=38,
        minor=False,
        special_handling=(),
        log=log,
        trend=trend,
        ema=None,
        current_weight_kg=Estimate(78.3, 77.95, 78.65),
        month_change_kg=Estimate(-1.6, -2.1, -1.1),
        weekly_rate_kg=Estimate(-0.39, -0.47, -0.31),
        weekly_rate_pct=Estimate(-0.49, -0.6, -0.4),
        month_mean_intake_kcal=1955.0,
        bmi=27.7,
        bodycomp=sessions,
        bodyfat_fallback=None,
        resting_kcal={"mifflin-st-jeor": 1480.0},
        phases=(ph1, ph2),
        current_phase=ph2,
        week_of_phase=15,
        expenditure=exp,
        signals=(
            Signal("steps", 8400.0, 7300.0, -1100.0, -13.0, -150.0, "down", "moderate", 110),
            Signal("hunger", 2.6, 3.4, 0.8, 30.0, 0.1, "up", "moderate", 110),
            Signal("energy", 3.6, 3.2, -0.4, -11.0, -0.05, "down", "small", 110),
        ),
        projection=proj,
        flags=(Flag("rapid-loss", "caution", {"rate_pct_per_week": 1.1}),),
        methods=(
            MethodUsed(
                "jackson-pollock-3",
                "Jackson, Pollock & Ward 1980, 3-site (women)",
                "Jackson AS, Pollock ML, Ward A. Med Sci Sports Exerc 1980;12:175-81.",
                "0.0086 g/ml",
            ),
            MethodUsed("siri", "Siri 1961", "Siri WE. 1961.", None),
        ),
        quality=DataQuality(
            n,
            int(np.isfinite(w).sum()),
            int(np.isfinite(intake).sum()),
            ((dt.date.fromisoformat(str(dates[40])), float(w[40])),) if n > 40 else (),
            ((dt.date(2026, 9, 3), dt.date(2026, 9, 11)),),
            (
                Problem(
                    "warning",
                    "future-date",
                    "a row dated after today was ignored",
                    "logs/c900.csv",
                    88,
                    "date",
                    "2026-12-05",
                    "c900",
                ),
            ),
        ),
    )


def sparse_analysis(name: str = "Ann & <Bo>") -> ClientAnalysis:
    """A client with three days of data: nearly everything is 'not enough data yet'."""
    a = built_analysis(name, days=3)
    miss = Estimate.missing("too-few-days")
    return replace(
        a,
        trend=None,
        expenditure=None,
        projection=None,
        bodycomp=(),
        signals=(),
        current_weight_kg=miss,
        month_change_kg=miss,
        weekly_rate_kg=miss,
        weekly_rate_pct=miss,
        phases=(),
        current_phase=None,
        week_of_phase=None,
        flags=(),
        methods=(),
    )


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
