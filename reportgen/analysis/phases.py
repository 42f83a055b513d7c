"""Stage 7: one :class:`PhaseResult` per phase.

Two paths, kept apart: under special handling (minor or pregnant client) a phase
shows its trend and rate of change only; otherwise it shows its energy balance,
observed and expected TDEE and adaptation.  Both add the body-fat change over the
window, from two skinfold sessions or the Forbes partition.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

import numpy as np

from reportgen.analysis.adaptation import combined_pct
from reportgen.analysis.balance import PhaseBalance
from reportgen.analysis.composition import CompositionStage
from reportgen.analysis.context import (
    MIN_ANALYSIS_DAYS,
    ClientContext,
    PhaseWindow,
    estimate,
    finite_mean,
    scaled,
)
from reportgen.analysis.expected import EARLY_PHASE_DAYS, PhaseExpectation
from reportgen.analysis.trend import TrendStage
from reportgen.results import BodyCompResult, Estimate, PhaseResult
from reportgen.science import expected as expected_tdee
from reportgen.science.adaptation import PhaseAdaptation
from reportgen.science.expected import Baseline
from reportgen.science.rates import WindowRate


@dataclass(frozen=True)
class _EnergyPart:
    """The fields of a PhaseResult that differ between the two paths."""

    rate: Estimate
    rate_pct: Estimate
    deficit: Estimate
    observed_tdee: Estimate
    expected_tdee: Estimate
    expected_method: str | None
    adaptation_kcal: Estimate
    adaptation_pct: Estimate
    depth_pct: float | None
    status: str
    notes: tuple[str, ...]


def phase_results(
    ctx: ClientContext,
    trend: TrendStage,
    composition: CompositionStage,
    phases: tuple[PhaseBalance, ...],
    expectations: tuple[PhaseExpectation | None, ...],
    baseline: Baseline | None,
    adaptations: tuple[PhaseAdaptation | None, ...] | None = None,
) -> tuple[PhaseResult, ...]:
    """Every phase's result, in start order."""
    found = adaptations if adaptations is not None else tuple(None for _ in phases)
    return tuple(
        phase_result(ctx, trend, composition, number, phase, expectation, baseline, assessed)
        for number, (phase, expectation, assessed) in enumerate(
            zip(phases, expectations, found, strict=True)
        )
    )


def weekly_rate(rate: WindowRate, mean_weight_kg: float | None) -> tuple[Estimate, Estimate]:
    """Rate [kg/week] and as % of the mean weight [%/week]."""
    in_kg = estimate(7 * rate.rate_kg_per_day, 7 * rate.se_kg_per_day)
    return in_kg, scaled(in_kg, 100.0 / (mean_weight_kg or 1.0))


def special_handling_part(phase: PhaseBalance) -> _EnergyPart:
    """Trend only: the rate of weight change, but no energy balance."""
    reason = "special-handling"
    if phase.rate is not None and phase.window.logged_days >= MIN_ANALYSIS_DAYS:
        rate, rate_pct = weekly_rate(phase.rate, phase.mean_weight_kg)
    else:
        rate = rate_pct = Estimate.missing("too-few-days")
    missing = Estimate.missing(reason)
    return _EnergyPart(
        rate, rate_pct, missing, missing, missing, None, missing, missing, None, reason, ()
    )


