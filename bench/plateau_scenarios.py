"""Simulated clients whose stall has a known cause, for the plateau benchmark.

This generator is deliberately *not* the estimator's own model.  The estimators
use the Hall et al. 2011 expenditure terms (gammaF 3.2, gammaL 22 kcal/kg/day,
delta x weight), Forbes' fat/lean partition with Hall's tissue energies
(9440/1816 kcal/kg), the ACSM walking cost per step and the Hall adaptive
thermogenesis (betaAT 0.14, tauAT 14 days).  Here instead (all invented, in the
range the literature describes, none a check value):

* resting expenditure 500 + 22 x lean + 2.5 x fat (a Cunningham 1980-like form
  with a small fat term); thermic effect 8-12 % of true intake per client;
  non-step activity 2-4 kcal/kg/day; steps cost 0.00030-0.00045 kcal/kg/step;
* tissue lost has a per-client fat share of 0.65-0.90 at 9400 kcal/kg fat and
  1000 kcal/kg lean (no Forbes curve);
* a base adaptation -k x cut x (1 - exp(-t/tau)) with k 0.04-0.12 and tau 7-28 days;
* glycogen with its water relaxes towards -g x (maintenance - 3-day mean intake),
  g 1.2-2.5 g per kcal/day, time constant 2-5 days, capped at -2.0/+0.8 kg;
  food mass and sodium water of high days, 0.35-0.55 kg per 1000 kcal above plan,
  time constant 1.5-3 days;
* weigh-ins with AR(1) water (phi 0.3-0.8), white noise, a weekly rhythm,
  10-25 % missing, rounded to 0.1 kg; intake logs with day-to-day error,
  constant under-reporting in 40 % of clients, 8-20 % of days unlogged.

Scenarios: ``intake-creep`` (true and logged intake rise), ``activity-drop`` (steps
fall), ``metabolic`` (an extra adaptation builds up), ``logging-drift`` (true intake
rises but the log does not show it: unlogged high days, or, in 30 % of clients,
smaller entries), ``water-weekend`` (two or three high days just before the report
date, otherwise on plan) and ``no-stall``; ``fast-loss`` (a deeper cut, on plan) adds
clients losing 0.5 %/week or more for the false-stall check.  A cause ramps in between
the end of the phase's first weeks (deficit day 42) and the start of the recent window, sized
from a first pass without it to close 92-100 % of the recent deficit (a stall).

Invented data for testing only; no real person's data.
"""

from __future__ import annotations

import datetime as dt
import math
from dataclasses import dataclass, field

import numpy as np

SCENARIOS: tuple[str, ...] = (
    "intake-creep",
    "activity-drop",
    "metabolic",
    "logging-drift",
    "water-weekend",
    "no-stall",
)
# Not one of the six scenarios: clients losing fast on plan, enough of them to
# test the false-stall rate (clients losing 0.5 %/week or more called "stalled").
EXTRA_SCENARIOS: tuple[str, ...] = ("fast-loss",)
CAUSE_OF: dict[str, str | None] = {
    "intake-creep": "intake",
    "activity-drop": "activity",
    "metabolic": "metabolic",
    "logging-drift": "logging",
    "water-weekend": None,
    "no-stall": None,
    "fast-loss": None,
}
RECENT_DAYS = 28
EARLY_FIRST, EARLY_DAYS = 14, 28  # deficit days 14..41 (after the glycogen weeks)
RAMP_START = EARLY_FIRST + EARLY_DAYS  # the cause builds after the early window

FAT_KCAL_PER_KG = 9400.0
LEAN_KCAL_PER_KG = 1000.0


@dataclass
class Person:
    sex: str
    age: int
    height_cm: float
    fat_kg: float
    lean_kg: float
    other_kg: float  # glycogen pool and the rest at maintenance, constant
    tef: float
    neat_kcal_per_kg: float
    step_kcal_per_kg: float
    fat_share: float
    at_k: float
    at_tau: float
    glyco_g_per_kcal: float
    glyco_tau: float
    gut_kg_per_kcal: float
    gut_tau: float
    steps0: float


