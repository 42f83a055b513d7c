"""The daily log: parse, convert units, validate, put on a calendar grid, flag outliers."""

from __future__ import annotations

import datetime as dt
import itertools
import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Final

import numpy as np
import numpy.typing as npt

from reportgen.io import limits
from reportgen.io.cells import CellError, check_range, parse_number, shown
from reportgen.io.columns import check_columns
from reportgen.io.dates import DateOrder, order_note, parse_date_column
from reportgen.io.headers import normalise_headers
from reportgen.io.model import BoolArray, DailyLog, FloatArray, Problem
from reportgen.io.outliers import weight_outliers
from reportgen.io.tables import Cell, Table, cell_problem, cell_text
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
    "body_fat_pct": (limits.BODY_FAT_PCT, "%", "no plausible body-fat reading"),
}
#: Intake is optional: a client who only weighs in gets the weight-side results.
DAILY_REQUIRED: Final = (("date",), alternatives("weight_kg"))
#: Cell problems of one kind in one column are reported once, with a count and the first rows.
COLLAPSED_CODES: Final = frozenset({"bad-date", "bad-number", "missing-value", "out-of-range"})
#: How many row numbers a collapsed message lists.
ROWS_SHOWN: Final = 5
IntArray = npt.NDArray[np.int64]
DAILY_KNOWN: Final = ("date", *[a for c in DAILY_VALUES for a in alternatives(c)])


@dataclass(frozen=True)
class DailyResult:
    log: DailyLog
    outliers: tuple[tuple[dt.date, float], ...]
    problems: tuple[Problem, ...]


def _err(code: str, msg: str, t: Table, cid: str, row: int, col: str | None, val: Cell) -> Problem:
    return cell_problem("error", code, msg, t, row, col, val, cid)


def _warn(
    code: str, msg: str, t: Table, cid: str, row: int | None, col: str | None, val: Cell = None
) -> Problem:
    return cell_problem("warning", code, msg, t, row, col, val, cid)


def number_column(
    cells: Sequence[Cell], column: str
) -> tuple[FloatArray, list[tuple[int, CellError]]]:
    """Parse a whole column of number cells: NaN for blank or bad cells, plus the errors.

    Fast paths for all-text (CSV) and numeric (XLSX) columns; every cell they cannot settle
    goes through :func:`~reportgen.io.cells.parse_number`, which alone decides what a
    number is.
    """
    n = len(cells)
    out: FloatArray | None = None
    texts = [c for c in cells if type(c) is str]
    if len(texts) == n:
        joined = "".join(texts)
        # "_" is what float() takes beyond our rules; NUL is dropped from the end of a numpy
        # string ("0\x00" would read as 0), so both go through parse_number.
        if joined.isascii() and "_" not in joined and "\x00" not in joined:
            try:
                out = np.array(cells, dtype=str).astype(np.float64)
            except ValueError:
                import pandas as pd

                # pandas returns a read-only view (copy-on-write): take a writable copy
                num = pd.to_numeric(pd.Series(texts, dtype=object), errors="coerce")
                out = np.array(num, dtype=np.float64)
        if out is not None:
            todo = np.flatnonzero(~np.isfinite(out)).tolist()
    if out is None:
        out = np.array([c if type(c) is float else np.nan for c in cells], dtype=np.float64)
        todo = [i for i, c in enumerate(cells) if type(c) is not float or not math.isfinite(c)]
    errors: list[tuple[int, CellError]] = []
    for i in todo:
        try:
            x = parse_number(cells[i], column)
        except CellError as e:
            errors.append((i, e))
            x = None
        out[i] = np.nan if x is None else x
    assert out.shape == (n,)
    return out, errors