def energy_part(
    phase: PhaseBalance,
    expectation: PhaseExpectation,
    baseline: Baseline | None,
    assessed: PhaseAdaptation | None = None,
) -> _EnergyPart:
    """Energy balance, observed and expected TDEE and adaptation of one phase."""
    window, balance = phase.window, phase.balance
    if balance is None or balance.rate is None:
        too_few_days = window.logged_days < MIN_ANALYSIS_DAYS
        rate = rate_pct = Estimate.missing("too-few-days" if too_few_days else "too-few-weigh-ins")
    else:
        rate, rate_pct = weekly_rate(balance.rate, phase.mean_weight_kg)
    deficit = balance.deficit_kcal if balance is not None else Estimate.missing("too-few-days")
    notes = []
    if expectation.is_baseline:
        notes.append("baseline-phase")
    elif assessed is not None and assessed.evidence.implausible:
        # the data alone far outside the literature for this cut (deficit-scaled rule)
        notes.append("implausible-adaptation")
    expected = expectation.expected_tdee
    adaptation_kcal, adaptation_pct = expectation.adaptation.kcal, expectation.adaptation.pct
    if assessed is not None:
        adaptation_kcal = assessed.adaptation
        adaptation_pct = combined_pct(assessed.adaptation, expected)
    if window.logged_days < MIN_ANALYSIS_DAYS:
        status = "too-few-days"
    elif window.phase.end is None or window.phase.end > window.window_end:
        status = "running"
    else:
        status = "ok"
    calendar_days = (window.window_end - window.phase.start).days + 1
    if expectation.early or calendar_days < EARLY_PHASE_DAYS:
        notes.append("early-phase-water-glycogen")
    if expectation.expected_method == "resting-equation":
        notes.append("expected-lower-confidence")
    if baseline is not None and baseline.source == "first-weeks":
        notes.append("baseline-first-weeks")
    return _EnergyPart(
        rate=rate,
        rate_pct=rate_pct,
        deficit=deficit,
        observed_tdee=expectation.observed_tdee,
        expected_tdee=expected,
        expected_method=expectation.expected_method,
        adaptation_kcal=adaptation_kcal,
        adaptation_pct=adaptation_pct,
        depth_pct=expected_tdee.deficit_depth_pct(deficit.value, expected.value),
        status=status,
        notes=tuple(notes),
    )


def phase_result(
    ctx: ClientContext,
    trend: TrendStage,
    composition: CompositionStage,
    number: int,
    phase: PhaseBalance,
    expectation: PhaseExpectation | None,
    baseline: Baseline | None,
    assessed: PhaseAdaptation | None = None,
) -> PhaseResult:
    """One phase's result from its balance and expectation (None: special handling)."""
    window = phase.window
    logged = window.logged_days
    first, last = window.start_index, window.end_index
    weights_kg = ctx.log.weight_used_kg[first : last + 1] if logged else np.empty(0)
    intake_kcal = ctx.log.intake_kcal[first : last + 1] if logged else np.empty(0)
    trend_start = trend_end = trend_change = None
    if trend.fit is not None and logged:
        trend_start = float(trend.fit.level_kg[first])
        trend_end = float(trend.fit.level_kg[last])
        trend_change = trend_end - trend_start
    if expectation is None:
        part = special_handling_part(phase)
    else:
        part = energy_part(phase, expectation, baseline, assessed)
    change = composition_change(composition.sessions, phase, expectation is None)
    evidence: dict[str, object] = {}
    if assessed is not None:
        evidence = {
            "adaptation_data_kcal": assessed.evidence.data,
            "adaptation_typical_kcal": assessed.evidence.literature,
            "adaptation_implausible": assessed.evidence.implausible,
            "logging_drift_probability": assessed.evidence.logging_drift_probability,
            "expenditure_change_kcal": assessed.change.total,
            "body_size_change_kcal": assessed.change.body_size,
            "activity_change_kcal": assessed.change.activity,
            "metabolic_change_kcal": assessed.change.metabolic,
            "implied_intake_kcal": assessed.implied_intake,
            "logging_gap_kcal": assessed.logging_gap,
        }
    return PhaseResult(
        name=window.phase.name,
        kind=window.phase.kind,
        start=window.phase.start,
        end=window.phase.end,
        window_end=window.window_end,
        days=(window.window_end - window.phase.start).days + 1,
        weight_days=int(np.isfinite(weights_kg).sum()),
        intake_days=int(np.isfinite(intake_kcal).sum()),
        trend_start_kg=trend_start,
        trend_end_kg=trend_end,
        trend_change_kg=trend_change,
        rate_kg_per_week=part.rate,
        rate_pct_per_week=part.rate_pct,
        mean_intake_kcal=finite_mean(intake_kcal),
        target_kcal=window.phase.target_kcal,
        realised_deficit_kcal=part.deficit,
        observed_tdee_kcal=part.observed_tdee,
        expected_tdee_kcal=part.expected_tdee,
        expected_method=part.expected_method,
        adaptation_kcal=part.adaptation_kcal,
        adaptation_pct=part.adaptation_pct,
        deficit_depth_pct=part.depth_pct,
        days_in_deficit=None if expectation is None else days_in_deficit(ctx.windows, number),
        bodyfat_start_pct=None if change.start is None else change.start.bodyfat_pct,
        bodyfat_end_pct=None if change.end is None else change.end.bodyfat_pct,
        fat_mass_change_kg=change.fat_kg,
        lean_mass_change_kg=change.lean_kg,
        status=part.status,
        notes=part.notes + change.notes,
        **evidence,  # type: ignore[arg-type]
    )


