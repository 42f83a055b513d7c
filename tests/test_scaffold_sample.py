"""The sample book: reproducible from its script, covers the input contract, looks like real logs.

The numbers asserted here are the sample book's own requirements (invented demo data),
not reference values: the ranges come from the book's specification in the project
(missing days 5-25 %, ages 19-64, sessions every 2-4 weeks, 2-3 readings per site).
"""

from __future__ import annotations

import datetime as dt
import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from _scaffold_helpers import REPO, expected_problems, tree_hashes
from click.testing import CliRunner

from reportgen.cli import main
from reportgen.io.book import read_client, read_roster

SAMPLE = REPO / "sample_inputs"
MONTH_END = dt.date(2026, 11, 30)
TODAY = dt.date(2026, 12, 1)
PROBLEM_CLIENT = "c007"


def _generate(out: Path) -> None:
    subprocess.run(
        [sys.executable, str(REPO / "scripts" / "make_sample_inputs.py"), "--out", str(out)],
        check=True,
        capture_output=True,
        cwd=REPO,
    )


def test_generator_is_byte_identical_across_runs_and_matches_committed(tmp_path: Path) -> None:
    _generate(tmp_path / "a")
    _generate(tmp_path / "b")
    a, b = tree_hashes(tmp_path / "a"), tree_hashes(tmp_path / "b")
    assert a == b
    committed = tree_hashes(SAMPLE)
    assert set(a) == set(committed), "regenerate: python scripts/make_sample_inputs.py"
    changed = sorted(k for k in a if a[k] != committed[k])
    assert not changed, f"committed sample differs from the generator: {changed}"
    assert any(k.endswith(".xlsx") for k in a)  # the XLSX files are reproducible too


@pytest.fixture(scope="module")
def records() -> dict[str, object]:
    roster = read_roster(SAMPLE, today=TODAY)
    assert not roster.problems
    out: dict[str, object] = {"roster": roster}
    for c in roster.clients:
        out[c.client_id] = read_client(
            SAMPLE,
            c,
            roster.phases.get(c.client_id, ()),
            MONTH_END,
            today=TODAY,
            roster_problems=roster.problems,
        )
    return out


def test_sample_roster_covers_the_contract(records: dict[str, object]) -> None:
    roster = records["roster"]
    clients = roster.clients  # type: ignore[attr-defined]
    assert len(clients) == 17
    assert {c.sex for c in clients} == {"female", "male"}
    ages = [c.age_years(MONTH_END) for c in clients]
    assert min(ages) == 19 and max(ages) == 64
    assert not any(c.pregnant for c in clients)
    assert any(any(ord(ch) > 127 for ch in c.name) for c in clients)
    assert all(c.email and c.email.endswith(("@example.org", "@example.com")) for c in clients)
    header = (SAMPLE / "clients.csv").read_text(encoding="utf-8").splitlines()[0].split(",")
    assert {"height_cm", "height_in", "goal_weight_kg", "referral_email"} <= set(header)
    in_inches = [
        ln
        for ln in (SAMPLE / "clients.csv").read_text().splitlines()[1:]
        if ln.split(",")[header.index("height_in")]
    ]
    assert len(in_inches) == 1
    referrals = [c for c in clients if c.extra.get("referral_email")]
    assert 1 <= len(referrals) <= 2
    assert sum(c.goal_weight_kg is not None for c in clients) >= 3


def test_sample_files_mix_formats_and_units() -> None:
    logs = sorted(p.name for p in (SAMPLE / "logs").iterdir())
    assert any(n.endswith(".csv") for n in logs) and any(n.endswith(".xlsx") for n in logs)
    headers = []
    for p in (SAMPLE / "logs").glob("*.csv"):
        headers.append(p.read_text(encoding="utf-8-sig").splitlines()[0])
    assert any("weight_lb" in h for h in headers)
    assert any("intake_kj" in h for h in headers)
    import openpyxl

    for p in (SAMPLE / "logs").glob("*.xlsx"):
        wb = openpyxl.load_workbook(p)
        assert {"daily", "skinfolds"} <= set(wb.sheetnames)
        first_date = wb["daily"]["A2"].value
        assert isinstance(first_date, dt.datetime)  # real Excel dates
    phases = (SAMPLE / "phases.csv").read_text(encoding="utf-8").splitlines()
    assert phases[0] == "client_id,name,start,end,kind,target_kcal"


