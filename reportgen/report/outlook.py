"""The forward look of a report: how far the projection runs, and where the client stands
against the goal.

One function decides both for the client report, the practitioner summary and the
projection chart, so that the horizon named in the text is the one drawn, and the goal is
called reached, on track or out of reach by one rule.

The analysis projects a fixed number of days ahead; a report shows the configured
``[report] projection_weeks`` of it (or all of it when fewer days were projected).  The goal
is compared with the current trend weight *as the report prints it* (rounded to the
display precision), so a page never says "64.9 kg, goal 65.0 kg, not reached".  A goal above
the current weight is a gain goal only while the current phase is a surplus; otherwise the
client is already below a loss goal, which counts as reached.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from reportgen.results import ClientAnalysis, Projection

GOAL_STATUSES = ("none", "reached", "on-track", "beyond", "away")


@dataclass(frozen=True)
class Outlook:
    """The part of the projection a report shows, and the goal status."""

    days: int  # projection days shown (0 = none)
    end: dt.date  # last day shown
    weight_kg: float  # central projected trend weight on ``end``
    low_kg: float
    high_kg: float
    goal_kg: float | None
    goal_direction: str  # "loss" or "gain" ("" without a goal)
    goal_status: str  # one of GOAL_STATUSES
    goal_date: dt.date | None  # first day the central path reaches the goal, within ``days``
    goal_earliest: dt.date | None = None  # first day the near edge of the band reaches it
    goal_latest: dt.date | None = None  # first day the far edge does (None: not within ``days``)

    @property
    def weeks_text(self) -> str:
        """The horizon in whole weeks when it is a whole number of weeks, else in days."""
        return f"{self.days // 7}" if self.days % 7 == 0 else f"{self.days / 7:.1f}"


def horizon_days(projection: Projection, weeks: int) -> int:
    """Days of ``projection`` a report shows: ``weeks`` weeks, at most what was projected."""
    return max(0, min(7 * int(weeks), len(projection.dates) - 1))


def goal_direction(current_kg: float, goal_kg: float, phase_kind: str | None) -> str:
    """ "gain" only for a goal above the current weight during a surplus phase, else "loss"."""
    return "gain" if phase_kind == "surplus" and goal_kg > current_kg else "loss"


def goal_status(
    current_kg: float,
    goal_kg: float | None,
    phase_kind: str | None,
    display: Callable[[float], float] = lambda kg: round(kg, 1),
) -> tuple[str, str]:
    """(direction, status) from the current trend weight alone: "reached" or "open".

    ``display`` rounds a weight as the report prints it; the comparison is made on the
    printed values.
    """
    if goal_kg is None:
        return "", "none"
    direction = goal_direction(current_kg, goal_kg, phase_kind)
    cur, goal = display(current_kg), display(goal_kg)
    reached = cur <= goal if direction == "loss" else cur >= goal
    return direction, "reached" if reached else "open"


def outlook(
    a: ClientAnalysis,
    weeks: int,
    display: Callable[[float], float] = lambda kg: round(kg, 1),
) -> Outlook | None:
    """The shown horizon and the goal status of ``a`` (None without a projection)."""
    p = a.projection
    if p is None or len(p.weight_kg) == 0 or not a.current_weight_kg.known:
        return None
    days = horizon_days(p, weeks)
    current = float(a.current_weight_kg.value)  # type: ignore[arg-type]
    kind = a.current_phase.kind if a.current_phase is not None else None
    direction, status = goal_status(current, p.goal_weight_kg, kind, display)
    goal_date = earliest = latest = None
    if status == "open" and p.goal_weight_kg is not None:
        goal = p.goal_weight_kg
        path = np.asarray(p.weight_kg[: days + 1], dtype=float)
        near = np.asarray((p.low_kg if direction == "loss" else p.high_kg)[: days + 1], float)
        far = np.asarray((p.high_kg if direction == "loss" else p.low_kg)[: days + 1], float)

        def first(series: np.ndarray) -> dt.date | None:
            hit = series <= goal if direction == "loss" else series >= goal
            return p.start + dt.timedelta(days=int(np.argmax(hit))) if hit.any() else None

        goal_date = first(path)
        if goal_date is not None:
            status = "on-track"
            earliest, latest = first(near), first(far)
        else:
            moving_toward = (path[-1] < path[0]) if direction == "loss" else (path[-1] > path[0])
            status = "beyond" if moving_toward else "away"
    return Outlook(
        days=days,
        end=p.start + dt.timedelta(days=days),
        weight_kg=float(p.weight_kg[days]),
        low_kg=float(p.low_kg[days]),
        high_kg=float(p.high_kg[days]),
        goal_kg=p.goal_weight_kg,
        goal_direction=direction,
        goal_status=status,
        goal_date=goal_date,
        goal_earliest=earliest,
        goal_latest=latest,
    )
