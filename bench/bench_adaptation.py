"""Adaptation benchmark outside the estimator's own model.

Clients come from ``bench/scenarios.py``, a separate simulated world that shares
no equation or constant with ``reportgen.science`` (see its docstring).  For each
scenario the real ``reportgen.analysis.analyse_client`` is run and, per phase of
at least ``--min-weeks`` weeks, the script prints side by side:

* adaptation mean absolute error of the tool, of "always zero", of the literature
  expectation alone (Hall 2011 AT term for the realised cut,
  ``reportgen.science.adaptation.literature_adaptation_kcal``) and of the
  spreadsheet method (7700 kcal/kg: cut TDEE minus the baseline's, scaled by weight);
* 80 % interval coverage of deficit, adaptation and TDEE (TDEE on honest logs only:
  observed TDEE inherits logging bias by definition);
* median adaptation half-width on deficit phases of 8 weeks or more;
* realised-deficit RMS error relative to the least-squares bound (rho x the true
  SD of the least-squares slope under the world's noise);
* 80 % trend band coverage of the true body mass (fat + lean + glycogen) at the
  time of each day's weigh-in (before that day's intake: the mass the weigh-in
  measures);
* for the "adaptation x2" scenario: the share of the difference between the truth
  and the typical value that the tool recovers.

Targets (issue "Metabolic adaptation a practitioner can defend"): adaptation MAE
<= 0.75 x "always zero"; coverage 0.70-0.90 for deficit and adaptation in every
scenario (TDEE on honest logs); median half-width <= 150 kcal/day; deficit
<= 1.3 x LS bound; trend band 0.75-0.85; recovery >= 0.5.

``--diag`` also prints, per scenario, the median stated SE of the data (observed minus
expected), of the baseline and of the phase's observed TDEE, and the literature's SD,
each beside the RMS of its actual error, with the median data weight and the mean
logging-drift probability: where the interval's width comes from.

Run:  python bench/bench_adaptation.py [--clients 40] [--seed 3] [--only NAME] [--diag]
"""

from __future__ import annotations

import argparse
import math
import sys
import time
import zlib
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

from scenarios import SCENARIOS, Scenario, World, ls_slope_sd_kg_per_day, simulate

from reportgen.analysis import run_stages
from reportgen.analysis.stages import ClientStages
from reportgen.config import AnalysisSettings
from reportgen.results import ClientAnalysis, Estimate, PhaseResult
from reportgen.science.adaptation import literature_adaptation_kcal
from reportgen.science.trend import Z80

SHEET_KCAL_PER_KG = 7700.0  # the spreadsheet rule being compared against


@dataclass
class Tally:
    ad_tool: list[float] = field(default_factory=list)
    ad_zero: list[float] = field(default_factory=list)
    ad_lit: list[float] = field(default_factory=list)
    ad_sheet: list[float] = field(default_factory=list)
    ad_cover: list[bool] = field(default_factory=list)
    ad_lit_cover: list[bool] = field(default_factory=list)
    ad_half8: list[float] = field(default_factory=list)
    def_cover: list[bool] = field(default_factory=list)
    def_err: list[float] = field(default_factory=list)
    def_sheet_err: list[float] = field(default_factory=list)
    ls: list[float] = field(default_factory=list)
    tdee_cover: list[bool] = field(default_factory=list)
    trend_cover: list[bool] = field(default_factory=list)
    recover_tool: list[float] = field(default_factory=list)
    recover_truth: list[float] = field(default_factory=list)
    act_err: list[float] = field(default_factory=list)
    seconds: float = 0.0
    # --diag: where the adaptation interval's width comes from
    dg_data_se: list[float] = field(default_factory=list)
    dg_data_err: list[float] = field(default_factory=list)
    dg_base_se: list[float] = field(default_factory=list)
    dg_base_err: list[float] = field(default_factory=list)
    dg_cut_se: list[float] = field(default_factory=list)
    dg_cut_err: list[float] = field(default_factory=list)
    dg_lit_sd: list[float] = field(default_factory=list)
    dg_lit_err: list[float] = field(default_factory=list)
    dg_weight: list[float] = field(default_factory=list)
    dg_drift: list[float] = field(default_factory=list)


def _covers(e: Estimate, truth: float) -> bool:
    return e.low is not None and e.high is not None and e.low <= truth <= e.high


def _sheet(world: World, i0: int, i1: int) -> tuple[float, float, float] | None:
    w = world.record.log.weight_kg[i0 : i1 + 1]
    x = world.record.log.intake_kcal[i0 : i1 + 1]
    ok = np.nonzero(np.isfinite(w))[0]
    if ok.size < 2 or not np.isfinite(x).any():
        return None
    days = max(int(ok[-1] - ok[0]), 1)
    deficit = (w[ok[0]] - w[ok[-1]]) * SHEET_KCAL_PER_KG / days
    return float(deficit), float(np.nanmean(x)) + float(deficit), float(np.nanmean(w))


