"""What every stage of one client's analysis starts from: :class:`ClientContext`.

The record cut at the end of the report month, the client's age and special handling,
and the phases laid over the log's day indices.  Built once by :func:`client_context`;
every stage reads it and none changes it.
"""

from __future__ import annotations

import datetime as dt
import math
from dataclasses import dataclass

import numpy as np

from reportgen.config import AnalysisSettings
from reportgen.io.model import ClientRecord, DailyLog, FloatArray, Phase
from reportgen.month import ReportMonth
from reportgen.results import Estimate
from reportgen.science import balance as energy_balance

MIN_ANALYSIS_DAYS = energy_balance.MIN_DAYS
# Phase kinds whose start is an intake change when they are the first phase of the data.
INTAKE_CHANGE_KINDS = ("deficit", "surplus")
#: Name of the one window of a client without phases (kind "month").
MONTH_WINDOW_NAME = "Report month"


@dataclass(frozen=True)
class PhaseWindow:
    """One phase started by the report month's end, on the log's day indices.

    ``start_index`` and ``end_index`` are inclusive; ``end_index < start_index``
    means the phase has no logged day.  ``window_end`` is the phase's end or the
    report month's last day, whichever comes first.
    """

    phase: Phase
    start_index: int
    end_index: int
    window_end: dt.date

    @property
    def logged_days(self) -> int:
        """Days of the window inside the log."""
        return max(self.end_index - self.start_index + 1, 0)


@dataclass(frozen=True)
class ClientContext:
    """One client's record as every stage sees it, cut at the end of the report month."""

    record: ClientRecord
    settings: AnalysisSettings
    month: ReportMonth
    month_start: dt.date
    as_of: dt.date  # last day of the report month; later data are ignored
    log: DailyLog  # cut at ``as_of``
    age_years: int | None  # at ``as_of``
    minor: bool
    special_handling: tuple[str, ...]  # "minor", "pregnant": trend only, no energy analysis
    windows: tuple[PhaseWindow, ...]  # phases in start order
    knots: tuple[int, ...]  # day indices where the slope may change (phase starts and ends)
    start_shift_index: int | None  # glycogen/water step at the start of the data, if any
    month_window: bool = False  # no phases: the report month is the one window (kind "month")

    @property
    def weights_kg(self) -> FloatArray:
        """Weigh-ins the trend uses (outliers removed); empty for an empty log."""
        return self.log.weight_used_kg if self.log.n_days else np.empty(0)

    @property
    def last_index(self) -> int:
        return self.log.n_days - 1

    @property
    def phase_start_indices(self) -> tuple[int, ...]:
        """Sorted distinct first day indices of the phases."""
        return tuple(sorted({w.start_index for w in self.windows}))


def client_context(
    record: ClientRecord, month: ReportMonth, settings: AnalysisSettings
) -> ClientContext:
    """Cut the record at the end of ``month`` and lay its phases over the log."""
    month_start, as_of = month.first_day, month.last_day
    client = record.client
    log = cut_log(record.log, as_of)
    age = client.age_years(as_of)
    minor = bool(record.minor or (age is not None and age < 18))
    special = tuple(s for s, on in (("minor", minor), ("pregnant", client.pregnant)) if on)
    phases = record.phases
    month_window = not phases and log.n_days > 0
    if month_window:
        # No phases recorded: the report month is one window.  Its start and end are no
        # change of intake, so they are no knots of the trend either.
        phases = (Phase(MONTH_WINDOW_NAME, month_start, None, "month"),)
    windows = phase_windows(phases, log, as_of)
    knots = {w.start_index for w in windows} | {w.end_index + 1 for w in windows}
    return ClientContext(
        record=record,
        settings=settings,
        month=month,
        month_start=month_start,
        as_of=as_of,
        log=log,
        age_years=age,
        minor=minor,
        special_handling=special,
        windows=windows,
        # the slope may change where a phase starts or ends (the intake changed there)
        knots=() if month_window else tuple(sorted(knots)),
        start_shift_index=start_shift_index(record.phases, log, as_of),
        month_window=month_window,
    )


def cut_log(log: DailyLog, as_of: dt.date) -> DailyLog:
    """The log without the days after ``as_of``."""
    if log.n_days == 0:
        return log
    keep = log.dates <= np.datetime64(as_of, "D")
    if bool(keep.all()):
        return log
    return DailyLog(
        dates=log.dates[keep],
        weight_kg=log.weight_kg[keep],
        weight_outlier=log.weight_outlier[keep],
        intake_kcal=log.intake_kcal[keep],
        steps=log.steps[keep],
        hunger=log.hunger[keep],
        energy=log.energy[keep],
        sleep_h=log.sleep_h[keep],
        body_fat_pct=log.body_fat_pct[keep],
    )


def day_index(log: DailyLog, day: dt.date) -> int:
    """Index of ``day`` on the log's daily grid (negative before its first day)."""
    return int((np.datetime64(day, "D") - log.dates[0]).astype(int))


def to_date(day: np.datetime64) -> dt.date:
    """A NumPy day as a ``datetime.date``."""
    date: dt.date = day.astype("datetime64[D]").item()
    return date


def phase_windows(
    phases: tuple[Phase, ...], log: DailyLog, as_of: dt.date
) -> tuple[PhaseWindow, ...]:
    """Every phase started by ``as_of`` with its log indices, in start order."""
    out = []
    for phase in sorted(phases, key=lambda p: p.start):
        if phase.start > as_of:
            continue
        end = as_of if phase.end is None or phase.end > as_of else phase.end
        if log.n_days == 0:
            out.append(PhaseWindow(phase, 0, -1, end))
            continue
        start_index = min(max(day_index(log, phase.start), 0), log.n_days)
        end_index = max(min(day_index(log, end), log.n_days - 1), -1)
        if end_index < start_index:
            start_index, end_index = 0, -1
        out.append(PhaseWindow(phase, start_index, end_index, end))
    return tuple(out)


def start_shift_index(phases: tuple[Phase, ...], log: DailyLog, as_of: dt.date) -> int | None:
    """Log index where the intake changed at (or just before) the start of the data.

    When the first phase is a deficit or a surplus, the intake changed at its
    start, and glycogen with its water shifts over the following days (Hall 2008;
    about 1-2 kg early in a diet).  A phase start inside the log is a
    knot anyway; this is the case where the data begin with the change, so there
    is no earlier segment for the step to be a knot of.  None when the first phase
    is maintenance or a break, or there are no phases.
    """
    started = sorted((p for p in phases if p.start <= as_of), key=lambda p: p.start)
    if not started or started[0].kind not in INTAKE_CHANGE_KINDS or log.n_days == 0:
        return None
    return day_index(log, started[0].start)


def estimate(value: float | None, sd: float | None) -> Estimate:
    """An estimate with its 80 % interval from a normal SD (missing if not finite)."""
    if value is None or not math.isfinite(value):
        return Estimate.missing("not-estimable")
    if sd is None or not math.isfinite(sd):
        return Estimate(value)
    return Estimate.normal(value, sd)


def scaled(value: Estimate, factor: float) -> Estimate:
    """``value`` and its interval times ``factor`` (the interval flips for a negative one)."""
    if not value.known:
        return value
    assert value.value is not None
    low = None if value.low is None else value.low * factor
    high = None if value.high is None else value.high * factor
    if factor < 0 and low is not None and high is not None:
        low, high = high, low
    return Estimate(value.value * factor, low, high, value.level)


def finite_mean(values: FloatArray) -> float | None:
    """Mean of the finite values, None when there are none."""
    values = values[np.isfinite(values)]
    return float(values.mean()) if values.size else None
