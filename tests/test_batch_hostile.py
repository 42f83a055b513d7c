"""Hostile and broken input around the batch: templates, caches, output folder, config.

Each test builds its hostile input itself and bounds time and memory where a failure could
hang or exhaust the machine (subprocess with resource limits and a time-out).
"""

from __future__ import annotations

import json
import subprocess
from pathlib import Path

import pytest
from click.testing import CliRunner

from reportgen.cli import main
from reportgen.resources import templates_dir

MONTH = "2026-11"


def _cli(*args: object) -> object:
    return CliRunner().invoke(main, [str(a) for a in args], catch_exceptions=False)


def _payload(marker: Path) -> str:
    # The classic jinja2 escape: reach os through a global's __init__.__globals__.
    return (
        "{% set x = cycler.__init__.__globals__.os.popen('touch " + str(marker) + "').read() %}\n"
    )


def test_report_template_cannot_run_commands(sample_book: Path, tmp_path: Path) -> None:
    marker = tmp_path / "ran"
    override = tmp_path / "tpl" / "report"
    override.mkdir(parents=True)
    shipped = (templates_dir() / "report" / "client.j2").read_text(encoding="utf-8")
    (override / "client.j2").write_text(_payload(marker) + shipped, encoding="utf-8")
    config = tmp_path / "practice.toml"
    config.write_text(f'[report]\ntemplates_dir = "{tmp_path / "tpl"}"\n', encoding="utf-8")
    out = tmp_path / "out"
    res = _cli(
        "batch", sample_book, "--month", MONTH, "--out", out, "--clients", "c001",
        "--workers", 1, "--config", config, "--quiet",
    )  # fmt: skip
    assert not marker.exists(), "a template ran a shell command"
    assert res.exit_code == 1  # type: ignore[attr-defined]
    manifest = json.loads((out / MONTH / "manifest.json").read_text("utf-8"))
    (message,) = manifest["clients"]["c001"]["messages"]
    assert message.startswith("template report/client.j2") and "unsafe" in message
    assert "unexpected error" not in message


def test_template_syntax_error_names_the_template(sample_book: Path, tmp_path: Path) -> None:
    override = tmp_path / "tpl" / "report"
    override.mkdir(parents=True)
    (override / "overview.j2").write_text("{% macro broken( %}\n", encoding="utf-8")
    config = tmp_path / "practice.toml"
    config.write_text(f'[report]\ntemplates_dir = "{tmp_path / "tpl"}"\n', encoding="utf-8")
    out = tmp_path / "out"
    res = _cli(
        "batch", sample_book, "--month", MONTH, "--out", out, "--clients", "c001",
        "--workers", 1, "--config", config, "--quiet",
    )  # fmt: skip
    assert res.exit_code == 1  # type: ignore[attr-defined]
    manifest = json.loads((out / MONTH / "manifest.json").read_text("utf-8"))
    (error,) = manifest["errors"]
    assert "template report/overview.j2" in error and "line 1" in error


def test_font_cache_is_not_in_the_shared_temp_folder(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    import os
    import tempfile

    from fontTools.ttLib import TTFont

    from reportgen.report import charts

    shared = tmp_path / "shared-tmp"
    shared.mkdir()
    clear = getattr(charts, "font_cache_folder", None)
    if clear is not None:
        clear.cache_clear()
        monkeypatch.setattr(charts, "font_cache_folder", charts.font_cache_folder)
    monkeypatch.setattr(tempfile, "tempdir", str(shared))
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "cache"))
    # Plant junk under every name the old code could have used in the shared folder.
    planted = shared / f"reportgen-{os.getuid()}"
    planted.mkdir()
    path = charts._chart_font_file(charts.CHART_FONT_LATIN, charts.CHART_FONT_LATIN_RANGES)
    for name in [path.name, *(p.name for p in planted.iterdir())]:
        (planted / name).write_bytes(b"not a font")
    path = charts._chart_font_file(charts.CHART_FONT_LATIN, charts.CHART_FONT_LATIN_RANGES)
    assert shared not in path.parents
    assert (tmp_path / "cache") in path.parents
    assert (path.parent.stat().st_mode & 0o077) == 0, "cache folder readable by others"
    TTFont(str(path))  # a real font

    # A damaged cached copy (a crash mid-copy, a disk error) is detected and rebuilt.
    path.write_bytes(b"damaged")
    again = charts._chart_font_file(charts.CHART_FONT_LATIN, charts.CHART_FONT_LATIN_RANGES)
    TTFont(str(again))
    if clear is not None:
        clear.cache_clear()