@dataclass
class PlateauSim:
    scenario: str
    cause: str | None
    status_truth: str  # "stalled", "slower", "on-track", "likely-water"
    accepted: tuple[str, ...]
    sex: str
    age: int
    height_cm: float
    dates: np.ndarray
    weight_kg: np.ndarray
    intake_kcal: np.ndarray
    steps: np.ndarray
    maintenance_days: int
    deficit_start: int  # index of the deficit's first day
    target_kcal: float
    fat_start_est_kg: float  # fat mass at the start as a skinfold session would give it
    true_parts: dict[str, float] = field(default_factory=dict)  # effect on deficit, kcal/day
    true_recent_rate_pct: float = math.nan
    # the same client's recent tissue rate without the cause (the first pass)
    rate_without_cause_pct: float = math.nan
    true_deficit_change_kcal: float = math.nan
    # the noise-free scale (tissue + glycogen/water + food mass) over the recent window:
    # least-squares slope, % of body weight/week (what a perfect trend would read)
    true_scale_rate_pct: float = math.nan


def _person(rng: np.random.Generator) -> Person:
    sex = "female" if rng.random() < 0.5 else "male"
    age = int(rng.integers(24, 60))
    height = float(rng.normal(178, 7) if sex == "male" else rng.normal(165, 6))
    bmi = float(rng.uniform(25, 36))
    w = bmi * (height / 100) ** 2
    bf = float(np.clip(rng.uniform(0.25, 0.35) + (0.08 if sex == "female" else 0.0), 0.18, 0.48))
    fat = w * bf
    other = 1.5
    return Person(
        sex=sex,
        age=age,
        height_cm=height,
        fat_kg=fat,
        lean_kg=w - fat - other,
        other_kg=other,
        tef=float(rng.uniform(0.08, 0.12)),
        neat_kcal_per_kg=float(rng.uniform(2.0, 4.0)),
        step_kcal_per_kg=float(rng.uniform(0.00030, 0.00045)),
        fat_share=float(rng.uniform(0.65, 0.90)),
        at_k=float(rng.uniform(0.04, 0.12)),
        at_tau=float(rng.uniform(7, 28)),
        glyco_g_per_kcal=float(rng.uniform(1.2, 2.5)) / 1000.0,
        glyco_tau=float(rng.uniform(2, 5)),
        gut_kg_per_kcal=float(rng.uniform(0.35, 0.55)) / 1000.0,
        gut_tau=float(rng.uniform(1.5, 3.0)),
        steps0=float(rng.uniform(7000, 11000)),
    )


def _expenditure_wo_tef(p: Person, fat: float, lean: float, weight: float, steps: float) -> float:
    resting = 500.0 + 22.0 * lean + 2.5 * fat
    return resting + p.neat_kcal_per_kg * weight + p.step_kcal_per_kg * weight * steps


@dataclass
class _Run:
    weight: np.ndarray  # body mass incl. glycogen/water, no noise
    tissue: np.ndarray  # fat + lean
    energy_gap: np.ndarray  # E - I_true (true deficit), per day
    e_size: np.ndarray  # expenditure from body size at the day's steps0 (resting + NEAT)
    e_steps: np.ndarray
    at: np.ndarray
    fat: np.ndarray
    lean: np.ndarray


def _run(
    p: Person,
    intake_true: np.ndarray,
    steps_true: np.ndarray,
    extra_at: np.ndarray,
    maint_kcal: float,
    cut_kcal: float,
    deficit_start: int,
) -> _Run:
    n = len(intake_true)
    fat, lean = p.fat_kg, p.lean_kg
    glyco = 0.0
    gut = 0.0
    out = {
        k: np.empty(n) for k in ("weight", "tissue", "gap", "size", "steps", "at", "fat", "lean")
    }
    rho = p.fat_share * FAT_KCAL_PER_KG + (1 - p.fat_share) * LEAN_KCAL_PER_KG
    plan = np.where(np.arange(n) >= deficit_start, maint_kcal - cut_kcal, maint_kcal)
    for t in range(n):
        w = fat + lean + p.other_kg + glyco + gut
        days_in = t - deficit_start
        at = -p.at_k * cut_kcal * (1 - math.exp(-days_in / p.at_tau)) if days_in >= 0 else 0.0
        at += extra_at[t]
        size = 500.0 + 22.0 * lean + 2.5 * fat + p.neat_kcal_per_kg * w
        st = p.step_kcal_per_kg * w * steps_true[t]
        e = size + st + p.tef * intake_true[t] + at
        gap = e - intake_true[t]
        out["weight"][t] = w
        out["tissue"][t] = fat + lean
        out["gap"][t] = gap
        out["size"][t] = size
        out["steps"][t] = st
        out["at"][t] = at
        out["fat"][t] = fat
        out["lean"][t] = lean
        dm = -gap / rho
        fat += p.fat_share * dm
        lean += (1 - p.fat_share) * dm
        i3 = float(np.mean(intake_true[max(t - 2, 0) : t + 1]))
        g_target = float(np.clip(-p.glyco_g_per_kcal * (maint_kcal - i3), -2.0, 0.8))
        glyco += (g_target - glyco) / p.glyco_tau
        gut += p.gut_kg_per_kcal * max(intake_true[t] - plan[t] - 400.0, 0.0) - gut / p.gut_tau
    return _Run(
        out["weight"],
        out["tissue"],
        out["gap"],
        out["size"],
        out["steps"],
        out["at"],
        out["fat"],
        out["lean"],
    )


