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
    mean_weight_kg = float(np.mean(fit.level_kg[first : last + 1]))
    rate = window_rate(ctx, trend, first, last, edge_knots=True)
    if ctx.special_handling:
        return PhaseBalance(window, None, mean_weight_kg, rate)
    fat_start_kg = composition.reference.fat_at(float(fit.level_kg[first]))
    balance = window_energy_balance(ctx, trend, composition, first, last, rate, fat_start_kg)
    return PhaseBalance(window, balance, mean_weight_kg, rate)


def window_rate(
    ctx: ClientContext, trend: TrendStage, first: int, last: int, *, edge_knots: bool
) -> WindowRate | None:
    """Tissue rate over days ``first..last`` (segment fit with the client's knots).

    ``edge_knots`` False for a window that is not a phase (no knot, nor glycogen
    step, at its own edges).
    """
    assert trend.fit is not None
    return segment_rate(
        ctx.weights_kg,
        first,
        last,
        ctx.knots,
        trend.fit.weights,
        trend.noise,
        edge_knots=edge_knots,
        start_shift_at=ctx.start_shift_index,
    )


def window_energy_balance(
    ctx: ClientContext,
    trend: TrendStage,
    composition: CompositionStage,
    first: int,
    last: int,
    rate: WindowRate | None,
    fat_start_kg: float | None,
) -> energy_balance.WindowBalance:
    """Stored energy and observed TDEE over days ``first..last`` (inclusive)."""
    assert trend.fit is not None
    return energy_balance.window_balance(
        ctx.weights_kg[first : last + 1],
        ctx.log.intake_kcal[first : last + 1],
        fat_start_kg,
        composition.reference.fat_se_kg,
        trend.fit.weights[first : last + 1],
        trend.noise,
        rate,
    )
