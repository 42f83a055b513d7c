"""Stage 5: the client's own reference period (the baseline of expected TDEE).

The first maintenance phase before any deficit with an observed TDEE; otherwise
the first weeks of data.  Baseline when there is no maintenance phase: the first
28 days of data (judgment; the notes ask for 2-3 weeks at least).  When the data
begin with a deficit, its glycogen-and-water step is fitted at the start of the
data (``ClientContext.start_shift_index``) instead of being read as tissue, the
adaptation the window already holds is added back with its own size as
uncertainty (``expected.early_adaptation_kcal``), and the window is offset
BASELINE_SKIP_DAYS into that deficit.  Measured on the accuracy benchmark (100
clients without a maintenance phase, seed 1): an offset of 0 days gives an
adaptation RMSE of 82 kcal/day, 7 days 94, 14 days 103 (a later window holds
more of the early adaptation, and the model's correction for it is uncertain);
hence 0.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import math

import numpy as np

from reportgen.analysis.balance import PhaseBalance, window_energy_balance, window_rate
from reportgen.analysis.composition import CompositionStage
from reportgen.analysis.context import (
    INTAKE_CHANGE_KINDS,
    MIN_ANALYSIS_DAYS,
    ClientContext,
    PhaseWindow,
)
from reportgen.analysis.resting import RestingAt
from reportgen.analysis.trend import TrendStage
from reportgen.science import balance as energy_balance
from reportgen.science import expected as expected_tdee
from reportgen.science.expected import Baseline

BASELINE_FIRST_WEEKS_DAYS = 28
BASELINE_SKIP_DAYS = 0


def baseline_stage(
    ctx: ClientContext,
    trend: TrendStage,
    composition: CompositionStage,
    resting_at: RestingAt,
    phases: tuple[PhaseBalance, ...],
) -> Baseline | None:
    """First maintenance phase before any deficit with a TDEE, else the first weeks of data.

    None without a trend, under special handling, or when neither gives an observed
    TDEE, a resting expenditure and a fat mass.
    """
    if trend.fit is None or ctx.special_handling or ctx.month_window:
        # without phases nothing says when the client ate at maintenance: no baseline
        return None
    first_deficit = min(
        (p.window.phase.start for p in phases if p.window.phase.kind == "deficit"), default=None
    )
    for phase in phases:
        if first_deficit is not None and phase.window.phase.start > first_deficit:
            break  # a baseline comes before the first deficit
        if (
            phase.window.phase.kind == "maintenance"
            and phase.balance is not None
            and phase.mean_weight_kg is not None
        ):
            found = baseline_from_balance(
                phase.balance,
                phase.mean_weight_kg,
                composition,
                resting_at,
                "maintenance-phase",
                phase.window.phase.start,
            )
            if found is not None:
                return found
    return first_weeks_baseline(ctx, trend, composition, resting_at)


def baseline_from_balance(
    balance: energy_balance.WindowBalance,
    mean_weight_kg: float,
    composition: CompositionStage,
    resting_at: RestingAt,
    source: str,
    phase_start: dt.date | None = None,
) -> Baseline | None:
    """A baseline from one window's energy balance (None if anything it needs is unknown)."""
    if (
        not balance.tdee_kcal.known
        or balance.tdee_se_kcal is None
        or balance.mean_intake_kcal is None
    ):
        return None
    resting_kcal = resting_at(mean_weight_kg)
    fat_kg = composition.reference.fat_at(mean_weight_kg)
    if resting_kcal is None or fat_kg is None:
        return None
    days = max(balance.days, 1)
    fat_rate_kg_per_day = (balance.fat_change_kg or 0.0) / days
    lean_rate_kg_per_day = (balance.lean_change_kg or 0.0) / days
    assert balance.tdee_kcal.value is not None
    tdee_kcal, tdee_se_kcal = balance.tdee_kcal.value, balance.tdee_se_kcal
    if (
        source == "maintenance-phase"
        and balance.deficit_kcal.value is not None
        and balance.deficit_se_kcal is not None
    ):
        # planned balance as a prior on the stored-energy term (science/expected.py)
        deficit_kcal, deficit_sd_kcal, shrink = expected_tdee.maintenance_deficit_posterior(
            balance.deficit_kcal.value, balance.deficit_se_kcal
        )
        tdee_kcal = balance.mean_intake_kcal + deficit_kcal
        tdee_se_kcal = math.sqrt(
            deficit_sd_kcal * deficit_sd_kcal + (balance.intake_se_kcal or 0.0) ** 2
        )
        fat_rate_kg_per_day = shrink * fat_rate_kg_per_day
        lean_rate_kg_per_day = shrink * lean_rate_kg_per_day
    return Baseline(
        tdee_kcal,
        tdee_se_kcal,
        mean_weight_kg,
        fat_kg,
        balance.mean_intake_kcal,
        resting_kcal,
        fat_rate_kg_per_day,
        lean_rate_kg_per_day,
        source,
        phase_start,
    )


