"""Checking a whole book: every client read and validated, all problems in one list."""

from __future__ import annotations

import contextlib
import datetime as dt
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from reportgen.io import limits
from reportgen.io.book import TABLE_TYPES, read_client, read_roster
from reportgen.io.dates import DateOrder
from reportgen.io.model import ClientRecord, Problem, Roster
from reportgen.month import ReportMonth


@dataclass(frozen=True)
class CheckResult:
    """The outcome of :func:`check_book`."""

    book_dir: str
    month: ReportMonth
    today: dt.date
    roster: Roster
    records: tuple[ClientRecord, ...]
    unused_files: tuple[Problem, ...] = ()  # files no client's reading used
    month_problems: tuple[Problem, ...] = ()  # clients without data in the report month

    @property
    def problems(self) -> tuple[Problem, ...]:
        """Book-level problems first, then each client's, in a stable order."""
        ids = {r.client.client_id for r in self.records}
        book = [p for p in self.roster.problems if p.client_id not in ids]
        per_client = [p for r in self.records for p in r.problems]
        per_client += [*self.unused_files, *self.month_problems]
        return tuple(sorted(book, key=_order)) + tuple(sorted(per_client, key=_order))

    @property
    def errors(self) -> tuple[Problem, ...]:
        return tuple(p for p in self.problems if p.severity == "error")

    @property
    def warnings(self) -> tuple[Problem, ...]:
        return tuple(p for p in self.problems if p.severity == "warning")

    @property
    def notes(self) -> tuple[Problem, ...]:
        """How unambiguous variations were read (headers with units, date order, ...)."""
        return tuple(p for p in self.problems if p.severity == "note")

    @property
    def clients_with_errors(self) -> tuple[str, ...]:
        return tuple(r.client.client_id for r in self.records if not r.ok)

    @property
    def ok(self) -> bool:
        """No error anywhere (warnings allowed)."""
        return not self.errors

    def summary(self) -> str:
        n = len(self.records)
        bad = len(self.clients_with_errors)
        e, w, k = len(self.errors), len(self.warnings), len(self.notes)
        notes = f", {k} note{'s' * (k != 1)}" if k else ""
        return (
            f"{n} client{'s' * (n != 1)} checked for {self.month}: "
            f"{bad} with errors, {e} error{'s' * (e != 1)}, {w} warning{'s' * (w != 1)}{notes}"
        )

    def as_dict(self) -> dict[str, object]:
        return {
            "book": self.book_dir,
            "month": self.month,
            "today": self.today.isoformat(),
            "clients_checked": len(self.records),
            "clients_with_errors": list(self.clients_with_errors),
            "errors": len(self.errors),
            "warnings": len(self.warnings),
            "notes": len(self.notes),
            "problems": [p.as_dict() for p in self.problems],
        }


def _order(p: Problem) -> tuple[str, str, int, str, str]:
    return (p.client_id or "", p.file or "", p.row or 0, p.column or "", p.code)


def check_book(
    book_dir: Path,
    month: ReportMonth | str | None = None,
    today: dt.date | None = None,
    *,
    date_order: DateOrder | None = None,
) -> CheckResult:
    """Read and validate every client of the book.

    ``month`` ("YYYY-MM") defaults to the month of the latest (non-future) data in the book.
    ``date_order`` is the ``[book] date_order`` setting.  Raises
    :class:`~reportgen.io.model.InputError` only for an unusable book, and
    :class:`~reportgen.month.InvalidMonth` (a ``ValueError``) for a malformed ``month``.
    """
    book = Path(book_dir)
    today = today or dt.date.today()
    roster = read_roster(book, today=today)
    report_month = ReportMonth(month) if month else None
    month_end = report_month.last_day if report_month is not None else today

    def read_all(end: dt.date) -> list[ClientRecord]:
        return [
            read_client(
                book,
                c,
                roster.phases.get(c.client_id, ()),
                end,
                today,
                roster_problems=roster.problems,
                date_order=date_order,
            )
            for c in roster.clients
        ]

    records = read_all(month_end)
    if report_month is None:
        latest = max(
            (r.log.dates[-1].astype(dt.date) for r in records if r.log.n_days),
            default=today,
        )
        report_month = ReportMonth.containing(latest)
        month_end = report_month.last_day
        # Data up to today was read; the month of the latest data holds all of it, so only
        # what depends on the month end itself (age) can differ: re-read those clients.
        records = [
            read_client(
                book,
                r.client,
                roster.phases.get(r.client.client_id, ()),
                month_end,
                today,
                roster_problems=roster.problems,
                date_order=date_order,
            )
            if _minor(r, month_end) != r.minor
            else r
            for r in records
        ]
    unused = tuple(_unused_files(book, roster, records))
    empty = tuple(_month_without_data(records, report_month))
    return CheckResult(
        str(book.resolve()), report_month, today, roster, tuple(records), unused, empty
    )


