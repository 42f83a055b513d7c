"""Stage 6b: adaptation as a combined estimate, the drop in expenditure in parts, and
the intake the weights imply.

For every phase after the client's baseline: the client's own evidence (observed
minus expected TDEE, less the change in step expenditure when steps are logged), the
literature expectation for the cut the weights show, and their precision-weighted
combination with a logging-drift component (``reportgen.science.adaptation``).

:func:`compare_windows` is the general form, "a later window against a reference
window" of the same client; the phase path uses the client's baseline as reference,
and a stall check can compare recent weeks with a phase's first weeks the same way.
"""

from __future__ import annotations

from dataclasses import dataclass

from reportgen.analysis.balance import PhaseBalance
from reportgen.analysis.baseline import first_weeks_window
from reportgen.analysis.composition import CompositionStage
from reportgen.analysis.context import ClientContext
from reportgen.analysis.expected import PhaseExpectation
from reportgen.results import Estimate
from reportgen.science import expected as expected_tdee
from reportgen.science.activity import step_energy_change_kcal
from reportgen.science.adaptation import (
    PhaseAdaptation,
    assess_phase_adaptation,
    body_size_change_kcal,
)
from reportgen.science.balance import WindowBalance
from reportgen.science.expected import Baseline


@dataclass(frozen=True)
class WindowSpan:
    """Days ``first..last`` (inclusive log indices) of a window."""

    first: int
    last: int


def baseline_span(ctx: ClientContext, baseline: Baseline) -> WindowSpan | None:
    """The log days the baseline was measured over."""
    if baseline.phase_start is not None:
        for w in ctx.windows:
            if w.phase.start == baseline.phase_start and w.end_index >= w.start_index:
                return WindowSpan(w.start_index, w.end_index)
        return None
    first, last = first_weeks_window(ctx.windows, ctx.log.n_days)
    return WindowSpan(first, last) if last >= first else None


def compare_windows(
    ctx: ClientContext,
    composition: CompositionStage,
    reference: Baseline,
    reference_span: WindowSpan | None,
    balance: WindowBalance,
    span: WindowSpan,
    mean_weight_kg: float,
    observed_tdee: Estimate,
    expected: Estimate,
    first_day: float,
) -> PhaseAdaptation | None:
    """A later window against a reference window of the same client.

    ``expected`` is the later window's expected TDEE from ``reference`` (the
    reference scaled to the window's body size); None when anything needed is missing.
    """
    if not (observed_tdee.known and expected.known and balance.deficit_kcal.known):
        return None
    fat_kg = composition.reference.fat_at(mean_weight_kg)
    if fat_kg is None:
        return None
    delta = expected_tdee.activity_coefficient_kcal_per_kg_day(
        reference.tdee_kcal, reference.resting_kcal, reference.weight_kg
    )
    d_fat = fat_kg - reference.fat_kg
    d_weight = mean_weight_kg - reference.weight_kg
    body = body_size_change_kcal(d_fat, d_weight - d_fat, d_weight, delta)
    activity = None
    if reference_span is not None:
        steps = ctx.log.steps
        activity = step_energy_change_kcal(
            steps[reference_span.first : reference_span.last + 1],
            steps[span.first : span.last + 1],
            mean_weight_kg,
            ctx.record.client.height_cm,
            ctx.record.client.sex,
        )
    intake_se = balance.intake_se_kcal or 0.0
    return assess_phase_adaptation(
        observed_tdee=observed_tdee,
        expected_tdee=expected,
        baseline_tdee_kcal=reference.tdee_kcal,
        baseline_tdee_se_kcal=reference.tdee_se_kcal,
        baseline_intake_kcal=reference.intake_kcal,
        baseline_intake_se_kcal=reference.tdee_se_kcal,
        baseline_deficit_kcal=reference.tdee_kcal - reference.intake_kcal,
        phase_deficit=balance.deficit_kcal,
        logged_intake_kcal=balance.mean_intake_kcal,
        logged_intake_se_kcal=intake_se,
        body_size_kcal=body,
        first_day=first_day,
        days=max(span.last - span.first + 1, 1),
        activity=activity,
    )


def adaptation_stage(
    ctx: ClientContext,
    composition: CompositionStage,
    balances: tuple[PhaseBalance, ...],
    expectations: tuple[PhaseExpectation | None, ...],
    baseline: Baseline | None,
) -> tuple[PhaseAdaptation | None, ...]:
    """The combined adaptation of every phase after the baseline (None elsewhere)."""
    if baseline is None or ctx.special_handling:
        return tuple(None for _ in balances)
    ref_span = baseline_span(ctx, baseline)
    out: list[PhaseAdaptation | None] = []
    for phase, expectation in zip(balances, expectations, strict=True):
        if (
            expectation is None
            or expectation.is_baseline
            or expectation.expected_method != "own-baseline"
            or phase.balance is None
            or phase.mean_weight_kg is None
        ):
            out.append(None)
            continue
        w = phase.window
        if ref_span is not None and w.start_index <= ref_span.last:
            out.append(None)  # overlaps the reference itself
            continue
        first_day = 0.0
        if ref_span is not None:
            first_day = float(max(w.start_index - (ref_span.last + 1), 0))
        out.append(
            compare_windows(
                ctx,
                composition,
                baseline,
                ref_span,
                phase.balance,
                WindowSpan(w.start_index, w.end_index),
                phase.mean_weight_kg,
                expectation.observed_tdee,
                expectation.expected_tdee,
                first_day,
            )
        )
    return tuple(out)


def combined_pct(adaptation: Estimate, expected: Estimate) -> Estimate:
    """The combined adaptation as % of expected TDEE."""
    if not (adaptation.known and expected.known) or not expected.value:
        return Estimate.missing(adaptation.reason or expected.reason or "no-expected")
    assert adaptation.value is not None and adaptation.low is not None
    assert adaptation.high is not None
    f = 100.0 / expected.value
    return Estimate(adaptation.value * f, adaptation.low * f, adaptation.high * f)
