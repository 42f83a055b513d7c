"""One line of the coach's cohort overview (overview.pdf).

Built in the worker from a client's analysis (small and picklable, so the
batch never holds every client's full analysis at once) and rendered by
``reportgen.report.overview.render_overview`` in the parent process.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class OverviewLine:
    client_id: str
    name: str
    phase_name: str | None
    phase_kind: str | None
    week_of_phase: int | None
    month_change_kg: float | None  # trend change over the report month
    weekly_rate_pct: float | None  # % of body weight per week (negative = loss)
    realised_deficit_kcal: float | None  # current phase, positive = deficit
    observed_tdee_kcal: float | None
    adaptation_kcal: float | None
    adaptation_pct: float | None
    bodyfat_change_pct: float | None  # percentage points over the current phase
    weight_days: int  # days with a weigh-in in the report month
    intake_days: int
    days_in_month: int
    flags: tuple[tuple[str, str], ...]  # (code, severity)
    attention: int  # sort key: higher means look at this client first
    progress_status: str | None = None  # the running deficit phase's (science.plateau)
    # its 80 % interval, to judge as printed whether it includes zero
    adaptation_low_kcal: float | None = None
    adaptation_high_kcal: float | None = None
