"""Phases: from ``phases.csv`` (all clients) or a workbook's ``phases`` sheet (one client)."""

from __future__ import annotations

import itertools
from typing import Final, cast

from reportgen.io import limits
from reportgen.io.cells import CellError, check_range, parse_date, parse_number, parse_text
from reportgen.io.columns import check_columns
from reportgen.io.model import PHASE_KINDS, Phase, PhaseKind, Problem
from reportgen.io.tables import Cell, Table, cell_problem

PHASE_COLUMNS: Final = ("client_id", "name", "start", "end", "kind", "target_kcal")


def parse_phases(
    table: Table, client_id: str | None = None
) -> tuple[dict[str, list[tuple[int, Phase]]], list[Problem]]:
    """Parse a phase table into ``{client_id: [(row, Phase), ...]}``.

    With ``client_id`` given (a workbook's phases sheet) the table has no ``client_id``
    column and every row belongs to that client.
    """
    per_file = client_id is None
    required = [("client_id",), ("start",), ("kind",)] if per_file else [("start",), ("kind",)]
    known = PHASE_COLUMNS if per_file else PHASE_COLUMNS[1:]
    problems, ok = check_columns(table, required, known, client_id)
    out: dict[str, list[tuple[int, Phase]]] = {}
    if not ok:
        return out, problems
    pos = {c: table.index(c) for c in PHASE_COLUMNS}
    raw = {c: table.raw_columns[p] for c, p in pos.items() if p is not None}

    for row, cells in table.rows:

        def cell(c: str, cells: tuple[Cell, ...] = cells) -> Cell:
            p = pos[c]
            return None if p is None else cells[p]

        cid = client_id if client_id is not None else parse_text(cell("client_id"))
        bad: list[Problem] = []

        def err(
            code: str,
            msg: str,
            c: str | None,
            row: int = row,
            cid: str = cid,
            bad: list[Problem] = bad,
        ) -> None:
            col, v = (raw.get(c), cell(c)) if c else (None, None)
            bad.append(cell_problem("error", code, msg, table, row, col, v, cid or None))

        if not cid:
            err("missing-value", f"row {row} has no client_id; add it", "client_id")
            problems.extend(bad)
            continue
        dates = {}
        for c in ("start", "end"):
            try:
                dates[c] = parse_date(cell(c), raw.get(c, c))
            except CellError as e:
                err(e.code, e.message, c)
                dates[c] = None
            day = dates[c]
            if day is not None and not limits.DATE_RANGE[0] <= day <= limits.DATE_RANGE[1]:
                err(
                    "out-of-range",
                    f"{raw.get(c, c)} {day} is outside {limits.DATE_RANGE[0].year}-"
                    f"{limits.DATE_RANGE[1].year}; correct the year",
                    c,
                )
                dates[c] = None
        start, end = dates["start"], dates["end"]
        if start is None and not any(b.column == raw["start"] for b in bad):
            err("missing-value", f"phase in row {row} has no start date; add it", "start")
        kind = parse_text(cell("kind")).lower()
        if kind not in PHASE_KINDS:
            err(
                "bad-value",
                f'kind "{parse_text(cell("kind"))}" is not a phase kind; use one of '
                f"{', '.join(PHASE_KINDS)}",
                "kind",
            )
        target = None
        try:
            target = parse_number(cell("target_kcal"), raw.get("target_kcal", "target_kcal"))
            if target is not None:
                check_range(
                    target,
                    limits.TARGET_KCAL,
                    raw["target_kcal"],
                    cell("target_kcal"),
                    "kcal",
                    "no plausible daily intake",
                )
        except CellError as e:
            err(e.code, e.message, "target_kcal")
            target = None
        if start is not None and end is not None and end < start:
            err(
                "bad-value",
                f"phase ends ({end}) before it starts ({start}); correct start or end",
                "end",
            )
        if bad:
            problems.extend(bad)
            continue
        assert start is not None
        name = parse_text(cell("name")) or kind
        k = cast(PhaseKind, kind)  # checked against PHASE_KINDS above
        out.setdefault(cid, []).append(
            (row, Phase(name=name, start=start, end=end, kind=k, target_kcal=target))
        )
    return out, problems


def check_overlaps(
    phases: list[tuple[int, Phase]], file: str, client_id: str
) -> tuple[tuple[Phase, ...], list[Problem]]:
    """Sort one client's phases by start and report overlaps (end dates are inclusive)."""
    ordered = sorted(phases, key=lambda rp: rp[1].start)
    problems: list[Problem] = []
    for (_, a), (row_b, b) in itertools.pairwise(ordered):
        if a.end is None or b.start <= a.end:
            until = "still running" if a.end is None else f"to {a.end}"
            problems.append(
                Problem(
                    "error",
                    "overlapping-phases",
                    f'phase "{b.name}" (starts {b.start}) overlaps phase "{a.name}" '
                    f"({a.start} {until}); end one phase before the next starts",
                    file=file,
                    row=row_b,
                    column=None,
                    client_id=client_id,
                )
            )
    return tuple(p for _, p in ordered), problems
