"""Crash-safe writes, summary.csv formatting and the manifest format (no book needed)."""

from __future__ import annotations

import csv
import dataclasses
import datetime as dt
import io
import json
from pathlib import Path

import pytest
from hypothesis import given
from hypothesis import strategies as st

from reportgen.atomic import is_temp_file, remove_temp_files, temp_name, write_bytes_atomic
from reportgen.manifest import (
    ClientEntry,
    build_manifest,
    hash_inputs,
    manifest_bytes,
    sha256_bytes,
)
from reportgen.month import ReportMonth
from reportgen.results import Estimate, PhaseResult, PlateauPart, PlateauResult
from reportgen.summary import (
    DECIMALS,
    SUMMARY_COLUMNS,
    format_number,
    overlaps_month,
    phase_row,
    plateau_cells,
    summary_csv,
)

# The column list exactly as the batch issue specifies it (other tools read these names).
ISSUE_COLUMNS = (
    "client_id, phase, start, end, days, weight_days, intake_days, trend_start_kg, trend_end_kg, "
    "trend_change_kg, rate_pct_per_week, mean_intake_kcal, realised_deficit_kcal, "
    "observed_tdee_kcal, observed_tdee_low_kcal, observed_tdee_high_kcal, expected_tdee_kcal, "
    "adaptation_kcal, adaptation_low_kcal, adaptation_high_kcal, adaptation_pct, "
    "activity_change_kcal, implied_intake_kcal, bodyfat_start_pct, bodyfat_end_pct, "
    "fat_mass_change_kg, lean_mass_change_kg, status"
)
# The progress columns of the plateau issue, in its order, after the batch issue's.
PLATEAU_ISSUE_COLUMNS = (
    "progress_status, recent_rate_pct_per_week, intake_drift_kcal, body_size_change_kcal, "
    "activity_change_recent_kcal, metabolic_change_kcal, logging_completeness_change_pct"
)
# added after the issue's columns: why a status is what it is
EXTRA_COLUMNS = "progress_reason"


def test_columns_match_the_issue_exactly() -> None:
    assert (
        ", ".join(SUMMARY_COLUMNS)
        == ISSUE_COLUMNS + ", " + PLATEAU_ISSUE_COLUMNS + ", " + EXTRA_COLUMNS
    )
    numeric = set(SUMMARY_COLUMNS) - {
        "progress_status",
        "progress_reason",
        "client_id",
        "phase",
        "start",
        "end",
        "days",
        "weight_days",
        "intake_days",
        "status",
    }
    assert numeric == set(DECIMALS)


# --- atomic writes ---------------------------------------------------------------------


def test_atomic_write_replaces_and_leaves_no_temp(tmp_path: Path) -> None:
    target = tmp_path / "a.pdf"
    write_bytes_atomic(target, b"first")
    write_bytes_atomic(target, b"second")
    assert target.read_bytes() == b"second"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["a.pdf"]


def test_atomic_write_failure_keeps_old_file_and_removes_temp(tmp_path: Path) -> None:
    target = tmp_path / "a.pdf"
    write_bytes_atomic(target, b"old")
    with pytest.raises(TypeError, match="bytes-like"):
        write_bytes_atomic(target, "not bytes")  # type: ignore[arg-type]
    assert target.read_bytes() == b"old"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["a.pdf"]


def test_temp_names_are_recognised_and_cleaned(tmp_path: Path) -> None:
    target = tmp_path / "c001.pdf"
    tmp = temp_name(target)
    assert tmp.parent == tmp_path
    assert is_temp_file(tmp)
    assert not is_temp_file(target)
    assert not is_temp_file(tmp_path / ".hidden")
    tmp.write_bytes(b"%PDF-1.4 half")
    (tmp_path / "keep.csv").write_text("x\n")
    removed = remove_temp_files(tmp_path)
    assert removed == [tmp]
    assert sorted(p.name for p in tmp_path.iterdir()) == ["keep.csv"]


def test_two_temp_names_differ(tmp_path: Path) -> None:
    target = tmp_path / "x.csv"
    assert temp_name(target) != temp_name(target)


# --- number formatting -----------------------------------------------------------------


