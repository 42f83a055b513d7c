"""`reportgen check`: the sample book's deliberate problems, exit codes, JSON, inputs untouched."""

from __future__ import annotations

import datetime as dt
import hashlib
import json
import re
from pathlib import Path

import pytest
from _io_helpers import (
    ROSTER_HEADER,
    csv_text,
    daily_rows,
    read_book_client,
    write_book,
    write_xlsx,
)
from click.testing import CliRunner
from conftest import SAMPLE_BOOK

from reportgen.cli import main
from reportgen.io.check import check_book

TODAY = "2026-12-01"  # the sample scenario's "today"

#: Plain-language kinds used in sample_inputs/EXPECTED_PROBLEMS.md -> our Problem codes.
KIND_CODES = {
    "unknown column": "unknown-column",
    "gap longer than 7 days": "gap",
    "weigh-in outlier": "outlier",
    "not a number": "bad-number",
    "not a date": "bad-date",
    "future date": "future-date",
    "outside physical limits": "out-of-range",
    "skinfold readings disagree": "skinfold-disagreement",
    "encoding fallback": "encoding-fallback",
    "special handling": "special-handling",
    "headers read as": "header-read-as",
    "date order": "date-order",
}


def expected_sample_problems() -> list[tuple[str, str, str, int | None, str, str]]:
    """(severity, code, file, row, column, value) rows of EXPECTED_PROBLEMS.md's table."""
    text = (SAMPLE_BOOK / "EXPECTED_PROBLEMS.md").read_text(encoding="utf-8")
    out = []
    for line in text.splitlines():
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        if len(cells) < 6 or cells[0] not in ("error", "warning", "note"):
            continue
        severity, kind, file, row, column, value = cells[:6]
        assert kind in KIND_CODES, f"add the kind {kind!r} of EXPECTED_PROBLEMS.md to KIND_CODES"
        out.append(
            (
                severity,
                KIND_CODES[kind],
                file,
                int(row) if row else None,
                column or None,
                value.strip("`") or None,
            )
        )
    assert out, "EXPECTED_PROBLEMS.md has no table rows"
    return sorted(out, key=str)


def run(*args: str) -> tuple[int, str, str]:
    result = CliRunner().invoke(main, ["check", *args], catch_exceptions=False)
    return result.exit_code, result.stdout, result.stderr


def test_sample_book_reports_exactly_the_deliberate_problems(sample_book: Path) -> None:
    code, out, _ = run(str(sample_book), "--today", TODAY, "--json")
    data = json.loads(out)
    found = sorted(
        (
            (p["severity"], p["code"], p["file"], p["row"], p["column"], p["value"])
            for p in data["problems"]
        ),
        key=str,
    )
    assert found == expected_sample_problems()
    assert data["month"] == "2026-11"
    assert data["clients_checked"] == 17
    n_err = sum(1 for p in found if p[0] == "error")
    assert code == (1 if n_err else 0)


def test_sample_book_table_output(sample_book: Path) -> None:
    code, out, _ = run(str(sample_book), "--month", "2026-11", "--today", TODAY)
    expected = expected_sample_problems()
    for severity, _, file, row, column, _ in expected:
        loc = ":".join(str(x) for x in (file, row, column) if x not in (None, ""))
        assert re.search(rf"{severity}\s+│\s+c\d+\s+│\s+{re.escape(loc)}\s", out), out
    n_err = sum(1 for p in expected if p[0] == "error")
    n_warn = sum(1 for p in expected if p[0] == "warning")
    n_note = sum(1 for p in expected if p[0] == "note")
    assert out.rstrip().splitlines()[-1] == (
        f"17 clients checked for 2026-11: {1 if n_err else 0} with errors, "
        f"{n_err} error{'s' * (n_err != 1)}, {n_warn} warning{'s' * (n_warn != 1)}, "
        f"{n_note} note{'s' * (n_note != 1)}"
    )
    assert code == (1 if n_err else 0)


def test_clean_book_exits_zero(tmp_path: Path) -> None:
    book = write_book(tmp_path / "book")
    code, out, _ = run(str(book), "--today", TODAY)
    assert code == 0
    assert out == "1 client checked for 2026-11: 0 with errors, 0 errors, 0 warnings\n"


def test_warnings_only_exit_zero_and_month_defaults_to_latest_data(tmp_path: Path) -> None:
    rows = daily_rows(start=dt.date(2026, 9, 1), days=45)  # to 2026-10-15
    rows[0].append("notes")
    book = write_book(tmp_path / "book", logs={"c001.csv": csv_text(rows)})
    code, out, _ = run(str(book), "--today", TODAY, "--json")
    data = json.loads(out)
    assert code == 0
    assert data["month"] == "2026-10"
    assert [p["code"] for p in data["problems"]] == ["unknown-column"]


def test_month_default_rereads_a_client_who_turns_18(tmp_path: Path) -> None:
    """Age is judged at the end of the month of the latest data, not at today."""
    roster = f"{ROSTER_HEADER}\nc001,Teen,f,2008-11-15,160,,no\n"
    rows = daily_rows(start=dt.date(2026, 9, 1), days=40)  # to 2026-10-10
    book = write_book(tmp_path / "book", roster=roster, logs={"c001.csv": csv_text(rows)})
    result = check_book(book, today=dt.date(2026, 12, 1))  # 18 today, 17 on 2026-10-31
    assert result.month == "2026-10"
    assert result.records[0].minor
    assert [p.code for p in result.problems] == ["special-handling"]


