"""Reading CSV files and workbook sheets into plain tables of cells.

A :class:`Table` keeps each data row with the spreadsheet row number a person sees
(header = 1) and the column names both as written and normalised (lower case, surrounding
spaces removed), so every later message can point at the exact cell.  Files are opened
read-only and never changed.
"""

from __future__ import annotations

import codecs
import csv
import datetime as dt
import io
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import cast

from reportgen.io import guard
from reportgen.io.model import Problem, Severity

#: A cell as the readers deliver it: text from CSV; text, number, bool or date/time from XLSX.
Cell = str | float | int | bool | dt.date | dt.datetime | dt.time | dt.timedelta | None


@dataclass(frozen=True)
class Table:
    """One sheet: normalised column names, names as written, and numbered rows."""

    file: str
    sheet: str | None
    columns: tuple[str, ...]
    raw_columns: tuple[str, ...]
    rows: tuple[tuple[int, tuple[Cell, ...]], ...]
    header_row: int = 1

    def index(self, name: str) -> int | None:
        """Position of the normalised column ``name``, or None."""
        try:
            return self.columns.index(name)
        except ValueError:
            return None

    def where(self) -> str:
        """The file (and sheet) for messages."""
        return f"{self.file} (sheet {self.sheet})" if self.sheet else self.file


def normalise_name(cell: Cell) -> str:
    """Column name matching: case-insensitive, surrounding spaces ignored."""
    return cell_text(cell).strip().lower()


def cell_text(cell: Cell) -> str:
    """A cell as text for messages and text fields (whole numbers without ``.0``)."""
    if cell is None:
        return ""
    if isinstance(cell, bool):
        return "TRUE" if cell else "FALSE"
    if isinstance(cell, float) and cell.is_integer() and abs(cell) < 1e15:
        return str(int(cell))
    if isinstance(cell, dt.datetime | dt.date | dt.time):
        return cell.isoformat()
    return str(cell)


def is_blank(cell: Cell) -> bool:
    return cell is None or (isinstance(cell, str) and not cell.strip())


def cell_problem(
    severity: Severity,
    code: str,
    message: str,
    table: Table,
    row: int | None,
    column: str | None,
    cell: Cell,
    client_id: str | None,
) -> Problem:
    """A problem found in one cell of ``table``, carrying the cell's text as its value."""
    return Problem(
        severity,
        code,
        message,
        file=table.file,
        row=row,
        column=column,
        value=None if cell is None else cell_text(cell),
        client_id=client_id,
    )


def _problem(
    code: str,
    message: str,
    file: str,
    client_id: str | None,
    row: int | None = None,
    column: str | None = None,
) -> Problem:
    return Problem("error", code, message, file=file, row=row, column=column, client_id=client_id)


def build_table(
    file: str,
    sheet: str | None,
    rows: Sequence[Sequence[Cell]],
    client_id: str | None,
    *,
    text_only: bool = False,
) -> tuple[Table | None, list[Problem]]:
    """Turn raw rows (first non-empty row = header) into a :class:`Table`.

    Blank rows are skipped; trailing columns without a name are ignored when empty.
    ``text_only`` promises that every cell is a ``str`` (CSV), which allows a faster path.
    """
    problems: list[Problem] = []
    where = f"{file} (sheet {sheet})" if sheet else file
    header_at = next(
        (i for i, r in enumerate(rows) if any(not is_blank(c) for c in r)),
        None,
    )
    if header_at is None:
        problems.append(
            _problem("empty-file", f"{where} is empty; it needs a header row", file, client_id)
        )
        return None, problems
    header = list(rows[header_at])
    while header and is_blank(header[-1]):
        header.pop()
    refused = guard.header_problem(header, file, where, header_at + 1, client_id)
    if refused is not None:
        return None, [*problems, refused]
    raw = tuple(cell_text(c).strip() for c in header)
    names = tuple(n.lower() for n in raw)
    seen: dict[str, int] = {}
    for pos, name in enumerate(names):
        if name and name in seen:
            problems.append(
                _problem(
                    "duplicate-column",
                    f'column "{raw[pos]}" appears twice in {where} (columns {seen[name] + 1} '
                    f"and {pos + 1}); keep one",
                    file,
                    client_id,
                    row=header_at + 1,
                    column=raw[pos],
                )
            )
        seen.setdefault(name, pos)
    width = len(names)
    out: list[tuple[int, tuple[Cell, ...]]] = []
    unnamed_with_data: set[int] = set()
    any_unnamed = not all(names)
    for i in range(header_at + 1, len(rows)):
        r = rows[i]
        if _blank_row(r, text_only):
            continue
        # CSV rows hold only text: one C-level sum rules out a long cell in the usual case
        if not text_only or sum(map(len, cast(Sequence[str], r))) > guard.MAX_CELL_CHARS:
            too_long = guard.long_cell_problem(r, names, raw, file, where, i + 1, client_id)
            if too_long is not None:
                problems.append(too_long)
                continue
        cells = tuple(r[:width]) + (None,) * max(0, width - len(r))
        if len(r) > width and any(not is_blank(c) for c in r[width:]):
            problems.append(
                _problem(
                    "extra-cells",
                    f"row {i + 1} of {where} has values beyond the last named column "
                    f"(the header has {width} columns); give the column a name or remove them",
                    file,
                    client_id,
                    row=i + 1,
                )
            )
        if any_unnamed:
            for pos, name in enumerate(names):
                if not name and not is_blank(cells[pos]):
                    unnamed_with_data.add(pos)
        out.append((i + 1, cells))
    for pos in sorted(unnamed_with_data):
        problems.append(
            Problem(
                "warning",
                "unknown-column",
                f"column {pos + 1} of {where} has values but no name in the header row; "
                "they are ignored",
                file=file,
                row=header_at + 1,
                client_id=client_id,
            )
        )
    return Table(file, sheet, names, raw, tuple(out), header_at + 1), problems


