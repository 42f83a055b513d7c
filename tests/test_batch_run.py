"""The batch end to end on a copy of the sample book: outputs, summary, manifest, exit codes."""

from __future__ import annotations

import csv
import hashlib
import io
import json
from pathlib import Path

import pytest
from _batch_helpers import (
    FAILING_CLIENT,
    MONTH,
    ReferenceRun,
    copy_sample,
    expected_problems,
    failing_location,
    failing_value,
    reference_run,
    run_cli,
    snapshot,
)
from pypdf import PdfReader

from reportgen.month import ReportMonth
from reportgen.results import Estimate, PhaseResult
from reportgen.summary import DECIMALS, SUMMARY_COLUMNS

__all__ = ["reference_run"]  # the shared session fixture

SAMPLE_IDS = [f"c{n:03d}" for n in range(1, 18)]
GOOD_IDS = [c for c in SAMPLE_IDS if c != FAILING_CLIENT]


def test_reference_run_exit_code_and_table(reference_run: ReferenceRun) -> None:
    r = reference_run.result
    assert r.exit_code == 1, r.output  # c007 has a deliberate error; the other nine are made
    assert "failed" in r.output and FAILING_CLIENT in r.output
    assert failing_location() in r.output  # its one-line reason names file:row:column
    assert f"Files are in {reference_run.month_dir}" in r.output.replace("\n", "")
    assert "\x1b[" not in r.output  # not a terminal: no progress bar, no colour codes


def test_reference_run_writes_exactly_the_expected_files(reference_run: ReferenceRun) -> None:
    names = sorted(p.name for p in reference_run.month_dir.iterdir())
    expected = sorted(
        [f"{c}.pdf" for c in GOOD_IDS]
        + [f"{c}-practitioner.pdf" for c in GOOD_IDS]
        + ["overview.pdf", "methods.pdf", "summary.csv", "manifest.json"]
    )
    assert names == expected
    for name in names:
        if name.endswith(".pdf"):
            reader = PdfReader(reference_run.month_dir / name)
            assert len(reader.pages) >= 1, name
    # one page for the practitioner summary (the issue: "one-page practitioner summary")
    assert len(PdfReader(reference_run.month_dir / "c001-practitioner.pdf").pages) == 1


def test_nothing_written_outside_the_month_folder_and_inputs_unchanged(
    reference_run: ReferenceRun,
) -> None:
    assert sorted(p.name for p in reference_run.root.iterdir()) == ["book", "out"]
    assert [p.name for p in reference_run.out.iterdir()] == [MONTH]
    assert snapshot(reference_run.book) == reference_run.book_before


def test_manifest_contents_and_hashes(reference_run: ReferenceRun) -> None:
    month_dir = reference_run.month_dir
    raw = (month_dir / "manifest.json").read_bytes()
    m = json.loads(raw)
    assert raw.decode() == json.dumps(m, sort_keys=True, indent=2, ensure_ascii=False) + "\n"
    assert m["tool"] == "reportgen"
    assert m["version"] == "0.1.0"
    assert m["month"] == MONTH
    assert m["book"] == str(reference_run.book.resolve())
    assert m["config_file"] is None
    assert m["config"]["report"]["paper"] == "A4"
    assert m["book_problems"] == []
    assert sorted(m["files"]) == ["methods.pdf", "overview.pdf", "summary.csv"]
    for name, digest in m["files"].items():
        assert hashlib.sha256((month_dir / name).read_bytes()).hexdigest() == digest
    assert list(m["clients"]) == SAMPLE_IDS

    for cid in GOOD_IDS:
        entry = m["clients"][cid]
        assert entry["status"] == "ok"
        assert entry["messages"] == []
        assert entry["warnings"] == []  # the sample's other clients are clean
        assert set(entry["files"]) == {"report", "practitioner"}
        for f in entry["files"].values():
            digest = hashlib.sha256((month_dir / f["path"]).read_bytes()).hexdigest()
            assert f["sha256"] == digest
        assert "clients.csv" in entry["inputs"]
        assert any(k.startswith(f"logs/{cid}.") for k in entry["inputs"])
        for rel, digest in entry["inputs"].items():
            assert hashlib.sha256((reference_run.book / rel).read_bytes()).hexdigest() == digest
    assert "phases.csv" in m["clients"]["c001"]["inputs"]
    assert "skinfolds/c001.csv" in m["clients"]["c001"]["inputs"]

    bad = m["clients"][FAILING_CLIENT]
    assert bad["status"] == "error"
    assert bad["files"] == {}
    assert len(bad["messages"]) == 1
    assert bad["messages"][0].startswith(failing_location() + ": ")
    assert "logs/c007.csv" in bad["inputs"]
    # the three deliberate warnings (sample_inputs/EXPECTED_PROBLEMS.md), as Problem dicts
    found = sorted((w["file"], w["row"] or 0, w["column"]) for w in bad["warnings"])
    expected = sorted((f, r or 0, c) for sev, f, r, c in expected_problems() if sev == "warning")
    assert found == expected
    assert len(expected) == 3  # unknown column, gap, outlier
    assert all(w["severity"] == "warning" and w["client_id"] == "c007" for w in bad["warnings"])


