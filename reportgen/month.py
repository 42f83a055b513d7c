"""The report month, parsed once: :class:`ReportMonth`.

A report month is written ``YYYY-MM`` everywhere (command line, folder names,
manifest.json, summary.csv).  It is parsed once, where it enters (the command line
or a manifest), into a :class:`ReportMonth`; everything after that reads its days
and labels from it instead of splitting the text again.

Accepted: exactly four ASCII digits, a hyphen and two ASCII digits, month 01-12,
year :data:`MIN_YEAR`-:data:`MAX_YEAR`.  Nothing else: no surrounding spaces or
line ends, no full-width or other non-ASCII digits (``str.isdigit`` and ``\\d``
would take them), no ``2026-1`` or ``2026/11``.  The year range keeps out typos
such as ``0000-01`` or ``9999-12`` while covering any real client's birth-to-report
span with room to spare (common practice, no single source).
"""

from __future__ import annotations

import calendar
import datetime as dt
import re
from typing import Final

MIN_YEAR: Final = 1900
MAX_YEAR: Final = 2199
_PATTERN: Final = re.compile(r"[0-9]{4}-[0-9]{2}", re.ASCII)
_MONTH_NAMES: Final = (
    "January",
    "February",
    "March",
    "April",
    "May",
    "June",
    "July",
    "August",
    "September",
    "October",
    "November",
    "December",
)


class InvalidMonth(ValueError):
    """Text that is not a report month; the message is one line that says what to write."""


class ReportMonth(str):
    """A report month "YYYY-MM", checked when made; it is the text itself, immutable.

    Being a ``str`` keeps it what it always was in files, JSON and templates
    (``str(m) == "2026-11"``, ``m == "2026-11"``); the days come from its properties.
    ``ReportMonth(m)`` of a ReportMonth returns it unchanged.

    Raises
    ------
    InvalidMonth
        For anything but ``YYYY-MM`` with month 01-12 and a year in
        ``MIN_YEAR..MAX_YEAR``.
    """

    __slots__ = ()

    def __new__(cls, text: str) -> ReportMonth:
        if isinstance(text, ReportMonth):
            return text
        if not isinstance(text, str) or _PATTERN.fullmatch(text) is None:
            raise InvalidMonth(
                f"month {text!r} is not in the form YYYY-MM (e.g. 2026-11): four digits, "
                "a hyphen, two digits, nothing else"
            )
        year, number = int(text[:4]), int(text[5:])
        if not 1 <= number <= 12:
            raise InvalidMonth(f"month {text!r} has no month {number:02d}; use 01 to 12")
        if not MIN_YEAR <= year <= MAX_YEAR:
            raise InvalidMonth(
                f"month {text!r} is outside the years {MIN_YEAR} to {MAX_YEAR}; check the year"
            )
        return super().__new__(cls, text)

    @classmethod
    def of(cls, year: int, number: int) -> ReportMonth:
        """The month ``number`` (1-12) of ``year``."""
        return cls(f"{year:04d}-{number:02d}")

    @classmethod
    def containing(cls, day: dt.date) -> ReportMonth:
        """The month that ``day`` falls in."""
        return cls.of(day.year, day.month)

    @property
    def year(self) -> int:
        return int(self[:4])

    @property
    def number(self) -> int:
        """The month of the year, 1-12."""
        return int(self[5:])

    @property
    def days(self) -> int:
        """Number of days in the month."""
        return calendar.monthrange(self.year, self.number)[1]

    @property
    def first_day(self) -> dt.date:
        return dt.date(self.year, self.number, 1)

    @property
    def last_day(self) -> dt.date:
        return dt.date(self.year, self.number, self.days)

    @property
    def label(self) -> str:
        """ "2026-11" -> "November 2026" (English names, whatever the computer's locale)."""
        return f"{_MONTH_NAMES[self.number - 1]} {self.year}"

    def __repr__(self) -> str:
        return f"ReportMonth({str(self)!r})"
