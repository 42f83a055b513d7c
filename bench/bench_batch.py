"""Benchmark of the month-end batch: reports per second, time split, memory, and the HTML route.

Generates N simulated clients (the science simulator, ``reportgen.testing.simulate``, written
as a plain CSV book), runs the real batch end to end (``reportgen.batch.run_batch``) at each
size with the given number of workers, and reports:

* client reports per second (both documents per client), wall time;
* the split of worker time between reading, computing (analysis), charts, layout (the
  reportlab build and chart embedding), and writing, from the timings every task returns;
* peak resident memory per worker process (VmHWM), and how it moves from the first task a
  worker ran to its last, so growth with N shows;
* the same content rendered through jinja2 HTML + WeasyPrint (``bench/html_route``) side by
  side with the product's route on a subset, serially in this process, and the ratio.

Usage::

    MPLBACKEND=Agg python bench/bench_batch.py                  # 10, 100, 500 clients, 2 workers
    MPLBACKEND=Agg python bench/bench_batch.py --sizes 10,50 --compare 4

Targets (batch issue): >= 6 client reports/s with 2 workers (500 clients < 90 s), peak memory
per worker < 300 MB and flat in N, >= 5x faster than the HTML route.  Times on shared machines
drift by +-40 % between runs; ratios within one run are the reliable part.
"""

from __future__ import annotations

import argparse
import csv
import datetime as dt
import gc
import json
import math
import os
import resource
import shutil
import statistics
import sys
import tempfile
import time
from collections import defaultdict
from pathlib import Path

os.environ.setdefault("MPLBACKEND", "Agg")
sys.path.insert(0, str(Path(__file__).resolve().parent))

import numpy as np

from reportgen.batch import ClientOutcome, run_batch
from reportgen.io.limits import SKINFOLD_MM
from reportgen.io.model import SKINFOLD_SITES, SkinfoldSession
from reportgen.testing.simulate import SimulatedClient, SimulationSpec, simulate_client

MONTH = "2026-11"
MONTH_END = dt.date(2026, 11, 30)
LOG_COLUMNS = ("date", "weight_kg", "intake_kcal", "steps", "hunger", "energy", "sleep_h")


def _cell(value: float, decimals: int) -> str:
    if value is None or not math.isfinite(value):
        return ""
    return f"{value:.{decimals}f}"


def _write_csv(path: Path, header: list[str], rows: list[list[str]]) -> None:
    path.parent.mkdir(parents=True, exist_ok=True)
    with open(path, "w", encoding="utf-8", newline="") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(header)
        w.writerows(rows)


YEAR_DAYS = 365


def _simulate_year(seed: int, k: int, cid: str, month_end: dt.date) -> SimulatedClient:
    """Simulated client ``k`` with about a year of daily logs.

    The simulator's longest plan (two deficits with a break between) is 5-9 months; the
    rest of the year is logged before the first deficit as days at maintenance intake that
    belong to no phase (the simulator's ``lead_in_days``).  The plan's length is drawn from
    the client's own seed, so a first draw without lead-in gives it, and the second draw
    (same seed, so the same person and plan) adds the lead-in that makes up the year.
    """

    def draw(lead_in_days: int) -> SimulatedClient:
        rng = np.random.default_rng([seed, k])
        spec = SimulationSpec(
            client_id=cid,
            month_end=month_end,
            two_deficits=True,
            maintenance_first=False,
            lead_in_days=lead_in_days,
        )
        return simulate_client(rng, spec)

    plan_days = draw(0).record.log.n_days
    return draw(max(YEAR_DAYS - plan_days, 0))


def _caliper_can_take(sessions: tuple[SkinfoldSession, ...]) -> bool:
    lo, hi = SKINFOLD_MM
    return all(lo <= v <= hi for s in sessions for vs in s.readings_mm.values() for v in vs)


