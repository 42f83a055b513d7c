"""Stage 4: each phase's rate of change and energy balance (stored energy, observed TDEE)."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from reportgen.analysis.composition import CompositionStage
from reportgen.analysis.context import ClientContext, PhaseWindow
from reportgen.analysis.trend import TrendStage
from reportgen.science import balance as energy_balance
from reportgen.science.composition import lean_fraction_forbes
from reportgen.science.energy_density import lean_share_from_skinfolds
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
    share = measured_lean_share(composition, window, fat_start_kg)
    balance = window_energy_balance(
        ctx, trend, composition, first, last, rate, fat_start_kg, lean_share=share
    )
    return PhaseBalance(window, balance, mean_weight_kg, rate)


# Precision of a change in %BF between two sessions by the same tester and equation: the
# equation's own error cancels; the repeat error of skinfolds is about 1 %BF per session
# (judgment from the ISAK technical-error target of <= 5 % per site, from memory).
SESSION_CHANGE_SD_PCT = 1.0
MIN_MEASURED_CHANGE_KG = 1.5  # smaller changes say too little about the partition (judgment)


def measured_lean_share(
    composition: CompositionStage, window: PhaseWindow, fat_start_kg: float | None
) -> tuple[float, float] | None:
    """Lean share of the window's weight change from two skinfold sessions, with Forbes'
    curve as the prior; None without two sessions spanning the window."""
    if fat_start_kg is None or fat_start_kg <= 0:
        return None
    start, end = window.phase.start, window.window_end
    first = [s for s in composition.sessions if abs((s.date - start).days) <= 14]
    later = [s for s in composition.sessions if (s.date - start).days >= 28 and s.date <= end]
    if not first or not later or first[-1].rough or later[-1].rough:
        return None
    a, b = first[-1], later[-1]
    if b.equation != a.equation:
        return None
    d_fat = b.fat_mass_kg - a.fat_mass_kg
    d_lean = b.lean_mass_kg - a.lean_mass_kg
    if abs(d_fat + d_lean) < MIN_MEASURED_CHANGE_KG:
        return None
    change_se = math.sqrt(2.0) * SESSION_CHANGE_SD_PCT / 100.0 * b.weight_kg
    return lean_share_from_skinfolds(d_fat, d_lean, change_se, lean_fraction_forbes(fat_start_kg))


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
    lean_share: tuple[float, float] | None = None,
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
        lean_share=lean_share,
    )
