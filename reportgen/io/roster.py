"""The roster (``clients.csv`` or ``clients.xlsx``): one row per client."""

from __future__ import annotations

import datetime as dt
import re
from collections.abc import Callable
from typing import Final, TypeVar

from reportgen.io import limits
from reportgen.io.cells import (
    CellError,
    check_range,
    parse_date,
    parse_number,
    parse_sex,
    parse_text,
    parse_yes_no,
)
from reportgen.io.columns import check_columns
from reportgen.io.model import Client, Problem
from reportgen.io.tables import Cell, Table, cell_problem
from reportgen.io.units import UNIT_AGREEMENT, UNIT_MAP, alternatives

T = TypeVar("T")
CLIENT_ID_RE: Final = re.compile(rf"[A-Za-z0-9_-]{{1,{limits.MAX_CLIENT_ID_LEN}}}")
ROSTER_COLUMNS: Final = (
    "client_id",
    "name",
    "sex",
    "birth_date",
    *alternatives("height_cm"),
    "email",
    "pregnant",
    *alternatives("goal_weight_kg"),
)
_LIMITS: Final = {
    "height_cm": (limits.HEIGHT_CM, "cm", "no plausible adult or adolescent height"),
    "goal_weight_kg": (limits.WEIGHT_KG, "kg", "no plausible adult or adolescent weight"),
}


_NEEDED_FOR: Final = {
    "sex": "expected expenditure and body fat need the sex",
    "birth_date": "without the age reportgen cannot tell whether the client is a minor, and "
    "expected expenditure and body fat need it",
    "height_cm": "BMI and expected expenditure need the height",
}


def _names(raw: dict[str, str], canonical: str) -> set[str | None]:
    """The column names as written that carry ``canonical``."""
    return {raw[a] for a in alternatives(canonical) if a in raw}


def _label(raw: dict[str, str], canonical: str) -> str:
    """The column as written for ``canonical`` (first alternative present), else its name."""
    return next((raw[a] for a in alternatives(canonical) if a in raw), canonical)


def parse_roster(table: Table, today: dt.date) -> tuple[tuple[Client, ...], list[Problem]]:
    """Parse the roster table; problems carry the client id where one is known."""
    problems, ok = check_columns(table, [("client_id",)], ROSTER_COLUMNS, None, warn_unknown=False)
    if not ok:
        return (), problems
    pos = {c: p for c in ROSTER_COLUMNS if (p := table.index(c)) is not None}
    raw = {c: table.raw_columns[p] for c, p in pos.items()}
    extra_pos = [
        (p, table.raw_columns[p])
        for p, c in enumerate(table.columns)
        if c and c not in ROSTER_COLUMNS
    ]
    clients: list[Client] = []
    seen: dict[str, tuple[int, str]] = {}
    for row, cells in table.rows:
        bad: list[Problem] = []

        def cell(c: str, cells: tuple[Cell, ...] = cells) -> Cell:
            return cells[pos[c]] if c in pos else None

        def err(
            code: str,
            msg: str,
            c: str | None,
            cid: str | None,
            row: int = row,
            bad: list[Problem] = bad,
        ) -> None:
            col, v = (raw.get(c), cell(c)) if c else (None, None)
            bad.append(cell_problem("error", code, msg, table, row, col, v, cid))

        cid = parse_text(cell("client_id"))
        if not cid:
            err("missing-value", f"row {row} has no client_id; add one", "client_id", None)
            problems.extend(bad)
            continue
        if not CLIENT_ID_RE.fullmatch(cid):
            err(
                "bad-client-id",
                f'client_id "{cid}" is not usable: use at most {limits.MAX_CLIENT_ID_LEN} '
                "letters, digits, - and _ (no spaces)",
                "client_id",
                None,
            )
            problems.extend(bad)
            continue
        # Ids differing only in case are one id: on a case-insensitive disk their files collide.
        if cid.lower() in seen:
            first_row, first_id = seen[cid.lower()]
            same = (
                f'client_id "{cid}" appears in rows {first_row} and {row}'
                if first_id == cid
                else f'client_id "{cid}" in row {row} differs from "{first_id}" in row '
                f"{first_row} only in upper/lower case (their files would be the same on many "
                "disks)"
            )
            err(
                "duplicate-client",
                f"{same}; give each client one row and a unique id",
                "client_id",
                cid,
            )
            problems.extend(bad)
            continue
        seen[cid.lower()] = (row, cid)

        def get(c: str, fn: Callable[[Cell, str], T], cid: str = cid) -> T | None:
            try:
                return fn(cell(c), raw.get(c, c))
            except CellError as e:
                err(e.code, e.message, c, cid)
                return None

        sex = get("sex", parse_sex)
        birth = get("birth_date", parse_date)
        if birth is not None:
            age = today.year - birth.year - ((today.month, today.day) < (birth.month, birth.day))
            if birth > today or age > limits.MAX_AGE_YEARS:
                err(
                    "out-of-range",
                    f"birth_date {birth} gives an age of {age} years today; correct the date",
                    "birth_date",
                    cid,
                )
                birth = None
        measures: dict[str, float | None] = {}
        for canonical, (lims, unit, why) in _LIMITS.items():
            got = []
            for name in alternatives(canonical):
                x = get(name, parse_number) if name in pos else None
                if x is not None:
                    got.append((name, x * (UNIT_MAP[name][1] if name in UNIT_MAP else 1.0)))
            value = got[0][1] if got else None
            if len(got) > 1 and abs(got[0][1] - got[1][1]) > UNIT_AGREEMENT[canonical]:
                err(
                    "unit-conflict",
                    f"has both {raw[got[0][0]]} and {raw[got[1][0]]} with different values "
                    f"({got[0][1]:.1f} vs {got[1][1]:.1f} {unit}); keep one",
                    got[1][0],
                    cid,
                )
                value = None
            if value is not None:
                try:
                    check_range(value, lims, raw[got[0][0]], cell(got[0][0]), unit, why)
                except CellError as e:
                    err(e.code, e.message, got[0][0], cid)
                    value = None
            measures[canonical] = value
        pregnant = get("pregnant", parse_yes_no) or False
        email = parse_text(cell("email")) or None
        extra = {name: parse_text(cells[p]) for p, name in extra_pos}
        blank = [
            col
            for col, value in (
                ("sex", sex),
                ("birth_date", birth),
                ("height_cm", measures["height_cm"]),
            )
            if value is None and not any(b.column in _names(raw, col) for b in bad)
        ]
        if blank:
            bad.append(
                Problem(
                    "warning",
                    "missing-detail",
                    f"{' and '.join(_label(raw, c) for c in blank)} "
                    f"{'is' if len(blank) == 1 else 'are'} blank: "
                    + "; ".join(_NEEDED_FOR[c] for c in blank)
                    + ". Fill in the roster",
                    file=table.file,
                    row=row,
                    column=_label(raw, blank[0]),
                    client_id=cid,
                )
            )
        problems.extend(bad)
        clients.append(
            Client(
                client_id=cid,
                name=parse_text(cell("name")) or cid,
                sex=sex,
                birth_date=birth,
                height_cm=measures["height_cm"],
                email=email,
                pregnant=bool(pregnant),
                goal_weight_kg=measures["goal_weight_kg"],
                extra=extra,
                roster_file=table.file,
                roster_row=row,
            )
        )
    return tuple(clients), problems
