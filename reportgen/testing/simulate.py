"""Simulated clients with known truth, for the accuracy benchmark and the tests.

Each client is a Hall et al. 2011 model adult (``reportgen.science.hall``) with
its own adaptive-thermogenesis strength, living through a maintenance phase and
one or two deficit phases of 8-16 weeks (optionally with a maintenance break
between).  What the client *logs* is corrupted the way real logs are:

* body mass includes a fast glycogen-and-water shift when the intake changes;
* weigh-ins = body mass + water swings (AR(1)) + a weekly rhythm (heaviest on
  Sunday/Monday, Orsama et al. 2014) + scale noise + occasional spikes,
  rounded to 0.1 kg, with 5-35 % of days missing;
* intake = true intake x (1 - under-reporting) x day-to-day logging noise, with
  5-35 % of days missing; half of the clients do not under-report;
* skinfolds (Jackson-Pollock 3-site) every 4 weeks from the true %fat plus
  equation-sized error;
* steps, hunger and energy ratings that drift with the deficit.

Pure: everything comes from the seeded ``numpy.random.Generator`` passed in;
what is fixed rather than drawn is set in a :class:`SimulationSpec`.  The numbers
are invented for testing; no real person's data.  Not a published method: test
support, outside ``reportgen.science``.
"""

from __future__ import annotations

import datetime as dt
import math
from dataclasses import dataclass, field, replace

import numpy as np

from reportgen.io.model import (
    Client,
    ClientRecord,
    DailyLog,
    FloatArray,
    Phase,
    PhaseKind,
    Sex,
    SkinfoldSession,
)
from reportgen.month import ReportMonth
from reportgen.science.energy_density import GLYCOGEN_WATER_KCAL_PER_KG
from reportgen.science.hall import HALL_2011, HallBaseline, hall_baseline, simulate_hall
from reportgen.science.skinfolds import JP3_MEN, JPW3_WOMEN

GLYCOGEN_KG_PER_KCAL = 0.0018  # glycogen+water shift per kcal/day of cut (invented, judgment)
GLYCOGEN_TAU_DAYS = 4.0  # (invented, judgment)


@dataclass(frozen=True)
class SimulationSpec:
    """What to fix instead of drawing it; every None is drawn from the generator.

    Attributes
    ----------
    client_id : str
    month_end : datetime.date
        Last day of the report month; the log ends there.
    sex, under_report, missing_weight, missing_intake, deficit_kcal, beta_at, two_deficits
        Fix a property instead of drawing it (under-reporting and missing shares as
        fractions, the deficit in kcal/day, beta_at of the Hall 2011 AT term).
    glycogen : bool, default True
        Include the fast glycogen-and-water shift at intake changes.
    future_days : int, default 0
        Also simulate this many days after the report month at the last phase's
        plan (``future_weight_kg``), to check projections.
    maintenance_first : bool, default True
        Start with a maintenance phase; False starts the log with the first
        deficit (no measured baseline), after ``lead_in_days`` days at maintenance
        intake that belong to no phase.  The random draws are the same either way.
    lead_in_days : int, default 0
        Logged days before the first deficit when ``maintenance_first`` is False. [day]
    """

    client_id: str = "s001"
    month_end: dt.date = dt.date(2026, 11, 30)
    sex: Sex | None = None
    under_report: float | None = None
    missing_weight: float | None = None
    missing_intake: float | None = None
    deficit_kcal: float | None = None
    beta_at: float | None = None
    two_deficits: bool | None = None
    glycogen: bool = True
    future_days: int = 0
    maintenance_first: bool = True
    lead_in_days: int = 0


@dataclass(frozen=True)
class PhaseTruth:
    name: str
    kind: str
    start_index: int
    end_index: int  # inclusive, on the log's grid
    deficit_kcal: float  # true mean energy drawn from stores per day
    tdee_kcal: float  # true mean expenditure
    # true adaptation: mean AT plus the change in activity expenditure from the first
    # phase (what body size does not explain, relative to the client's own baseline)
    adaptation_kcal: float
    expected_kcal: float  # true expenditure minus the adaptation


