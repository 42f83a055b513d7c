"""Hall et al. 2011 adult model: published rules of thumb, the analytic steady state, projection.

Baseline of the science notes §5: man, 100 kg, F0 35 kg, 40 y, 175 cm, PAL 1.6,
RMR0 from Mifflin-St Jeor.  Published (Hall 2011, abstract): about 24 kcal/day
(100 kJ/day) per kg of eventual change, half of it in about 1 year, 95 % in
about 3 years.  The notes' simplified model (computed there) gives 20.9 kcal/day
per kg, 307 days to half and 1227 days to 95 % at -500 kcal/day; tolerances are
the notes' suggestions (§5, §10 items 34-37).
"""

from __future__ import annotations

import numpy as np
import pytest

from reportgen.science.hall import (
    HALL_2011,
    HallBaseline,
    days_to_fraction,
    expenditure_kcal,
    hall_baseline,
    project_weight,
    simulate_hall,
    steady_state_change_kg,
    time_constant_days,
)
from reportgen.science.resting import resting_kcal_mifflin_st_jeor

RMR0 = resting_kcal_mifflin_st_jeor("male", 100.0, 175.0, 40)  # 1898.75 kcal/day
BASE = hall_baseline(100.0, 35.0, RMR0, 1.6)
YEARS_15 = 15 * 365


def _run(delta_kcal: float, days: int = YEARS_15) -> np.ndarray:
    intake = np.full(days, BASE.intake0_kcal + delta_kcal)
    return simulate_hall(35.0, 65.0, intake, BASE).weight_kg


def test_baseline_calibration_check_values() -> None:
    # notes §5 (computed there): EI0 3038 kcal/day, delta 8.35 kcal/kg/day, K 661 kcal/day
    assert pytest.approx(1898.75, abs=1e-9) == RMR0  # Mifflin 1990 formula
    assert BASE.intake0_kcal == pytest.approx(3038.0, abs=0.5)
    assert BASE.delta_kcal_per_kg_day == pytest.approx(8.35, abs=0.01)
    assert BASE.k_kcal == pytest.approx(661.0, abs=1.0)


def test_weight_is_stable_at_baseline_intake() -> None:
    w = _run(0.0, 365)
    assert np.allclose(w, 100.0, atol=1e-9)


def test_rule_of_thumb_kcal_per_kg() -> None:
    # published about 24 kcal/day per kg; notes item 34: -24 kcal/day -> -1.15 kg (20.9)
    w = _run(-24.0)
    change = w[-1] - 100.0
    assert change == pytest.approx(-1.15, abs=0.02)
    assert 18.0 <= -24.0 / change <= 27.0


def test_half_and_95_percent_times() -> None:
    w = _run(-500.0)
    half = days_to_fraction(w, 0.5)
    most = days_to_fraction(w, 0.95)
    assert half is not None and most is not None
    assert 250 <= half <= 400  # published "about 1 year"; computed 307 d (item 35)
    assert 2.5 * 365 <= most <= 4.5 * 365  # published "about 3 years"; computed 1227 d (item 36)
    assert w[365] - 100.0 == pytest.approx(-12.7, abs=2.0)  # item 37, computed -12.69 kg


@pytest.mark.parametrize("delta", [-24.0, -240.0])
def test_analytic_steady_state(delta: float) -> None:
    """notes §5: dBW = dEI (1 - bTEF - bAT) / (gF (1 - f) + gL f + delta), linearised."""
    analytic = steady_state_change_kg(delta, 35.0, float(BASE.delta_kcal_per_kg_day))
    simulated = _run(delta)[-1] - 100.0
    # exact in the small-change limit; within 3 % at -240 kcal/day (nonlinearity)
    assert simulated == pytest.approx(analytic, rel=0.03 if delta < -100 else 0.005)
    assert -24.0 / steady_state_change_kg(-24.0, 35.0, 8.3545) == pytest.approx(20.9, abs=0.05)


def test_linearised_time_constant() -> None:
    # notes §5 (computed there): about 496 days for F 35 kg, so a half-time near 344 days
    tau = time_constant_days(35.0, float(BASE.delta_kcal_per_kg_day))
    assert tau == pytest.approx(496.0, abs=3.0)


def test_adaptive_thermogenesis_follows_its_time_constant() -> None:
    """tauAT dAT/dt = bAT dEI - AT: after 14 days AT is 1 - (13/14)^14 of bAT dEI (Euler)."""
    intake = np.full(14, BASE.intake0_kcal - 500.0)
    path = simulate_hall(35.0, 65.0, intake, BASE)
    target = HALL_2011.beta_at * -500.0
    assert path.at_kcal[-1] == pytest.approx(target * (1 - (13 / 14) ** 14), abs=1e-9)


def test_baseline_refuses_impossible_composition() -> None:
    with pytest.raises(ValueError, match="need weight_kg > fat_mass_kg > 0"):
        hall_baseline(50.0, 60.0, 1500.0, 1.5)


# --- projection -------------------------------------------------------------