def _ramp(n: int, start: int, end: int) -> np.ndarray:
    t = np.arange(n, dtype=float)
    return np.clip((t - start) / max(end - start, 1), 0.0, 1.0)


def simulate_plateau(
    rng: np.random.Generator, scenario: str, month_end: dt.date = dt.date(2026, 11, 30)
) -> PlateauSim:
    """One simulated client for ``scenario`` (one of :data:`SCENARIOS`)."""
    if scenario not in SCENARIOS + EXTRA_SCENARIOS:
        raise ValueError(f"unknown scenario {scenario!r}")
    p = _person(rng)
    maint_days = int(rng.integers(21, 36))
    def_days = int(rng.integers(12, 18)) * 7
    n = maint_days + def_days
    d0 = maint_days
    if scenario == "activity-drop":
        p.steps0 = float(rng.uniform(13000, 16000))
    w0 = p.fat_kg + p.lean_kg + p.other_kg
    base = _expenditure_wo_tef(p, p.fat_kg, p.lean_kg, w0, p.steps0)
    maint = base / (1 - p.tef)
    # activity: a smaller cut, or closing it would take implausibly many steps; no stall:
    # deeper, so that the false-stall check has clients losing 0.5 %/week or more
    cut = float(
        rng.uniform(350, 500)
        if scenario == "activity-drop"
        else rng.uniform(550, 900)
        if scenario == "no-stall"
        else rng.uniform(750, 1100)
        if scenario == "fast-loss"
        else rng.uniform(450, 750)
    )
    # constant under-reporting in 40 % of clients; the plan is met in the log's terms
    u0 = 0.0 if rng.random() < 0.6 else float(rng.uniform(0.05, 0.2))
    target = round((maint - cut) * (1 - u0), -1)
    dates = np.arange(
        np.datetime64(month_end - dt.timedelta(days=n - 1), "D"),
        np.datetime64(month_end, "D") + 1,
    )
    dow = (dates.view("int64") + 3) % 7  # 0 = Monday
    weekend = (dow >= 5).astype(float)
    plan = np.where(np.arange(n) >= d0, maint - cut, maint)
    day_noise = rng.normal(0, 200, n) + 150 * weekend - 150 * 2 / 7
    intake_true = plan + day_noise
    steps_noise = rng.normal(0, 1800, n)
    steps_true = np.full(n, p.steps0)
    extra_at = np.zeros(n)
    recent0 = n - RECENT_DAYS
    ramp = _ramp(n, d0 + RAMP_START, recent0)

    # first pass without a cause: how large is the recent deficit?
    first = _run(p, intake_true, steps_true, extra_at, maint, cut, d0)
    d_recent0 = float(first.energy_gap[recent0:].mean())
    cause = CAUSE_OF[scenario]
    size = d_recent0 * rng.uniform(0.92, 1.0)
    unlogged = np.zeros(n, dtype=bool)
    under = np.full(n, u0)
    drift_kind = None
    if scenario == "intake-creep":
        intake_true = intake_true + size * ramp
    elif scenario == "activity-drop":
        w_recent = float(first.weight[recent0:].mean())
        steps_true = steps_true - size / (p.step_kcal_per_kg * w_recent) * ramp
    elif scenario == "metabolic":
        extra_at = -size * ramp
    elif scenario == "logging-drift":
        if rng.random() < 0.7:
            drift_kind = "unlogged-high-days"
            q_max = float(rng.uniform(0.25, 0.4))
            high = rng.random(n) < q_max * ramp
            intake_true = intake_true + np.where(high, size / q_max, 0.0)
            unlogged = high
        else:
            drift_kind = "smaller-entries"
            intake_true = intake_true + size * ramp
            # the log stays at the plan: the extra is not written down
            under = 1 - (1 - under) * plan / (plan + size * ramp)
    elif scenario == "water-weekend":
        k = int(rng.integers(2, 4))
        gap_end = int(rng.integers(0, 2))
        last = n - 1 - gap_end
        intake_true[last - k + 1 : last + 1] += rng.uniform(1500, 2200, k)
    run = _run(p, intake_true, steps_true, extra_at, maint, cut, d0)

    # what the client logs
    phi = float(rng.uniform(0.3, 0.8))
    ar_sd = float(rng.uniform(0.15, 0.35))
    innov = ar_sd * math.sqrt(1 - phi * phi)
    water = np.empty(n)
    x = rng.normal(0, ar_sd)
    for t in range(n):
        water[t] = x
        x = phi * x + rng.normal(0, innov)
    amp = float(rng.uniform(0.0, 0.25))
    rhythm = amp * (np.array([1.0, 0.4, -0.2, -0.5, -0.6, -0.4, 0.5])[dow] - 0.0286)
    weigh = np.round(run.weight + water + rhythm + rng.normal(0, rng.uniform(0.15, 0.3), n), 1)
    weigh[rng.random(n) < rng.uniform(0.10, 0.25)] = np.nan
    weigh[0] = round(float(run.weight[0] + water[0]), 1)
    logged = np.round(intake_true * (1 - under) * np.exp(rng.normal(0, 0.07, n)), -1)
    logged[(rng.random(n) < rng.uniform(0.08, 0.2)) | unlogged] = np.nan
    steps = np.clip(np.round(steps_true + steps_noise, -1), 300, None)
    steps[rng.random(n) < 0.12] = np.nan

    # truth between the windows: effect of each cause on the realised deficit
    e0, e1 = d0 + EARLY_FIRST, d0 + EARLY_FIRST + EARLY_DAYS
    r0 = recent0

    def mean(a: np.ndarray, lo: int, hi: int) -> float:
        return float(np.mean(a[lo:hi]))

    logged_honest = intake_true * (1 - under)
    d_true_intake = mean(intake_true, r0, n) - mean(intake_true, e0, e1)
    d_logged_mean = mean(logged_honest, r0, n) - mean(logged_honest, e0, e1)
    # activity: the change in steps at the recent weight; the change in the cost of the
    # early steps with the lighter body belongs to body size (as in the estimators' split)
    w_r = mean(run.weight, r0, n)
    act = p.step_kcal_per_kg * w_r * (mean(steps_true, r0, n) - mean(steps_true, e0, e1))
    d_steps_cost = mean(run.e_steps, r0, n) - mean(run.e_steps, e0, e1)
    parts = {
        "intake": -(1 - p.tef) * d_logged_mean,
        "body-size": mean(run.e_size, r0, n) - mean(run.e_size, e0, e1) + d_steps_cost - act,
        "activity": act,
        "metabolic": mean(run.at, r0, n) - mean(run.at, e0, e1),
        "logging": -(1 - p.tef) * (d_true_intake - d_logged_mean),
    }
    if drift_kind == "unlogged-high-days":
        # the logged mean covers logged days only; the unlogged high days are the drift
        lm = np.where(unlogged, np.nan, logged_honest)
        d_lm = float(np.nanmean(lm[r0:n]) - np.nanmean(lm[e0:e1]))
        parts["intake"] = -(1 - p.tef) * d_lm
        parts["logging"] = -(1 - p.tef) * (d_true_intake - d_lm)
    tissue_rate = (run.tissue[n - 1] - run.tissue[r0]) / (n - 1 - r0) * 7
    scale_slope = float(np.polyfit(np.arange(n - r0, dtype=float), run.weight[r0:], 1)[0])
    rate0 = (first.tissue[n - 1] - first.tissue[r0]) / (n - 1 - r0) * 7
    status = "on-track"
    accepted: tuple[str, ...] = ("on-track",)
    if cause is not None:
        status = "stalled"
        accepted = (status,)
    elif scenario == "water-weekend":
        status = "likely-water"
        accepted = ("likely-water", "on-track")
    fat_est = p.fat_kg * float(np.exp(rng.normal(0, 0.08)))
    return PlateauSim(
        scenario=scenario,
        cause=cause,
        status_truth=status,
        accepted=accepted,
        sex=p.sex,
        age=p.age,
        height_cm=p.height_cm,
        dates=dates,
        weight_kg=weigh,
        intake_kcal=logged,
        steps=steps,
        maintenance_days=maint_days,
        deficit_start=d0,
        target_kcal=float(target),
        fat_start_est_kg=fat_est,
        true_parts=parts,
        true_recent_rate_pct=100 * tissue_rate / float(run.weight[r0:].mean()),
        rate_without_cause_pct=100 * rate0 / float(first.weight[r0:].mean()),
        true_deficit_change_kcal=mean(run.energy_gap, r0, n) - mean(run.energy_gap, e0, e1),
        true_scale_rate_pct=100 * 7 * scale_slope / float(run.weight[r0:].mean()),
    )
