"""The one-page practitioner summary, from the real pipeline on the sample book."""

from __future__ import annotations

import io
import re
from collections import Counter
from functools import cache
from pathlib import Path

import pytest
from _report_helpers import (
    analyse_book,
    chars_outside,
    non_embedded_fonts,
    pdf_pages_text,
    sample_analysis,
    write_tiny_book,
)
from pypdf import PdfReader

from reportgen.config import Config, PracticeSettings
from reportgen.report import render_practitioner_summary
from reportgen.report.citation import short_citation

CONFIG = Config(practice=PracticeSettings(name="Kestrel Row Nutrition"))
MINUS = "\u2212"
MARGIN_PT = 14 * 72 / 25.4  # the summary's 14 mm margins


@cache
def rendered(client_id: str) -> bytes:
    return render_practitioner_summary(sample_analysis(client_id), CONFIG)


def flat(data: bytes) -> str:
    return " ".join(" ".join(pdf_pages_text(data)).split())


@pytest.mark.parametrize("client_id", ["c001", "c002", "c005"])
def test_one_page_with_identification_period_and_references(client_id: str) -> None:
    a = sample_analysis(client_id)
    data = rendered(client_id)
    assert len(PdfReader(io.BytesIO(data)).pages) == 1
    text = flat(data)
    assert "Practitioner summary" in text and a.client.name in text and a.client.client_id in text
    assert "November 2026" in text
    for m in a.methods:
        # the name's headline (up to a colon) and the citation without titles; methods.pdf
        # carries both in full
        assert " ".join(m.name.split(":")[0].split()) in text, f"reference {m.code} missing"
        cited = short_citation(m.reference, doi=False)
        assert " ".join(cited.split()) in text, f"{m.code}: citation"
    assert "Practitioner's note" in text and "Signature" in text
    assert f"November 2026 ({a.quality.days_in_period} days): weigh-ins on" in text


@pytest.mark.parametrize("client_id", ["c001", "c002"])
def test_measurements_carry_values_and_80_percent_intervals(client_id: str) -> None:
    a = sample_analysis(client_id)
    text = flat(rendered(client_id))
    w = a.current_weight_kg
    interval = f"{w.low:.1f}\u2013{w.high:.1f} kg".replace("-", MINUS)
    assert f"{w.value:.1f} kg" in text and interval in text
    ph = a.current_phase
    assert ph is not None and ph.observed_tdee_kcal.known
    tdee = round(ph.observed_tdee_kcal.value / 10) * 10  # rounded to 10 kcal for display
    assert re.search(rf"{tdee:,.0f}\s*kcal/day", text)
    if a.bodycomp:
        last = a.bodycomp[-1]
        assert f"{last.bodyfat_pct:.1f} %" in text
        assert f"± {last.bodyfat_se_pct:.1f} points ± is the equation's standard error" in text


def test_fonts_embedded_and_text_inside_the_margins() -> None:
    data = rendered("c002")
    assert non_embedded_fonts(data) == []
    bad = chars_outside(data, MARGIN_PT)
    assert not bad, "; ".join(bad[:8])


def test_same_inputs_give_identical_bytes() -> None:
    assert render_practitioner_summary(sample_analysis("c001"), CONFIG) == rendered("c001")


def test_thin_data_and_odd_names_still_give_one_page(tmp_path: Path) -> None:
    name = "Ø'Brien & <Ана>"
    book = write_tiny_book(tmp_path / "book", name, days=2)
    data = render_practitioner_summary(analyse_book(book, "t001"), CONFIG)
    assert len(PdfReader(io.BytesIO(data)).pages) == 1
    assert name in flat(data)
    assert "No flags raised." in flat(data)


def char_sizes(data: bytes) -> Counter[float]:
    import pdfplumber

    with pdfplumber.open(io.BytesIO(data)) as pdf:
        chars = pdf.pages[0].chars
    return Counter(round(float(ch["size"]), 2) for ch in chars if not ch["text"].isspace())


@pytest.mark.parametrize("client_id", ["c001", "c004", "c014"])
def test_the_densest_pages_stay_legible_and_references_are_not_smaller(client_id: str) -> None:
    """c001, c004 and c014 carry the most rows, methods and plateau text of the sample book
    (their table text is 6.3-6.5 pt on paper, from 5.9 pt before the progress block became
    a small table).  The page shrinks to fit only as a last resort; the table text must
    stay at 6.1 pt or more and nothing (the column heads are the smallest) under 5.7 pt,
    with margin above a floor of 5.8 and 5.4 pt for dense print that is common practice,
    no single source.  The references are set like the table cells."""
    import pdfplumber

    data = rendered(client_id)
    sizes = char_sizes(data)
    body = sizes.most_common(1)[0][0]
    assert body >= 6.1, sizes
    assert min(sizes) >= 5.7, sizes
    with pdfplumber.open(io.BytesIO(data)) as pdf:
        words = pdf.pages[0].extract_words(extra_attrs=["size"])
    koopman = [w for w in words if w["text"].startswith("Koopman")]  # only in the references
    assert koopman and all(abs(float(w["size"]) - body) < 0.01 for w in koopman)


def test_reference_list_drops_titles_but_keeps_what_finds_the_paper() -> None:
    text = flat(rendered("c001"))
    # Mifflin et al. 1990: authors shortened, title and DOI left out, journal, volume, pages kept
    assert "Mifflin MD, et al. Am J Clin Nutr 1990;51:241-247. [4]" in text
    assert "A new predictive equation for resting energy expenditure" not in text


def test_a_book_without_phases_gets_words_not_codes(tmp_path: Path) -> None:
    """No phases recorded: the month is one window; its kind and the reasons for blank
    estimates are said in words, not as the analysis' codes."""
    book = write_tiny_book(tmp_path / "book", "Nell Ashby", days=40)
    (book / "phases.csv").unlink()
    text = flat(render_practitioner_summary(analyse_book(book, "t001"), CONFIG))
    assert "Report month (no phases recorded)" in text
    assert "no baseline period to compare against" in text
    assert "(no-baseline)" not in text and " month 01 Nov" not in text


CAUTIONS = (
    "Not medical advice or a diagnosis",
    "local regulations and licensed practice come first",
    "medical supervision for anyone under 18, pregnant or breastfeeding",
    "a BMI under 18.5",
    "a history of disordered eating",
    "intake below about 1,200 kcal/day (women) or 1,500 kcal/day (men)",
    "800 kcal/day only under medical care",
    "a loss over about 1 % of body weight a week",
)


def test_summary_carries_the_cautions() -> None:
    """The thresholds are science.flags' (1,200/1,500/800 kcal/day, BMI 18.5, 1 %/week)."""
    text = flat(rendered("c001"))
    for phrase in CAUTIONS:
        assert phrase in text, phrase


def test_pregnancy_statuses_and_blank_estimates_in_words(tmp_path: Path) -> None:
    """Special handling: the phase status and the blank estimates say so in words, once."""
    book = write_tiny_book(tmp_path / "book", "Petra Quill", days=40, pregnant=True)
    text = flat(render_practitioner_summary(analyse_book(book, "t001"), CONFIG))
    assert "Special handling: pregnant." in text
    assert "special-handling" not in text
    assert "– trend only" in text  # the phase table's status column
    assert "medical supervision; energy balance" not in text
    assert text.count("trend weight only: this client needs medical supervision") == 4
