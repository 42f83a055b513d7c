#!/usr/bin/env python3
"""Write the sample client book ``sample_inputs/`` (invented data, deterministic).

The book belongs to an invented practice, *Kestrel Row Nutrition*, and holds
seventeen invented clients with about four months of daily logs (August to November
2026) for the report month 2026-11.  Each client's data comes from a small
energy-balance simulation (Mifflin-St Jeor resting energy times an activity
factor, a slow adaptive fall in expenditure during deficits, glycogen/water
shifts at phase changes, 7700 kcal per kg of tissue) observed through the
noise a coach sees in real logs: day-to-day water swings with a weekly rhythm,
the odd salty-meal spike, missed days, under-logged intake, rounded scales and
calipers.  Exactly one client (c007) carries deliberate data problems, listed in
``sample_inputs/EXPECTED_PROBLEMS.md``, which this script also writes.  One clean
client (c008) comes back from a diet break with a steeper deficit, and her logged
intake in November is under the 1,200 kcal/day floor for women, so the demo shows
a safety flag; her data are otherwise clean (no reader warning).  Weigh-ins are
morning weights, before the day's eating.  The simulation's own expenditure and
adaptation are kept in ``Simulated`` (never written) to check the analysis.

Every client draws from its own seeded ``numpy.random.Generator``, and XLSX
files are saved with fixed timestamps, so running the script twice gives
byte-identical files::

    python scripts/make_sample_inputs.py            # writes ./sample_inputs
    python scripts/make_sample_inputs.py --out DIR  # anywhere else
"""

from __future__ import annotations

import argparse
import csv
import datetime as dt
import io
import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
from openpyxl import Workbook

from reportgen.scaffold import save_workbook

REPO = Path(__file__).resolve().parent.parent
REPORT_MONTH = "2026-11"
MONTH_END = dt.date(2026, 11, 30)
SEED = 20261130
KCAL_PER_KG_TISSUE = 7700.0  # labelled simplification (common practice, no single source)
KJ_PER_KCAL = 4.184
LB_PER_KG = 2.2046226218

# Skinfold sites per equation and sex, with typical starting values [mm] (invented profiles).
SITE_PROFILES: dict[tuple[str, str], dict[str, float]] = {
    ("jp3", "female"): {"triceps": 22.0, "suprailiac": 19.0, "thigh": 30.0},
    ("jp3", "male"): {"chest": 15.0, "abdominal": 27.0, "thigh": 17.0},
    ("jp7", "female"): {
        "chest": 11.0,
        "midaxillary": 13.0,
        "triceps": 21.0,
        "subscapular": 15.0,
        "abdominal": 24.0,
        "suprailiac": 17.0,
        "thigh": 27.0,
    },
    ("jp7", "male"): {
        "chest": 14.0,
        "midaxillary": 17.0,
        "triceps": 11.0,
        "subscapular": 17.0,
        "abdominal": 27.0,
        "suprailiac": 19.0,
        "thigh": 15.0,
    },
    ("dw4", "female"): {"biceps": 9.0, "triceps": 21.0, "subscapular": 15.0, "suprailiac": 17.0},
}


@dataclass(frozen=True)
class PhaseSpec:
    name: str
    start: dt.date
    end: dt.date | None
    kind: str
    deficit: float = 0.0  # fraction below maintenance (deficit phases)
    write_target: bool = False  # whether the coach wrote a target_kcal for it


@dataclass(frozen=True)
class ClientSpec:
    client_id: str
    name: str
    sex: str  # canonical
    sex_written: str  # as typed in the roster
    birth_date: dt.date
    height_cm: float
    email: str
    start_weight_kg: float
    body_fat_pct: float
    pal: float
    first_day: dt.date
    last_day: dt.date
    phases: tuple[PhaseSpec, ...]
    fmt: str = "csv"  # csv or xlsx daily log
    phases_in_workbook: bool = False
    height_in: float | None = None  # roster gives inches instead of cm
    weight_unit: str = "kg"
    energy_unit: str = "kcal"
    missing_frac: float = 0.1
    underlog: float = 0.08
    water_sd_kg: float = 0.5
    equation: str = "jp3"
    caliper_step_mm: float = 0.5
    readings: int = 2
    steps_base: float | None = 8000.0
    ratings: bool = True
    sleep_step_h: float | None = None  # None: no sleep column
    goal_weight_kg: float | None = None
    referral_email: str = ""
    bom: bool = False
    extra_daily: dict[str, str] = field(default_factory=dict)
    intake_logged: bool = True  # False: a weight-only client (no intake column)
    skinfolds: bool = True
    labelled_headers: bool = False  # "Weight (kg)", "Calories (kcal)", ... instead of weight_kg
    day_first: bool = False  # dates written DD/MM/YYYY
    # A stall with one known cause, building over four weeks from ``stall_start``:
    # "intake" (eats more, logs it), "activity" (walks less), "metabolic" (expenditure
    # falls beyond body size) or "logging" (high days left unlogged).
    stall: str | None = None
    stall_start: dt.date | None = None
    stall_kcal: float = 0.0
    # Adaptive fall in expenditure during a deficit: approaches ``adapt_max`` of TDEE with
    # time constant ``adapt_days`` (most clients: 6 % over about three months).
    adapt_max: float = 0.06
    adapt_days: float = 90.0


