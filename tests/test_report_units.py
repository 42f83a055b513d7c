"""Display formatting and the wording machinery (templates, escaping, line markup)."""

from __future__ import annotations

import datetime as dt
from types import SimpleNamespace

import pytest
from hypothesis import given
from hypothesis import strategies as st

from reportgen.config import Config, ReportSettings
from reportgen.report.cautions import caution_values
from reportgen.report.theme import theme_for
from reportgen.report.units import Units
from reportgen.report.wording import Wording, blocks, esc
from reportgen.results import Estimate
from reportgen.science.flags import FLAG_CODES

MINUS = "\u2212"


def test_pounds_use_the_international_pound() -> None:
    # 1 lb = 0.45359237 kg exactly (international yard and pound agreement, 1959).
    u = Units("lb", "kcal")
    assert u.w(0.45359237) == "1.0 lb"
    assert u.w(100.0) == "220.5 lb"  # 100 / 0.45359237 = 220.462...
    assert u.w(-1.0, signed=True) == f"{MINUS}2.2 lb"


def test_kilojoules_use_the_thermochemical_calorie() -> None:
    # 1 kcal = 4.184 kJ exactly (thermochemical calorie); shown rounded to 50 kJ.
    u = Units("kg", "kJ")
    assert u.e(2000.0) == "8,350 kJ/day"  # 8368 kJ -> nearest 50
    assert u.e(1000.0) == "4,200 kJ/day"  # 4184 kJ -> nearest 50
    assert u.e(-300.0, signed=True) == f"{MINUS}1,250 kJ/day"  # -1255.2 -> -1250


def test_energy_rounds_to_ten_kcal_and_zero_has_no_sign() -> None:
    u = Units()
    assert u.e(1234.0) == "1,230 kcal/day"
    assert u.e(4.0, signed=True) == "±0 kcal/day"
    assert u.e(None) == "\u2013"


def test_intervals_use_an_en_dash_or_words_when_negative() -> None:
    u = Units()
    assert u.interval(Estimate(72.6, 72.3, 72.9), "w") == "72.3\u201372.9 kg"
    assert u.interval(Estimate(-80, -190, 30), "e_change") == (f"{MINUS}190 to +30 kcal/day")
    assert u.interval(Estimate(1.0), "w") == ""


def test_dates_follow_the_configured_format() -> None:
    u = Units.from_config(Config(report=ReportSettings(date_format="%Y-%m-%d")))
    assert u.d(dt.date(2026, 11, 30)) == "2026-11-30"
    assert u.span(dt.date(2026, 8, 1), None, running="running") == "2026-08-01 \u2013 running"


@given(st.floats(min_value=-500, max_value=500, allow_nan=False))
def test_weight_text_round_trips_to_within_rounding(kg: float) -> None:
    text = Units("lb", "kcal").w(kg, unit=False, signed=True)
    back = float(text.replace(MINUS, "-").replace("±", "").replace(",", "")) * 0.45359237
    assert abs(back - kg) <= 0.05 * 0.45359237 + 1e-9


def test_every_flag_the_analysis_can_raise_has_wording() -> None:
    words = Wording(Config(), "report/common.j2")
    caution = caution_values(Units("kg", "kcal"))
    for code in FLAG_CODES:
        assert code in words.flag_titles, f"no title for flag {code}"
        advice = str(words.flag_advice_text(SimpleNamespace(code=code), caution))
        assert advice and "Discuss this with your coach" not in advice, f"no advice for {code}"
    overview = Wording(Config(), "report/overview.j2")
    assert set(FLAG_CODES) <= set(overview.flag_short)


def test_client_text_is_escaped_before_reportlab_markup() -> None:
    assert esc("Ann & <Bo>") == "Ann &amp; &lt;Bo&gt;"
    words = Wording(Config(), "report/client.j2")

    view = SimpleNamespace(client={"name": "A & <b>B</b>"}, month="November 2026", phase=None)
    text = words.text("header", view)
    assert "A &amp; &lt;b&gt;B&lt;/b&gt;" in text
    paras = blocks(text, theme_for("#1F5A7A"))
    assert paras[0].getPlainText() == "A & <b>B</b>"


def test_line_markup_makes_headings_bullets_and_paragraphs() -> None:
    theme = theme_for("#1F5A7A")
    out = blocks("# Title\nfirst line\nsecond line\n\n- a bullet\n~ small\n= Big", theme)
    kinds = [p.style.name for p in out]
    assert kinds == ["h1", "body", "bullet", "caption", "title"]
    assert out[1].getPlainText() == "first line second line"


def test_a_template_using_a_missing_value_fails_loudly() -> None:
    from reportgen.report.wording import TemplateProblem

    words = Wording(Config(), "report/client.j2")
    # Every template error is a TemplateProblem naming the template and what is wrong.
    with pytest.raises(TemplateProblem, match=r"report/client\.j2.*has no attribute 'client'"):
        words.text("header", object())
