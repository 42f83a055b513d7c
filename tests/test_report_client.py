"""The client report, rendered from the real pipeline on the sample book.

Numbers are checked against the analysis computed in the same run, formatted here
independently of the report's own formatter.  The page-by-page text of two sample reports
is compared with golden files in ``tests/test_report_golden.py``.
"""

from __future__ import annotations

import dataclasses
import hashlib
import io
import os
import re
import subprocess
import sys
from functools import cache
from pathlib import Path

import pytest
from _report_helpers import (
    REPO,
    analyse_book,
    chars_outside,
    non_embedded_fonts,
    pdf_pages_text,
    sample_analysis,
    write_tiny_book,
)
from pypdf import PdfReader

from reportgen.config import Config, PracticeSettings, ReportSettings
from reportgen.report import render_client_report
from reportgen.report.theme import MARGIN
from reportgen.results import ClientAnalysis

GOLDEN = Path(__file__).parent / "golden"
GOLDEN_CLIENTS = ("c001", "c002")
PRACTICE = PracticeSettings(
    name="Kestrel Row Nutrition",
    address="12 Kestrel Row, Lowmoor",
    phone="+44 1632 960000",
    email="hello@kestrel-row.example",
)
CONFIG = Config(practice=PRACTICE)
MINUS = "\u2212"


@cache
def rendered(client_id: str) -> bytes:
    return render_client_report(sample_analysis(client_id), CONFIG)


def flat(text: str) -> str:
    return " ".join(text.split())


# Independent formatting of expected values (the report's own formatter is not used here).
def kg(value: float, dp: int = 1, signed: bool = False) -> str:
    text = f"{value:+.{dp}f}" if signed else f"{value:.{dp}f}"
    return text.replace("-", MINUS)


def kcal(value: float, signed: bool = False) -> str:
    rounded = round(value / 10) * 10  # the report rounds energy to 10 kcal
    text = f"{rounded:+,.0f}" if signed else f"{rounded:,.0f}"
    return text.replace("-", MINUS)


def has(text: str, value: str, unit: str = "") -> bool:
    pattern = re.escape(value) + (r"\s*" + re.escape(unit) if unit else "")
    return re.search(pattern, text) is not None


# ---- structure ------------------------------------------------------------------------------
def outline(data: bytes) -> list[list[object]]:
    reader = PdfReader(io.BytesIO(data))
    out: list[list[object]] = []

    def walk(items: list, level: int) -> None:
        for item in items:
            if isinstance(item, list):
                walk(item, level + 1)
            else:
                out.append([level, item.title, reader.get_destination_page_number(item) + 1])

    walk(reader.outline, 0)
    return out


@pytest.mark.parametrize("client_id", GOLDEN_CLIENTS)
def test_outline_names_every_section(client_id: str) -> None:
    titles = [t for _, t, _ in outline(rendered(client_id))]
    for title in ("Overview", "What happened", "How we estimate this", "Your charts"):
        assert title in titles
    assert titles[-1] == "About this service" or "Important: please read" in titles


@pytest.mark.parametrize("client_id", GOLDEN_CLIENTS)
def test_every_page_says_what_it_is(client_id: str) -> None:
    a = sample_analysis(client_id)
    pages = [flat(t) for t in pdf_pages_text(rendered(client_id))]
    total = len(pages)
    assert a.client.name in pages[0] and "November 2026" in pages[0]
    for n, text in enumerate(pages, 1):
        assert f"page {n} of {total}" in text, f"page {n} lacks its page number"
        if n > 1:
            assert a.client.name in text, f"page {n} lacks the running header"
    assert "Your charts" in pages[1]
    assert any("Phases so far" in t and "Data quality" in t for t in pages)
    assert "How we estimate this" in pages[0]
    assert "Important: please read" in pages[-1]
    assert "not medical advice" in pages[-1]
    for who in (
        "pregnant or breastfeeding",
        "under 18",
        "diabetes",
        "disordered eating",
        "BMI is under 18.5",
        "very low",
    ):
        assert who in pages[-1], f"cautions page lacks {who!r}"
    assert "Kestrel Row Nutrition" in pages[-1] and "hello@kestrel-row.example" in pages[-1]


