"""Scaffold an empty, ready-to-fill client book.

:func:`new_book` writes a ``clients.xlsx`` roster, an empty ``phases.csv`` and one
workbook ``logs/<id>.xlsx`` per client (sheets ``daily``, ``skinfolds``, ``phases``);
:func:`add_client` adds one more workbook to an existing book without touching any
other file.  Every header cell carries a comment that explains the column and its unit,
date columns are date-formatted, header rows are frozen, and Excel data validation
refuses values outside the limits the readers enforce (:mod:`reportgen.io.limits`), so a
typo is caught while typing instead of at month end.

Workbooks are saved with fixed timestamps (:func:`save_workbook`), so the same call
gives byte-identical files.
"""

from __future__ import annotations

import datetime as dt
import io
import math
import re
import zipfile
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Literal, TypedDict

from openpyxl import Workbook
from openpyxl.comments import Comment
from openpyxl.styles import Alignment, Font, PatternFill
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.datavalidation import DataValidation
from openpyxl.worksheet.worksheet import Worksheet

from reportgen.choices import ENERGY_UNITS as ENERGY_UNITS
from reportgen.choices import UNIT_SYSTEMS as UNIT_SYSTEMS
from reportgen.choices import EnergyUnit, UnitSystem
from reportgen.io import limits
from reportgen.io.book import TABLE_TYPES
from reportgen.io.model import PHASE_KINDS, SKINFOLD_SITES
from reportgen.unit_constants import CM_PER_INCH, KCAL_PER_KJ, KG_PER_LB, KJ_PER_KCAL

Units = UnitSystem
Energy = EnergyUnit

_LAST_ROW = 1048576  # Excel's last row: validation covers every row a coach can reach
_AUTHOR = "reportgen"
_HEADER_FONT = Font(bold=True)
_HEADER_FILL = PatternFill("solid", fgColor="DCE6EC")
_DATE_FORMAT = "yyyy-mm-dd"
# Excel date serials for the range a date cell may hold (1900 date system).
_FIRST_DATE = dt.date(1900, 3, 1)
_LAST_DATE = dt.date(2099, 12, 31)


class ScaffoldError(Exception):
    """The book cannot be created or extended as asked; the message says why and what to do."""


@dataclass(frozen=True)
class Column:
    """One column of a scaffolded sheet: header, explanation and what Excel accepts."""

    name: str
    comment: str
    kind: Literal["date", "decimal", "whole", "list", "text"] = "text"
    low: float | None = None
    high: float | None = None
    choices: tuple[str, ...] = ()
    width: float = 13.0


def _serial(d: dt.date) -> int:
    """Excel 1900-system serial number of a date (valid from 1900-03-01 on)."""
    return (d - dt.date(1899, 12, 30)).days


def _inside(low: float, high: float, factor: float) -> tuple[float, float]:
    """Limits converted to another unit, rounded inwards to 0.1 so Excel never accepts a
    value the readers refuse."""
    return math.ceil(low / factor * 10) / 10, math.floor(high / factor * 10) / 10


