"""Legacy ``.xls`` logs (the binary Excel 97-2003 format) are read like the others.

The fixture ``tests/fixtures/xls/c001.xls`` was written by LibreOffice Calc 7.4 (the reference
writer used here: no maintained ``.xls`` writer installs from PyPI) from an invented log;
``scripts/make_xls_fixture.py`` says how, and wrote the same values as plain text to
``c001_daily.csv`` and ``c001_skinfolds.csv``: what the reader must find.
"""

from __future__ import annotations

import csv
import datetime as dt
import math
import shutil
from pathlib import Path

from _io_helpers import read_book_client, write_book
from click.testing import CliRunner

from reportgen.cli import main

FIXTURES = Path(__file__).parent / "fixtures" / "xls"


def _expected(name: str) -> list[dict[str, str]]:
    with (FIXTURES / name).open(encoding="utf-8", newline="") as f:
        return list(csv.DictReader(f))


def _book(tmp_path: Path) -> Path:
    book = write_book(tmp_path / "book", logs={})
    shutil.copyfile(FIXTURES / "c001.xls", book / "logs" / "c001.xls")
    return book


def test_fixture_is_a_real_legacy_workbook() -> None:
    """The OLE2 compound-file signature of the binary format, not a renamed .xlsx (a zip)."""
    assert (FIXTURES / "c001.xls").read_bytes()[:8] == bytes.fromhex("d0cf11e0a1b11ae1")


def test_xls_daily_and_skinfold_sheets_give_the_written_values(tmp_path: Path) -> None:
    rec = read_book_client(_book(tmp_path))
    assert rec.ok, rec.errors
    assert rec.source_files == ("clients.csv", "logs/c001.xls")
    log = rec.log
    days = [dt.date.fromisoformat(str(d.astype("datetime64[D]"))) for d in log.dates]
    want = {dt.date.fromisoformat(r["date"]): r for r in _expected("c001_daily.csv")}
    assert days[0] == min(want) and days[-1] == max(want) and len(days) == 28
    for i, day in enumerate(days):
        row = want.get(day)
        if row is None:  # the day the log has no row: a gap on the calendar grid
            assert math.isnan(log.weight_kg[i]) and math.isnan(log.intake_kcal[i])
            continue
        assert abs(log.weight_kg[i] - float(row["weight_kg"])) < 1e-9  # kg
        assert abs(log.steps[i] - float(row["steps"])) < 1e-9
        if row["intake_kcal"]:
            assert abs(log.intake_kcal[i] - float(row["intake_kcal"])) < 1e-9  # kcal
        else:
            assert math.isnan(log.intake_kcal[i])
    sessions = {s.date: s.sites_mm for s in rec.skinfolds}
    for row in _expected("c001_skinfolds.csv"):
        sites = sessions[dt.date.fromisoformat(row.pop("date"))]
        assert sites == {k: float(v) for k, v in row.items()}  # mm


def test_check_and_batch_accept_an_xls_book(tmp_path: Path) -> None:
    book = _book(tmp_path)
    runner = CliRunner()
    check = runner.invoke(main, ["check", str(book), "--month", "2026-11"], catch_exceptions=False)
    assert check.exit_code == 0, check.output
    out = tmp_path / "out"
    args = ["batch", str(book), "--month", "2026-11", "--out", str(out), "--quiet"]
    batch = runner.invoke(main, [*args, "--workers", "1"], catch_exceptions=False)
    assert batch.exit_code == 0, batch.output
    assert (out / "2026-11" / "c001.pdf").is_file()
