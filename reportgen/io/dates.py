"""A column of dates as coaches write them: ISO, day-first or month-first, with or without time.

Accepted in a date column:

* ISO dates ``2026-09-21`` and ISO date-times ``2026-09-21 07:12`` (``T`` also allowed);
* year-first with slashes ``2026/09/21``;
* day-first or month-first numeric dates with ``/``, ``.`` or ``-`` and a four-digit year
  (``21/09/2026``, ``09/21/2026``, ``21.09.2026``), also followed by a time;
* real date or date-time cells of a workbook.

The order of day and month is decided **per file** from the values: a first number above 12
means day-first, a second number above 12 means month-first.  A file with both is an error;
a file where no value settles it uses the ``[book] date_order`` setting, and without the
setting it is one error naming the file.  Nothing is guessed silently: :func:`parse_date_column`
returns a note saying which order was read.  Plain numbers (serial days without a date
format) are refused, as guessing the workbook's epoch would be a guess.
"""

from __future__ import annotations

import datetime as dt
import re
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Final, Literal

import numpy as np
import numpy.typing as npt

from reportgen.io.cells import CellError, parse_date
from reportgen.io.tables import Cell

DateOrder = Literal["day-first", "month-first"]
DATE_ORDERS: Final[tuple[DateOrder, ...]] = ("day-first", "month-first")
IntArray = npt.NDArray[np.int64]
FloatArray = npt.NDArray[np.float64]

#: Ordinal marks in the result: a blank cell, a cell that is no date.
BLANK: Final = -1
BAD: Final = -2

_TIME = r"(?:[T ]+(\d{1,2}):(\d{2})(?::(\d{2})(?:\.\d+)?)?)?"
_ISO = re.compile(rf"(\d{{4}})-(\d{{1,2}})-(\d{{1,2}}){_TIME}")
_YEAR_FIRST = re.compile(rf"(\d{{4}})/(\d{{1,2}})/(\d{{1,2}}){_TIME}")
_NUMERIC = re.compile(rf"(\d{{1,2}})([/.\-])(\d{{1,2}})\2(\d{{4}}){_TIME}")
_ISO_COLUMN = re.compile(r"(?:[0-9]{4}-[0-9]{2}-[0-9]{2}\n)*")
_EPOCH_ORDINAL = dt.date(1970, 1, 1).toordinal()
_HINT = "write dates as YYYY-MM-DD (e.g. 2026-11-03) or format the cell as a date"


@dataclass
class DateColumn:
    """The parsed column: day ordinals (or BLANK/BAD), minutes after midnight, problems."""

    ords: IntArray
    minutes: FloatArray  # NaN where no time of day was given
    errors: list[tuple[int, CellError]] = field(default_factory=list)
    order: DateOrder | None = None  # how day/month text was read, if any was present
    order_from: str = ""  # "values" or "setting"
    example: str = ""  # a cell that shows the order (for the note)
    ambiguous: str | None = None  # one message when the order cannot be decided

    @property
    def has_times(self) -> bool:
        return bool(np.isfinite(self.minutes).any())


def iso_text_ordinals(cells: Sequence[Cell]) -> IntArray | None:
    """Day ordinals for a column that is entirely plain ISO date text, else None.

    The common CSV case in one pass: one regular expression over the whole column, then
    numpy's ISO parser (which refuses impossible dates such as 2026-02-30).
    """
    texts = [c for c in cells if type(c) is str]
    if not texts or len(texts) != len(cells):
        return None
    if _ISO_COLUMN.fullmatch("\n".join(texts) + "\n") is None:
        return None
    try:
        days = np.array(texts, dtype="datetime64[D]")
    except ValueError:
        return None
    ords = days.astype(np.int64) + _EPOCH_ORDINAL
    return ords if ords.min() >= 1 else None  # year 0 is no date: let parse_date say so


def _minutes(m: re.Match[str], first: int) -> float:
    if m[first] is None:
        return np.nan
    h, mi = int(m[first]), int(m[first + 1])
    s = int(m[first + 2]) if m[first + 2] is not None else 0
    if h > 23 or mi > 59 or s > 59:
        raise ValueError("no time of day")
    return h * 60.0 + mi + s / 60.0


def _not_real(cell: Cell, column: str) -> CellError:
    return CellError("bad-date", f'{column} "{cell}" is not a real calendar date; {_HINT}')