@pytest.mark.parametrize(
    ("value", "decimals", "text"),
    [
        (None, 2, ""),
        (float("nan"), 2, ""),
        (float("inf"), 0, ""),
        (0.0, 2, "0.00"),
        (-0.0, 2, "0.00"),
        (-0.004, 2, "0.00"),  # rounds to zero: no "-0.00"
        (-0.3, 0, "0"),
        (81.23456, 2, "81.23"),
        (2456.5001, 0, "2457"),
        (-512.4, 0, "-512"),
        (-3.25, 1, "-3.2"),  # binary -3.25 is exact; Python rounds half to even
        (12, 1, "12.0"),
    ],
)
def test_format_number(value: float | None, decimals: int, text: str) -> None:
    assert format_number(value, decimals) == text


@given(st.floats(allow_nan=False, allow_infinity=False, min_value=-1e6, max_value=1e6))
def test_format_number_round_trips_within_half_a_unit(x: float) -> None:
    text = format_number(x, 2)
    assert text and not text.startswith("-0.00")
    assert abs(float(text) - x) <= 0.005 + 1e-9


# --- month and phase overlap -----------------------------------------------------------


def test_month_bounds() -> None:
    def bounds(text: str) -> tuple[dt.date, dt.date]:
        month = ReportMonth(text)
        return month.first_day, month.last_day

    assert bounds("2026-11") == (dt.date(2026, 11, 1), dt.date(2026, 11, 30))
    assert bounds("2026-12") == (dt.date(2026, 12, 1), dt.date(2026, 12, 31))
    assert bounds("2028-02") == (dt.date(2028, 2, 1), dt.date(2028, 2, 29))  # leap year


def _phase(start: dt.date, end: dt.date | None, **kw: object) -> PhaseResult:
    missing = Estimate.missing("too-few-days")
    base: dict[str, object] = {
        "name": "Cut 1",
        "kind": "deficit",
        "start": start,
        "end": end,
        "window_end": end or dt.date(2026, 11, 30),
        "days": 30,
        "weight_days": 28,
        "intake_days": 25,
        "trend_start_kg": None,
        "trend_end_kg": None,
        "trend_change_kg": None,
        "rate_kg_per_week": missing,
        "rate_pct_per_week": missing,
        "mean_intake_kcal": None,
        "target_kcal": None,
        "realised_deficit_kcal": missing,
        "observed_tdee_kcal": missing,
        "expected_tdee_kcal": missing,
        "expected_method": None,
        "adaptation_kcal": missing,
        "adaptation_pct": missing,
        "deficit_depth_pct": None,
        "days_in_deficit": None,
        "bodyfat_start_pct": None,
        "bodyfat_end_pct": None,
        "fat_mass_change_kg": None,
        "lean_mass_change_kg": None,
        "status": "too-few-days",
    }
    base.update(kw)
    return PhaseResult(**base)  # type: ignore[arg-type]


@pytest.mark.parametrize(
    ("start", "end", "expected"),
    [
        (dt.date(2026, 8, 1), dt.date(2026, 10, 31), False),  # ended the day before
        (dt.date(2026, 8, 1), dt.date(2026, 11, 1), True),  # ends on the first day
        (dt.date(2026, 11, 30), None, True),  # starts on the last day, running
        (dt.date(2026, 12, 1), None, False),  # starts after the month
        (dt.date(2026, 9, 1), None, True),  # running through the month
        (dt.date(2026, 11, 5), dt.date(2026, 11, 20), True),  # inside
    ],
)
def test_overlaps_month(start: dt.date, end: dt.date | None, expected: bool) -> None:
    assert overlaps_month(_phase(start, end), ReportMonth("2026-11")) is expected


def test_unknown_values_are_blank_never_zero() -> None:
    row = phase_row("c009", _phase(dt.date(2026, 11, 20), None))
    assert list(row) == list(SUMMARY_COLUMNS)
    assert row["end"] == ""
    for col in DECIMALS:
        assert row[col] == "", col
    assert row["status"] == "too-few-days"
    assert row["days"] == "30"


def test_interval_is_blank_without_its_estimate() -> None:
    # An interval with no point estimate is not an estimate: both ends stay blank.
    odd = Estimate(value=None, low=2100.0, high=2500.0, reason="too-few-days")
    row = phase_row("c001", _phase(dt.date(2026, 11, 1), None, observed_tdee_kcal=odd))
    assert row["observed_tdee_low_kcal"] == row["observed_tdee_high_kcal"] == ""


