"""Accuracy benchmark: reportgen's estimators against the spreadsheet method on simulated clients.

Simulated clients (``reportgen.testing.simulate``, invented data with known truth)
are analysed by the real ``reportgen.analysis.analyse_client``.  Scores per phase
window of at least ``--min-weeks`` weeks:

* trend RMSE: smoothed trend vs true body mass (and a plain smoothing baseline and the raw
  weigh-ins);
* realised-deficit error vs the true energy drawn from stores;
* expenditure error (observed TDEE vs the true mean expenditure), on clients
  without under-reporting;
* 80 % interval coverage of deficit, TDEE and adaptation;
* adaptation error vs the true adaptive thermogenesis;
* the least-squares bound: rho x the true sampling SD of the least-squares slope
  under the simulated noise (AR(1) water + white noise) on the observed days; for
  expenditure combined with the actual error of the mean logged intake, which
  every method shares.

The spreadsheet method is (first - last raw weight) x 7700 kcal/kg / days, plus the
mean logged intake for TDEE.

Run:  python bench/bench_accuracy.py [--clients 200] [--seed 1] [--min-weeks 4]
"""

from __future__ import annotations

import argparse
import math
import sys
import time
from dataclasses import dataclass, field

import numpy as np

from reportgen.analysis import analyse_client
from reportgen.config import AnalysisSettings
from reportgen.results import Estimate
from reportgen.science.balance import spreadsheet_tdee_kcal
from reportgen.science.trend import ema
from reportgen.testing.simulate import SimulatedClient, SimulationSpec, simulate_client


@dataclass
class Scores:
    trend_sq: list[float] = field(default_factory=list)
    ema_sq: list[float] = field(default_factory=list)
    raw_sq: list[float] = field(default_factory=list)
    deficit_err: list[float] = field(default_factory=list)
    deficit_sheet_err: list[float] = field(default_factory=list)
    deficit_cover: list[bool] = field(default_factory=list)
    ls_bound: list[float] = field(default_factory=list)
    tdee_err: list[float] = field(default_factory=list)
    tdee_sheet_err: list[float] = field(default_factory=list)
    tdee_cover: list[bool] = field(default_factory=list)
    tdee_ls_bound: list[float] = field(default_factory=list)
    adapt_err: list[float] = field(default_factory=list)
    adapt_cover: list[bool] = field(default_factory=list)
    adapt_all_err: list[float] = field(default_factory=list)
    path_err: list[float] = field(default_factory=list)
    path_cover: list[bool] = field(default_factory=list)
    proj_err: dict[int, list[float]] = field(default_factory=lambda: {28: [], 56: [], 84: []})
    proj_cover: dict[int, list[bool]] = field(default_factory=lambda: {28: [], 56: [], 84: []})
    seconds: list[float] = field(default_factory=list)
    client_days: int = 0


def _covers(e: Estimate, truth: float) -> bool:
    assert e.low is not None and e.high is not None
    return e.low <= truth <= e.high


def ls_bound_kg_per_day(sim: SimulatedClient, i0: int, i1: int) -> float:
    """True SD of the least-squares slope on the window's observed days."""
    w = sim.record.log.weight_kg[i0 : i1 + 1]
    t = np.nonzero(np.isfinite(w))[0].astype(float)
    c = (t - t.mean()) / np.sum((t - t.mean()) ** 2)
    lag = np.abs(t[:, None] - t[None, :])
    cov = sim.noise_ar_sd_kg**2 * sim.noise_ar_phi**lag
    cov[np.diag_indices(len(t))] += sim.noise_white_sd_kg**2
    return float(math.sqrt(c @ cov @ c))


