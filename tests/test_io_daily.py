"""Daily logs: every error and warning kind, from real CSV files and real XLSX workbooks."""

from __future__ import annotations

import datetime as dt
import re
from pathlib import Path

import numpy as np
import pytest
from _io_helpers import (
    codes,
    csv_text,
    daily_rows,
    find_problem,
    read_book_client,
    write_book,
    write_xlsx,
)

from reportgen.io.model import ClientRecord

FORMATS = ("csv", "xlsx")


def _as_cells(rows: list[list[object]]) -> list[list[object]]:
    """For XLSX: ISO date text in the first column becomes a real date cell, numbers numbers."""
    out: list[list[object]] = [rows[0]]
    for r in rows[1:]:
        cells: list[object] = []
        for i, v in enumerate(r):
            if i == 0 and isinstance(v, str) and len(v) == 10 and v[4] == "-":
                try:
                    cells.append(dt.date.fromisoformat(v))
                    continue
                except ValueError:
                    pass
            if isinstance(v, str):
                try:
                    cells.append(float(v))
                    continue
                except ValueError:
                    pass
            cells.append(v)
        out.append(cells)
    return out


def read_log(tmp_path: Path, rows: list[list[object]], fmt: str, **kw: object) -> ClientRecord:
    """Write ``rows`` as logs/c001.csv or logs/c001.xlsx (sheet daily) and read client c001."""
    book = tmp_path / "book"
    if fmt == "csv":
        write_book(book, logs={"c001.csv": csv_text(rows)})
    else:
        write_book(book, logs={})
        write_xlsx(book / "logs" / "c001.xlsx", {"daily": _as_cells(rows)})
    return read_book_client(book, **kw)  # type: ignore[arg-type]


def logfile(fmt: str) -> str:
    return f"logs/c001.{fmt}"


@pytest.mark.parametrize("fmt", FORMATS)
def test_clean_log_has_no_problems(tmp_path: Path, fmt: str) -> None:
    rec = read_log(tmp_path, daily_rows(), fmt)
    assert rec.problems == ()
    assert rec.ok
    assert rec.log.n_days == 61
    assert str(rec.log.dates[0]) == "2026-10-01"
    assert rec.log.weight_kg[0] == pytest.approx(82.3, abs=1e-9)  # first row as written
    assert not rec.log.weight_outlier.any()
    assert rec.source_files == ("clients.csv", logfile(fmt))


@pytest.mark.parametrize("fmt", FORMATS)
def test_missing_required_column(tmp_path: Path, fmt: str) -> None:
    rows = [[r[0], r[2]] for r in daily_rows()]  # no weight column
    rec = read_log(tmp_path, rows, fmt)
    assert not rec.ok
    find_problem(
        rec.problems,
        "missing-column",
        match=r'has no "weight_kg" or "weight_lb" column; add it to the header row',
        severity="error",
        file=logfile(fmt),
        row=1,
    )


@pytest.mark.parametrize("fmt", FORMATS)
def test_unparseable_number(tmp_path: Path, fmt: str) -> None:
    rows = daily_rows()
    rows[14][1] = "82,4kg"
    rec = read_log(tmp_path, rows, fmt)
    p = find_problem(
        rec.problems,
        "bad-number",
        match=r'weight_kg "82,4kg" is not a number; use a decimal point, not a comma',
        severity="error",
        file=logfile(fmt),
        row=15,
        column="weight_kg",
    )
    assert p.value == "82,4kg"
    assert "write the number alone" in p.message
    assert not rec.ok


@pytest.mark.parametrize("fmt", FORMATS)
def test_unparseable_date(tmp_path: Path, fmt: str) -> None:
    rows = daily_rows()
    rows[3][0] = "4th Oct 2026"
    rec = read_log(tmp_path, rows, fmt)
    find_problem(
        rec.problems,
        "bad-date",
        match=r'date "4th Oct 2026" is not a date; write dates as YYYY-MM-DD',
        file=logfile(fmt),
        row=4,
        column="date",
    )


