"""The cohort overview: one line per client, attention first, then the failed clients."""

from __future__ import annotations

import dataclasses
import io

import numpy as np
from _report_helpers import (
    SAMPLE_MONTH,
    chars_outside,
    non_embedded_fonts,
    pdf_pages_text,
    sample_analysis,
)
from pypdf import PdfReader

from reportgen.config import Config, PracticeSettings
from reportgen.report import OverviewLine, make_overview_line, render_overview
from reportgen.report.overview import PROGRESS_WEIGHT, sort_lines

CONFIG = Config(practice=PracticeSettings(name="Kestrel Row Nutrition"))
CLIENTS = ("c001", "c002", "c003", "c004", "c005", "c006", "c008", "c009", "c010")


def lines() -> list[OverviewLine]:
    return [make_overview_line(sample_analysis(c)) for c in CLIENTS]


def test_line_takes_its_values_from_the_analysis() -> None:
    a = sample_analysis("c001")
    line = make_overview_line(a)
    ph = a.current_phase
    assert ph is not None
    assert line.client_id == "c001" and line.name == a.client.name
    assert (line.phase_name, line.phase_kind, line.week_of_phase) == (
        ph.name,
        ph.kind,
        a.week_of_phase,
    )
    assert line.month_change_kg == a.month_change_kg.value
    # the rate of page 1: the progress section's recent rate while a deficit phase runs
    assert a.plateau is not None and a.plateau.recent_rate_pct_per_week.known
    assert line.weekly_rate_pct == a.plateau.recent_rate_pct_per_week.value
    assert line.realised_deficit_kcal == ph.realised_deficit_kcal.value
    assert line.observed_tdee_kcal == ph.observed_tdee_kcal.value
    assert line.adaptation_kcal == ph.adaptation_kcal.value
    assert line.days_in_month == 30  # November
    # Days with a usable weigh-in in November, counted here from the daily log.
    nov = (a.log.dates >= np.datetime64("2026-11-01")) & (
        a.log.dates <= np.datetime64("2026-11-30")
    )
    assert line.weight_days == int(np.sum(nov & np.isfinite(a.log.weight_used_kg)))
    assert line.intake_days == int(np.sum(nov & np.isfinite(a.log.intake_kcal)))


def test_urgent_before_caution_before_sparse_logging_before_the_rest() -> None:
    base = [dataclasses.replace(ln, attention=0, flags=()) for ln in lines()]
    urgent = dataclasses.replace(base[5], flags=(("low-bmi", "urgent"),), attention=10_000)
    caution = dataclasses.replace(base[6], flags=(("low-intake", "caution"),), attention=100)
    ordered = sort_lines([*base[:5], caution, urgent, *base[7:]])
    assert ordered[0] is urgent and ordered[1] is caution
    rest = [ln.name for ln in ordered[2:] if ln.attention == 0]
    assert rest == sorted(rest, key=str.casefold)


def test_stalled_and_gaining_come_after_urgent_and_before_cautions() -> None:
    base = [dataclasses.replace(ln, attention=0, flags=()) for ln in lines()]
    a = sample_analysis(CLIENTS[0])
    assert a.plateau is not None  # the sample client has a running deficit phase
    stalled_a = dataclasses.replace(a, plateau=dataclasses.replace(a.plateau, status="stalled"))
    stalled = make_overview_line(stalled_a)
    assert stalled.progress_status == "stalled"
    assert stalled.attention >= PROGRESS_WEIGHT["stalled"]
    urgent = dataclasses.replace(base[5], flags=(("low-bmi", "urgent"),), attention=10_000)
    caution = dataclasses.replace(base[6], flags=(("low-intake", "caution"),), attention=100)
    ordered = sort_lines([caution, *base[:5], stalled, urgent])
    assert ordered[:3] == [urgent, stalled, caution]


def test_overview_lists_every_client_and_every_failure() -> None:
    failures = [("c007", 'logs/c007.csv row 79: weight_kg "81,6kg" is not a number')]
    data = render_overview(lines(), failures, SAMPLE_MONTH, CONFIG)
    reader = PdfReader(io.BytesIO(data))
    page = reader.pages[0]
    assert page.mediabox.width > page.mediabox.height  # landscape
    text = " ".join(" ".join(pdf_pages_text(data)).split())
    assert "Cohort overview · November 2026" in text
    for c in CLIENTS:
        assert sample_analysis(c).client.name in text
    assert "Clients without a report this month" in text
    assert '"81,6kg" is not a number' in text
    assert reader.metadata.author == "Kestrel Row Nutrition"
    # the cautions, thresholds from science.flags
    assert "Not medical advice or a diagnosis" in text
    assert "medical supervision for anyone under 18, pregnant or breastfeeding" in text
    assert "a BMI under 18.5, a medical condition or a history of disordered eating" in text
    assert "intake below about 1,200 kcal/day (women) or 1,500 kcal/day (men)" in text
    assert "a loss over about 1 % of body weight a week" in text
    assert non_embedded_fonts(data) == []
    assert not chars_outside(data, 14 * 72 / 25.4)


def test_many_clients_flow_onto_more_pages_with_the_header_repeated() -> None:
    many = [dataclasses.replace(ln, client_id=f"x{i:03d}") for i in range(8) for ln in lines()]
    data = render_overview(many, [], SAMPLE_MONTH, CONFIG)
    pages = pdf_pages_text(data)
    assert len(pages) >= 3
    assert all("Days logged" in p for p in pages)  # the table header repeats
    assert render_overview(many, [], SAMPLE_MONTH, CONFIG) == data


def test_empty_batch_renders() -> None:
    data = render_overview([], [("c001", "no daily log file")], SAMPLE_MONTH, Config())
    text = " ".join(pdf_pages_text(data))
    assert "No clients in this batch." in text and "no daily log file" in text


def test_header_counts_what_is_listed_first() -> None:
    """The header must not say flagged clients come first when stalled ones sort above
    cautions: it counts both groups that are listed first."""
    data = render_overview(lines(), [], SAMPLE_MONTH, CONFIG)
    text = " ".join(" ".join(pdf_pages_text(data)).split())
    flagged = sum(1 for ln in lines() if ln.flags)
    stalled = sum(1 for ln in lines() if ln.progress_status in PROGRESS_WEIGHT)
    assert flagged and stalled  # the sample book has both
    assert f"listed first: {flagged} with flags and {stalled} whose progress has stalled" in text
    assert "to look at first" not in text