def parse_daily(
    table: Table,
    client_id: str,
    month_end: dt.date,
    today: dt.date,
    date_order: DateOrder | None = None,
) -> DailyResult:
    """Parse a daily log table into a :class:`DailyLog` on a complete calendar grid.

    Headers are read through :mod:`reportgen.io.headers` and dates through
    :mod:`reportgen.io.dates` (``date_order`` is the ``[book] date_order`` setting, used only
    when no date in the file settles the order).
    """
    table, problems, suggestions = normalise_headers(table, DAILY_KNOWN, client_id)
    more, ok = check_columns(table, DAILY_REQUIRED, DAILY_KNOWN, client_id, suggestions=suggestions)
    named = {p.column for p in problems if p.code in ("ambiguous-column", "duplicate-column")}
    if named:  # "Weight" without unit: its one error says it all, no missing-column on top
        more = [p for p in more if p.code != "missing-column"]
    problems += more
    if not ok:
        return DailyResult(DailyLog.empty(), (), tuple(problems))
    date_pos = table.index("date")
    assert date_pos is not None
    date_raw = table.raw_columns[date_pos]
    rows = [r for r, _ in table.rows]
    n = len(rows)
    columns: list[tuple[Cell, ...]] = (
        list(zip(*(c for _, c in table.rows), strict=True)) if n else [()] * len(table.columns)
    )

    def err(code: str, msg: str, i: int, col: str | None, val: Cell) -> None:
        problems.append(_err(code, msg, table, client_id, rows[i], col, val))

    # Dates: ISO, day-first or month-first (decided per file, never guessed), date-times.
    dcol = parse_date_column(columns[date_pos], date_raw, table.where(), date_order)
    ords, minutes = dcol.ords, dcol.minutes
    for i, cell_error in dcol.errors:
        err(cell_error.code, cell_error.message, i, date_raw, columns[date_pos][i])
    if dcol.ambiguous:
        first_bad = int(np.flatnonzero(ords == -2)[0])
        err("ambiguous-dates", dcol.ambiguous, first_bad, date_raw, columns[date_pos][first_bad])
    note = order_note(dcol, date_raw)
    if note:
        problems.append(
            cell_problem(
                "note",
                "date-order",
                f"{table.where()}: {note}",
                table,
                table.header_row,
                date_raw,
                None,
                client_id,
            )
        )

    # Values, converted to canonical units; conflicts and limits (weight: after outliers).
    values = np.full((len(DAILY_VALUES), n), np.nan)
    weight_from = np.full(n, -1, dtype=np.int64)  # table position the weight came from
    for k, (canonical, (lims, unit, why)) in enumerate(DAILY_VALUES.items()):
        srcs = []
        for name in alternatives(canonical):
            pos = table.index(name)
            if pos is None:
                continue
            raw = table.raw_columns[pos]
            x, bad = number_column(columns[pos], raw)
            for i, cell_error in bad:
                err(cell_error.code, cell_error.message, i, raw, columns[pos][i])
            srcs.append((pos, raw, x * (UNIT_MAP[name][1] if name in UNIT_MAP else 1.0)))
        if not srcs:
            continue
        pos_a, raw_a, a = srcs[0]
        used = np.where(np.isfinite(a), pos_a, -1)
        v = a.copy()
        if len(srcs) > 1:
            pos_b, raw_b, b = srcs[1]
            both = np.isfinite(a) & np.isfinite(b)
            for i in np.flatnonzero(both & (np.abs(a - b) > UNIT_AGREEMENT[canonical])).tolist():
                when = f"on {dt.date.fromordinal(ords[i])}" if ords[i] > 0 else f"in row {rows[i]}"
                ca, cb = columns[pos_a][i], columns[pos_b][i]
                err(
                    "unit-conflict",
                    f"has both {raw_a} {shown(ca)} and {raw_b} {shown(cb)} {when} with "
                    f"different values ({a[i]:.1f} vs {b[i]:.1f} {unit}); keep one",
                    i,
                    raw_b,
                    cb,
                )
                v[i] = np.nan
                used[i] = -1
            only_b = ~np.isfinite(a) & np.isfinite(b)
            v[only_b] = b[only_b]
            used[only_b] = pos_b
        if canonical == "weight_kg":
            weight_from = used
        else:
            for i in np.flatnonzero(np.isfinite(v) & ((v < lims[0]) | (v > lims[1]))).tolist():
                cell = columns[int(used[i])][i]
                try:
                    check_range(float(v[i]), lims, table.raw_columns[int(used[i])], cell, unit, why)
                except CellError as e:
                    err(e.code, e.message, int(i), table.raw_columns[int(used[i])], cell)
                v[i] = np.nan
        values[k] = v

    has_value = np.isfinite(values).any(axis=0)
    for i in np.flatnonzero((ords == -1) & has_value).tolist():
        err(
            "missing-value",
            f"row {rows[i]} has values but no {date_raw}; add the date",
            i,
            date_raw,
            None,
        )
    today_o, end_o = today.toordinal(), month_end.toordinal()
    # Rows after the month end belong to a later report and future rows are ignored: their
    # cell problems are not this report's (a future row gets its one warning below).
    cut_rows = {rows[i] for i in np.flatnonzero((ords > end_o) | (ords > today_o))}
    if cut_rows:
        problems = [p for p in problems if p.row not in cut_rows]
    for i in np.flatnonzero(ords > today_o).tolist():
        problems.append(
            _warn(
                "future-date",
                f"{date_raw} {dt.date.fromordinal(ords[i])} is after today ({today}); the row is "
                "ignored",
                table,
                client_id,
                rows[i],
                date_raw,
                columns[date_pos][i],
            )
        )
    keep = np.flatnonzero((ords > 0) & (ords <= min(today_o, end_o)))  # later: a later report
    if dcol.has_times:  # date-times: several weigh-ins a day, the first of the day is used
        keep = keep[np.lexsort((np.nan_to_num(minutes[keep], nan=-1.0), ords[keep]))]
        keep = _first_of_day(keep, ords, values, rows, table, client_id, date_raw, problems)
    else:
        keep = keep[np.argsort(ords[keep], kind="stable")]
        keep = _drop_duplicates(keep, ords, values, rows, table, client_id, date_raw, problems)
    if keep.size == 0:
        problems.append(
            Problem(
                "error",
                "no-data",
                f"{table.where()} has no dated rows up to {month_end}; add the daily entries",
                file=table.file,
                client_id=client_id,
            )
        )
        return DailyResult(DailyLog.empty(), (), tuple(_by_row(_collapse(problems))))

    first = int(ords[keep[0]])
    n_days = int(ords[keep[-1]]) - first + 1
    day_index = ords[keep] - first
    grid = np.full((len(DAILY_VALUES), n_days), np.nan)
    grid[:, day_index] = values[:, keep]
    source_row = np.full(n_days, -1, dtype=np.int64)
    source_row[day_index] = keep
    weight = grid[0]
    flags, level = weight_outliers(weight)
    lims, unit, why = DAILY_VALUES["weight_kg"]
    outliers: list[tuple[dt.date, float]] = []
    bad_weight = np.isfinite(weight) & ((weight < lims[0]) | (weight > lims[1]))
    for d in np.flatnonzero(flags | bad_weight):
        i = int(source_row[d])
        raw = table.raw_columns[int(weight_from[i])]
        cell = columns[int(weight_from[i])][i]
        day = dt.date.fromordinal(first + int(d))
        if flags[d]:
            outliers.append((day, float(weight[d])))
            problems.append(
                Problem(
                    "warning",
                    "outlier",
                    f"{raw} {shown(cell)} on {day} is far from the level of the weigh-ins "
                    f"around it ({level[d]:.1f} kg); it is left out of the analysis (the file "
                    "is not changed). Check the entry",
                    file=table.file,
                    row=rows[i],
                    column=raw,
                    value=cell_text(cell),
                    client_id=client_id,
                )
            )
            continue
        try:
            check_range(float(weight[d]), lims, raw, cell, unit, why)
        except CellError as e:
            err(e.code, e.message, i, raw, cell)
    problems.extend(_gaps(keep, ords, has_value, rows, table, client_id, date_raw))
    log = DailyLog(
        dates=np.datetime64(dt.date.fromordinal(first), "D") + np.arange(n_days),
        weight_kg=weight,
        weight_outlier=flags,
        intake_kcal=grid[1],
        steps=grid[2],
        hunger=grid[3],
        energy=grid[4],
        sleep_h=grid[5],
        body_fat_pct=grid[6],
    )
    return DailyResult(log, tuple(outliers), tuple(_by_row(_collapse(problems))))