D = dt.date
# fmt: off
CLIENTS: tuple[ClientSpec, ...] = (
    ClientSpec(
        "c001", "Maren Holloway", "female", "female", D(1992, 3, 18), 168.0,
        "maren.holloway@example.org", 78.4, 33.0, 1.55, D(2026, 8, 1), D(2026, 11, 30),
        (
            PhaseSpec("Baseline weeks", D(2026, 8, 1), D(2026, 8, 21), "maintenance"),
            PhaseSpec("Autumn fat loss", D(2026, 8, 22), None, "deficit", 0.22, True),
        ),
        missing_frac=0.08, underlog=0.05, water_sd_kg=0.45, caliper_step_mm=0.2,
        steps_base=8500, sleep_step_h=0.1, goal_weight_kg=69.0,
    ),
    ClientSpec(
        "c002", "Dariusz Wełna", "male", "male", D(1985, 6, 2), 179.0,
        "d.welna@example.com", 96.8, 27.0, 1.6, D(2026, 8, 1), D(2026, 11, 30),
        (
            PhaseSpec("Baseline", D(2026, 8, 1), D(2026, 8, 21), "maintenance"),
            PhaseSpec("Block 1", D(2026, 8, 22), D(2026, 10, 11), "deficit", 0.25, True),
            PhaseSpec("Two-week break", D(2026, 10, 12), D(2026, 10, 25), "break"),
            PhaseSpec("Block 2", D(2026, 10, 26), None, "deficit", 0.23, True),
        ),
        fmt="xlsx", phases_in_workbook=True, missing_frac=0.12, underlog=0.10,
        water_sd_kg=0.6, equation="jp7", readings=3, steps_base=7200,
    ),
    ClientSpec(
        "c003", "Priya Raman", "female", "F", D(1997, 9, 25), 162.0,
        "priya.raman@example.org", 71.2, 34.0, 1.45, D(2026, 8, 1), D(2026, 11, 29),
        (PhaseSpec("Fat-loss phase", D(2026, 8, 1), None, "deficit", 0.20, False),),
        missing_frac=0.18, underlog=0.15, water_sd_kg=0.5, steps_base=6200,
        sleep_step_h=0.5, referral_email="referrals.harbour-gp@example.org",
    ),
    ClientSpec(
        "c004", "Hélène Marchetti", "female", "female", D(1974, 1, 30), 165.0,
        "helene.marchetti@example.com", 74.6, 37.0, 1.45, D(2026, 8, 1), D(2026, 11, 30),
        (
            PhaseSpec("Settling-in weeks", D(2026, 8, 1), D(2026, 8, 21), "maintenance"),
            PhaseSpec("Steady loss", D(2026, 8, 22), None, "deficit", 0.18, True),
        ),
        fmt="xlsx", missing_frac=0.10, underlog=0.03, water_sd_kg=0.45, equation="dw4",
        caliper_step_mm=0.2, steps_base=9500, sleep_step_h=0.1, goal_weight_kg=67.0,
    ),
    ClientSpec(
        "c005", "Kofi Mensah-Adjei", "male", "M", D(1988, 11, 7), 179.07,
        "kofi.mensah-adjei@example.com", 99.5, 26.0, 1.6, D(2026, 8, 4), D(2026, 11, 30),
        (
            PhaseSpec("Maintenance check", D(2026, 8, 4), D(2026, 8, 24), "maintenance"),
            PhaseSpec("Lean-out", D(2026, 8, 25), None, "deficit", 0.24, True),
        ),
        height_in=70.5, weight_unit="lb", missing_frac=0.09, underlog=0.08,
        water_sd_kg=0.65, steps_base=10500, goal_weight_kg=88.0,
    ),
    ClientSpec(
        "c006", "Saoirse Quinlan", "female", "female", D(1981, 4, 14), 170.0,
        "saoirse.q@example.org", 82.3, 36.0, 1.5, D(2026, 8, 1), D(2026, 11, 30),
        (
            PhaseSpec("Summer-to-autumn cut", D(2026, 8, 1), D(2026, 10, 25), "deficit", 0.20),
            PhaseSpec("Holding steady", D(2026, 10, 26), None, "maintenance"),
        ),
        fmt="xlsx", energy_unit="kJ", missing_frac=0.15, underlog=0.12, water_sd_kg=0.55,
        equation="jp7", readings=2, steps_base=7800, sleep_step_h=0.5,
    ),
    ClientSpec(
        "c007", "Callum Reid", "male", "male", D(1993, 8, 21), 183.0,
        "callum.reid@example.com", 89.6, 22.0, 1.65, D(2026, 8, 1), D(2026, 11, 30),
        (PhaseSpec("Cut", D(2026, 8, 1), None, "deficit", 0.25, True),),
        missing_frac=0.10, underlog=0.10, water_sd_kg=0.5, steps_base=11000,
        extra_daily={"mood": "rating"},
    ),
    ClientSpec(
        "c008", "Tamsin Greaves", "female", "female", D(1999, 12, 3), 171.0,
        "tamsin.greaves@example.org", 73.9, 31.0, 1.6, D(2026, 8, 6), D(2026, 11, 30),
        (
            PhaseSpec("Phase A", D(2026, 8, 10), D(2026, 9, 27), "deficit", 0.28, True),
            PhaseSpec("Diet break", D(2026, 9, 28), D(2026, 10, 11), "break"),
            # back from the break harder: logged intake ends up under the 1,200 kcal/day
            # floor for women, so the demo shows a flag page (a clean client's flag)
            PhaseSpec("Phase B", D(2026, 10, 12), None, "deficit", 0.39, True),
        ),
        energy_unit="kJ", missing_frac=0.22, underlog=0.18, water_sd_kg=0.6, readings=3,
        steps_base=9000, sleep_step_h=0.1, bom=True, goal_weight_kg=65.0,
    ),
    ClientSpec(
        "c009", "Rafael Iturbe", "male", "male", D(1962, 4, 9), 176.0,
        "rafael.iturbe@example.com", 91.0, 29.0, 1.45, D(2026, 8, 1), D(2026, 11, 30),
        (
            PhaseSpec("Baseline", D(2026, 8, 1), D(2026, 8, 28), "maintenance"),
            PhaseSpec("Gentle deficit", D(2026, 8, 29), None, "deficit", 0.17, True),
        ),
        fmt="xlsx", phases_in_workbook=True, missing_frac=0.06, underlog=0.04,
        water_sd_kg=0.45, equation="jp7", caliper_step_mm=0.2, steps_base=6800,
        ratings=False, referral_email="dr.amara.lind@example.org",
    ),
    ClientSpec(
        "c010", "Nadia Vos", "female", "female", D(2007, 2, 11), 166.0,
        "nadia.vos@example.com", 68.5, 29.0, 1.6, D(2026, 8, 8), D(2026, 11, 28),
        (PhaseSpec("First cut", D(2026, 8, 15), None, "deficit", 0.15, False),),
        missing_frac=0.24, underlog=0.12, water_sd_kg=0.55, steps_base=None,
        sleep_step_h=0.5,
    ),
    ClientSpec(
        "c011", "Ines Albrecht", "female", "female", D(1979, 6, 23), 172.0,
        "ines.albrecht@example.org", 86.2, 38.0, 1.45, D(2026, 8, 3), D(2026, 11, 30),
        (PhaseSpec("Weigh-in only cut", D(2026, 8, 3), None, "deficit", 0.18, False),),
        missing_frac=0.25, underlog=0.0, water_sd_kg=0.5, steps_base=None, ratings=False,
        intake_logged=False, skinfolds=False,
    ),
    ClientSpec(
        "c012", "Tomasz Brennan", "male", "male", D(1990, 10, 4), 181.0,
        "t.brennan@example.com", 92.4, 25.0, 1.6, D(2026, 8, 1), D(2026, 11, 30),
        (
            PhaseSpec("Baseline", D(2026, 8, 1), D(2026, 8, 21), "maintenance"),
            PhaseSpec("Winter cut", D(2026, 8, 22), None, "deficit", 0.21, True),
        ),
        missing_frac=0.10, underlog=0.07, water_sd_kg=0.55, steps_base=9200,
        sleep_step_h=0.5, labelled_headers=True, day_first=True,
    ),
    # Four clients whose progress stalled in the autumn, each for one main reason.
    ClientSpec(
        "c013", "Beatriz Carvalho", "female", "female", D(1990, 7, 12), 164.0,
        "beatriz.carvalho@example.org", 81.0, 36.0, 1.5, D(2026, 8, 1), D(2026, 11, 30),
        (
            PhaseSpec("Baseline", D(2026, 8, 1), D(2026, 8, 21), "maintenance"),
            PhaseSpec("Autumn cut", D(2026, 8, 22), None, "deficit", 0.30, True),
        ),
        missing_frac=0.03, underlog=0.05, water_sd_kg=0.15, steps_base=8200,
        stall="intake", stall_start=D(2026, 10, 6), stall_kcal=480.0,
    ),
    ClientSpec(
        "c014", "Henrik Brandt", "male", "male", D(1983, 2, 27), 182.0,
        "henrik.brandt@example.com", 97.0, 27.0, 1.55, D(2026, 8, 1), D(2026, 11, 30),
        (
            PhaseSpec("Baseline", D(2026, 8, 1), D(2026, 9, 4), "maintenance"),
            PhaseSpec("Cut", D(2026, 9, 5), None, "deficit", 0.25, True),
        ),
        missing_frac=0.02, underlog=0.04, water_sd_kg=0.1, steps_base=16000,
        stall="activity", stall_start=D(2026, 10, 6), stall_kcal=400.0,
    ),
    ClientSpec(
        "c015", "Amara Okafor", "female", "female", D(1979, 10, 3), 170.0,
        "amara.okafor@example.org", 87.0, 38.0, 1.5, D(2026, 8, 1), D(2026, 11, 30),
        (
            PhaseSpec("Baseline", D(2026, 8, 1), D(2026, 8, 21), "maintenance"),
            PhaseSpec("Fat loss", D(2026, 8, 22), None, "deficit", 0.30, True),
        ),
        missing_frac=0.03, underlog=0.05, water_sd_kg=0.15, steps_base=7600,
        stall="metabolic", stall_start=D(2026, 10, 6), stall_kcal=500.0,
    ),
    ClientSpec(
        "c016", "Jonas Lindqvist", "male", "male", D(1995, 5, 19), 185.0,
        "jonas.lindqvist@example.com", 95.0, 25.0, 1.6, D(2026, 8, 1), D(2026, 11, 30),
        (
            PhaseSpec("Baseline", D(2026, 8, 1), D(2026, 8, 21), "maintenance"),
            PhaseSpec("Lean-down", D(2026, 8, 22), None, "deficit", 0.25, True),
        ),
        missing_frac=0.04, underlog=0.05, water_sd_kg=0.2, steps_base=9000,
        stall="logging", stall_start=D(2026, 10, 6), stall_kcal=520.0,
    ),
    # A client whose expenditure fell clearly more than her smaller body explains: a long,
    # fairly deep deficit after a four-week baseline, an adaptive fall towards 12 % of
    # expenditure within about a month, careful logs and steps that fall a little.
    ClientSpec(
        "c017", "Ilse Westerhof", "female", "female", D(1986, 12, 9), 169.0,
        "ilse.westerhof@example.org", 84.0, 37.0, 1.55, D(2026, 8, 1), D(2026, 11, 30),
        (
            PhaseSpec("Baseline", D(2026, 8, 1), D(2026, 8, 28), "maintenance"),
            PhaseSpec("Long cut", D(2026, 8, 29), None, "deficit", 0.27, True),
        ),
        missing_frac=0.03, underlog=0.04, water_sd_kg=0.2, steps_base=8800,
        sleep_step_h=0.1, goal_weight_kg=74.0, adapt_max=0.12, adapt_days=30.0,
    ),
)
# fmt: on