def _analyse(book: Path, cid: str):  # type: ignore[no-untyped-def]
    from reportgen.analysis import analyse_client
    from reportgen.config import AnalysisSettings
    from reportgen.io.book import read_client, read_roster

    roster = read_roster(book)
    client = next(c for c in roster.clients if c.client_id == cid)
    record = read_client(
        book,
        client,
        roster.phases.get(cid, ()),
        ReportMonth(MONTH).last_day,
        roster_problems=tuple(p for p in roster.problems if p.client_id == cid),
    )
    assert record.ok
    return analyse_client(record, MONTH, AnalysisSettings())


def _check_value(text: str, value: float | None, column: str) -> None:
    if value is None:
        assert text == "", f"{column}: expected blank, got {text!r}"
        return
    assert text != "", f"{column}: expected {value}, got blank"
    assert abs(float(text) - value) <= 0.5 * 10 ** -DECIMALS[column] + 1e-9, column
    assert len(text.partition(".")[2]) == DECIMALS[column], f"{column}: {text!r}"


@pytest.mark.parametrize("cid", ["c001", "c006"])
def test_summary_rows_match_the_analysis(reference_run: ReferenceRun, cid: str) -> None:
    text = (reference_run.month_dir / "summary.csv").read_text(encoding="utf-8")
    reader = csv.DictReader(io.StringIO(text))
    assert tuple(reader.fieldnames or ()) == SUMMARY_COLUMNS
    rows = [r for r in reader if r["client_id"] == cid]

    analysis = _analyse(reference_run.book, cid)
    first, last = ReportMonth(MONTH).first_day, ReportMonth(MONTH).last_day
    overlapping: list[PhaseResult] = [
        p for p in analysis.phases if p.start <= last and (p.end is None or p.end >= first)
    ]
    assert overlapping, "the sample clients all have a phase in November"
    assert len(rows) == len(overlapping)
    for row, p in zip(rows, sorted(overlapping, key=lambda q: q.start), strict=True):
        assert row["phase"] == p.name
        assert row["start"] == p.start.isoformat()
        assert row["end"] == (p.end.isoformat() if p.end else "")
        assert (row["days"], row["weight_days"], row["intake_days"]) == (
            str(p.days),
            str(p.weight_days),
            str(p.intake_days),
        )
        assert row["status"] == p.status
        plain: dict[str, float | None] = {
            "trend_start_kg": p.trend_start_kg,
            "trend_end_kg": p.trend_end_kg,
            "trend_change_kg": p.trend_change_kg,
            "mean_intake_kcal": p.mean_intake_kcal,
            "bodyfat_start_pct": p.bodyfat_start_pct,
            "bodyfat_end_pct": p.bodyfat_end_pct,
            "fat_mass_change_kg": p.fat_mass_change_kg,
            "lean_mass_change_kg": p.lean_mass_change_kg,
        }
        estimates: dict[str, Estimate] = {
            "rate_pct_per_week": p.rate_pct_per_week,
            "realised_deficit_kcal": p.realised_deficit_kcal,
            "observed_tdee_kcal": p.observed_tdee_kcal,
            "expected_tdee_kcal": p.expected_tdee_kcal,
            "adaptation_kcal": p.adaptation_kcal,
            "adaptation_pct": p.adaptation_pct,
        }
        for column, value in plain.items():
            _check_value(row[column], value, column)
        for column, est in estimates.items():
            _check_value(row[column], est.value, column)
        tdee = p.observed_tdee_kcal
        for column, bound in (
            ("observed_tdee_low_kcal", tdee.low),
            ("observed_tdee_high_kcal", tdee.high),
        ):
            _check_value(row[column], bound if tdee.known else None, column)
    # the phase that ended in October is not a November row (c006: cut ended 2026-10-25)
    if cid == "c006":
        assert all(r["start"] >= "2026-10-26" for r in rows)