def test_sample_phases_and_skinfolds(records: dict[str, object]) -> None:
    kinds = set()
    running = 0
    sites_seen = set()
    for cid in (f"c{i:03d}" for i in range(1, 11)):
        rec = records[cid]
        phases = rec.phases  # type: ignore[attr-defined]
        kinds |= {p.kind for p in phases}
        running += any(p.end is None and p.kind == "deficit" for p in phases)
        sessions = rec.skinfolds  # type: ignore[attr-defined]
        assert len(sessions) >= 5
        gaps = np.diff([s.date.toordinal() for s in sessions])
        assert gaps.min() >= 13 and gaps.max() <= 29, (cid, gaps)  # every 2-4 weeks
        for s in sessions:
            counts = {len(r) for r in s.readings_mm.values()}
            assert counts <= {2, 3}, (cid, s.date, counts)
        sites_seen.add(frozenset(sessions[0].sites_mm))
    assert {"deficit", "break", "maintenance"} <= kinds
    assert running >= 5
    assert frozenset({"biceps", "triceps", "subscapular", "suprailiac"}) in sites_seen  # D&W
    assert any(len(s) == 7 for s in sites_seen)  # JP7
    assert any(len(s) == 3 for s in sites_seen)  # JP3


def test_only_the_problem_client_has_problems(records: dict[str, object]) -> None:
    for cid in (f"c{i:03d}" for i in range(1, 11)):
        rec = records[cid]
        problems = rec.problems  # type: ignore[attr-defined]
        if cid == PROBLEM_CLIENT:
            assert not rec.ok  # type: ignore[attr-defined]
            assert len(rec.errors) == 1 and len(rec.warnings) == 3  # type: ignore[attr-defined]
        else:
            assert problems == (), (cid, [p.message for p in problems])


def test_check_reports_exactly_the_documented_problems(sample_book: Path) -> None:
    result = CliRunner().invoke(main, ["check", str(sample_book), "--json"])
    assert result.exit_code == 1, result.output
    found = {
        (p["severity"], p["file"], p["row"], p["column"], p["value"])
        for p in json.loads(result.output)["problems"]
    }
    assert found == expected_problems(SAMPLE)


def test_sample_logs_look_like_coaching_data(records: dict[str, object]) -> None:
    for cid in (f"c{i:03d}" for i in range(1, 11)):
        if cid == PROBLEM_CLIENT:
            continue
        log = records[cid].log  # type: ignore[attr-defined]
        w = log.weight_kg
        logged = ~np.isnan(w) | ~np.isnan(log.intake_kcal)
        missing = 1.0 - logged.mean()
        assert 0.05 <= missing <= 0.25, (cid, missing)
        # Day-to-day water noise: residual about a centred 7-day median, in kg.
        level = np.array([np.nanmedian(w[max(0, i - 3) : i + 4]) for i in range(len(w))])
        resid = w - level
        sd = float(np.nanstd(resid))
        assert 0.25 <= sd <= 0.75, (cid, sd)
        assert float(np.nanmax(np.abs(resid))) <= 2.0, cid  # far below the outlier rule
        # Over ~4 months every client in a fat-loss programme lost some weight, none absurdly.
        first, last = np.nanmean(w[:14]), np.nanmean(w[-14:])
        loss_pct_per_week = (first - last) / first * 100 / (len(w) / 7)
        assert 0.1 <= loss_pct_per_week <= 1.0, (cid, loss_pct_per_week)
        # Hunger creeps up over a diet (for clients who rate it).
        if not np.all(np.isnan(log.hunger)):
            assert np.nanmean(log.hunger[-28:]) > np.nanmean(log.hunger[:28]) - 0.5, cid
        intake = log.intake_kcal[~np.isnan(log.intake_kcal)]
        assert 1100 <= intake.mean() <= 3200 and intake.std() > 100, cid