def _month_without_data(records: list[ClientRecord], month: ReportMonth) -> list[Problem]:
    """A warning for each client with no weigh-in (or no entry at all) in the report month.

    Such a client's report says so plainly; the check says it before the run.  Clients whose
    log could not be read have their own errors and get no warning here.
    """
    end = np.datetime64(month.last_day, "D")
    start = np.datetime64(month.first_day, "D")
    out = []
    for r in records:
        log = r.log
        if not log.n_days:
            continue
        inside = (log.dates >= start) & (log.dates <= end)
        weighed = int(np.isfinite(log.weight_used_kg[inside]).sum())
        if weighed:
            continue
        values = np.vstack(
            [log.intake_kcal, log.steps, log.hunger, log.energy, log.sleep_h, log.body_fat_pct]
        )[:, inside]
        entries = int(np.isfinite(values).any(axis=0).sum())
        last = log.dates[np.isfinite(log.weight_used_kg)]
        since = f"; the last is from {last[-1]}" if last.size else ""
        if entries:
            what = (
                f"no weigh-ins in {month} ({entries} day{'s' * (entries != 1)} with other "
                f"entries{since})"
            )
        else:
            last_day = log.dates[-1] if log.dates[-1] < start else None
            what = f"no entries in {month}" + (
                f" (the last is from {last_day})" if last_day else ""
            )
        log_file = next((f for f in r.source_files if f.startswith("logs/")), None)
        out.append(
            Problem(
                "warning",
                "no-month-data",
                f"{what}; the {month} report cannot show the month's weight trend. "
                "Add the month's entries if they exist",
                file=log_file,
                client_id=r.client.client_id,
            )
        )
    return out


def _unused_files(book: Path, roster: Roster, records: list[ClientRecord]) -> list[Problem]:
    """Warnings for files in logs/ and skinfolds/ that no client's reading used.

    A log saved under a mistyped name (or as a .numbers file) is otherwise silently left out.
    Hidden files and spreadsheet lock files (``~$...``) are not mentioned.
    """
    used = {f for r in records for f in r.source_files}
    used |= {p.file for r in records for p in r.problems if p.code == "unsupported-file" and p.file}
    # Compare by inode too: on a case-insensitive file system C001.csv *is* c001.csv.
    used_ids = set()
    for f in used:
        with contextlib.suppress(OSError):
            st = (book / f).stat()
            used_ids.add((st.st_dev, st.st_ino))
    ids = {c.client_id.lower(): c.client_id for c in roster.clients}
    out = []
    for folder in ("logs", "skinfolds"):
        if not (book / folder).is_dir():
            continue
        for path in sorted((book / folder).iterdir()):
            rel = f"{folder}/{path.name}"
            if rel in used or not path.is_file() or path.name.startswith((".", "~$")):
                continue
            st = path.stat()
            if (st.st_dev, st.st_ino) in used_ids:
                continue
            owner = ids.get(path.stem.lower())
            if owner is None:
                why = f"its name matches no client_id in {', '.join(roster.source_files[:1])}"
            elif path.stem != owner:
                why = f'the name must match the client_id "{owner}" exactly'
            elif path.suffix.lower() not in TABLE_TYPES or (
                folder == "skinfolds" and path.suffix.lower() != ".csv"
            ):
                kinds = ".csv" if folder == "skinfolds" else ".csv, .xlsx, .xlsm, .xls or .ods"
                why = f"reportgen reads {kinds} files here; save it in that format"
            else:
                continue  # a second source of the same data: reported as two-sources
            out.append(
                Problem(
                    "warning",
                    "unused-file",
                    f"{rel} is not read: {why}",
                    file=rel,
                    client_id=owner,
                )
            )
    return out


def _minor(record: ClientRecord, on: dt.date) -> bool:
    age = record.client.age_years(on)
    return age is not None and age < limits.ADULT_AGE_YEARS
