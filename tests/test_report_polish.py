"""Wording a client or a referral partner reads as a whole: phase names said once, safety
thresholds in the practice's energy unit, phase names on the charts never cut short."""

from __future__ import annotations

import dataclasses
import re

import pytest
from _report_helpers import pdf_pages_text, sample_analysis

from reportgen.config import Config, ReportSettings
from reportgen.report import render_client_report
from reportgen.report.charts import phase_label_lines
from reportgen.report.practitioner import render_practitioner_summary
from reportgen.report.units import Units
from reportgen.report.wording import keep_units, whole_dates
from reportgen.results import Estimate, Flag
from reportgen.science import flags as F

KJ_PER_KCAL = 4.184  # thermochemical calorie (ISO 80000-5), exact


def flat(text: str) -> str:
    return " ".join(text.split())


def kj(kcal: float) -> str:
    """Independent formatting: kJ rounded to 50, as the report rounds kilojoules."""
    return f"{round(kcal * KJ_PER_KCAL / 50) * 50:,.0f} kJ/day"


def test_cautions_follow_the_configured_energy_unit() -> None:
    """A practice that reports kJ reads its intake limits in kJ, not a hard-coded kcal."""
    cfg = Config(report=ReportSettings(energy_unit="kJ"))
    text = flat(" ".join(pdf_pages_text(render_client_report(sample_analysis("c001"), cfg))))
    cautions = text[text.index("Who should be under medical supervision") :]
    assert "kcal" not in cautions
    for limit in (F.INTAKE_FLOOR_WOMEN_KCAL, F.INTAKE_FLOOR_MEN_KCAL, F.INTAKE_VLCD_KCAL):
        assert kj(limit) in cautions, kj(limit)
    assert f"under {F.ADULT_AGE_YEARS};" in cautions
    assert f"BMI is under {F.BMI_UNDERWEIGHT:.1f}" in cautions
    # and in kcal, the same sentence with kcal figures
    text = flat(" ".join(pdf_pages_text(render_client_report(sample_analysis("c001"), Config()))))
    assert f"below about {F.INTAKE_FLOOR_WOMEN_KCAL:,.0f} kcal/day for women" in text


def test_flag_advice_follows_the_configured_energy_unit() -> None:
    """The advice under an intake flag quotes the limit in the report's unit."""
    a = sample_analysis("c001")
    flags = (
        Flag("low-intake", "caution", {"intake_kcal": 1150.0, "threshold_kcal": 1200.0}),
        Flag("very-low-intake", "urgent", {"intake_kcal": 700.0, "threshold_kcal": 800.0}),
    )
    a = dataclasses.replace(a, flags=(*a.flags, *flags))
    cfg = Config(report=ReportSettings(energy_unit="kJ"))
    text = flat(" ".join(pdf_pages_text(render_client_report(a, cfg))))
    assert f"Intake under {kj(F.INTAKE_FLOOR_WOMEN_KCAL)} (women)" in text
    assert f"Diets under about {kj(F.INTAKE_VLCD_KCAL)} need medical supervision" in text
    assert re.search(r"\d kcal", text) is None


@pytest.mark.parametrize("client_id", ["c002", "c008"])
def test_a_phase_name_that_says_its_kind_is_not_followed_by_it(client_id: str) -> None:
    a = sample_analysis(client_id)
    texts = [
        flat(" ".join(pdf_pages_text(render_client_report(a, Config())))),
        flat(" ".join(pdf_pages_text(render_practitioner_summary(a, Config())))),
    ]
    for p in a.phases:
        for text in texts:
            for kind in ("deficit", "maintenance", "surplus", "diet break", "break"):
                if kind in p.name.lower():
                    assert f"{p.name} ({kind})" not in text
    ph = a.current_phase
    assert ph is not None
    subtitle = texts[0]
    if ph.kind not in ph.name.lower():
        assert f"{ph.name} ({ph.kind})" in subtitle  # a name that does not say it keeps it