def simulate_book(
    book: Path, n_clients: int, month_end: dt.date = MONTH_END, seed: int = 20261130
) -> dict[str, float]:
    """Write ``n_clients`` simulated clients into ``book``; returns size figures.

    Client ``k`` always gets the same simulated person (seeded per client), so the first ten
    clients of the 500-client book are the ten of the 10-client book.  Every client has
    about a year of daily logs (:func:`_simulate_year`): a lead-in at maintenance intake,
    then two deficits with a break between.
    """
    roster: list[list[str]] = []
    phases: list[list[str]] = []
    days: list[int] = []
    no_skinfolds = 0
    for k in range(n_clients):
        cid = f"s{k + 1:04d}"
        sim = _simulate_year(seed, k, cid, month_end)
        rec = sim.record
        c = rec.client
        roster.append(
            [
                cid,
                c.name,
                c.sex or "",
                c.birth_date.isoformat() if c.birth_date else "",
                _cell(c.height_cm, 1) if c.height_cm is not None else "",
                _cell(c.goal_weight_kg, 1) if c.goal_weight_kg is not None else "",
            ]
        )
        for p in rec.phases:
            phases.append(
                [
                    cid,
                    p.name,
                    p.start.isoformat(),
                    p.end.isoformat() if p.end else "",
                    p.kind,
                    _cell(p.target_kcal, 0) if p.target_kcal is not None else "",
                ]
            )
        log = rec.log
        rows = []
        for i in range(log.n_days):
            rows.append(
                [
                    str(log.dates[i].astype("datetime64[D]")),
                    _cell(log.weight_kg[i], 1),
                    _cell(log.intake_kcal[i], 0),
                    _cell(log.steps[i], 0),
                    _cell(log.hunger[i], 0),
                    _cell(log.energy[i], 0),
                    _cell(log.sleep_h[i], 1),
                ]
            )
        # only days with at least one value are written, as a person's log would be
        rows = [r for r in rows if any(r[1:])]
        _write_csv(book / "logs" / f"{cid}.csv", list(LOG_COLUMNS), rows)
        days.append(log.n_days)
        # a caliper opens to about 80 mm: where a simulated reading is beyond what one can
        # take, a coach would not take skinfolds at all, so that client has no skinfold file
        if rec.skinfolds and not _caliper_can_take(rec.skinfolds):
            no_skinfolds += 1
        elif rec.skinfolds:
            sites = [s for s in SKINFOLD_SITES if any(s in x.readings_mm for x in rec.skinfolds)]
            srows = []
            for session in rec.skinfolds:
                n_read = max(len(v) for v in session.readings_mm.values())
                for j in range(n_read):
                    srows.append(
                        [session.date.isoformat()]
                        + [
                            _cell(session.readings_mm[s][j], 1)
                            if s in session.readings_mm and j < len(session.readings_mm[s])
                            else ""
                            for s in sites
                        ]
                    )
            _write_csv(book / "skinfolds" / f"{cid}.csv", ["date", *sites], srows)
    _write_csv(
        book / "clients.csv",
        ["client_id", "name", "sex", "birth_date", "height_cm", "goal_weight_kg"],
        roster,
    )
    _write_csv(
        book / "phases.csv", ["client_id", "name", "start", "end", "kind", "target_kcal"], phases
    )
    return {
        "clients": float(n_clients),
        "mean_days": float(np.mean(days)) if days else 0.0,
        "min_days": float(np.min(days)) if days else 0.0,
        "max_days": float(np.max(days)) if days else 0.0,
        "without_skinfolds": float(no_skinfolds),
    }


# --- measuring ---------------------------------------------------------------------------

STAGES = ("read", "analyse", "charts", "layout", "view+wording", "write")