def score(world: World, a: ClientAnalysis, t: Tally, min_days: int) -> None:
    if a.trend is not None:
        m = world.mass_at_weigh_in_kg
        lo, hi = a.trend.level_low_kg, a.trend.level_high_kg
        sl = slice(7, len(m))
        t.trend_cover.extend(((lo[sl] <= m[sl]) & (m[sl] <= hi[sl])).tolist())
    base_p: PhaseResult | None = None
    base_tr = world.phases[0]
    for p, tr in zip(a.phases, world.phases, strict=True):
        if tr.kind == "maintenance":
            base_p = p
        days = tr.end_index - tr.start_index + 1
        if days < min_days:
            continue
        d = p.realised_deficit_kcal
        if d.known:
            assert d.value is not None
            t.def_cover.append(_covers(d, tr.deficit_kcal))
            t.def_err.append(d.value - tr.deficit_kcal)
            sd = ls_slope_sd_kg_per_day(world, tr.start_index, tr.end_index)
            dw = world.mass_true_kg[tr.end_index] - world.mass_true_kg[tr.start_index]
            rho = abs(tr.deficit_kcal * days / dw) if abs(dw) > 0.3 else 7000.0
            t.ls.append(rho * sd)
            sh = _sheet(world, tr.start_index, tr.end_index)
            if sh is not None:
                t.def_sheet_err.append(sh[0] - tr.deficit_kcal)
        if world.under_report == "none" and p.observed_tdee_kcal.known:
            t.tdee_cover.append(_covers(p.observed_tdee_kcal, tr.tdee_kcal))
        if tr.kind != "deficit":
            continue
        ad = p.adaptation_kcal
        if not ad.known:
            continue
        assert ad.value is not None and ad.low is not None and ad.high is not None
        t.ad_tool.append(abs(ad.value - tr.adaptation_kcal))
        t.ad_zero.append(abs(tr.adaptation_kcal))
        t.ad_cover.append(_covers(ad, tr.adaptation_kcal))
        if days >= 56:
            t.ad_half8.append((ad.high - ad.low) / 2)
        # literature alone, for the cut the weights show (deficit change from the baseline)
        if base_p is not None and base_p.realised_deficit_kcal.known and d.known:
            assert base_p.realised_deficit_kcal.value is not None and d.value is not None
            cut = -(d.value - base_p.realised_deficit_kcal.value)
            m_lit, s_lit = literature_adaptation_kcal(min(cut, 0.0), 0, days)
            t.ad_lit.append(abs(m_lit - tr.adaptation_kcal))
            t.ad_lit_cover.append(abs(m_lit - tr.adaptation_kcal) <= Z80 * s_lit)
            t.recover_tool.append(ad.value - tr.typical_adaptation_kcal)
            t.recover_truth.append(tr.adaptation_kcal - tr.typical_adaptation_kcal)
        sb = _sheet(world, base_tr.start_index, base_tr.end_index)
        sc = _sheet(world, tr.start_index, tr.end_index)
        if sb is not None and sc is not None:
            t.ad_sheet.append(abs(sc[1] - sb[1] * sc[2] / sb[2] - tr.adaptation_kcal))
        act = getattr(p, "activity_change_kcal", None)
        if isinstance(act, Estimate) and act.known and act.value is not None:
            t.act_err.append(abs(act.value - tr.activity_kcal))


def diagnose(world: World, st: ClientStages, t: Tally, min_days: int) -> None:
    """Per deficit phase: the data's SE against its actual error, and the literature's."""
    base = st.baseline
    base_tr = world.phases[0]
    if base is None or base_tr.kind != "maintenance":
        return
    for pa, ex, tr in zip(st.adaptations, st.expectations, world.phases, strict=True):
        if pa is None or ex is None or tr.kind != "deficit":
            continue
        if tr.end_index - tr.start_index + 1 < min_days:
            continue
        ev = pa.evidence
        assert ev.data.value is not None and ev.literature.value is not None
        assert ex.observed_tdee.value is not None
        t.dg_data_se.append(ev.data.normal_sd)
        t.dg_data_err.append(ev.data.value - tr.adaptation_kcal)
        t.dg_base_se.append(base.tdee_se_kcal)
        t.dg_base_err.append(base.tdee_kcal - base_tr.tdee_kcal)
        t.dg_cut_se.append(ex.observed_tdee.normal_sd)
        t.dg_cut_err.append(ex.observed_tdee.value - tr.tdee_kcal)
        t.dg_lit_sd.append(ev.literature.normal_sd)
        t.dg_lit_err.append(ev.literature.value - tr.adaptation_kcal)
        t.dg_weight.append(ev.data_weight)
        t.dg_drift.append(ev.logging_drift_probability)