@dataclass(frozen=True)
class SimulatedClient:
    record: ClientRecord
    month: ReportMonth
    weight_true_kg: FloatArray  # body mass without water or noise, on the log's grid
    fat_true_kg: FloatArray
    lean_true_kg: FloatArray
    glycogen_true_kg: FloatArray  # glycogen-with-water shift (part of weight_true_kg)
    expenditure_true_kcal: FloatArray
    intake_true_kcal: FloatArray
    at_true_kcal: FloatArray
    activity_offset_kcal: FloatArray  # day-to-day change in activity expenditure
    noise_kg: FloatArray  # weigh-in minus body mass, excluding spikes (AR(1) + rhythm + white)
    noise_ar_phi: float
    noise_ar_sd_kg: float
    noise_white_sd_kg: float
    weekly_amp_kg: float
    under_report: float  # fraction of intake not logged (0 = honest)
    phases: tuple[PhaseTruth, ...]
    # true body mass after the report month at the last plan (index 0 = the first day after)
    future_weight_kg: FloatArray = field(default_factory=lambda: np.empty(0))


def _jp3_sum_mm(sex: str, age: float, bodyfat_pct: float) -> float:
    """Invert the JP/JPW 3-site quadratic for the sum of skinfolds (Siri)."""
    a, b, c, d = JP3_MEN if sex == "male" else JPW3_WOMEN
    density = 495.0 / (bodyfat_pct + 450.0)
    # c S^2 - b S + (a - d age - density) = 0, smaller root
    k = a - d * age - density
    disc = b * b - 4.0 * c * k
    if disc < 0:
        return b / (2.0 * c)
    return (b - math.sqrt(disc)) / (2.0 * c)