#: Header as a coach writes it -> the canonical column it is read as (for labelled_headers).
LABELLED_HEADERS = {
    "date": "Date",
    "weight_kg": "Weight (kg)",
    "intake_kcal": "Calories (kcal)",
    "steps": "Steps",
    "hunger": "Hunger",
    "energy": "Energy",
    "sleep_h": "Sleep (h)",
}

PROBLEM_CLIENT = "c007"


def age_on(birth: dt.date, on: dt.date) -> int:
    return on.year - birth.year - ((on.month, on.day) < (birth.month, birth.day))


def resting_kcal(weight_kg: float, height_cm: float, age: int, sex: str) -> float:
    """Mifflin-St Jeor resting energy expenditure [kcal/day]."""
    base = 10.0 * weight_kg + 6.25 * height_cm - 5.0 * age
    return base + (5.0 if sex == "male" else -161.0)


def phase_on(spec: ClientSpec, day: dt.date) -> PhaseSpec | None:
    for p in spec.phases:
        if p.start <= day and (p.end is None or day <= p.end):
            return p
    return None


def missing_days(rng: np.random.Generator, n: int, frac: float, max_run: int) -> np.ndarray:
    """Clustered missed days (two-state Markov chain), runs capped at ``max_run``."""
    stay = 0.35  # P(miss tomorrow | missed today)
    start = frac * (1.0 - stay) / (1.0 - frac)
    miss = np.zeros(n, dtype=bool)
    run = 0
    for i in range(1, n - 1):  # first and last day always logged
        p = stay if miss[i - 1] else start
        miss[i] = run < max_run and rng.random() < p
        run = run + 1 if miss[i] else 0
    return miss


