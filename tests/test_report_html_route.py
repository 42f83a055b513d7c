"""The benchmark's second route (bench/html_route: jinja2 HTML, for a WeasyPrint
comparison) fills the report templates from the same view as the product, so the
benchmark compares layout routes on the same content.  Only the HTML is built here (no
WeasyPrint needed); the PDF timing lives in bench/bench_batch.py."""

from __future__ import annotations

import sys
from pathlib import Path

from _report_helpers import sample_analysis

from reportgen.config import Config

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "bench"))


def test_html_route_carries_the_progress_section_and_its_page_facts() -> None:
    from html_route.route import _practitioner_context, client_html

    a = sample_analysis("c016")  # a stall with causes and hunger ratings
    html = client_html(a, Config())
    assert "Is progress stalling?" in html
    assert "Since weeks 3–6 of this phase your daily deficit shrank by about" in html
    # the narrative's hunger line stays out when the progress section states the ratings
    assert "Hunger ratings have risen" not in html
    ctx = _practitioner_context(a, Config())
    assert ctx["progress"] is not None
    assert ctx["progress"]["head"][:3] == ["Deficit change, kcal/day", "Total", "Intake"]
