"""Time and peak memory of `check` and `batch` on a book with one hostile or broken file.

Each case is a two-client book: c001 with a clean daily log, c002 (or the book) with one bad
file at or just inside a limit of reportgen/io/guard.py.  Each command runs in a child
process; its peak resident memory comes from ``wait4`` (the child and the workers it waited
for).  The target (issue "hostile and broken input"): under 1.5 GB for any single bad file,
and an answer in seconds.

    MPLBACKEND=Agg .venv/bin/python bench/bench_hostile.py [--only NAME] [--keep DIR]
"""

from __future__ import annotations

import argparse
import csv
import datetime as dt
import io
import os
import shutil
import subprocess
import sys
import tempfile
import time
import zipfile
from collections.abc import Callable
from pathlib import Path

from reportgen.io import guard

ROSTER = (
    "client_id,name,sex,birth_date,height_cm,email,pregnant\n"
    "c001,Ada Bench,female,1990-05-01,168,ada@example.org,no\n"
    "c002,Ben Bench,male,1985-02-01,180,ben@example.org,no\n"
)
LIMIT_MB = 1500.0


def daily_rows(days: int = 61) -> list[list[object]]:
    """An invented clean log (Oct-Nov 2026)."""
    start = dt.date(2026, 10, 1)
    rows: list[list[object]] = [["date", "weight_kg", "intake_kcal", "steps"]]
    for i in range(days):
        day = start + dt.timedelta(days=i % 61)
        rows.append([day.isoformat(), f"{82 - 0.05 * (i % 61):.1f}", 1900, 8000])
    return rows


def csv_text(rows: list[list[object]]) -> str:
    buf = io.StringIO()
    csv.writer(buf, lineterminator="\n").writerows(rows)
    return buf.getvalue()


def base_book(root: Path) -> Path:
    book = root / "book"
    (book / "logs").mkdir(parents=True)
    (book / "clients.csv").write_text(ROSTER, encoding="utf-8")
    (book / "logs" / "c001.csv").write_text(csv_text(daily_rows()), encoding="utf-8")
    (book / "logs" / "c002.csv").write_text(csv_text(daily_rows()), encoding="utf-8")
    return book


def _xlsx(path: Path, rows: list[list[object]], far_cell: bool = False) -> None:
    import openpyxl

    wb = openpyxl.Workbook(write_only=True)
    ws = wb.create_sheet("daily")
    for r in rows:
        ws.append(r)
    wb.save(path)
    if far_cell:  # a stray cell in the last row and column, as a damaged sheet has
        wb2 = openpyxl.load_workbook(path)
        wb2["daily"].cell(row=1_048_576, column=16_384, value=1)
        wb2.save(path)


def case_bomb(book: Path) -> None:
    """A workbook whose sheet unpacks to 1 GB of white space (about 1 MB on disk)."""
    (book / "logs" / "c002.csv").unlink()
    path = book / "logs" / "c002.xlsx"
    _xlsx(path, daily_rows())
    with zipfile.ZipFile(path) as src:
        parts = {i.filename: src.read(i) for i in src.infolist()}
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as out:
        for name, data in parts.items():
            if name != "xl/worksheets/sheet1.xml":
                out.writestr(name, data)
        head, tail = parts["xl/worksheets/sheet1.xml"].split(b"</sheetData>")
        with out.open("xl/worksheets/sheet1.xml", "w", force_zip64=True) as fh:
            fh.write(head)
            block = b" " * (1 << 20)
            for _ in range(1024):
                fh.write(block)
            fh.write(b"</sheetData>" + tail)


def case_far_cell(book: Path) -> None:
    """A daily sheet with one cell at XFD1048576 (declared range of 17 billion cells)."""
    (book / "logs" / "c002.csv").unlink()
    _xlsx(book / "logs" / "c002.xlsx", daily_rows(), far_cell=True)


