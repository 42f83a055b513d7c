"""Unit columns and their conversion to canonical units (kg, kcal, cm).

Readers convert once, through :data:`UNIT_MAP`; nothing downstream sees lb, kJ or inches.
"""

from __future__ import annotations

from typing import Final

# The constants are defined once, with their sources, in reportgen.unit_constants.
from reportgen.unit_constants import CM_PER_INCH as CM_PER_IN
from reportgen.unit_constants import KCAL_PER_KJ as KCAL_PER_KJ
from reportgen.unit_constants import KG_PER_LB as KG_PER_LB

#: Non-canonical column -> (canonical column, factor to multiply by).
UNIT_MAP: Final[dict[str, tuple[str, float]]] = {
    "weight_lb": ("weight_kg", KG_PER_LB),
    "goal_weight_lb": ("goal_weight_kg", KG_PER_LB),
    "intake_kj": ("intake_kcal", KCAL_PER_KJ),
    "height_in": ("height_cm", CM_PER_IN),
}

#: How far apart (in canonical units) a value given in both units may be before it counts as
#: a conflict.  Values are usually written with one decimal, so 0.05 lb / 0.05 kg of rounding
#: each; kJ are often rounded to the nearest 10 or 50 kJ (about 12 kcal).  Common practice, no
#: single source.
UNIT_AGREEMENT: Final[dict[str, float]] = {
    "weight_kg": 0.15,
    "goal_weight_kg": 0.15,
    "intake_kcal": 15.0,
    "height_cm": 1.0,
}


def alternatives(canonical: str) -> tuple[str, ...]:
    """Every column name that can carry ``canonical`` (the canonical name first)."""
    return (canonical, *[k for k, (c, _) in UNIT_MAP.items() if c == canonical])
