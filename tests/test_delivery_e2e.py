"""The sample book end to end: `reportgen batch`, then `reportgen send` (dry run, then real)."""

from __future__ import annotations

import io
from pathlib import Path

import pytest
from _delivery_helpers import (
    FaultyHandler,
    loopback_only,  # noqa: F401  (fixture)
    smtp_server,
    write_config,
)
from click.testing import CliRunner, Result
from pypdf import PasswordType, PdfReader

from reportgen.cli import main
from reportgen.delivery.protect import derive_pdf_password

# Every test here fails if anything but 127.0.0.1 is contacted or looked up.
pytestmark = pytest.mark.usefixtures("loopback_only")

MONTH = "2026-11"
CLIENTS = "c001,c003,c007"  # c003 has a referral address; c007 has deliberate data errors
BATCH = ("--month", MONTH, "--clients", CLIENTS, "--quiet")
SECRET = "sample-practice-secret-for-tests"


def _cli(*args: object) -> Result:
    return CliRunner().invoke(main, [str(a) for a in args], catch_exceptions=False)


def test_sample_month_batch_then_send(
    sample_book: Path,
    tmp_path: Path,
    loopback_only: list,  # noqa: F811
) -> None:
    secret_file = tmp_path / "practice-secret.txt"
    secret_file.write_text(SECRET + "\n")
    handler = FaultyHandler()
    with smtp_server(handler) as srv:
        config = tmp_path / "practice.toml"
        write_config(config, srv.port, {"secret_file": str(secret_file)})
        out = tmp_path / "out"
        batch = _cli("batch", sample_book, *BATCH, "--out", out, "--config", config)
        assert batch.exit_code == 1  # c007 fails in the batch, on purpose
        month_dir = out / MONTH
        assert (month_dir / "manifest.json").is_file()

        dry = _cli("send", month_dir, "--dry-run", "--practitioner-copies")
        assert dry.exit_code == 0, dry.output
        outbox = sorted(p.name for p in (month_dir / "outbox").iterdir())
        assert outbox == ["c001-report.eml", "c003-practitioner.eml", "c003-report.eml"]
        assert handler.data_commands == 0

        sent = _cli("send", month_dir, "--practitioner-copies", "--encrypt", "--retry-delay", 0)
        assert sent.exit_code == 0, sent.output
        assert "skipped-no-report" in sent.output  # c007, listed but not counted

        # the batch again: byte-identical PDFs, so nothing goes out twice
        before = (month_dir / "manifest.json").read_bytes()
        again = _cli("batch", sample_book, *BATCH, "--out", out, "--config", config)
        assert again.exit_code == 1
        assert (month_dir / "manifest.json").read_bytes() == before, (
            "the batch rerun wrote different PDF bytes; send treats those as new versions"
        )
        rerun = _cli("send", month_dir, "--practitioner-copies", "--encrypt")
        assert rerun.exit_code == 0 and "already-sent" in rerun.output

    messages = handler.messages()
    assert sorted(handler.recipients()) == [
        "maren.holloway@example.org",
        "priya.raman@example.org",
        "referrals.harbour-gp@example.org",
    ]
    by_to = {m["To"].addresses[0].addr_spec: m for m in messages}
    msg = by_to["referrals.harbour-gp@example.org"]
    (att,) = list(msg.iter_attachments())
    assert att.get_filename() == "practitioner-summary-2026-11-c003.pdf"
    password = derive_pdf_password(SECRET.encode(), "c003", MONTH, "practitioner")
    client_password = derive_pdf_password(SECRET.encode(), "c003", MONTH)
    reader = PdfReader(io.BytesIO(att.get_content()))
    assert reader.decrypt(client_password) == PasswordType.NOT_DECRYPTED  # not the client's
    reader = PdfReader(io.BytesIO(att.get_content()))
    assert reader.decrypt(password) == PasswordType.USER_PASSWORD
    plain = PdfReader(month_dir / "c003-practitioner.pdf")
    assert reader.pages[0].extract_text() == plain.pages[0].extract_text()
    assert password not in msg.as_string()
    assert "Priya Raman" in msg.get_body(preferencelist=("plain",)).get_content()
    assert {host for host, _ in loopback_only} == {"127.0.0.1"}