def score_client(
    sim: SimulatedClient, s: Scores, min_days: int, settings: AnalysisSettings
) -> None:
    t0 = time.perf_counter()
    a = analyse_client(sim.record, sim.month, settings)
    s.seconds.append(time.perf_counter() - t0)
    log = sim.record.log
    s.client_days += log.n_days
    truth_w = sim.weight_true_kg
    assert a.trend is not None
    s.trend_sq.extend(((a.trend.level_kg - truth_w) ** 2).tolist())
    e = ema(log.weight_kg)
    s.ema_sq.extend(((e - truth_w) ** 2).tolist())
    raw = log.weight_kg
    ok = np.isfinite(raw)
    s.raw_sq.extend(((raw[ok] - truth_w[ok]) ** 2).tolist())
    honest = sim.under_report == 0.0
    for p, tr in zip(a.phases, sim.phases, strict=True):
        if p.days < min_days or not p.realised_deficit_kcal.known:
            continue
        i0, i1 = tr.start_index, tr.end_index
        d = p.realised_deficit_kcal
        assert d.value is not None
        s.deficit_err.append(d.value - tr.deficit_kcal)
        s.deficit_cover.append(_covers(d, tr.deficit_kcal))
        sheet_def, sheet_tdee = spreadsheet_tdee_kcal(
            log.weight_kg[i0 : i1 + 1], log.intake_kcal[i0 : i1 + 1]
        )
        s.deficit_sheet_err.append(sheet_def - tr.deficit_kcal)
        # rho of the truth over the window (energy per kg of the true change)
        dw = truth_w[i1] - truth_w[i0]
        rho = abs(tr.deficit_kcal * p.days / dw) if abs(dw) > 0.3 else 7000.0
        s.ls_bound.append(rho * ls_bound_kg_per_day(sim, i0, i1))
        if honest and p.observed_tdee_kcal.known:
            t = p.observed_tdee_kcal
            assert t.value is not None
            s.tdee_err.append(t.value - tr.tdee_kcal)
            s.tdee_sheet_err.append(sheet_tdee - tr.tdee_kcal)
            s.tdee_cover.append(_covers(t, tr.tdee_kcal))
            # the best any method can do also carries the error of the mean logged intake
            # over the logged days (the same for every method)
            logged = log.intake_kcal[i0 : i1 + 1]
            ok_i = np.isfinite(logged)
            intake_err = float(logged[ok_i].mean() - sim.intake_true_kcal[i0 : i1 + 1].mean())
            s.tdee_ls_bound.append(math.hypot(rho * ls_bound_kg_per_day(sim, i0, i1), intake_err))
        if p.adaptation_kcal.known and p.kind == "deficit":
            ad = p.adaptation_kcal
            assert ad.value is not None
            s.adapt_all_err.append(ad.value - tr.adaptation_kcal)
            if honest:
                s.adapt_err.append(ad.value - tr.adaptation_kcal)
                s.adapt_cover.append(_covers(ad, tr.adaptation_kcal))
    fut = sim.future_weight_kg
    # projection: only where the current phase has run 4 weeks, so the "current intake"
    # (last 28 days) is the plan that the simulated future continues
    cur = a.current_phase
    if a.projection is not None and fut.size and cur is not None and cur.days >= 28:
        pr = a.projection
        for k in s.proj_err:
            if k < len(pr.weight_kg) and k - 1 < fut.size:
                truth = float(fut[k - 1])
                s.proj_err[k].append(float(pr.weight_kg[k]) - truth)
                s.proj_cover[k].append(bool(pr.low_kg[k] <= truth <= pr.high_kg[k]))
    if honest and a.expenditure is not None:
        ee = sim.expenditure_true_kcal
        k = np.ones(7) / 7
        smooth = np.convolve(ee, k, mode="same")
        sl = slice(21, len(ee) - 4)  # skip the start-up and the last days
        err = a.expenditure.tdee_kcal[sl] - smooth[sl]
        s.path_err.extend(err.tolist())
        cov = (a.expenditure.low_kcal[sl] <= smooth[sl]) & (
            smooth[sl] <= a.expenditure.high_kcal[sl]
        )
        s.path_cover.extend(cov.tolist())


def rms(x: list[float]) -> float:
    return float(math.sqrt(np.mean(np.square(x)))) if x else math.nan


def run(n_clients: int, seed: int, min_weeks: int, maintenance_first: bool = True) -> Scores:
    """Score ``n_clients`` simulated clients.

    With ``maintenance_first`` False the clients have no maintenance phase: the log
    starts 0-7 days before the first deficit (days that belong to no phase), so the
    expected TDEE comes from the first weeks of data, glycogen loss and all.
    """
    rng = np.random.default_rng(seed)
    lead = np.random.default_rng([seed, 1])
    s = Scores()
    settings = AnalysisSettings()
    for i in range(n_clients):
        if maintenance_first:
            sim = simulate_client(rng, SimulationSpec(client_id=f"b{i:04d}", future_days=84))
        else:
            spec = SimulationSpec(
                client_id=f"n{i:04d}",
                future_days=84,
                maintenance_first=False,
                lead_in_days=int(lead.integers(0, 8)),
            )
            sim = simulate_client(rng, spec)
        score_client(sim, s, 7 * min_weeks, settings)
    return s


def short_table(s: Scores) -> str:
    """Expenditure and adaptation rows only (the clients without a maintenance baseline)."""
    rows = [
        ("realised deficit RMSE [kcal/d]", rms(s.deficit_err)),
        ("  80 % interval coverage", float(np.mean(s.deficit_cover))),
        ("expenditure RMSE, honest logs [kcal/d]", rms(s.tdee_err)),
        ("  80 % interval coverage", float(np.mean(s.tdee_cover))),
        ("adaptation RMSE, honest logs [kcal/d]", rms(s.adapt_err)),
        ("  mean error (bias) [kcal/d]", float(np.mean(s.adapt_err))),
        ("  80 % interval coverage", float(np.mean(s.adapt_cover))),
        ("adaptation RMSE, all logs [kcal/d]", rms(s.adapt_all_err)),
        ("  mean error (bias) [kcal/d]", float(np.mean(s.adapt_all_err))),
    ]
    out = [f"{name:44s} {v:10.3f}" for name, v in rows]
    out.append(
        f"phases scored: deficit {len(s.deficit_err)}, expenditure {len(s.tdee_err)}, "
        f"adaptation {len(s.adapt_err)}"
    )
    return "\n".join(out)


