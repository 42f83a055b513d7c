"""Plateau benchmark: progress status and the causes of a stall on simulated clients.

Clients come from ``plateau_scenarios.py`` (an independent generator: not the
estimators' equations; invented data with a known cause of the stall).  Each is
analysed from its logs alone with the project's science functions: robust trend
and noise model, GLS rates with knots at the phase start, energy balance of the
windows, the client's baseline from its maintenance phase, then
``reportgen.science.plateau`` for the status and the cause split (which builds on
the adaptation work's decomposition, cost of steps and implied intake).

Printed, against the targets of the plateau work:

* status accuracy over clients with at least 3 weeks of recent data (target >= 90 %);
* largest-cause accuracy where the true largest cause closed at least 150 kcal/day
  (target >= 80 %);
* false-stall rate: clients truly losing 0.5 %/week or more called ``stalled``
  (target <= 5 %);
* per scenario, and the mean absolute error and 80 % coverage of each part.

Run:  python bench/bench_plateau.py [--per-scenario 12] [--seed 1]
"""

from __future__ import annotations

import argparse
import math
import sys
import time
from collections import Counter, defaultdict
from dataclasses import dataclass
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

from plateau_scenarios import SCENARIOS, PlateauSim, simulate_plateau

from reportgen.results import Estimate
from reportgen.science import balance as bal
from reportgen.science import expected as exp_
from reportgen.science import plateau as pl
from reportgen.science import plateau_causes as pc
from reportgen.science.composition import energy_density_kcal_per_kg
from reportgen.science.plateau_assess import PlateauInputs, assess_plateau
from reportgen.science.rates import fit_noise_model, segment_rate
from reportgen.science.resting import resting_kcal_mifflin_st_jeor
from reportgen.science.trend import local_linear_trend

FAT_SE_KG = 2.5  # skinfold equation error as fat mass (about 3.5 %BF: Jackson & Pollock 1978 SEE)


@dataclass
class Outcome:
    sim: PlateauSim
    status: pl.ProgressStatus
    causes: pc.DeficitChangeCauses | None


def plateau_inputs(sim: PlateauSim) -> PlateauInputs:
    """What the analysis would hand the assessment, from the simulated logs alone."""
    w = sim.weight_kg
    intake = sim.intake_kcal
    d0 = sim.deficit_start
    fit = local_linear_trend(w)
    level = fit.level_kg
    noise = fit_noise_model(w, [(0, d0 - 1)], fit.weights)
    w_ref = float(level[0])

    def fat_at(weight: float) -> float:
        return bal.fat_mass_at(sim.fat_start_est_kg, w_ref, weight)

    # baseline from the maintenance phase, as the analysis does it
    mrate = segment_rate(w, 0, d0 - 1, (d0,), fit.weights, noise)
    mb = bal.window_balance(
        w[:d0], intake[:d0], fat_at(float(level[0])), FAT_SE_KG, fit.weights[:d0], noise, mrate
    )
    assert mb.deficit_kcal.value is not None and mb.deficit_se_kcal is not None
    assert mb.mean_intake_kcal is not None
    d, d_sd, _ = exp_.maintenance_deficit_posterior(mb.deficit_kcal.value, mb.deficit_se_kcal)
    mean_wb = float(level[:d0].mean())
    sex = "male" if sim.sex == "male" else "female"
    baseline = exp_.Baseline(
        mb.mean_intake_kcal + d,
        math.hypot(d_sd, mb.intake_se_kcal or 0.0),
        mean_wb,
        fat_at(mean_wb),
        mb.mean_intake_kcal,
        resting_kcal_mifflin_st_jeor(sex, mean_wb, sim.height_cm, sim.age),
    )
    cur_w = float(level[-1])
    path = bal.expenditure_path(
        w,
        intake,
        energy_density_kcal_per_kg(fat_at(cur_w)),
        fit.noise_sd_kg,
        fit.weights,
        shift_days=(d0,),
    )
    return PlateauInputs(
        weight_kg=w,
        intake_kcal=intake,
        steps=sim.steps,
        hunger=np.full(len(w), np.nan),
        energy=np.full(len(w), np.nan),
        robust_weights=fit.weights,
        current_weight_kg=cur_w,
        phase_kind="deficit",
        phase_start=d0,
        deficit_start=d0,
        target_kcal=sim.target_kcal,
        days_since_break_end=None,
        fat_ref_kg=sim.fat_start_est_kg,
        weight_ref_kg=w_ref,
        fat_se_kg=FAT_SE_KG,
        baseline=baseline,
        tdee_now_kcal=float(path.tdee_kcal[-1]),
        tdee_now_sd_kcal=float(path.sd_kcal[-1]),
        resting_now_kcal=resting_kcal_mifflin_st_jeor(sex, cur_w, sim.height_cm, sim.age),
        sex=sex,
        height_cm=sim.height_cm,
        minor=False,
        pregnant=False,
        bmi_kg_m2=None,
    )


