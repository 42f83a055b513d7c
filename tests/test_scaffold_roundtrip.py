"""A scaffolded book, filled in with openpyxl as a coach would type, checks clean and reports."""

from __future__ import annotations

import datetime as dt
import json
from pathlib import Path

import numpy as np
import openpyxl
import pytest
from _scaffold_helpers import fill_client_log
from click.testing import CliRunner

from reportgen.cli import main

MONTH = "2026-11"
FIRST = dt.date(2026, 9, 28)
DAYS = 64  # to 2026-11-30


@pytest.fixture(scope="module")
def filled_book(tmp_path_factory: pytest.TempPathFactory) -> Path:
    book = tmp_path_factory.mktemp("rt") / "book"
    runner = CliRunner()
    r = runner.invoke(main, ["new-book", str(book), "--client", "c001"], catch_exceptions=False)
    assert r.exit_code == 0, r.output
    r = runner.invoke(
        main,
        ["new-book", str(book), "--add-client", "c002", "--units", "imperial", "--energy", "kJ"],
        catch_exceptions=False,
    )
    assert r.exit_code == 0, r.output

    # The roster: one birth date as a real date cell, one typed as text.
    wb = openpyxl.load_workbook(book / "clients.xlsx")
    ws = wb["clients"]
    header = [c.value for c in ws[1]]
    rows = {
        2: {"name": "Józef Ąbel", "sex": "male", "birth_date": dt.date(1984, 5, 17),
            "height_cm": 181, "email": "jozef@example.org", "pregnant": "no"},
        3: {"client_id": "c002", "name": "Ines Barros", "sex": "female",
            "birth_date": "1990-02-03", "height_cm": 166.5, "pregnant": "no",
            "goal_weight_kg": 70},
    }  # fmt: skip
    for r_i, values in rows.items():
        for key, value in values.items():
            ws.cell(row=r_i, column=header.index(key) + 1, value=value)
    wb.save(book / "clients.xlsx")

    # c001 keeps its phases in its workbook; c002 in the book's phases.csv.
    fill_client_log(
        book / "logs" / "c001.xlsx",
        first=FIRST,
        days=DAYS,
        seed=1,
        imperial=False,
        kj=False,
        phases=[
            ["Baseline", dt.date(2026, 9, 28), "2026-10-18", "maintenance", None],
            ["Winter cut", "2026-10-19", None, "deficit", 1900],
        ],
    )
    fill_client_log(
        book / "logs" / "c002.xlsx", first=FIRST, days=DAYS, seed=2, imperial=True, kj=True,
        phases=None,
    )  # fmt: skip
    with (book / "phases.csv").open("a", encoding="utf-8") as fh:
        fh.write("c002,Autumn block,2026-09-28,,deficit,\n")
    return book


def test_filled_scaffold_passes_check(filled_book: Path) -> None:
    r = CliRunner().invoke(
        main, ["check", str(filled_book), "--month", MONTH, "--json"], catch_exceptions=False
    )
    report = json.loads(r.output)
    assert report["problems"] == [], report["problems"]
    assert r.exit_code == 0
    assert report["clients_checked"] == 2


def test_filled_scaffold_is_read_in_canonical_units(filled_book: Path) -> None:
    from reportgen.io.book import read_client, read_roster

    roster = read_roster(filled_book, today=dt.date(2026, 12, 1))
    by_id = {c.client_id: c for c in roster.clients}
    assert by_id["c001"].birth_date == dt.date(1984, 5, 17)
    assert by_id["c002"].birth_date == dt.date(1990, 2, 3)  # typed as text
    rec = read_client(
        filled_book,
        by_id["c002"],
        roster.phases.get("c002", ()),
        dt.date(2026, 11, 30),
        today=dt.date(2026, 12, 1),
        roster_problems=roster.problems,
    )
    assert rec.ok
    assert rec.log.n_days == DAYS
    # Typed in lb and kJ (the fill helper's 84 kg and 1900 kcal levels), read in kg and kcal.
    assert 82.0 < float(rec.log.weight_kg[0]) < 86.0
    assert 1300 < float(np.nanmean(rec.log.intake_kcal)) < 2600
    assert len(rec.skinfolds) == 3 and len(rec.phases) == 1
    rec1 = read_client(
        filled_book,
        by_id["c001"],
        roster.phases.get("c001", ()),
        dt.date(2026, 11, 30),
        today=dt.date(2026, 12, 1),
        roster_problems=roster.problems,
    )
    assert [p.kind for p in rec1.phases] == ["maintenance", "deficit"]
    assert rec1.phases[0].end == dt.date(2026, 10, 18)  # typed as text
    assert rec1.phases[1].target_kcal == 1900


def test_filled_scaffold_produces_reports(filled_book: Path, tmp_path: Path) -> None:
    from pypdf import PdfReader

    out = tmp_path / "out"
    r = CliRunner().invoke(
        main,
        ["batch", str(filled_book), "--month", MONTH, "--out", str(out), "--workers", "1", "-q"],
        catch_exceptions=False,
    )
    assert r.exit_code == 0, r.output
    month_dir = out / MONTH
    manifest = json.loads((month_dir / "manifest.json").read_text())
    assert {cid: c["status"] for cid, c in manifest["clients"].items()} == {
        "c001": "ok",
        "c002": "ok",
    }
    for cid, name in (("c001", "Józef Ąbel"), ("c002", "Ines Barros")):
        text = "".join(p.extract_text() for p in PdfReader(month_dir / f"{cid}.pdf").pages)
        assert name in text
        assert (month_dir / f"{cid}-practitioner.pdf").is_file()
    assert (month_dir / "overview.pdf").is_file() and (month_dir / "summary.csv").is_file()


def test_imperial_kj_book_round_trip(tmp_path: Path) -> None:
    from reportgen.io.book import read_client, read_roster

    book = tmp_path / "book"
    r = CliRunner().invoke(
        main,
        ["new-book", str(book), "--units", "imperial", "--energy", "kJ", "--client", "k1"],
        catch_exceptions=False,
    )
    assert r.exit_code == 0, r.output
    wb = openpyxl.load_workbook(book / "clients.xlsx")
    ws = wb["clients"]
    header = [c.value for c in ws[1]]
    for key, value in {
        "name": "Kai Ōta", "sex": "male", "birth_date": "1979-07-30", "height_in": 70,
        "pregnant": "no", "goal_weight_lb": 170,
    }.items():  # fmt: skip
        ws.cell(row=2, column=header.index(key) + 1, value=value)
    wb.save(book / "clients.xlsx")
    fill_client_log(
        book / "logs" / "k1.xlsx", first=FIRST, days=DAYS, seed=3, imperial=True, kj=True,
        phases=[["Cut", "2026-09-28", None, "deficit", None]],
    )  # fmt: skip
    r = CliRunner().invoke(main, ["check", str(book), "--month", MONTH, "--json"])
    assert json.loads(r.output)["problems"] == [] and r.exit_code == 0, r.output
    roster = read_roster(book, today=dt.date(2026, 12, 1))
    (client,) = roster.clients
    # 1 in = 2.54 cm and 1 lb = 0.45359237 kg exactly (1959 international agreement).
    assert client.height_cm == pytest.approx(177.8, abs=1e-9)
    assert client.goal_weight_kg == pytest.approx(77.1107029, abs=1e-6)
    rec = read_client(book, client, (), dt.date(2026, 11, 30), today=dt.date(2026, 12, 1))
    assert rec.ok and [p.kind for p in rec.phases] == ["deficit"]