def table(s: Scores) -> str:
    rows = [
        (
            "trend RMSE vs true mass [kg]",
            rms(s.trend_sq and [math.sqrt(v) for v in s.trend_sq]),
            rms(s.raw_sq and [math.sqrt(v) for v in s.raw_sq]),
            "raw weigh-ins",
        ),
        (
            "plain smoothing baseline RMSE vs true mass [kg]",
            rms([math.sqrt(v) for v in s.ema_sq]),
            math.nan,
            "",
        ),
        (
            "realised deficit RMSE [kcal/d]",
            rms(s.deficit_err),
            rms(s.deficit_sheet_err),
            "spreadsheet",
        ),
        (
            "  mean error (bias) [kcal/d]",
            float(np.mean(s.deficit_err)),
            float(np.mean(s.deficit_sheet_err)),
            "spreadsheet",
        ),
        ("  LS bound (RMS) [kcal/d]", rms(s.ls_bound), math.nan, ""),
        (
            "  ratio to LS bound",
            rms(s.deficit_err) / rms(s.ls_bound),
            rms(s.deficit_sheet_err) / rms(s.ls_bound),
            "spreadsheet",
        ),
        ("  80 % interval coverage", float(np.mean(s.deficit_cover)), math.nan, ""),
        (
            "expenditure RMSE, honest logs [kcal/d]",
            rms(s.tdee_err),
            rms(s.tdee_sheet_err),
            "spreadsheet",
        ),
        (
            "  ratio to LS bound",
            rms(s.tdee_err) / rms(s.tdee_ls_bound),
            rms(s.tdee_sheet_err) / rms(s.tdee_ls_bound),
            "spreadsheet",
        ),
        ("  80 % interval coverage", float(np.mean(s.tdee_cover)), math.nan, ""),
        ("adaptation RMSE, honest logs [kcal/d]", rms(s.adapt_err), math.nan, ""),
        ("  mean error (bias) [kcal/d]", float(np.mean(s.adapt_err)), math.nan, ""),
        ("  80 % interval coverage", float(np.mean(s.adapt_cover)), math.nan, ""),
        ("adaptation RMSE, all logs [kcal/d]", rms(s.adapt_all_err), math.nan, ""),
        (
            "  mean error (bias) [kcal/d]",
            float(np.mean(s.adapt_all_err)),
            math.nan,
            "under-logging",
        ),
        ("daily expenditure path RMSE [kcal/d]", rms(s.path_err), math.nan, "vs 7-day true mean"),
        ("  80 % band coverage", float(np.mean(s.path_cover)), math.nan, ""),
    ]
    out = [f"{'measure':44s} {'reportgen':>10s} {'other':>10s}  other is"]
    for name, a, b, what in rows:
        bs = "" if math.isnan(b) else f"{b:10.3f}"
        out.append(f"{name:44s} {a:10.3f} {bs:>10s}  {what}")
    for k in sorted(s.proj_err):
        if s.proj_err[k]:
            out.append(
                f"{f'projection at {k} d: RMSE [kg] / 80 % coverage':44s} "
                f"{rms(s.proj_err[k]):10.3f} {float(np.mean(s.proj_cover[k])):10.3f}  "
                f"(n {len(s.proj_err[k])})"
            )
    out.append(
        f"phases scored: deficit {len(s.deficit_err)}, expenditure {len(s.tdee_err)}, "
        f"adaptation {len(s.adapt_err)}"
    )
    per_year = 1000 * sum(s.seconds) / (s.client_days / 365.25)
    out.append(
        f"analyse_client: {1000 * np.mean(s.seconds):.1f} ms/client, "
        f"{per_year:.1f} ms per client-year"
    )
    return "\n".join(out)


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--clients", type=int, default=200)
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--min-weeks", type=int, default=4)
    ap.add_argument(
        "--no-baseline-clients",
        type=int,
        default=100,
        help="also score this many clients without a maintenance phase",
    )
    args = ap.parse_args(argv)
    s = run(args.clients, args.seed, args.min_weeks)
    print(f"{args.clients} simulated clients, seed {args.seed}, phases >= {args.min_weeks} weeks")
    print(table(s))
    if args.no_baseline_clients > 0:
        nb = run(args.no_baseline_clients, args.seed, args.min_weeks, maintenance_first=False)
        print()
        print(
            f"{args.no_baseline_clients} clients without a maintenance phase "
            "(baseline from the first weeks of a deficit)"
        )
        print(short_table(nb))
    return 0


if __name__ == "__main__":
    sys.exit(main())
