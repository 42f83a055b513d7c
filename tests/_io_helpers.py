"""Helpers for the io tests: write real client books (CSV text, XLSX through openpyxl)."""

from __future__ import annotations

import datetime as dt
import re
from collections.abc import Iterable, Sequence
from pathlib import Path

from reportgen.io.book import read_client, read_roster
from reportgen.io.model import ClientRecord, Problem

MONTH_END = dt.date(2026, 11, 30)
TODAY = dt.date(2026, 12, 1)

ROSTER_HEADER = "client_id,name,sex,birth_date,height_cm,email,pregnant"
ROSTER_ROW = "c001,Ada Test,female,1990-05-01,168,ada@example.org,no"


def csv_text(rows: Iterable[Sequence[object]]) -> str:
    """Comma-separated text (values containing commas or quotes are quoted)."""
    import csv
    import io

    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    for r in rows:
        w.writerow(["" if v is None else v for v in r])
    return buf.getvalue()


def daily_rows(
    start: dt.date = dt.date(2026, 10, 1),
    days: int = 61,
    weight0_kg: float = 82.0,
    loss_kg_per_day: float = 0.05,
    intake_kcal: float = 1900.0,
) -> list[list[object]]:
    """A clean daily log with a steady trend and a small deterministic wobble (invented)."""
    rows: list[list[object]] = [["date", "weight_kg", "intake_kcal", "steps"]]
    for i in range(days):
        wobble = (0.3, -0.2, 0.1, -0.3, 0.2, 0.0, -0.1)[i % 7]
        w = weight0_kg - loss_kg_per_day * i + wobble
        rows.append([(start + dt.timedelta(days=i)).isoformat(), f"{w:.1f}", intake_kcal, 8000])
    return rows


def write_book(
    root: Path,
    *,
    roster: str | None = None,
    logs: dict[str, str | bytes] | None = None,
    skinfolds: dict[str, str] | None = None,
    phases: str | None = None,
) -> Path:
    """Write a book folder; ``logs`` maps file names (``c001.csv``) to contents."""
    root.mkdir(parents=True, exist_ok=True)
    (root / "logs").mkdir(exist_ok=True)
    (root / "clients.csv").write_text(
        roster if roster is not None else f"{ROSTER_HEADER}\n{ROSTER_ROW}\n", encoding="utf-8"
    )
    if logs is None:
        logs = {"c001.csv": csv_text(daily_rows())}
    for name, content in logs.items():
        p = root / "logs" / name
        if isinstance(content, bytes):
            p.write_bytes(content)
        else:
            p.write_text(content, encoding="utf-8")
    if skinfolds:
        (root / "skinfolds").mkdir(exist_ok=True)
        for name, text in skinfolds.items():
            (root / "skinfolds" / name).write_text(text, encoding="utf-8")
    if phases is not None:
        (root / "phases.csv").write_text(phases, encoding="utf-8")
    return root


def write_xlsx(
    path: Path, sheets: dict[str, Sequence[Sequence[object]]], *, epoch_1904: bool = False
) -> Path:
    """A real workbook written by openpyxl (dates as real date cells when given as dates)."""
    import openpyxl
    from openpyxl.utils.datetime import CALENDAR_MAC_1904

    wb = openpyxl.Workbook()
    if epoch_1904:
        wb.epoch = CALENDAR_MAC_1904
    first = True
    for name, rows in sheets.items():
        ws = wb.active if first else wb.create_sheet()
        assert ws is not None
        ws.title = name
        first = False
        for r in rows:
            ws.append(list(r))
    path.parent.mkdir(parents=True, exist_ok=True)
    wb.save(path)
    return path


def read_book_client(
    book: Path,
    client_id: str = "c001",
    month_end: dt.date = MONTH_END,
    today: dt.date = TODAY,
) -> ClientRecord:
    """read_roster + read_client for one client, with the roster problems passed on."""
    roster = read_roster(book, today=today)
    client = next(c for c in roster.clients if c.client_id == client_id)
    return read_client(
        book,
        client,
        roster.phases.get(client_id, ()),
        month_end,
        today,
        roster_problems=roster.problems,
    )


def find_problem(
    problems: Iterable[Problem],
    code: str,
    *,
    match: str,
    severity: str | None = None,
    file: str | None = None,
    row: int | None = None,
    column: str | None = None,
) -> Problem:
    """The one problem of kind ``code`` whose message matches ``match`` (regex), checked.

    Fails with a readable list of what was found otherwise.
    """
    problems = list(problems)
    hits = [p for p in problems if p.code == code and re.search(match, p.message)]
    listing = "\n".join(f"  {p.severity} {p.code} {p.location}: {p.message}" for p in problems)
    assert len(hits) == 1, f"expected one {code!r} matching {match!r}, found:\n{listing}"
    p = hits[0]
    if severity is not None:
        assert p.severity == severity, f"{p} is not a {severity}"
    if file is not None:
        assert p.file == file, f"{p.file} != {file}"
    if row is not None:
        assert p.row == row, f"row {p.row} != {row}"
    if column is not None:
        assert p.column == column, f"column {p.column} != {column}"
    return p


def codes(problems: Iterable[Problem]) -> list[str]:
    return sorted(p.code for p in problems)
