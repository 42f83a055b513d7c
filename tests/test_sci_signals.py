"""Signal summaries (steps, ratings): windows, slope and size words.

Expected values are hand-calculated from the constructed series; the Theil-Sen
slope is checked against a brute-force median of pairwise slopes (Sen 1968,
the definition) and against an exact straight line.  Size thresholds are the
module's documented "common practice / judgment" categories.
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from reportgen.science.signals import SIGNAL_SCALES, size_category, summarise_signal


def days(n: int, start: str = "2026-08-01") -> np.ndarray:
    return np.datetime64(start, "D") + np.arange(n)


def test_steps_drop_from_baseline() -> None:
    d = days(56)
    v = np.where(np.arange(56) < 28, 10000.0, 8500.0)  # -15 % after the baseline end
    s = summarise_signal("steps", d, v, np.datetime64("2026-08-29"))
    assert s.name == "steps"
    assert s.baseline == pytest.approx(10000.0)
    assert s.recent == pytest.approx(8500.0)
    assert s.change == pytest.approx(-1500.0)
    assert s.change_pct == pytest.approx(-15.0)
    assert s.slope_per_week == pytest.approx(0.0)  # flat within the phase
    assert (s.direction, s.size) == ("down", "moderate")
    assert s.days == 56


def test_ratings_in_points() -> None:
    d = days(42)
    v = np.where(np.arange(42) < 14, 4.0, 6.5)  # hunger up 2.5 points
    s = summarise_signal("hunger", d, v, None)  # baseline = first 14 logged values
    assert s.baseline == pytest.approx(4.0)
    assert s.recent == pytest.approx(6.5)
    assert s.change == pytest.approx(2.5)
    assert (s.direction, s.size) == ("up", "large")


def test_straight_line_slope() -> None:
    # a noise-free straight line gives back its slope (issue 3 property)
    d = days(60)
    v = 5.0 - 0.02 * np.arange(60)  # -0.14 points per week
    s = summarise_signal("energy", d, v, np.datetime64("2026-08-15"))
    assert s.slope_per_week == pytest.approx(-0.14, abs=1e-12)


def test_slope_robust_and_matches_definition() -> None:
    rng = np.random.default_rng(7)
    d = days(40)
    v = 9000.0 + 30.0 * np.arange(40) + rng.normal(0, 200, 40)
    v[25] = 90000.0  # a mistyped day
    v[[3, 30, 31]] = np.nan
    s = summarise_signal("steps", d, v, np.datetime64("2026-08-11"))
    # Sen 1968: median of pairwise slopes of the values after the baseline window
    x = np.arange(40)
    keep = [i for i in range(10, 40) if np.isfinite(v[i])]
    pair = [(v[j] - v[i]) / (x[j] - x[i]) for i, j in itertools.combinations(keep, 2)]
    assert s.slope_per_week == pytest.approx(float(np.median(pair)) * 7.0, rel=1e-9)
    assert s.slope_per_week == pytest.approx(210.0, abs=60.0)  # the outlier barely moves it
    assert s.days == 37


def test_missing_days_and_windows() -> None:
    d = days(40)
    v = np.full(40, np.nan)
    v[:10] = 7000.0  # baseline: 10 values
    v[36:] = 7200.0  # recent window (last 14 days): only 4 values -> unknown
    s = summarise_signal("steps", d, v, np.datetime64("2026-08-15"))
    assert s.baseline == pytest.approx(7000.0)
    assert s.recent is None
    assert s.change is None and s.change_pct is None
    assert (s.direction, s.size) == ("unknown", "unknown")
    assert s.slope_per_week is None  # 4 values after the baseline < 7
    assert s.days == 14


def test_no_baseline_before_end() -> None:
    d = days(30, "2026-09-01")
    v = np.full(30, 6.0)
    s = summarise_signal("energy", d, v, np.datetime64("2026-08-01"))
    assert s.baseline is None
    assert s.recent == pytest.approx(6.0)
    assert (s.direction, s.size) == ("unknown", "unknown")


def test_recent_excludes_baseline_window() -> None:
    # 20 values: baseline = first 14, recent = last 14 days minus the baseline -> 6 values
    d = days(20)
    v = np.arange(20, dtype=float)
    s = summarise_signal("hunger", d, v, None)
    assert s.baseline == pytest.approx(6.5)  # mean of 0..13
    assert s.recent == pytest.approx(16.5)  # mean of 14..19


def test_empty_and_all_nan() -> None:
    s = summarise_signal("steps", days(0), np.array([]), None)
    assert (s.baseline, s.recent, s.days, s.direction) == (None, None, 0, "unknown")
    s = summarise_signal("steps", days(5), np.full(5, np.nan), None)
    assert s.days == 0 and s.size == "unknown"


@pytest.mark.parametrize(
    ("name", "change", "pct", "expected"),
    [
        ("steps", -400.0, -4.9, ("flat", "none")),
        ("steps", -500.0, -5.0, ("down", "small")),
        ("steps", 1000.0, 10.0, ("up", "moderate")),
        ("steps", -2500.0, -20.0, ("down", "large")),
        ("hunger", 0.4, 8.0, ("flat", "none")),  # ratings judged in points, not %
        ("hunger", 0.5, 8.0, ("up", "small")),
        ("energy", -1.0, -20.0, ("down", "moderate")),
        ("energy", -2.0, -40.0, ("down", "large")),
        ("sleep", -0.3, -4.0, ("down", "small")),
        ("steps", None, None, ("unknown", "unknown")),
    ],
)
def test_size_categories(
    name: str, change: float | None, pct: float | None, expected: tuple[str, str]
) -> None:
    assert size_category(name, change, pct) == expected


def test_errors() -> None:
    with pytest.raises(ValueError, match="unknown signal 'mood'"):
        summarise_signal("mood", days(3), np.ones(3), None)
    with pytest.raises(ValueError, match="unknown signal 'mood'"):
        size_category("mood", 1.0, 1.0)
    with pytest.raises(ValueError, match="dates and values must be 1-D arrays of the same length"):
        summarise_signal("steps", days(3), np.ones(4), None)
    with pytest.raises(ValueError, match="recent_days must be at least 1"):
        summarise_signal("steps", days(3), np.ones(3), None, recent_days=0)
    with pytest.raises(ValueError, match="dates must be strictly increasing"):
        summarise_signal("steps", days(3)[::-1], np.ones(3), None)


@settings(max_examples=60, deadline=None)
@given(
    name=st.sampled_from(sorted(SIGNAL_SCALES)),
    n=st.integers(min_value=0, max_value=90),
    level=st.floats(min_value=1.0, max_value=20000.0),
    missing=st.floats(min_value=0.0, max_value=0.6),
    seed=st.integers(min_value=0, max_value=2**31 - 1),
)
def test_summary_never_crashes(name: str, n: int, level: float, missing: float, seed: int) -> None:
    rng = np.random.default_rng(seed)
    v = level * (1 + 0.1 * rng.standard_normal(n))
    v[rng.random(n) < missing] = np.nan
    d = days(n)
    s = summarise_signal(name, d, v, np.datetime64("2026-08-20") if n % 2 else None)
    assert s.days == int(np.isfinite(v).sum())
    assert s.direction in ("up", "down", "flat", "unknown")
    assert s.size in ("none", "small", "moderate", "large", "unknown")
    if s.baseline is not None and s.recent is not None:
        assert s.change == pytest.approx(s.recent - s.baseline)
