"""Stage 10: signals beyond expenditure, safety flags and the month's data quality."""

from __future__ import annotations

import datetime as dt
import itertools
from dataclasses import dataclass

import numpy as np

from reportgen.analysis.composition import CompositionStage
from reportgen.analysis.context import ClientContext, finite_mean, to_date
from reportgen.analysis.trend import TrendStage
from reportgen.io.model import BoolArray, DailyLog
from reportgen.results import DataQuality, Flag, PhaseResult, Signal
from reportgen.science.flags import FlagInputs, safety_flags
from reportgen.science.signals import summarise_signal
from reportgen.science.trend import TrendFit

FLAG_INTAKE_DAYS = 14  # recent window of the intake-floor flag (judgment)
FLAG_RATE_WEEKS = 4  # recent weeks whose trend rates feed the rapid-loss flag
SIGNAL_NAMES = ("steps", "hunger", "energy", "sleep")
GAP_DAYS = 7  # runs longer than this without a weigh-in are listed as gaps


@dataclass(frozen=True)
class QualityStage:
    """What the report shows beside the energy analysis."""

    month_mean_intake_kcal: float | None
    bmi_kg_m2: float | None  # at the current trend weight
    signals: tuple[Signal, ...]
    flags: tuple[Flag, ...]
    quality: DataQuality


def quality_stage(
    ctx: ClientContext,
    trend: TrendStage,
    composition: CompositionStage,
    phases: tuple[PhaseResult, ...],
) -> QualityStage:
    """Month intake, BMI, signals, safety flags and data quality."""
    height_cm = ctx.record.client.height_cm
    current_kg = trend.current_weight_kg
    bmi = current_kg / (height_cm / 100) ** 2 if current_kg and height_cm else None
    in_month = month_mask(ctx)
    return QualityStage(
        month_mean_intake_kcal=finite_mean(ctx.log.intake_kcal[in_month])
        if ctx.log.n_days
        else None,
        bmi_kg_m2=bmi,
        signals=signals(ctx, phases),
        flags=flags(ctx, trend, composition, phases, bmi),
        quality=data_quality(ctx, in_month),
    )


def month_mask(ctx: ClientContext) -> BoolArray:
    """True on the log's days inside the report month."""
    if not ctx.log.n_days:
        return np.empty(0, bool)
    return ctx.log.dates >= np.datetime64(ctx.month_start, "D")


def signals(ctx: ClientContext, phases: tuple[PhaseResult, ...]) -> tuple[Signal, ...]:
    """Steps, hunger, energy and sleep against the time before the first deficit."""
    log = ctx.log
    if not log.n_days:
        return ()
    deficit_starts = [p.start for p in phases if p.kind == "deficit"]
    before_deficit = np.datetime64(deficit_starts[0], "D") if deficit_starts else None
    series = {"steps": log.steps, "hunger": log.hunger, "energy": log.energy, "sleep": log.sleep_h}
    return tuple(
        summarise_signal(name, log.dates, series[name], before_deficit) for name in SIGNAL_NAMES
    )


def flags(
    ctx: ClientContext,
    trend: TrendStage,
    composition: CompositionStage,
    phases: tuple[PhaseResult, ...],
    bmi: float | None,
) -> tuple[Flag, ...]:
    """Safety flags from the recent intake, rates, body fat and latest adaptation."""
    log = ctx.log
    client = ctx.record.client
    intake_start = max(log.n_days - FLAG_INTAKE_DAYS, 0)
    latest = next((p for p in reversed(phases) if p.adaptation_data_kcal.known), None)
    return safety_flags(
        FlagInputs(
            sex=client.sex,
            age_years=ctx.age_years,
            minor=ctx.minor,
            pregnant=client.pregnant,
            bmi_kg_m2=bmi,
            mean_intake_kcal=finite_mean(log.intake_kcal[intake_start:]) if log.n_days else None,
            weekly_rates_pct=weekly_rates_pct(trend.fit, log.n_days),
            # the rate the report prints: the same rapid-loss rule words and flags it
            current_rate_pct=trend.weekly_rate_pct.value,
            bodyfat_pct=composition.latest_bodyfat_pct,
            adaptation_implausible=latest is not None and latest.adaptation_implausible,
            adaptation_data_kcal=None if latest is None else latest.adaptation_data_kcal.value,
            adaptation_typical_kcal=(
                None if latest is None else latest.adaptation_typical_kcal.value
            ),
        )
    )


def weekly_rates_pct(fit: TrendFit | None, n_days: int) -> tuple[float, ...]:
    """Trend rate at the end of each of the last weeks, oldest first [% of body weight/week].

    The smoothed slope (7 x kg/day over the level) rather than a difference of
    levels a week apart, so that a water swing does not pass for a week of rapid
    loss.
    """
    if fit is None:
        return ()
    rates = []
    for weeks_back in range(FLAG_RATE_WEEKS, 0, -1):
        end = n_days - 1 - 7 * (weeks_back - 1)
        if end - 6 < 0:
            continue
        rates.append(700.0 * fit.slope_kg_per_day[end] / fit.level_kg[end])
    return tuple(float(rate) for rate in rates)


def data_quality(ctx: ClientContext, in_month: BoolArray) -> DataQuality:
    """Days with data in the month, outliers, gaps and the reader's warnings."""
    log = ctx.log
    return DataQuality(
        days_in_period=(ctx.as_of - ctx.month_start).days + 1,
        weight_days=int(np.isfinite(ctx.weights_kg[in_month]).sum()) if log.n_days else 0,
        intake_days=int(np.isfinite(log.intake_kcal[in_month]).sum()) if log.n_days else 0,
        outliers=tuple(o for o in ctx.record.outliers if o[0] <= ctx.as_of),
        gaps=gaps(log) if log.n_days else (),
        warnings=ctx.record.warnings,
    )


def gaps(log: DailyLog) -> tuple[tuple[dt.date, dt.date], ...]:
    """Runs of more than GAP_DAYS days without a weigh-in (first and last day of each)."""
    weighed = np.nonzero(np.isfinite(log.weight_used_kg))[0]
    return tuple(
        (to_date(log.dates[before + 1]), to_date(log.dates[after - 1]))
        for before, after in itertools.pairwise(weighed)
        if after - before - 1 > GAP_DAYS
    )
