"""Roster and phases: book-level files, their errors, and clients needing special handling."""

from __future__ import annotations

import datetime as dt
from pathlib import Path

import pytest
from _io_helpers import (
    ROSTER_HEADER,
    ROSTER_ROW,
    csv_text,
    daily_rows,
    find_problem,
    read_book_client,
    write_book,
    write_xlsx,
)

from reportgen.io.book import read_roster
from reportgen.io.model import InputError

TODAY = dt.date(2026, 12, 1)


def roster_of(tmp_path: Path, text: str):  # type: ignore[no-untyped-def]
    return read_roster(write_book(tmp_path / "book", roster=text), today=TODAY)


def test_roster_reads_every_contract_column(tmp_path: Path) -> None:
    text = (
        "Client_ID , Name,sex,birth_date,height_in,email,pregnant,goal_weight_lb,referral_email\n"
        "c001,Zoë Łukasiewicz-Øster,F,1990-05-01,65,z@example.org,no,150,gp@example.org\n"
    )
    roster = roster_of(tmp_path, text)
    assert roster.problems == ()
    (c,) = roster.clients
    assert c.client_id == "c001"
    assert c.name == "Zoë Łukasiewicz-Øster"
    assert c.sex == "female"
    assert c.birth_date == dt.date(1990, 5, 1)
    # 1 in = 2.54 cm and 1 lb = 0.45359237 kg exactly (NIST SP 811, appendix B).
    assert c.height_cm == pytest.approx(65 * 2.54, abs=1e-9)
    assert c.goal_weight_kg == pytest.approx(150 * 0.45359237, abs=1e-9)
    assert c.extra == {"referral_email": "gp@example.org"}
    assert (c.roster_file, c.roster_row) == ("clients.csv", 2)


def test_roster_as_xlsx_with_real_date_cells(tmp_path: Path) -> None:
    book = tmp_path / "book"
    write_book(book)
    (book / "clients.csv").unlink()
    write_xlsx(
        book / "clients.xlsx",
        {
            "clients": [
                ["client_id", "name", "sex", "birth_date", "height_cm"],
                [1001, "Ada", "M", dt.date(1980, 2, 29), 180],
            ]
        },
    )
    roster = read_roster(book, today=TODAY)
    assert roster.problems == ()
    assert roster.clients[0].client_id == "1001"
    assert roster.clients[0].birth_date == dt.date(1980, 2, 29)
    assert roster.source_files == ("clients.xlsx",)


def test_no_roster_is_an_unusable_book(tmp_path: Path) -> None:
    (tmp_path / "book").mkdir()
    with pytest.raises(InputError, match=r"has no clients.csv or clients.xlsx"):
        read_roster(tmp_path / "book")


def test_both_roster_files_is_an_unusable_book(tmp_path: Path) -> None:
    book = write_book(tmp_path / "book")
    write_xlsx(book / "clients.xlsx", {"clients": [["client_id"], ["c001"]]})
    with pytest.raises(InputError, match=r"both clients.csv and clients.xlsx; keep one"):
        read_roster(book)


def test_roster_without_client_id_column(tmp_path: Path) -> None:
    with pytest.raises(InputError, match=r'clients.csv has no "client_id" column'):
        roster_of(tmp_path, "id,name\nc001,Ada\n")


def test_corrupt_roster_workbook(tmp_path: Path) -> None:
    book = write_book(tmp_path / "book")
    (book / "clients.csv").unlink()
    (book / "clients.xlsx").write_bytes(b"PK\x03\x04 not really a zip")
    with pytest.raises(InputError, match=r"clients.xlsx is not a readable Excel workbook"):
        read_roster(book)


def test_bad_client_ids_and_duplicates(tmp_path: Path) -> None:
    text = f"{ROSTER_HEADER}\n{ROSTER_ROW}\nc 2,Bo,male,1980-01-01,180,,no\n" + ROSTER_ROW + "\n"
    roster = roster_of(tmp_path, text)
    find_problem(roster.problems, "bad-client-id", match=r'client_id "c 2" is not usable', row=3)
    p = find_problem(
        roster.problems, "duplicate-client", match=r'"c001" appears in rows 2 and 4', row=4
    )
    assert p.client_id == "c001"
    assert [c.client_id for c in roster.clients] == ["c001"]