def _stage_split(outcomes: list[ClientOutcome]) -> dict[str, float]:
    """Worker seconds per stage, summed over the successful tasks."""
    total: dict[str, float] = defaultdict(float)
    for o in outcomes:
        if not o.ok:
            continue
        t = o.timings_s
        total["read"] += t.get("read", 0.0)
        total["analyse"] += t.get("analyse", 0.0)
        total["write"] += t.get("write", 0.0)
        render = t.get("report", 0.0) + t.get("practitioner", 0.0)
        charts = t.get("report_charts", 0.0) + t.get("practitioner_charts", 0.0)
        layout = t.get("report_layout", 0.0) + t.get("practitioner_layout", 0.0)
        total["charts"] += charts
        total["layout"] += layout
        total["view+wording"] += max(render - charts - layout, 0.0)
    return {k: total.get(k, 0.0) for k in STAGES}


def _memory(outcomes: list[ClientOutcome]) -> dict[str, float]:
    """Peak RSS per worker: highest, and the change from each worker's first task to its last."""
    by_pid: dict[int, list[float]] = defaultdict(list)
    for o in outcomes:
        if o.pid is not None and o.peak_rss_mb is not None:
            by_pid[o.pid].append(o.peak_rss_mb)
    if not by_pid:
        return {"workers": 0, "peak_mb": math.nan, "first_task_mb": math.nan, "growth_mb": math.nan}
    peaks = [max(v) for v in by_pid.values()]
    firsts = [v[0] for v in by_pid.values()]
    growth = [v[-1] - v[0] for v in by_pid.values()]
    return {
        "workers": len(by_pid),
        "peak_mb": max(peaks),
        "first_task_mb": max(firsts),
        "growth_mb": max(growth),
    }


def run_size(n: int, workers: int, root: Path) -> dict[str, object]:
    book = root / f"book-{n}"
    t0 = time.perf_counter()
    size = simulate_book(book, n)
    gen_s = time.perf_counter() - t0
    out = root / f"out-{n}"
    outcomes: list[ClientOutcome] = []
    last_arrival = [0.0]

    def on_outcome(o: ClientOutcome) -> None:
        outcomes.append(o)
        last_arrival[0] = time.perf_counter()

    gc.collect()
    t0 = time.perf_counter()
    result = run_batch(book, MONTH, out, workers=workers, on_outcome=on_outcome)
    wall = time.perf_counter() - t0
    ok = len(result.succeeded)
    split = _stage_split(outcomes)
    mem = _memory(outcomes)
    failed = [(o.client_id, o.reason) for o in result.failed]
    cpu = [o.timings_s.get("cpu", math.nan) for o in outcomes if o.ok]
    task_wall = [
        sum(v for k, v in o.timings_s.items() if "_" not in k and k != "cpu")
        for o in outcomes
        if o.ok
    ]
    row: dict[str, object] = {
        "clients": n,
        "mean_log_days": size["mean_days"],
        "without_skinfolds": size["without_skinfolds"],
        "generate_s": gen_s,
        "wall_s": wall,
        "ok": ok,
        "failed": len(failed),
        "failures": failed[:5],
        "reports_per_s": ok / wall if wall > 0 else math.nan,
        "s_per_report": wall / ok if ok else math.nan,
        "month_files_s": wall - (last_arrival[0] - t0) if outcomes else 0.0,
        "cpu_s_per_client": statistics.mean(cpu) if cpu else math.nan,
        "task_wall_s_per_client": statistics.mean(task_wall) if task_wall else math.nan,
        # what the workers' CPU time allows when each has a core to itself
        "cpu_bound_reports_per_s": workers / statistics.mean(cpu) if cpu else math.nan,
        "load_avg_1min": os.getloadavg()[0],
        "worker_s": split,
        "memory": mem,
        "parent_peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0,
        "out_mb": sum(p.stat().st_size for p in (out / MONTH).iterdir()) / 1e6,
    }
    return row


