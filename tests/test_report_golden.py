"""Golden files: the text of every page, line by line with coarse positions, of four
documents rendered from the sample book: two client reports that differ (c001: a running
deficit with its goal ahead; c008: goal reached, a low-intake flag, a diet break), c001's
practitioner summary and the cohort overview.  See ``tests/_golden.py``; update with
``pytest --update-goldens``."""

from __future__ import annotations

import pytest
from _golden import Line, check_golden, differences
from _report_helpers import SAMPLE_MONTH, sample_analysis

from reportgen.config import Config, PracticeSettings
from reportgen.report import (
    make_overview_line,
    render_client_report,
    render_overview,
    render_practitioner_summary,
)

CONFIG = Config(practice=PracticeSettings(name="Kestrel Row Nutrition"))
CLIENTS = ("c001", "c002", "c003", "c004", "c005", "c006", "c008", "c009", "c010", "c011", "c012")


@pytest.mark.parametrize("client_id", ["c001", "c008"])
def test_client_report_matches_golden(client_id: str, update_goldens: bool) -> None:
    data = render_client_report(sample_analysis(client_id), CONFIG)
    check_golden(f"report_{client_id}", data, update_goldens)


def test_practitioner_summary_matches_golden(update_goldens: bool) -> None:
    data = render_practitioner_summary(sample_analysis("c001"), CONFIG)
    check_golden("practitioner_c001", data, update_goldens)


def test_overview_matches_golden(update_goldens: bool) -> None:
    lines = [make_overview_line(sample_analysis(c)) for c in CLIENTS]
    failures = [("c007", "Callum Reid", "logs/c007.csv:79:weight_kg: not a number")]
    data = render_overview(lines, failures, SAMPLE_MONTH, CONFIG)
    check_golden("overview", data, update_goldens)


def test_comparison_sees_changed_text_and_moved_lines() -> None:
    """The comparison itself: equal within the tolerance, a moved or changed line fails."""
    want: list[list[Line]] = [[[50, 100, "Trend weight now"], [50, 120, "64.9 kg"]]]
    assert differences([[[52, 101, "Trend weight now"], [50, 120, "64.9 kg"]]], want) == []
    moved = differences([[[50, 100, "Trend weight now"], [50, 140, "64.9 kg"]]], want)
    assert moved[0] == "page 1: lines moved" and any("+  50  140  64.9 kg" in d for d in moved)
    changed = differences([[[50, 100, "Trend weight now"], [50, 120, "65.0 kg"]]], want)
    assert changed[0] == "page 1: text differs" and any("-  50  120  64.9 kg" in d for d in changed)
    assert differences([], want)[0] == "0 pages, golden file has 1"