@pytest.mark.parametrize("fmt", FORMATS)
def test_date_that_could_be_either_order_is_never_guessed(tmp_path: Path, fmt: str) -> None:
    rows = daily_rows()
    rows[3][0] = "04/10/2026"  # 4 October or April 10: nothing in the file settles it
    rec = read_log(tmp_path, rows, fmt)
    where = logfile(fmt) + (" (sheet daily)" if fmt == "xlsx" else "")
    find_problem(
        rec.problems,
        "ambiguous-dates",
        match=re.escape(
            f"{where}: no date in date shows whether dates are day-first or month-first "
            '("04/10/2026" could be either, and no day is above 12); add date_order = '
            '"day-first" (or "month-first") under [book] in the configuration file, or write '
            "the dates as YYYY-MM-DD"
        ),
        row=4,
        column="date",
    )


def test_impossible_calendar_date(tmp_path: Path) -> None:
    rows = daily_rows()
    rows[3][0] = "2026-02-30"
    rec = read_log(tmp_path, rows, "csv")
    find_problem(rec.problems, "bad-date", match=r'"2026-02-30" is not a real calendar date', row=4)


def test_xlsx_plain_number_in_date_column_is_refused(tmp_path: Path) -> None:
    """A serial day number without date format is not guessed (1900 or 1904 epoch?)."""
    rows = _as_cells(daily_rows())
    rows[5][0] = 46300.0
    book = write_book(tmp_path / "book", logs={})
    write_xlsx(book / "logs" / "c001.xlsx", {"daily": rows})
    rec = read_book_client(book)
    find_problem(
        rec.problems, "bad-date", match=r'date "46300" is a plain number, not a date', row=6
    )


@pytest.mark.parametrize("epoch_1904", [False, True])
def test_xlsx_real_and_text_dates_both_work(tmp_path: Path, epoch_1904: bool) -> None:
    """Real date cells (1900 and Mac 1904 date systems) and ISO text dates give the same days."""
    rows = _as_cells(daily_rows(days=20))
    for r in rows[1::2]:
        r[0] = r[0].isoformat() if isinstance(r[0], dt.date) else r[0]  # every other as text
    book = write_book(tmp_path / "book", logs={})
    write_xlsx(book / "logs" / "c001.xlsx", {"Daily": rows}, epoch_1904=epoch_1904)
    rec = read_book_client(book)
    assert rec.problems == ()
    assert str(rec.log.dates[0]) == "2026-10-01"
    assert str(rec.log.dates[-1]) == "2026-10-20"
    assert np.isfinite(rec.log.weight_kg).all()


@pytest.mark.parametrize("fmt", FORMATS)
def test_duplicate_date_with_different_values_is_an_error(tmp_path: Path, fmt: str) -> None:
    rows = daily_rows()
    rows.insert(11, [rows[10][0], "81.0", 1900, 8000])  # same date as row 11, other weight
    rec = read_log(tmp_path, rows, fmt)
    find_problem(
        rec.problems,
        "duplicate-date",
        match=r"date 2026-10-10 appears in rows 11 and 12 with different values; keep one row",
        severity="error",
        row=12,
    )


@pytest.mark.parametrize("fmt", FORMATS)
def test_duplicate_identical_row_is_only_a_warning(tmp_path: Path, fmt: str) -> None:
    rows = daily_rows()
    rows.insert(11, list(rows[10]))
    rec = read_log(tmp_path, rows, fmt)
    assert rec.ok
    find_problem(
        rec.problems,
        "duplicate-row",
        match=r"row 12 repeats row 11 \(date 2026-10-10, same values\); the repeat is ignored",
        severity="warning",
    )
    assert rec.log.n_days == 61


@pytest.mark.parametrize(
    ("column", "value", "pattern"),
    [
        ("weight_kg", "400", r'weight_kg "400" is outside the possible range 25-350 kg'),
        ("intake_kcal", "16000", r'intake_kcal "16000" is outside the possible range 0-15000 kcal'),
        ("steps", "-5", r'steps "-5" is outside the possible range 0-100000 steps'),
    ],
)
@pytest.mark.parametrize("fmt", FORMATS)
def test_values_outside_physical_limits(
    tmp_path: Path, fmt: str, column: str, value: str, pattern: str
) -> None:
    rows = daily_rows()
    # Ten days in a row: not an isolated outlier (those are excluded with a warning instead).
    for r in rows[20:30]:
        r[rows[0].index(column)] = value
    rec = read_log(tmp_path, rows, fmt)
    # Ten cells with one problem in one column: one message with the count and first rows.
    find_problem(
        rec.problems,
        "out-of-range",
        match=rf"^10 cells in column {column} have this problem \(rows 21, 22, 23, 24, 25, "
        rf"…\); the first: {pattern}",
        severity="error",
        row=21,
    )
    assert len(rec.problems) == 1
    assert not rec.ok