def daily_columns(units: Units = "metric", energy: Energy = "kcal") -> tuple[Column, ...]:
    """Columns of the ``daily`` sheet for the chosen units."""
    w_lo, w_hi = limits.WEIGHT_KG
    e_lo, e_hi = limits.INTAKE_KCAL
    if units == "imperial":
        lb_lo, lb_hi = _inside(w_lo, w_hi, KG_PER_LB)
        weight = Column(
            "weight_lb",
            f"Morning body weight in pounds (lb), after the toilet and before eating or drinking; "
            f"accepted {lb_lo:g}-{lb_hi:g} lb. Leave blank on days without a weigh-in.",
            "decimal",
            lb_lo,
            lb_hi,
        )
    else:
        weight = Column(
            "weight_kg",
            f"Morning body weight in kilograms (kg), after the toilet and before eating or "
            f"drinking; accepted {w_lo:g}-{w_hi:g} kg. Leave blank on days without a weigh-in.",
            "decimal",
            w_lo,
            w_hi,
        )
    if energy == "kJ":
        kj_lo, kj_hi = _inside(e_lo, e_hi, KCAL_PER_KJ)
        intake = Column(
            "intake_kj",
            f"Everything eaten and drunk that day in kilojoules (kJ); accepted "
            f"{kj_lo:g}-{kj_hi:g} kJ. Leave blank if the day was not logged (a blank is not zero).",
            "decimal",
            kj_lo,
            kj_hi,
        )
    else:
        intake = Column(
            "intake_kcal",
            f"Everything eaten and drunk that day in kilocalories (kcal); accepted "
            f"{e_lo:g}-{e_hi:g} kcal. Leave blank if the day was not logged (a blank is not zero).",
            "decimal",
            e_lo,
            e_hi,
        )
    r_lo, r_hi = limits.RATING
    return (
        Column(
            "date",
            "Calendar day of this row, e.g. 2026-11-03. One row per day; skip days freely.",
            "date",
            width=12.0,
        ),
        weight,
        intake,
        Column(
            "steps",
            f"Step count for the day (a whole number, {limits.STEPS[0]:g} or more, at most "
            f"{limits.STEPS[1]:g}), from a phone or tracker.",
            "whole",
            *limits.STEPS,
        ),
        Column(
            "hunger",
            f"How hungry the day felt, a whole number from {r_lo:g} (not at all) to {r_hi:g} "
            "(extremely hungry).",
            "whole",
            r_lo,
            r_hi,
        ),
        Column(
            "energy",
            f"Energy level during the day, a whole number from {r_lo:g} (exhausted) to {r_hi:g} "
            "(full of energy).",
            "whole",
            r_lo,
            r_hi,
        ),
        Column(
            "sleep_h",
            "Hours slept the night before, in hours (h), e.g. 7.5.",
            "decimal",
            *limits.SLEEP_H,
        ),
    )


_SITE_HELP = {
    "chest": "diagonal fold halfway between the armpit fold and the nipple (women: one third)",
    "abdominal": "vertical fold 2 cm to the right of the navel",
    "thigh": "vertical fold on the front of the thigh, midway between hip and knee",
    "triceps": "vertical fold on the back of the upper arm, midway between shoulder and elbow",
    "subscapular": "diagonal fold just below the lower tip of the shoulder blade",
    "suprailiac": "diagonal fold just above the front of the hip bone",
    "midaxillary": "fold on the side of the trunk in line with the middle of the armpit",
    "biceps": "vertical fold on the front of the upper arm, over the biceps",
}


def skinfold_columns() -> tuple[Column, ...]:
    """Columns of the ``skinfolds`` sheet: date plus every site the readers know."""
    lo, hi = limits.SKINFOLD_MM
    sites = tuple(
        Column(
            site,
            f"{site.capitalize()} skinfold in millimetres (mm): {_SITE_HELP[site]}. One reading "
            f"per row, {lo:g}-{hi:g} mm; leave sites you do not measure blank.",
            "decimal",
            lo,
            hi,
            width=12.0,
        )
        for site in SKINFOLD_SITES
    )
    date = Column(
        "date",
        "Date of the skinfold session. Repeated readings go on extra rows with the same date "
        "(two per site, a third when the first two differ by more than 5 %).",
        "date",
        width=12.0,
    )
    return (date, *sites)


def phase_columns(with_client_id: bool) -> tuple[Column, ...]:
    """Columns of ``phases.csv`` (with ``client_id``) or a workbook's ``phases`` sheet."""
    lo, hi = limits.TARGET_KCAL
    where = (
        "One row per phase of one client."
        if with_client_id
        else "Phases of this client only; keep them either here or in the book's phases.csv, "
        "not in both."
    )
    cols = (
        Column("name", f"Your name for the phase, e.g. Autumn fat loss. {where}", width=22.0),
        Column("start", "First day of the phase, e.g. 2026-09-01.", "date", width=12.0),
        Column(
            "end",
            "Last day of the phase; leave blank while the phase is still running. "
            "Phases of one client must not overlap.",
            "date",
            width=12.0,
        ),
        Column(
            "kind",
            "One of: " + ", ".join(PHASE_KINDS) + " (break = a planned diet break at maintenance).",
            "list",
            choices=PHASE_KINDS,
            width=13.0,
        ),
        Column(
            "target_kcal",
            f"Planned daily intake in kilocalories (kcal), optional; {lo:g}-{hi:g} kcal "
            f"(kJ / {KJ_PER_KCAL:g} = kcal).",
            "decimal",
            lo,
            hi,
        ),
    )
    if with_client_id:
        return (Column("client_id", "The client's id as in clients.xlsx."), *cols)
    return cols