@dataclass
class Simulated:
    days: list[dt.date]
    weight_kg: np.ndarray  # as the scale shows it (before unit conversion)
    intake_kcal: np.ndarray  # as logged
    steps: np.ndarray
    hunger: np.ndarray
    energy: np.ndarray
    sleep_h: np.ndarray
    mood: np.ndarray
    tissue_kg: np.ndarray
    logged: np.ndarray  # row present
    # truth, for checking the analysis (not written to the book)
    tdee_kcal: np.ndarray  # true expenditure
    adapt_frac: np.ndarray  # adaptive fall in expenditure as a fraction of the body-size TDEE


WEEKDAY_WATER_KG = np.array([0.22, 0.08, 0.0, -0.08, -0.14, -0.12, 0.06])  # Mon..Sun
WEEKDAY_INTAKE = np.array([0.96, 0.95, 0.96, 0.98, 1.04, 1.14, 1.07])
WEEKDAY_STEPS = np.array([1.05, 1.06, 1.04, 1.05, 1.0, 0.9, 0.82])


def simulate(spec: ClientSpec, rng: np.random.Generator) -> Simulated:
    n = (spec.last_day - spec.first_day).days + 1
    days = [spec.first_day + dt.timedelta(days=i) for i in range(n)]
    age = age_on(spec.birth_date, days[0])
    tissue = spec.start_weight_kg
    glyco = 0.0
    adapt = 0.0
    weeks_dieting = 0.0
    target = resting_kcal(tissue, spec.height_cm, age, spec.sex) * spec.pal
    current_phase: PhaseSpec | None = None
    ar = 0.0
    spike_left = 0.0
    prev_excess = 0.0
    rhythm = rng.uniform(0.6, 1.2)
    steps_person = rng.uniform(0.9, 1.1)
    sleep_base = rng.uniform(6.6, 7.6)
    hunger_base = rng.uniform(2.6, 3.8)
    energy_base = rng.uniform(6.6, 7.8)

    out = {k: np.full(n, np.nan) for k in ("w", "i", "s", "h", "e", "sl", "m", "t", "x", "a")}
    for k, day in enumerate(days):
        phase = phase_on(spec, day)
        kind = phase.kind if phase else "maintenance"
        mass = tissue + glyco  # the morning weigh-in, before the day's eating
        tdee = resting_kcal(mass, spec.height_cm, age, spec.sex) * spec.pal
        tdee *= 1.0 - adapt
        ramp = 0.0
        if spec.stall is not None and spec.stall_start is not None:
            ramp = min(max((day - spec.stall_start).days / 28.0, 0.0), 1.0)
        if spec.stall in ("activity", "metabolic"):
            tdee -= ramp * spec.stall_kcal
        out["x"][k] = tdee
        out["a"][k] = adapt
        if phase is not current_phase:
            current_phase = phase
            if kind == "deficit":
                target = tdee * (1.0 - phase.deficit)  # type: ignore[union-attr]
        if kind == "deficit":
            plan = target
            adapt += (spec.adapt_max - adapt) / spec.adapt_days
            weeks_dieting += 1.0 / 7.0
            glyco_target = -0.012 * spec.start_weight_kg
        else:
            plan = tdee * (1.03 if kind == "break" else 1.0)
            adapt += (0.015 - adapt) / 25.0
            weeks_dieting = max(0.0, weeks_dieting - (3.0 if kind == "break" else 1.0) / 7.0)
            glyco_target = 0.0
        wd = day.weekday()
        if spec.stall == "intake":
            plan += ramp * spec.stall_kcal
        eaten = plan * WEEKDAY_INTAKE[wd] * math.exp(rng.normal(0.0, 0.09))
        unlogged_high = spec.stall == "logging" and rng.random() < 0.45 * ramp
        if unlogged_high:  # a high day that does not make it into the log
            eaten += spec.stall_kcal / 0.45
        tissue += (eaten - tdee) / KCAL_PER_KG_TISSUE
        glyco += (glyco_target - glyco) / 4.0

        ar = 0.55 * ar + rng.normal(0.0, spec.water_sd_kg * math.sqrt(1 - 0.55**2))
        if spike_left > 0.05:
            spike, spike_left = spike_left, spike_left * 0.4
        elif rng.random() < 0.02:
            spike = rng.uniform(0.5, 1.1)
            spike_left = spike * 0.4
        else:
            spike = 0.0
        water = ar + rhythm * WEEKDAY_WATER_KG[wd] + 0.0004 * prev_excess + spike
        water = 1.4 * math.tanh(water / 1.4)  # moderate days unchanged, never beyond 1.4 kg
        prev_excess = eaten - plan
        out["t"][k] = mass
        out["w"][k] = mass + water

        under = spec.underlog + (0.05 if wd >= 5 else 0.0)
        out["i"][k] = eaten * (1.0 - under) * math.exp(rng.normal(0.0, 0.04))
        if unlogged_high:
            out["i"][k] = np.nan
        if spec.steps_base is not None:
            neat = 1.0 - 0.12 * min(weeks_dieting, 16.0) / 16.0
            if spec.stall == "activity":  # the walking given up: about 0.35 kcal/kg/1000
                neat -= ramp * spec.stall_kcal / (0.00035 * mass * spec.steps_base)
                neat = max(neat, 0.1)
            out["s"][k] = (
                spec.steps_base
                * steps_person
                * neat
                * WEEKDAY_STEPS[wd]
                * math.exp(rng.normal(0.0, 0.25))
            )
        sleep = sleep_base + (0.45 if wd >= 5 else 0.0) + rng.normal(0.0, 0.6)
        out["sl"][k] = float(np.clip(sleep, 4.0, 10.5))
        depth = phase.deficit / 0.2 if phase and kind == "deficit" else 0.0
        hunger = hunger_base + 0.16 * weeks_dieting + 0.8 * depth + rng.normal(0.0, 0.9)
        energy = energy_base - 0.09 * weeks_dieting + 0.35 * (sleep - 7.0) + rng.normal(0.0, 0.8)
        out["h"][k] = float(np.clip(round(hunger), 1, 10))
        out["e"][k] = float(np.clip(round(energy), 1, 10))
        out["m"][k] = float(np.clip(round(energy + rng.normal(0.0, 1.0)), 1, 10))

    logged = ~missing_days(rng, n, spec.missing_frac, max_run=4)
    # Rows present but one value left blank (forgot the scale, did not log food...).
    for key, frac in (("w", 0.03), ("i", 0.06), ("s", 0.07), ("h", 0.08), ("sl", 0.05)):
        blank = rng.random(n) < frac
        blank[0] = blank[-1] = False
        out[key][blank] = np.nan
        if key == "h":
            out["e"][blank] = np.nan
            out["m"][blank] = np.nan
    return Simulated(
        days=days,
        weight_kg=out["w"],
        intake_kcal=out["i"],
        steps=out["s"],
        hunger=out["h"],
        energy=out["e"],
        sleep_h=out["sl"],
        mood=out["m"],
        tissue_kg=out["t"],
        logged=logged,
        tdee_kcal=out["x"],
        adapt_frac=out["a"],
    )


