"""Energy balance: stored energy, realised deficit, observed TDEE, expenditure path.

Check values from the science notes (§4.4, §4.5, §10 items 33, 50, 51), all
computed there from the published formulas; tags beside each assert.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from reportgen.science.balance import (
    KCAL_PER_KG_SPREADSHEET,
    expenditure_path,
    fat_mass_at,
    observed_tdee_kcal,
    spreadsheet_tdee_kcal,
    stored_energy_kcal,
    window_balance,
)
from reportgen.science.composition import energy_density_kcal_per_kg
from reportgen.science.energy_density import energy_density_with_spread
from reportgen.science.trend import Z80


def test_observed_tdee_check_value() -> None:
    # notes §10 item 33: intake 2000, -1.0 kg in 14 d, rho 7700 -> 2550 kcal/day (exact)
    assert observed_tdee_kcal(2000.0, -1.0, 14.0, 7700.0) == pytest.approx(2550.0, rel=1e-9)


def test_observed_tdee_with_hall_energy_density() -> None:
    # notes §4.4: with F0 = 20 kg (rho about 6832 by the infinitesimal rule) TDEE = 2488
    rho = energy_density_kcal_per_kg(20.0)
    assert rho == pytest.approx(6832, abs=1)  # notes §4.3 table, computed there
    assert observed_tdee_kcal(2000.0, -1.0, 14.0, rho) == pytest.approx(2488, abs=1)


def test_stored_energy_of_fat_and_lean_change() -> None:
    # notes §10 item 51: 80 kg 25 % -> 76 kg 22 % is dFM -3.28, dFFM -0.72 kg; energy by
    # Hall 2008 densities 9440 and 1816 kcal/kg: 9440 x -3.28 + 1816 x -0.72 (hand-calculated)
    assert stored_energy_kcal(-3.28, -0.72) == pytest.approx(-32270.72, abs=1e-6)


def test_fat_mass_moves_along_forbes_curve() -> None:
    # notes §10 item 30: F0 20 kg, dBW -10 kg -> dF -6.166 kg (computed there)
    assert fat_mass_at(20.0, 80.0, 70.0) == pytest.approx(20.0 - 6.166, abs=1e-3)
    assert fat_mass_at(20.0, 80.0, 80.0) == pytest.approx(20.0, abs=1e-12)


def _line(days: int, slope: float, start: float = 80.0) -> np.ndarray:
    return start + slope * np.arange(days)


def test_window_balance_noise_free_line() -> None:
    """-0.1 kg/day for 28 days at 2000 kcal/day, F 20 kg: deficit = rho x 0.1 exactly."""
    w = _line(28, -0.1)
    b = window_balance(w, np.full(28, 2000.0), 20.0, 2.7)
    rho = energy_density_kcal_per_kg(20.0, -0.1 * 28)
    assert b.energy_density_kcal_per_kg == pytest.approx(rho, rel=1e-12)
    assert b.deficit_kcal.value == pytest.approx(0.1 * rho, rel=1e-9)
    assert b.tdee_kcal.value == pytest.approx(2000.0 + 0.1 * rho, rel=1e-9)
    assert b.energy_density_low <= rho <= b.energy_density_high  # type: ignore[operator]
    assert b.fat_change_kg is not None and b.lean_change_kg is not None
    assert b.fat_change_kg + b.lean_change_kg == pytest.approx(-2.8, abs=1e-9)
    # no weight noise and a constant intake: only the energy-density uncertainty is left,
    # the fat-mass bracket combined with the partition spread around Forbes' curve
    half = b.deficit_kcal.high - b.deficit_kcal.value  # type: ignore[operator]
    assert half > 0
    s_rho = (b.energy_density_high - b.energy_density_low) / 2  # type: ignore[operator]
    _, s_part = energy_density_with_spread(20.0, -0.1 * 28)
    assert half == pytest.approx(Z80 * 0.1 * math.hypot(s_rho, s_part), rel=1e-3)
    # without the partition spread only the bracket is left
    only = window_balance(w, np.full(28, 2000.0), 20.0, 2.7, lean_share_log_sd=0.0)
    half0 = only.deficit_kcal.high - only.deficit_kcal.value  # type: ignore[operator]
    assert half0 == pytest.approx(Z80 * 0.1 * s_rho, rel=1e-3)


def test_interval_contains_estimate_and_widens_with_fewer_days() -> None:
    rng = np.random.default_rng(3)
    w = _line(56, -0.08) + rng.normal(0, 0.5, 56)
    intake = 1900 + rng.normal(0, 300, 56)
    long = window_balance(w, intake, 25.0, 2.7)
    short = window_balance(w[:21], intake[:21], 25.0, 2.7)
    for b in (long, short):
        for e in (b.deficit_kcal, b.tdee_kcal):
            assert e.low is not None and e.high is not None and e.value is not None
            assert e.low < e.value < e.high
    width = lambda e: e.high - e.low  # noqa: E731
    assert width(short.tdee_kcal) > width(long.tdee_kcal)
    assert width(short.deficit_kcal) > width(long.deficit_kcal)


def test_missing_intake_days_widen_the_tdee_interval() -> None:
    rng = np.random.default_rng(4)
    w = _line(42, -0.07) + rng.normal(0, 0.4, 42)
    intake = 2000 + rng.normal(0, 350, 42)
    full = window_balance(w, intake, 25.0, 2.7)
    gappy_intake = intake.copy()
    gappy_intake[rng.random(42) < 0.6] = np.nan
    gappy = window_balance(w, gappy_intake, 25.0, 2.7)
    assert gappy.intake_days < full.intake_days
    assert gappy.tdee_se_kcal > full.tdee_se_kcal  # type: ignore[operator]
    assert gappy.deficit_kcal == full.deficit_kcal  # intake never enters the deficit


def test_fewer_than_14_days_is_refused_with_a_reason() -> None:
    b = window_balance(_line(13, -0.1), np.full(13, 2000.0), 20.0, 2.7)
    assert b.deficit_kcal.value is None and b.deficit_kcal.reason == "too-few-days"
    assert b.tdee_kcal.reason == "too-few-days"


def test_too_few_weigh_ins_and_intake_days() -> None:
    w = _line(20, -0.1)
    sparse = np.full(20, np.nan)
    sparse[[0, 5, 10, 19]] = w[[0, 5, 10, 19]]
    assert window_balance(sparse, np.full(20, 2000.0), 20.0, 2.7).deficit_kcal.reason == (
        "too-few-weigh-ins"
    )
    intake = np.full(20, np.nan)
    intake[:5] = 2000.0
    b = window_balance(w, intake, 20.0, 2.7)
    assert b.deficit_kcal.known and b.tdee_kcal.reason == "too-few-intake-days"


def test_unknown_fat_mass_uses_the_7700_simplification() -> None:
    b = window_balance(_line(28, -0.1), np.full(28, 2000.0), None, 0.0)
    assert b.energy_density_kcal_per_kg == KCAL_PER_KG_SPREADSHEET
    assert b.deficit_kcal.value == pytest.approx(770.0, rel=1e-9)
    assert b.fat_change_kg is None


def test_spreadsheet_method() -> None:
    # (first - last raw weight) x 7700 / days, as a coach's spreadsheet does it
    w = np.array([80.0, np.nan, 79.9, 79.4, np.nan, 79.0, np.nan])
    deficit, tdee = spreadsheet_tdee_kcal(w, np.array([2000.0] * 6 + [np.nan]))
    assert deficit == pytest.approx(1.0 * 7700 / 5, rel=1e-12)
    assert tdee == pytest.approx(2000 + 1540, rel=1e-12)
    assert all(math.isnan(x) for x in spreadsheet_tdee_kcal(np.array([80.0]), np.array([1.0])))


def test_expenditure_path_recovers_constant_expenditure() -> None:
    """Noise-free: 2000 kcal/day in, -0.1 kg/day at rho 7700 -> 2770 kcal/day out."""
    n = 90
    w = _line(n, -0.1)
    intake = np.full(n, 2000.0)
    path = expenditure_path(w, intake, 7700.0, 0.3)
    mid = slice(20, n - 5)
    assert np.allclose(path.tdee_kcal[mid], 2770.0, atol=15.0)
    assert np.all(path.sd_kcal > 0)


def test_expenditure_path_handles_missing_intake_and_weight() -> None:
    rng = np.random.default_rng(6)
    n = 120
    w = _line(n, -0.08) + rng.normal(0, 0.4, n)
    intake = 2100 + rng.normal(0, 300, n)
    w[rng.random(n) < 0.3] = np.nan
    w[0] = 80.0
    intake[rng.random(n) < 0.3] = np.nan
    path = expenditure_path(w, intake, 7500.0, 0.4)
    assert np.all(np.isfinite(path.tdee_kcal))
    # truth: 2100 + 0.08 x 7500 = 2700 kcal/day; the mean over the log is close
    assert float(np.mean(path.tdee_kcal[14:])) == pytest.approx(2700.0, abs=120.0)


def test_glycogen_shift_energy_enters_the_deficit() -> None:
    """deficit = -(rho rate + 1137 shift / days); 1137 kcal/kg = 17.6 MJ/kg glycogen (Hall
    2008, published) held with 2.7 g water per g as in Hall's model (from memory)."""
    from reportgen.science.balance import GLYCOGEN_WATER_KCAL_PER_KG
    from reportgen.science.rates import WindowRate

    assert pytest.approx(17.6e3 / 4.184 / 3.7, rel=1e-12) == GLYCOGEN_WATER_KCAL_PER_KG
    rate = WindowRate(-0.05, 0.0, 0.0, 0.0, 0.0, 28, 28, shift_kg=-0.8, shift_se_kg=0.0)
    b = window_balance(_line(28, -0.05), np.full(28, 2000.0), 25.0, 0.0, rate=rate)
    rho = b.energy_density_kcal_per_kg
    assert rho is not None
    expected = -(rho * -0.05 + GLYCOGEN_WATER_KCAL_PER_KG * -0.8 / 28)
    assert b.deficit_kcal.value == pytest.approx(expected, rel=1e-12)