def simulate_client(
    rng: np.random.Generator, spec: SimulationSpec = SimulationSpec()
) -> SimulatedClient:
    """One simulated client with known truth (see the module docstring).

    Parameters
    ----------
    rng : numpy.random.Generator
        Source of every random choice.
    spec : SimulationSpec
        The client id, the report month's end and whatever is fixed rather than drawn.

    Returns
    -------
    SimulatedClient
        The record as the readers would produce it, plus the truth.
    """
    client_id, month_end = spec.client_id, spec.month_end
    sex: Sex = spec.sex or ("female" if rng.random() < 0.5 else "male")
    age = int(rng.integers(22, 58))
    height = float(rng.normal(178, 7) if sex == "male" else rng.normal(165, 6))
    bmi = float(rng.uniform(24, 36))
    weight0 = bmi * (height / 100) ** 2
    # Deurenberg 1991-like %fat for the truth (invented population, not a check value)
    bf0 = 1.2 * bmi + 0.23 * age - 10.8 * (sex == "male") - 5.4 + rng.normal(0, 3)
    bf0 = float(np.clip(bf0, 12, 50))
    fat0 = weight0 * bf0 / 100
    rmr = 10 * weight0 + 6.25 * height - 5 * age + (5 if sex == "male" else -161)
    pal = float(rng.uniform(1.4, 1.8))
    b_at = float(rng.uniform(0.0, 0.3)) if spec.beta_at is None else spec.beta_at
    params = replace(HALL_2011, beta_at=b_at)
    base: HallBaseline = hall_baseline(weight0, fat0, rmr, pal, params)
    ei0 = float(base.intake0_kcal)

    # Phases: maintenance 3-6 weeks, deficit 8-16 weeks, optional break + second deficit.
    two = bool(rng.random() < 0.4) if spec.two_deficits is None else spec.two_deficits
    d_kcal = float(rng.uniform(350, 850)) if spec.deficit_kcal is None else spec.deficit_kcal
    base_days = int(rng.integers(21, 43))
    plan: list[tuple[str, PhaseKind | None, int, float]] = (
        [("Baseline", "maintenance", base_days, ei0)]
        if spec.maintenance_first
        else ([("Lead-in", None, spec.lead_in_days, ei0)] if spec.lead_in_days > 0 else [])
    )
    plan.append(("Cut 1", "deficit", int(rng.integers(8, 17)) * 7, ei0 - d_kcal))
    if two:
        plan.append(("Diet break", "maintenance", 14, ei0 - 100))
        plan.append(("Cut 2", "deficit", int(rng.integers(8, 13)) * 7, ei0 - 0.8 * d_kcal))
    n = sum(p[2] for p in plan)
    # the last phase runs on past the month end by a random amount (or just ended)
    overrun = int(rng.integers(-10, 30))
    start = month_end - dt.timedelta(days=n - 1 - max(overrun, 0))
    n_days = (month_end - start).days + 1
    target = np.empty(n_days)
    phases: list[Phase] = []
    idx = 0
    for i, (name, kind, length, kcal) in enumerate(plan):
        p_start = start + dt.timedelta(days=idx)
        last = i == len(plan) - 1
        p_end = p_start + dt.timedelta(days=length - 1)
        end_field: dt.date | None = p_end
        if last and overrun > 0:
            end_field = None if rng.random() < 0.5 else p_end + dt.timedelta(days=overrun)
            length = n_days - idx
        stop = min(idx + length, n_days)
        target[idx:stop] = kcal
        if kind is not None:  # the lead-in belongs to no phase
            phases.append(Phase(name, p_start, end_field, kind, round(kcal, -1)))
        idx = stop
        if idx >= n_days:
            break
    target[idx:] = target[idx - 1]
    dates = np.arange(np.datetime64(start, "D"), np.datetime64(month_end, "D") + 1)
    dow = (dates.astype("datetime64[D]").view("int64") + 3) % 7  # 0 = Monday
    weekend = (dow >= 5).astype(float)

    intake_true = target + 180.0 * weekend - 180.0 * 2 / 7 + rng.normal(0, 220, n_days)
    # Activity drifts a little (AR(1) offset, SD about 50 kcal/day).
    off = np.empty(n_days)
    o = 0.0
    for t in range(n_days):
        o = 0.9 * o + rng.normal(0, 22)
        off[t] = o
    lean0 = weight0 - fat0
    path = simulate_hall(fat0, lean0, intake_true, base, 0.0, off)
    # Glycogen with its water: a fast shift when the planned intake changes (about 0.9 kg
    # for a 500 kcal/day cut, time constant 4 days; invented magnitudes in the usual
    # 1-2 kg early in a diet).
    glyco_target = np.where(target < ei0, -GLYCOGEN_KG_PER_KCAL * (ei0 - target), 0.0)
    glyco = np.empty(n_days + 1)
    glycogen = spec.glycogen
    g = 0.0 if glycogen else math.nan
    for t in range(n_days):
        glyco[t] = g if glycogen else 0.0
        if glycogen:
            g += (glyco_target[t] - g) / GLYCOGEN_TAU_DAYS
    glyco[n_days] = g if glycogen else 0.0
    bw = path.weight_kg[:-1] + glyco[:-1]
    fat = path.fat_kg[:-1]
    ee = path.expenditure_kcal
    at = path.at_kcal[:-1]

    # Weigh-ins.
    phi = float(rng.uniform(0.5, 0.85))
    ar_sd = float(rng.uniform(0.2, 0.45))
    white_sd = float(rng.uniform(0.2, 0.4))
    amp = float(rng.uniform(0.0, 0.3))
    water = np.empty(n_days)
    x = rng.normal(0, ar_sd)
    innov = ar_sd * math.sqrt(1 - phi * phi)
    for t in range(n_days):
        water[t] = x
        x = phi * x + rng.normal(0, innov)
    rhythm_shape = np.array([1.0, 0.4, -0.2, -0.5, -0.6, -0.4, 0.5])  # Mon..Sun
    rhythm = amp * (rhythm_shape[dow] - rhythm_shape.mean())
    noise = water + rhythm + rng.normal(0, white_sd, n_days)
    spikes = np.where(rng.random(n_days) < 0.02, rng.uniform(0.8, 2.0, n_days), 0.0)
    weigh = np.round(bw + noise + spikes, 1)
    p_mw = float(rng.uniform(0.05, 0.35)) if spec.missing_weight is None else spec.missing_weight
    weigh[rng.random(n_days) < p_mw] = np.nan
    weigh[0] = np.round(bw[0] + noise[0], 1)  # the log starts with a weigh-in

    ur = (
        (0.0 if rng.random() < 0.5 else float(rng.uniform(0.05, 0.3)))
        if spec.under_report is None
        else spec.under_report
    )
    logged = intake_true * (1 - ur) * np.exp(rng.normal(0, 0.08, n_days))
    logged = np.round(logged, -1)
    p_mi = float(rng.uniform(0.05, 0.35)) if spec.missing_intake is None else spec.missing_intake
    logged[rng.random(n_days) < p_mi] = np.nan

    in_deficit = (target < ei0 - 200).astype(float)
    steps = np.round(
        rng.normal(8500, 1500) * (1 + at / max(ei0, 1) * 1.5) + rng.normal(0, 1800, n_days), -1
    )
    steps = np.clip(steps, 500, None)
    steps[rng.random(n_days) < 0.15] = np.nan
    cum = np.cumsum(in_deficit) / 30.0
    hunger = np.clip(
        np.round(4 + 1.2 * np.minimum(cum, 3) * in_deficit + rng.normal(0, 1, n_days)), 1, 10
    )
    energy = np.clip(
        np.round(7 - 0.8 * np.minimum(cum, 3) * in_deficit + rng.normal(0, 1, n_days)), 1, 10
    )
    hunger[rng.random(n_days) < 0.3] = np.nan
    energy[rng.random(n_days) < 0.3] = np.nan
    sleep = np.round(rng.normal(7.2, 0.7, n_days), 1)
    sleep[rng.random(n_days) < 0.4] = np.nan
    log = DailyLog(
        dates=dates,
        weight_kg=weigh,
        weight_outlier=np.zeros(n_days, dtype=bool),
        intake_kcal=logged,
        steps=steps,
        hunger=hunger,
        energy=energy,
        sleep_h=sleep,
    )

    birth = dt.date(month_end.year - age - 1, int(rng.integers(1, 13)), int(rng.integers(1, 29)))
    sessions = []
    site_names = (
        ("chest", "abdominal", "thigh") if sex == "male" else ("triceps", "suprailiac", "thigh")
    )
    for i in range(0, n_days, 28):
        d = start + dt.timedelta(days=i)
        a = d.year - birth.year - ((d.month, d.day) < (birth.month, birth.day))
        bf = 100 * fat[i] / bw[i] + rng.normal(0, 2.0)
        total = _jp3_sum_mm(sex, a, bf)
        share = rng.dirichlet([20, 20, 20])
        sites = {s: round(float(total * sh), 1) for s, sh in zip(site_names, share, strict=True)}
        readings: dict[str, tuple[float, ...]] = {
            s: (v, round(v + float(rng.normal(0, 0.3)), 1)) for s, v in sites.items()
        }
        sites = {s: float(np.mean(r)) for s, r in readings.items()}
        sessions.append(SkinfoldSession(d, sites, readings))

    client = Client(
        client_id=client_id,
        name=f"Simulated client {client_id}",
        sex=sex,
        birth_date=birth,
        height_cm=round(height, 1),
        goal_weight_kg=round(float(bw[0] * 0.88), 1),
    )
    record = ClientRecord(
        client=client,
        log=log,
        skinfolds=tuple(sessions),
        phases=tuple(phases),
        problems=(),
        source_files=(),
    )
    truths = []
    first_end = int((np.datetime64(phases[0].end or month_end, "D") - dates[0]).astype(int))
    off_base = float(off[: min(first_end, n_days - 1) + 1].mean())
    for ph in phases:
        si = int((np.datetime64(ph.start, "D") - dates[0]).astype(int))
        end = ph.end if ph.end is not None and ph.end <= month_end else month_end
        ei = int((np.datetime64(end, "D") - dates[0]).astype(int))
        if si > n_days - 1:
            continue
        d_f = path.fat_kg[ei + 1] - path.fat_kg[si]
        d_l = path.lean_kg[ei + 1] - path.lean_kg[si]
        days = ei - si + 1
        d_g = glyco[ei + 1] - glyco[si]
        stored = (
            params.rho_fat_kcal_per_kg * d_f
            + params.rho_lean_kcal_per_kg * d_l
            + GLYCOGEN_WATER_KCAL_PER_KG * d_g
        )
        deficit = -stored / days
        tdee = float(ee[si : ei + 1].mean())
        adapt = float(at[si : ei + 1].mean() + off[si : ei + 1].mean()) - off_base
        truths.append(
            PhaseTruth(ph.name, ph.kind, si, ei, float(deficit), tdee, adapt, tdee - adapt)
        )
    # The weeks after the report month at the last phase's plan (for projection checks);
    # drawn last so that everything above is the same whatever ``future_days`` is.
    future = np.empty(0)
    future_days = spec.future_days
    if future_days > 0:
        wd = (dates[-1].astype("datetime64[D]").view("int64") + 4 + np.arange(future_days)) % 7
        fut_intake = (
            target[-1] + 180.0 * (wd >= 5) - 180.0 * 2 / 7 + rng.normal(0, 220, future_days)
        )
        fut = simulate_hall(path.fat_kg[-1], path.lean_kg[-1], fut_intake, base, path.at_kcal[-1])
        future = fut.weight_kg + glyco[n_days]
    return SimulatedClient(
        record=record,
        month=ReportMonth.containing(month_end),
        weight_true_kg=bw,
        fat_true_kg=fat,
        lean_true_kg=path.lean_kg[:-1],
        glycogen_true_kg=glyco[:-1],
        expenditure_true_kcal=ee,
        intake_true_kcal=intake_true,
        at_true_kcal=at,
        activity_offset_kcal=off,
        noise_kg=noise,
        noise_ar_phi=phi,
        noise_ar_sd_kg=ar_sd,
        noise_white_sd_kg=white_sd,
        weekly_amp_kg=amp,
        under_report=ur,
        phases=tuple(truths),
        future_weight_kg=future,
    )
