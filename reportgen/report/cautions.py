"""The safety thresholds as the cautions of every document word them (from science.flags)."""

from __future__ import annotations

from reportgen.science import flags as F

from .units import Units


def caution_values(u: Units) -> dict[str, str]:
    """Thresholds formatted in the configured units, for the cautions in the templates."""
    return {
        "adult_age": str(F.ADULT_AGE_YEARS),
        "bmi_low": u.number(F.BMI_UNDERWEIGHT, 1),
        "floor_women": u.e(F.INTAKE_FLOOR_WOMEN_KCAL),
        "floor_men": u.e(F.INTAKE_FLOOR_MEN_KCAL),
        "vlcd": u.e(F.INTAKE_VLCD_KCAL),
        "rapid": u.pct(F.RAPID_LOSS_PCT_PER_WEEK, dp=0),
    }
