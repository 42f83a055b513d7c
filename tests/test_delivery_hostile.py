"""Hostile input reaching `reportgen send`: edited manifests, templates, links, headers."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from _delivery_helpers import (
    FaultyHandler,
    RosterRow,
    loopback_only,  # noqa: F401  (fixture)
    make_month,
    smtp_server,
    write_config,
)
from click.testing import CliRunner

from reportgen.cli.send import send_command
from reportgen.month import ReportMonth

pytestmark = pytest.mark.usefixtures("loopback_only")


def _run(args: list[object]):  # type: ignore[no-untyped-def]
    return CliRunner().invoke(send_command, [str(a) for a in args], catch_exceptions=False)


def _evil_templates(folder: Path, marker: Path) -> None:
    mail = folder / "mail"
    mail.mkdir(parents=True)
    (mail / "report_subject.txt.j2").write_text(
        "{{ cycler.__init__.__globals__.os.popen('touch " + str(marker) + "').read() }}",
        encoding="utf-8",
    )


def test_mail_templates_are_sandboxed(tmp_path: Path) -> None:
    month = make_month(tmp_path)
    marker = tmp_path / "ran"
    _evil_templates(tmp_path / "tpl", marker)
    cfg = tmp_path / "own.toml"
    write_config(cfg, 2525)
    cfg.write_text(
        cfg.read_text("utf-8") + f'\n[report]\ntemplates_dir = "{tmp_path / "tpl"}"\n', "utf-8"
    )
    res = _run([month.month_dir, "--dry-run", "--config", cfg])
    assert not marker.exists(), "a mail template ran a shell command"
    assert res.exit_code == 2
    assert "template report_subject.txt.j2" in res.output and "unsafe" in res.output
    assert "Traceback" not in res.output


def test_send_does_not_trust_a_config_path_from_an_edited_manifest(tmp_path: Path) -> None:
    month = make_month(tmp_path)
    marker = tmp_path / "ran"
    other = tmp_path / "elsewhere"
    _evil_templates(other / "tpl", marker)
    planted = other / "practice.toml"
    write_config(planted, 2525)
    planted.write_text(
        planted.read_text("utf-8") + f'\n[report]\ntemplates_dir = "{other / "tpl"}"\n', "utf-8"
    )
    path = month.month_dir / "manifest.json"
    manifest = json.loads(path.read_text("utf-8"))
    manifest["config_file"] = str(planted)
    path.write_text(json.dumps(manifest), "utf-8")
    res = _run([month.month_dir, "--dry-run"])
    assert res.exit_code == 2
    assert "--config" in res.output and str(planted) in res.output
    assert not (month.month_dir / "outbox").exists()
    assert not marker.exists()
    # Named by the user, the batch's own file is used as before.
    ok = _run([month.month_dir, "--dry-run", "--config", month.config_file])
    assert ok.exit_code == 0, ok.output


def test_send_refuses_path_settings_stored_in_the_manifest(tmp_path: Path) -> None:
    month = make_month(tmp_path)
    path = month.month_dir / "manifest.json"
    manifest = json.loads(path.read_text("utf-8"))
    manifest["config_file"] = None
    manifest["config"]["report"]["templates_dir"] = str(tmp_path)
    path.write_text(json.dumps(manifest), "utf-8")
    res = _run([month.month_dir, "--dry-run"])
    assert res.exit_code == 2 and "templates_dir" in res.output


def test_dry_run_never_writes_through_an_outbox_link(tmp_path: Path) -> None:
    month = make_month(tmp_path)
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    keep = elsewhere / "keep.eml"
    keep.write_text("not reportgen's")
    (month.month_dir / "outbox").symlink_to(elsewhere, target_is_directory=True)
    res = _run([month.month_dir, "--dry-run"])
    assert res.exit_code == 2 and "symbolic link" in res.output
    assert sorted(p.name for p in elsewhere.iterdir()) == ["keep.eml"]


def test_send_never_writes_the_ledger_through_a_link(tmp_path: Path) -> None:
    month = make_month(tmp_path)
    target = tmp_path / "elsewhere.jsonl"
    target.write_text("")
    (month.month_dir / "deliveries.jsonl").symlink_to(target)
    res = _run([month.month_dir])
    assert res.exit_code == 2 and "symbolic link" in res.output
    assert target.read_text() == ""


HOSTILE = (
    RosterRow("c001", "Maren Test", "maren@example.org"),
    RosterRow("c002", "Eve\r\nBcc: victim@example.org", "eve@example.org"),
    RosterRow("c003", "Ivo Test", "ivo@example.net\nBcc: victim@example.org"),
    RosterRow("c004", "Tab\tName", "tab@example.org"),
    RosterRow("c005", "Zoë Test", "zoe@example.com"),
)


def test_control_characters_in_names_or_addresses_skip_only_that_client(
    tmp_path: Path,
) -> None:
    handler = FaultyHandler()
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, port=srv.port, clients=HOSTILE)
        dry = _run([month.month_dir, "--dry-run"])
        assert dry.exit_code == 1, dry.output
        assert "Traceback" not in dry.output
        outbox = sorted(p.name for p in (month.month_dir / "outbox").iterdir())
        assert outbox == ["c001-report.eml", "c005-report.eml"]
        for eml in (month.month_dir / "outbox").iterdir():
            assert b"victim" not in eml.read_bytes()
        sent = _run([month.month_dir, "--retry-delay", 0])
        assert sent.exit_code == 1, sent.output
    assert sorted(handler.recipients()) == ["maren@example.org", "zoe@example.com"]
    for client in ("c002", "c003", "c004"):
        line = next(ln for ln in sent.output.splitlines() if ln.startswith(client))
        assert "skipped-invalid-address" in line
    for msg in handler.messages():
        for value in msg.values():
            assert not any(ord(c) < 32 for c in str(value).replace("\t", "")), value


def test_send_output_shows_control_characters_escaped(tmp_path: Path) -> None:
    clients = (RosterRow("c001", "Maren Test", "\x1b[2J\x1b]0;owned\x07@example.org"),)
    month = make_month(tmp_path, clients=clients)
    res = _run([month.month_dir, "--dry-run"])
    assert "\x1b" not in res.output and "\x07" not in res.output
    assert "\\x1b" in res.output


def test_no_control_character_reaches_the_subject_from_an_override(tmp_path: Path) -> None:
    from reportgen.config import Config, ReportSettings
    from reportgen.delivery.messages import mail_environment, render_content

    mail = tmp_path / "tpl" / "mail"
    mail.mkdir(parents=True)
    (mail / "report_subject.txt.j2").write_text("Report for {{ client_name }}", encoding="utf-8")
    config = Config(report=ReportSettings(templates_dir=str(tmp_path / "tpl")))
    content = render_content(
        mail_environment(config),
        "report",
        config=config,
        client_name="Eve\x1b[2J\x00\x85",
        client_id="c002",
        month=ReportMonth("2026-11"),
        filename="report.pdf",
        encrypted=False,
    )
    assert content.subject.startswith("Report for Eve")
    assert not any(ord(c) < 32 or 0x7F <= ord(c) <= 0x9F for c in content.subject)
