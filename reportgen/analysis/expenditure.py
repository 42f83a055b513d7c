"""Stage 8: the daily expenditure path (state-space model of weight with intake as input)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from reportgen.analysis.composition import CompositionStage
from reportgen.analysis.context import MIN_ANALYSIS_DAYS, ClientContext
from reportgen.analysis.methods import METHODS
from reportgen.analysis.trend import TrendStage
from reportgen.results import ExpenditureSeries, MethodUsed
from reportgen.science import balance as energy_balance
from reportgen.science.composition import energy_density_kcal_per_kg
from reportgen.science.trend import Z80


@dataclass(frozen=True)
class ExpenditureStage:
    """Daily TDEE over the log, or the note why there is none."""

    path: energy_balance.ExpenditurePath | None
    series: ExpenditureSeries | None
    methods: tuple[MethodUsed, ...]
    notes: tuple[str, ...]


NO_EXPENDITURE = ExpenditureStage(None, None, (), ())


def expenditure_stage(
    ctx: ClientContext, trend: TrendStage, composition: CompositionStage
) -> ExpenditureStage:
    """Daily expenditure; none under special handling, without a trend or with few days."""
    fit, current_kg = trend.fit, trend.current_weight_kg
    if fit is None or ctx.special_handling:
        return NO_EXPENDITURE
    if ctx.log.n_days < MIN_ANALYSIS_DAYS or current_kg is None:
        return ExpenditureStage(None, None, (), ("expenditure-too-few-days",))
    if np.isfinite(ctx.log.intake_kcal).sum() < energy_balance.MIN_INTAKE_DAYS:
        return ExpenditureStage(None, None, (), ("expenditure-too-few-intake-days",))
    fat_now = composition.reference.fat_at(current_kg)
    energy_density = (
        energy_density_kcal_per_kg(fat_now) if fat_now else energy_balance.KCAL_PER_KG_SPREADSHEET
    )
    # glycogen/water steps where the intake changed: every phase start inside the log
    shift_starts = tuple(w.start_index for w in ctx.windows if w.start_index > 0)
    if ctx.start_shift_index is not None:
        shift_starts = (ctx.start_shift_index, *shift_starts)
    path = energy_balance.expenditure_path(
        ctx.weights_kg,
        ctx.log.intake_kcal,
        energy_density,
        fit.noise_sd_kg,
        fit.weights,
        shift_days=shift_starts,
    )
    series = ExpenditureSeries(
        dates=ctx.log.dates,
        tdee_kcal=path.tdee_kcal,
        low_kcal=path.tdee_kcal - Z80 * path.sd_kcal,
        high_kcal=path.tdee_kcal + Z80 * path.sd_kcal,
    )
    return ExpenditureStage(path, series, (METHODS["expenditure-state-space"],), ())
