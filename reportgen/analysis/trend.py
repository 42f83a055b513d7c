"""Stage 1: trend weight, the weigh-in noise model, the month's change and the current rate."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from reportgen.analysis.context import (
    MIN_ANALYSIS_DAYS,
    ClientContext,
    day_index,
    estimate,
    scaled,
)
from reportgen.analysis.methods import METHODS
from reportgen.results import Estimate, MethodUsed, TrendSeries
from reportgen.science.rates import SHIFT_TAU_DAYS, NoiseModel, fit_noise_model, segment_rate
from reportgen.science.trend import TrendFit, local_linear_trend, trend_with_water

RECENT_DAYS = 28  # window of the current weekly rate and current intake (judgment)


@dataclass(frozen=True)
class TrendStage:
    """The smoothed weight and what is read off it."""

    fit: TrendFit | None  # None with fewer than two weigh-ins
    trend: TrendSeries | None
    noise: NoiseModel | None  # weigh-in noise pooled over the phase windows
    current_weight_kg: float | None  # trend level on the last day
    current_weight: Estimate
    month_change: Estimate
    weekly_rate: Estimate  # [kg/week]
    weekly_rate_pct: Estimate  # [% of body weight/week]
    recent_start_index: int  # first day of the current rate's window (and current intake)
    methods: tuple[MethodUsed, ...]
    notes: tuple[str, ...]


def trend_stage(ctx: ClientContext) -> TrendStage:
    """Fit the trend and read the current weight, month change and weekly rate from it."""
    weights_kg = ctx.weights_kg
    recent_start = max(ctx.log.n_days - RECENT_DAYS, 0)
    if int(np.isfinite(weights_kg).sum()) < 2:
        missing = Estimate.missing("too-few-weigh-ins")
        return TrendStage(
            fit=None,
            trend=None,
            noise=None,
            current_weight_kg=None,
            current_weight=missing,
            month_change=missing,
            weekly_rate=missing,
            weekly_rate_pct=missing,
            recent_start_index=recent_start,
            methods=(),
            notes=("too-few-weigh-ins",),
        )
    fit = local_linear_trend(weights_kg)
    # One weigh-in noise model per client, pooled over its phase windows (the whole log
    # when there are none); used by every rate's standard error.
    spans = [
        (w.start_index, w.end_index)
        for w in ctx.windows
        if w.end_index - w.start_index + 1 >= MIN_ANALYSIS_DAYS
    ]
    noise = fit_noise_model(
        weights_kg,
        spans or [(0, ctx.log.n_days - 1)],
        fit.weights,
        shift_tau_days=SHIFT_TAU_DAYS if spans else None,
    )
    if noise is not None and noise.ar_var_kg2 > 1e-3 * noise.white_var_kg2 and noise.phi > 0:
        # the water swings the noise model found persist for days: refit the trend
        # with them as a state of their own, so that the level's band allows for them
        fit = trend_with_water(
            weights_kg, noise.phi, noise.ar_var_kg2, noise.white_var_kg2, fit.weights
        )
    last = ctx.last_index
    current_kg = float(fit.level_kg[last])
    recent_start = current_rate_start(ctx)
    weekly_rate = current_weekly_rate(ctx, fit, noise, recent_start)
    return TrendStage(
        fit=fit,
        trend=fit.series(ctx.log.dates),
        noise=noise,
        current_weight_kg=current_kg,
        current_weight=estimate(current_kg, math.sqrt(fit.level_var_kg2[last])),
        month_change=month_change(ctx, fit),
        weekly_rate=weekly_rate,
        weekly_rate_pct=scaled(weekly_rate, 100.0 / current_kg),
        recent_start_index=recent_start,
        methods=(METHODS["local-linear-trend"],),
        notes=(),
    )


def month_change(ctx: ClientContext, fit: TrendFit) -> Estimate:
    """Trend on the last day minus trend on the day before the month (or the first day)."""
    last = ctx.last_index
    before_month = max(day_index(ctx.log, ctx.month_start) - 1, 0)
    if before_month >= last:
        return Estimate.missing("no-data-in-month")
    return estimate(
        float(fit.level_kg[last]) - float(fit.level_kg[before_month]),
        math.sqrt(fit.level_var_kg2[last] + fit.level_var_kg2[before_month]),
    )


def current_rate_start(ctx: ClientContext) -> int:
    """First day of the current rate's window.

    The last four weeks, but not before the current phase started unless that
    leaves fewer than 14 days (then the fit spans the phase change).
    """
    n_days = ctx.log.n_days
    start = max(n_days - RECENT_DAYS, 0)
    current_starts = [w.start_index for w in ctx.windows if w.end_index == ctx.last_index]
    if current_starts and current_starts[-1] > start:
        start = min(current_starts[-1], max(n_days - MIN_ANALYSIS_DAYS, 0))
    return start


def current_weekly_rate(
    ctx: ClientContext, fit: TrendFit, noise: NoiseModel | None, start: int
) -> Estimate:
    """Rate of weight change over the current window [kg/week]."""
    rate = segment_rate(
        ctx.weights_kg,
        start,
        ctx.last_index,
        ctx.phase_start_indices,
        fit.weights,
        noise,
        edge_knots=False,
        start_shift_at=ctx.start_shift_index,
    )
    if rate is None or ctx.log.n_days - start < MIN_ANALYSIS_DAYS:
        return Estimate.missing("too-few-days")
    return estimate(7 * rate.rate_kg_per_day, 7 * rate.se_kg_per_day)
