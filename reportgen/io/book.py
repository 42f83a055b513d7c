"""The client book as a whole: roster and phases, one client's files, and the book check.

``read_roster`` reads the book-level files once; ``read_client`` reads only one client's
files (so parallel workers each read their own client and memory stays flat).  Neither ever
writes to, moves or locks an input file.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Iterable
from pathlib import Path

from reportgen.io import guard, limits
from reportgen.io.daily import parse_daily
from reportgen.io.dates import DateOrder
from reportgen.io.model import (
    Client,
    ClientRecord,
    DailyLog,
    InputError,
    Phase,
    Problem,
    Roster,
    SkinfoldSession,
)
from reportgen.io.phases import check_overlaps, parse_phases
from reportgen.io.roster import parse_roster
from reportgen.io.skinfolds import parse_skinfolds
from reportgen.io.tables import Table, build_table, read_csv_table, read_xlsx_sheets

#: Workbook types calamine reads (no macro ever runs: only cell values are read).
WORKBOOK_TYPES = (".xlsx", ".xlsm", ".xls", ".ods")
#: File types of the roster and daily logs, in the order they are looked for.
TABLE_TYPES = (".csv", *WORKBOOK_TYPES)
ROSTER_FILES = tuple(f"clients{ext}" for ext in TABLE_TYPES)
PHASES_FILE = "phases.csv"
XLSX_SHEETS = ("daily", "skinfolds", "phases")
_TYPES_TEXT = ".csv, .xlsx, .xlsm, .xls or .ods"


def _unsupported(book: Path, folder: str, stem: str) -> str | None:
    """A file named like the wanted one but of a type reportgen does not read, if any."""
    base = book / folder if folder else book
    if not base.is_dir():
        return None
    for path in sorted(base.iterdir()):
        if path.stem == stem and path.suffix.lower() not in TABLE_TYPES and path.is_file():
            return f"{folder}/{path.name}" if folder else path.name
    return None


def _roster_file(book: Path) -> str:
    present = [f for f in ROSTER_FILES if (book / f).is_file()]
    other = None if present else _unsupported(book, "", "clients")
    if other is not None:
        raise InputError(
            Problem(
                "error",
                "unsupported-file",
                f"{other} is a file type reportgen does not read; save the roster as "
                f"clients with one of {_TYPES_TEXT}",
                file=other,
            )
        )
    if not present:
        raise InputError(
            Problem(
                "error",
                "missing-file",
                f"{book} has no clients.csv or clients.xlsx; is this the client book folder?",
            )
        )
    if len(present) > 1:
        raise InputError(
            Problem(
                "error",
                "two-sources",
                f"the book has both {' and '.join(present)}; keep one",
                file=present[1],
            )
        )
    return present[0]


def _roster_table(book: Path, rel: str) -> tuple[Table | None, list[Problem]]:
    if rel.endswith(".csv"):
        return read_csv_table(book, rel)
    # no sheet called "clients": the first sheet is the roster
    sheets, _, problems = read_xlsx_sheets(book, rel, ("clients",), first_sheet=True)
    if sheets is None:
        return None, problems
    if not sheets:
        return None, [
            Problem("error", "empty-file", f"{rel} has no sheets; it needs a clients sheet", rel)
        ]
    name, rows = sheets.get("clients") or sheets[""]
    table, more = build_table(rel, name, rows, None)
    return table, problems + more


def read_roster(book_dir: Path, today: dt.date | None = None) -> Roster:
    """Read the roster and ``phases.csv``.

    Raises :class:`InputError` only when the book itself is unusable (no roster file, or
    one that cannot be read); row-level problems go into ``Roster.problems``.
    """
    book = Path(book_dir)
    today = today or dt.date.today()
    if not book.is_dir():
        raise InputError(Problem("error", "missing-file", f"{book} is not a folder"))
    rel = _roster_file(book)
    table, problems = _roster_table(book, rel)
    fatal = [p for p in problems if p.code in ("unreadable-file", "empty-file", "file-too-large")]
    if table is None or fatal:
        raise InputError(fatal[0] if fatal else problems[0])
    clients, more = parse_roster(table, today)
    problems += more
    if any(p.code == "missing-column" for p in more):
        raise InputError(next(p for p in more if p.code == "missing-column"))
    phases: dict[str, tuple[Phase, ...]] = {}
    sources = [rel]
    state = guard.file_state(book / PHASES_FILE)
    if state not in ("absent", "regular"):  # never opened: a FIFO would block
        problems += [_skipped(PHASES_FILE, state, c.client_id, "the phases") for c in clients]
    elif state == "regular":
        sources.append(PHASES_FILE)
        ptable, pprobs = read_csv_table(book, PHASES_FILE)
        problems += pprobs
        if ptable is not None:
            by_client, pprobs = parse_phases(ptable)
            problems += pprobs
            known = {c.client_id for c in clients}
            for cid, rows in by_client.items():
                if cid not in known:
                    problems.append(
                        Problem(
                            "error",
                            "unknown-client",
                            f'phases.csv has a phase for client_id "{cid}", who is not in '
                            f"{rel}; add the client or correct the id",
                            file=PHASES_FILE,
                            row=rows[0][0],
                            column=ptable.raw_columns[ptable.index("client_id") or 0],
                            value=cid,
                            client_id=cid,
                        )
                    )
                    continue
                phases[cid], overlap = check_overlaps(rows, PHASES_FILE, cid)
                problems += overlap
    return Roster(
        book_dir=str(book.resolve()),
        clients=clients,
        phases=phases,
        problems=tuple(problems),
        source_files=tuple(sources),
    )


def _skipped(rel: str, state: str, client_id: str, what: str) -> Problem:
    """A warning for a folder, FIFO, device or broken link where an optional file belongs."""
    return Problem(
        "warning",
        "skipped-file",
        f"{rel} is {state}, not a file reportgen can read; this client's report is made "
        f"without {what} in it. Put the file there, or remove what is in its place",
        file=rel,
        client_id=client_id,
    )


def _client_problem(code: str, message: str, client: Client, file: str | None = None) -> Problem:
    return Problem("error", code, message, file=file, client_id=client.client_id)


def read_client(
    book_dir: Path,
    client: Client,
    phases: tuple[Phase, ...],
    month_end: dt.date,
    today: dt.date | None = None,
    *,
    roster_problems: Iterable[Problem] = (),
    date_order: DateOrder | None = None,
) -> ClientRecord:
    """Read and validate one client's files (never raises for bad data).

    Data after ``month_end`` is cut off silently; data after ``today`` is ignored with a
    ``future-date`` warning.  ``roster_problems`` may be all of ``Roster.problems``: those
    with this client's id are added to the record, so roster or phase errors make the record
    not ``ok``.  ``date_order`` is the ``[book] date_order`` setting (used only for a log
    whose dates could be read either way).
    """
    book = Path(book_dir)
    today = today or dt.date.today()
    cid = client.client_id
    problems: list[Problem] = [p for p in roster_problems if p.client_id == cid]
    sources: list[str] = []
    if client.roster_file:
        sources.append(client.roster_file)
    if (book / PHASES_FILE).is_file():  # it decides this client's phases, even if none
        sources.append(PHASES_FILE)

    log = DailyLog.empty()
    outliers: tuple[tuple[dt.date, float], ...] = ()
    skinfolds: tuple[SkinfoldSession, ...] = ()
    sheet_phases: list[tuple[int, Phase]] = []
    sheet_file = None
    candidates = [f"logs/{cid}{ext}" for ext in TABLE_TYPES]
    states = {rel: guard.file_state(book / rel) for rel in candidates}
    logs_found = [rel for rel in candidates if states[rel] == "regular"]
    csv_log = f"logs/{cid}.csv"
    xlsx_log = next((f for f in logs_found if not f.endswith(".csv")), f"logs/{cid}.xlsx")
    for rel, state in states.items():
        if state not in ("absent", "regular") and not logs_found:
            problems.append(
                _client_problem(
                    "unreadable-file",
                    f"{rel} is {state}, not a file reportgen can read; put the daily log there",
                    client,
                    rel,
                )
            )
    daily_table: Table | None = None
    skin_tables: list[Table] = []
    other = None if logs_found else _unsupported(book, "logs", cid)
    if len(logs_found) > 1:
        problems.append(
            _client_problem(
                "two-sources",
                f"both {' and '.join(logs_found)} exist; keep one daily log",
                client,
                logs_found[1],
            )
        )
    elif other is not None:
        problems.append(
            _client_problem(
                "unsupported-file",
                f"{other} is a file type reportgen does not read; save the daily log as "
                f"{cid} with one of {_TYPES_TEXT}",
                client,
                other,
            )
        )
    elif not logs_found:
        if set(states.values()) == {"absent"}:  # otherwise reported above
            problems.append(
                _client_problem(
                    "missing-file",
                    f"no daily log: expected {csv_log} or {xlsx_log} (file names must match "
                    "the client_id exactly)",
                    client,
                    csv_log,
                )
            )
    elif logs_found[0] == csv_log:
        sources.append(csv_log)
        daily_table, more = read_csv_table(book, csv_log, cid)
        problems += more
    else:
        sources.append(xlsx_log)
        sheets, names, more = read_xlsx_sheets(book, xlsx_log, XLSX_SHEETS, cid)
        problems += more
        if sheets is not None:
            if "daily" not in sheets:
                problems.append(
                    _client_problem(
                        "missing-sheet",
                        f"{xlsx_log} has no sheet named daily (sheets: {', '.join(names)}); "
                        "rename the sheet with the daily log to daily",
                        client,
                        xlsx_log,
                    )
                )
            for key, (name, rows) in sheets.items():
                if key != "daily" and not any(any(c not in ("", None) for c in r) for r in rows):
                    continue  # an empty optional sheet is as good as none
                table, more = build_table(xlsx_log, name, rows, cid)
                problems += more
                if table is None:
                    continue
                if key == "daily":
                    daily_table = table
                elif key == "skinfolds":
                    skin_tables.append(table)
                else:
                    by_client, more = parse_phases(table, cid)
                    problems += more
                    sheet_phases = by_client.get(cid, [])
                    sheet_file = xlsx_log
    if daily_table is not None:
        result = parse_daily(daily_table, cid, month_end, today, date_order)
        log, outliers = result.log, result.outliers
        problems += result.problems

    skin_csv = f"skinfolds/{cid}.csv"
    skin_state = guard.file_state(book / skin_csv)
    if skin_state not in ("absent", "regular"):
        problems.append(_skipped(skin_csv, skin_state, cid, "the skinfolds"))
    if skin_state == "regular":
        sources.append(skin_csv)
        table, more = read_csv_table(book, skin_csv, cid)
        problems += more
        if table is not None:
            skin_tables.append(table)
    if len(skin_tables) > 1:  # a header-only sheet (as a template leaves it) is no source
        skin_tables = [t for t in skin_tables if t.rows] or skin_tables[:1]
    if len(skin_tables) > 1:
        problems.append(
            _client_problem(
                "two-sources",
                f"skinfolds are in both {xlsx_log} (sheet skinfolds) and {skin_csv}; keep one",
                client,
                skin_csv,
            )
        )
    elif skin_tables:
        skinfolds, more = parse_skinfolds(skin_tables[0], cid, month_end, today)
        problems += more

    if sheet_phases:
        if phases:
            problems.append(
                _client_problem(
                    "two-sources",
                    f"phases are in both {PHASES_FILE} and {xlsx_log} (sheet phases); keep one",
                    client,
                    xlsx_log,
                )
            )
        else:
            phases, more = check_overlaps(sheet_phases, sheet_file or xlsx_log, cid)
            problems += more
    phases = tuple(p for p in phases if p.start <= month_end)

    minor = False
    age = client.age_years(month_end)
    if age is not None and age < limits.ADULT_AGE_YEARS:
        minor = True
        problems.append(
            Problem(
                "warning",
                "special-handling",
                f"client is {age} at the end of the report month (under "
                f"{limits.ADULT_AGE_YEARS}): no deficit analysis; the report carries the "
                "caution for minors",
                file=client.roster_file,
                row=client.roster_row,
                column="birth_date",
                value=client.birth_date.isoformat() if client.birth_date else None,
                client_id=cid,
            )
        )
    if client.pregnant:
        problems.append(
            Problem(
                "warning",
                "special-handling",
                "client is marked pregnant: no deficit analysis; the report carries the "
                "caution for pregnancy",
                file=client.roster_file,
                row=client.roster_row,
                column="pregnant",
                client_id=cid,
            )
        )
    return ClientRecord(
        client=client,
        log=log,
        skinfolds=skinfolds,
        phases=phases,
        problems=tuple(problems),
        source_files=tuple(sources),
        minor=minor,
        outliers=outliers,
    )