def test_known_values_fixed_decimals_and_csv_round_trip() -> None:
    p = _phase(
        dt.date(2026, 9, 1),
        dt.date(2026, 11, 15),
        trend_start_kg=84.456,
        trend_end_kg=80.0,
        trend_change_kg=-4.456,
        rate_pct_per_week=Estimate(-0.5123, -0.6, -0.4),
        mean_intake_kcal=1987.6,
        realised_deficit_kcal=Estimate(512.49, 400.0, 620.0),
        observed_tdee_kcal=Estimate(2500.2, 2380.5, 2619.5),
        expected_tdee_kcal=Estimate(2600.0),
        adaptation_kcal=Estimate(-99.8, -200.0, 10.0),
        adaptation_pct=Estimate(-3.84),
        activity_change_kcal=Estimate(-42.4, -60.0, -25.0),
        implied_intake_kcal=Estimate(2234.5, 2100.0, 2370.0),
        bodyfat_start_pct=28.04,
        bodyfat_end_pct=26.96,
        fat_mass_change_kg=-3.5,
        lean_mass_change_kg=-0.956,
        status="ok",
    )
    row = phase_row("c001", p)
    data = summary_csv([row]).decode("utf-8")
    assert data.endswith("\n") and "\r" not in data
    parsed = list(csv.DictReader(io.StringIO(data)))
    assert parsed == [
        {
            "client_id": "c001",
            "phase": "Cut 1",
            "start": "2026-09-01",
            "end": "2026-11-15",
            "days": "30",
            "weight_days": "28",
            "intake_days": "25",
            "trend_start_kg": "84.46",
            "trend_end_kg": "80.00",
            "trend_change_kg": "-4.46",
            "rate_pct_per_week": "-0.51",
            "mean_intake_kcal": "1988",
            "realised_deficit_kcal": "512",
            "observed_tdee_kcal": "2500",
            "observed_tdee_low_kcal": "2380",  # 2380.5 -> even
            "observed_tdee_high_kcal": "2620",  # 2619.5 -> even
            "expected_tdee_kcal": "2600",
            "adaptation_kcal": "-100",
            "adaptation_low_kcal": "-200",
            "adaptation_high_kcal": "10",
            "adaptation_pct": "-3.8",
            "activity_change_kcal": "-42",
            "implied_intake_kcal": "2234",  # 2234.5 -> even
            "bodyfat_start_pct": "28.0",
            "bodyfat_end_pct": "27.0",
            "fat_mass_change_kg": "-3.50",
            "lean_mass_change_kg": "-0.96",
            "status": "ok",
            # progress columns: blank on a row that is not the plateau assessment's phase
            "progress_status": "",
            "recent_rate_pct_per_week": "",
            "intake_drift_kcal": "",
            "body_size_change_kcal": "",
            "activity_change_recent_kcal": "",
            "metabolic_change_kcal": "",
            "logging_completeness_change_pct": "",
            "progress_reason": "",
        }
    ]


def test_plateau_cells_fixed_decimals_and_blanks() -> None:
    parts = (
        PlateauPart("intake", Estimate(-180.4, -250.0, -110.0)),
        PlateauPart("body-size", Estimate(-63.6, -80.0, -47.0)),
        PlateauPart("activity", Estimate.missing("not-measured")),
        PlateauPart("metabolic", Estimate(-120.5, -200.0, -40.0)),
        PlateauPart("logging", Estimate(-10.0, -60.0, 40.0)),
    )
    pl = PlateauResult(
        phase_name="Cut 1",
        phase_start=dt.date(2026, 9, 1),
        status="stalled",
        reason=None,
        underlying=None,
        water_reasons=(),
        recent_rate_pct_per_week=Estimate(-0.054, -0.2, 0.1),
        planned_rate_pct_per_week=-0.6,
        planned_source="target",
        recent_days=28,
        change_kcal=Estimate(-380.0),
        parts=parts,
        leftover_kcal=-6.0,
        largest="intake",
        causes_reason=None,
        intake_change_kcal=200.44,
        completeness_change_pct=-21.43,
        implied_intake_kcal=Estimate(2300.0),
        logging_gap_kcal=Estimate(-100.0),
        metabolic_expected_kcal=-17.0,
        hunger_change=1.5,
        energy_change=None,
        gap_kcal=350.0,
        options=(),
        cautions=(),
    )
    cells = plateau_cells(pl)
    assert cells == {
        "progress_status": "stalled",
        "recent_rate_pct_per_week": "-0.05",
        "intake_drift_kcal": "200",
        "body_size_change_kcal": "-64",
        "activity_change_recent_kcal": "",  # steps not logged: blank, never zero
        "metabolic_change_kcal": "-120",  # -120.5 -> even
        "logging_completeness_change_pct": "-21.4",
        "progress_reason": "",  # "stalled" says it all
    }
    # without a cause split the drift stays blank too; the reason says why it is too early
    bare = plateau_cells(
        dataclasses.replace(pl, parts=(), status="too-early", reason="phase-under-3-weeks")
    )
    assert bare["intake_drift_kcal"] == "" and bare["progress_status"] == "too-early"
    assert bare["progress_reason"] == "phase-under-3-weeks"
    wide = plateau_cells(dataclasses.replace(pl, status="too-few-data", reason="interval-too-wide"))
    assert wide["progress_reason"] == "interval-too-wide"
    water = plateau_cells(
        dataclasses.replace(
            pl,
            status="likely-water",
            underlying="stalled",
            water_reasons=("high-intake-days", "break-before"),
        )
    )
    assert water["progress_reason"] == "high-intake-days+break-before"