def compare_html(n: int, root: Path) -> dict[str, object]:
    """Both routes on the same analyses, serially in this process (first client is warm-up)."""
    from html_route.route import render_client_html_pdf, render_practitioner_html_pdf

    from reportgen.analysis import analyse_client
    from reportgen.config import Config
    from reportgen.io.book import read_client, read_roster
    from reportgen.report import render_client_report, render_practitioner_summary

    book = root / "book-compare"
    simulate_book(book, n + 1)
    config = Config()
    roster = read_roster(book)
    rows = []
    skipped: list[tuple[str, str]] = []
    for i, c in enumerate(roster.clients):
        t0, c0 = time.perf_counter(), time.process_time()
        rec = read_client(book, c, roster.phases.get(c.client_id, ()), MONTH_END)
        if not rec.ok:
            skipped.append((c.client_id, rec.errors[0].message))
            continue
        try:
            a = analyse_client(rec, MONTH, config.analysis)
            t1, c1 = time.perf_counter(), time.process_time()
            rl = render_client_report(a, config), render_practitioner_summary(a, config)
            t2, c2 = time.perf_counter(), time.process_time()
            html = render_client_html_pdf(a, config), render_practitioner_html_pdf(a, config)
            t3, c3 = time.perf_counter(), time.process_time()
        except Exception as exc:  # a client one route cannot render is left out of the ratio
            skipped.append((c.client_id, f"{type(exc).__name__}: {exc}"))
            continue
        if i == 0:
            continue  # warm-up: imports, fonts, template compilation
        rows.append(
            {
                "read_analyse_s": t1 - t0,
                "reportlab_s": t2 - t1,
                "html_s": t3 - t2,
                "read_analyse_cpu_s": c1 - c0,
                "reportlab_cpu_s": c2 - c1,
                "html_cpu_s": c3 - c2,
                "reportlab_kb": sum(len(x) for x in rl) / 1024,
                "html_kb": sum(len(x) for x in html) / 1024,
            }
        )
    if not rows:
        return {"clients": 0, "skipped": skipped}
    rl_s = sum(r["reportlab_s"] for r in rows)
    html_s = sum(r["html_s"] for r in rows)
    ra_s = sum(r["read_analyse_s"] for r in rows)
    rl_cpu = sum(r["reportlab_cpu_s"] for r in rows)
    html_cpu = sum(r["html_cpu_s"] for r in rows)
    ra_cpu = sum(r["read_analyse_cpu_s"] for r in rows)
    return {
        "clients": len(rows),
        "skipped": skipped,
        "reportlab_cpu_s_per_client": rl_cpu / len(rows),
        "html_cpu_s_per_client": html_cpu / len(rows),
        "render_cpu_ratio": html_cpu / rl_cpu,
        "whole_cpu_ratio": (ra_cpu + html_cpu) / (ra_cpu + rl_cpu),
        "reportlab_s_per_client": rl_s / len(rows),
        "html_s_per_client": html_s / len(rows),
        "render_ratio": html_s / rl_s,
        "whole_ratio": (ra_s + html_s) / (ra_s + rl_s),
        "reportlab_kb": statistics.mean(r["reportlab_kb"] for r in rows),
        "html_kb": statistics.mean(r["html_kb"] for r in rows),
    }


# --- printing ----------------------------------------------------------------------------