def test_errors_exit_one_and_book_level_problems_are_listed(tmp_path: Path) -> None:
    phases = "client_id,name,start,end,kind\nc404,Cut,2026-08-01,,deficit\n"
    book = write_book(tmp_path / "book", phases=phases)
    code, out, _ = run(str(book), "--today", TODAY)
    assert code == 1
    assert re.search(r"error\s+│\s+c404\s+│\s+phases.csv:2:client_id\s+│\s+phases.csv has a", out)
    assert "1 error," in out


def test_unusable_book_exits_two(tmp_path: Path) -> None:
    (tmp_path / "empty").mkdir()
    code, out, err = run(str(tmp_path / "empty"))
    assert code == 2
    assert out == ""
    assert re.fullmatch(
        r"reportgen check: \S+ has no clients.csv or clients.xlsx; is this the client book "
        r"folder\?\n",
        err,
    )
    code, out, _ = run(str(tmp_path / "empty"), "--json")
    assert code == 2
    assert json.loads(out)["unusable"]["code"] == "missing-file"


def test_roster_that_cannot_be_read_exits_two(tmp_path: Path) -> None:
    book = write_book(tmp_path / "book")
    (book / "clients.csv").unlink()
    (book / "clients.xlsx").write_text("not a workbook", encoding="utf-8")
    code, _, err = run(str(book))
    assert code == 2
    assert re.match(r"reportgen check: clients.xlsx: clients.xlsx is not a readable Excel", err)


def test_bad_month_option(tmp_path: Path) -> None:
    code, _, err = run(str(write_book(tmp_path / "book")), "--month", "November")
    assert code == 2
    assert "month 'November' is not in the form YYYY-MM" in err


def test_check_has_help() -> None:
    result = CliRunner().invoke(main, ["check", "--help"])
    assert result.exit_code == 0
    assert "Check the client book BOOK and list every problem found." in result.output
    assert "--json" in result.output
    assert "--month YYYY-MM" in result.output


def _snapshot(folder: Path) -> dict[str, tuple[str, int]]:
    return {
        str(p.relative_to(folder)): (
            hashlib.sha256(p.read_bytes()).hexdigest(),
            p.stat().st_mtime_ns,
        )
        for p in sorted(folder.rglob("*"))
        if p.is_file()
    }


def test_inputs_are_byte_identical_after_reading_and_checking(sample_book: Path) -> None:
    # Add a broken workbook and a cp1252 file so the failure paths are covered too.
    (sample_book / "clients.csv").write_bytes(
        (sample_book / "clients.csv").read_bytes() + b"c099,Ren\xe9,male,1980-01-01,180,,,,,,\n"
    )
    (sample_book / "logs" / "c099.xlsx").write_bytes(b"PK\x03\x04 broken")
    before = _snapshot(sample_book)
    assert any(name.endswith(".xlsx") for name in before)
    for args in ([], ["--json"], ["--month", "2026-10"]):
        run(str(sample_book), "--today", TODAY, *args)
    read_book_client(sample_book, "c002")
    read_book_client(sample_book, "c099")
    assert _snapshot(sample_book) == before
    assert not list(sample_book.rglob("~$*")), "no lock files left behind"


def test_shipped_sample_book_is_untouched_by_check() -> None:
    before = _snapshot(SAMPLE_BOOK)
    run(str(SAMPLE_BOOK), "--today", TODAY)
    assert _snapshot(SAMPLE_BOOK) == before


@pytest.mark.parametrize("fmt", ["csv", "xlsx"])
def test_one_broken_client_does_not_stop_the_others(tmp_path: Path, fmt: str) -> None:
    roster = f"{ROSTER_HEADER}\nc001,A,f,1990-01-01,160,,no\nc002,B,m,1980-01-01,180,,no\n"
    book = write_book(tmp_path / "book", roster=roster)
    if fmt == "csv":
        (book / "logs" / "c002.csv").write_text("garbage only\n", encoding="utf-8")
    else:
        write_xlsx(book / "logs" / "c002.xlsx", {"other": [["x"]]})
    result = check_book(book, today=dt.date(2026, 12, 1))
    assert [r.ok for r in result.records] == [True, False]
    assert result.clients_with_errors == ("c002",)


def test_files_no_client_reads_are_pointed_out(tmp_path: Path) -> None:
    book = write_book(tmp_path / "book")
    logs = book / "logs"
    (logs / "C001.csv").write_text("date\n", encoding="utf-8")  # wrong case: never read
    (logs / "c0O1.csv").write_text("date\n", encoding="utf-8")  # typo in the id
    (logs / "c001.numbers").write_bytes(b"")  # a format we do not read
    (logs / "~$c001.xlsx").write_bytes(b"lock")  # spreadsheet lock file: not mentioned
    (logs / ".DS_Store").write_bytes(b"")
    result = check_book(book, today=dt.date(2026, 12, 1))
    assert result.ok
    msgs = {p.file: (p.client_id, p.message) for p in result.warnings}
    assert set(msgs) == {"logs/C001.csv", "logs/c0O1.csv", "logs/c001.numbers"}
    assert re.search(
        r'not read: the name must match the client_id "c001" exactly', msgs["logs/C001.csv"][1]
    )
    assert re.search(
        r"not read: its name matches no client_id in clients.csv", msgs["logs/c0O1.csv"][1]
    )
    assert re.search(
        r"reportgen reads .csv, .xlsx, .xlsm, .xls or .ods files here", msgs["logs/c001.numbers"][1]
    )
    assert msgs["logs/c001.numbers"][0] == "c001"