def test_rows_sorted_by_client_then_start_and_header_only_when_empty() -> None:
    rows = [
        phase_row("c010", _phase(dt.date(2026, 9, 1), None)),
        phase_row("c002", _phase(dt.date(2026, 11, 10), None, name="B")),
        phase_row("c002", _phase(dt.date(2026, 9, 1), dt.date(2026, 11, 9), name="A")),
    ]
    text = summary_csv(rows).decode()
    order = [(r["client_id"], r["phase"]) for r in csv.DictReader(io.StringIO(text))]
    assert order == [("c002", "A"), ("c002", "B"), ("c010", "Cut 1")]
    assert summary_csv([]).decode() == ",".join(SUMMARY_COLUMNS) + "\n"


def test_phase_names_with_commas_quotes_and_accents_survive() -> None:
    row = phase_row("c003", _phase(dt.date(2026, 9, 1), None, name='Défi "été", part 2'))
    back = next(csv.DictReader(io.StringIO(summary_csv([row]).decode("utf-8"))))
    assert back["phase"] == 'Défi "été", part 2'


# --- manifest --------------------------------------------------------------------------


def test_manifest_is_sorted_stable_and_hashes_inputs(tmp_path: Path) -> None:
    book = tmp_path / "book"
    (book / "logs").mkdir(parents=True)
    (book / "clients.csv").write_bytes(b"client_id,name\nc001,Zo\xc3\xab\n")
    (book / "logs" / "c001.csv").write_bytes(b"date,weight_kg\n2026-11-01,80\n")
    inputs = hash_inputs(book, ["clients.csv", "logs/c001.csv", "logs/missing.csv"])
    # sha256 of the exact bytes, checked with hashlib's independent implementation
    import hashlib

    assert inputs == {
        "clients.csv": hashlib.sha256(b"client_id,name\nc001,Zo\xc3\xab\n").hexdigest(),
        "logs/c001.csv": hashlib.sha256(b"date,weight_kg\n2026-11-01,80\n").hexdigest(),
    }
    entry = ClientEntry(
        status="ok",
        name="Zoë",
        files={"report": {"path": "c001.pdf", "sha256": sha256_bytes(b"x")}},
        inputs=inputs,
    )
    m = build_manifest(
        month=ReportMonth("2026-11"),
        book=book,
        config_file=None,
        config={"report": {"paper": "A4"}},
        files={"summary.csv": "b", "overview.pdf": "a"},
        clients={"c010": entry, "c001": entry},
    )
    data = manifest_bytes(m)
    assert data == manifest_bytes(m)
    assert data.endswith(b"}\n")
    loaded = json.loads(data)
    assert loaded["tool"] == "reportgen"
    assert loaded["config_file"] is None
    assert loaded["book"] == str(book.resolve())
    assert list(loaded["clients"]) == ["c001", "c010"]
    assert "Zoë" in data.decode("utf-8")  # written as UTF-8, not \u escapes
    text = data.decode()
    assert text == json.dumps(loaded, sort_keys=True, indent=2, ensure_ascii=False) + "\n"
    assert not any(k in text for k in ("created", "timestamp", "generated_at"))
