"""Stage 11: is progress stalling in the running deficit phase, why, and what could change.

Gathers what :func:`reportgen.science.plateau_assess.assess_plateau` needs from the
earlier stages (the log, the robust trend fit, the reference fat mass, the baseline,
today's expenditure and resting expenditure) and turns its answer into the
:class:`~reportgen.results.PlateauResult` the reports and the summary read.
"""

from __future__ import annotations

import numpy as np

from reportgen.analysis.composition import CompositionStage
from reportgen.analysis.context import ClientContext, PhaseWindow
from reportgen.analysis.expenditure import ExpenditureStage
from reportgen.analysis.resting import RestingModel
from reportgen.analysis.trend import TrendStage
from reportgen.results import Estimate, PlateauResult
from reportgen.science.expected import Baseline
from reportgen.science.plateau_assess import PlateauInputs, assess_plateau

BREAK_KINDS = ("maintenance", "break")


def plateau_stage(
    ctx: ClientContext,
    trend: TrendStage,
    composition: CompositionStage,
    baseline: Baseline | None,
    expenditure: ExpenditureStage,
    resting: RestingModel,
    bmi_kg_m2: float | None,
) -> PlateauResult | None:
    """The running deficit phase's plateau assessment; None when there is none to assess.

    None when the month ends outside a deficit phase, under special handling (minors,
    pregnancy: no deficit analysis at all), or without a trend.
    """
    log = ctx.log
    if ctx.special_handling or trend.fit is None or trend.current_weight_kg is None:
        return None
    last = log.n_days - 1
    k = _running(ctx)
    if k is None or ctx.windows[k].phase.kind != "deficit" or last < 0:
        return None
    win = ctx.windows[k]
    deficit_start = _index(ctx, win)
    j = k - 1
    while j >= 0 and ctx.windows[j].phase.kind == "deficit":
        if (ctx.windows[j + 1].phase.start - ctx.windows[j].window_end).days > 1:
            break
        deficit_start = _index(ctx, ctx.windows[j])
        j -= 1
    since_break = None
    for w in ctx.windows[:k]:
        if w.phase.kind in BREAK_KINDS and w.end_index >= 0:
            since_break = last - w.end_index
    client = ctx.record.client
    path = expenditure.path
    ref = composition.reference
    inputs = PlateauInputs(
        weight_kg=log.weight_used_kg,
        intake_kcal=log.intake_kcal,
        steps=log.steps,
        hunger=log.hunger,
        energy=log.energy,
        robust_weights=trend.fit.weights,
        current_weight_kg=trend.current_weight_kg,
        phase_kind=win.phase.kind,
        phase_start=_index(ctx, win),
        deficit_start=deficit_start,
        target_kcal=win.phase.target_kcal,
        days_since_break_end=since_break,
        fat_ref_kg=ref.fat_kg,
        weight_ref_kg=ref.weight_kg,
        fat_se_kg=ref.fat_se_kg,
        baseline=baseline,
        tdee_now_kcal=None if path is None else float(path.tdee_kcal[-1]),
        tdee_now_sd_kcal=0.0 if path is None else float(path.sd_kcal[-1]),
        resting_now_kcal=resting(trend.current_weight_kg),
        sex=client.sex,
        height_cm=client.height_cm,
        minor=ctx.minor,
        pregnant=client.pregnant,
        bmi_kg_m2=bmi_kg_m2,
    )
    got = assess_plateau(inputs)
    st = got.status
    c = got.causes
    # the span of the rate the status used (four weeks, or longer by the sequential rule)
    recent_days = st.window_days or (got.recent.days if got.recent is not None else 0)
    missing = Estimate.missing(got.causes_reason or "not-estimable")
    return PlateauResult(
        phase_name=win.phase.name,
        phase_start=win.phase.start,
        status=st.status,
        reason=st.reason,
        underlying=st.underlying,
        water_reasons=st.water_reasons,
        recent_rate_pct_per_week=st.rate_pct_per_week,
        planned_rate_pct_per_week=st.planned_pct_per_week,
        planned_source=got.planned_source,
        recent_days=recent_days,
        change_kcal=missing if c is None else c.change_kcal,
        parts=() if c is None else c.parts,
        leftover_kcal=None if c is None else c.leftover_kcal,
        largest=None if c is None else c.largest,
        causes_reason=got.causes_reason,
        intake_change_kcal=None if c is None else c.intake_change_kcal,
        completeness_change_pct=None if c is None else c.completeness_change_pct,
        implied_intake_kcal=missing if c is None else c.implied_intake_kcal,
        logging_gap_kcal=missing if c is None else c.logging_gap_kcal,
        metabolic_expected_kcal=None if c is None else c.metabolic_expected_kcal,
        hunger_change=got.hunger_change,
        energy_change=got.energy_change,
        gap_kcal=got.gap_kcal,
        options=got.options.options,
        cautions=got.options.cautions,
        recent_rate_kg_per_week=_kg_per_week(st.rate_pct_per_week, trend.current_weight_kg),
    )


def _kg_per_week(pct: Estimate, weight_kg: float) -> Estimate:
    """A rate in % of body weight per week as kg/week at the weight it was scaled by."""
    if pct.value is None:
        return pct
    k = weight_kg / 100.0
    return Estimate(
        pct.value * k,
        None if pct.low is None else pct.low * k,
        None if pct.high is None else pct.high * k,
    )


def _running(ctx: ClientContext) -> int | None:
    """Index of the latest phase window running on the month's last day."""
    found = None
    for k, w in enumerate(ctx.windows):
        if w.phase.start <= ctx.as_of and (w.phase.end is None or w.phase.end >= ctx.as_of):
            found = k
    return found


def _index(ctx: ClientContext, win: PhaseWindow) -> int:
    """Log index of a phase's start (negative when it started before the log)."""
    if ctx.log.n_days == 0:
        return 0
    return int((np.datetime64(win.phase.start, "D") - ctx.log.dates[0]).astype(int))