def test_batch_refuses_a_symlinked_month_folder(sample_book: Path, tmp_path: Path) -> None:
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    out = tmp_path / "out"
    out.mkdir()
    (out / MONTH).symlink_to(elsewhere, target_is_directory=True)
    res = _cli("batch", sample_book, "--month", MONTH, "--out", out, "--clients", "c001",
               "--workers", 1, "--quiet")  # fmt: skip
    assert res.exit_code == 2  # type: ignore[attr-defined]
    assert "symbolic link" in res.output  # type: ignore[attr-defined]
    assert list(elsewhere.iterdir()) == []


@pytest.mark.parametrize("case", ["file", "under-file", "read-only"])
def test_unusable_output_folder_is_a_usage_error(
    sample_book: Path, tmp_path: Path, case: str
) -> None:
    import os

    if case == "file":
        out = tmp_path / "out"
        out.write_text("x")
        month_out = out
    elif case == "under-file":
        (tmp_path / "afile").write_text("x")
        out = tmp_path / "afile" / "out"
        month_out = out
    else:
        out = tmp_path / "ro"
        out.mkdir()
        month_out = out
        if os.geteuid() != 0:
            out.chmod(0o555)
        else:  # root ignores permission bits; the immutable flag stops root too (ext4)
            made = subprocess.run(["chattr", "+i", str(out)], capture_output=True, check=False)
            if made.returncode != 0:
                pytest.skip("root writes into read-only folders and chattr is not available")
    try:
        res = _cli("batch", sample_book, "--month", MONTH, "--out", out, "--clients", "c001",
                   "--workers", 1, "--quiet")  # fmt: skip
    finally:
        if case == "read-only":
            if os.geteuid() == 0:
                subprocess.run(["chattr", "-i", str(out)], check=False)
            out.chmod(0o755)
    assert res.exit_code == 2, res.output  # type: ignore[attr-defined]
    text = res.output.strip()  # type: ignore[attr-defined]
    assert "Traceback" not in text and str(month_out) in text
    assert len([ln for ln in text.splitlines() if ln.startswith("Error")]) == 1


def test_summary_csv_neutralises_formulas_but_keeps_negative_numbers() -> None:
    import csv
    import datetime as dt
    import io

    from reportgen.results import Estimate, PhaseResult
    from reportgen.summary import summary_csv

    missing = Estimate(None, reason="too-few-days")
    base: dict[str, object] = {
        "kind": "deficit",
        "start": dt.date(2026, 11, 1),
        "end": None,
        "window_end": dt.date(2026, 11, 30),
        "days": 30,
        "weight_days": 28,
        "intake_days": 25,
        "trend_start_kg": 82.0,
        "trend_end_kg": 80.5,
        "trend_change_kg": -1.5,
        "rate_kg_per_week": missing,
        "rate_pct_per_week": Estimate(-0.45),
        "mean_intake_kcal": 1900.0,
        "target_kcal": None,
        "realised_deficit_kcal": missing,
        "observed_tdee_kcal": missing,
        "expected_tdee_kcal": missing,
        "expected_method": None,
        "adaptation_kcal": Estimate(-120.0),
        "adaptation_pct": missing,
        "deficit_depth_pct": None,
        "days_in_deficit": None,
        "bodyfat_start_pct": None,
        "bodyfat_end_pct": None,
        "fat_mass_change_kg": None,
        "lean_mass_change_kg": None,
        "status": "ok",
    }
    from reportgen.summary import phase_row

    names = ['=HYPERLINK("http://example.invalid","x")', "+1", "-2+3", "@SUM(A1)", "\tx", "\rx"]
    rows = [
        phase_row(cid, PhaseResult(name=name, **base))  # type: ignore[arg-type]
        for cid, name in zip(["-c001", "c002", "c003", "c004", "c005", "c006"], names, strict=True)
    ]
    parsed = list(csv.DictReader(io.StringIO(summary_csv(rows).decode("utf-8"), newline="")))
    assert [r["phase"] for r in parsed] == ["'" + n.replace("\r", " ") for n in names]
    assert parsed[0]["client_id"] == "'-c001"
    for r in parsed:  # numbers stay numbers, negative ones included
        assert r["trend_change_kg"] == "-1.50" and r["rate_pct_per_week"] == "-0.45"
        assert r["adaptation_kcal"] == "-120"