def test_summary_has_no_rows_for_the_failed_client(reference_run: ReferenceRun) -> None:
    text = (reference_run.month_dir / "summary.csv").read_text(encoding="utf-8")
    ids = {r["client_id"] for r in csv.DictReader(io.StringIO(text))}
    assert ids == set(GOOD_IDS)


def test_overview_lists_every_client_and_the_failure_reason(reference_run: ReferenceRun) -> None:
    reader = PdfReader(reference_run.month_dir / "overview.pdf")
    text = " ".join(p.extract_text() for p in reader.pages)
    for cid in SAMPLE_IDS:
        assert cid in text, cid
    assert failing_value() in text  # c007's one-line reason, from the task, reaches the overview


def test_serial_rerun_is_byte_identical(reference_run: ReferenceRun, tmp_path: Path) -> None:
    out = tmp_path / "out-serial"
    r = run_cli([reference_run.book, "--month", MONTH, "--out", out, "--workers", "1", "--quiet"])
    assert r.exit_code == 1
    assert r.stdout == ""  # --quiet: nothing on stdout ...
    assert f"c007: {failing_location()}" in r.stderr  # ... failures still on stderr
    again = {p.name: p.read_bytes() for p in sorted((out / MONTH).iterdir())}
    assert again == reference_run.files()


def test_subset_of_clients_exit_zero(reference_run: ReferenceRun, tmp_path: Path) -> None:
    out = tmp_path / "out"
    r = run_cli([reference_run.book, "--month", MONTH, "--out", out, "--clients", "c003, c001"])
    assert r.exit_code == 0, r.output
    names = sorted(p.name for p in (out / MONTH).iterdir())
    assert names == sorted(
        [
            "c001.pdf",
            "c001-practitioner.pdf",
            "c003.pdf",
            "c003-practitioner.pdf",
            "manifest.json",
            "methods.pdf",
            "overview.pdf",
            "summary.csv",
        ]
    )
    m = json.loads((out / MONTH / "manifest.json").read_text())
    assert list(m["clients"]) == ["c001", "c003"]
    # the same client gives the same bytes whichever other clients are in the run
    for name in ("c001.pdf", "c003-practitioner.pdf"):
        assert (out / MONTH / name).read_bytes() == reference_run.files()[name]


