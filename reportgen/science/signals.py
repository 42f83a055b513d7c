"""Signals beyond expenditure: steps (the NEAT proxy), hunger, energy, sleep.

Each daily series is reduced to a baseline, a recent level, the change between
them, a robust weekly slope and a plain-words direction and size, so the
report can say e.g. "steps down 18 % from baseline (moderate)".

Windows
-------
- Baseline: the mean of values logged before ``baseline_end`` (usually the
  start of the first deficit phase); with ``baseline_end=None``, the mean of
  the first 14 logged values.  If ``baseline_end`` is given but nothing was
  logged before it, there is no baseline (never a stand-in from later data).
- Recent: the mean of values in the last ``recent_days`` calendar days of the
  series, excluding the baseline window.
- Slope: Theil-Sen slope (Sen 1968) of every value after the baseline window,
  in units per week; robust to the odd mistyped day.
- Each window needs at least :data:`MIN_VALUES` values (5), and the slope
  :data:`MIN_SLOPE_VALUES` (7); otherwise that part is unknown.

Size categories (common practice / judgment, no single source)
--------------------------------------------------------------
steps, as % change from baseline
    < 5 % none ("flat"); 5-10 % small; 10-20 % moderate; >= 20 % large.
hunger and energy, in points on the 1-10 rating scale
    < 0.5 none; 0.5-1 small; 1-2 moderate; >= 2 large.
sleep, in hours per night
    < 0.25 none; 0.25-0.5 small; 0.5-1 moderate; >= 1 large.

References
----------
.. [1] Sen PK. Estimates of the regression coefficient based on Kendall's tau.
   J Am Stat Assoc 1968;63:1379-1389. doi:10.1080/01621459.1968.10480934
"""

from __future__ import annotations

import math

import numpy as np
from scipy.stats import theilslopes

from reportgen.io.model import DateArray, FloatArray
from reportgen.results import Signal

BASELINE_FIRST_DAYS = 14  # values used when no baseline end is given
MIN_VALUES = 5  # values needed in the baseline and in the recent window
MIN_SLOPE_VALUES = 7  # values needed for the weekly slope

# name -> (scale, (small, moderate, large) thresholds); common practice / judgment
SIGNAL_SCALES: dict[str, tuple[str, tuple[float, float, float]]] = {
    "steps": ("pct", (5.0, 10.0, 20.0)),
    "hunger": ("points", (0.5, 1.0, 2.0)),
    "energy": ("points", (0.5, 1.0, 2.0)),
    "sleep": ("hours", (0.25, 0.5, 1.0)),
}


def size_category(name: str, change: float | None, change_pct: float | None) -> tuple[str, str]:
    """Direction and size words for a change in a named signal.

    Parameters
    ----------
    name : str
        One of :data:`SIGNAL_SCALES`.
    change : float or None
        Recent minus baseline, in the signal's unit.
    change_pct : float or None
        The same change as % of baseline. [%]

    Returns
    -------
    tuple of str
        (direction in {"up", "down", "flat", "unknown"},
        size in {"none", "small", "moderate", "large", "unknown"}).
    """
    if name not in SIGNAL_SCALES:
        raise ValueError(f"unknown signal {name!r}; use one of: {', '.join(SIGNAL_SCALES)}")
    scale, (small, moderate, large) = SIGNAL_SCALES[name]
    amount = change_pct if scale == "pct" else change
    if amount is None or change is None or not math.isfinite(amount):
        return "unknown", "unknown"
    mag = abs(amount)
    if mag < small:
        return "flat", "none"
    direction = "up" if change > 0 else "down"
    if mag < moderate:
        return direction, "small"
    if mag < large:
        return direction, "moderate"
    return direction, "large"


def summarise_signal(
    name: str,
    dates: DateArray,
    values: FloatArray,
    baseline_end: np.datetime64 | None,
    recent_days: int = 14,
) -> Signal:
    """Baseline, recent level, change and weekly slope of one daily signal.

    Parameters
    ----------
    name : str
        "steps", "hunger", "energy" or "sleep" (sets the size thresholds).
    dates : numpy.ndarray of datetime64[D]
        Day of each value, ascending.
    values : numpy.ndarray of float
        Daily values aligned with ``dates``; NaN where nothing was logged.
        [steps/day, rating points 1-10, or hours]
    baseline_end : numpy.datetime64 or None
        First day *not* in the baseline (e.g. the first deficit phase's
        start); None uses the first 14 logged values.
    recent_days : int, default 14
        Length of the recent window, in calendar days ending at the last date
        of ``dates``. [days]

    Returns
    -------
    reportgen.results.Signal
        With ``days`` the number of logged (non-NaN) values in the series.
        Parts the data cannot support are None and the words "unknown".

    Raises
    ------
    ValueError
        For an unknown signal name, mismatched array lengths, unsorted
        dates or a non-positive ``recent_days``.
    """
    if name not in SIGNAL_SCALES:
        raise ValueError(f"unknown signal {name!r}; use one of: {', '.join(SIGNAL_SCALES)}")
    d = np.asarray(dates, dtype="datetime64[D]")
    v = np.asarray(values, dtype=np.float64)
    if d.shape != v.shape or d.ndim != 1:
        raise ValueError(
            f"dates and values must be 1-D arrays of the same length, got {d.shape} and {v.shape}"
        )
    if recent_days < 1:
        raise ValueError(f"recent_days must be at least 1, got {recent_days!r}")
    if d.size > 1 and np.any(np.diff(d) <= np.timedelta64(0, "D")):
        raise ValueError("dates must be strictly increasing")

    logged = np.isfinite(v)
    n_logged = int(logged.sum())
    if n_logged == 0:
        return Signal(name, None, None, None, None, None, "unknown", "unknown", 0)

    if baseline_end is None:
        idx = np.flatnonzero(logged)[:BASELINE_FIRST_DAYS]
        in_base = np.zeros(v.shape, dtype=bool)
        in_base[idx] = True
        after_base = d > d[idx[-1]]
    else:
        end = baseline_end.astype("datetime64[D]")
        in_base = logged & (d < end)
        after_base = d >= end

    base_vals = v[in_base]
    baseline = float(base_vals.mean()) if base_vals.size >= MIN_VALUES else None

    recent_mask = logged & after_base & (d > d[-1] - np.timedelta64(recent_days, "D"))
    recent_vals = v[recent_mask]
    recent = float(recent_vals.mean()) if recent_vals.size >= MIN_VALUES else None

    slope_mask = logged & after_base
    slope: float | None = None
    if slope_mask.sum() >= MIN_SLOPE_VALUES:
        x = (d[slope_mask] - d[slope_mask][0]).astype(np.float64)
        y = v[slope_mask]
        slope = float(theilslopes(y, x).slope) * 7.0

    change = recent - baseline if recent is not None and baseline is not None else None
    change_pct = (
        100.0 * change / baseline
        if change is not None and baseline is not None and baseline != 0
        else None
    )
    direction, size = size_category(name, change, change_pct)
    return Signal(
        name=name,
        baseline=baseline,
        recent=recent,
        change=change,
        change_pct=change_pct,
        slope_per_week=slope,
        direction=direction,
        size=size,
        days=n_logged,
    )