# ---- numbers --------------------------------------------------------------------------------
def expected_headlines(a: ClientAnalysis) -> list[tuple[str, str, str]]:
    """(what, number, unit) for every headline figure the analysis can support."""
    out: list[tuple[str, str, str]] = []
    ph = a.current_phase
    if a.current_weight_kg.known:
        out.append(("trend weight", kg(a.current_weight_kg.value), "kg"))
        out.append(("trend low", kg(a.current_weight_kg.low), ""))
        out.append(("trend high", kg(a.current_weight_kg.high), "kg"))
    if a.month_change_kg.known:
        out.append(("month change", kg(a.month_change_kg.value, signed=True), "kg"))
    # page 1's rate: the progress section's recent rate while a deficit runs (unless the
    # rapid-loss flag, about the smoothed slope, is up), else the smoothed slope
    p = a.plateau
    rapid = any(f.code == "rapid-loss" for f in a.flags)
    recent = p is not None and p.recent_rate_kg_per_week.known and not rapid
    rate_kg = p.recent_rate_kg_per_week if recent and p is not None else a.weekly_rate_kg
    rate_pct = p.recent_rate_pct_per_week if recent and p is not None else a.weekly_rate_pct
    if rate_kg.known:
        out.append(("weekly rate", kg(rate_kg.value, 2, signed=True), "kg/week"))
    if rate_pct.known:
        out.append(("weekly rate %", kg(rate_pct.value, 2, signed=True), "%"))
    if a.month_mean_intake_kcal is not None:
        out.append(("intake", kcal(a.month_mean_intake_kcal), "kcal/day"))
    if ph is not None:
        for what, est, signed in (
            ("deficit", ph.realised_deficit_kcal, False),
            ("expenditure", ph.observed_tdee_kcal, False),
            ("adaptation", ph.adaptation_kcal, True),
        ):
            if est.known:
                out.append((what, kcal(est.value, signed), "kcal/day"))
    if len(a.bodycomp) >= 2:
        change = a.bodycomp[-1].bodyfat_pct - a.bodycomp[0].bodyfat_pct
        out.append(("body-fat change", kg(change, signed=True), "points"))
    return out


@pytest.mark.parametrize("client_id", GOLDEN_CLIENTS)
def test_headline_numbers_match_the_analysis(client_id: str) -> None:
    a = sample_analysis(client_id)
    page1 = flat(pdf_pages_text(rendered(client_id))[0])
    expected = expected_headlines(a)
    assert len(expected) >= 10, "the sample client should support most headline figures"
    for what, number, unit in expected:
        assert has(page1, number, unit), f"{client_id}: {what} {number} {unit} not on page 1"


@pytest.mark.parametrize("client_id", GOLDEN_CLIENTS)
def test_phase_table_matches_the_analysis(client_id: str) -> None:
    a = sample_analysis(client_id)
    pages = [flat(t) for t in pdf_pages_text(rendered(client_id))]
    text = next(t for t in pages if "Phases so far" in t)
    for p in a.phases:
        assert p.name in text
        row = text[text.index(p.name) :]
        assert has(row, str(p.days)), f"{p.name}: days {p.days}"
        if p.mean_intake_kcal is not None:
            assert has(row, kcal(p.mean_intake_kcal)), f"{p.name}: intake"
        if p.realised_deficit_kcal.known:
            assert has(row, kcal(p.realised_deficit_kcal.value)), f"{p.name}: deficit"
        if p.rate_pct_per_week.known:
            assert has(row, kg(p.rate_pct_per_week.value, 2, signed=True)), f"{p.name}: rate"


@pytest.mark.parametrize("client_id", GOLDEN_CLIENTS)
def test_data_quality_counts_match(client_id: str) -> None:
    a = sample_analysis(client_id)
    q = a.quality
    text = next(t for t in map(flat, pdf_pages_text(rendered(client_id))) if "Data quality" in t)
    assert f"weight on {q.weight_days} days" in text
    assert f"intake on {q.intake_days} days" in text
    for _day, value in q.outliers:
        assert kg(value) in text


# ---- print quality --------------------------------------------------------------------------
@pytest.mark.parametrize("client_id", GOLDEN_CLIENTS)
def test_no_text_outside_the_text_column(client_id: str) -> None:
    bad = chars_outside(rendered(client_id), MARGIN)
    assert not bad, "text outside the frame: " + "; ".join(bad[:8])


