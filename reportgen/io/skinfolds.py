"""Skinfold sessions: repeated readings per site on one date, combined as ISAK prescribes."""

from __future__ import annotations

import datetime as dt
import statistics
from typing import Final

from reportgen.io import limits
from reportgen.io.cells import CellError, check_range, parse_date, parse_number
from reportgen.io.columns import missing_column
from reportgen.io.model import SKINFOLD_SITES, Problem, SkinfoldSession
from reportgen.io.tables import Cell, Table, cell_problem, cell_text

#: Repeated readings at one site may differ by at most 5 % (ISAK protocol: take a third
#: reading when the first two differ by more than 5 %, then use the mean of two or the median
#: of three; International Society for the Advancement of Kinanthropometry, International
#: Standards for Anthropometric Assessment, from memory).
REPEAT_TOLERANCE: Final = 0.05


def combine_readings(readings: tuple[float, ...]) -> float:
    """One reading as is, mean of two, median of three or more [mm] (ISAK, from memory)."""
    if len(readings) == 2:
        return (readings[0] + readings[1]) / 2.0
    return float(statistics.median(readings))


def readings_disagree(readings: tuple[float, ...]) -> bool:
    """True when the repeated readings do not agree within :data:`REPEAT_TOLERANCE`.

    Two readings: their difference relative to their mean.  Three or more: the median must
    have another reading within tolerance (otherwise no two readings support the value).
    """
    if len(readings) < 2:
        return False
    if len(readings) == 2:
        a, b = readings
        return abs(a - b) > REPEAT_TOLERANCE * (a + b) / 2.0
    med = statistics.median(readings)
    s = sorted(readings)
    others = s[: len(s) // 2] + s[len(s) // 2 + 1 :] if len(s) % 2 else s
    return min(abs(r - med) for r in others) > REPEAT_TOLERANCE * med


def parse_skinfolds(
    table: Table, client_id: str, month_end: dt.date, today: dt.date
) -> tuple[tuple[SkinfoldSession, ...], list[Problem]]:
    """Parse a skinfold table: rows on one date are repeated readings of one session."""
    problems: list[Problem] = []
    date_pos = table.index("date")
    site_pos = {s: p for s in SKINFOLD_SITES if (p := table.index(s)) is not None}
    if date_pos is None:
        problems.append(missing_column(table, ("date",), client_id))
    if not site_pos:
        problems.append(
            missing_column(table, SKINFOLD_SITES, client_id, why=" (at least one site)")
        )
    for raw, name in zip(table.raw_columns, table.columns, strict=True):
        if name and name != "date" and name not in SKINFOLD_SITES:
            problems.append(
                Problem(
                    "warning",
                    "unknown-column",
                    f'column "{raw}" in {table.where()} is not a skinfold site reportgen '
                    f"knows ({', '.join(SKINFOLD_SITES)}); it is ignored",
                    file=table.file,
                    column=raw,
                    value=raw,
                    client_id=client_id,
                )
            )
    if date_pos is None or not site_pos:
        return (), problems
    date_raw = table.raw_columns[date_pos]
    readings: dict[dt.date, dict[str, list[float]]] = {}
    first_row: dict[dt.date, int] = {}
    for row, cells in table.rows:

        def err(e: CellError, col: str, cell: Cell, row: int = row) -> None:
            problems.append(
                cell_problem("error", e.code, e.message, table, row, col, cell, client_id)
            )

        try:
            day = parse_date(cells[date_pos], date_raw)
        except CellError as e:
            err(e, date_raw, cells[date_pos])
            continue
        if day is not None and day > today:
            problems.append(
                Problem(
                    "warning",
                    "future-date",
                    f"{date_raw} {day} is after today ({today}); the row is ignored",
                    file=table.file,
                    row=row,
                    column=date_raw,
                    value=cell_text(cells[date_pos]),
                    client_id=client_id,
                )
            )
            continue
        if day is not None and day > month_end:
            continue  # a later report's session: not read, not judged
        values: dict[str, float] = {}
        for site, pos in site_pos.items():
            raw = table.raw_columns[pos]
            try:
                x = parse_number(cells[pos], raw)
                if x is not None:
                    check_range(x, limits.SKINFOLD_MM, raw, cells[pos], "mm", "one caliper reading")
                    values[site] = x
            except CellError as e:
                err(e, raw, cells[pos])
        if day is None:
            if values:
                err(
                    CellError("missing-value", f"row {row} has readings but no {date_raw}; add it"),
                    date_raw,
                    None,
                )
            continue
        if not values:
            continue
        session = readings.setdefault(day, {})
        first_row.setdefault(day, row)
        for site, x in values.items():
            session.setdefault(site, []).append(x)

    sessions = []
    for day in sorted(readings):
        reads = {s: tuple(v) for s, v in readings[day].items()}
        for site, r in reads.items():
            if readings_disagree(r):
                problems.append(
                    Problem(
                        "warning",
                        "skinfold-disagreement",
                        f"{site} readings on {day} ({', '.join(f'{x:g}' for x in r)} mm) differ "
                        f"by more than {REPEAT_TOLERANCE:.0%}, the usual protocol tolerance; "
                        "the value used may be off (remeasure next session)",
                        file=table.file,
                        row=first_row[day],
                        column=table.raw_columns[site_pos[site]],
                        client_id=client_id,
                    )
                )
        sites = {s: combine_readings(r) for s, r in reads.items()}
        sessions.append(SkinfoldSession(date=day, sites_mm=sites, readings_mm=reads))
    return tuple(sessions), problems
