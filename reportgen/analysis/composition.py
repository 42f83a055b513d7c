"""Stage 2: body composition from the skinfold sessions (or a rough BMI-based estimate)."""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

from reportgen.analysis.context import ClientContext, day_index
from reportgen.analysis.trend import TrendStage
from reportgen.io.model import SkinfoldSession
from reportgen.results import BodyCompResult, MethodUsed
from reportgen.science import balance as energy_balance
from reportgen.science.composition import fat_and_lean_mass_kg
from reportgen.science.errors import NotComputable
from reportgen.science.skinfolds import (
    BodyFatEstimate,
    estimate_body_fat,
    estimate_body_fat_from_bmi,
)


@dataclass(frozen=True)
class CompositionReference:
    """The latest body composition, the reference of every energy density."""

    fat_kg: float | None  # None when body fat is unknown
    fat_se_kg: float
    weight_kg: float | None  # trend weight at the reference

    def fat_at(self, weight_kg: float) -> float | None:
        """Fat mass at ``weight_kg`` along Hall's Forbes curve from the reference [kg]."""
        if self.fat_kg is None or self.weight_kg is None:
            return None
        return energy_balance.fat_mass_at(self.fat_kg, self.weight_kg, weight_kg)


@dataclass(frozen=True)
class CompositionStage:
    """Skinfold results up to the report month, the fallback estimate and the reference."""

    sessions: tuple[BodyCompResult, ...]
    fallback: BodyCompResult | None  # BMI-based, only when no session is usable
    reference: CompositionReference
    methods: tuple[MethodUsed, ...]
    notes: tuple[str, ...]

    @property
    def latest_bodyfat_pct(self) -> float | None:
        latest = self.sessions[-1] if self.sessions else self.fallback
        return None if latest is None else latest.bodyfat_pct


def composition_stage(ctx: ClientContext, trend: TrendStage) -> CompositionStage:
    """Every skinfold session up to the month's end; the BMI estimate when none is usable."""
    client = ctx.record.client
    notes: list[str] = []
    sessions: list[BodyCompResult] = []
    methods: list[MethodUsed] = []
    for session in sorted(ctx.record.skinfolds, key=lambda s: s.date):
        if session.date > ctx.as_of:
            continue
        age = client.age_years(session.date)
        weight_kg = trend_weight_at(ctx, trend, session.date)
        if client.sex is None or age is None or weight_kg is None:
            notes.append("bodycomp-needs-sex-age-weight")
            continue
        try:
            found = estimate_body_fat(
                client.sex,
                age,
                session.sites_mm,
                ctx.settings.bodyfat_equation,
                ctx.settings.density_conversion,
            )
        except NotComputable as condition:
            notes.append(f"skinfold-session-unusable:{session.date.isoformat()}:{condition.reason}")
            continue
        sessions.append(body_comp_result(session, found, weight_kg))
        methods.append(found.method())
    fallback = None
    if not sessions:
        found_fallback = bmi_fallback(ctx, trend)
        if found_fallback is None:
            notes.append("bodyfat-unknown")
        else:
            fallback, fallback_method = found_fallback
            methods.append(fallback_method)
    return CompositionStage(
        sessions=tuple(sessions),
        fallback=fallback,
        reference=reference_of(tuple(sessions), fallback),
        methods=tuple(methods),
        notes=tuple(notes),
    )


def trend_weight_at(ctx: ClientContext, trend: TrendStage, day: dt.date) -> float | None:
    """Trend weight on ``day`` (clamped to the log), None without a trend."""
    if trend.fit is None or ctx.log.n_days == 0:
        return None
    index = min(max(day_index(ctx.log, day), 0), ctx.log.n_days - 1)
    return float(trend.fit.level_kg[index])


def body_comp_result(
    session: SkinfoldSession, found: BodyFatEstimate, weight_kg: float
) -> BodyCompResult:
    """One session's estimate with its fat and lean mass at the trend weight."""
    fat_kg, lean_kg = fat_and_lean_mass_kg(weight_kg, found.bodyfat_pct)
    return BodyCompResult(
        date=session.date,
        equation=found.equation,
        conversion=found.conversion,
        sum_mm=found.sum_mm,
        sites=found.sites,
        density_g_ml=found.density_g_ml,
        bodyfat_pct=found.bodyfat_pct,
        bodyfat_se_pct=found.se_pct,
        weight_kg=weight_kg,
        fat_mass_kg=fat_kg,
        lean_mass_kg=lean_kg,
        rough=found.rough,
        warnings=found.warnings,
    )


def bmi_fallback(ctx: ClientContext, trend: TrendStage) -> tuple[BodyCompResult, MethodUsed] | None:
    """The rough BMI-based estimate at the month's end (None without sex, age, trend, height)."""
    client = ctx.record.client
    age = client.age_years(ctx.as_of)
    weight_kg = trend_weight_at(ctx, trend, ctx.as_of)
    if client.sex is None or age is None or weight_kg is None or not client.height_cm:
        return None
    found = estimate_body_fat_from_bmi(client.sex, age, weight_kg, client.height_cm)
    fat_kg, lean_kg = fat_and_lean_mass_kg(weight_kg, found.bodyfat_pct)
    result = BodyCompResult(
        date=ctx.as_of,
        equation=found.equation,
        conversion=found.conversion,
        sum_mm=None,
        sites=(),
        density_g_ml=None,
        bodyfat_pct=found.bodyfat_pct,
        bodyfat_se_pct=found.se_pct,
        weight_kg=weight_kg,
        fat_mass_kg=fat_kg,
        lean_mass_kg=lean_kg,
        rough=True,
        warnings=found.warnings,
    )
    return result, found.method()


def reference_of(
    sessions: tuple[BodyCompResult, ...], fallback: BodyCompResult | None
) -> CompositionReference:
    """The latest result as the reference (nothing usable: body fat unknown)."""
    latest = sessions[-1] if sessions else fallback
    if latest is None or latest.fat_mass_kg <= 0:
        return CompositionReference(None, 0.0, None)
    return CompositionReference(
        latest.fat_mass_kg, latest.bodyfat_se_pct / 100.0 * latest.weight_kg, latest.weight_kg
    )