def roster_columns(units: Units = "metric") -> tuple[Column, ...]:
    """Columns of the ``clients.xlsx`` roster."""
    h_lo, h_hi = limits.HEIGHT_CM
    if units == "imperial":
        in_lo, in_hi = _inside(h_lo, h_hi, CM_PER_INCH)
        height = Column(
            "height_in",
            f"Height in inches (in), e.g. 70.5; accepted {in_lo:g}-{in_hi:g} in.",
            "decimal",
            in_lo,
            in_hi,
        )
    else:
        height = Column(
            "height_cm",
            f"Height in centimetres (cm), e.g. 168; accepted {h_lo:g}-{h_hi:g} cm.",
            "decimal",
            h_lo,
            h_hi,
        )
    w_lo, w_hi = limits.WEIGHT_KG
    if units == "imperial":
        lb_lo, lb_hi = _inside(w_lo, w_hi, KG_PER_LB)
        goal = Column(
            "goal_weight_lb",
            f"Goal weight in pounds (lb), optional; {lb_lo:g}-{lb_hi:g} lb.",
            "decimal",
            lb_lo,
            lb_hi,
            width=14.0,
        )
    else:
        goal = Column(
            "goal_weight_kg",
            f"Goal weight in kilograms (kg), optional; {w_lo:g}-{w_hi:g} kg.",
            "decimal",
            w_lo,
            w_hi,
            width=14.0,
        )
    return (
        Column(
            "client_id",
            f"Short unique id: letters, digits, - and _, at most {limits.MAX_CLIENT_ID_LEN} "
            "characters. The client's log is logs/<client_id>.xlsx.",
            width=12.0,
        ),
        Column("name", "The client's name as it should appear on the report.", width=24.0),
        Column(
            "sex",
            "female or male (used by the body-fat and energy equations).",
            "list",
            choices=("female", "male"),
        ),
        Column(
            "birth_date",
            f"Date of birth, e.g. 1990-04-17. Clients under {limits.ADULT_AGE_YEARS} are marked "
            "for special care.",
            "date",
            width=12.0,
        ),
        height,
        Column("email", "Where the monthly report is sent (optional).", width=28.0),
        Column(
            "pregnant",
            "yes or no (optional). Pregnant clients get no deficit analysis.",
            "list",
            choices=("yes", "no"),
            width=10.0,
        ),
        goal,
    )


class _CommonValidation(TypedDict):
    allow_blank: bool
    showErrorMessage: bool
    showInputMessage: bool


def _validation(col: Column) -> DataValidation | None:
    common: _CommonValidation = {
        "allow_blank": True,
        "showErrorMessage": True,
        "showInputMessage": False,
    }
    if col.kind == "date":
        dv = DataValidation(
            type="date",
            operator="between",
            formula1=str(_serial(_FIRST_DATE)),
            formula2=str(_serial(_LAST_DATE)),
            error="Type a date such as 2026-11-03.",
            errorTitle=f"{col.name}: not a date",
            **common,
        )
    elif col.kind in ("decimal", "whole") and col.low is not None and col.high is not None:
        number: Literal["decimal", "whole"] = "whole" if col.kind == "whole" else "decimal"
        dv = DataValidation(
            type=number,
            operator="between",
            formula1=f"{col.low:g}",
            formula2=f"{col.high:g}",
            error=f"{col.name} must be a {'whole ' if col.kind == 'whole' else ''}number "
            f"from {col.low:g} to {col.high:g}.",
            errorTitle=f"{col.name}: out of range",
            **common,
        )
    elif col.kind == "list":
        dv = DataValidation(
            type="list",
            formula1='"' + ",".join(col.choices) + '"',
            error=f"{col.name} must be one of: {', '.join(col.choices)}.",
            errorTitle=f"{col.name}: not allowed",
            **common,
        )
    else:
        return None
    return dv