@dataclass(frozen=True)
class CompositionChange:
    """Fat and lean change over a phase window, and where it came from."""

    start: BodyCompResult | None  # skinfold session at the window's start
    end: BodyCompResult | None  # and near its end
    fat_kg: float | None
    lean_kg: float | None
    notes: tuple[str, ...]


def composition_change(
    sessions: tuple[BodyCompResult, ...], phase: PhaseBalance, special: bool
) -> CompositionChange:
    """From two skinfold sessions when the window has them, else the Forbes partition."""
    start_day, window_end = phase.window.phase.start, phase.window.window_end
    first = session_between(
        sessions, start_day - dt.timedelta(days=14), start_day + dt.timedelta(7)
    )
    latest = session_between(sessions, start_day + dt.timedelta(days=8), window_end)
    balance = phase.balance
    if first is not None and latest is not None and latest.date > first.date:
        return CompositionChange(
            first,
            latest,
            latest.fat_mass_kg - first.fat_mass_kg,
            latest.lean_mass_kg - first.lean_mass_kg,
            ("composition-change-from-skinfolds",),
        )
    if balance is not None and balance.fat_change_kg is not None and not special:
        return CompositionChange(
            first,
            latest,
            balance.fat_change_kg,
            balance.lean_change_kg,
            ("composition-change-from-forbes",),
        )
    return CompositionChange(first, latest, None, None, ())


def session_between(
    sessions: tuple[BodyCompResult, ...], earliest: dt.date, latest: dt.date
) -> BodyCompResult | None:
    """Latest session with earliest <= date <= latest."""
    found = None
    for session in sessions:
        if earliest <= session.date <= latest:
            found = session
    return found


def days_in_deficit(windows: tuple[PhaseWindow, ...], number: int) -> int | None:
    """Days since the deficit run the ``number``-th phase belongs to started (0: no deficit)."""
    window = windows[number]
    if window.phase.kind != "deficit":
        return 0
    run_start = window.phase.start
    earlier = number - 1
    while earlier >= 0:
        previous = windows[earlier]
        if previous.phase.kind != "deficit" or (run_start - previous.window_end).days > 1:
            break
        run_start = previous.phase.start
        earlier -= 1
    return (window.window_end - run_start).days + 1


def current_phase(
    ctx: ClientContext, results: tuple[PhaseResult, ...]
) -> tuple[PhaseResult | None, int | None]:
    """The phase running on the month's last day (the latest one) and its week number."""
    current, week = None, None
    for result in results:
        if result.start <= ctx.as_of and (result.end is None or result.end >= ctx.as_of):
            current, week = result, (ctx.as_of - result.start).days // 7 + 1
    if current is not None and current.kind == "month":
        week = None  # the report month as one window has no week count of its own
    return current, week