def test_bad_roster_values_make_that_client_fail(tmp_path: Path) -> None:
    text = f"{ROSTER_HEADER}\nc001,Ada,woman,01.05.1990,2.1,,maybe\n"
    book = write_book(tmp_path / "book", roster=text)
    rec = read_book_client(book)
    assert not rec.ok
    find_problem(rec.problems, "bad-value", match=r'sex "woman" is not a sex we know', row=2)
    find_problem(rec.problems, "bad-date", match=r'birth_date "01.05.1990" is not a date', row=2)
    find_problem(rec.problems, "out-of-range", match=r'height_cm "2.1" is outside .* 100-250 cm')
    find_problem(rec.problems, "bad-value", match=r'pregnant "maybe" is not yes or no')


def test_birth_date_in_the_future(tmp_path: Path) -> None:
    roster = roster_of(tmp_path, f"{ROSTER_HEADER}\nc001,Ada,f,2030-01-01,160,,no\n")
    find_problem(roster.problems, "out-of-range", match=r"birth_date 2030-01-01 gives an age")


def test_minor_is_marked_with_special_handling(tmp_path: Path) -> None:
    text = f"{ROSTER_HEADER}\nc001,Teen,f,2009-01-15,160,,no\n"
    book = write_book(tmp_path / "book", roster=text)
    rec = read_book_client(book)  # 17 on 2026-11-30
    assert rec.minor
    assert rec.ok
    find_problem(
        rec.problems,
        "special-handling",
        match=r"client is 17 at the end of the report month \(under 18\): no deficit analysis",
        severity="warning",
        file="clients.csv",
        row=2,
        column="birth_date",
    )
    # Eighteen before the end of the month: an adult for that report.
    rec = read_book_client(book, month_end=dt.date(2027, 1, 31), today=dt.date(2027, 2, 1))
    assert not rec.minor
    assert rec.problems == ()


def test_pregnant_client_is_marked_with_special_handling(tmp_path: Path) -> None:
    text = f"{ROSTER_HEADER}\nc001,Ada,female,1990-05-01,168,,Yes\n"
    rec = read_book_client(write_book(tmp_path / "book", roster=text))
    assert rec.client.pregnant
    find_problem(
        rec.problems,
        "special-handling",
        match=r"client is marked pregnant: no deficit analysis",
        severity="warning",
        column="pregnant",
    )


PHASES_HEADER = "client_id,name,start,end,kind,target_kcal\n"


def test_phases_are_read_and_sorted(tmp_path: Path) -> None:
    phases = (
        PHASES_HEADER
        + "c001,Cut,2026-09-01,,deficit,1800\n"
        + "c001,Baseline,2026-08-01,2026-08-31,Maintenance,\n"
    )
    roster = read_roster(write_book(tmp_path / "book", phases=phases))
    assert roster.problems == ()
    p0, p1 = roster.phases["c001"]
    assert (p0.name, p0.kind, p0.end) == ("Baseline", "maintenance", dt.date(2026, 8, 31))
    assert (p1.name, p1.end, p1.target_kcal) == ("Cut", None, 1800.0)
    assert roster.source_files == ("clients.csv", "phases.csv")


def test_phase_for_unknown_client(tmp_path: Path) -> None:
    phases = PHASES_HEADER + "c001,Cut,2026-09-01,,deficit,\nc099,Cut,2026-09-01,,deficit,\n"
    roster = read_roster(write_book(tmp_path / "book", phases=phases))
    p = find_problem(
        roster.problems,
        "unknown-client",
        match=r'phases.csv has a phase for client_id "c099", who is not in clients.csv',
        severity="error",
        file="phases.csv",
        row=3,
    )
    assert p.client_id == "c099"


def test_overlapping_phases_make_the_client_fail(tmp_path: Path) -> None:
    phases = (
        PHASES_HEADER
        + "c001,Cut,2026-08-01,2026-09-30,deficit,\n"
        + "c001,Break,2026-09-20,,break,\n"
    )
    rec = read_book_client(write_book(tmp_path / "book", phases=phases))
    assert not rec.ok
    find_problem(
        rec.problems,
        "overlapping-phases",
        match=r'phase "Break" \(starts 2026-09-20\) overlaps phase "Cut" '
        r"\(2026-08-01 to 2026-09-30\)",
        file="phases.csv",
        row=3,
    )


def test_running_phase_followed_by_another_overlaps(tmp_path: Path) -> None:
    phases = PHASES_HEADER + "c001,A,2026-08-01,,deficit,\nc001,B,2026-10-01,,break,\n"
    roster = read_roster(write_book(tmp_path / "book", phases=phases))
    find_problem(roster.problems, "overlapping-phases", match=r"\(2026-08-01 still running\)")