def test_every_font_is_embedded_and_no_standard_font_is_used() -> None:
    data = rendered("c001")
    assert non_embedded_fonts(data) == []
    assert b"/Helvetica" not in data and b"ZapfDingbats" not in data


def test_metadata_outline_and_title() -> None:
    reader = PdfReader(io.BytesIO(rendered("c001")))
    meta = reader.metadata
    assert meta.title == "Monthly progress report: Maren Holloway, November 2026"
    assert meta.author == "Kestrel Row Nutrition"
    assert meta.subject.startswith("Monthly fat-loss phase report")
    assert [t for level, t, _ in outline(rendered("c001")) if level == 0][:2] == [
        "Overview",
        "Your charts",
    ]


def test_charts_are_vector_form_xobjects_with_fixed_names() -> None:
    import pikepdf

    with pikepdf.open(io.BytesIO(rendered("c001"))) as pdf:
        names = [
            str(k)
            for page in pdf.pages
            for k, _ in (page.Resources.get("/XObject") or pikepdf.Dictionary()).items()
        ]
    assert sorted(n for n in names if n.startswith("/Chart")) == [f"/Chart{i}" for i in range(5)]


# ---- determinism ----------------------------------------------------------------------------
def test_same_inputs_give_identical_bytes_in_one_process() -> None:
    a = sample_analysis("c002")
    assert render_client_report(a, CONFIG) == rendered("c002")


def test_same_inputs_give_identical_bytes_across_processes() -> None:
    code = (
        "import hashlib, sys; sys.path.insert(0, 'tests');"
        "from _report_helpers import sample_analysis;"
        "from test_report_client import CONFIG;"
        "from reportgen.report import render_client_report;"
        "print(hashlib.sha256(render_client_report(sample_analysis('c001'), CONFIG)).hexdigest())"
    )
    env = dict(os.environ, MPLBACKEND="Agg")
    out = subprocess.run(
        [sys.executable, "-c", code], cwd=REPO, env=env, capture_output=True, text=True, check=True
    )
    assert out.stdout.strip() == hashlib.sha256(rendered("c001")).hexdigest()


# ---- odd and thin inputs --------------------------------------------------------------------
def test_a_client_with_three_days_gets_not_enough_data_pages(tmp_path: Path) -> None:
    book = write_tiny_book(tmp_path / "book", "Ann Short", days=3)
    a = analyse_book(book, "t001")
    data = render_client_report(a, CONFIG)
    pages = [flat(t) for t in pdf_pages_text(data)]
    assert 4 <= len(pages) <= 6
    assert pages[0].count("Not enough data yet") >= 4
    everything = " ".join(pages)
    assert "No skinfold sessions yet" in everything
    assert "Important: please read" in pages[-1]
    assert non_embedded_fonts(data) == []


def test_names_with_markup_characters_and_any_script_render(tmp_path: Path) -> None:
    name = "Zoë <Łukasiewicz> & Nguyễn Thị Ánh-Şükrü"
    book = write_tiny_book(tmp_path / "book", name, days=20)
    data = render_client_report(analyse_book(book, "t001"), CONFIG)
    pages = [flat(t) for t in pdf_pages_text(data)]
    assert name in pages[0]
    assert name in PdfReader(io.BytesIO(data)).metadata.title


# ---- configuration --------------------------------------------------------------------------
def test_pounds_and_kilojoules_are_converted_at_display_time() -> None:
    a = sample_analysis("c001")
    cfg = dataclasses.replace(
        CONFIG, report=ReportSettings(weight_unit="lb", energy_unit="kJ", paper="letter")
    )
    data = render_client_report(a, cfg)
    page1 = flat(pdf_pages_text(data)[0])
    # 1 lb = 0.45359237 kg exactly (international pound, 1959); 1 kcal = 4.184 kJ exactly
    # (thermochemical calorie).
    lb = a.current_weight_kg.value / 0.45359237
    assert has(page1, f"{lb:.1f}", "lb")
    kj = round(a.month_mean_intake_kcal * 4.184 / 50) * 50
    assert has(page1, f"{kj:,.0f}", "kJ/day")
    assert PdfReader(io.BytesIO(data)).pages[0].mediabox.upper_right == (612, 792)


