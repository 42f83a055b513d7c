"""Every kind of :class:`~reportgen.io.model.Problem` the readers report, with its severity.

Codes are stable: scripts reading ``reportgen check --json`` and the tests rely on them.
"""

from __future__ import annotations

from typing import Final

from reportgen.io.model import Severity

#: code -> (severity, what it means)
PROBLEM_CODES: Final[dict[str, tuple[Severity, str]]] = {
    # errors: the client is skipped (or, without a client, the book has a problem to fix)
    "missing-file": ("error", "a required file is not there"),
    "two-sources": ("error", "the same data is given in two files; keep one"),
    "unreadable-file": ("error", "a file cannot be read (not CSV text, not a workbook)"),
    "unsupported-file": ("error", "a roster or daily log of a file type reportgen does not read"),
    "empty-file": ("error", "a file or sheet has no header row"),
    "missing-sheet": ("error", "a workbook has no daily sheet"),
    "missing-column": ("error", "a required column is missing"),
    "duplicate-column": ("error", "a column name appears twice"),
    "ambiguous-column": ("error", "a header that could mean two columns (e.g. weight, no unit)"),
    "ambiguous-dates": ("error", "dates that could be day-first or month-first, undecided"),
    "extra-cells": ("error", "values beyond the last named column"),
    "missing-value": ("error", "a required cell is blank"),
    "bad-number": ("error", "a cell that should hold a number does not"),
    "bad-date": ("error", "a cell that should hold a date does not"),
    "bad-value": ("error", "a value that is not one of the allowed ones"),
    "bad-client-id": ("error", "a client_id with characters or length not allowed"),
    "duplicate-client": ("error", "two roster rows with one client_id"),
    "out-of-range": ("error", "a value outside the physical limits"),
    "unit-conflict": ("error", "a value given in two units that disagree"),
    "duplicate-date": ("error", "the same date twice with different values"),
    "no-data": ("error", "a daily log without a dated row up to the month end"),
    "unknown-client": ("error", "a phase for a client not in the roster"),
    "overlapping-phases": ("error", "two phases of one client overlap"),
    "file-too-large": ("error", "a file beyond the size, row, column or cell limits, not read"),
    "cell-too-long": ("error", "a cell longer than 10000 characters; its row is left out"),
    # warnings: the report is still made and lists them
    "outlier": ("warning", "an isolated weigh-in excluded from the analysis"),
    "future-date": ("warning", "a row dated after today, ignored"),
    "gap": ("warning", "more than 7 days without an entry"),
    "unknown-column": ("warning", "a column reportgen does not use, ignored"),
    "skinfold-disagreement": ("warning", "repeated skinfold readings differ by more than 5 %"),
    "encoding-fallback": ("warning", "a file that is not UTF-8, read as cp1252/latin-1"),
    "duplicate-row": ("warning", "a row repeating another row exactly, ignored"),
    "special-handling": ("warning", "a minor or pregnant client: no deficit analysis"),
    "missing-detail": ("warning", "sex, birth date or height blank in the roster"),
    "skipped-file": ("warning", "a folder, FIFO, device or broken link where a file belongs"),
    "unused-file": ("warning", "a file in logs/ or skinfolds/ that no client reads (check only)"),
    "no-month-data": ("warning", "no weigh-ins or no entries at all in the report month (check)"),
    # notes: how something unambiguous was read (check lists them; reports do not)
    "header-read-as": ("note", "headers read as canonical columns (e.g. Weight (kg))"),
    "date-order": ("note", "dates read as day-first or month-first"),
    "several-weigh-ins": ("note", "days with more than one weigh-in: the first of the day used"),
}
