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

from plateau_scenarios import EARLY_DAYS, EARLY_FIRST, SCENARIOS, PlateauSim, simulate_plateau

from reportgen.results import Estimate
from reportgen.science import balance as bal
from reportgen.science import expected as exp_
from reportgen.science import plateau as pl
from reportgen.science import plateau_causes as pc
from reportgen.science.activity import step_energy_change_kcal
from reportgen.science.composition import energy_density_kcal_per_kg
from reportgen.science.rates import WindowRate, fit_noise_model, segment_rate
from reportgen.science.resting import resting_kcal_mifflin_st_jeor
from reportgen.science.trend import Z80, local_linear_trend

PLANNED_SE_FACTOR = 1.0  # --planned-se-factor: 0 ignores the plan's own uncertainty
FAT_SE_KG = 2.5  # skinfold equation error as fat mass (about 3.5 %BF: Jackson & Pollock 1978 SEE)


@dataclass
class Outcome:
    sim: PlateauSim
    status: pl.ProgressStatus
    causes: pc.DeficitChangeCauses | None


def analyse(sim: PlateauSim) -> Outcome:
    """The plateau estimate from the simulated client's logs alone."""
    w = sim.weight_kg
    intake = sim.intake_kcal
    n = len(w)
    d0 = sim.deficit_start
    last = n - 1
    fit = local_linear_trend(w)
    # noise about straight lines over four-week pieces (a whole phase is not a straight
    # line when it stalls, and the curvature would pass for water swings)
    pieces = [(0, d0 - 1), *pl.noise_pieces(d0 + EARLY_FIRST, last)]
    noise = fit_noise_model(w, pieces, fit.weights)
    knots = (d0,)
    level = fit.level_kg
    w_ref = float(level[0])

    def fat_at(weight: float) -> float:
        return bal.fat_mass_at(sim.fat_start_est_kg, w_ref, weight)

    # recent rate
    lo = n - pl.RECENT_WINDOW_DAYS
    # the window's own slope, continuous with the four weeks before it (a spline with
    # one slope over the whole phase would average the recent weeks with the earlier
    # ones, which is what a plateau breaks)
    wr = pl.recent_window_rate(w, lo, last, fit.weights, noise)
    cur_w = float(level[last])
    rate_pct = se_pct = None
    if wr is not None:
        rate_pct = 700.0 * wr.rate_kg_per_day / cur_w
        se_pct = 700.0 * wr.se_kg_per_day / cur_w
    # baseline from the maintenance phase (as the analysis does)
    mrate = segment_rate(w, 0, d0 - 1, knots, fit.weights, noise)
    mb = bal.window_balance(
        w[:d0], intake[:d0], fat_at(float(level[0])), FAT_SE_KG, fit.weights[:d0], noise, mrate
    )
    assert mb.deficit_kcal.value is not None and mb.deficit_se_kcal is not None
    assert mb.mean_intake_kcal is not None
    d, d_sd, _ = exp_.maintenance_deficit_posterior(mb.deficit_kcal.value, mb.deficit_se_kcal)
    tdee_b = mb.mean_intake_kcal + d
    mean_wb = float(level[:d0].mean())
    age = sim.age
    rest_b = resting_kcal_mifflin_st_jeor(sim.sex, mean_wb, sim.height_cm, age)  # type: ignore[arg-type]
    baseline = exp_.Baseline(
        tdee_b,
        math.hypot(d_sd, mb.intake_se_kcal or 0.0),
        mean_wb,
        fat_at(mean_wb),
        mb.mean_intake_kcal,
        rest_b,
    )
    delta = exp_.activity_coefficient_kcal_per_kg_day(tdee_b, rest_b, mean_wb)
    fat_now = fat_at(cur_w)
    expected = exp_.expected_tdee_from_baseline(baseline, cur_w, fat_now, sim.target_kcal)
    assert expected.value is not None and expected.high is not None
    rho = energy_density_kcal_per_kg(fat_now)
    planned = pl.planned_rate_pct_per_week(expected.value, sim.target_kcal, rho, cur_w)
    planned_se = (expected.high - expected.value) / Z80 * 700.0 / rho / cur_w
    # water
    recent_intake = intake[lo:]
    reasons = pl.water_explanation(recent_intake)
    before = None
    j = pl.first_high_day(recent_intake)
    if j is not None and j >= bal.MIN_DAYS:
        # cut the series at the first high day, so the fit cannot see the water after it
        wb = pl.recent_window_rate(w[: lo + j], lo, lo + j - 1, fit.weights[: lo + j], noise)
        if wb is not None:
            before = (700.0 * wb.rate_kg_per_day / cur_w, 700.0 * wb.se_kg_per_day / cur_w)
    status = pl.progress_status(
        rate_pct,
        se_pct,
        planned,
        phase_days=n - d0,
        recent_days=pl.RECENT_WINDOW_DAYS,
        recent_weigh_ins=int(np.isfinite(w[lo:]).sum()),
        water_reasons=reasons,
        rate_before_water=before,
        planned_se_pct_per_week=planned_se * PLANNED_SE_FACTOR,
    )

    def summary(i0: int, i1: int, rate: WindowRate | None) -> pc.WindowSummary | None:
        b = bal.window_balance(
            w[i0 : i1 + 1],
            intake[i0 : i1 + 1],
            fat_at(float(level[i0])),
            FAT_SE_KG,
            fit.weights[i0 : i1 + 1],
            noise,
            rate,
        )
        if b.deficit_kcal.value is None or b.deficit_se_kcal is None:
            return None
        mean_w = float(level[i0 : i1 + 1].mean())
        steps, steps_se = pc.signal_mean(sim.steps[i0 : i1 + 1])
        return pc.WindowSummary(
            days=i1 - i0 + 1,
            first_day_in_deficit=i0 - d0,
            mean_weight_kg=mean_w,
            fat_kg=fat_at(mean_w),
            deficit_kcal=b.deficit_kcal.value,
            deficit_se_kcal=b.deficit_se_kcal,
            intake_kcal=b.mean_intake_kcal,
            intake_se_kcal=b.intake_se_kcal,
            intake_days=b.intake_days,
            steps=steps,
            steps_se=steps_se,
        )

    e0 = d0 + EARLY_FIRST
    early = summary(e0, e0 + EARLY_DAYS - 1, None)  # the window's own GLS slope
    recent = summary(lo, last, wr)
    causes = None
    if early is not None and recent is not None:
        act = step_energy_change_kcal(
            sim.steps[e0 : e0 + EARLY_DAYS],
            sim.steps[lo:],
            recent.mean_weight_kg,
            sim.height_cm,
            sim.sex,
        )
        causes = pc.deficit_change_causes(
            early, recent, activity_coefficient_kcal_per_kg_day=delta, activity_change=act
        )
    return Outcome(sim, status, causes)


def _pct(k: int, n: int) -> str:
    return f"{100.0 * k / n:5.1f} % ({k}/{n})" if n else "  n/a"


def _covers(e: Estimate, truth: float) -> bool:
    return e.low is not None and e.high is not None and e.low <= truth <= e.high


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--per-scenario", type=int, default=12, help="clients per scenario")
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--status-z", type=float, default=None, help="override plateau.STATUS_Z")
    ap.add_argument("--planned-se-factor", type=float, default=1.0, help="scale the plan's SE")
    args = ap.parse_args(argv)
    global PLANNED_SE_FACTOR
    PLANNED_SE_FACTOR = args.planned_se_factor
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
    losing = [o for o in outcomes if o.sim.true_recent_rate_pct <= -0.5]
    false_stall = sum(o.status.status == "stalled" for o in losing)
    print()
    print(f"status accuracy (>= 3 weeks recent data): {_pct(ok_all, n_all)}   target >= 90 %")
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
