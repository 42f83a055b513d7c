"""The one-page practitioner summary, from the real pipeline on the sample book."""

from __future__ import annotations

import io
import re
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
        assert " ".join(m.name.split()) in text, f"reference {m.code} missing"
    assert "Practitioner's note" in text and "Signature" in text
    assert f"{a.quality.days_in_period} days analysed" in text


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
        assert f"± {last.bodyfat_se_pct:.1f} points (equation standard error)" in text


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