def _blank_row(r: Sequence[Cell], text_only: bool) -> bool:
    if text_only:  # CSV rows hold only text: one C-level join instead of a call per cell
        return not "".join(cast(Sequence[str], r)).strip()
    return all(is_blank(c) for c in r)


def decode_text(data: bytes, file: str, client_id: str | None) -> tuple[str, list[Problem]]:
    """UTF-8 (with or without BOM); otherwise cp1252 (or latin-1) with a warning."""
    if data.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
        try:
            return data.decode("utf-16"), []
        except UnicodeDecodeError:
            pass
    try:
        return data.decode("utf-8-sig"), []
    except UnicodeDecodeError:
        pass
    try:
        text, used = data.decode("cp1252"), "Windows-1252 (cp1252)"
    except UnicodeDecodeError:
        # cp1252 leaves five byte values undefined; latin-1 maps every byte.
        text, used = data.decode("latin-1"), "Latin-1 (ISO-8859-1)"
    warn = Problem(
        "warning",
        "encoding-fallback",
        f"{file} is not UTF-8; it was read as {used}. Check that accented letters look "
        'right, or save the file as "CSV UTF-8" to avoid this warning',
        file=file,
        client_id=client_id,
    )
    return text, [warn]


def read_csv_table(
    book_dir: Path, rel: str, client_id: str | None = None
) -> tuple[Table | None, list[Problem]]:
    """Read ``book_dir/rel`` as comma-separated text (never modifies the file)."""
    try:
        data = guard.read_input(book_dir / rel, rel, guard.MAX_CSV_BYTES, "CSV file")
        guard.check_text_rows(data, rel)
    except guard.InputRefused as exc:
        return None, [_problem(exc.code, exc.message, rel, client_id)]
    text, problems = decode_text(data, rel, client_id)
    try:
        rows = list(csv.reader(io.StringIO(text, newline=""), strict=False))
    except csv.Error as exc:
        problems.append(
            _problem(
                "unreadable-file",
                f"{rel} is not a readable CSV file ({exc}); save it again as CSV",
                rel,
                client_id,
            )
        )
        return None, problems
    table, more = build_table(rel, None, rows, client_id, text_only=True)
    return table, problems + more


def read_xlsx_sheets(
    book_dir: Path,
    rel: str,
    wanted: tuple[str, ...],
    client_id: str | None = None,
    *,
    first_sheet: bool = False,
) -> tuple[dict[str, tuple[str, Sequence[Sequence[Cell]]]] | None, tuple[str, ...], list[Problem]]:
    """Read the ``wanted`` sheets of a workbook with calamine (never modifies the file).

    Returns ``{normalised name: (name as written, rows)}``, all sheet names, and problems;
    with ``first_sheet``, the first sheet comes under the key ``""`` when none is wanted.
    The file is read once through :mod:`reportgen.io.guard` (type, size and extent checks).
    Sheet names match case-insensitively.  Real date cells arrive as dates: calamine applies
    the workbook's 1900 or 1904 date system.
    """
    from python_calamine import CalamineWorkbook

    try:
        data = guard.read_input(book_dir / rel, rel, guard.MAX_WORKBOOK_BYTES, "workbook")
        guard.check_workbook(data, rel)
    except guard.InputRefused as exc:
        return None, (), [_problem(exc.code, exc.message, rel, client_id)]
    try:
        wb = CalamineWorkbook.from_filelike(io.BytesIO(data))
        try:
            names = tuple(wb.sheet_names)
            found: dict[str, tuple[str, Sequence[Sequence[Cell]]]] = {}
            for name in names:
                key = name.strip().lower()
                if key in wanted and key not in found:
                    rows = wb.get_sheet_by_name(name).to_python(skip_empty_area=False)
                    found[key] = (name, rows)
            if first_sheet and names and not found:  # e.g. a roster whose sheet is not "clients"
                rows = wb.get_sheet_by_index(0).to_python(skip_empty_area=False)
                found[""] = (names[0], rows)
        finally:
            wb.close()
    except BaseException as exc:  # calamine raises several unrelated types for broken files
        # A panic inside the Rust reader arrives as pyo3's PanicException, which derives
        # from BaseException; it is this file's problem, not a reason to stop the run.
        if not isinstance(exc, Exception) and type(exc).__name__ != "PanicException":
            raise
        return (
            None,
            (),
            [
                _problem(
                    "unreadable-file",
                    f"{rel} is not a readable Excel workbook ({type(exc).__name__}: {exc}); "
                    "open it in a spreadsheet program and save it again as .xlsx",
                    rel,
                    client_id,
                )
            ],
        )
    return found, names, []
