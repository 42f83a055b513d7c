"""Stage 6: expected TDEE and metabolic adaptation of each phase.

Observed TDEE comes from the phase's energy balance (stage 4); expected TDEE from
the client's own baseline scaled to the phase's body size (Hall 2011), or, without
a baseline, a resting equation times the activity factor.  Adaptation is their
difference.  Short windows (common practice: glycogen and water dominate the first weeks):
the first week after an intake change is mostly glycogen and water, so a phase
that starts with one needs MIN_ANALYSIS_DAYS (14) usable days after its first
EARLY_PHASE_SKIP_DAYS (7) before an observed TDEE or an adaptation is given
(reason "early-phase").
"""

from __future__ import annotations

from dataclasses import dataclass

from reportgen.analysis.balance import PhaseBalance
from reportgen.analysis.composition import CompositionStage
from reportgen.analysis.context import INTAKE_CHANGE_KINDS, MIN_ANALYSIS_DAYS, ClientContext
from reportgen.analysis.resting import RestingAt
from reportgen.results import Estimate
from reportgen.science import expected as expected_tdee
from reportgen.science.expected import Adaptation, Baseline

EARLY_PHASE_SKIP_DAYS = 7
EARLY_PHASE_DAYS = EARLY_PHASE_SKIP_DAYS + MIN_ANALYSIS_DAYS  # 21


@dataclass(frozen=True)
class PhaseExpectation:
    """Observed against expected TDEE for one phase (outside special handling)."""

    observed_tdee: Estimate  # missing ("early-phase") in a young phase that changed intake
    expected_tdee: Estimate
    expected_method: str | None  # "own-baseline", "resting-equation" or None
    adaptation: Adaptation
    early: bool  # changed intake and has fewer than EARLY_PHASE_DAYS logged days
    is_baseline: bool  # this phase is the baseline itself (no adaptation by construction)


def expected_stage(
    ctx: ClientContext,
    phases: tuple[PhaseBalance, ...],
    composition: CompositionStage,
    baseline: Baseline | None,
    resting_at: RestingAt,
) -> tuple[PhaseExpectation | None, ...]:
    """Observed and expected TDEE and the adaptation per phase; None under special handling."""
    if ctx.special_handling:
        return tuple(None for _ in phases)
    return tuple(
        phase_expectation(ctx, number, phase, composition, baseline, resting_at)
        for number, phase in enumerate(phases)
    )


def phase_expectation(
    ctx: ClientContext,
    number: int,
    phase: PhaseBalance,
    composition: CompositionStage,
    baseline: Baseline | None,
    resting_at: RestingAt,
) -> PhaseExpectation:
    """Expected TDEE and adaptation of the ``number``-th phase (0 = first)."""
    window = phase.window
    observed = (
        phase.balance.tdee_kcal if phase.balance is not None else Estimate.missing("too-few-days")
    )
    # intake changed at the start: any phase after the first, or a first phase that is a
    # deficit or surplus (the client ate at maintenance before it)
    intake_changed = number > 0 or window.phase.kind in INTAKE_CHANGE_KINDS
    early = intake_changed and window.logged_days < EARLY_PHASE_DAYS
    if early and observed.known:
        observed = Estimate.missing("early-phase")
    expected, method = expected_tdee_of(phase, composition, baseline, resting_at, ctx)
    is_baseline = baseline is not None and baseline.phase_start == window.phase.start
    if is_baseline:
        # the reference itself: expected is its own observed TDEE by construction
        missing = Estimate.missing("baseline-phase")
        adaptation = Adaptation(missing, missing, False)
    else:
        adaptation = expected_tdee.adaptation(observed, expected)
    return PhaseExpectation(observed, expected, method, adaptation, early, is_baseline)


def expected_tdee_of(
    phase: PhaseBalance,
    composition: CompositionStage,
    baseline: Baseline | None,
    resting_at: RestingAt,
    ctx: ClientContext,
) -> tuple[Estimate, str | None]:
    """Expected TDEE at the phase's mean weight and intake, and how it was found."""
    if phase.mean_weight_kg is None:
        return Estimate.missing("too-few-weigh-ins"), None
    mean_weight_kg = phase.mean_weight_kg
    balance = phase.balance
    intake_kcal = balance.mean_intake_kcal if balance is not None else None
    if baseline is not None and intake_kcal is not None and balance is not None:
        fat_kg = composition.reference.fat_at(mean_weight_kg)
        if fat_kg is not None:
            days = max(balance.days, 1)
            fat_rate_kg_per_day = (balance.fat_change_kg or 0.0) / days
            lean_rate_kg_per_day = (balance.lean_change_kg or 0.0) / days
            found = expected_tdee.expected_tdee_from_baseline(
                baseline,
                mean_weight_kg,
                fat_kg,
                intake_kcal,
                fat_rate_kg_per_day,
                lean_rate_kg_per_day,
            )
            return found, "own-baseline"
    if ctx.month_window:
        # no phases: no baseline, and an equation alone is no honest expectation for a
        # window whose intake history is unknown
        return Estimate.missing("no-baseline"), None
    resting_kcal = resting_at(mean_weight_kg)
    if resting_kcal is None:
        return Estimate.missing("no-resting-equation"), None
    return (
        expected_tdee.expected_tdee_fallback(resting_kcal, ctx.settings.activity_factor),
        "resting-equation",
    )
