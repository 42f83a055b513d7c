"""Trend weight: local linear trend smoother, EMA, window rates, noise model.

Check values come from the science notes (§7.3 and §10 items 38-41, 50), where
they were computed from the formulas; each is tagged beside the assert.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from reportgen.science.balance import rate_se_iid_kg_per_day
from reportgen.science.rates import fit_noise_model, segment_rate, window_rate
from reportgen.science.trend import (
    ema,
    ema_series,
    local_level_filter,
    local_level_steady_gain,
    local_linear_trend,
    trend_with_water,
)


def test_local_level_q_over_r_1_90_has_steady_gain_0_1() -> None:
    # notes §7.3 / §10 item 41: q/r = 1/90 gives K = 0.1 (computed there), tolerance 1e-9
    assert local_level_steady_gain(1 / 90) == pytest.approx(0.1, abs=1e-9)


def test_local_level_reproduces_ema_alpha_0_1() -> None:
    """A steady-state local-level filter with q/r = 1/90 is the EMA with alpha 0.1 (§7.3)."""
    rng = np.random.default_rng(0)
    w = 80 + np.cumsum(rng.normal(0, 0.05, 200)) + rng.normal(0, 0.5, 200)
    assert np.allclose(local_level_filter(w, 1 / 90), ema(w, 0.1), atol=1e-9)


@pytest.mark.parametrize(
    ("days", "share"),
    # notes §7.3: share of a step after n days = 1 - 0.9^n (computed there; item 38 is 7 d)
    [(1, 0.1), (7, 0.5217), (14, 0.7712), (22, 0.9015), (30, 0.9576)],
)
def test_ema_step_response(days: int, share: float) -> None:
    w = np.r_[0.0, np.ones(days)]
    assert ema(w)[days] == pytest.approx(share, abs=1e-4)


def test_ema_step_half_life() -> None:
    # notes §10 item 39: half-life ln 0.5 / ln 0.9 = 6.579 days (computed there), tol 0.001
    half_life = math.log(0.5) / math.log(0.9)
    assert half_life == pytest.approx(6.579, abs=1e-3)
    resp = ema(np.r_[0.0, np.ones(10)])
    assert resp[6] < 0.5 < resp[7]  # crosses one half between day 6 and day 7


def test_ema_lag_on_a_line_is_nine_days_of_slope() -> None:
    # notes §10 item 40: steady lag (1 - alpha)/alpha = 9 days x slope (computed there), exact
    slope = -0.1
    t = np.arange(600.0)
    trend = ema(80 + slope * t)
    assert trend[-1] - (80 + slope * t[-1]) == pytest.approx(-9 * slope, abs=1e-9)


def test_ema_missing_day_rules_over_a_3_day_gap() -> None:
    """Documented rule (notes §7.3 asks for a 3-day-gap test): hand-calculated values."""
    w = np.array([0.0, np.nan, np.nan, np.nan, 1.0])
    carry = ema(w, 0.1, missing="carry")
    assert np.allclose(carry[:4], 0.0)  # carried forward over the gap
    assert carry[4] == pytest.approx(0.1, abs=1e-12)  # then the ordinary alpha
    catch = ema(w, 0.1, missing="catch-up")
    assert catch[4] == pytest.approx(1 - 0.9**4, abs=1e-12)  # 0.3439: as if seen daily


def test_ema_rejects_bad_arguments() -> None:
    with pytest.raises(ValueError, match=r"alpha must be in \(0, 1\]"):
        ema(np.ones(3), 0.0)
    with pytest.raises(ValueError, match="missing must be 'carry' or 'catch-up'"):
        ema(np.ones(3), 0.1, missing="skip")


def test_ema_series_slope_is_seven_day_difference() -> None:
    dates = np.arange(np.datetime64("2026-01-01"), np.datetime64("2026-03-01"))
    w = 90 - 0.05 * np.arange(len(dates))
    s = ema_series(dates, w)
    assert s.method == "ema"
    lvl = s.level_kg
    assert s.slope_kg_per_day[20] == pytest.approx((lvl[20] - lvl[13]) / 7, abs=1e-12)
    assert np.isnan(s.slope_kg_per_day[3])


@settings(max_examples=25, deadline=None)
@given(
    slope=st.floats(-0.2, 0.2),
    start=st.floats(45.0, 180.0),
    n=st.integers(20, 200),
    seed=st.integers(0, 10_000),
)
def test_noise_free_line_gives_back_its_slope(
    slope: float, start: float, n: int, seed: int
) -> None:
    """Property (issue 3): a noise-free straight line, missing days included."""
    rng = np.random.default_rng(seed)
    w = start + slope * np.arange(n)
    w[1:-1][rng.random(n - 2) < 0.3] = np.nan
    fit = local_linear_trend(w)
    # the diffuse start is a large finite prior, so allow 1e-4 kg/day (0.7 g/week)
    assert np.allclose(fit.slope_kg_per_day, slope, atol=1e-4)
    assert np.allclose(fit.level_kg, start + slope * np.arange(n), atol=1e-3)
    wr = window_rate(w)
    assert wr is not None and wr.rate_kg_per_day == pytest.approx(slope, abs=1e-9)
    sr = segment_rate(w, 0, n - 1)
    assert sr is not None and sr.rate_kg_per_day == pytest.approx(slope, abs=1e-9)


def _noisy(n: int, seed: int = 1, missing: float = 0.0) -> np.ndarray:
    rng = np.random.default_rng(seed)
    w = 85 - 0.07 * np.arange(n) + rng.normal(0, 0.5, n)
    w[1:][rng.random(n - 1) < missing] = np.nan
    return w


def test_intervals_contain_the_estimate() -> None:
    fit = local_linear_trend(_noisy(120, missing=0.2))
    s = fit.series(np.arange(np.datetime64("2026-01-01"), np.datetime64("2026-01-01") + 120))
    assert np.all(s.level_low_kg <= s.level_kg) and np.all(s.level_kg <= s.level_high_kg)
    assert np.all(s.slope_sd_kg_per_day > 0)


def test_intervals_widen_with_fewer_days() -> None:
    full = _noisy(120)
    sparse = full.copy()
    sparse[1:-1][np.random.default_rng(5).random(118) < 0.7] = np.nan
    a, b = local_linear_trend(full), local_linear_trend(sparse)
    assert b.level_var_kg2[-1] > a.level_var_kg2[-1]
    assert b.slope_var[-1] > a.slope_var[-1]
    w28, w14 = window_rate(full[:28]), window_rate(full[:14])
    assert w28 is not None and w14 is not None
    assert w14.se_kg_per_day > w28.se_kg_per_day


def test_noise_sd_estimated_per_client() -> None:
    # simulated white noise of SD 0.5 kg about a line: the estimate should be close
    fit = local_linear_trend(_noisy(365))
    assert fit.noise_sd_kg == pytest.approx(0.5, rel=0.15)


def test_spike_is_down_weighted() -> None:
    w = _noisy(60, seed=3)
    w[30] += 3.0
    robust = local_linear_trend(w)
    plain = local_linear_trend(w, robust=False)
    assert robust.weights[30] < 0.2
    truth = 85 - 0.07 * 30
    assert abs(robust.level_kg[30] - truth) < abs(plain.level_kg[30] - truth)


def test_trend_needs_two_weigh_ins() -> None:
    with pytest.raises(ValueError, match="need at least 2 weigh-ins for a trend, got 1"):
        local_linear_trend(np.array([80.0, np.nan, np.nan]))


@pytest.mark.parametrize(
    ("n", "sd", "kcal"),
    # notes §4.5 table / §10 item 50 (computed there): rho 7700 x SE(slope), tolerance 1 kcal
    [(7, 0.5, 728), (14, 0.5, 255), (14, 0.7, 357), (28, 0.5, 90)],
)
def test_least_squares_slope_se(n: int, sd: float, kcal: float) -> None:
    assert 7700 * rate_se_iid_kg_per_day(sd, n) == pytest.approx(kcal, abs=1.0)


def test_window_rate_textbook_se_on_consecutive_days() -> None:
    """With white noise the reported iid SE is sigma-hat sqrt(12/(n(n^2-1))) (notes §4.5)."""
    w = _noisy(28, seed=9)
    wr = window_rate(w)
    assert wr is not None
    expected = wr.resid_sd_kg * math.sqrt(12 / (28 * (28**2 - 1)))
    assert wr.se_iid_kg_per_day == pytest.approx(expected, rel=1e-9)
    assert wr.se_kg_per_day >= wr.se_iid_kg_per_day


def test_noise_model_recovers_ar1_plus_white() -> None:
    """Simulated AR(1) (phi 0.7, SD 0.4) + white (SD 0.3) noise, 4 windows of 60 days.

    The estimate of one series has an SD of about 0.12 in phi, so the check is on
    the mean over 20 simulated series (method-of-moments estimator is unbiased
    for the straight-line residuals by construction).
    """
    phis, sds = [], []
    for seed in range(20):
        rng = np.random.default_rng(seed)
        n = 240
        ar = np.empty(n)
        x = 0.0
        for t in range(n):
            x = 0.7 * x + rng.normal(0, 0.4 * math.sqrt(1 - 0.49))
            ar[t] = x
        slopes = np.repeat([-0.05, -0.1, 0.0, -0.08], 60)
        w = 90 + np.cumsum(slopes) + ar + rng.normal(0, 0.3, n)
        nm = fit_noise_model(w, [(0, 59), (60, 119), (120, 179), (180, 239)])
        assert nm is not None
        phis.append(nm.phi)
        sds.append(nm.sd_kg)
    assert np.mean(phis) == pytest.approx(0.7, abs=0.06)
    assert np.mean(sds) == pytest.approx(0.5, rel=0.05)  # sqrt(0.4^2 + 0.3^2)


def test_segment_rate_uses_continuity_across_a_knot() -> None:
    """Two noise-free segments with a kink at day 40: each slope is recovered exactly."""
    t = np.arange(80.0)
    w = np.where(t < 40, 90 - 0.1 * t, 86 - 0.02 * (t - 40))
    first = segment_rate(w, 0, 39, knots=(40,))
    second = segment_rate(w, 40, 79, knots=(40,))
    assert first is not None and second is not None
    assert first.rate_kg_per_day == pytest.approx(-0.1, abs=1e-9)
    assert second.rate_kg_per_day == pytest.approx(-0.02, abs=1e-9)


def test_segment_rate_separates_a_glycogen_shift_from_tissue_loss() -> None:
    """Noise-free: tissue -0.1 then -0.02 kg/day, plus a -1 kg glycogen/water step at day 40.

    The step follows the model's 4-day exponential approach (judgment, see
    SHIFT_TAU_DAYS); the fit returns the tissue slope and the shift separately.
    """
    t = np.arange(80.0)
    tissue = np.where(t < 40, 90 - 0.1 * t, 86 - 0.02 * (t - 40))
    shift = np.where(t >= 40, -1.0 * (1 - np.exp(-(t - 40) / 4.0)), 0.0)
    w = tissue + shift
    second = segment_rate(w, 40, 79, knots=(40,))
    assert second is not None
    assert second.rate_kg_per_day == pytest.approx(-0.02, abs=1e-6)
    assert second.shift_kg == pytest.approx(-1.0 * (1 - math.exp(-10.0)), abs=1e-4)
    first = segment_rate(w, 0, 39, knots=(40,))
    assert first is not None and first.rate_kg_per_day == pytest.approx(-0.1, abs=1e-6)
    assert first.shift_kg == pytest.approx(0.0, abs=1e-9)


def test_segment_rate_mean_rate_across_an_interior_knot() -> None:
    """A window that is not a phase (edge_knots=False) gets the mean rate across the kink."""
    t = np.arange(80.0)
    w = np.where(t < 40, 90 - 0.1 * t, 86 - 0.02 * (t - 40))
    r = segment_rate(w, 30, 59, knots=(40,), shift_prior_sd_kg=None, edge_knots=False)
    assert r is not None
    # (w(60) - w(30)) / 30 = (85.6 - 87.0) / 30, hand-calculated
    assert r.rate_kg_per_day == pytest.approx((85.6 - 87.0) / 30, abs=1e-9)


def test_smoother_matches_statsmodels_unobserved_components() -> None:
    """Reference library: statsmodels' local linear trend smoother with the same variances.

    statsmodels uses the exact diffuse initialisation; ours a large finite prior,
    so level and variances agree to about 1e-4 (the smoothed mean depends only on
    the variance ratios, the variances scale with r).
    """
    import warnings

    structural = pytest.importorskip("statsmodels.tsa.statespace.structural")
    rng = np.random.default_rng(2)
    n = 120
    y = 85 - 0.07 * np.arange(n) + rng.normal(0, 0.5, n)
    y[1:][rng.random(n - 1) < 0.25] = np.nan
    r = 0.25
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        model = structural.UnobservedComponents(y, level="local linear trend")
        ref = model.smooth([r, r / 90, r * 5e-5])
    ours = local_linear_trend(y, robust=False, level_ratio=1 / 90, slope_ratio=5e-5)
    assert np.allclose(ours.level_kg, ref.smoothed_state[0], atol=1e-4)
    assert np.allclose(ours.slope_kg_per_day, ref.smoothed_state[1], atol=1e-5)
    scaled = ours.level_var_kg2 / ours.noise_sd_kg**2 * r
    assert np.allclose(scaled, ref.smoothed_state_cov[0, 0], atol=1e-4)


def _ar1_series(rng: np.random.Generator, n: int, phi: float, ar_sd: float) -> np.ndarray:
    x = np.empty(n)
    v = rng.normal(0, ar_sd)
    for t in range(n):
        x[t] = v
        v = phi * v + rng.normal(0, ar_sd * math.sqrt(1 - phi * phi))
    return x


def test_water_trend_matches_statsmodels_unobserved_components_with_ar1() -> None:
    """Reference library: statsmodels' local linear trend plus AR(1) component.

    ``UnobservedComponents(level="local linear trend", autoregressive=1)`` smoothed
    with the same variances and phi; ours starts level and slope from a large
    finite prior where statsmodels is exactly diffuse, hence the tolerances.
    """
    import warnings

    structural = pytest.importorskip("statsmodels.tsa.statespace.structural")
    rng = np.random.default_rng(4)
    n = 150
    phi, ar_var, white_var = 0.8, 0.09, 0.04
    y = 85 - 0.07 * np.arange(n) + _ar1_series(rng, n, phi, 0.3) + rng.normal(0, 0.2, n)
    y[1:][rng.random(n - 1) < 0.25] = np.nan
    ql, qs = 1 / 400, 5e-5
    ours = trend_with_water(y, phi, ar_var, white_var, level_ratio=ql, slope_ratio=qs)
    s = ours.noise_sd_kg**2  # the concentrated scale: total noise variance
    share = white_var / (ar_var + white_var)
    params = [s * share, s * ql, s * qs, s * (1 - share) * (1 - phi * phi), phi]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        model = structural.UnobservedComponents(y, level="local linear trend", autoregressive=1)
        ref = model.smooth(params)
    assert ours.water_kg is not None
    assert np.allclose(ours.level_kg, ref.smoothed_state[0], atol=1e-4)
    assert np.allclose(ours.slope_kg_per_day, ref.smoothed_state[1], atol=1e-5)
    assert np.allclose(ours.water_kg, ref.smoothed_state[2], atol=1e-4)
    # variances from day 3 on: on the first days, while the diffuse level and slope are
    # being pinned, the exact and the large-prior initialisations differ
    assert np.allclose(ours.level_var_kg2[3:], ref.smoothed_state_cov[0, 0, 3:], atol=1e-4)


def test_water_trend_band_covers_under_persistent_water() -> None:
    """The 80 % band of the level covers about 80 % of days when the noise is AR(1).

    Simulated straight-line weights with strong AR(1) water (phi 0.9, SD 0.5 kg)
    and white scale noise 0.2 kg; 80 % is the band's own nominal level.  The
    white-noise smoother's band covers clearly less on the same data.
    """
    rng = np.random.default_rng(7)
    phi, ar_sd, white_sd = 0.9, 0.5, 0.2
    hit_water, hit_white = [], []
    for _ in range(30):
        n = 120
        truth = 90 - 0.06 * np.arange(n)
        y = truth + _ar1_series(rng, n, phi, ar_sd) + rng.normal(0, white_sd, n)
        y[rng.random(n) < 0.15] = np.nan
        y[0] = truth[0]
        w = trend_with_water(y, phi, ar_sd**2, white_sd**2)
        half = 1.2816 * np.sqrt(w.level_var_kg2)
        hit_water.extend(np.abs(w.level_kg - truth) <= half)
        plain = local_linear_trend(y, robust=False)
        half = 1.2816 * np.sqrt(plain.level_var_kg2)
        hit_white.extend(np.abs(plain.level_kg - truth) <= half)
    assert 0.7 <= float(np.mean(hit_water)) <= 0.9
    assert float(np.mean(hit_white)) < float(np.mean(hit_water)) - 0.1


def test_water_trend_rejects_bad_arguments() -> None:
    y = np.array([80.0, 80.2, np.nan, 79.9])
    with pytest.raises(ValueError):
        trend_with_water(y, 1.0, 0.1, 0.05)
    with pytest.raises(ValueError):
        trend_with_water(y, 0.5, 0.1, 0.0)
    with pytest.raises(ValueError):
        trend_with_water(np.array([80.0, np.nan]), 0.5, 0.1, 0.05)


@settings(max_examples=30, deadline=None)
@given(
    st.lists(st.one_of(st.none(), st.floats(40, 200)), min_size=2, max_size=60),
    st.floats(0.0, 0.97),
)
def test_water_trend_is_finite_on_odd_inputs(vals: list[float | None], phi: float) -> None:
    y = np.array([np.nan if v is None else v for v in vals])
    if int(np.isfinite(y).sum()) < 2:
        with pytest.raises(ValueError):
            trend_with_water(y, phi, 0.1, 0.05)
        return
    fit = trend_with_water(y, phi, 0.1, 0.05)
    assert np.all(np.isfinite(fit.level_kg))
    assert np.all(fit.level_var_kg2 >= 0)


def test_water_trend_on_a_noise_free_line_gives_back_the_line() -> None:
    # exact data: the level is the line itself (hand-calculated 80 - 0.05 t)
    y = 80 - 0.05 * np.arange(60.0)
    fit = trend_with_water(y, 0.7, 1e-30, 0.05)
    assert np.allclose(fit.level_kg, y, atol=1e-6)
    assert np.allclose(fit.slope_kg_per_day, -0.05, atol=1e-5)  # finite diffuse prior


def test_noise_model_does_not_read_a_glycogen_step_as_water_swings() -> None:
    """A phase that opens with a 1.5 kg exponential drop (tau 4 days) and white noise.

    Without the step in the line the drop's curve looks like persistent noise; with
    it the noise model finds the white noise it was built from (0.2 kg, to within
    sampling error; constructed data, the truth is known by construction).
    """
    rng = np.random.default_rng(11)
    n = 70
    t = np.arange(n, dtype=float)
    y = 90 - 0.08 * t - 1.5 * (1 - np.exp(-t / 4.0)) + rng.normal(0, 0.2, n)
    plain = fit_noise_model(y, [(0, n - 1)])
    stepped = fit_noise_model(y, [(0, n - 1)], shift_tau_days=4.0)
    assert plain is not None and stepped is not None
    assert plain.ar_var_kg2 > 0.02
    assert stepped.ar_var_kg2 < 0.01
    assert math.sqrt(stepped.ar_var_kg2 + stepped.white_var_kg2) == pytest.approx(0.2, rel=0.25)
