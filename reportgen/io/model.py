"""Canonical in-memory form of a client book.

Everything downstream of the readers sees only these types, in canonical units
(kg, kcal, cm, mm, calendar dates). Nothing here knows about files or columns
except :class:`Problem`, which carries where a problem was found so that the
user can fix it.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, field
from typing import Literal

import numpy as np
import numpy.typing as npt

Severity = Literal["error", "warning", "note"]
Sex = Literal["female", "male"]
#: "month" is never read from a book: the analysis uses it for the report month as one window
#: when a client has no phases.
PhaseKind = Literal["deficit", "maintenance", "surplus", "break", "month"]
PHASE_KINDS: tuple[PhaseKind, ...] = ("deficit", "maintenance", "surplus", "break")
SKINFOLD_SITES: tuple[str, ...] = (
    "chest",
    "abdominal",
    "thigh",
    "triceps",
    "subscapular",
    "suprailiac",
    "midaxillary",
    "biceps",
)

FloatArray = npt.NDArray[np.float64]
BoolArray = npt.NDArray[np.bool_]
DateArray = npt.NDArray[np.datetime64]


@dataclass(frozen=True)
class Problem:
    """One thing wrong (error) or worth knowing (warning) about the input.

    A ``note`` says how something unambiguous was interpreted (a header read as a canonical
    column, dates read day-first); ``reportgen check`` lists notes, reports do not.

    ``file`` is relative to the book folder (``logs/c017.csv``); ``row`` is the
    spreadsheet row number a person sees (header = row 1, first data row = 2);
    ``column`` is the column name as written in the file.  ``code`` is a short
    stable kind such as ``bad-number`` that scripts and tests can rely on.
    """

    severity: Severity
    code: str
    message: str
    file: str | None = None
    row: int | None = None
    column: str | None = None
    value: str | None = None
    client_id: str | None = None

    @property
    def location(self) -> str:
        """``file:row:column`` with the parts that are known."""
        parts = [self.file or "-"]
        if self.row is not None:
            parts.append(str(self.row))
        if self.column is not None:
            parts.append(self.column)
        return ":".join(parts)

    def as_dict(self) -> dict[str, object]:
        return {
            "severity": self.severity,
            "code": self.code,
            "client_id": self.client_id,
            "file": self.file,
            "row": self.row,
            "column": self.column,
            "value": self.value,
            "message": self.message,
        }


class InputError(Exception):
    """A problem that makes one client's (or the whole book's) input unusable."""

    def __init__(self, problem: Problem) -> None:
        super().__init__(f"{problem.location}: {problem.message}")
        self.problem = problem


@dataclass(frozen=True)
class Client:
    """One roster row, in canonical units."""

    client_id: str
    name: str
    sex: Sex | None
    birth_date: dt.date | None
    height_cm: float | None
    email: str | None = None
    pregnant: bool = False
    goal_weight_kg: float | None = None
    extra: dict[str, str] = field(default_factory=dict)  # other roster columns, as text
    roster_file: str | None = None  # where the row came from (relative to the book)
    roster_row: int | None = None  # its spreadsheet row number (header = 1)

    def age_years(self, on: dt.date) -> int | None:
        """Completed years of age on ``on`` (rounded down), or None if unknown."""
        if self.birth_date is None:
            return None
        b = self.birth_date
        return on.year - b.year - ((on.month, on.day) < (b.month, b.day))


@dataclass(frozen=True)
class Phase:
    """A planned phase of the programme; ``end`` None means still running."""

    name: str
    start: dt.date
    end: dt.date | None
    kind: PhaseKind
    target_kcal: float | None = None


@dataclass(frozen=True)
class SkinfoldSession:
    """One skinfold session: per-site value used (mean of two, median of three)."""

    date: dt.date
    sites_mm: dict[str, float]
    readings_mm: dict[str, tuple[float, ...]]


@dataclass(frozen=True)
class DailyLog:
    """The daily log on a complete calendar grid.

    ``dates`` holds every day from the first to the last logged day (inclusive,
    never after the analysis cut-off); every other array is aligned with it and
    holds NaN on days without a value.  ``weight_kg`` is the value as logged
    (converted to kg); ``weight_outlier`` marks weigh-ins the reader excluded
    as isolated outliers, which the analysis must not use.  ``body_fat_pct`` is
    a scale's (bioimpedance) body-fat reading, kept apart from skinfold
    estimates; all NaN when the log has no such column.
    """

    dates: DateArray
    weight_kg: FloatArray
    weight_outlier: BoolArray
    intake_kcal: FloatArray
    steps: FloatArray
    hunger: FloatArray
    energy: FloatArray
    sleep_h: FloatArray
    body_fat_pct: FloatArray = field(default_factory=lambda: np.empty(0, dtype=np.float64))

    def __post_init__(self) -> None:
        if self.body_fat_pct.shape != self.dates.shape:  # built without scale readings
            object.__setattr__(self, "body_fat_pct", np.full(self.dates.shape, np.nan))

    @property
    def has_intake(self) -> bool:
        """Whether any intake was logged (a weight-only client has none)."""
        return bool(np.isfinite(self.intake_kcal).any())

    @property
    def n_days(self) -> int:
        return int(self.dates.shape[0])

    @property
    def weight_used_kg(self) -> FloatArray:
        """Weights with excluded outliers set to NaN."""
        w = self.weight_kg.copy()
        w[self.weight_outlier] = np.nan
        return w

    @classmethod
    def empty(cls) -> DailyLog:
        e = np.empty(0, dtype=np.float64)
        return cls(
            dates=np.empty(0, dtype="datetime64[D]"),
            weight_kg=e,
            weight_outlier=np.empty(0, dtype=bool),
            intake_kcal=e,
            steps=e,
            hunger=e,
            energy=e,
            sleep_h=e,
        )


@dataclass(frozen=True)
class ClientRecord:
    """Everything read for one client, with the problems found on the way."""

    client: Client
    log: DailyLog
    skinfolds: tuple[SkinfoldSession, ...]
    phases: tuple[Phase, ...]
    problems: tuple[Problem, ...]
    source_files: tuple[str, ...]  # relative to the book folder
    minor: bool = False  # under 18 at the end of the report month
    outliers: tuple[tuple[dt.date, float], ...] = ()  # excluded weigh-ins (date, kg)

    @property
    def ok(self) -> bool:
        return not any(p.severity == "error" for p in self.problems)

    @property
    def errors(self) -> tuple[Problem, ...]:
        return tuple(p for p in self.problems if p.severity == "error")

    @property
    def warnings(self) -> tuple[Problem, ...]:
        return tuple(p for p in self.problems if p.severity == "warning")


@dataclass(frozen=True)
class Roster:
    """The book-level files: roster and phases, before any daily log is read.

    ``phases`` maps client id to that client's phases from ``phases.csv``.
    ``problems`` are book-level problems and roster/phase problems (each with
    its ``client_id`` where it belongs to one client).
    """

    book_dir: str
    clients: tuple[Client, ...]
    phases: dict[str, tuple[Phase, ...]]
    problems: tuple[Problem, ...]
    source_files: tuple[str, ...]
