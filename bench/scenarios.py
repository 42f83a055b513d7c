"""Independent simulated clients for scoring the estimators outside their own model.

This generator deliberately shares no equation or constant with the estimators in
``reportgen.science`` (no Hall model, no Forbes curve, no 7700 kcal/kg, no
betaAT): its physiology is a separate, simpler world with its own numbers, so
that a good score here is not the estimator agreeing with itself.

World (all invented, per client):

* body = fat + lean + glycogen-with-water; tissue energy 9300 kcal/kg fat and
  1250 kcal/kg lean (hydrated lean tissue with a little more water than the
  estimator assumes), glycogen-with-water 950 kcal/kg;
* the lean share of a tissue change is a per-person constant drawn around
  0.06 + 3.5 / (fat kg), not a log curve; scenarios halve or double it;
* resting expenditure = 280 + 19.5 FFM + 5 FM (kcal/day); activity = a per-person
  cost per kg times weight plus 0.00042 kcal/kg per logged step; thermic effect
  8 % of intake;
* metabolic adaptation builds towards k (intake change) with a per-person time
  constant of 7-28 days, k around 0.11 (log-normal, log-SD 0.45); the "x2"
  scenario doubles it, others widen its spread (log-SD 0.8) or lower it to 0.06;
* some clients walk less in the deficit (steps fall 0-30 %);
* glycogen-with-water steps by g x (intake change) with g around 1.1 g per
  kcal/day and a 2-5 day time constant (the "glycogen" scenario: twice as
  large, 12 days);
* weigh-ins: AR(1) water (phi 0.5-0.8, or stronger), a weekly rhythm, a
  menstrual-cycle swing of +/- 0.5 kg for women in that scenario, white scale
  noise, 0.1 kg rounding; daily or sparse (2-3 a week);
* logged intake: truth x (1 - under-reporting(t)) x day-to-day noise, with
  missing days; under-reporting constant, or 0 -> 20 % over the first 3 weeks
  of the deficit.

Truth per phase: the energy drawn from stores per day (``deficit``), mean
expenditure (``tdee``), and the adaptation the tool should find: expenditure
minus what the client's own baseline, the body-size change and the thermic
effect of the intake change explain, i.e. metabolic adaptation plus the change
in step expenditure (``adaptation = metabolic + activity``).

Pure: everything comes from the seeded generator passed in; invented data.
"""

from __future__ import annotations

import datetime as dt
import math
from dataclasses import dataclass

import numpy as np

from reportgen.io.model import Client, ClientRecord, DailyLog, Phase

RHO_FAT = 9300.0
RHO_LEAN = 1250.0
RHO_GLYCO = 950.0
TEF = 0.08
STEP_COST_PER_KG = 0.00042


@dataclass(frozen=True)
class Scenario:
    name: str
    under_report: str = "none"  # "none", "constant", "drift"
    partition_factor: float = 1.0
    glycogen_factor: float = 1.0
    glycogen_tau: tuple[float, float] = (2.0, 5.0)
    menstrual: bool = False
    ar_phi: tuple[float, float] = (0.5, 0.8)
    ar_sd: tuple[float, float] = (0.2, 0.4)
    sparse: bool = False
    missing_intake: tuple[float, float] = (0.03, 0.12)
    adaptation_factor: float = 1.0
    adaptation_typical: float = 0.11  # the world's typical k
    adaptation_cv: float = 0.45  # between-person spread of k (log-normal)
    baseline_days: tuple[int, int] = (14, 28)
    step_drop: tuple[float, float] = (0.0, 0.0)
    log_steps: bool = True
    sex: str | None = None


SCENARIOS: tuple[Scenario, ...] = (
    Scenario("honest"),
    Scenario("under-report constant 20 %", under_report="constant"),
    Scenario("under-report 0->20 % at cut", under_report="drift"),
    Scenario("partition halved", partition_factor=0.5),
    Scenario("partition doubled", partition_factor=2.0),
    Scenario("glycogen x2, tau 12 d", glycogen_factor=2.0, glycogen_tau=(12.0, 12.0)),
    Scenario("menstrual +/-0.5 kg", menstrual=True, sex="female"),
    Scenario("AR(1) water strong", ar_phi=(0.85, 0.93), ar_sd=(0.4, 0.6)),
    Scenario("weigh-ins 2-3 a week", sparse=True),
    Scenario("missing intake 20-40 %", missing_intake=(0.2, 0.4)),
    Scenario("adaptation x2, 6-week baseline", adaptation_factor=2.0, baseline_days=(42, 42)),
    Scenario("fewer steps in the cut", step_drop=(0.15, 0.35)),
    Scenario("fewer steps, steps not logged", step_drop=(0.15, 0.35), log_steps=False),
    Scenario("adaptation spread wide (k CV 0.8)", adaptation_cv=0.8),
    Scenario("small adaptation (k 0.06)", adaptation_typical=0.06),
)


