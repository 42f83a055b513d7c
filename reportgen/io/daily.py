"""The daily log: parse, convert units, validate, put on a calendar grid, flag outliers."""

from __future__ import annotations

import datetime as dt
import itertools
from dataclasses import dataclass
from typing import Final

import numpy as np

from reportgen.io import limits
from reportgen.io.cells import CellError, check_range, parse_date, parse_number, shown
from reportgen.io.columns import check_columns
from reportgen.io.model import DailyLog, Problem
from reportgen.io.outliers import weight_outliers
from reportgen.io.tables import Cell, Table
from reportgen.io.units import UNIT_AGREEMENT, UNIT_MAP, alternatives

#: Canonical value column -> (limits, unit, why the limits).  Weight is range-checked after
#: outlier detection (an isolated 8.2 among 82s is an excluded outlier, not an error).
DAILY_VALUES: Final[dict[str, tuple[tuple[float, float], str, str]]] = {
    "weight_kg": (limits.WEIGHT_KG, "kg", "no plausible adult or adolescent weight"),
    "intake_kcal": (limits.INTAKE_KCAL, "kcal", "no plausible daily intake"),
    "steps": (limits.STEPS, "steps", "no plausible daily step count"),
    "hunger": (limits.RATING, "", "ratings go from 1 to 10"),
    "energy": (limits.RATING, "", "ratings go from 1 to 10"),
    "sleep_h": (limits.SLEEP_H, "h", "a day has 24 hours"),
}
DAILY_REQUIRED: Final = (("date",), alternatives("weight_kg"), alternatives("intake_kcal"))
DAILY_KNOWN: Final = ("date", *[a for c in DAILY_VALUES for a in alternatives(c)])


@dataclass(frozen=True)
class _Entry:
    row: int
    date: dt.date
    values: tuple[float | None, ...]  # aligned with DAILY_VALUES
    weight_cell: tuple[str, Cell]  # (column as written, cell) of the weight used


@dataclass(frozen=True)
class DailyResult:
    log: DailyLog
    outliers: tuple[tuple[dt.date, float], ...]
    problems: tuple[Problem, ...]


def _err(code: str, msg: str, t: Table, cid: str, row: int, col: str | None, val: Cell) -> Problem:
    return Problem(
        "error",
        code,
        msg,
        file=t.file,
        row=row,
        column=col,
        value=None if val is None else str(val),
        client_id=cid,
    )


def _warn(
    code: str, msg: str, t: Table, cid: str, row: int | None, col: str | None, val: object = None
) -> Problem:
    return Problem(
        "warning",
        code,
        msg,
        file=t.file,
        row=row,
        column=col,
        value=None if val is None else str(val),
        client_id=cid,
    )


