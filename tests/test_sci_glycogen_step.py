"""Glycogen-and-water step in the segment fit: a sized prior and an uncertain time constant.

Check values are computed here from the model's own definitions (a linear spline
plus a step s (1 - exp(-(t - k)/tau)) after the knot k), or from the constants of
``reportgen.science.energy_density`` (1.4 +/- 0.5 g per kcal/day of intake change:
judgment and from memory, see that module), as tagged beside each assert.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from reportgen.science.energy_density import (
    GLYCOGEN_STEP_MIN_SD_KG,
    glycogen_step_prior_sd_kg,
)
from reportgen.science.rates import NoiseModel, segment_rate


def _stepped(tau_days: float, step_kg: float = -1.5) -> np.ndarray:
    """Noise-free: tissue -0.1 then -0.02 kg/day, and a step with time constant tau at day 40."""
    t = np.arange(80.0)
    tissue = np.where(t < 40, 90 - 0.1 * t, 86 - 0.02 * (t - 40))
    return tissue + np.where(t >= 40, step_kg * (1 - np.exp(-(t - 40) / tau_days)), 0.0)


def test_step_prior_sd_for_a_1000_kcal_cut() -> None:
    # sqrt(1.4^2 + 0.5^2) kg = 1.4866 kg for a 1000 kcal/day cut (computed here from
    # GLYCOGEN_STEP_KG_PER_KCAL and its SD; about the 1-2 kg early in a diet, Hall 2008)
    assert glycogen_step_prior_sd_kg(-1000.0) == pytest.approx(math.hypot(1.4, 0.5), rel=1e-9)
    # half the change, half the SD (the prior scales with |intake change|); a rise alike
    assert glycogen_step_prior_sd_kg(500.0) == pytest.approx(math.hypot(0.7, 0.25), rel=1e-9)


def test_step_prior_sd_has_a_floor_without_an_intake_change() -> None:
    # judgment floor of 0.3 kg (energy_density.GLYCOGEN_STEP_MIN_SD_KG)
    assert glycogen_step_prior_sd_kg(0.0) == pytest.approx(0.3)
    assert glycogen_step_prior_sd_kg(-100.0) == pytest.approx(0.3)


@given(st.floats(min_value=-3000, max_value=3000))
def test_step_prior_sd_is_even_and_at_least_the_floor(change_kcal: float) -> None:
    sd = glycogen_step_prior_sd_kg(change_kcal)
    assert sd >= GLYCOGEN_STEP_MIN_SD_KG
    assert sd == glycogen_step_prior_sd_kg(-change_kcal)


def test_step_prior_sd_rejects_non_finite_input() -> None:
    with pytest.raises(ValueError):
        glycogen_step_prior_sd_kg(math.nan)


def test_a_grid_of_time_constants_recovers_a_slow_step() -> None:
    """Truth: an 8-day step.  A fixed 4-day model misreads part of it as tissue; the grid
    (4, 8, 12) puts its weight on 8 days by the marginal likelihood, so it gives the
    8-day fit: tissue rate -0.02 kg/day and shift -1.5 (1 - e^-5) kg inside days 40-79
    (computed here from the model's definition; the N(0, 1 kg^2) prior on the step
    shrinks it slightly, hence the tolerances)."""
    w = _stepped(8.0)
    noise = NoiseModel(ar_var_kg2=0.0, phi=0.0, white_var_kg2=0.05**2, n_obs=80)
    fixed = segment_rate(w, 40, 79, knots=(40,), noise=noise)
    right = segment_rate(w, 40, 79, knots=(40,), noise=noise, shift_tau_days=(8.0,))
    grid = segment_rate(w, 40, 79, knots=(40,), noise=noise, shift_tau_days=(4.0, 8.0, 12.0))
    assert fixed is not None and right is not None and grid is not None
    assert abs(fixed.rate_kg_per_day + 0.02) > 5e-3  # the wrong time constant biases the rate
    assert grid.rate_kg_per_day == pytest.approx(-0.02, abs=2e-4)
    assert grid.shift_kg == pytest.approx(-1.5 * (1 - math.exp(-5.0)), abs=0.02)
    assert grid.rate_kg_per_day == pytest.approx(right.rate_kg_per_day, abs=2e-5)


def test_the_grid_widens_the_rate_interval_by_the_spread_between_time_constants() -> None:
    """With noise the time constant is not pinned down: the mixture's variance is the mean
    of the fits' variances plus the variance of their rates (law of total variance), so
    its SE is at least the smallest single-fit SE and its rate lies between the fits'."""
    rng = np.random.default_rng(7)
    w = _stepped(6.0) + rng.normal(0.0, 0.4, 80)
    noise = NoiseModel(ar_var_kg2=0.1, phi=0.7, white_var_kg2=0.06, n_obs=80)
    taus = (3.0, 6.5, 10.0)
    singles = [
        segment_rate(w, 40, 79, knots=(40,), noise=noise, shift_tau_days=(tau,)) for tau in taus
    ]
    mixed = segment_rate(w, 40, 79, knots=(40,), noise=noise, shift_tau_days=taus)
    assert mixed is not None and all(s is not None for s in singles)
    rates = [s.rate_kg_per_day for s in singles if s is not None]
    ses = [s.se_kg_per_day for s in singles if s is not None]
    assert min(rates) - 1e-12 <= mixed.rate_kg_per_day <= max(rates) + 1e-12
    assert mixed.se_kg_per_day >= min(ses) - 1e-12
    assert max(rates) - min(rates) > 0  # the time constant matters for this client


def test_a_per_step_prior_sd_is_used_at_its_knot() -> None:
    """A tight prior (1 g) at the knot leaves the step out: the fit must then explain
    the 1.5 kg drop by tissue, while the default 1 kg prior lets it be water."""
    w = _stepped(4.0)
    noise = NoiseModel(ar_var_kg2=0.0, phi=0.0, white_var_kg2=0.05**2, n_obs=80)
    free = segment_rate(w, 40, 79, knots=(40,), noise=noise)
    tight = segment_rate(w, 40, 79, knots=(40,), noise=noise, step_sd_kg={40: 0.001})
    other_knot = segment_rate(w, 40, 79, knots=(40,), noise=noise, step_sd_kg={10: 0.001})
    assert free is not None and tight is not None and other_knot is not None
    assert free.shift_kg == pytest.approx(-1.5 * (1 - math.exp(-10.0)), abs=0.02)
    assert abs(tight.shift_kg) < 0.05
    assert other_knot.shift_kg == pytest.approx(free.shift_kg, abs=1e-9)
