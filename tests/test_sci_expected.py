"""Expected TDEE without adaptation and metabolic adaptation.

The expected-TDEE terms are those of the Hall et al. 2011 expenditure equation
(science notes §5: gammaF 3.2, gammaL 22 kcal/kg/day, etaF 180, etaL 230 kcal/kg,
betaTEF 0.10; from memory, matching third-party model code).  The strongest
check is that, fed the Hall model's own states, expected TDEE reproduces the
model's expenditure with adaptive thermogenesis switched off, and observed minus
expected then recovers the model's AT term.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from reportgen.results import Estimate
from reportgen.science.expected import (
    LITERATURE_ADAPTATION,
    Baseline,
    activity_coefficient_kcal_per_kg_day,
    adaptation,
    deficit_depth_pct,
    expected_tdee_fallback,
    expected_tdee_from_baseline,
)
from reportgen.science.hall import HALL_2011, hall_baseline, simulate_hall
from reportgen.science.trend import Z80

RMR0 = 1898.75  # Mifflin-St Jeor, man 100 kg, 175 cm, 40 y (notes §5)


def test_activity_coefficient_matches_hall_definition() -> None:
    # notes §5 (computed there): PAL 1.6, RMR0 1898.75, BW 100 -> delta 8.35 kcal/kg/day
    d = activity_coefficient_kcal_per_kg_day(1.6 * RMR0, RMR0, 100.0)
    assert d == pytest.approx(((1 - 0.10) * 1.6 - 1) * RMR0 / 100, rel=1e-12)
    assert d == pytest.approx(8.35, abs=0.01)
    assert activity_coefficient_kcal_per_kg_day(1000.0, 1500.0, 70.0) == 0.0  # never negative


BASE = Baseline(
    tdee_kcal=3038.0,
    tdee_se_kcal=80.0,
    weight_kg=100.0,
    fat_kg=35.0,
    intake_kcal=3038.0,
    resting_kcal=RMR0,
)


def test_expected_equals_baseline_without_change() -> None:
    e = expected_tdee_from_baseline(BASE, 100.0, 35.0, 3038.0)
    assert e.value == pytest.approx(3038.0, abs=1e-9)
    assert e.high - e.value == pytest.approx(Z80 * 80.0, rel=1e-12)  # type: ignore[operator]


def test_expected_hand_calculation() -> None:
    """dF -2, dL -1, dEI -500, no tissue-rate change (hand-calculated from notes §5).

    delta = (0.9 x 3038 - 1898.75)/100 = 8.3545; 3038 + 3.2(-2) + 22(-1) + 8.3545(-3)
    + 0.1(-500) = 2934.5365 kcal/day.
    """
    e = expected_tdee_from_baseline(BASE, 97.0, 33.0, 2538.0)
    assert e.value == pytest.approx(2934.5365, abs=1e-6)


@pytest.mark.parametrize("beta_at", [0.0, 0.14, 0.3])
def test_expected_reproduces_hall_model_and_adaptation_is_at(beta_at: float) -> None:
    """120 days at -600 kcal/day in the Hall model: observed - expected = AT."""
    params = replace(HALL_2011, beta_at=beta_at)
    base = hall_baseline(100.0, 35.0, RMR0, 1.6, params)
    ei0 = float(base.intake0_kcal)
    intake = np.full(121, ei0 - 600.0)
    path = simulate_hall(35.0, 65.0, intake, base)
    baseline = Baseline(ei0, 50.0, 100.0, 35.0, ei0, RMR0)
    t = 120
    f, lean = float(path.fat_kg[t]), float(path.lean_kg[t])
    fr = float(path.fat_kg[t + 1] - path.fat_kg[t])
    lr = float(path.lean_kg[t + 1] - path.lean_kg[t])
    exp_ = expected_tdee_from_baseline(baseline, f + lean, f, ei0 - 600.0, fr, lr, params)
    observed = float(path.expenditure_kcal[t])
    assert observed - exp_.value == pytest.approx(float(path.at_kcal[t]), abs=0.5)  # type: ignore[operator]


def test_fallback_is_resting_times_activity_factor() -> None:
    e = expected_tdee_fallback(1500.0, 1.5)
    assert e.value == pytest.approx(2250.0, rel=1e-12)
    assert e.high - e.value == pytest.approx(Z80 * 0.15 * 2250.0, rel=1e-12)  # type: ignore[operator]


def test_adaptation_difference_pct_and_interval() -> None:
    obs = Estimate(2200.0, 2100.0, 2300.0)
    exp_ = Estimate(2400.0, 2300.0, 2500.0)
    a = adaptation(obs, exp_)
    assert a.kcal.value == pytest.approx(-200.0, abs=1e-12)
    assert a.pct.value == pytest.approx(-200 / 24, abs=1e-12)  # -8.33 % of expected
    half = np.hypot(100.0, 100.0)
    assert a.kcal.low == pytest.approx(-200.0 - half) and a.kcal.high == pytest.approx(-200 + half)
    assert not a.implausible


def test_adaptation_beyond_20_percent_is_implausible() -> None:
    # common practice / judgment (notes §6): > 20 % more likely logging error
    a = adaptation(Estimate(1800.0, 1700.0, 1900.0), Estimate(2400.0, 2300.0, 2500.0))
    assert a.pct.value == pytest.approx(-25.0) and a.implausible


def test_adaptation_missing_inputs_carry_the_reason() -> None:
    a = adaptation(Estimate.missing("too-few-days"), Estimate(2400.0, 2300.0, 2500.0))
    assert a.kcal.reason == "too-few-days" and a.pct.value is None
    b = adaptation(Estimate(2400.0, 2300.0, 2500.0), Estimate.missing("no-resting-equation"))
    assert b.kcal.reason == "no-resting-equation"


def test_deficit_depth() -> None:
    assert deficit_depth_pct(500.0, 2500.0) == pytest.approx(20.0)
    assert deficit_depth_pct(None, 2500.0) is None
    assert deficit_depth_pct(500.0, None) is None


def test_literature_magnitudes_listed_with_sources() -> None:
    # notes §6: Leibel 1995, Muller 2015 and Fothergill 2016 are published (abstracts)
    codes = {c for c, _, _ in LITERATURE_ADAPTATION}
    assert {"leibel-1995", "muller-2015", "fothergill-2016"} <= codes
    assert all(src for _, _, src in LITERATURE_ADAPTATION)