# ---------------------------------------------------------------- formatting


def fmt_num(x: float, step: float) -> str:
    """Round to the instrument's step and print without float noise."""
    if math.isnan(x):
        return ""
    v = round(round(x / step) * step, 6)
    decimals = max(0, -math.floor(math.log10(step) + 1e-9))
    return f"{v:.{decimals}f}"


def daily_table(spec: ClientSpec, sim: Simulated) -> tuple[list[str], list[list[str]]]:
    wcol = "weight_lb" if spec.weight_unit == "lb" else "weight_kg"
    ecol = "intake_kj" if spec.energy_unit == "kJ" else "intake_kcal"
    header = ["date", wcol] + ([ecol] if spec.intake_logged else [])
    if spec.steps_base is not None:
        header.append("steps")
    if spec.ratings:
        header += ["hunger", "energy"]
    if spec.sleep_step_h is not None:
        header.append("sleep_h")
    header += list(spec.extra_daily)
    rows = []
    for k, day in enumerate(sim.days):
        if not sim.logged[k]:
            continue
        w = sim.weight_kg[k]
        e = sim.intake_kcal[k]
        if not spec.intake_logged and math.isnan(w):
            continue  # a weight-only log has no row for a day without a weigh-in
        row = [day.strftime("%d/%m/%Y") if spec.day_first else day.isoformat()]
        row.append(fmt_num(w * LB_PER_KG, 0.2) if wcol == "weight_lb" else fmt_num(w, 0.1))
        if spec.intake_logged:
            row.append(fmt_num(e * KJ_PER_KCAL, 10) if ecol == "intake_kj" else fmt_num(e, 1))
        if spec.steps_base is not None:
            row.append(fmt_num(sim.steps[k], 1))
        if spec.ratings:
            row += [fmt_num(sim.hunger[k], 1), fmt_num(sim.energy[k], 1)]
        if spec.sleep_step_h is not None:
            row.append(fmt_num(sim.sleep_h[k], spec.sleep_step_h))
        if "mood" in spec.extra_daily:
            row.append(fmt_num(sim.mood[k], 1))
        rows.append(row)
    if spec.labelled_headers:
        header = [LABELLED_HEADERS[h] for h in header]
    return header, rows


