"""Input checks shared by the science formulas (private)."""

from __future__ import annotations

import math
import numbers


def finite(value: object) -> bool:
    """True for a finite real number (int, float or NumPy scalar), False for anything else.

    Booleans, None, strings and NaN/inf are not numbers here, so callers can
    refuse them with a ValueError that names the argument instead of failing
    later with a TypeError.
    """
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        return False
    return math.isfinite(value)