def test_isolated_impossible_weight_is_an_outlier_not_an_error(tmp_path: Path) -> None:
    """A single 400 among 82s is a typo the analysis can leave out (listed as a warning)."""
    rows = daily_rows()
    rows[20][1] = "400"
    rec = read_log(tmp_path, rows, "csv")
    assert rec.ok
    find_problem(rec.problems, "outlier", match=r'weight_kg "400" on 2026-10-20 is far', row=21)


def test_whole_series_far_too_low_is_an_error_not_outliers(tmp_path: Path) -> None:
    """A steady 8x series is not isolated: every value is outside the limits."""
    rows = daily_rows(days=10, weight0_kg=8.2, loss_kg_per_day=0.0)
    rec = read_log(tmp_path, rows, "csv")
    assert codes(rec.problems) == ["out-of-range"]
    assert rec.problems[0].message.startswith("10 cells in column weight_kg have this problem")
    assert rec.outliers == ()


def test_ratings_and_sleep_limits(tmp_path: Path) -> None:
    rows = [["date", "weight_kg", "intake_kcal", "hunger", "energy", "sleep_h"]]
    rows += [["2026-11-01", 80, 2000, 11, 5, 7], ["2026-11-02", 80, 2000, 5, 0, 25]]
    rec = read_log(tmp_path, rows, "csv")
    find_problem(rec.problems, "out-of-range", match=r'hunger "11" is outside .* 1-10 ', row=2)
    find_problem(rec.problems, "out-of-range", match=r'energy "0" is outside', row=3)
    find_problem(rec.problems, "out-of-range", match=r'sleep_h "25" is outside .* 0-24 h', row=3)


@pytest.mark.parametrize("fmt", FORMATS)
def test_both_units_that_disagree(tmp_path: Path, fmt: str) -> None:
    rows = [["date", "weight_kg", "weight_lb", "intake_kcal"]]
    rows += [["2026-11-01", "82.0", "180.8", 2000]]  # 180.8 lb = 82.01 kg: agrees
    rows += [["2026-11-02", "82.0", "170", 2000]]  # 170 lb = 77.1 kg
    rec = read_log(tmp_path, rows, fmt)
    find_problem(
        rec.problems,
        "unit-conflict",
        match=r'has both weight_kg "82(\.0)?" and weight_lb "170" on 2026-11-02 with different '
        r"values \(82.0 vs 77.1 kg\); keep one",
        severity="error",
        row=3,
    )
    assert len(rec.errors) == 1


@pytest.mark.parametrize("fmt", FORMATS)
def test_lb_and_kj_are_converted_once(tmp_path: Path, fmt: str) -> None:
    rows = [["date", "Weight_LB ", " intake_kJ"], ["2026-11-01", "180", "8368"]]
    rec = read_log(tmp_path, rows, fmt)
    assert rec.problems == ()
    # 1 lb = 0.45359237 kg exactly and 1 kcal = 4.184 kJ exactly (NIST SP 811, appendix B).
    assert rec.log.weight_kg[0] == pytest.approx(180 * 0.45359237, abs=1e-9)
    assert rec.log.intake_kcal[0] == pytest.approx(2000.0, abs=1e-9)


def test_lb_out_of_range_message_shows_converted_value(tmp_path: Path) -> None:
    rows = [["date", "weight_lb", "intake_kcal"], ["2026-11-01", "900", 2000]]
    rec = read_log(tmp_path, rows, "csv")
    find_problem(
        rec.problems, "out-of-range", match=r'weight_lb "900" \(= 408.2 kg\) is outside .* 25-350'
    )


@pytest.mark.parametrize("fmt", FORMATS)
def test_isolated_outlier_is_excluded_not_deleted(tmp_path: Path, fmt: str) -> None:
    rows = daily_rows()
    rows[30][1] = "8.2"  # 8.2 among 82s: a digit lost while typing
    rec = read_log(tmp_path, rows, fmt)
    assert rec.ok
    p = find_problem(
        rec.problems,
        "outlier",
        match=r'weight_kg "8.2" on 2026-10-30 is far from the level of the weigh-ins around it '
        r"\(80.\d kg\); it is left out of the analysis",
        severity="warning",
        row=31,
        column="weight_kg",
    )
    assert p.value == "8.2"
    i = 29
    assert rec.log.weight_kg[i] == pytest.approx(8.2)  # raw value kept
    assert rec.log.weight_outlier[i]
    assert np.isnan(rec.log.weight_used_kg[i])
    assert rec.log.weight_outlier.sum() == 1
    assert rec.outliers == ((dt.date(2026, 10, 30), pytest.approx(8.2)),)


