"""Benchmark: read and validate 500 clients x 365 days from CSV and from XLSX.

Generates an invented book in a temporary folder (the same data twice: once as CSV logs,
once as XLSX workbooks written by openpyxl), then times

* the project's reader (``read_roster`` + ``read_client`` for every client), per format;
* for comparison, the raw load of the same files by other well-kept readers (pandas' C
  CSV engine; openpyxl for workbooks, read-only and normal mode) and the full
  read-and-validate path with openpyxl in place of calamine.

Prints milliseconds per client-year (one client with 365 days of log).  Targets:
< 10 ms per client-year from CSV, < 60 ms from XLSX.

    python bench/bench_read.py [--clients 500] [--days 365] [--repeat 3]
"""

from __future__ import annotations

import argparse
import csv
import datetime as dt
import statistics
import tempfile
import time
from collections.abc import Callable
from pathlib import Path

import numpy as np

from reportgen.io.book import read_client, read_roster
from reportgen.io.daily import parse_daily
from reportgen.io.tables import build_table

START = dt.date(2025, 12, 1)
MONTH_END = dt.date(2026, 11, 30)
TODAY = dt.date(2026, 12, 1)
HEADER = ["date", "weight_kg", "intake_kcal", "steps", "hunger", "energy", "sleep_h"]


def make_books(root: Path, n_clients: int, days: int) -> tuple[Path, Path]:
    """Two books with the same invented clients: CSV logs and XLSX logs (+ skinfolds CSV)."""
    import openpyxl

    rng = np.random.default_rng(2026)
    books = (root / "csv_book", root / "xlsx_book")
    roster = ["client_id,name,sex,birth_date,height_cm,email,pregnant"]
    for b in books:
        (b / "logs").mkdir(parents=True)
        (b / "skinfolds").mkdir()
    for i in range(n_clients):
        cid = f"b{i:04d}"
        roster.append(f"{cid},Bench Client {i},{'female' if i % 2 else 'male'},1985-01-01,170,,no")
        w0 = rng.uniform(65, 130)
        rows = []
        for d in range(days):
            w = w0 - 0.03 * d + rng.normal(0, 0.5)
            rows.append(
                [
                    START + dt.timedelta(days=d),
                    round(w, 1),
                    int(rng.uniform(1400, 2600)),
                    int(rng.uniform(2000, 15000)),
                    int(rng.integers(1, 11)),
                    int(rng.integers(1, 11)),
                    round(rng.uniform(5, 9), 1),
                ]
            )
        with open(books[0] / "logs" / f"{cid}.csv", "w", newline="", encoding="utf-8") as f:
            wr = csv.writer(f)
            wr.writerow(HEADER)
            wr.writerows([[r[0].isoformat(), *r[1:]] for r in rows])
        wb = openpyxl.Workbook(write_only=True)
        ws = wb.create_sheet("daily")
        ws.append(HEADER)
        for r in rows:
            ws.append(r)
        wb.save(books[1] / "logs" / f"{cid}.xlsx")
        skin = ["date,triceps,abdominal,thigh"]
        for d in range(0, days, 21):
            day = (START + dt.timedelta(days=d)).isoformat()
            skin += [f"{day},12.0,20.0,18.0", f"{day},12.2,20.4,18.2"]
        for b in books:
            (b / "skinfolds" / f"{cid}.csv").write_text("\n".join(skin) + "\n", encoding="utf-8")
    for b in books:
        (b / "clients.csv").write_text("\n".join(roster) + "\n", encoding="utf-8")
    return books


def timed(fn: Callable[[], object], repeat: int) -> float:
    """Median wall time [s] of ``repeat`` runs."""
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def read_book(book: Path) -> int:
    roster = read_roster(book, today=TODAY)
    n_problems = 0
    for c in roster.clients:
        rec = read_client(book, c, (), MONTH_END, TODAY, roster_problems=roster.problems)
        n_problems += len(rec.problems)
    return n_problems


def openpyxl_rows(path: Path, read_only: bool) -> list[list[object]]:
    import openpyxl

    wb = openpyxl.load_workbook(path, read_only=read_only, data_only=True)
    try:
        ws = wb["daily"]
        return [list(r) for r in ws.iter_rows(values_only=True)]
    finally:
        wb.close()


def openpyxl_validate(book: Path) -> None:
    """The same build + validate path, with openpyxl (read-only) loading the sheet."""
    for path in sorted((book / "logs").glob("*.xlsx")):
        rows = openpyxl_rows(path, read_only=True)
        rows = [[c.date() if isinstance(c, dt.datetime) else c for c in r] for r in rows]
        table, _ = build_table(f"logs/{path.name}", "daily", rows, path.stem)
        assert table is not None
        parse_daily(table, path.stem, MONTH_END, TODAY)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--clients", type=int, default=500)
    ap.add_argument("--days", type=int, default=365)
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()
    n, reps = args.clients, args.repeat
    with tempfile.TemporaryDirectory() as tmp:
        t0 = time.perf_counter()
        csv_book, xlsx_book = make_books(Path(tmp), n, args.days)
        print(f"generated {n} clients x {args.days} days in {time.perf_counter() - t0:.1f} s")
        assert read_book(csv_book) == 0 and read_book(xlsx_book) == 0, "bench data must be clean"

        import pandas as pd
        from python_calamine import CalamineWorkbook

        csv_files = sorted((csv_book / "logs").glob("*.csv"))
        xlsx_files = sorted((xlsx_book / "logs").glob("*.xlsx"))

        def calamine_load() -> None:
            for p in xlsx_files:
                with CalamineWorkbook.from_path(str(p)) as wb:
                    wb.get_sheet_by_name("daily").to_python(skip_empty_area=False)

        rows = [
            ("CSV  reportgen read + validate (csv module)", lambda: read_book(csv_book)),
            (
                "CSV  raw load only, pandas C engine",
                lambda: [pd.read_csv(p, dtype=str, keep_default_na=False) for p in csv_files],
            ),
            ("XLSX reportgen read + validate (calamine)", lambda: read_book(xlsx_book)),
            ("XLSX raw load only, calamine", calamine_load),
            (
                "XLSX raw load only, openpyxl read-only",
                lambda: [openpyxl_rows(p, True) for p in xlsx_files],
            ),
            (
                "XLSX raw load only, openpyxl normal",
                lambda: [openpyxl_rows(p, False) for p in xlsx_files],
            ),
            ("XLSX daily sheet load + validate, openpyxl", lambda: openpyxl_validate(xlsx_book)),
        ]
        print(f"{'reader':48s} {'ms/client-year':>15s}")
        for label, fn in rows:
            r = reps if "openpyxl normal" not in label else 1
            secs = timed(fn, r)
            per = secs / n * 1000 * 365 / args.days
            print(f"{label:48s} {per:15.2f}")
        print("targets: CSV < 10 ms, XLSX < 60 ms per client-year (reportgen read + validate)")


if __name__ == "__main__":
    main()
