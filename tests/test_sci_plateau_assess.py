"""The plateau assessment end to end on small invented series with a known shape.

The series are invented (a straight loss that stops, or does not), so the checks are
the shape's own consequences: a flat recent trend against a 0.6 %/week plan is a
stall; a loss of 0.09 kg/day at the Hall 2008 energy density of about 7000-7500
kcal/kg is a realised deficit of about 630-680 kcal/day (hand-calculated), and with
logged intake and steps unchanged its disappearance is not intake or activity.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from reportgen.science.expected import Baseline
from reportgen.science.plateau_assess import PlateauInputs, assess_plateau

MAINT_DAYS, DEFICIT_DAYS = 28, 84
N = MAINT_DAYS + DEFICIT_DAYS


def _inputs(stall: bool, seed: int = 3) -> PlateauInputs:
    rng = np.random.default_rng(seed)
    t = np.arange(N, dtype=float)
    losing_days = 56 if stall else DEFICIT_DAYS
    tissue = 90.0 - 0.09 * np.clip(t - MAINT_DAYS, 0, losing_days)
    w = np.round(tissue + rng.normal(0, 0.2, N), 1)
    intake = np.where(t < MAINT_DAYS, 2500.0, 1900.0) + rng.normal(0, 150, N)
    steps = 9000.0 + rng.normal(0, 1500, N)
    hunger = np.where(t < MAINT_DAYS + 42, 4.0, 6.0) + rng.normal(0, 0.5, N)
    return PlateauInputs(
        weight_kg=w,
        intake_kcal=intake,
        steps=steps,
        hunger=hunger,
        energy=np.full(N, np.nan),
        robust_weights=None,
        current_weight_kg=float(tissue[-1]),
        phase_kind="deficit",
        phase_start=MAINT_DAYS,
        deficit_start=MAINT_DAYS,
        target_kcal=1900.0,
        days_since_break_end=None,
        fat_ref_kg=30.0,
        weight_ref_kg=90.0,
        fat_se_kg=2.5,
        baseline=Baseline(2500.0, 80.0, 90.0, 30.0, 2500.0, 1800.0),
        tdee_now_kcal=1900.0 if stall else 2450.0,
        tdee_now_sd_kcal=100.0,
        resting_now_kcal=1750.0,
        sex="female",
        height_cm=168.0,
        minor=False,
        pregnant=False,
        bmi_kg_m2=30.0,
    )


def test_a_stall_is_found_and_not_blamed_on_intake_or_steps() -> None:
    got = assess_plateau(_inputs(stall=True))
    assert got.status.status == "stalled"
    assert got.planned_source == "target"
    assert got.status.planned_pct_per_week is not None
    assert -0.8 < got.status.planned_pct_per_week < -0.4
    assert got.causes is not None
    change = got.causes.change_kcal.value
    assert change is not None
    assert change == pytest.approx(-660.0, abs=150.0)  # hand: 0.09 kg/day x about 7300 kcal/kg
    assert got.causes.largest in ("metabolic", "logging")
    assert abs(got.causes.part("intake").kcal.value or 0.0) < 120.0
    assert abs(got.causes.part("activity").kcal.value or 0.0) < 60.0
    assert got.hunger_change == pytest.approx(2.0, abs=0.5)  # invented: 4 -> 6
    codes = [o.code for o in got.options.options]
    assert "extra-steps" in codes
    assert got.gap_kcal is not None and got.gap_kcal > 300.0


def test_steady_loss_is_on_track() -> None:
    got = assess_plateau(_inputs(stall=False))
    assert got.status.status == "on-track"
    assert got.causes is not None
    assert got.causes.change_kcal.value == pytest.approx(0.0, abs=150.0)


def test_not_a_deficit_and_special_groups() -> None:
    maint = dataclasses.replace(_inputs(stall=True), phase_kind="maintenance")
    got = assess_plateau(maint)
    assert got.status.status == "not-in-deficit"
    assert got.causes_reason == "not-in-deficit"
    minor = dataclasses.replace(_inputs(stall=True), minor=True)
    got = assess_plateau(minor)
    assert got.options.options == ()
    assert got.options.cautions == ("refer-practitioner", "minor")


def test_without_target_the_plan_is_the_phase_own_early_rate() -> None:
    got = assess_plateau(dataclasses.replace(_inputs(stall=True), target_kcal=None))
    assert got.planned_source == "early-rate"
    # early weeks lose 0.09 kg/day at about 88 kg: -0.72 %/week (hand)
    assert got.status.planned_pct_per_week == pytest.approx(-0.72, abs=0.12)
    assert got.status.status == "stalled"


def test_short_phase_is_too_early() -> None:
    short = dataclasses.replace(_inputs(stall=True), phase_start=N - 15, deficit_start=N - 15)
    got = assess_plateau(short)
    assert got.status.status == "too-early"
    assert got.causes is None
    assert got.causes_reason == "phase-too-short"


def _noisy(stall_after_days: int | None, seed: int) -> PlateauInputs:
    """A 126-day deficit on noisy weigh-ins (SD 1.2 kg) against a small plan."""
    n = MAINT_DAYS + 126
    rng = np.random.default_rng(seed)
    t = np.arange(n, dtype=float)
    losing = 126 if stall_after_days is None else stall_after_days
    tissue = 90.0 - 0.09 * np.clip(t - MAINT_DAYS, 0, losing)
    return dataclasses.replace(
        _inputs(stall=True),
        weight_kg=np.round(tissue + rng.normal(0, 1.2, n), 1),
        intake_kcal=np.where(t < MAINT_DAYS, 2500.0, 1900.0) + rng.normal(0, 150, n),
        steps=9000.0 + rng.normal(0, 1500, n),
        hunger=np.full(n, np.nan),
        current_weight_kg=float(tissue[-1]),
        target_kcal=2150.0,
    )


def test_a_long_stall_is_decided_over_its_longer_span() -> None:
    # flat for the last 84 days: four noisy weeks often cannot tell, six or eight can
    got = [assess_plateau(_noisy(42, seed)).status for seed in range(12)]
    assert all(s.status in ("stalled", "too-few-data") for s in got)
    assert sum(s.status == "stalled" for s in got) >= 9
    longer = [s for s in got if s.window_days is not None and s.window_days > 28]
    assert len(longer) >= 3
    assert all(s.status == "stalled" and s.window_days in (42, 56) for s in longer)


def test_the_longer_span_does_not_invent_a_stall() -> None:
    # a steady 0.09 kg/day loss (about 0.7 %/week) on the same noise is never "stalled"
    got = [assess_plateau(_noisy(None, seed)).status for seed in range(12)]
    assert not any(s.status == "stalled" for s in got)


def test_no_step_option_for_a_client_who_logs_no_steps() -> None:
    """The same stall without logged steps: the activity part is not measured and no
    option asks for more steps (the cost per step needs a step count to add to)."""
    import dataclasses

    got = assess_plateau(dataclasses.replace(_inputs(stall=True), steps=np.full(N, np.nan)))
    assert got.status.status == "stalled"
    codes = [o.code for o in got.options.options]
    assert "extra-steps" not in codes and "intake-for-planned-rate" in codes