@pytest.mark.parametrize("fmt", FORMATS)
def test_future_dates_are_ignored_with_a_warning(tmp_path: Path, fmt: str) -> None:
    rows = daily_rows(start=dt.date(2026, 11, 1), days=30)
    rows.append(["2026-11-28", "80", 1900, 8000])  # duplicate-free: replaced below
    rows[-1] = ["2026-12-05", "80", 1900, 8000]
    rec = read_log(tmp_path, rows, fmt, month_end=dt.date(2026, 12, 31), today=dt.date(2026, 12, 1))
    find_problem(
        rec.problems,
        "future-date",
        match=r"date 2026-12-05 is after today \(2026-12-01\); the row is ignored",
        severity="warning",
        row=32,
    )
    assert str(rec.log.dates[-1]) == "2026-11-30"


def test_data_after_month_end_is_cut_silently(tmp_path: Path) -> None:
    rows = daily_rows(start=dt.date(2026, 11, 1), days=40)  # to 2026-12-10
    rec = read_log(tmp_path, rows, "csv", today=dt.date(2026, 12, 31))
    assert rec.problems == ()
    assert str(rec.log.dates[-1]) == "2026-11-30"


@pytest.mark.parametrize("fmt", FORMATS)
def test_gap_longer_than_seven_days(tmp_path: Path, fmt: str) -> None:
    rows = daily_rows()
    del rows[11:20]  # 2026-10-11 .. 2026-10-19 missing: 9 days
    rec = read_log(tmp_path, rows, fmt)
    find_problem(
        rec.problems,
        "gap",
        match=r"no entries for 9 days \(2026-10-11 to 2026-10-19\)",
        severity="warning",
        row=12,
        column="date",
    )
    assert rec.ok


def test_seven_day_gap_is_fine(tmp_path: Path) -> None:
    rows = daily_rows()
    del rows[11:18]  # 7 days
    assert read_log(tmp_path, rows, "csv").problems == ()


@pytest.mark.parametrize("fmt", FORMATS)
def test_unknown_column_warns(tmp_path: Path, fmt: str) -> None:
    rows = daily_rows()
    for i, r in enumerate(rows):
        r.append("mood" if i == 0 else "ok")
    rec = read_log(tmp_path, rows, fmt)
    find_problem(
        rec.problems,
        "unknown-column",
        match=r'column "mood" in logs/c001\.\w+( \(sheet daily\))? is not one reportgen uses',
        severity="warning",
        column="mood",
    )
    assert rec.ok


def test_column_names_are_case_and_space_insensitive(tmp_path: Path) -> None:
    rows = daily_rows()
    rows[0] = [" Date", "WEIGHT_KG ", "Intake_Kcal", " steps "]
    assert read_log(tmp_path, rows, "csv").problems == ()


def test_duplicate_column_is_an_error(tmp_path: Path) -> None:
    rows = daily_rows()
    rows[0][3] = "Weight_kg"
    rec = read_log(tmp_path, rows, "csv")
    find_problem(rec.problems, "duplicate-column", match=r'column "Weight_kg" appears twice', row=1)


def test_utf8_bom_is_accepted(tmp_path: Path) -> None:
    book = write_book(
        tmp_path / "book", logs={"c001.csv": b"\xef\xbb\xbf" + csv_text(daily_rows()).encode()}
    )
    assert read_book_client(book).problems == ()


def test_cp1252_file_is_read_with_a_warning(tmp_path: Path) -> None:
    rows = daily_rows()
    rows[0].append("note")
    for r in rows[1:]:
        r.append("café")
    data = csv_text(rows).encode("cp1252")
    book = write_book(tmp_path / "book", logs={"c001.csv": data})
    rec = read_book_client(book)
    find_problem(
        rec.problems,
        "encoding-fallback",
        match=r'logs/c001.csv is not UTF-8; it was read as Windows-1252 \(cp1252\).*"CSV UTF-8"',
        severity="warning",
        file="logs/c001.csv",
    )
    assert rec.ok