def skinfold_table(
    spec: ClientSpec, sim: Simulated, rng: np.random.Generator
) -> tuple[list[str], list[list[str]]]:
    """Sessions every 2-4 weeks; each site measured 2 or 3 times, cycling through sites."""
    profile = SITE_PROFILES[(spec.equation, spec.sex)]
    scale = spec.body_fat_pct / (30.0 if spec.sex == "female" else 22.0)
    base = {s: v * scale * (1.0 + rng.normal(0.0, 0.08)) for s, v in profile.items()}
    shrink = {s: rng.uniform(0.7, 1.1) for s in profile}
    fat0 = spec.start_weight_kg * spec.body_fat_pct / 100.0
    sites = list(profile)
    rows: list[list[str]] = []
    day = spec.first_day + dt.timedelta(days=int(rng.integers(0, 3)))
    while day <= spec.last_day:
        k = (day - spec.first_day).days
        fat = fat0 + 0.8 * (sim.tissue_kg[k] - spec.start_weight_kg)  # ~80 % of loss is fat
        session_err = {s: 1.0 + rng.normal(0.0, 0.025) for s in sites}
        values = {s: base[s] * (fat / fat0) ** shrink[s] * session_err[s] for s in sites}
        readings: dict[str, list[float]] = {}
        for s in sites:
            readings[s] = _readings(values[s], spec.readings, spec.caliper_step_mm, rng)
        for r in range(spec.readings):
            rows.append(
                [day.isoformat()] + [fmt_num(readings[s][r], spec.caliper_step_mm) for s in sites]
            )
        day += dt.timedelta(days=int(rng.choice([14, 21, 21, 28])) + int(rng.integers(-1, 2)))
    return ["date", *sites], rows


def _readings(true_mm: float, n: int, step: float, rng: np.random.Generator) -> list[float]:
    """Repeated caliper readings that agree within 4 % (inside the 5 % protocol tolerance)."""
    for _ in range(100):
        vals = [round(true_mm * (1.0 + rng.normal(0.0, 0.012)) / step) * step for _ in range(n)]
        if (max(vals) - min(vals)) <= 0.04 * min(vals) + 1e-9:
            return vals
    v = round(true_mm / step) * step
    return [v] * n


def phase_rows(spec: ClientSpec, with_id: bool) -> list[list[str]]:
    rows = []
    for p in spec.phases:
        target = ""
        if p.write_target and p.kind == "deficit":
            # The coach's round figure near the simulated plan.
            age = age_on(spec.birth_date, p.start)
            tdee = resting_kcal(spec.start_weight_kg, spec.height_cm, age, spec.sex) * spec.pal
            target = str(int(round(tdee * (1.0 - p.deficit) / 50.0) * 50))
        row = [p.name, p.start.isoformat(), p.end.isoformat() if p.end else "", p.kind, target]
        rows.append([spec.client_id, *row] if with_id else row)
    return rows


# ---------------------------------------------------------------- the problem client


@dataclass
class Deliberate:
    severity: str
    kind: str
    file: str
    row: int | None
    column: str | None
    value: str
    note: str


def spoil_problem_client(
    spec: ClientSpec, header: list[str], rows: list[list[str]]
) -> tuple[list[list[str]], list[Deliberate]]:
    """Insert the deliberate problems into c007's log and describe them."""
    file = f"logs/{spec.client_id}.csv"
    wi = header.index("weight_kg")
    # 1. a ten-day gap: no rows 2026-09-13 .. 2026-09-22 (the phone was lost)
    gap_first, gap_last = D(2026, 9, 13), D(2026, 9, 22)
    rows = [r for r in rows if not gap_first.isoformat() <= r[0] <= gap_last.isoformat()]
    for needed in (gap_first - dt.timedelta(days=1), gap_last + dt.timedelta(days=1)):
        if not any(r[0] == needed.isoformat() for r in rows):
            raise SystemExit(f"gap edges must be logged days ({needed})")
    after_gap = next(i for i, r in enumerate(rows) if r[0] > gap_last.isoformat())

    # 2. an outlier: one digit mistyped (8 -> 7), in October among 82-83 kg readings
    def pick(lo: str, hi: str, wlo: float, whi: float) -> int:
        for i, r in enumerate(rows):
            if lo <= r[0] <= hi and r[wi] and wlo <= float(r[wi]) <= whi:
                return i
        raise SystemExit(f"no weigh-in between {wlo} and {whi} kg from {lo} to {hi}")

    oi = pick("2026-10-01", "2026-10-31", 82.5, 83.4)
    typed = f"{float(rows[oi][wi]) - 10.0:.1f}"
    rows[oi][wi] = typed
    # 3. a text weight with a decimal comma and a unit: not a number (error)
    bi = pick("2026-11-02", "2026-11-25", 81.6, 82.9)
    bad = rows[bi][wi].replace(".", ",") + "kg"
    rows[bi][wi] = bad
    problems = [
        Deliberate(
            "warning",
            "unknown column",
            file,
            None,
            "mood",
            "mood",
            "column not in the input contract; kept in the file, ignored",
        ),
        Deliberate(
            "warning",
            "gap longer than 7 days",
            file,
            after_gap + 2,
            "date",
            rows[after_gap][0],
            f"no rows from {gap_first} to {gap_last} (10 days without a log)",
        ),
        Deliberate(
            "warning",
            "weigh-in outlier",
            file,
            oi + 2,
            "weight_kg",
            typed,
            f"{rows[oi][0]}: {typed} among readings of about 82-83 kg (8 typed as 7); "
            "excluded from the analysis",
        ),
        Deliberate(
            "error",
            "not a number",
            file,
            bi + 2,
            "weight_kg",
            bad,
            f"{rows[bi][0]}: decimal comma and unit typed into the cell",
        ),
    ]
    return rows, problems