def _med(x: list[float]) -> float:
    return float(np.median(x)) if x else math.nan


def diag_line(name: str, t: Tally) -> str:
    """Median stated SE against the RMS of the actual error, per piece."""
    ce = np.corrcoef(t.dg_base_err, t.dg_cut_err)[0, 1] if len(t.dg_base_err) > 2 else math.nan
    return (
        f"{name:34s} | data se {_med(t.dg_data_se):4.0f} err {_rms(t.dg_data_err):4.0f} | "
        f"base se {_med(t.dg_base_se):4.0f} err {_rms(t.dg_base_err):4.0f} | "
        f"cut se {_med(t.dg_cut_se):4.0f} err {_rms(t.dg_cut_err):4.0f} r {ce:5.2f} | "
        f"lit sd {_med(t.dg_lit_sd):4.0f} err {_rms(t.dg_lit_err):4.0f} | "
        f"w {_med(t.dg_weight):4.2f} drift {_m(t.dg_drift):4.2f}"
    )


def _m(x: list[float]) -> float:
    return float(np.mean(x)) if x else math.nan


def _rms(x: list[float]) -> float:
    return float(math.sqrt(np.mean(np.square(x)))) if x else math.nan


def run_scenario(sc: Scenario, n: int, seed: int, min_days: int) -> Tally:
    rng = np.random.default_rng([seed, zlib.crc32(sc.name.encode())])
    t = Tally()
    settings = AnalysisSettings()
    for i in range(n):
        world = simulate(rng, sc, f"x{i:03d}")
        t0 = time.perf_counter()
        st = run_stages(world.record, world.month, settings)
        a = st.analysis()
        t.seconds += time.perf_counter() - t0
        score(world, a, t, min_days)
        diagnose(world, st, t, min_days)
    return t


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--clients", type=int, default=40, help="clients per scenario")
    ap.add_argument("--seed", type=int, default=3)
    ap.add_argument("--min-weeks", type=int, default=4)
    ap.add_argument("--only", default="", help="run only scenarios whose name contains this")
    ap.add_argument(
        "--diag",
        action="store_true",
        help="also print, per scenario, each piece's median stated SE against its RMS error",
    )
    args = ap.parse_args(argv)
    diags: list[str] = []
    head = (
        f"{'scenario':34s} {'n':>3s} | {'adaptation MAE: tool':>20s} {'zero':>5s} {'lit':>5s} "
        f"{'sheet':>5s} {'t/0':>5s} | {'cover: ad':>9s} {'def':>5s} {'tdee':>5s} "
        f"{'lit':>5s} | {'half8':>5s} | {'def/LS':>6s} {'sheet':>5s} | {'trend':>5s} | "
        f"{'recov':>5s} {'act':>5s}"
    )
    print(
        f"{args.clients} clients per scenario, seed {args.seed}, phases >= {args.min_weeks} weeks"
    )
    print(head)
    print("-" * len(head))
    total = 0.0
    for sc in SCENARIOS:
        if args.only and args.only not in sc.name:
            continue
        t = run_scenario(sc, args.clients, args.seed, 7 * args.min_weeks)
        total += t.seconds
        diags.append(diag_line(sc.name, t))
        ratio = _m(t.ad_tool) / _m(t.ad_zero) if t.ad_zero else math.nan
        rec = (
            _m(t.recover_tool) / _m(t.recover_truth)
            if t.recover_truth and abs(_m(t.recover_truth)) > 20
            else math.nan
        )
        half8 = float(np.median(t.ad_half8)) if t.ad_half8 else math.nan
        print(
            f"{sc.name:34s} {len(t.ad_tool):3d} | {_m(t.ad_tool):20.0f} {_m(t.ad_zero):5.0f} "
            f"{_m(t.ad_lit):5.0f} {_m(t.ad_sheet):5.0f} {ratio:5.2f} | "
            f"{_m(t.ad_cover):9.2f} {_m(t.def_cover):5.2f} {_m(t.tdee_cover):5.2f} "
            f"{_m(t.ad_lit_cover):5.2f} | {half8:5.0f} | "
            f"{_rms(t.def_err) / _rms(t.ls):6.2f} {_rms(t.def_sheet_err) / _rms(t.ls):5.2f} | "
            f"{_m(t.trend_cover):5.2f} | {rec:5.2f} {_m(t.act_err):5.0f}"
        )
    print(
        "targets: t/0 <= 0.75; cover ad/def 0.70-0.90 (tdee on honest logs); half8 <= 150; "
        "def/LS <= 1.3; trend 0.75-0.85; recov >= 0.5"
    )
    print(f"analyse_client time: {total:.1f} s")
    if args.diag:
        print("\ndiagnostics: median stated SE/SD against the RMS of the actual error [kcal/day]")
        print("\n".join(diags))
    return 0


if __name__ == "__main__":
    sys.exit(main())