def test_section_selection_leaves_out_sections_but_never_the_cautions() -> None:
    cfg = dataclasses.replace(
        CONFIG, report=ReportSettings(sections=("overview", "phases", "cautions"))
    )
    text = " ".join(
        flat(t) for t in pdf_pages_text(render_client_report(sample_analysis("c001"), cfg))
    )
    assert "Your charts" not in text and "How these numbers are made" not in text
    assert "Phases so far" in text and "Important: please read" in text


def test_a_templates_folder_overrides_the_shipped_wording(tmp_path: Path) -> None:
    from reportgen.resources import templates_dir

    folder = tmp_path / "templates" / "report"
    folder.mkdir(parents=True)
    shipped = (templates_dir() / "report" / "client.j2").read_text(encoding="utf-8")
    changed = shipped.replace(
        '"document": "Monthly progress report"', '"document": "Bericht für den Monat"'
    )
    assert changed != shipped
    (folder / "client.j2").write_text(changed, encoding="utf-8")
    cfg = dataclasses.replace(
        CONFIG, report=ReportSettings(templates_dir=str(tmp_path / "templates"))
    )
    page1 = flat(pdf_pages_text(render_client_report(sample_analysis("c001"), cfg))[0])
    assert "Bericht für den Monat" in page1


def test_png_and_svg_logos_are_placed_in_the_header(tmp_path: Path) -> None:
    from PIL import Image

    png = tmp_path / "logo.png"
    Image.new("RGB", (300, 100), (31, 90, 122)).save(png)
    svg = tmp_path / "logo.svg"
    svg.write_text(
        '<svg xmlns="http://www.w3.org/2000/svg" width="120" height="40">'
        '<rect width="120" height="40" fill="#1F5A7A"/><text x="8" y="26">KR</text></svg>',
        encoding="utf-8",
    )
    for logo in (png, svg):
        cfg = dataclasses.replace(CONFIG, practice=dataclasses.replace(PRACTICE, logo=str(logo)))
        data = render_client_report(sample_analysis("c001"), cfg)
        assert non_embedded_fonts(data) == [], logo.suffix
        if logo is png:
            import pikepdf

            with pikepdf.open(io.BytesIO(data)) as pdf:
                xo = pdf.pages[0].Resources.XObject
                assert any(v.Subtype == "/Image" for _, v in xo.items())


def test_characters_the_font_lacks_are_reported_not_dropped_silently(tmp_path: Path) -> None:
    # DejaVu Sans has no CJK glyphs (engineering notes, font table); reportlab would print blanks.
    book = write_tiny_book(tmp_path / "book", "王秀英 Wang", days=20)
    data = render_client_report(analyse_book(book, "t001"), CONFIG)
    text = " ".join(flat(t) for t in pdf_pages_text(data))
    assert "are not in the report's font and may print as blanks" in text


@pytest.mark.parametrize(
    ("birth_date", "pregnant", "flag"),
    [("2010-03-03", False, "Client is under 18"), ("1990-05-05", True, "Pregnancy recorded")],
)
def test_special_handling_shows_no_deficit_figures_and_an_urgent_flag(
    tmp_path: Path, birth_date: str, pregnant: bool, flag: str
) -> None:
    book = write_tiny_book(
        tmp_path / "b", "Sam Young", 40, birth_date=birth_date, pregnant=pregnant
    )
    a = analyse_book(book, "t001")
    assert a.special_handling, "the analysis should mark this client for special handling"
    pages = [flat(t) for t in pdf_pages_text(render_client_report(a, CONFIG))]
    assert "no deficit, expenditure or projection figures are worked out" in pages[0]
    assert "No projection is made for this client" in " ".join(pages)
    assert f"Act now: {flag}." in pages[-1]


def test_chart_text_outside_latin_falls_back_to_the_wide_font() -> None:
    import pikepdf

    from reportgen.report.charts import weight_chart
    from reportgen.report.client import chart_context
    from reportgen.report.wording import Wording

    a = sample_analysis("c001")
    greek = dataclasses.replace(a.phases[-1], name="Φάση δύο")
    a = dataclasses.replace(a, phases=(*a.phases[:-1], greek))
    labels = Wording(CONFIG, "report/client.j2").labels["chart"]
    chart = weight_chart(a, chart_context(a, CONFIG, 174, labels))
    assert chart is not None
    with pikepdf.open(io.BytesIO(chart)) as pdf:
        fonts = sorted(str(f.BaseFont)[8:] for _, f in pdf.pages[0].Resources.Font.items())
    assert fonts == ["ReportgenChartLatin", "ReportgenChartSans"]