# ---------------------------------------------------------------- writers


def csv_bytes(header: list[str], rows: list[list[str]], bom: bool = False) -> bytes:
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(header)
    w.writerows(rows)
    data = buf.getvalue().encode("utf-8")
    return (b"\xef\xbb\xbf" + data) if bom else data


def _cell(value: str, column: str) -> object:
    if value == "":
        return None
    if column in ("date", "start", "end"):
        return dt.date.fromisoformat(value)
    try:
        f = float(value)
    except ValueError:
        return value
    return int(f) if f.is_integer() and column not in ("weight_kg", "weight_lb") else f


def add_sheet(wb: Workbook, title: str, header: list[str], rows: list[list[str]]) -> None:
    ws = wb.create_sheet(title)
    ws.append(header)
    for r in rows:
        ws.append([_cell(v, c) for v, c in zip(r, header, strict=True)])
    for j, col in enumerate(header, start=1):
        letter = ws.cell(row=1, column=j).column_letter
        ws.column_dimensions[letter].width = 12 if col in ("date", "start", "end") else 11
        if col in ("date", "start", "end"):
            for i in range(2, len(rows) + 2):
                ws.cell(row=i, column=j).number_format = "yyyy-mm-dd"
    ws.freeze_panes = "A2"


def build(out: Path) -> list[Path]:
    """Write the whole sample book into ``out``; returns the files written."""
    written: list[Path] = []

    def put(rel: str, data: bytes) -> None:
        p = out / rel
        p.parent.mkdir(parents=True, exist_ok=True)
        p.write_bytes(data)
        written.append(p)

    roster_header = [
        "client_id",
        "name",
        "sex",
        "birth_date",
        "height_cm",
        "height_in",
        "email",
        "pregnant",
        "goal_weight_kg",
        "referral_email",
    ]
    roster_rows = []
    phases_csv: list[list[str]] = []
    deliberate: list[Deliberate] = []
    for idx, spec in enumerate(CLIENTS):
        age = age_on(spec.birth_date, MONTH_END)
        assert 19 <= age <= 64, (spec.client_id, age)
        rng = np.random.default_rng([SEED, idx])
        sim = simulate(spec, rng)
        header, rows = daily_table(spec, sim)
        sk_header, sk_rows = skinfold_table(spec, sim, rng)
        if spec.client_id == PROBLEM_CLIENT:
            rows, deliberate = spoil_problem_client(spec, header, rows)
        roster_rows.append(
            [
                spec.client_id,
                spec.name,
                spec.sex_written,
                spec.birth_date.isoformat(),
                "" if spec.height_in else f"{spec.height_cm:g}",
                f"{spec.height_in:g}" if spec.height_in else "",
                spec.email,
                "no",
                f"{spec.goal_weight_kg:g}" if spec.goal_weight_kg else "",
                spec.referral_email,
            ]
        )
        if not spec.phases_in_workbook:
            phases_csv += phase_rows(spec, with_id=True)
        deliberate += variations_read(spec, header, rows)
        if spec.fmt == "csv":
            put(f"logs/{spec.client_id}.csv", csv_bytes(header, rows, bom=spec.bom))
            if spec.skinfolds:
                put(f"skinfolds/{spec.client_id}.csv", csv_bytes(sk_header, sk_rows))
        else:
            wb = Workbook()
            wb.remove(wb.active)
            add_sheet(wb, "daily", header, rows)
            add_sheet(wb, "skinfolds", sk_header, sk_rows)
            if spec.phases_in_workbook:
                ph_header = ["name", "start", "end", "kind", "target_kcal"]
                add_sheet(wb, "phases", ph_header, phase_rows(spec, with_id=False))
            p = out / "logs" / f"{spec.client_id}.xlsx"
            p.parent.mkdir(parents=True, exist_ok=True)
            save_workbook(wb, p)
            written.append(p)
    put("clients.csv", csv_bytes(roster_header, roster_rows))
    put(
        "phases.csv",
        csv_bytes(["client_id", "name", "start", "end", "kind", "target_kcal"], phases_csv),
    )
    put("EXPECTED_PROBLEMS.md", expected_problems_md(deliberate).encode())
    put("README.md", README.encode())
    return written


def variations_read(spec: ClientSpec, header: list[str], rows: list[list[str]]) -> list[Deliberate]:
    """The notes ``reportgen check`` gives for a log written the way coaches write them."""
    rel = f"logs/{spec.client_id}.{spec.fmt}"
    out = []
    if spec.labelled_headers:
        read = [
            f'"{h}" as {c}' for c, h in LABELLED_HEADERS.items() if h in header and h.lower() != c
        ]
        message = f"{rel}: read {', '.join(read)}"
        out.append(Deliberate("note", "headers read as", rel, 1, None, "", message))
    if spec.day_first:
        first = next(r[0] for r in rows if int(r[0][:2]) > 12)
        out.append(
            Deliberate(
                "note",
                "date order",
                rel,
                1,
                header[0],
                "",
                f'{rel}: {header[0]} read as day-first (DD/MM/YYYY): "{first}" can only be read '
                "that way",
            )
        )
    return out