def test_intake_mean_se() -> None:
    """All days logged at a constant intake: only the 10 % logging noise is left."""
    from reportgen.science.balance import intake_mean_se_kcal

    x = np.full(28, 2000.0)
    assert intake_mean_se_kcal(x, 28) == pytest.approx(0.1 * 2000 / math.sqrt(28), rel=1e-12)
    rng = np.random.default_rng(1)
    y = 2000 + rng.normal(0, 400, 20)
    # fewer logged days of a varying intake: larger than the logging part alone
    assert intake_mean_se_kcal(y, 40) > 0.1 * float(y.mean()) / math.sqrt(20)


def test_expenditure_path_matches_statsmodels_kalman_smoother() -> None:
    """Reference library: statsmodels' Kalman smoother on the same state-space model.

    State [W, E]: W' = W - E/rho + I/rho + u, E' = E + v, y = W + e, with the
    documented variances (logging noise 10 % of intake, 0.05 kg weight process noise,
    the mean and SD of the logged intakes on unlogged days, a glycogen-and-water shift
    after a phase start, weigh-in variance r / robust weight) and the same known
    initial state.  statsmodels' smoother is an independent implementation, so the
    paths agree to rounding.
    """
    from reportgen.science.balance import (
        EXPENDITURE_RW_SD_KCAL,
        INTAKE_LOG_NOISE_FRACTION,
        WEIGHT_PROCESS_SD_KG,
    )
    from reportgen.science.rates import SHIFT_PRIOR_SD_KG, SHIFT_TAU_DAYS

    kalman_smoother = pytest.importorskip("statsmodels.tsa.statespace.kalman_smoother")
    rng = np.random.default_rng(11)
    n, rho, noise_sd, shift_day = 100, 7200.0, 0.4, 40
    weight = _line(n, -0.06) + rng.normal(0, noise_sd, n)
    weight[1:][rng.random(n - 1) < 0.25] = np.nan
    intake = 2000 + rng.normal(0, 250, n)
    intake[rng.random(n) < 0.2] = np.nan
    robust = np.where(np.isfinite(weight), 1.0, np.nan)
    robust[[5, 60]] = 0.2  # two down-weighted spikes
    ours = expenditure_path(weight, intake, rho, noise_sd, robust, shift_days=(shift_day,))

    logged = intake[np.isfinite(intake)]
    filled = np.where(np.isfinite(intake), intake, logged.mean())
    intake_sd = np.where(np.isfinite(intake), INTAKE_LOG_NOISE_FRACTION * intake, logged.std())
    weight_var = (intake_sd / rho) ** 2 + WEIGHT_PROCESS_SD_KG**2
    after_shift = np.arange(n) - shift_day
    in_shift = (after_shift >= 0) & (after_shift < 5 * SHIFT_TAU_DAYS)
    weight_var += np.where(
        in_shift,
        SHIFT_PRIOR_SD_KG**2
        * (1 - math.exp(-1 / SHIFT_TAU_DAYS))
        * np.exp(-after_shift / SHIFT_TAU_DAYS),
        0.0,
    )
    smoother = kalman_smoother.KalmanSmoother(k_endog=1, k_states=2, k_posdef=2)
    smoother.bind(weight.reshape(1, n))
    smoother["design"] = np.array([[1.0, 0.0]])
    smoother["obs_cov"] = (noise_sd**2 / np.nan_to_num(robust, nan=1.0)).reshape(1, 1, n)
    smoother["transition"] = np.array([[1.0, -1.0 / rho], [0.0, 1.0]])
    smoother["state_intercept"] = np.vstack([filled / rho, np.zeros(n)])
    smoother["selection"] = np.eye(2)
    state_cov = np.zeros((2, 2, n))
    state_cov[0, 0] = weight_var
    state_cov[1, 1] = EXPENDITURE_RW_SD_KCAL**2
    smoother["state_cov"] = state_cov
    first_weight = float(weight[np.isfinite(weight)][0])
    smoother.initialize_known(np.array([first_weight, logged.mean()]), np.diag([4.0, 1000.0**2]))
    reference = smoother.smooth()
    assert np.allclose(ours.tdee_kcal, reference.smoothed_state[1], rtol=0, atol=1e-6)
    assert np.allclose(ours.weight_kg, reference.smoothed_state[0], rtol=0, atol=1e-9)
    assert np.allclose(ours.sd_kcal, np.sqrt(reference.smoothed_state_cov[1, 1]), rtol=0, atol=1e-6)


def test_measured_partition_replaces_forbes() -> None:
    # Serial skinfolds put the lean share at 0.20 (SD 0.05): rho = 9440 x 0.8 + 1816 x 0.2
    # = 7915.2 kcal/kg (Hall 2008 densities, computed here), deficit = 0.1 x rho.
    w = _line(28, -0.1)
    b = window_balance(w, np.full(28, 2000.0), 20.0, 0.0, lean_share=(0.2, 0.05))
    assert b.energy_density_kcal_per_kg == pytest.approx(7915.2, rel=1e-12)
    assert b.deficit_kcal.value == pytest.approx(791.52, rel=1e-9)
    assert b.fat_change_kg == pytest.approx(-2.24, rel=1e-9)
    half = b.deficit_kcal.high - b.deficit_kcal.value  # type: ignore[operator]
    assert half == pytest.approx(Z80 * 0.1 * (9440 - 1816) * 0.05, rel=1e-3)