def parse_daily(table: Table, client_id: str, month_end: dt.date, today: dt.date) -> DailyResult:
    """Parse a daily log table into a :class:`DailyLog` on a complete calendar grid."""
    problems, ok = check_columns(table, DAILY_REQUIRED, DAILY_KNOWN, client_id)
    if not ok:
        return DailyResult(DailyLog.empty(), (), tuple(problems))
    date_pos = table.index("date")
    assert date_pos is not None
    sources: list[list[tuple[int, str, float]]] = []  # per value: (position, raw name, factor)
    for canonical in DAILY_VALUES:
        srcs = []
        for name in alternatives(canonical):
            pos = table.index(name)
            if pos is not None:
                factor = UNIT_MAP[name][1] if name in UNIT_MAP else 1.0
                srcs.append((pos, table.raw_columns[pos], factor))
        sources.append(srcs)
    date_raw = table.raw_columns[date_pos]

    entries: list[_Entry] = []
    for row, cells in table.rows:
        try:
            day = parse_date(cells[date_pos], date_raw)
        except CellError as e:
            problems.append(
                _err(e.code, e.message, table, client_id, row, date_raw, cells[date_pos])
            )
            continue
        values: list[float | None] = []
        weight_cell: tuple[str, Cell] = ("", None)
        for k, (canonical, (lims, unit, why)) in enumerate(DAILY_VALUES.items()):
            got: list[tuple[str, Cell, float]] = []
            for pos, raw, factor in sources[k]:
                try:
                    x = parse_number(cells[pos], raw)
                except CellError as e:
                    problems.append(_err(e.code, e.message, table, client_id, row, raw, cells[pos]))
                    continue
                if x is not None:
                    got.append((raw, cells[pos], x * factor))
            if not got:
                values.append(None)
                continue
            raw, cell, x = got[0]
            if len(got) > 1 and abs(got[1][2] - x) > UNIT_AGREEMENT[canonical]:
                raw2, cell2, x2 = got[1]
                when = f"on {day}" if day else f"in row {row}"
                problems.append(
                    _err(
                        "unit-conflict",
                        f"has both {raw} {shown(cell)} and {raw2} {shown(cell2)} {when} with "
                        f"different values ({x:.1f} vs {x2:.1f} {unit}); keep one",
                        table,
                        client_id,
                        row,
                        raw2,
                        cell2,
                    )
                )
                values.append(None)
                continue
            if canonical == "weight_kg":
                weight_cell = (raw, cell)
            else:
                try:
                    check_range(x, lims, raw, cell, unit, why)
                except CellError as e:
                    problems.append(_err(e.code, e.message, table, client_id, row, raw, cell))
                    values.append(None)
                    continue
            values.append(x)
        if day is None:
            if any(v is not None for v in values):
                problems.append(
                    _err(
                        "missing-value",
                        f"row {row} has values but no {date_raw}; add the date",
                        table,
                        client_id,
                        row,
                        date_raw,
                        None,
                    )
                )
            continue
        if day > today:
            problems.append(
                _warn(
                    "future-date",
                    f"{date_raw} {day} is after today ({today}); the row is ignored",
                    table,
                    client_id,
                    row,
                    date_raw,
                    cells[date_pos],
                )
            )
            continue
        if day > month_end:
            continue  # belongs to a later report
        entries.append(_Entry(row, day, tuple(values), weight_cell))

    entries = _drop_duplicates(entries, table, client_id, date_raw, problems)
    if not entries:
        problems.append(
            Problem(
                "error",
                "no-data",
                f"{table.where()} has no dated rows up to {month_end}; add the daily entries",
                file=table.file,
                client_id=client_id,
            )
        )
        return DailyResult(DailyLog.empty(), (), tuple(problems))

    first = min(e.date for e in entries)
    last = max(e.date for e in entries)
    n = (last - first).days + 1
    grid = np.full((len(DAILY_VALUES), n), np.nan)
    by_day: dict[int, _Entry] = {}
    for e in entries:
        i = (e.date - first).days
        by_day[i] = e
        for k, v in enumerate(e.values):
            if v is not None:
                grid[k, i] = v
    weight = grid[0]
    flags, level = weight_outliers(weight)
    lims, unit, why = DAILY_VALUES["weight_kg"]
    outliers: list[tuple[dt.date, float]] = []
    for i in np.flatnonzero(~np.isnan(weight)):
        e = by_day[int(i)]
        raw, cell = e.weight_cell
        if flags[i]:
            outliers.append((e.date, float(weight[i])))
            problems.append(
                Problem(
                    "warning",
                    "outlier",
                    f"{raw} {shown(cell)} on {e.date} is far from the level of the weigh-ins "
                    f"around it ({level[i]:.1f} kg); it is left out of the analysis (the file "
                    "is not changed). Check the entry",
                    file=table.file,
                    row=e.row,
                    column=raw,
                    value=str(cell),
                    client_id=client_id,
                )
            )
            continue
        try:
            check_range(float(weight[i]), lims, raw, cell, unit, why)
        except CellError as err:
            problems.append(_err(err.code, err.message, table, client_id, e.row, raw, cell))
    problems.extend(_gaps(entries, table, client_id, date_raw))
    dates = np.datetime64(first, "D") + np.arange(n)
    log = DailyLog(
        dates=dates,
        weight_kg=weight,
        weight_outlier=flags,
        intake_kcal=grid[1],
        steps=grid[2],
        hunger=grid[3],
        energy=grid[4],
        sleep_h=grid[5],
    )
    return DailyResult(log, tuple(outliers), tuple(problems))


def _drop_duplicates(
    entries: list[_Entry], table: Table, cid: str, date_raw: str, problems: list[Problem]
) -> list[_Entry]:
    """Keep one entry per date; identical repeats warn, conflicting ones are errors."""
    first_for: dict[dt.date, _Entry] = {}
    kept: list[_Entry] = []
    for e in entries:
        prev = first_for.get(e.date)
        if prev is None:
            first_for[e.date] = e
            kept.append(e)
        elif prev.values == e.values:
            problems.append(
                _warn(
                    "duplicate-row",
                    f"row {e.row} repeats row {prev.row} ({date_raw} {e.date}, same values); "
                    "the repeat is ignored",
                    table,
                    cid,
                    e.row,
                    date_raw,
                    e.date,
                )
            )
        else:
            problems.append(
                _err(
                    "duplicate-date",
                    f"{date_raw} {e.date} appears in rows {prev.row} and {e.row} with different "
                    "values; keep one row per day",
                    table,
                    cid,
                    e.row,
                    date_raw,
                    str(e.date),
                )
            )
    return kept


def _gaps(entries: list[_Entry], table: Table, cid: str, date_raw: str) -> list[Problem]:
    """Warnings for runs of more than MAX_GAP_DAYS days without any entry."""
    active = sorted(
        (e for e in entries if any(v is not None for v in e.values)), key=lambda e: e.date
    )
    out = []
    for a, b in itertools.pairwise(active):
        missing = (b.date - a.date).days - 1
        if missing > limits.MAX_GAP_DAYS:
            out.append(
                _warn(
                    "gap",
                    f"no entries for {missing} days ({a.date + dt.timedelta(days=1)} to "
                    f"{b.date - dt.timedelta(days=1)}); results around the gap are less certain",
                    table,
                    cid,
                    b.row,
                    date_raw,
                    b.date,
                )
            )
    return out
