"""Rendering benchmark: time per client report and practitioner summary, charts vs layout.

Analyses come from the real pipeline (io readers + ``analyse_client``) on the sample book, and
optionally on simulated clients with a year of daily data (the batch benchmark's book writer,
``bench/bench_batch.py``), so long series are measured too.  Analysis time is excluded: only
rendering is timed.  Each client is rendered once to warm caches (fonts, templates), then
``--repeat`` times; figures are medians over all renders.

Reported per document: total, and for the client report the split between drawing the five
charts (matplotlib to PDF) and layout + embedding (reportlab build, pikepdf form XObjects),
plus the median of each chart, and the process CPU time (on a shared machine wall time
swings with other load; CPU time much less).  Also the resident memory before and after all
renders, to show that rendering does not accumulate memory (no pyplot, one Figure per chart).

Run:  MPLBACKEND=Agg python bench/bench_render.py [--repeat 5] [--simulated 10]
"""

from __future__ import annotations

import argparse
import datetime as dt
import resource
import statistics
import sys
import tempfile
import time
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(REPO))

from reportgen.analysis import analyse_client  # noqa: E402
from reportgen.config import Config, PracticeSettings  # noqa: E402
from reportgen.io.book import read_client, read_roster  # noqa: E402
from reportgen.report import render_client_report, render_practitioner_summary  # noqa: E402
from reportgen.report.client import Timing  # noqa: E402
from reportgen.results import ClientAnalysis  # noqa: E402

MONTH = "2026-11"
MONTH_END = dt.date(2026, 11, 30)
TODAY = dt.date(2026, 12, 1)


def analyses(book: Path, config: Config) -> list[ClientAnalysis]:
    roster = read_roster(book)
    out = []
    for client in roster.clients:
        record = read_client(
            book,
            client,
            roster.phases.get(client.client_id, ()),
            MONTH_END,
            today=TODAY,
            roster_problems=tuple(p for p in roster.problems if p.client_id == client.client_id),
        )
        if record.ok:
            out.append(analyse_client(record, MONTH, config.analysis))
    return out


def rss_mb() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024


def measure(items: list[ClientAnalysis], config: Config, repeat: int) -> dict[str, object]:
    for a in items:  # warm-up: font files, templates, matplotlib caches
        render_client_report(a, config)
        render_practitioner_summary(a, config)
    rss_before = rss_mb()
    report, charts, layout, summary, cpu_report, cpu_summary = [], [], [], [], [], []
    per_chart: dict[str, list[float]] = {}
    for _ in range(repeat):
        for a in items:
            timing = Timing()
            c0, t0 = time.process_time(), time.perf_counter()
            render_client_report(a, config, timing=timing)
            c1, t1 = time.process_time(), time.perf_counter()
            render_practitioner_summary(a, config)
            c2, t2 = time.process_time(), time.perf_counter()
            cpu_report.append(c1 - c0)
            cpu_summary.append(c2 - c1)
            report.append(t1 - t0)
            summary.append(t2 - t1)
            charts.append(timing.charts_s)
            layout.append(timing.layout_s)
            for k, v in timing.per_chart_s.items():
                per_chart.setdefault(k, []).append(v)
    both = [r + s for r, s in zip(report, summary, strict=True)]
    med = statistics.median
    return {
        "renders": len(report),
        "report_s": med(report),
        "report_p90_s": sorted(report)[int(0.9 * (len(report) - 1))],
        "charts_s": med(charts),
        "layout_s": med(layout),
        "summary_s": med(summary),
        "both_s": med(both),
        "per_chart_s": {k: med(v) for k, v in per_chart.items()},
        "cpu_report_s": med(cpu_report),
        "cpu_summary_s": med(cpu_summary),
        "cpu_both_s": med([r + s for r, s in zip(cpu_report, cpu_summary, strict=True)]),
        "rss_before_mb": rss_before,
        "rss_after_mb": rss_mb(),
    }


def show(title: str, m: dict[str, object]) -> None:
    print(f"\n{title}  ({m['renders']} renders of each document)")
    print(
        f"  client report       median {m['report_s'] * 1000:7.1f} ms   p90 "
        f"{m['report_p90_s'] * 1000:7.1f} ms"
    )
    print(f"    charts (5)        median {m['charts_s'] * 1000:7.1f} ms")
    per = m["per_chart_s"]
    assert isinstance(per, dict)
    for k, v in per.items():
        print(f"      {k:<16}  median {v * 1000:7.1f} ms")
    print(f"    layout + embed    median {m['layout_s'] * 1000:7.1f} ms")
    print(f"  practitioner page   median {m['summary_s'] * 1000:7.1f} ms")
    both = float(m["both_s"])  # type: ignore[arg-type]
    print(f"  both documents      median {both * 1000:7.1f} ms  = {1 / both:4.1f} clients/s serial")
    cpu = float(m["cpu_both_s"])  # type: ignore[arg-type]
    print(
        f"  CPU time            report {m['cpu_report_s'] * 1000:.0f} ms, practitioner "
        f"{m['cpu_summary_s'] * 1000:.0f} ms, both {cpu * 1000:.0f} ms = {1 / cpu:4.1f} "
        "clients/s per core (less sensitive than wall time to other load)"
    )
    print(
        f"  peak RSS            {m['rss_before_mb']:.0f} MB after warm-up, "
        f"{m['rss_after_mb']:.0f} MB after all renders"
    )


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=5, help="renders per client (default 5)")
    ap.add_argument(
        "--simulated",
        type=int,
        default=0,
        help="also measure N simulated clients with a year of data (default 0)",
    )
    args = ap.parse_args(argv)
    config = Config(practice=PracticeSettings(name="Kestrel Row Nutrition"))

    sample = analyses(REPO / "sample_inputs", config)
    show(
        f"Sample book: {len(sample)} clients, about 4 months of data",
        measure(sample, config, args.repeat),
    )

    if args.simulated:
        sys.path.insert(0, str(REPO / "bench"))
        from bench_batch import simulate_book

        with tempfile.TemporaryDirectory() as tmp:
            book = Path(tmp) / "book"
            simulate_book(book, args.simulated)
            sims = analyses(book, config)
        show(
            f"Simulated: {len(sims)} clients, a year of daily data",
            measure(sims, config, max(1, args.repeat // 2)),
        )
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