def _by_row(problems: list[Problem]) -> list[Problem]:
    return sorted(problems, key=lambda p: p.row or 0)


def _collapse(problems: list[Problem]) -> list[Problem]:
    """One problem per file, column and kind of cell error, with the count and first rows.

    Seventy unreadable dates are one message ("70 cells ... rows 2, 3, 4, 5, 6, ...; the
    first: ..."), which points at the first cell and keeps its value.
    """
    groups: dict[tuple[str | None, str | None, str], list[Problem]] = {}
    for p in problems:
        if p.code in COLLAPSED_CODES and p.severity == "error":
            groups.setdefault((p.file, p.column, p.code), []).append(p)
    if all(len(g) == 1 for g in groups.values()):
        return problems
    out: list[Problem] = []
    for p in problems:
        g = groups.get((p.file, p.column, p.code))
        if g is None or len(g) == 1:
            out.append(p)
        elif p is g[0]:
            ordered = sorted(g, key=lambda q: q.row or 0)
            shown_rows = ", ".join(str(q.row) for q in ordered[:ROWS_SHOWN])
            more = ", …" if len(g) > ROWS_SHOWN else ""
            first = ordered[0]
            out.append(
                Problem(
                    "error",
                    p.code,
                    f"{len(g)} cells in column {p.column} have this problem (rows "
                    f"{shown_rows}{more}); the first: {first.message}",
                    file=p.file,
                    row=first.row,
                    column=p.column,
                    value=first.value,
                    client_id=p.client_id,
                )
            )
    return out


