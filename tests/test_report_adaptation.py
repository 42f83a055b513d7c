"""Adaptation in the reports: the three figures side by side, and "expenditure below
expected" with its three candidate causes, rendered from a real analysis."""

from __future__ import annotations

import dataclasses

from _report_helpers import pdf_pages_text, sample_analysis

from reportgen.config import Config
from reportgen.report import render_client_report, render_practitioner_summary
from reportgen.results import ClientAnalysis, Estimate


def _below(a: ClientAnalysis) -> ClientAnalysis:
    """The sample client with a clear fall in expenditure beyond its body size (invented)."""
    ph = a.current_phase
    assert ph is not None
    ph2 = dataclasses.replace(
        ph,
        adaptation_kcal=Estimate(-180.0, -260.0, -100.0),
        adaptation_pct=Estimate(-8.0, -11.0, -4.5),
        adaptation_data_kcal=Estimate(-320.0, -420.0, -220.0),
        adaptation_typical_kcal=Estimate(-90.0, -200.0, 20.0),
        activity_change_kcal=Estimate(-60.0, -80.0, -40.0),
        implied_intake_kcal=Estimate(1950.0, 1850.0, 2050.0),
        logging_gap_kcal=Estimate(-210.0, -300.0, -120.0),
    )
    phases = tuple(ph2 if p is ph else p for p in a.phases)
    return dataclasses.replace(a, phases=phases, current_phase=ph2)


def test_client_report_names_the_three_causes() -> None:
    a = _below(sample_analysis("c001"))
    text = " ".join(pdf_pages_text(render_client_report(a, Config()))).replace("\n", " ")
    assert "Expenditure below expected" in text
    assert "180 kcal" in text  # the combined figure
    assert "slower metabolism" in text and "90 kcal" in text  # typical for the deficit
    assert "fewer steps on average this phase, worth about 60 kcal" in text
    assert "about 210 kcal" in text and "more eaten than logged" in text
    # the logging check spans the phase (the progress section's spans its recent weeks)
    assert "over the phase your weight suggests about 210 kcal/day more eaten than logged" in text


def test_practitioner_summary_shows_data_typical_and_combined() -> None:
    a = _below(sample_analysis("c001"))
    text = " ".join(pdf_pages_text(render_practitioner_summary(a, Config()))).replace("\n", " ")
    for label in (
        "your data alone",
        "typical for this deficit",
        "Vs expected: combined",
        "Activity change (steps)",
        "Intake implied by weight",
    ):
        assert label in text, label
    assert "−320" in text and "−90" in text and "−180" in text


def test_zero_inside_the_interval_is_said_in_words() -> None:
    a = sample_analysis("c004")  # this sample client's combined interval includes zero
    ph = a.current_phase
    assert ph is not None and ph.adaptation_kcal.low is not None
    assert ph.adaptation_kcal.low <= 0 <= ph.adaptation_kcal.high  # type: ignore[operator]
    text = " ".join(pdf_pages_text(render_practitioner_summary(a, Config()))).replace("\n", " ")
    assert "not distinguishable from no adaptation" in text
    text = " ".join(pdf_pages_text(render_client_report(a, Config()))).replace("\n", " ")
    assert "not distinguishable from no adaptation" in text


def test_figure_leaning_on_the_typical_value_says_so() -> None:
    a = _below(sample_analysis("c001"))
    text = " ".join(pdf_pages_text(render_client_report(a, Config()))).replace("\n", " ")
    assert "cannot yet tell" not in text  # the data alone exclude zero here
    ph = a.current_phase
    assert ph is not None
    weak = dataclasses.replace(ph, adaptation_data_kcal=Estimate(-120.0, -300.0, 60.0))
    b = dataclasses.replace(
        a, phases=tuple(weak if p is ph else p for p in a.phases), current_phase=weak
    )
    text = " ".join(pdf_pages_text(render_client_report(b, Config()))).replace("\n", " ")
    # no "below expected" headline on the literature's strength alone: the words say the
    # client's data cannot tell, give the data-alone figure with its range, then the
    # typical value and the combined estimate
    assert "Expenditure below expected" not in text
    assert "your own data alone cannot yet show a change" in text
    assert "(−120, range −300 to +60 kcal/day)" in text
    # the typical value counts the measured fall in steps (60 kcal/day here), and says so
    assert "the 90 kcal/day lower typical for your deficit and step change" in text
    assert "the best estimate is 180 kcal/day lower" in text


def test_range_printed_as_reaching_zero_is_not_called_a_fall() -> None:
    # a combined range whose upper end prints as "±0" reads as including no change, so the
    # words must not call it a fall (decision on the printed, rounded figures)
    a = _below(sample_analysis("c001"))
    ph = a.current_phase
    assert ph is not None
    edge = dataclasses.replace(ph, adaptation_kcal=Estimate(-70.0, -140.0, -3.0))
    b = dataclasses.replace(
        a, phases=tuple(edge if p is ph else p for p in a.phases), current_phase=edge
    )
    text = " ".join(pdf_pages_text(render_client_report(b, Config()))).replace("\n", " ")
    assert "not distinguishable from no adaptation" in text
    assert "Expenditure below expected" not in text
    text = " ".join(pdf_pages_text(render_practitioner_summary(b, Config()))).replace("\n", " ")
    assert "−140 to 0 kcal/day" in text and "not distinguishable from no adaptation" in text


def test_sample_client_with_expenditure_below_expected() -> None:
    # c017 (invented): a long cut whose expenditure falls beyond her smaller body; her own
    # data alone already exclude zero, and the combined interval does too
    a = sample_analysis("c017")
    ph = a.current_phase
    assert ph is not None and ph.adaptation_kcal.high is not None
    assert ph.adaptation_kcal.high < 0
    assert ph.adaptation_data_kcal.high is not None and ph.adaptation_data_kcal.high < 0
    assert ph.activity_change_kcal.known  # steps logged
    text = " ".join(pdf_pages_text(render_client_report(a, Config()))).replace("\n", " ")
    assert "Expenditure below expected" in text
    assert "cannot yet tell" not in text