def expected_problems_md(problems: list[Deliberate]) -> str:
    lines = [
        "# Deliberate problems in the sample book",
        "",
        "Written by `scripts/make_sample_inputs.py` (do not edit by hand). `reportgen check",
        "sample_inputs` must report exactly these and nothing else. Every other client is clean:",
        "no errors and no warnings. Rows are spreadsheet rows (header = row 1, first data",
        "row = 2); a header-level problem has no row.",
        "",
        f"Client `{PROBLEM_CLIENT}` has one error, so the month-end batch skips it with that",
        f"reason and reports the other {len(CLIENTS) - 1} clients. Notes are not problems: they",
        "say how a log written the way coaches write them (headers with units, day-first dates)",
        "was read.",
        "",
        "| severity | kind | file | row | column | value | note |",
        "|---|---|---|---|---|---|---|",
    ]
    order = {"error": 0, "warning": 0, "note": 1}  # notes after the problems
    for p in sorted(problems, key=lambda p: order[p.severity]):
        row = "" if p.row is None else str(p.row)
        lines.append(
            f"| {p.severity} | {p.kind} | {p.file} | {row} | {p.column or ''} | "
            f"`{p.value}` | {p.note} |"
        )
    return "\n".join(lines) + "\n"


README = """\
# Sample client book (invented)

Everything here is invented: the practice, the people, their e-mail addresses (all at
example.org / example.com) and every number. It was generated by
`scripts/make_sample_inputs.py`; rerun it to regenerate byte-identical files.

**Scenario.** *Kestrel Row Nutrition* is a small invented practice with one coach and seventeen
clients on fat-loss programmes. The report month is **November 2026**; logs run from early
August 2026 to the end of November.

| id | client | log | units | phases | skinfolds |
|---|---|---|---|---|---|
| c001 | Maren Holloway, F 34 | CSV | kg, kcal | baseline, then deficit (running) | JP3 |
| c002 | Dariusz Wełna, M 41 | XLSX + phases sheet | kg, kcal | deficit, break, deficit | JP7, x3 |
| c003 | Priya Raman, F 29 | CSV | kg, kcal | deficit (running); referral | JP3 |
| c004 | Hélène Marchetti, F 52 | XLSX | kg, kcal | settling-in, then deficit | D&W 4-site |
| c005 | Kofi Mensah-Adjei, M 38 | CSV | **lb**, kcal, **inches** | maintenance, deficit | JP3 |
| c006 | Saoirse Quinlan, F 45 | XLSX | kg, **kJ** | deficit ended, maintenance | JP7 |
| c007 | Callum Reid, M 33 | CSV | kg, kcal | deficit (running) | JP3; **problems** |
| c008 | Tamsin Greaves, F 26 | CSV, UTF-8 BOM | kg, **kJ** | deficit, break, deficit | JP3, x3 |
| c009 | Rafael Iturbe, M 64 | XLSX + phases | kg, kcal, no ratings | baseline, deficit | JP7 |
| c010 | Nadia Vos, F 19 | CSV | kg, kcal, no steps | deficit (running), patchy | JP3 |
| c011 | Ines Albrecht, F 47 | CSV, **weight only** | kg, no intake | deficit (running) | none |
| c012 | Tomasz Brennan, M 36 | CSV, **unit headers, DD/MM/YYYY** | kg, kcal | deficit | JP3 |
| c013 | Beatriz Carvalho, F 36 | CSV | kg, kcal | baseline, deficit; **stall: eats more** | JP3 |
| c014 | Henrik Brandt, M 43 | CSV | kg, kcal | baseline, deficit; **stall: walks less** | JP3 |
| c015 | Amara Okafor, F 47 | CSV | kg, kcal | baseline, deficit; **stall: burns less** | JP3 |
| c016 | Jonas Lindqvist, M 31 | CSV | kg, kcal | baseline, deficit; **stall: unlogged** | JP3 |
| c017 | Ilse Westerhof, F 39 | CSV | kg, kcal | baseline, long cut; **burns less** | JP3 |

x3: three readings per site (otherwise two).

Files: `clients.csv` (roster; extra column `referral_email`), `phases.csv` (phases for the
clients whose workbook has no `phases` sheet), `logs/<id>.csv` or `logs/<id>.xlsx` (sheets
`daily`, `skinfolds`, and for c002/c009 `phases`), `skinfolds/<id>.csv` for CSV clients.

How the numbers were made: each client follows a simple energy-balance path (Mifflin-St Jeor
resting energy times an activity factor, intake 15-28 % below maintenance in deficit phases, a
slow adaptive drop in expenditure, glycogen and water shifts when a phase starts or ends) and is
then observed the way real logs look: day-to-day water noise of about 0.45-0.65 kg with a weekly
rhythm, an occasional salty-meal spike, 6-24 % of days not logged, intake under-logged by 3-18 %
(more at weekends), hunger creeping up and energy down as a diet runs on, scales rounding to
0.1 kg or 0.2 lb, calipers to 0.2 or 0.5 mm. From early October, c013-c016 drift into a stall
with one main cause each, building over four weeks: intake up by about 480 kcal/day and logged
(c013), about 400 kcal/day less walking, visible in the steps (c014), expenditure about 500
kcal/day lower than body size explains (c015), and almost half of the days becoming unlogged
high days (c016). c017 keeps careful logs through a long cut in which her expenditure falls
towards 12 % below what her body size explains within about a month (the others: 6 % over
about three months), plus a small fall in steps.

`EXPECTED_PROBLEMS.md` lists the deliberate problems in c007's log, which `reportgen check`
must find (and nothing else), and the notes it gives on how c012's log was read.
"""


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--out", type=Path, default=REPO / "sample_inputs")
    args = ap.parse_args()
    files = build(args.out)
    print(f"wrote {len(files)} files to {args.out}")


if __name__ == "__main__":
    main()