def case_rows_over(book: Path) -> None:
    """A log repeated to 3 million rows (about 90 MB): refused by size."""
    one = csv_text(daily_rows())
    with (book / "logs" / "c002.csv").open("w", encoding="utf-8") as fh:
        fh.write(one)
        body = one.split("\n", 1)[1]
        for _ in range(3_000_000 // 61):
            fh.write(body)


def case_rows_over_small(book: Path) -> None:
    """A log repeated to 500000 rows (about 15 MB, under the size limit): refused by rows."""
    one = csv_text(daily_rows())
    with (book / "logs" / "c002.csv").open("w", encoding="utf-8") as fh:
        fh.write(one)
        body = one.split("\n", 1)[1]
        for _ in range(500_000 // 61):
            fh.write(body)


def case_rows_at_limit(book: Path) -> None:
    """The longest CSV log accepted (MAX_ROWS rows, a repeated export: duplicate rows)."""
    text = csv_text(daily_rows(guard.MAX_ROWS))
    (book / "logs" / "c002.csv").write_text(text, encoding="utf-8")


def case_cells_at_limit(book: Path) -> None:
    """A wide CSV just under the cell limit: 4900 rows x 200 columns."""
    header = ["date", "weight_kg", "intake_kcal", *[f"x{i}" for i in range(197)]]
    rows = [header] + [
        [(dt.date(2026, 10, 1) + dt.timedelta(days=i % 61)).isoformat(), "82.0", "1900"]
        + ["1"] * 197
        for i in range(4_900)
    ]
    (book / "logs" / "c002.csv").write_text(csv_text(rows), encoding="utf-8")


def case_xlsx_at_limit(book: Path) -> None:
    """The longest workbook log accepted: MAX_ROWS rows x 4 columns."""
    (book / "logs" / "c002.csv").unlink()
    _xlsx(book / "logs" / "c002.xlsx", daily_rows(guard.MAX_ROWS))


def case_huge_cell(book: Path) -> None:
    """A roster cell of 15 MB (one client's name)."""
    text = ROSTER.replace("Ben Bench", "B" * 15_000_000)
    (book / "clients.csv").write_text(text, encoding="utf-8")


def case_fifo(book: Path) -> None:
    """Named pipes in place of phases.csv and a skinfold file."""
    os.mkfifo(book / "phases.csv")
    (book / "skinfolds").mkdir()
    os.mkfifo(book / "skinfolds" / "c001.csv")


CASES: dict[str, Callable[[Path], None]] = {
    "xlsx-bomb-1GB": case_bomb,
    "xlsx-far-cell": case_far_cell,
    "csv-3M-rows": case_rows_over,
    "csv-500k-rows": case_rows_over_small,
    "csv-at-row-limit": case_rows_at_limit,
    "csv-at-cell-limit": case_cells_at_limit,
    "xlsx-at-row-limit": case_xlsx_at_limit,
    "roster-15MB-cell": case_huge_cell,
    "fifo-phases-skinfolds": case_fifo,
}


def run(args: list[str], timeout_s: float = 300) -> tuple[float, float, int]:
    """(seconds, peak RSS MB, exit code) of one reportgen command in a child process."""
    env = dict(os.environ, MPLBACKEND="Agg")
    t0 = time.perf_counter()
    proc = subprocess.Popen(
        [sys.executable, "-c", "from reportgen.cli import main; main()", *args],
        stdout=subprocess.DEVNULL,
        stderr=subprocess.DEVNULL,
        env=env,
    )
    deadline = t0 + timeout_s
    while True:
        pid, status, usage = os.wait4(proc.pid, os.WNOHANG)
        if pid:
            break
        if time.perf_counter() > deadline:
            proc.kill()
            pid, status, usage = os.wait4(proc.pid, 0)
            break
        time.sleep(0.05)
    proc.returncode = os.waitstatus_to_exitcode(status)
    return time.perf_counter() - t0, usage.ru_maxrss / 1024.0, proc.returncode


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--only", help="run one case")
    ap.add_argument("--keep", type=Path, help="build the books here and keep them")
    ap.add_argument("--build", type=Path, help=argparse.SUPPRESS)  # internal: build and exit
    opts = ap.parse_args()
    if opts.build is not None:
        for name, build in CASES.items():
            if not opts.only or name == opts.only:
                build(base_book(opts.build / name))
        return
    root = opts.keep or Path(tempfile.mkdtemp(prefix="reportgen-bench-hostile-"))
    # Built in another process: Linux keeps a process's peak memory across exec, so books
    # built here would count toward every child's peak.
    build_args = [sys.executable, __file__, "--build", str(root)]
    subprocess.run(build_args + (["--only", opts.only] if opts.only else []), check=True)
    print(f"{'case':<24} {'command':<16} {'seconds':>8} {'peak MB':>8} {'exit':>5}")
    worst = 0.0
    try:
        for name in CASES:
            if opts.only and name != opts.only:
                continue
            book = root / name / "book"
            out = root / name / "out"
            commands = {
                "check": ["check", str(book), "--month", "2026-11", "--today", "2026-12-01"],
                "batch -w1": ["batch", str(book), "--month", "2026-11", "--out", str(out),
                              "--workers", "1", "-q"],
                "batch -w2": ["batch", str(book), "--month", "2026-11", "--out", str(out),
                              "--workers", "2", "-q"],
            }  # fmt: skip
            for label, args in commands.items():
                secs, peak, code = run(args)
                worst = max(worst, peak)
                print(f"{name:<24} {label:<16} {secs:>8.1f} {peak:>8.0f} {code:>5}", flush=True)
    finally:
        if opts.keep is None:
            shutil.rmtree(root, ignore_errors=True)
    verdict = "OK" if worst < LIMIT_MB else "OVER"
    print(f"worst peak: {worst:.0f} MB (target < {LIMIT_MB:.0f} MB): {verdict}")


if __name__ == "__main__":
    main()
