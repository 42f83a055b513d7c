"""Parsing single cells: numbers, ISO dates, yes/no, sex, with messages that say what to do.

Every parser accepts what CSV gives (text) and what a workbook gives (numbers, booleans,
date cells) and raises :class:`CellError` for anything else; the caller turns that into a
:class:`~reportgen.io.model.Problem` with file, row and column.  Dates are never guessed:
only ISO ``YYYY-MM-DD`` text (optionally followed by a time) or a real date cell is a date.
"""

from __future__ import annotations

import datetime as dt
import math
import re

from reportgen.io.model import Sex
from reportgen.io.tables import Cell, cell_text, is_blank
from reportgen.io.units import UNIT_MAP


class CellError(ValueError):
    """A cell that cannot be used; ``code`` is the Problem code."""

    def __init__(self, code: str, message: str) -> None:
        super().__init__(message)
        self.code = code
        self.message = message


_ISO_DATE = re.compile(r"(\d{4})-(\d{2})-(\d{2})(?:[T ]\d{1,2}:\d{2}(?::\d{2}(?:\.\d+)?)?)?")
_DATE_HINT = "write dates as YYYY-MM-DD (e.g. 2026-11-03) or format the cell as a date"

_YES = frozenset({"yes", "y", "true", "1", "ja", "oui", "si", "sí"})
_NO = frozenset({"no", "n", "false", "0", "nein", "non"})
_SEX: dict[str, Sex] = {"female": "female", "f": "female", "male": "male", "m": "male"}


def shown(cell: Cell) -> str:
    """The cell as quoted in a message."""
    return f'"{cell_text(cell)}"'


def parse_number(cell: Cell, column: str) -> float | None:
    """A finite number, or None for a blank cell."""
    if cell is None:
        return None
    if isinstance(cell, bool):
        raise CellError(
            "bad-number",
            f"{column} {shown(cell)} is a TRUE/FALSE cell, not a number; enter the number",
        )
    if isinstance(cell, int | float):
        x = float(cell)
        if not math.isfinite(x):
            raise CellError("bad-number", f"{column} {shown(cell)} is not a finite number")
        return x
    if isinstance(cell, str):
        s = cell.strip()
        if not s:
            return None
        try:
            x = float(s)
        except ValueError:
            x = math.nan
        # float() also takes "nan", "inf", "1_000" and non-ASCII digits: none are ours.
        if math.isfinite(x) and s.isascii() and "_" not in s:
            return x
        hints = []
        if re.search(r"\d,\d", s):
            hints.append("use a decimal point, not a comma (82.4, not 82,4)")
        if re.search(r"\d", s) and re.search(r"[^\W\d_]", s):
            hints.append("write the number alone (the unit belongs in the column name)")
        hint = "; ".join(hints) or "enter a number (e.g. 82.4) or leave the cell blank"
        raise CellError("bad-number", f"{column} {shown(cell)} is not a number; {hint}")
    raise CellError(
        "bad-number",
        f"{column} {shown(cell)} is a date or time cell, not a number; format the cell as a number",
    )


def parse_date(cell: Cell, column: str) -> dt.date | None:
    """An ISO date (text) or a real date cell, or None for a blank cell."""
    if cell is None:
        return None
    if isinstance(cell, dt.datetime):
        return cell.date()
    if isinstance(cell, dt.date):
        return cell
    if isinstance(cell, str):
        s = cell.strip()
        if not s:
            return None
        m = _ISO_DATE.fullmatch(s)
        if m is None:
            raise CellError("bad-date", f"{column} {shown(cell)} is not a date; {_DATE_HINT}")
        try:
            return dt.date(int(m[1]), int(m[2]), int(m[3]))
        except ValueError:
            raise CellError(
                "bad-date", f"{column} {shown(cell)} is not a real calendar date; {_DATE_HINT}"
            ) from None
    if isinstance(cell, int | float) and not isinstance(cell, bool):
        # A serial day number without a date format: converting it would mean guessing the
        # workbook's epoch (1900 or 1904), so ask for a real date instead.
        raise CellError(
            "bad-date",
            f"{column} {shown(cell)} is a plain number, not a date; format the cell as a date "
            "or write it as YYYY-MM-DD",
        )
    raise CellError("bad-date", f"{column} {shown(cell)} is not a date; {_DATE_HINT}")


def parse_text(cell: Cell) -> str:
    """Any cell as stripped text ('' for blank)."""
    return "" if is_blank(cell) else cell_text(cell).strip()


def parse_yes_no(cell: Cell, column: str) -> bool:
    """yes/no (also y/n, true/false, 1/0, TRUE/FALSE cells); blank means no."""
    if isinstance(cell, bool):
        return cell
    if is_blank(cell):
        return False
    s = cell_text(cell).strip().lower()
    if s in _YES:
        return True
    if s in _NO:
        return False
    raise CellError("bad-value", f'{column} {shown(cell)} is not yes or no; write "yes" or "no"')


def parse_sex(cell: Cell, column: str) -> Sex | None:
    """female/male (also F/M), or None for a blank cell."""
    if is_blank(cell):
        return None
    s = cell_text(cell).strip().lower()
    if s in _SEX:
        return _SEX[s]
    raise CellError(
        "bad-value", f'{column} {shown(cell)} is not a sex we know; write "female" or "male"'
    )


def check_range(
    x: float,
    limits: tuple[float, float],
    column: str,
    written: Cell,
    unit: str,
    why: str,
) -> None:
    """Raise ``out-of-range`` when ``x`` (canonical unit) lies outside ``limits`` (inclusive).

    ``written`` is the cell as written, quoted in the message next to the converted value
    when the column holds another unit.
    """
    lo, hi = limits
    if not lo <= x <= hi:
        u = f" {unit}" if unit else ""
        as_written = shown(written)
        if column.strip().lower() in UNIT_MAP:
            as_written += f" (= {x:.1f}{u})"
        raise CellError(
            "out-of-range",
            f"{column} {as_written} is outside the possible range {lo:g}-{hi:g}{u} "
            f"({why}); correct the value or leave the cell blank",
        )