def test_unexpected_error_is_that_clients_entry_only(tmp_path: Path) -> None:
    book = copy_sample(tmp_path / "book")
    month_dir = tmp_path / "out" / MONTH
    # A folder where c003's report should go: the rename fails with an OSError nobody planned for.
    (month_dir / "c003.pdf").mkdir(parents=True)
    args = [book, "--month", MONTH, "--out", tmp_path / "out", "--clients", "c001,c003"]
    r = run_cli(args)
    assert r.exit_code == 1
    m = json.loads((month_dir / "manifest.json").read_text())
    assert m["clients"]["c001"]["status"] == "ok"
    assert m["clients"]["c003"]["status"] == "error"
    assert m["clients"]["c003"]["messages"][0].startswith("unexpected error: IsADirectoryError")
    assert "Traceback" not in r.output
    assert "--verbose" in r.output
    verbose = run_cli([*args, "--verbose"])
    assert verbose.exit_code == 1
    assert "Traceback (most recent call last)" in verbose.stderr
    assert "IsADirectoryError" in verbose.stderr
    # no temporary file is left behind by the failed write
    assert sorted(p.name for p in month_dir.iterdir() if p.name.startswith(".")) == []


def test_client_that_fails_this_month_loses_last_runs_pdfs(tmp_path: Path) -> None:
    book = copy_sample(tmp_path / "book")
    out = tmp_path / "out"
    assert run_cli([book, "--month", MONTH, "--out", out, "--clients", "c003"]).exit_code == 0
    assert (out / MONTH / "c003.pdf").is_file()
    log = book / "logs" / "c003.csv"
    lines = log.read_text(encoding="utf-8").splitlines(keepends=True)
    header = [h.strip().lower() for h in lines[0].split(",")]
    cells = lines[-1].rstrip("\n").split(",")
    cells[header.index("date")] = "2026-11-31"  # not a date
    lines[-1] = ",".join(cells) + "\n"
    log.write_text("".join(lines), encoding="utf-8")
    r = run_cli([book, "--month", MONTH, "--out", out, "--clients", "c003"])
    assert r.exit_code == 1
    assert not (out / MONTH / "c003.pdf").exists()
    assert not (out / MONTH / "c003-practitioner.pdf").exists()
    m = json.loads((out / MONTH / "manifest.json").read_text())
    assert m["clients"]["c003"]["status"] == "error"
    assert "logs/c003.csv" in m["clients"]["c003"]["messages"][0]


def test_config_file_is_recorded(reference_run: ReferenceRun, tmp_path: Path) -> None:
    cfg = tmp_path / "practice.toml"
    cfg.write_text('[practice]\nname = "Kestrel Row Nutrition"\n[report]\nweight_unit = "lb"\n')
    out = tmp_path / "out"
    r = run_cli(
        [reference_run.book, "--month", MONTH, "--out", out, "--clients", "c001", "--config", cfg]
    )
    assert r.exit_code == 0, r.output
    m = json.loads((out / MONTH / "manifest.json").read_text())
    assert m["config_file"] == str(cfg.resolve())
    assert m["config"]["practice"]["name"] == "Kestrel Row Nutrition"
    assert m["config"]["report"]["weight_unit"] == "lb"
    # summary.csv stays in kg whatever the display unit
    rows = list(csv.DictReader(io.StringIO((out / MONTH / "summary.csv").read_text())))
    ref = {
        r["phase"]: r
        for r in csv.DictReader(io.StringIO((reference_run.month_dir / "summary.csv").read_text()))
        if r["client_id"] == "c001"
    }
    for row in rows:
        assert row == ref[row["phase"]]


def test_book_level_problem_is_recorded_not_fatal(tmp_path: Path) -> None:
    book = copy_sample(tmp_path / "book")
    with open(book / "phases.csv", "a", encoding="utf-8") as fh:
        fh.write("c999,Ghost phase,2026-11-01,,deficit,\n")  # a client not in the roster
    out = tmp_path / "out"
    r = run_cli([book, "--month", MONTH, "--out", out, "--clients", "c001"])
    assert r.exit_code == 0, r.output
    assert "problem(s) not tied to a client" in r.output
    m = json.loads((out / MONTH / "manifest.json").read_text())
    assert [(p["code"], p["client_id"], p["file"]) for p in m["book_problems"]] == [
        ("unknown-client", "c999", "phases.csv")
    ]
    assert m["clients"]["c001"]["status"] == "ok"
