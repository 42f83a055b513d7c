"""The progress section's "on track" words against the figures they sit beside: "in line
with the plan" only when the printed 80 % range of the recent rate holds the planned rate
(rendered from the sample clients' real analyses, read back from the PDF)."""

from __future__ import annotations

import dataclasses

import pytest
from _report_helpers import pdf_pages_text, sample_analysis

from reportgen.config import Config
from reportgen.report import render_client_report
from reportgen.results import Estimate

ON_TRACK_CLIENTS = ("c001", "c009", "c017")


def _text(a: object) -> str:
    return " ".join(pdf_pages_text(render_client_report(a, Config()))).replace("\n", " ")  # type: ignore[arg-type]


@pytest.mark.parametrize("client_id", ON_TRACK_CLIENTS)
def test_on_track_words_follow_where_the_plan_lies(client_id: str) -> None:
    a = sample_analysis(client_id)
    p = a.plateau
    assert p is not None and p.status == "on-track"
    r = p.recent_rate_pct_per_week
    assert r.low is not None and r.high is not None and p.planned_rate_pct_per_week is not None
    lo, hi, plan = round(r.low, 2), round(r.high, 2), round(p.planned_rate_pct_per_week, 2)
    text = _text(a)
    if lo <= plan <= hi:
        assert "in line with the plan" in text
    else:
        assert "in line with the plan" not in text
        assert ("a little slower than the plan" in text) == (lo > plan)
        assert ("faster than the plan" in text) == (hi < plan)


def test_a_rate_faster_than_the_plan_is_not_called_in_line() -> None:
    a = sample_analysis("c001")
    p = a.plateau
    assert p is not None and p.planned_rate_pct_per_week is not None
    plan = p.planned_rate_pct_per_week
    fast = dataclasses.replace(
        p, recent_rate_pct_per_week=Estimate(plan - 0.3, plan - 0.4, plan - 0.2)
    )
    text = _text(dataclasses.replace(a, plateau=fast))
    assert "faster than the plan" in text and "in line with the plan" not in text