@dataclass(frozen=True)
class PhaseTruth:
    name: str
    kind: str
    start_index: int
    end_index: int
    deficit_kcal: float
    tdee_kcal: float
    adaptation_kcal: float  # metabolic + activity
    metabolic_kcal: float
    activity_kcal: float
    typical_adaptation_kcal: float  # what the world's typical k would give


@dataclass(frozen=True)
class World:
    record: ClientRecord
    month: str
    mass_true_kg: np.ndarray  # fat + lean + glycogen (no transient water)
    noise_cov: np.ndarray | None  # not stored (large); see noise_params
    noise_params: tuple[float, float, float, float]  # ar phi, ar sd, white sd, menstrual amp
    weigh_mask: np.ndarray
    phases: tuple[PhaseTruth, ...]
    under_report: str
    # body mass when the day's weigh-in is taken (before that day's intake and
    # expenditure), i.e. what the weigh-in of day t measures under its noise
    mass_at_weigh_in_kg: np.ndarray


def simulate(rng: np.random.Generator, sc: Scenario, cid: str) -> World:
    month_end = dt.date(2026, 11, 30)
    sex = sc.sex or ("female" if rng.random() < 0.5 else "male")
    height = rng.normal(177, 7) if sex == "male" else rng.normal(164, 6)
    weight0 = float(rng.uniform(24, 35) * (height / 100) ** 2)
    bf = float(np.clip(rng.normal(30 if sex == "male" else 38, 6), 15, 50)) / 100
    fat = weight0 * bf
    lean = weight0 - fat
    glyco = 0.0
    lean_share = float(np.clip(0.06 + 3.5 / fat, 0.08, 0.5) * rng.lognormal(0, 0.15))
    lean_share = min(lean_share * sc.partition_factor, 0.9)
    act_per_kg = float(rng.uniform(6.0, 11.0))
    steps0 = float(rng.uniform(5000, 11000))
    k_typ = sc.adaptation_typical
    cv = sc.adaptation_cv
    k = k_typ * float(rng.lognormal(-0.5 * cv**2, cv)) * sc.adaptation_factor
    tau_at = float(rng.uniform(7, 28))
    g_per_kcal = 0.0011 * float(rng.lognormal(0, 0.2)) * sc.glycogen_factor
    tau_g = float(rng.uniform(*sc.glycogen_tau))
    drop = float(rng.uniform(*sc.step_drop))

    def rmr(f: float, lm: float) -> float:
        return 280 + 19.5 * lm + 5.0 * f

    ee_base = rmr(fat, lean) + act_per_kg * weight0 + STEP_COST_PER_KG * steps0 * weight0
    ei0 = ee_base / (1 - TEF)  # in balance at baseline
    base_days = int(rng.integers(sc.baseline_days[0], sc.baseline_days[1] + 1))
    cut = float(rng.uniform(400, 800))
    cut_days = int(rng.integers(8, 17)) * 7
    n = base_days + cut_days
    start = month_end - dt.timedelta(days=n - 1)
    plan = np.full(n, ei0)
    plan[base_days:] = ei0 - cut
    dates = np.arange(np.datetime64(start, "D"), np.datetime64(month_end, "D") + 1)
    dow = (dates.view("int64") + 3) % 7
    intake = plan * (1 + 0.1 * (dow >= 5) - 0.1 * 2 / 7) + rng.normal(0, 180, n)
    at = 0.0
    mass = np.empty(n)
    ee = np.empty(n)
    at_s = np.empty(n)
    act_s = np.empty(n)
    tef_s = np.empty(n)
    stored = np.empty(n)
    steps_true = np.empty(n)
    w_start = np.empty(n)
    for t in range(n):
        d_ei = intake[t] - ei0
        in_cut = t >= base_days
        s_t = steps0 * (1 - drop * min((t - base_days) / 21.0, 1.0)) if in_cut else steps0
        s_day = max(s_t * float(rng.lognormal(0, 0.25)), 300.0)
        steps_true[t] = s_day
        plan_change = plan[t] - ei0
        at += (k * plan_change - at) / tau_at
        bw = fat + lean + glyco
        w_start[t] = bw
        e = rmr(fat, lean) + act_per_kg * bw + STEP_COST_PER_KG * s_day * bw + TEF * intake[t] + at
        ee[t] = e
        at_s[t] = at
        act_s[t] = STEP_COST_PER_KG * (s_day - steps0) * bw
        tef_s[t] = TEF * d_ei
        g_target = g_per_kcal * plan_change
        dg = (g_target - glyco) / tau_g
        imbalance = intake[t] - e - RHO_GLYCO * dg
        dfat = (1 - lean_share) * imbalance / (RHO_FAT * (1 - lean_share) + RHO_LEAN * lean_share)
        dlean = lean_share * imbalance / (RHO_FAT * (1 - lean_share) + RHO_LEAN * lean_share)
        stored[t] = RHO_FAT * dfat + RHO_LEAN * dlean + RHO_GLYCO * dg
        fat += dfat
        lean += dlean
        glyco += dg
        mass[t] = fat + lean + glyco
    # Weigh-ins: water AR(1), weekly rhythm, menstrual swing, white noise.
    phi = float(rng.uniform(*sc.ar_phi))
    ar_sd = float(rng.uniform(*sc.ar_sd))
    white = float(rng.uniform(0.15, 0.3))
    x = rng.normal(0, ar_sd)
    water = np.empty(n)
    for t in range(n):
        water[t] = x
        x = phi * x + rng.normal(0, ar_sd * math.sqrt(1 - phi * phi))
    rhythm = float(rng.uniform(0, 0.25)) * np.array([1.0, 0.3, -0.3, -0.6, -0.5, -0.2, 0.3])[dow]
    amp = 0.5 if (sc.menstrual and sex == "female") else 0.0
    phase0 = float(rng.uniform(0, 2 * math.pi))
    cycle = amp * np.sin(2 * math.pi * np.arange(n) / 28.0 + phase0)
    weigh = np.round(w_start + water + rhythm + cycle + rng.normal(0, white, n), 1)
    if sc.sparse:
        mask = np.zeros(n, dtype=bool)
        for wk in range(0, n, 7):
            days = rng.choice(7, size=int(rng.integers(2, 4)), replace=False)
            for dd in days:
                if wk + dd < n:
                    mask[wk + dd] = True
    else:
        mask = rng.random(n) > float(rng.uniform(0.05, 0.2))
    mask[0] = True
    weigh[~mask] = np.nan
    # Logged intake.
    if sc.under_report == "constant":
        u = np.full(n, 0.2)
    elif sc.under_report == "drift":
        ramp = np.clip((np.arange(n) - base_days) / 21.0, 0.0, 1.0)
        u = 0.2 * ramp
    else:
        u = np.zeros(n)
    logged = np.round(intake * (1 - u) * rng.lognormal(0, 0.07, n), -1)
    logged[rng.random(n) < float(rng.uniform(*sc.missing_intake))] = np.nan
    steps = np.round(steps_true * rng.lognormal(0, 0.05, n), -1)
    if not sc.log_steps:
        steps[:] = np.nan
    else:
        steps[rng.random(n) < 0.1] = np.nan
    log = DailyLog(
        dates=dates,
        weight_kg=weigh,
        weight_outlier=np.zeros(n, dtype=bool),
        intake_kcal=logged,
        steps=steps,
        hunger=np.full(n, np.nan),
        energy=np.full(n, np.nan),
        sleep_h=np.full(n, np.nan),
    )
    age = int(rng.integers(25, 55))
    client = Client(
        client_id=cid,
        name=f"Scenario client {cid}",
        sex=sex,  # type: ignore[arg-type]
        birth_date=dt.date(month_end.year - age - 1, 6, 15),
        height_cm=round(float(height), 1),
    )
    p_base = Phase("Baseline", start, start + dt.timedelta(days=base_days - 1), "maintenance", None)
    p_cut = Phase("Cut", start + dt.timedelta(days=base_days), None, "deficit", None)
    record = ClientRecord(client, log, (), (p_base, p_cut), (), ())
    truths = []
    base_act = float(act_s[:base_days].mean())  # activity relative to the baseline's own
    for name, kind, i0, i1 in (
        ("Baseline", "maintenance", 0, base_days - 1),
        ("Cut", "deficit", base_days, n - 1),
    ):
        sl = slice(i0, i1 + 1)
        metab = float(at_s[sl].mean())
        actv = float(act_s[sl].mean()) - base_act
        # the typical adaptation for this cut and window in this world
        tt = np.arange(i0, i1 + 1) - base_days
        typ = float(
            np.mean(np.where(tt >= 0, -k_typ * cut * (1 - np.exp(-(tt + 1) / tau_at)), 0.0))
        )
        truths.append(
            PhaseTruth(
                name,
                kind,
                i0,
                i1,
                float(-stored[sl].mean()),
                float(ee[sl].mean()),
                metab + actv,
                metab,
                actv,
                typ,
            )
        )
    return World(
        record=record,
        month=f"{month_end.year:04d}-{month_end.month:02d}",
        mass_true_kg=mass,
        noise_cov=None,
        noise_params=(phi, ar_sd, white, amp),
        weigh_mask=mask,
        phases=tuple(truths),
        under_report=sc.under_report,
        mass_at_weigh_in_kg=w_start,
    )


def ls_slope_sd_kg_per_day(world: World, i0: int, i1: int) -> float:
    """True SD of the least-squares slope on the window's weigh-in days, under the
    world's noise (AR(1) water, menstrual sinusoid with a random phase, white)."""
    phi, ar_sd, white, amp = world.noise_params
    t = np.nonzero(world.weigh_mask[i0 : i1 + 1])[0].astype(float)
    if t.size < 3:
        return math.nan
    c = (t - t.mean()) / np.sum((t - t.mean()) ** 2)
    lag = np.abs(t[:, None] - t[None, :])
    cov = ar_sd**2 * phi**lag + 0.5 * amp**2 * np.cos(2 * math.pi * lag / 28.0)
    cov[np.diag_indices(len(t))] += white**2
    return float(math.sqrt(max(c @ cov @ c, 0.0)))
