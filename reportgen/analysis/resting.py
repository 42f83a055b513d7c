"""Stage 3: resting expenditure, as every equation gives it now and as a model of weight."""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass

from reportgen.analysis.composition import CompositionStage
from reportgen.analysis.context import ClientContext
from reportgen.analysis.trend import TrendStage
from reportgen.io.model import Sex
from reportgen.results import MethodUsed
from reportgen.science.errors import NotComputable
from reportgen.science.resting import (
    RESTING_METHODS,
    resting_kcal_all,
    resting_kcal_mifflin_st_jeor,
)

#: Resting expenditure [kcal/day] at a body weight [kg]; None when it cannot be known.
RestingAt = Callable[[float], float | None]


@dataclass(frozen=True)
class RestingModel:
    """Mifflin-St Jeor resting expenditure as a function of weight (sex, height, age fixed).

    Calling it with a weight [kg] gives kcal/day, or None when the client's sex, age or
    height is unknown or the equation is not defined at the age.  It is a
    :data:`RestingAt`.
    """

    sex: Sex | None
    height_cm: float | None
    age_years: int | None

    def __call__(self, weight_kg: float) -> float | None:
        if self.sex is None or self.age_years is None or not self.height_cm:
            return None
        try:
            return resting_kcal_mifflin_st_jeor(self.sex, weight_kg, self.height_cm, self.age_years)
        except NotComputable:
            return None


@dataclass(frozen=True)
class RestingStage:
    """Every applicable resting equation at the current weight, and the model for later stages."""

    equations_kcal: Mapping[str, float]  # code -> kcal/day at the current trend weight
    model: RestingModel
    methods: tuple[MethodUsed, ...]
    notes: tuple[str, ...]


def resting_stage(
    ctx: ClientContext, trend: TrendStage, composition: CompositionStage
) -> RestingStage:
    """Resting expenditure by every equation at the current trend weight."""
    client = ctx.record.client
    age = ctx.age_years
    model = RestingModel(client.sex, client.height_cm, age)
    current_kg = trend.current_weight_kg
    if current_kg is None or client.sex is None or age is None or not client.height_cm:
        return RestingStage({}, model, (), ())
    lean_now = None
    if composition.reference.fat_kg is not None:
        fat_now = composition.reference.fat_at(current_kg)
        lean_now = None if fat_now is None else current_kg - fat_now
    try:
        equations = resting_kcal_all(client.sex, current_kg, client.height_cm, age, lean_now)
    except NotComputable as condition:
        return RestingStage({}, model, (), (f"resting-equations-unavailable:{condition.reason}",))
    methods = tuple(RESTING_METHODS[code] for code in equations if code in RESTING_METHODS)
    return RestingStage(equations, model, methods, ())