def add_sheet(wb: Workbook, title: str, columns: Sequence[Column]) -> Worksheet:
    """A sheet with commented headers, validation, date-formatted columns and a frozen header."""
    ws: Worksheet = wb.create_sheet(title)  # typed Any: only write-only books differ
    for j, col in enumerate(columns, start=1):
        cell = ws.cell(row=1, column=j, value=col.name)
        cell.font = _HEADER_FONT
        cell.fill = _HEADER_FILL
        cell.alignment = Alignment(horizontal="center")
        comment = Comment(col.comment, _AUTHOR)
        comment.width, comment.height = 300, 110
        cell.comment = comment
        letter = get_column_letter(j)
        dim = ws.column_dimensions[letter]
        dim.width = col.width
        if col.kind == "date":
            dim.number_format = _DATE_FORMAT  # applies to every cell typed into the column
        dv = _validation(col)
        if dv is not None:
            ws.add_data_validation(dv)
            dv.add(f"{letter}2:{letter}{_LAST_ROW}")
    ws.freeze_panes = "A2"
    return ws


def _empty_workbook() -> Workbook:
    """A workbook without the sheet openpyxl starts every new workbook with."""
    wb = Workbook()
    first = wb.active
    assert first is not None  # a new workbook always has that one sheet
    wb.remove(first)
    return wb


def client_workbook(units: Units = "metric", energy: Energy = "kcal") -> Workbook:
    """An empty client log: sheets ``daily``, ``skinfolds`` and ``phases``."""
    wb = _empty_workbook()
    add_sheet(wb, "daily", daily_columns(units, energy))
    add_sheet(wb, "skinfolds", skinfold_columns())
    add_sheet(wb, "phases", phase_columns(with_client_id=False))
    return wb


def roster_workbook(client_ids: Sequence[str], units: Units = "metric") -> Workbook:
    """The ``clients.xlsx`` roster, with one row started for each client id."""
    wb = _empty_workbook()
    ws = add_sheet(wb, "clients", roster_columns(units))
    for i, cid in enumerate(client_ids, start=2):
        ws.cell(row=i, column=1, value=cid)
    return wb


def check_client_id(client_id: str) -> str:
    """The id itself, or :class:`ScaffoldError` saying what an id may contain."""
    from reportgen.io.guard import escape_controls
    from reportgen.io.roster import CLIENT_ID_RE  # exactly the reader's rule

    if not CLIENT_ID_RE.fullmatch(client_id):
        raise ScaffoldError(
            f'client id "{escape_controls(client_id)}" is not allowed: use letters, digits, - '
            f"and _ (at most {limits.MAX_CLIENT_ID_LEN} characters), e.g. c001"
        )
    return client_id


def _check_options(units: str, energy: str) -> None:
    if units not in UNIT_SYSTEMS:
        raise ScaffoldError(f'units "{units}" is not known; use one of: metric, imperial')
    if energy not in ENERGY_UNITS:
        raise ScaffoldError(f'energy unit "{energy}" is not known; use one of: kcal, kJ')


def _check_ids(client_ids: Sequence[str]) -> None:
    seen: set[str] = set()
    for cid in client_ids:
        check_client_id(cid)
        if cid.lower() in seen:
            raise ScaffoldError(f'client id "{cid}" is given twice; each client needs its own id')
        seen.add(cid.lower())


_BOOK_FILES = ("clients.xlsx", "clients.csv", "phases.csv", "logs")


def new_book(
    book_dir: Path,
    client_ids: Sequence[str] = (),
    units: Units = "metric",
    energy: Energy = "kcal",
) -> list[Path]:
    """Create an empty client book in ``book_dir`` (new or empty); returns the files written.

    Refuses (:class:`ScaffoldError`) to write into a folder that already holds anything,
    so an existing book is never overwritten.
    """
    _check_options(units, energy)
    _check_ids(client_ids)
    book_dir = Path(book_dir)
    if book_dir.exists():
        if not book_dir.is_dir():
            raise ScaffoldError(f"{book_dir} exists and is not a folder; pick a new folder name")
        found = [n for n in _BOOK_FILES if (book_dir / n).exists()]
        if found:
            raise ScaffoldError(
                f"{book_dir} already holds a client book ({', '.join(found)}); nothing was "
                "changed. Use --add-client ID to add a client to it, or pick a new folder."
            )
        if any(book_dir.iterdir()):
            raise ScaffoldError(
                f"{book_dir} is not empty; nothing was changed. Pick a new or empty folder."
            )
    (book_dir / "logs").mkdir(parents=True, exist_ok=True)
    written = [book_dir / "clients.xlsx", book_dir / "phases.csv"]
    save_workbook(roster_workbook(client_ids, units), written[0])
    header = ",".join(c.name for c in phase_columns(with_client_id=True))
    written[1].write_text(header + "\n", encoding="utf-8")
    for cid in client_ids:
        p = book_dir / "logs" / f"{cid}.xlsx"
        save_workbook(client_workbook(units, energy), p)
        written.append(p)
    return written


