"""Robust detection of isolated weigh-in outliers against the client's local level.

Each weigh-in is compared with the median of the weigh-ins within a week either side
(the local level).  The spread is the median absolute deviation (MAD), scaled by 1.4826 so
that it estimates a standard deviation for normally distributed day-to-day noise (Hampel
filter; Hampel 1974, from memory).  A weigh-in further than :data:`OUTLIER_K` spreads from the
level is an outlier.  The spread used is the largest of the MAD in the window, the MAD of all
the client's deviations from their local level (stable where a window holds few weigh-ins, as
at the ends of the series) and a floor, so that a very steady client (the same reading every
day, MAD = 0) does not turn ordinary water swings into outliers.
"""

from __future__ import annotations

import warnings
from typing import Final

import numpy as np

from reportgen.io.model import BoolArray, FloatArray

#: [days] Window half-width: one week either side follows a loss of up to ~1 kg/week closely
#: enough, while an isolated typo is far outvoted.  Common practice, no single source.
OUTLIER_HALF_WINDOW_DAYS: Final = 7
#: Other weigh-ins needed in the window before a weigh-in can be judged at all.
OUTLIER_MIN_NEIGHBOURS: Final = 4
#: Threshold in robust standard deviations (Hampel filters commonly use 3; 5 is deliberately
#: conservative so that only clear entry errors are excluded).  Common practice.
OUTLIER_K: Final = 5.0
#: Scale from MAD to a standard deviation under normality, 1 / Phi^-1(3/4) = 1.4826.
MAD_TO_SD: Final = 1.4826
#: [kg] Floor of the robust spread: 0.5 kg, about the typical day-to-day SD of body weight from
#: water and gut content (from memory), so nothing within 5 x 0.5 = 2.5 kg of the level is
#: ever flagged.
SCALE_FLOOR_KG: Final = 0.5
#: Floor of the robust spread as a fraction of the local level (0.6 %: 0.5 kg at 82 kg), so that
#: heavier clients, whose day-to-day swings are larger in kg, get a proportionally wider band.
SCALE_FLOOR_FRACTION: Final = 0.006


def weight_outliers(weight_kg: FloatArray) -> tuple[BoolArray, FloatArray]:
    """Flag isolated outliers in a daily weight series.

    Parameters
    ----------
    weight_kg : array of float
        Weigh-ins on a complete daily grid [kg], NaN on days without one.

    Returns
    -------
    outlier : array of bool
        True where the weigh-in is an isolated outlier.
    level_kg : array of float
        Local level (rolling median of the surrounding weigh-ins) [kg], NaN where unknown.

    Notes
    -----
    Rolling median/MAD (Hampel) filter over +-:data:`OUTLIER_HALF_WINDOW_DAYS` calendar days;
    days whose window holds fewer than :data:`OUTLIER_MIN_NEIGHBOURS` other weigh-ins are
    never flagged.  Spread = max(local MAD, whole-series MAD of the deviations, floor), each
    scaled to a standard deviation by :data:`MAD_TO_SD`.
    """
    w = np.asarray(weight_kg, dtype=np.float64)
    n = w.shape[0]
    flags = np.zeros(n, dtype=bool)
    level = np.full(n, np.nan)
    if n == 0:
        return flags, level
    h = OUTLIER_HALF_WINDOW_DAYS
    padded = np.concatenate([np.full(h, np.nan), w, np.full(h, np.nan)])
    win = np.lib.stride_tricks.sliding_window_view(padded, 2 * h + 1)
    count = np.sum(~np.isnan(win), axis=1)
    judged = ~np.isnan(w) & (count - 1 >= OUTLIER_MIN_NEIGHBOURS)
    if not judged.any():
        return flags, level
    level = _row_nanmedian(win)
    mad = _row_nanmedian(np.abs(win - level[:, None]))
    resid = w - level
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)  # all-NaN gives NaN: handled below
        overall = MAD_TO_SD * np.nanmedian(np.abs(resid - np.nanmedian(resid)))
    floor = np.maximum(SCALE_FLOOR_KG, SCALE_FLOOR_FRACTION * np.abs(level))
    scale = np.maximum(np.maximum(MAD_TO_SD * mad, floor), np.nan_to_num(overall))
    flags = judged & (np.abs(w - level) > OUTLIER_K * scale)
    return flags, level


def _row_nanmedian(a: FloatArray) -> FloatArray:
    """Median of each row ignoring NaN (NaN for an all-NaN row).

    Same result as ``np.nanmedian(a, axis=1)``, which for short rows goes through masked
    arrays and is about 20x slower here.
    """
    s = np.sort(a, axis=1)  # NaN sorts last
    k = np.sum(~np.isnan(a), axis=1)
    rows = np.arange(a.shape[0])
    lo = s[rows, np.maximum((k - 1) // 2, 0)]
    hi = s[rows, np.maximum(k // 2, 0)]
    hi = np.where(k % 2 == 1, lo, hi)
    return np.where(k > 0, (lo + hi) / 2.0, np.nan)