def test_xlsx_that_is_not_a_workbook(tmp_path: Path) -> None:
    book = write_book(tmp_path / "book", logs={"c001.xlsx": "date,weight_kg\n2026-11-01,80\n"})
    rec = read_book_client(book)
    find_problem(
        rec.problems,
        "unreadable-file",
        match=r"logs/c001.xlsx is not a readable Excel workbook .*save it again as .xlsx",
        severity="error",
        file="logs/c001.xlsx",
    )
    assert not rec.ok


def test_xlsx_without_daily_sheet(tmp_path: Path) -> None:
    book = write_book(tmp_path / "book", logs={})
    write_xlsx(book / "logs" / "c001.xlsx", {"Sheet1": _as_cells(daily_rows())})
    find_problem(
        read_book_client(book).problems,
        "missing-sheet",
        match=r"has no sheet named daily \(sheets: Sheet1\)",
    )


def test_missing_log_file(tmp_path: Path) -> None:
    book = write_book(tmp_path / "book", logs={})
    find_problem(
        read_book_client(book).problems,
        "missing-file",
        match=r"no daily log: expected logs/c001.csv or logs/c001.xlsx",
    )


def test_both_csv_and_xlsx_log(tmp_path: Path) -> None:
    book = write_book(tmp_path / "book")
    write_xlsx(book / "logs" / "c001.xlsx", {"daily": _as_cells(daily_rows())})
    find_problem(
        read_book_client(book).problems,
        "two-sources",
        match=r"both logs/c001.csv and logs/c001.xlsx exist; keep one daily log",
    )


def test_log_with_only_a_header(tmp_path: Path) -> None:
    book = write_book(tmp_path / "book", logs={"c001.csv": "date,weight_kg,intake_kcal\n"})
    find_problem(
        read_book_client(book).problems, "no-data", match=r"has no dated rows up to 2026-11-30"
    )


def test_empty_log_file(tmp_path: Path) -> None:
    book = write_book(tmp_path / "book", logs={"c001.csv": ""})
    find_problem(
        read_book_client(book).problems, "empty-file", match=r"is empty; it needs a header"
    )


def test_values_without_a_date(tmp_path: Path) -> None:
    rows = daily_rows()
    rows[5][0] = ""
    find_problem(
        read_log(tmp_path, rows, "csv").problems,
        "missing-value",
        match=r"row 6 has values but no date; add the date",
    )


def test_cells_beyond_the_header(tmp_path: Path) -> None:
    rows = daily_rows()
    rows[5].append("stray")
    find_problem(
        read_log(tmp_path, rows, "csv").problems,
        "extra-cells",
        match=r"row 6 of logs/c001.csv has values beyond the last named column",
    )


def test_semicolon_separated_file_gets_a_hint(tmp_path: Path) -> None:
    text = "date;weight_kg;intake_kcal\n2026-11-01;80;2000\n"
    book = write_book(tmp_path / "book", logs={"c001.csv": text})
    find_problem(
        read_book_client(book).problems,
        "missing-column",
        match=r'no "date" column.*semicolon-separated: save the file as comma-separated CSV',
    )


def test_blank_rows_are_skipped_and_row_numbers_stay_true(tmp_path: Path) -> None:
    text = csv_text(daily_rows(days=5))
    lines = text.splitlines()
    lines.insert(3, ",,,")
    lines.insert(4, "")
    lines[6] = lines[6].replace(lines[6].split(",")[1], "x1", 1)
    book = write_book(tmp_path / "book", logs={"c001.csv": "\n".join(lines) + "\n"})
    find_problem(
        read_book_client(book).problems, "bad-number", match=r'"x1" is not a number', row=7
    )


def test_problems_in_rows_after_the_month_belong_to_a_later_report(tmp_path: Path) -> None:
    rows = daily_rows(start=dt.date(2026, 10, 1), days=45)  # to 2026-11-14
    rows[40][1] = "81,6kg"  # 2026-11-09
    rows.append(["2026-12-20", "x", 1900, 8000])  # future and unreadable
    october = read_log(tmp_path, rows, "csv", month_end=dt.date(2026, 10, 31))
    assert october.ok
    find_problem(october.problems, "future-date", match=r"2026-12-20 is after today", row=47)
    assert [p.code for p in october.problems] == ["future-date"]
    november = read_log(tmp_path / "n", rows, "csv", month_end=dt.date(2026, 11, 30))
    find_problem(november.problems, "bad-number", match=r'"81,6kg" is not a number', row=41)