def first_weeks_baseline(
    ctx: ClientContext, trend: TrendStage, composition: CompositionStage, resting_at: RestingAt
) -> Baseline | None:
    """The baseline from the first weeks of data (see :func:`first_weeks_window`)."""
    fit = trend.fit
    first, last = first_weeks_window(ctx.windows, ctx.log.n_days)
    if fit is None or last - first + 1 < MIN_ANALYSIS_DAYS:
        return None
    mean_weight_kg = float(np.mean(fit.level_kg[first : last + 1]))
    rate = window_rate(ctx, trend, first, last, edge_knots=False)
    fat_kg = composition.reference.fat_at(mean_weight_kg)
    balance = window_energy_balance(ctx, trend, composition, first, last, rate, fat_kg)
    found = baseline_from_balance(balance, mean_weight_kg, composition, resting_at, "first-weeks")
    change_index = first_change_index(ctx.windows)
    if (
        found is None
        or change_index is None
        or change_index > last
        or balance.deficit_kcal.value is None
    ):
        return found
    # Inside a deficit the window already holds its first weeks of adaptation: expected
    # TDEE without adaptation is that much higher.  Model-based (Hall 2011 AT term), so
    # its whole size is also carried as uncertainty (judgment: individual AT varies
    # from about none to twice the model's).
    early_kcal = expected_tdee.early_adaptation_kcal(
        balance.deficit_kcal.value, first - change_index, last - first + 1
    )
    return dataclasses.replace(
        found,
        tdee_kcal=found.tdee_kcal - early_kcal,
        tdee_se_kcal=math.hypot(found.tdee_se_kcal, early_kcal),
    )


def first_change_index(windows: tuple[PhaseWindow, ...]) -> int | None:
    """Log index of the first phase that changed intake (deficit or surplus), if any."""
    for window in windows:
        if window.phase.kind in INTAKE_CHANGE_KINDS and window.end_index >= window.start_index:
            return window.start_index
    return None


def first_weeks_window(windows: tuple[PhaseWindow, ...], n_days: int) -> tuple[int, int]:
    """Log indices (inclusive) of the first-weeks baseline when there is no maintenance phase.

    ``BASELINE_FIRST_WEEKS_DAYS`` days from the start of the data, or, when the
    first deficit (or surplus) starts inside that span, from
    ``BASELINE_SKIP_DAYS`` days after its start: the first one to two weeks of a
    new intake are dominated by glycogen and water (Hall 2008; common practice), and
    the step they make is hardest to separate from tissue at the start of the
    data, where there is no level before it to compare with.
    """
    first = 0
    for window in windows:
        if window.phase.kind in INTAKE_CHANGE_KINDS and window.end_index >= window.start_index:
            if window.start_index < BASELINE_FIRST_WEEKS_DAYS:
                first = window.start_index + BASELINE_SKIP_DAYS
            break
    last = min(first + BASELINE_FIRST_WEEKS_DAYS, n_days) - 1
    return first, last
