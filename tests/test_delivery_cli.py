"""`reportgen send` from the command line (click's CliRunner, real SMTP on 127.0.0.1)."""

from __future__ import annotations

from pathlib import Path

import pytest
from _delivery_helpers import (
    FaultyHandler,
    RosterRow,
    loopback_only,  # noqa: F401  (fixture)
    make_month,
    smtp_server,
)
from aiosmtpd.smtp import AuthResult
from click.testing import CliRunner

from reportgen.cli.send import send_command

# Every test here fails if anything but 127.0.0.1 is contacted or looked up.
pytestmark = pytest.mark.usefixtures("loopback_only")


def _run(args: list[str], **kw: object):
    return CliRunner().invoke(send_command, args, catch_exceptions=False, **kw)


def test_help_names_every_option() -> None:
    result = _run(["--help"])
    assert result.exit_code == 0
    for opt in (
        "--config",
        "--host",
        "--port",
        "--security",
        "--user",
        "--dry-run",
        "--resend",
        "--encrypt / --no-encrypt",
        "--practitioner-copies",
        "--retry-delay",
        "--show-pdf-password",
    ):
        assert opt in result.output
    assert "REPORTGEN_SMTP_PASSWORD" in result.output
    assert "--password" not in result.output.replace("--show-pdf-password", "")


def test_send_prints_a_summary_and_exits_0_then_reruns_quietly(
    tmp_path: Path,
    loopback_only: list,  # noqa: F811
) -> None:
    handler = FaultyHandler()
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port)
        first = _run([str(month.month_dir), "--retry-delay", "0.01"])
        second = _run([str(month.month_dir)])
    assert first.exit_code == 0, first.output
    assert "c001         report       maren@example.org" in first.output
    assert "3 sent" in first.output and "Delivery 2026-11" in first.output
    assert second.exit_code == 0
    assert "3 already-sent" in second.output
    assert len(handler.accepted) == 3


def test_some_not_delivered_exits_1(tmp_path: Path) -> None:
    handler = FaultyHandler(refuse={"zoe@example.com"})
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port)
        result = _run([str(month.month_dir), "--retry-delay", "0.01"])
    assert result.exit_code == 1
    assert "refused" in result.output and "550 5.1.1 No such mailbox here" in result.output
    assert "Some messages were not delivered" in result.output


def test_usage_problems_exit_2(tmp_path: Path) -> None:
    (tmp_path / "2026-11").mkdir()
    result = _run([str(tmp_path / "2026-11")])
    assert result.exit_code == 2
    assert "has no manifest.json" in result.output
    month = make_month(tmp_path / "m", 2525)
    bad = _run([str(month.month_dir), "--resend", "c404"])
    assert bad.exit_code == 2 and "--resend: c404 not in the manifest" in bad.output
    result = _run([str(month.month_dir), "--security", "ssl"])
    assert result.exit_code == 2 and "Invalid value for '--security'" in result.output


def test_dry_run_from_the_command_line(tmp_path: Path) -> None:
    handler = FaultyHandler()
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port)
        result = _run([str(month.month_dir), "--dry-run", "--practitioner-copies"])
    assert result.exit_code == 0
    assert "dry run: nothing sent" in result.output and "4 written" in result.output
    assert handler.data_commands == 0
    assert (month.month_dir / "outbox" / "c001-practitioner.eml").is_file()


@pytest.mark.parametrize("how", ["env", "prompt"])
def test_smtp_password_from_env_or_prompt_never_echoed(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, how: str
) -> None:
    secret = "pw-Harbour-7713"

    def authenticator(server, session, envelope, mechanism, auth_data):
        return AuthResult(success=auth_data.password == secret.encode(), handled=False)

    handler = FaultyHandler()
    monkeypatch.delenv("REPORTGEN_SMTP_PASSWORD", raising=False)
    kw: dict[str, object] = {}
    if how == "env":
        kw["env"] = {"REPORTGEN_SMTP_PASSWORD": secret}
    else:
        kw["input"] = secret + "\n"
    with smtp_server(handler, authenticator=authenticator, auth_require_tls=False) as srv:
        month = make_month(tmp_path, srv.port)
        result = _run([str(month.month_dir), "--user", "clinic"], **kw)
    assert result.exit_code == 0, result.output
    assert len(handler.accepted) == 3
    assert secret not in result.output
    assert secret not in (month.month_dir / "deliveries.jsonl").read_text()
    assert all(secret not in m.as_string() for m in handler.messages())


def test_show_pdf_password_for_one_client(tmp_path: Path) -> None:
    clients = (RosterRow("c001", "Ana", "ana@example.org", pdf_password="Own-Pass-1"),)
    month = make_month(tmp_path, 2525, clients=clients)
    result = _run([str(month.month_dir), "--show-pdf-password", "c001"])
    assert result.exit_code == 0 and result.output == "report: Own-Pass-1\n"
    missing = _run([str(month.month_dir), "--show-pdf-password", "c009"])
    assert missing.exit_code == 2 and "c009 is not in the roster" in missing.output


def test_login_without_any_password_is_a_usage_error(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.delenv("REPORTGEN_SMTP_PASSWORD", raising=False)
    handler = FaultyHandler()
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port)
        result = _run([str(month.month_dir), "--user", "clinic"], input="")
    assert result.exit_code == 2
    assert "no SMTP password: set REPORTGEN_SMTP_PASSWORD" in result.output
    assert handler.data_commands == 0


def test_dry_run_without_a_sender_uses_a_marked_placeholder(tmp_path: Path) -> None:
    handler = FaultyHandler()
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port, mail={"from_address": "", "reply_to": ""})
        text = month.config_file.read_text(encoding="utf-8")
        month.config_file.write_text(
            text.replace('email = "team@harbourclinic.example"\n', ""), encoding="utf-8"
        )
        config = ["--config", str(month.config_file)]
        dry = _run([str(month.month_dir), "--dry-run", *config])
        real = _run([str(month.month_dir), *config])
    assert dry.exit_code == 0, dry.output
    assert "no sender configured" in dry.output and "placeholder" in dry.output
    assert "set [mail] from_address" in dry.output
    eml = (month.month_dir / "outbox" / "c001-report.eml").read_text(encoding="utf-8")
    assert 'From: "PLACEHOLDER SENDER' in eml and "sender-not-configured@example.invalid" in eml
    assert real.exit_code == 2 and "from_address" in real.output
    assert handler.data_commands == 0