def test_bad_phase_rows(tmp_path: Path) -> None:
    phases = (
        PHASES_HEADER
        + "c001,A,2026-08-01,2026-07-01,deficit,\n"
        + "c001,B,2026-09-01,,diet,\n"
        + "c001,C,,,break,\n"
        + "c001,D,2026-11-01,,surplus,99999\n"
    )
    roster = read_roster(write_book(tmp_path / "book", phases=phases))
    find_problem(roster.problems, "bad-value", match=r"phase ends \(2026-07-01\) before it starts")
    find_problem(roster.problems, "bad-value", match=r'kind "diet" is not a phase kind; use one')
    find_problem(roster.problems, "missing-value", match=r"phase in row 4 has no start date")
    find_problem(roster.problems, "out-of-range", match=r'target_kcal "99999" is outside')


def test_phases_sheet_in_the_workbook(tmp_path: Path) -> None:
    book = write_book(tmp_path / "book", logs={})
    rows = daily_rows()
    write_xlsx(
        book / "logs" / "c001.xlsx",
        {
            "daily": rows,
            "phases": [
                ["name", "start", "end", "kind"],
                ["Cut", dt.date(2026, 8, 1), dt.date(2026, 12, 31), "deficit"],
                ["Next year", dt.date(2027, 1, 1), None, "maintenance"],
            ],
        },
    )
    rec = read_book_client(book)
    assert rec.problems == ()
    # The phase starting after the report month is not part of this report.
    assert [p.name for p in rec.phases] == ["Cut"]


def test_phases_in_both_places(tmp_path: Path) -> None:
    book = write_book(
        tmp_path / "book", logs={}, phases=PHASES_HEADER + "c001,Cut,2026-08-01,,deficit,\n"
    )
    write_xlsx(
        book / "logs" / "c001.xlsx",
        {"daily": daily_rows(), "phases": [["start", "kind"], ["2026-08-01", "deficit"]]},
    )
    find_problem(
        read_book_client(book).problems,
        "two-sources",
        match=r"phases are in both phases.csv and logs/c001.xlsx \(sheet phases\); keep one",
    )


def test_phases_csv_missing_kind_column(tmp_path: Path) -> None:
    roster = read_roster(write_book(tmp_path / "book", phases="client_id,start\nc001,2026-08-01\n"))
    find_problem(roster.problems, "missing-column", match=r'phases.csv has no "kind" column')


def test_cp1252_roster(tmp_path: Path) -> None:
    book = write_book(tmp_path / "book")
    (book / "clients.csv").write_bytes(
        csv_text([["client_id", "name"], ["c001", "Hélène Müller"]]).encode("cp1252")
    )
    roster = read_roster(book)
    assert roster.clients[0].name == "Hélène Müller"
    find_problem(roster.problems, "encoding-fallback", match=r"clients.csv is not UTF-8")


def test_blank_roster_details_warn(tmp_path: Path) -> None:
    roster = roster_of(tmp_path, f"{ROSTER_HEADER}\nc001,Ada,,,168,,no\nc002,Bo,m,1980-01-01,,,\n")
    find_problem(
        roster.problems,
        "missing-detail",
        match=r"sex and birth_date are blank: .*cannot tell whether the client is a minor",
        severity="warning",
        row=2,
        column="sex",
    )
    find_problem(
        roster.problems,
        "missing-detail",
        match=r"height_cm is blank: BMI and expected expenditure need the height",
        row=3,
    )
    # A bad value is reported as the error it is, not again as blank.
    roster = roster_of(tmp_path / "again", f"{ROSTER_HEADER}\nc001,Ada,x,1990-01-01,168,,no\n")
    assert [p.code for p in roster.problems] == ["bad-value"]


def test_roster_workbook_without_a_clients_sheet_uses_the_first(tmp_path: Path) -> None:
    book = write_book(tmp_path / "book")
    (book / "clients.csv").unlink()
    write_xlsx(
        book / "clients.xlsx",
        {"Sheet": [["client_id", "name"], ["c001", "Ada"]], "notes": [["x"]]},
    )
    roster = read_roster(book, today=TODAY)
    assert [c.name for c in roster.clients] == ["Ada"]
    assert roster.clients[0].roster_file == "clients.xlsx"
