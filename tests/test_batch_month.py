"""The report month: parsed once (reportgen.month.ReportMonth), strictly, at the command line."""

from __future__ import annotations

import datetime as dt
import pickle
from pathlib import Path

import pytest
from click.testing import CliRunner
from hypothesis import given
from hypothesis import strategies as st

from reportgen.cli import main
from reportgen.month import MAX_YEAR, MIN_YEAR, InvalidMonth, ReportMonth

# Each is refused with exit code 2 and a one-line message naming the problem.
BAD_MONTHS = [
    ("0000-01", "outside the years 1900 to 2199"),
    ("9999-12", "outside the years 1900 to 2199"),
    ("2026-13", "has no month 13; use 01 to 12"),
    ("2026-00", "has no month 00; use 01 to 12"),
    ("2026-11\n", "is not in the form YYYY-MM"),  # trailing line end
    ("2026-11 ", "is not in the form YYYY-MM"),  # trailing space
    (" 2026-11", "is not in the form YYYY-MM"),
    ("２０２６-１１", "is not in the form YYYY-MM"),  # full-width digits
    ("٢٠٢٦-١١", "is not in the form YYYY-MM"),  # Arabic-Indic digits
    ("2026-1", "is not in the form YYYY-MM"),
    ("2026/11", "is not in the form YYYY-MM"),
    ("November", "is not in the form YYYY-MM"),
    ("", "is not in the form YYYY-MM"),
]


def _error_lines(output: str) -> list[str]:
    return [line for line in output.splitlines() if line.startswith("Error:")]


@pytest.mark.parametrize(("text", "message"), BAD_MONTHS)
def test_batch_refuses_a_bad_month_as_a_usage_error(
    tmp_path: Path, text: str, message: str
) -> None:
    out = tmp_path / "out"
    result = CliRunner().invoke(main, ["batch", str(tmp_path), "--month", text, "--out", str(out)])
    assert result.exit_code == 2
    (error,) = _error_lines(result.output)
    assert error.startswith("Error: Invalid value for '--month': month ")
    assert message in error
    # one line: the message carries no line end of its own (the bad text is shown quoted)
    assert result.output.rstrip("\n").endswith(error)
    assert not out.exists()


@pytest.mark.parametrize(("text", "message"), BAD_MONTHS)
def test_check_refuses_a_bad_month_as_a_usage_error(
    tmp_path: Path, text: str, message: str
) -> None:
    result = CliRunner().invoke(main, ["check", str(tmp_path), "--month", text])
    assert result.exit_code == 2
    (error,) = _error_lines(result.output)
    assert message in error


def test_the_range_ends_are_months() -> None:
    assert ReportMonth(f"{MIN_YEAR}-01").first_day == dt.date(1900, 1, 1)
    assert ReportMonth(f"{MAX_YEAR}-12").last_day == dt.date(2199, 12, 31)
    with pytest.raises(InvalidMonth, match="outside the years"):
        ReportMonth("1899-12")
    with pytest.raises(InvalidMonth, match="outside the years"):
        ReportMonth("2200-01")


def test_a_report_month_is_its_text() -> None:
    month = ReportMonth("2026-11")
    assert month == "2026-11" and str(month) == "2026-11" and f"{month}" == "2026-11"
    assert (month.year, month.number, month.days) == (2026, 11, 30)
    assert month.label == "November 2026"
    assert ReportMonth(month) is month
    assert pickle.loads(pickle.dumps(month)) == month
    assert type(pickle.loads(pickle.dumps(month))) is ReportMonth
    assert ReportMonth("2028-02").days == 29  # leap year (Gregorian rule)
    assert ReportMonth("2100-02").days == 28  # century, not a leap year


@given(st.dates(min_value=dt.date(MIN_YEAR, 1, 1), max_value=dt.date(MAX_YEAR, 12, 31)))
def test_every_day_lies_in_its_month(day: dt.date) -> None:
    month = ReportMonth.containing(day)
    assert month.first_day <= day <= month.last_day
    assert ReportMonth(day.strftime("%Y-%m")) == month
    assert (month.last_day + dt.timedelta(days=1)).day == 1


@given(st.text(max_size=12))
def test_any_other_text_is_refused(text: str) -> None:
    valid = (
        len(text) == 7
        and text[4] == "-"
        and all(c in "0123456789" for c in text[:4] + text[5:])
        and 1 <= int(text[5:]) <= 12
        and MIN_YEAR <= int(text[:4]) <= MAX_YEAR
    )
    if valid:
        assert ReportMonth(text) == text
    else:
        with pytest.raises(InvalidMonth):
            ReportMonth(text)