def analyse(sim: PlateauSim) -> Outcome:
    """The plateau assessment from the simulated client's logs alone."""
    got = assess_plateau(plateau_inputs(sim))
    return Outcome(sim, got.status, got.causes)


def _pct(k: int, n: int) -> str:
    return f"{100.0 * k / n:5.1f} % ({k}/{n})" if n else "  n/a"


def _covers(e: Estimate, truth: float) -> bool:
    return e.low is not None and e.high is not None and e.low <= truth <= e.high


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--per-scenario", type=int, default=12, help="clients per scenario")
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--status-z", type=float, default=None, help="override plateau.STATUS_Z")
    args = ap.parse_args(argv)
    if args.status_z is not None:
        pl.STATUS_Z = args.status_z
    rng = np.random.default_rng(args.seed)
    outcomes: list[Outcome] = []
    t0 = time.perf_counter()
    for sc in SCENARIOS:
        for _ in range(args.per_scenario):
            outcomes.append(analyse(simulate_plateau(rng, sc)))
    secs = time.perf_counter() - t0

    print(f"plateau benchmark: {len(outcomes)} clients, seed {args.seed}, {secs:.1f} s")
    print("independent generator (bench/plateau_scenarios.py); recent window 28 days\n")
    print(f"{'scenario':15s} {'status right':>18s} {'largest cause right':>22s}  statuses seen")
    ok_all = n_all = c_ok = c_n = 0
    for sc in SCENARIOS:
        rows = [o for o in outcomes if o.sim.scenario == sc]
        ok = sum(o.status.status in o.sim.accepted for o in rows)
        cause_rows = []
        for o in rows:
            true_largest = min(o.sim.true_parts.items(), key=lambda kv: kv[1])
            if true_largest[1] <= -150 and o.causes is not None:
                cause_rows.append(o.causes.largest == true_largest[0])
        ok_all += ok
        n_all += len(rows)
        c_ok += sum(cause_rows)
        c_n += len(cause_rows)
        seen = Counter(o.status.status for o in rows)
        print(
            f"{sc:15s} {_pct(ok, len(rows)):>18s} {_pct(sum(cause_rows), len(cause_rows)):>22s}"
            f"  {dict(seen)}"
        )
    decided = [o for o in outcomes if o.status.status != "too-few-data"]
    dec_ok = sum(o.status.status in o.sim.accepted for o in decided)
    losing = [o for o in outcomes if o.sim.true_recent_rate_pct <= -0.5]
    false_stall = sum(o.status.status == "stalled" for o in losing)
    print()
    print(f"status accuracy (>= 3 weeks recent data): {_pct(ok_all, n_all)}   target >= 90 %")
    print(f"  of them decided (not too-few-data):     {_pct(dec_ok, len(decided))}")
    print(f"largest cause where it is >= 150 kcal/day: {_pct(c_ok, c_n)}   target >= 80 %")
    fs = _pct(false_stall, len(losing))
    print(f"false stall, losing >= 0.5 %/week:        {fs}   target <= 5 %")

    print("\nparts (effect on the realised deficit, kcal/day): mean abs error, 80 % coverage")
    err: dict[str, list[float]] = defaultdict(list)
    cov: dict[str, list[bool]] = defaultdict(list)
    for o in outcomes:
        if o.causes is None:
            continue
        err["change"].append(
            abs((o.causes.change_kcal.value or 0) - o.sim.true_deficit_change_kcal)
        )
        cov["change"].append(_covers(o.causes.change_kcal, o.sim.true_deficit_change_kcal))
        for p in o.causes.parts:
            if p.kcal.value is None:
                continue
            truth = o.sim.true_parts[p.code]
            err[p.code].append(abs(p.kcal.value - truth))
            cov[p.code].append(_covers(p.kcal, truth))
    for k, v in err.items():
        print(f"  {k:10s} MAE {np.mean(v):6.0f}   coverage {np.mean(cov[k]):.2f}   (n {len(v)})")
    print(f"\n{secs / len(outcomes) * 1000:.0f} ms per client")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