def _print_sizes(rows: list[dict[str, object]], workers: int) -> None:
    print(f"\nBatch end to end, {workers} workers (client report + practitioner summary each)")
    head = (
        f"{'clients':>7} {'log days':>8} {'wall s':>7} {'reports/s':>9} {'s/report':>8} "
        f"{'failed':>6} {'peak MB/worker':>14} {'growth MB':>9} {'parent MB':>9} "
        f"{'month files s':>13}"
    )
    print(head)
    for r in rows:
        mem = r["memory"]
        assert isinstance(mem, dict)
        print(
            f"{r['clients']:>7} {r['mean_log_days']:>8.0f} {r['wall_s']:>7.1f} "
            f"{r['reports_per_s']:>9.2f} {r['s_per_report']:>8.3f} {r['failed']:>6} "
            f"{mem['peak_mb']:>14.0f} {mem['growth_mb']:>9.1f} {r['parent_peak_mb']:>9.0f} "
            f"{r['month_files_s']:>13.2f}"
        )
    print("\nWorker time per stage (share of the summed task time)")
    print(f"{'clients':>7} " + " ".join(f"{s:>13}" for s in STAGES) + f" {'ms/client':>10}")
    for r in rows:
        split = r["worker_s"]
        assert isinstance(split, dict)
        total = sum(split.values()) or 1.0
        ok = int(r["ok"]) or 1  # type: ignore[call-overload]
        print(
            f"{r['clients']:>7} "
            + " ".join(f"{100 * split[s] / total:>12.1f}%" for s in STAGES)
            + f" {1000 * total / ok:>10.0f}"
        )
    print("\nCPU time per client in the workers (independent of other load on the machine)")
    print(
        f"{'clients':>7} {'CPU s/client':>12} {'task wall s':>11} {'load avg':>8} "
        f"{'CPU-bound reports/s':>19}"
    )
    for r in rows:
        print(
            f"{r['clients']:>7} {r['cpu_s_per_client']:>12.3f} "
            f"{r['task_wall_s_per_client']:>11.3f} {r['load_avg_1min']:>8.1f} "
            f"{r['cpu_bound_reports_per_s']:>19.2f}"
        )
    for r in rows:
        if r["without_skinfolds"]:
            print(
                f"  {r['clients']} clients: {r['without_skinfolds']:.0f} without a skinfold file "
                "(simulated readings beyond a caliper's 80 mm)"
            )
    for r in rows:
        if r["failures"]:
            print(f"  failures at {r['clients']}: {r['failures']}")


def _print_compare(c: dict[str, object]) -> None:
    print(f"\nSame content, two routes, serial in one process ({c['clients']} clients)")
    for cid, why in c["skipped"]:  # type: ignore[attr-defined]
        print(f"  left out {cid}: {why}")
    if not c["clients"]:
        return
    print(
        f"  reportlab route (product): {c['reportlab_s_per_client']:.3f} s/client, "
        f"{c['reportlab_kb']:.0f} KiB\n"
        f"  jinja2 HTML + WeasyPrint:  {c['html_s_per_client']:.3f} s/client, "
        f"{c['html_kb']:.0f} KiB\n"
        f"  ratio HTML / reportlab: rendering {c['render_ratio']:.2f}x, "
        f"whole task (read + analyse + render) {c['whole_ratio']:.2f}x\n"
        f"  in CPU seconds: reportlab {c['reportlab_cpu_s_per_client']:.3f} s, "
        f"HTML {c['html_cpu_s_per_client']:.3f} s per client; ratio rendering "
        f"{c['render_cpu_ratio']:.2f}x, whole task {c['whole_cpu_ratio']:.2f}x"
    )


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--sizes", default="10,100,500", help="client counts, comma-separated")
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--compare", type=int, default=6, help="clients for the HTML comparison")
    ap.add_argument("--json", type=Path, help="also write the figures as JSON here")
    ap.add_argument("--keep", type=Path, help="work in this folder and keep it")
    args = ap.parse_args(argv)
    sizes = [int(s) for s in args.sizes.split(",") if s.strip()]

    root = args.keep or Path(tempfile.mkdtemp(prefix="reportgen-bench-"))
    root.mkdir(parents=True, exist_ok=True)
    try:
        print(f"reportgen batch benchmark: {os.cpu_count()} cores, sizes {sizes}, work in {root}")
        rows = [run_size(n, args.workers, root) for n in sizes]
        _print_sizes(rows, args.workers)
        cmp = compare_html(args.compare, root) if args.compare > 0 else None
        if cmp:
            _print_compare(cmp)
        if args.json:
            args.json.write_text(json.dumps({"sizes": rows, "html": cmp}, indent=2, default=str))
    finally:
        if args.keep is None:
            shutil.rmtree(root, ignore_errors=True)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
