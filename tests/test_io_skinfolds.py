"""Skinfold files: repeated readings, the ISAK combination rule and its tolerance warning."""

from __future__ import annotations

import datetime as dt
from pathlib import Path

import pytest
from _io_helpers import daily_rows, find_problem, read_book_client, write_book, write_xlsx

from reportgen.io.skinfolds import combine_readings, readings_disagree


def test_combination_rule() -> None:
    # ISAK protocol (from memory): mean of two readings, median of three.
    assert combine_readings((12.0,)) == pytest.approx(12.0, abs=1e-12)
    assert combine_readings((12.0, 12.4)) == pytest.approx(12.2, abs=1e-12)
    assert combine_readings((12.0, 13.0, 12.2)) == pytest.approx(12.2, abs=1e-12)


@pytest.mark.parametrize(
    ("readings", "disagree"),
    [
        ((20.0, 21.0), False),  # 1.0 / 20.5 = 4.9 % (hand-calculated)
        ((20.0, 21.2), True),  # 1.2 / 20.6 = 5.8 %
        ((10.0, 10.1, 12.0), False),  # the median 10.1 is backed by 10.0 (1 %)
        ((10.0, 11.0, 12.0), True),  # nearest to the median 11 is 1.0 away (9 %)
        ((15.0,), False),
    ],
)
def test_tolerance_is_five_percent(readings: tuple[float, ...], disagree: bool) -> None:
    assert readings_disagree(readings) is disagree


def test_sessions_from_csv(tmp_path: Path) -> None:
    text = (
        "date,Triceps,abdominal , thigh\n"
        "2026-10-01,12.0,20.0,18\n"
        "2026-10-01,12.4,22.0,18.2\n"
        "2026-11-01,11.0,19.0,17\n"
        "2026-11-01,11.2,,17.2\n"
        "2026-11-01,11.1,,\n"
        "2026-12-15,10,18,16\n"  # after the report month: cut
    )
    book = write_book(tmp_path / "book", skinfolds={"c001.csv": text})
    rec = read_book_client(book, today=dt.date(2026, 12, 31))
    s1, s2 = rec.skinfolds
    assert s1.date == dt.date(2026, 10, 1)
    assert s1.sites_mm == pytest.approx({"triceps": 12.2, "abdominal": 21.0, "thigh": 18.1})
    assert s1.readings_mm["abdominal"] == (20.0, 22.0)
    assert s2.sites_mm == pytest.approx({"triceps": 11.1, "abdominal": 19.0, "thigh": 17.1})
    p = find_problem(
        rec.problems,
        "skinfold-disagreement",
        match=r"abdominal readings on 2026-10-01 \(20, 22 mm\) differ by more than 5%, the "
        r"usual protocol tolerance",
        severity="warning",
        file="skinfolds/c001.csv",
        row=2,
        column="abdominal",
    )
    assert p.client_id == "c001"
    assert len(rec.problems) == 1
    assert "skinfolds/c001.csv" in rec.source_files


def test_skinfold_errors(tmp_path: Path) -> None:
    text = "date,triceps,biceps,neck\n2026-10-01,95,4,1\n2026-10-02,1O,4,1\nlater,5,5,1\n"
    rec = read_book_client(write_book(tmp_path / "book", skinfolds={"c001.csv": text}))
    assert not rec.ok
    find_problem(
        rec.problems,
        "out-of-range",
        match=r'triceps "95" is outside the possible range 1-80 mm \(one caliper reading\)',
        row=2,
    )
    find_problem(rec.problems, "bad-number", match=r'triceps "1O" is not a number', row=3)
    find_problem(rec.problems, "bad-date", match=r'date "later" is not a date', row=4)
    find_problem(
        rec.problems,
        "unknown-column",
        match=r'column "neck" in skinfolds/c001.csv is not a skinfold site',
        severity="warning",
    )


def test_skinfold_file_without_sites(tmp_path: Path) -> None:
    text = "date,neck\n2026-10-01,30\n"
    rec = read_book_client(write_book(tmp_path / "book", skinfolds={"c001.csv": text}))
    find_problem(rec.problems, "missing-column", match=r'no "chest" or .* column \(at least one')


def test_skinfolds_sheet_in_the_workbook(tmp_path: Path) -> None:
    book = write_book(tmp_path / "book", logs={})
    write_xlsx(
        book / "logs" / "c001.xlsx",
        {
            "daily": daily_rows(),
            "Skinfolds": [
                ["date", "chest", "thigh"],
                [dt.date(2026, 10, 5), 10, 15],
                [dt.date(2026, 10, 5), 10.2, 15.2],
                [dt.date(2026, 10, 5), 10.1, 14.0],
            ],
            "notes": [["anything", "at all"]],
            "empty": [],
        },
    )
    rec = read_book_client(book)
    assert rec.problems == ()
    (s,) = rec.skinfolds
    assert s.sites_mm == pytest.approx({"chest": 10.1, "thigh": 15.0})


def test_skinfolds_in_both_places(tmp_path: Path) -> None:
    book = write_book(
        tmp_path / "book", logs={}, skinfolds={"c001.csv": "date,chest\n2026-10-01,10\n"}
    )
    write_xlsx(
        book / "logs" / "c001.xlsx",
        {"daily": daily_rows(), "skinfolds": [["date", "chest"], ["2026-10-01", 10]]},
    )
    find_problem(
        read_book_client(book).problems,
        "two-sources",
        match=r"skinfolds are in both logs/c001.xlsx \(sheet skinfolds\) and skinfolds/c001.csv",
    )


def test_skinfold_rows_after_the_month_are_not_judged(tmp_path: Path) -> None:
    text = "date,triceps\n2026-10-01,12\n2026-11-20,95\n2026-12-24,12\n"
    book = write_book(tmp_path / "book", skinfolds={"c001.csv": text})
    rec = read_book_client(book, month_end=dt.date(2026, 10, 31))
    assert rec.ok
    assert [s.date for s in rec.skinfolds] == [dt.date(2026, 10, 1)]
    find_problem(rec.problems, "future-date", match=r"date 2026-12-24 is after today", row=4)
    assert len(rec.problems) == 1


def test_header_only_skinfolds_sheet_does_not_clash_with_the_csv(tmp_path: Path) -> None:
    book = write_book(
        tmp_path / "book", logs={}, skinfolds={"c001.csv": "date,chest\n2026-10-01,10\n"}
    )
    write_xlsx(
        book / "logs" / "c001.xlsx",
        {"daily": daily_rows(), "skinfolds": [["date", "chest", "thigh"]]},
    )
    rec = read_book_client(book)
    assert rec.problems == ()
    assert [s.sites_mm for s in rec.skinfolds] == [{"chest": 10.0}]