def _first_of_day(
    keep: IntArray,
    ords: IntArray,
    values: FloatArray,
    rows: list[int],
    table: Table,
    cid: str,
    date_raw: str,
    problems: list[Problem],
) -> IntArray:
    """One row per day for a log with date-times (``keep`` sorted by date and time).

    The day's first weigh-in is used (the usual morning protocol) with its body-fat reading;
    other values given on only one of the day's rows are carried to it; two different values
    of one kind on one day are a ``duplicate-date`` error.  One note counts the days with
    more than one weigh-in.
    """
    if keep.size < 2:
        return keep
    day_ords = ords[keep]
    starts = np.flatnonzero(np.r_[True, day_ords[1:] != day_ords[:-1]])
    ends = np.r_[starts[1:], keep.size]
    several = 0
    out: list[int] = []
    names = list(DAILY_VALUES)
    w, bf = names.index("weight_kg"), names.index("body_fat_pct")
    for a, b in zip(starts.tolist(), ends.tolist(), strict=True):
        group = keep[a:b]
        if group.size == 1:
            out.append(int(group[0]))
            continue
        weighed = group[np.isfinite(values[w, group])]
        several += int(weighed.size > 1)
        first = int(weighed[0]) if weighed.size else int(group[0])
        for k, name in enumerate(names):
            if k in (w, bf):
                continue
            given = [int(i) for i in group if np.isfinite(values[k, i])]
            distinct = {float(values[k, i]) for i in given}
            if len(distinct) > 1:
                day = dt.date.fromordinal(int(ords[first]))
                problems.append(
                    _err(
                        "duplicate-date",
                        f"{date_raw} {day} has {len(distinct)} different {name} values (rows "
                        f"{', '.join(str(rows[i]) for i in given)}); keep one per day",
                        table,
                        cid,
                        rows[given[1]],
                        date_raw,
                        str(day),
                    )
                )
                values[k, first] = np.nan
            elif given:
                values[k, first] = values[k, given[0]]
        out.append(first)
    if several:
        problems.append(
            _note(
                "several-weigh-ins",
                f"{table.where()}: {several} day{'s' * (several != 1)} had more than one "
                "weigh-in; the first of each day is used (the usual morning weigh-in)",
                table,
                cid,
                date_raw,
            )
        )
    return np.array(out, dtype=np.int64)


def _note(code: str, msg: str, t: Table, cid: str, col: str | None) -> Problem:
    return cell_problem("note", code, msg, t, t.header_row, col, None, cid)


def _drop_duplicates(
    keep: IntArray,
    ords: IntArray,
    values: FloatArray,
    rows: list[int],
    table: Table,
    cid: str,
    date_raw: str,
    problems: list[Problem],
) -> IntArray:
    """Keep one row per date; identical repeats warn, conflicting ones are errors."""
    if keep.size < 2:
        return keep
    same = np.flatnonzero(ords[keep][1:] == ords[keep][:-1]) + 1
    if same.size == 0:
        return keep
    drop: set[int] = set()
    first_of: dict[int, int] = {}
    for j in range(keep.size):
        o = int(ords[keep[j]])
        first_of.setdefault(o, j)
    for j in same.tolist():
        i, f = int(keep[j]), int(keep[first_of[int(ords[keep[j]])]])
        day = dt.date.fromordinal(int(ords[i]))
        drop.add(j)
        if np.array_equal(values[:, i], values[:, f], equal_nan=True):
            problems.append(
                _warn(
                    "duplicate-row",
                    f"row {rows[i]} repeats row {rows[f]} ({date_raw} {day}, same values); "
                    "the repeat is ignored",
                    table,
                    cid,
                    rows[i],
                    date_raw,
                    day,
                )
            )
        else:
            problems.append(
                _err(
                    "duplicate-date",
                    f"{date_raw} {day} appears in rows {rows[f]} and {rows[i]} with different "
                    "values; keep one row per day",
                    table,
                    cid,
                    rows[i],
                    date_raw,
                    str(day),
                )
            )
    return np.array([k for j, k in enumerate(keep.tolist()) if j not in drop], dtype=np.int64)


def _gaps(
    keep: IntArray,
    ords: IntArray,
    has_value: BoolArray,
    rows: list[int],
    table: Table,
    cid: str,
    date_raw: str,
) -> list[Problem]:
    """Warnings for runs of more than MAX_GAP_DAYS days without any entry."""
    active = keep[has_value[keep]]
    out = []
    for a, b in itertools.pairwise(active.tolist()):
        missing = int(ords[b] - ords[a]) - 1
        if missing > limits.MAX_GAP_DAYS:
            da, db = dt.date.fromordinal(int(ords[a])), dt.date.fromordinal(int(ords[b]))
            out.append(
                _warn(
                    "gap",
                    f"no entries for {missing} days ({da + dt.timedelta(days=1)} to "
                    f"{db - dt.timedelta(days=1)}); results around the gap are less certain",
                    table,
                    cid,
                    rows[b],
                    date_raw,
                    db,
                )
            )
    return out