def test_the_chart_fonts_are_made_byte_identically_wherever_they_are_made(tmp_path: Path) -> None:
    import time

    from reportgen.report.charts import CHART_FONT_LATIN, CHART_FONT_LATIN_RANGES, _chart_font_file

    first = _chart_font_file(CHART_FONT_LATIN, CHART_FONT_LATIN_RANGES, tmp_path / "a")
    time.sleep(1.1)  # a save-time timestamp would show up as a difference
    second = _chart_font_file(CHART_FONT_LATIN, CHART_FONT_LATIN_RANGES, tmp_path / "b")
    assert first.read_bytes() == second.read_bytes()


def test_rating_changes_are_put_in_words_as_printed() -> None:
    """Hunger and energy changes in words: under a point "about the same", two points or
    more "clearly" (common practice, no single source), judged on the one-decimal value
    the report prints beside the words."""
    from reportgen.report.plateau_view import rating_words

    assert rating_words(0.94) == "about the same as"
    assert rating_words(-0.9) == "about the same as"
    assert rating_words(0.96) == "a little higher than"  # printed +1.0
    assert rating_words(1.5) == "a little higher than"
    assert rating_words(-1.96) == "clearly lower than"  # printed −2.0
    assert rating_words(3.0) == "clearly higher than"


def test_phase_table_names_kinds_in_words(tmp_path: Path) -> None:
    """The phase table says "diet break" and, for a book without phases, "no phases
    recorded" under the window's name, never the analysis' codes "break" or "month"."""
    pages = pdf_pages_text(rendered("c008"))
    table = flat(next(p for p in pages if "Phases so far" in p))
    assert "Diet break 28 Sep 2026" in table  # the name says its kind: not repeated
    assert "diet break diet break" not in table.lower()
    book = write_tiny_book(tmp_path / "book", "Nell Ashby", days=40)
    (book / "phases.csv").unlink()
    pages = pdf_pages_text(render_client_report(analyse_book(book, "t001"), CONFIG))
    table = flat(next(p for p in pages if "Phases so far" in p))
    assert "Report month no phases recorded 01 Nov 2026" in table
    assert "Report month month" not in table


def test_eating_above_expenditure_is_said_as_above_not_a_negative_below() -> None:
    """c006 holds steady in maintenance with a realised deficit of about -50 kcal/day."""
    ph = sample_analysis("c006").current_phase
    assert ph is not None and ph.realised_deficit_kcal.value < 0
    text = flat(pdf_pages_text(rendered("c006"))[0])
    size = kcal(abs(ph.realised_deficit_kcal.value))
    assert f"about {size} kcal/day above what you burned" in text
    assert "below what you burned" not in text


def test_special_handling_cards_do_not_say_not_estimated_twice(tmp_path: Path) -> None:
    book = write_tiny_book(tmp_path / "book", "Petra Quill", days=40, pregnant=True)
    page1 = flat(pdf_pages_text(render_client_report(analyse_book(book, "t001"), CONFIG))[0])
    assert "Not estimated trend weight only: this client needs medical supervision" in page1
    assert "Not estimated not estimated" not in page1


def test_a_minor_is_not_sent_to_a_midwife(tmp_path: Path) -> None:
    book = write_tiny_book(tmp_path / "book", "Milo Young", days=40, birth_date="2010-03-01")
    page1 = flat(pdf_pages_text(render_client_report(analyse_book(book, "t001"), CONFIG))[0])
    assert "Because you are under 18" in page1 and "these need the care of a doctor." in page1
    assert "midwife" not in page1


def test_activity_baseline_without_a_deficit_phase_is_the_first_two_weeks(tmp_path: Path) -> None:
    """No phases: the signals' baseline is the first 14 logged days (science.signals), not
    "before the first deficit"; c001 has a baseline phase before its deficit."""
    book = write_tiny_book(tmp_path / "book", "Nell Ashby", days=60)
    (book / "phases.csv").unlink()
    text = flat(" ".join(pdf_pages_text(render_client_report(analyse_book(book, "t001"), CONFIG))))
    assert "the dashed line marks your level in your first two weeks of logs" in text
    assert "before the first deficit" not in text
    assert "marks your level before the first deficit" in flat(
        " ".join(pdf_pages_text(rendered("c001")))
    )
