"""Stage 4: each phase's rate of change and energy balance (stored energy, observed TDEE)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from reportgen.analysis.composition import CompositionStage
from reportgen.analysis.context import ClientContext, PhaseWindow
from reportgen.analysis.trend import TrendStage
from reportgen.science import balance as energy_balance
from reportgen.science.rates import WindowRate, segment_rate


@dataclass(frozen=True)
class PhaseBalance:
    """One phase window with its trend rate and (outside special handling) energy balance."""

    window: PhaseWindow
    balance: energy_balance.WindowBalance | None  # None: no trend, no days, special handling
    mean_weight_kg: float | None  # mean trend weight over the window
    rate: WindowRate | None = None  # also under special handling (trend only)


def balance_stage(
    ctx: ClientContext, trend: TrendStage, composition: CompositionStage
) -> tuple[PhaseBalance, ...]:
    """Rate and energy balance of every phase window, in start order."""
    return tuple(phase_balance(ctx, trend, composition, window) for window in ctx.windows)


def phase_balance(
    ctx: ClientContext, trend: TrendStage, composition: CompositionStage, window: PhaseWindow
) -> PhaseBalance:
    """The window's mean trend weight, segment rate and energy balance."""
    fit = trend.fit
    first, last = window.start_index, window.end_index
    if fit is None or last < first:
        return PhaseBalance(window, None, None, None)
    weights_kg = ctx.weights_kg
    mean_weight_kg = float(np.mean(fit.level_kg[first : last + 1]))
    rate = segment_rate(
        weights_kg,
        first,
        last,
        ctx.knots,
        fit.weights,
        trend.noise,
        start_shift_at=ctx.start_shift_index,
    )
    if ctx.special_handling:
        return PhaseBalance(window, None, mean_weight_kg, rate)
    reference = composition.reference
    balance = energy_balance.window_balance(
        weights_kg[first : last + 1],
        ctx.log.intake_kcal[first : last + 1],
        reference.fat_at(float(fit.level_kg[first])),
        reference.fat_se_kg,
        fit.weights[first : last + 1],
        trend.noise,
        rate,
    )
    return PhaseBalance(window, balance, mean_weight_kg, rate)
