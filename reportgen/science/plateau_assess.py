"""One deficit phase's plateau assessment from a client's daily series.

Puts the plateau pieces together in the order a coach would check them: the
recent rate against the plan (with the water check), the causes of the change
in realised deficit since the phase's first weeks, and the options to discuss.
Pure: plain arrays and numbers in, a frozen :class:`PlateauAssessment` out; the
analysis gathers the inputs (trend fit, baseline, composition) and the reports
word the result.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from reportgen.io.model import FloatArray
from reportgen.results import Estimate
from reportgen.science import balance as bal
from reportgen.science import plateau as pl
from reportgen.science import plateau_causes as pc
from reportgen.science.activity import (
    MIN_STEP_DAYS,
    kcal_per_1000_steps,
    step_energy_change_kcal,
    step_length_m,
)
from reportgen.science.composition import energy_density_kcal_per_kg
from reportgen.science.expected import (
    Baseline,
    activity_coefficient_kcal_per_kg_day,
    expected_tdee_from_baseline,
)
from reportgen.science.hall import project_weight
from reportgen.science.rates import NoiseModel, WindowRate, fit_noise_model, window_rate
from reportgen.science.trend import Z80

CAUSE_REASONS: tuple[str, ...] = (
    "not-in-deficit",
    "phase-too-short",  # no first weeks after the glycogen weeks before the recent window
    "no-intake",  # a window without a logged mean intake
    "no-body-composition",  # no fat mass to split the weight change
    "no-baseline",  # no measured baseline for the activity coefficient
    "too-few-weigh-ins",
)


@dataclass(frozen=True)
class PlateauInputs:
    """Everything one assessment needs; indices are on the daily grid of the arrays."""

    weight_kg: FloatArray  # NaN on days without a weigh-in; the last day is the report date
    intake_kcal: FloatArray
    steps: FloatArray
    hunger: FloatArray
    energy: FloatArray
    robust_weights: FloatArray | None
    current_weight_kg: float  # trend weight on the last day
    phase_kind: str
    phase_start: int  # the phase's first day (may be before the log: negative)
    deficit_start: int  # first day of the run of deficit phases that holds this one
    target_kcal: float | None
    days_since_break_end: int | None  # latest break or maintenance phase before, if any
    fat_ref_kg: float | None  # fat mass at a reference weight (latest skinfold result)
    weight_ref_kg: float | None
    fat_se_kg: float
    baseline: Baseline | None
    tdee_now_kcal: float | None  # today's observed expenditure (state-space path)
    tdee_now_sd_kcal: float
    resting_now_kcal: float | None
    sex: str | None
    height_cm: float | None
    minor: bool
    pregnant: bool
    bmi_kg_m2: float | None


@dataclass(frozen=True)
class PlateauAssessment:
    status: pl.ProgressStatus
    planned_source: str | None  # "target", "early-rate" or "target-and-early-rate"
    early: pc.WindowSummary | None
    recent: pc.WindowSummary | None
    causes: pc.DeficitChangeCauses | None
    causes_reason: str | None  # one of CAUSE_REASONS when there are no causes
    hunger_change: float | None  # recent minus early mean rating (1-10)
    energy_change: float | None
    planned_deficit_kcal: float | None
    gap_kcal: float | None  # planned minus recent realised deficit
    intake_for_planned_rate: Estimate | None
    kcal_per_step: float | None
    options: pl.PlateauOptions


def _fat_at(inp: PlateauInputs, weight_kg: float) -> float | None:
    if inp.fat_ref_kg is None or inp.weight_ref_kg is None:
        return None
    return bal.fat_mass_at(inp.fat_ref_kg, inp.weight_ref_kg, weight_kg)


def _window(
    inp: PlateauInputs, i0: int, i1: int, rate: WindowRate | None, noise: NoiseModel | None
) -> tuple[pc.WindowSummary | None, str | None]:
    w = inp.weight_kg[i0 : i1 + 1]
    if int(np.isfinite(w).sum()) < bal.MIN_WEIGH_INS:
        return None, "too-few-weigh-ins"
    mean_w = float(np.nanmean(w))
    fat = _fat_at(inp, mean_w)
    if fat is None:
        return None, "no-body-composition"
    rw = None if inp.robust_weights is None else inp.robust_weights[i0 : i1 + 1]
    b = bal.window_balance(w, inp.intake_kcal[i0 : i1 + 1], fat, inp.fat_se_kg, rw, noise, rate)
    if b.deficit_kcal.value is None or b.deficit_se_kcal is None:
        return None, "too-few-weigh-ins"
    steps, steps_se = pc.signal_mean(inp.steps[i0 : i1 + 1])
    hunger, _ = pc.signal_mean(inp.hunger[i0 : i1 + 1])
    energy, _ = pc.signal_mean(inp.energy[i0 : i1 + 1])
    summary = pc.WindowSummary(
        days=i1 - i0 + 1,
        first_day_in_deficit=i0 - inp.deficit_start,
        mean_weight_kg=mean_w,
        fat_kg=fat,
        deficit_kcal=b.deficit_kcal.value,
        deficit_se_kcal=b.deficit_se_kcal,
        intake_kcal=b.mean_intake_kcal if b.intake_days >= bal.MIN_INTAKE_DAYS else None,
        intake_se_kcal=b.intake_se_kcal,
        intake_days=b.intake_days,
        steps=steps,
        steps_se=steps_se,
        hunger=hunger,
        energy=energy,
    )
    return summary, None


def assess_plateau(inp: PlateauInputs) -> PlateauAssessment:
    """Progress status, causes and options for the phase running on the last day.

    Parameters
    ----------
    inp : PlateauInputs

    Returns
    -------
    PlateauAssessment

    Notes
    -----
    * Recent window: the last 28 days, not before the phase start
      (``plateau.recent_window_rate``, pinned by up to 28 days before it that lie
      after the deficit's first two weeks).
    * Weigh-in noise: ``rates.fit_noise_model`` over four-week pieces
      (``plateau.noise_pieces``) of the deficit after its first two weeks and
      the time before it.
    * Planned rate: from ``target_kcal`` with the client's baseline scaled to
      today's body (``expected.expected_tdee_from_baseline``) when both are
      known, its SE from the baseline's; else the rate of the phase's first
      weeks (deficit days 15-42), the "phase's own earlier rate".  With both, the
      status compares against their precision-weighted mean when they agree
      (``plateau.reference_rate``).
    * Sequential rule: when the four-week rate holds both no change and the
      reference, the rate over six, then eight weeks decides, if those weeks lie
      after the deficit's glycogen weeks, no water reason applies and the longer
      rate agrees with the four-week one (a Hausman-type test: their difference
      within ``plateau.STATUS_Z`` of sqrt(s4^2 - sL^2), the SE of the difference
      of nested efficient estimates); the status's ``window_days`` says which.
    * Causes: first weeks against the recent window
      (``plateau_causes.deficit_change_causes``); the early window must end
      before the recent one starts.
    * Options: the intake for the planned rate from today's state by the Hall
      et al. 2011 projection (``hall.project_weight``), extra steps at the ACSM
      cost per step (``activity``), a break at maintenance after a long, deep
      deficit (``plateau.discussion_options``).
    """
    w = inp.weight_kg
    n = len(w)
    last = n - 1
    none_opts = pl.PlateauOptions((), ())
    if inp.phase_kind != "deficit" or n == 0:
        return PlateauAssessment(
            pl.ProgressStatus("not-in-deficit"),
            None,
            None,
            None,
            None,
            "not-in-deficit",
            None,
            None,
            None,
            None,
            None,
            None,
            none_opts,
        )
    settled = max(inp.deficit_start + pl.GLYCOGEN_WEEKS_DAYS, 0)
    pieces = pl.noise_pieces(settled, last)
    if inp.deficit_start >= bal.MIN_DAYS:
        pieces = [(0, inp.deficit_start - 1), *pieces]
    noise = fit_noise_model(w, pieces or [(0, last)], inp.robust_weights)
    lo = max(n - pl.RECENT_WINDOW_DAYS, inp.phase_start, 0)
    recent_days = last - lo + 1
    margin = int(np.clip(lo - settled, 0, pl.RECENT_MARGIN_DAYS))
    rate = None
    if recent_days >= bal.MIN_DAYS:
        rate = pl.recent_window_rate(w, lo, last, inp.robust_weights, noise, margin)
    cur_w = inp.current_weight_kg
    fat_now = _fat_at(inp, cur_w)
    rho = (
        energy_density_kcal_per_kg(fat_now) if fat_now is not None else bal.KCAL_PER_KG_SPREADSHEET
    )
    to_pct = 700.0 / cur_w
    # early window: deficit days 15-42, ending before the recent window
    e0 = inp.deficit_start + pl.GLYCOGEN_WEEKS_DAYS
    e1 = e0 + pl.EARLY_WINDOW_DAYS - 1
    early_ok = e0 >= 0 and e1 < lo
    early: pc.WindowSummary | None = None
    early_reason: str | None = "phase-too-short"
    if early_ok:
        early, early_reason = _window(inp, e0, e1, None, noise)
    # planned rate
    planned = planned_se = None
    source = None
    expected_now: Estimate | None = None
    if inp.target_kcal is not None and inp.baseline is not None and fat_now is not None:
        expected_now = expected_tdee_from_baseline(inp.baseline, cur_w, fat_now, inp.target_kcal)
        if expected_now.value is not None and expected_now.high is not None:
            planned = pl.planned_rate_pct_per_week(expected_now.value, inp.target_kcal, rho, cur_w)
            planned_se = (expected_now.high - expected_now.value) / Z80 * to_pct / rho
            source = "target"
    early_rate: tuple[float, float] | None = None
    if early_ok:
        er = window_rate(w[e0 : e1 + 1], None, noise=noise)
        if er is not None:
            early_rate = (er.rate_kg_per_day * to_pct, er.se_kg_per_day * to_pct)
    if planned is None and early_rate is not None:
        planned, planned_se = early_rate
        source = "early-rate"
        early_rate = None
    ref, ref_se, pooled = pl.reference_rate(planned, planned_se or 0.0, early_rate)
    if pooled:
        source = "target-and-early-rate"
    # water check and status
    reasons = pl.water_explanation(
        inp.intake_kcal[lo:], days_since_break_end=inp.days_since_break_end
    )
    before = None
    before_days = None
    j = pl.first_high_day(inp.intake_kcal[lo:])
    if j is not None and j >= bal.MIN_DAYS:
        rw = None if inp.robust_weights is None else inp.robust_weights[: lo + j]
        wb = pl.recent_window_rate(w[: lo + j], lo, lo + j - 1, rw, noise, margin)
        if wb is not None:
            before = (wb.rate_kg_per_day * to_pct, wb.se_kg_per_day * to_pct)
            before_days = j
    status = pl.progress_status(
        None if rate is None else rate.rate_kg_per_day * to_pct,
        None if rate is None else rate.se_kg_per_day * to_pct,
        ref,
        phase_days=last - inp.phase_start + 1,
        recent_days=recent_days,
        recent_weigh_ins=int(np.isfinite(w[lo:]).sum()),
        water_reasons=reasons,
        rate_before_water=before,
        planned_se_pct_per_week=ref_se,
        before_water_days=before_days,
    )
    if status.reason == "interval-too-wide" and not reasons:
        # sequential rule: the last four weeks hold both no change and the plan; a
        # longer window that the deficit's settled weeks still cover may decide
        for days in pl.LONGER_WINDOWS_DAYS:
            lo_l = n - days
            if lo_l < max(settled, inp.phase_start, 0):
                break
            m_l = int(np.clip(lo_l - settled, 0, pl.RECENT_MARGIN_DAYS))
            rl = pl.recent_window_rate(w, lo_l, last, inp.robust_weights, noise, m_l)
            if rl is None:
                break
            got_l = pl.progress_status(
                rl.rate_kg_per_day * to_pct,
                rl.se_kg_per_day * to_pct,
                ref,
                phase_days=last - inp.phase_start + 1,
                recent_days=days,
                recent_weigh_ins=int(np.isfinite(w[lo_l:]).sum()),
                planned_se_pct_per_week=ref_se,
            )
            r4 = status.rate_pct_per_week
            assert r4.value is not None
            se4 = r4.normal_sd
            sel = rl.se_kg_per_day * to_pct
            same = abs(r4.value - rl.rate_kg_per_day * to_pct) <= pl.STATUS_Z * math.sqrt(
                max(se4 * se4 - sel * sel, 0.0)
            )
            if got_l.status != "too-few-data" and same:
                status = got_l
                break
    recent: pc.WindowSummary | None = None
    recent_reason: str | None = "too-few-weigh-ins"
    if rate is not None:
        recent, recent_reason = _window(inp, lo, last, rate, noise)
    # causes
    causes = None
    causes_reason = early_reason or recent_reason
    if early is not None and recent is not None:
        if early.intake_kcal is None or recent.intake_kcal is None:
            causes_reason = "no-intake"
        elif inp.baseline is None:
            causes_reason = "no-baseline"
        else:
            b = inp.baseline
            delta = activity_coefficient_kcal_per_kg_day(b.tdee_kcal, b.resting_kcal, b.weight_kg)
            act = step_energy_change_kcal(
                inp.steps[e0 : e1 + 1],
                inp.steps[lo:],
                recent.mean_weight_kg,
                inp.height_cm,
                inp.sex,
            )
            causes = pc.deficit_change_causes(
                early, recent, activity_coefficient_kcal_per_kg_day=delta, activity_change=act
            )
            causes_reason = None
    hunger_change = energy_change = None
    if early is not None and recent is not None:
        if early.hunger is not None and recent.hunger is not None:
            hunger_change = recent.hunger - early.hunger
        if early.energy is not None and recent.energy is not None:
            energy_change = recent.energy - early.energy
    # options
    planned_deficit = None if planned is None else -planned / to_pct * rho
    gap = None
    if planned_deficit is not None and recent is not None:
        gap = planned_deficit - recent.deficit_kcal
    per_step = kcal_per_1000_steps(cur_w, step_length_m(inp.height_cm, inp.sex)) / 1000.0
    # a step option only for a client who logs steps (in the recent window)
    steps_logged = int(np.isfinite(inp.steps[lo:]).sum()) >= MIN_STEP_DAYS
    recent_intake = None if recent is None else recent.intake_kcal
    ifr = None
    depth = None
    if inp.baseline is not None and fat_now is not None and recent_intake is not None:
        maint = expected_tdee_from_baseline(inp.baseline, cur_w, fat_now, recent_intake).value
        if maint is not None and maint > 0:
            depth = 100.0 * (maint - recent_intake) / maint
            if (
                planned is not None
                and planned < 0
                and inp.tdee_now_kcal is not None
                and inp.resting_now_kcal is not None
                and math.isfinite(inp.tdee_now_kcal)
            ):
                run = project_weight(
                    cur_w,
                    fat_now,
                    inp.tdee_now_kcal,
                    recent_intake,
                    maint,
                    inp.resting_now_kcal,
                    horizon_days=28,
                    rates_pct_per_week=(-planned,),
                    fat_sd_kg=inp.fat_se_kg,
                    tdee_sd_kcal=inp.tdee_now_sd_kcal,
                    n_draws=100,
                )
                v, lo_, hi_ = run.intake_for_rate_kcal[float(-planned)]
                ifr = Estimate(v, lo_, hi_)
    options = pl.discussion_options(
        status.status,
        gap_kcal=gap,
        intake_for_planned_rate=ifr,
        recent_intake_kcal=recent_intake,
        kcal_per_step=per_step if steps_logged else None,
        days_in_deficit=last - inp.deficit_start + 1,
        deficit_depth_pct=depth,
        sex=inp.sex,
        minor=inp.minor,
        pregnant=inp.pregnant,
        bmi_kg_m2=inp.bmi_kg_m2,
    )
    return PlateauAssessment(
        status=status,
        planned_source=source,
        early=early,
        recent=recent,
        causes=causes,
        causes_reason=causes_reason,
        hunger_change=hunger_change,
        energy_change=energy_change,
        planned_deficit_kcal=planned_deficit,
        gap_kcal=gap,
        intake_for_planned_rate=ifr,
        kcal_per_step=per_step,
        options=options,
    )