PROJ = dict(
    weight_kg=90.0,
    fat_mass_kg=28.0,
    tdee_kcal=2400.0,
    intake_kcal=1900.0,
    maintenance_kcal=2500.0,
    resting_kcal=1750.0,
)


def test_projection_flat_at_balance() -> None:
    run = project_weight(90.0, 28.0, 2500.0, 2500.0, 2500.0, 1750.0, n_draws=0)
    assert np.allclose(run.weight_kg, 90.0, atol=1e-9)


def _calibrated() -> tuple[object, float]:
    """The projection's calibration done by hand: EE today = TDEE 2400 (notes §5 algebra)."""
    pal = 2500.0 / 1750.0
    delta = ((1 - HALL_2011.beta_tef) * pal - 1) * 1750.0 / 90.0
    at0 = HALL_2011.beta_at * (1900.0 - 2500.0)
    ee0 = float(expenditure_kcal(28.0, 62.0, 1900.0, at0, HallBaseline(2500.0, 0.0, delta)))
    p = HALL_2011.energy_partition_c_kg / (HALL_2011.energy_partition_c_kg + 28.0)
    a = (180 / 9440) * (1 - p) + (230 / 1816) * p
    return HallBaseline(2500.0, (2400.0 - ee0) * (1 + a), delta), at0


def test_projection_matches_daily_simulation() -> None:
    """Weekly ensemble steps stay within 50 g of the daily model over 12 weeks."""
    run = project_weight(**PROJ, n_draws=0)  # type: ignore[arg-type]
    base, at0 = _calibrated()
    daily = simulate_hall(28.0, 62.0, np.full(84, 1900.0), base, at0)  # type: ignore[arg-type]
    assert float(daily.expenditure_kcal[0]) == pytest.approx(2400.0, abs=1e-6)  # calibrated
    assert np.max(np.abs(run.weight_kg - daily.weight_kg)) < 0.05


def test_projection_band_contains_path_and_widens() -> None:
    run = project_weight(**PROJ, weight_sd_kg=0.2, fat_sd_kg=2.5, tdee_sd_kcal=100.0)  # type: ignore[arg-type]
    assert np.all(run.low_kg <= run.weight_kg + 1e-9)
    assert np.all(run.weight_kg <= run.high_kg + 1e-9)
    width = run.high_kg - run.low_kg
    assert width[84] > width[28] > width[7]


def test_goal_date_and_not_at_this_intake() -> None:
    near = project_weight(**PROJ, goal_weight_kg=86.0, n_draws=0)  # type: ignore[arg-type]
    assert near.goal_day is not None and near.goal_day < 84
    assert near.weight_kg[near.goal_day] <= 86.0 + 0.02
    # eventual change at a 600 kcal/day cut is about -25 kg for this client; 50 kg is
    # never reached at this intake
    never = project_weight(**PROJ, goal_weight_kg=50.0, n_draws=0)  # type: ignore[arg-type]
    assert never.goal_day is None


def test_intake_for_rate_gives_that_rate() -> None:
    """At the solved intake the calibrated model loses r % of body weight per week (28 d)."""
    run = project_weight(**PROJ, rates_pct_per_week=(0.5, 1.0), n_draws=20)  # type: ignore[arg-type]
    base, at0 = _calibrated()
    for rate, (value, low, high) in run.intake_for_rate_kcal.items():
        assert low <= value <= high
        daily = simulate_hall(28.0, 62.0, np.full(28, value), base, at0)  # type: ignore[arg-type]
        weekly = (daily.weight_kg[28] - 90.0) / 4
        assert weekly == pytest.approx(-rate / 100 * 90.0, rel=0.03)
    assert run.intake_for_rate_kcal[1.0][0] < run.intake_for_rate_kcal[0.5][0]


@pytest.mark.parametrize(
    ("sex", "weight", "fat", "height", "one_year", "steady", "half"),
    [
        # notes §5, computed there (age 40, PAL 1.6, -500 kcal/day): leaner man and woman
        ("male", 80.0, 20.0, 175.0, -12.9, -18.5, 219),
        ("female", 70.0, 25.0, 165.0, -12.9, -20.3, None),
    ],
)
def test_other_baselines_from_the_notes(
    sex: str,
    weight: float,
    fat: float,
    height: float,
    one_year: float,
    steady: float,
    half: int | None,
) -> None:
    rmr = resting_kcal_mifflin_st_jeor(sex, weight, height, 40)  # type: ignore[arg-type]
    base = hall_baseline(weight, fat, rmr, 1.6)
    intake = np.full(YEARS_15, base.intake0_kcal - 500.0)
    w = simulate_hall(fat, weight - fat, intake, base).weight_kg
    assert w[365] - weight == pytest.approx(one_year, abs=0.05)
    assert w[-1] - weight == pytest.approx(steady, abs=0.05)
    if half is not None:
        assert days_to_fraction(w, 0.5) == pytest.approx(half, abs=2)
    # leaner people lose more per kcal: 27 kcal/day per kg (man) vs 20.9 at F 35 kg
    assert 18.0 <= 500.0 / (weight - w[-1]) <= 27.5
