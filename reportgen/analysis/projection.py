"""Stage 9: projected weight at the current intake (Hall 2011), and intake for target rates."""

from __future__ import annotations

import datetime as dt
import math

import numpy as np

from reportgen.analysis.composition import CompositionStage
from reportgen.analysis.context import ClientContext, finite_mean
from reportgen.analysis.expenditure import ExpenditureStage
from reportgen.analysis.resting import RestingAt
from reportgen.analysis.trend import TrendStage
from reportgen.config import PROJECTION_WEEKS_MAX
from reportgen.results import Estimate, Projection
from reportgen.science import expected as expected_tdee
from reportgen.science.expected import Baseline
from reportgen.science.hall import project_weight

# As far as any report may look ([report] projection_weeks at most 26); each report shows
# its configured part, so the horizon in its text is the one projected.
PROJECTION_DAYS = 7 * PROJECTION_WEEKS_MAX


def projection_stage(
    ctx: ClientContext,
    trend: TrendStage,
    composition: CompositionStage,
    expenditure: ExpenditureStage,
    baseline: Baseline | None,
    resting_at: RestingAt,
) -> Projection | None:
    """Weight over the next 26 weeks at the current intake; None if anything is unknown."""
    path, fit, current_kg = expenditure.path, trend.fit, trend.current_weight_kg
    if path is None or current_kg is None or fit is None:
        return None
    # current intake: the same recent window as the current rate (the current phase's
    # last four weeks at most)
    intake_kcal = finite_mean(ctx.log.intake_kcal[trend.recent_start_index :])
    fat_kg = composition.reference.fat_at(current_kg)
    resting_kcal = resting_at(current_kg)
    if intake_kcal is None or fat_kg is None or resting_kcal is None:
        return None
    if baseline is not None:
        maintenance = expected_tdee.expected_tdee_from_baseline(
            baseline, current_kg, fat_kg, intake_kcal
        ).value
    else:
        maintenance = expected_tdee.expected_tdee_fallback(
            resting_kcal, ctx.settings.activity_factor
        ).value
    assert maintenance is not None
    goal_kg = ctx.record.client.goal_weight_kg
    run = project_weight(
        current_kg,
        fat_kg,
        float(path.tdee_kcal[-1]),
        intake_kcal,
        maintenance,
        resting_kcal,
        horizon_days=PROJECTION_DAYS,
        goal_weight_kg=goal_kg,
        rates_pct_per_week=tuple(ctx.settings.target_rates_pct_per_week),
        weight_sd_kg=math.sqrt(float(fit.level_var_kg2[-1])),
        fat_sd_kg=composition.reference.fat_se_kg,
        tdee_sd_kcal=float(path.sd_kcal[-1]),
    )
    as_of = ctx.as_of
    goal_date = None if run.goal_day is None else as_of + dt.timedelta(days=run.goal_day)
    return Projection(
        start=as_of,
        intake_kcal=intake_kcal,
        dates=np.datetime64(as_of, "D") + np.arange(PROJECTION_DAYS + 1),
        weight_kg=run.weight_kg,
        low_kg=run.low_kg,
        high_kg=run.high_kg,
        goal_weight_kg=goal_kg,
        goal_date=goal_date,
        intake_for_rate_kcal={
            rate: Estimate(value, low, high)
            for rate, (value, low, high) in run.intake_for_rate_kcal.items()
        },
    )