def test_chart_phase_names_are_whole_or_broken_at_word_ends() -> None:
    assert phase_label_lines("Two-week break", 20) == "Two-week break"
    assert phase_label_lines("Two-week break", 10) == "Two-week\nbreak"
    assert phase_label_lines("Two-week break", 6) == "Two-\nweek\nbreak"
    assert phase_label_lines("Two-week break", 4) == ""  # "break" cannot fit: no stub
    assert phase_label_lines("Block 1", 3) == ""


def test_c002_charts_print_the_break_phase_whole() -> None:
    """On c002's charts the narrow break band shows "Two-week break" whole, never an
    ellipsis."""
    pages = pdf_pages_text(render_client_report(sample_analysis("c002"), Config()))
    charts = " ".join(pages[1:])
    assert "…" not in charts
    assert "Two-week" in charts and "break" in charts


def test_an_interval_bound_that_rounds_to_zero_prints_as_zero() -> None:
    """ "−140 to ±0 kcal/day" read as a change of zero; a bound is a plain 0."""
    u = Units("kg", "kcal")
    assert u.interval(Estimate(-70.0, -143.0, -3.0), "e_change") == "−140 to 0 kcal/day"
    assert u.e(-3.0, signed=True) == "±0 kcal/day"  # a change of zero keeps its sign


def test_card_notes_keep_a_number_with_its_unit() -> None:
    """c001's body-fat card wrapped "30.9" / "% → 27.3 %"; numbers keep their units."""
    assert keep_units("30.9 % → 27.3 %") == "30.9\u00a0% → 27.3\u00a0%"
    assert keep_units("−0.30 kg/week, 2 kgs") == "−0.30\u00a0kg/week, 2 kgs"
    page1 = pdf_pages_text(render_client_report(sample_analysis("c001"), Config()))[0]
    # no line of the cards ends in a decimal left without its unit
    assert [ln for ln in page1.splitlines() if re.search(r"\d\.\d\s*$", ln)] == []


def test_practitioner_summary_names_the_client_reports_rate_beside_the_smoothed_slope() -> None:
    """c014: page 1 says -0.10 kg/week over the last 4 weeks while the smoothed slope is
    -0.38; the summary showed only the latter as "Weekly rate".  Both are shown, named."""
    a = sample_analysis("c014")
    p = a.plateau
    assert p is not None and p.recent_rate_kg_per_week.value is not None
    text = flat(pdf_pages_text(render_practitioner_summary(a, Config()))[0])
    recent = f"{p.recent_rate_kg_per_week.value:+.2f}".replace("-", "\u2212")
    assert f"Weekly rate, recent weeks {recent} kg/week" in text
    assert f"last {p.recent_days // 7} weeks" in text and "as on the client report" in text
    assert "Weekly rate, smoothed trend" in text


def test_phase_table_dates_wrap_only_at_their_dash() -> None:
    """c002's phase table printed "21 Aug" / "2026"; a date stays whole."""
    assert (
        whole_dates("01 Aug 2026 – 21 Aug 2026") == "01\u00a0Aug\u00a02026 – 21\u00a0Aug\u00a02026"
    )
    a = sample_analysis("c002")
    pages = pdf_pages_text(render_client_report(a, Config()))
    lines = [
        " ".join(ln.split()) for ln in next(p for p in pages if "Phases so far" in p).splitlines()
    ]
    for p in a.phases:
        for day in (p.start, p.end):
            if day is not None and day <= a.as_of:
                assert any(f"{day:%d %b %Y}" in ln for ln in lines), day


def test_a_flat_recent_trend_and_the_phase_deficit_are_not_said_as_one() -> None:
    """c015 holds steady over the last 4 weeks while the phase as a whole ran a deficit of
    about 350 kcal/day; page 1 said both as if of now ("about 350 kcal/day below what you
    burned" and "intake and expenditure are about even at the moment")."""
    a = sample_analysis("c015")
    ph = a.current_phase
    assert ph is not None and ph.realised_deficit_kcal.value is not None
    page1 = flat(pdf_pages_text(render_client_report(a, Config()))[0])
    size = round(ph.realised_deficit_kcal.value / 10) * 10
    assert (
        f"over this phase (since {ph.start:%d %b %Y}) you ate about {size:,} "
        "kcal/day below what you burned" in page1
    )
    assert "about even at the moment" not in page1
    assert "holding steady" in page1 and "about even in recent weeks" in page1