def parse_date_column(
    cells: Sequence[Cell], column: str, file: str, setting: DateOrder | None = None
) -> DateColumn:
    """Parse one date column (see the module notes for what is accepted)."""
    n = len(cells)
    fast = iso_text_ordinals(cells)
    if fast is not None:
        return DateColumn(fast, np.full(n, np.nan))
    out = DateColumn(np.full(n, BLANK, dtype=np.int64), np.full(n, np.nan))
    pending: list[tuple[int, int, int, int, float]] = []  # (i, a, b, year, minutes)
    for i, cell in enumerate(cells):
        if isinstance(cell, str):
            s = cell.strip()
            m = _ISO.fullmatch(s) or _YEAR_FIRST.fullmatch(s)
            if m is not None:
                try:
                    out.minutes[i] = _minutes(m, 4)
                    out.ords[i] = dt.date(int(m[1]), int(m[2]), int(m[3])).toordinal()
                except ValueError:
                    out.errors.append((i, _not_real(cell, column)))
                    out.ords[i] = BAD
                continue
            m = _NUMERIC.fullmatch(s)
            if m is not None:
                try:
                    minutes = _minutes(m, 5)
                except ValueError:
                    out.errors.append((i, _not_real(cell, column)))
                    out.ords[i] = BAD
                    continue
                pending.append((i, int(m[1]), int(m[3]), int(m[4]), minutes))
                continue
        elif isinstance(cell, dt.datetime):
            out.ords[i] = cell.date().toordinal()
            out.minutes[i] = cell.hour * 60.0 + cell.minute + cell.second / 60.0
            continue
        try:
            day = parse_date(cell, column)
        except CellError as e:
            out.errors.append((i, e))
            out.ords[i] = BAD
            continue
        if day is not None:
            out.ords[i] = day.toordinal()
    if pending:
        _resolve(out, pending, cells, column, file, setting)
    timed = np.isfinite(out.minutes)
    if timed.any() and not out.minutes[timed].any():
        # every time is midnight: date cells stored as date-times, not times of weigh-ins
        out.minutes[:] = np.nan
    return out


def _resolve(
    out: DateColumn,
    pending: list[tuple[int, int, int, int, float]],
    cells: Sequence[Cell],
    column: str,
    file: str,
    setting: DateOrder | None,
) -> None:
    """Decide day-first or month-first for the whole column, then convert."""
    day_first = next((i for i, a, _, _, _ in pending if a > 12), None)
    month_first = next((i for i, _, b, _, _ in pending if b > 12), None)
    order: DateOrder | None
    if day_first is not None and month_first is not None:
        out.ambiguous = (
            f'{file}: {column} mixes day-first dates ("{cells[day_first]}") and month-first '
            f'dates ("{cells[month_first]}"); write every date the same way, best as '
            "YYYY-MM-DD"
        )
        order = None
    elif day_first is not None:
        order, out.order_from, out.example = "day-first", "values", str(cells[day_first])
    elif month_first is not None:
        order, out.order_from, out.example = "month-first", "values", str(cells[month_first])
    elif all(a == b for _, a, b, _, _ in pending):
        order = "day-first"  # 03/03/2026 reads the same either way: nothing to decide
    elif setting is not None:
        order, out.order_from = setting, "setting"
        out.example = str(cells[pending[0][0]])
    else:
        out.ambiguous = (
            f"{file}: no date in {column} shows whether dates are day-first or month-first "
            f'("{cells[pending[0][0]]}" could be either, and no day is above 12); add '
            'date_order = "day-first" (or "month-first") under [book] in the configuration '
            "file, or write the dates as YYYY-MM-DD"
        )
        order = None
    out.order = order
    for i, a, b, year, minutes in pending:
        if order is None:
            out.ords[i] = BAD
            continue
        d, m = (a, b) if order == "day-first" else (b, a)
        try:
            out.ords[i] = dt.date(year, m, d).toordinal()
            out.minutes[i] = minutes
        except ValueError:
            out.errors.append((i, _not_real(cells[i], column)))
            out.ords[i] = BAD


def order_note(col: DateColumn, column: str) -> str | None:
    """The ``date-order`` note for a column read day-first or month-first, else None."""
    if col.order is None or not col.example:
        return None
    how = "DD/MM/YYYY" if col.order == "day-first" else "MM/DD/YYYY"
    if col.order_from == "setting":
        why = "the [book] date_order setting"
    else:
        why = f'"{col.example}" can only be read that way'
    return f"{column} read as {col.order} ({how}): {why}"