def test_check_and_batch_show_control_characters_escaped(tmp_path: Path) -> None:
    from _io_helpers import csv_text, daily_rows, write_book

    book = write_book(
        tmp_path / "book",
        roster="client_id,name,sex,birth_date,height_cm,email,pregnant\n"
        "c001,Ada,female,1990-05-01,168,ada@example.org,no\n",
        logs={"c001.csv": csv_text([*daily_rows(), ["2026-11-20", "8\x1b[2J2", "1900", "1"]])},
    )
    check = _cli("check", book, "--today", "2026-12-01")
    batch = _cli("batch", book, "--month", MONTH, "--out", tmp_path / "out", "--workers", 1)
    for res in (check, batch):
        out = res.output  # type: ignore[attr-defined]
        assert "\x1b" not in out
        assert "\\x1b" in out


def test_a_client_that_crashes_its_worker_is_named_with_its_file(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    import datetime as dt
    import os

    from _io_helpers import ROSTER_HEADER, csv_text, daily_rows, write_book

    import reportgen.batch as batch

    roster = (
        f"{ROSTER_HEADER}\n"
        "c001,Ada Test,female,1990-05-01,168,ada@example.org,no\n"
        "c002,Ben Test,male,1985-02-01,180,ben@example.org,no\n"
    )
    logs = {"c001.csv": csv_text(daily_rows()), "c002.csv": csv_text(daily_rows())}
    book = write_book(tmp_path / "book", roster=roster, logs=logs)
    real = batch.read_client

    def crash_on_c002(book_dir: Path, client: object, *args: object, **kw: object) -> object:
        if getattr(client, "client_id", "") == "c002":
            os._exit(134)  # as a native abort in a reader would
        return real(book_dir, client, *args, **kw)  # type: ignore[arg-type]

    monkeypatch.setattr(batch, "read_client", crash_on_c002)  # forked workers inherit it
    result = batch.run_batch(book, MONTH, tmp_path / "out", workers=2, today=dt.date(2026, 12, 1))
    by_id = {o.client_id: o for o in result.outcomes}
    assert by_id["c001"].ok
    assert "stopped unexpectedly" in by_id["c002"].reason
    assert "logs/c002.csv" in by_id["c002"].reason


def _settings_check_in_child(config: Path) -> tuple[int, str]:
    """`reportgen settings check` in a child bounded in memory (1.5 GB) and time (60 s)."""
    import os
    import resource
    import subprocess
    import sys

    def limit() -> None:
        resource.setrlimit(resource.RLIMIT_AS, (2_500 * 1024 * 1024,) * 2)

    proc = subprocess.run(
        [sys.executable, "-c", "from reportgen.cli import main; main()", "settings", "check",
         str(config)],
        capture_output=True, text=True, timeout=60, preexec_fn=limit, check=False,
        env={**os.environ, "OPENBLAS_NUM_THREADS": "1"},
    )  # fmt: skip
    return proc.returncode, proc.stdout + proc.stderr


@pytest.mark.parametrize("kind", ["dev-zero", "fifo", "folder"])
def test_logo_that_is_not_a_file_is_refused_without_reading(tmp_path: Path, kind: str) -> None:
    import os

    logo = tmp_path / "logo.png"
    if kind == "dev-zero":
        if not Path("/dev/zero").exists():
            pytest.skip("no /dev/zero")
        logo.symlink_to("/dev/zero")  # endless zeros behind an innocent name
    elif kind == "fifo":
        os.mkfifo(logo)
    else:
        logo.mkdir()
    config = tmp_path / "practice.toml"
    config.write_text('[practice]\nlogo = "logo.png"\n', encoding="utf-8")
    code, out = _settings_check_in_child(config)
    assert code == 1, out
    assert "[practice] logo" in out and "Traceback" not in out
    assert "no such file" not in out  # it is there: say what it is


def test_oversized_logo_is_refused(tmp_path: Path) -> None:
    from reportgen.config import check_config_file
    from reportgen.io.guard import MAX_LOGO_BYTES

    logo = tmp_path / "logo.png"
    with logo.open("wb") as fh:
        fh.write(b"\x89PNG\r\n\x1a\n")
        fh.truncate(MAX_LOGO_BYTES + 1)  # sparse
    config = tmp_path / "practice.toml"
    config.write_text('[practice]\nlogo = "logo.png"\n', encoding="utf-8")
    (problem,) = check_config_file(config)
    assert "[practice] logo" in problem and "MB" in problem


@pytest.mark.parametrize("value", ["nan", "inf", "-inf"])
def test_non_finite_numbers_in_the_configuration_are_refused(tmp_path: Path, value: str) -> None:
    config = tmp_path / "practice.toml"
    config.write_text(f"[mail]\ntimeout_s = {value}\n", encoding="utf-8")
    res = _cli("settings", "check", config)
    assert res.exit_code == 1  # type: ignore[attr-defined]
    assert "[mail] timeout_s must be a finite number" in res.output  # type: ignore[attr-defined]