def book_units(book_dir: Path) -> Units:
    """The unit system of an existing book's roster (imperial if it has ``height_in``)."""
    from python_calamine import CalamineWorkbook

    xlsx = book_dir / "clients.xlsx"
    if xlsx.exists():
        rows = CalamineWorkbook.from_path(str(xlsx)).get_sheet_by_index(0).to_python()
        header = [str(c).strip().lower() for c in rows[0]] if rows else []
    else:
        with (book_dir / "clients.csv").open(encoding="utf-8-sig", errors="replace") as fh:
            header = [c.strip().lower() for c in fh.readline().split(",")]
    return "imperial" if "height_in" in header and "height_cm" not in header else "metric"


def add_client(
    book_dir: Path,
    client_id: str,
    units: Units | None = None,
    energy: Energy = "kcal",
) -> Path:
    """Add ``logs/<client_id>.xlsx`` to an existing book, touching no other file.

    ``units`` None takes the book's unit system from its roster.  The client still needs
    a row in the roster; the caller says so.
    """
    book_dir = Path(book_dir)
    check_client_id(client_id)
    if not any((book_dir / n).is_file() for n in ("clients.xlsx", "clients.csv")):
        raise ScaffoldError(
            f"{book_dir} is not a client book (no clients.xlsx or clients.csv); "
            f"create one first with: reportgen new-book {book_dir}"
        )
    if units is None:
        units = book_units(book_dir)
    _check_options(units, energy)
    logs = book_dir / "logs"
    for existing in sorted(logs.glob("*")) if logs.is_dir() else []:
        if existing.stem.lower() == client_id.lower() and existing.suffix.lower() in TABLE_TYPES:
            raise ScaffoldError(
                f"{existing.relative_to(book_dir)} already exists; nothing was changed"
            )
    logs.mkdir(exist_ok=True)
    path = logs / f"{client_id}.xlsx"
    save_workbook(client_workbook(units, energy), path)
    return path


# ---------------------------------------------------------------- reproducible saving

FIXED_TIME = dt.datetime(2026, 1, 1, 0, 0, 0)
_ZIP_TIME = (2026, 1, 1, 0, 0, 0)
_MODIFIED = re.compile(rb"(<dcterms:modified[^>]*>)[^<]*(</dcterms:modified>)")


def workbook_bytes(wb: Workbook, when: dt.datetime = FIXED_TIME) -> bytes:
    """The saved workbook with fixed document and zip timestamps.

    openpyxl stamps the save time into ``docProps/core.xml`` and into every zip entry,
    so two saves of one workbook differ; pinning both makes the bytes reproducible.
    """
    wb.properties.created = when
    wb.properties.creator = _AUTHOR
    wb.properties.lastModifiedBy = None
    raw = io.BytesIO()
    wb.save(raw)  # stamps "modified" with the current time; replaced below
    stamp = when.strftime("%Y-%m-%dT%H:%M:%SZ").encode()
    out = io.BytesIO()
    with (
        zipfile.ZipFile(io.BytesIO(raw.getvalue())) as src,
        zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as dst,
    ):
        for info in src.infolist():
            data = src.read(info.filename)
            if info.filename == "docProps/core.xml":
                data = _MODIFIED.sub(rb"\g<1>" + stamp + rb"\g<2>", data)
            entry = zipfile.ZipInfo(info.filename, date_time=_ZIP_TIME)
            entry.compress_type = zipfile.ZIP_DEFLATED
            entry.external_attr = 0o644 << 16
            dst.writestr(entry, data)
    return out.getvalue()


def save_workbook(wb: Workbook, path: Path, when: dt.datetime = FIXED_TIME) -> None:
    """Save ``wb`` to ``path`` reproducibly (see :func:`workbook_bytes`)."""
    Path(path).write_bytes(workbook_bytes(wb, when))
