"""Sending a month to a real SMTP server on 127.0.0.1: content, faults, ledger, reruns."""

from __future__ import annotations

import hashlib
import json
from pathlib import Path

import pytest
from _delivery_helpers import (
    MONTH,
    FaultyHandler,
    Month,
    RosterRow,
    loopback_only,  # noqa: F401  (fixture)
    make_month,
    smtp_server,
)

from reportgen.delivery.month import DeliveryError
from reportgen.delivery.send import SendOptions, SendReport, send_month

# Every test here fails if anything but 127.0.0.1 is contacted or looked up.
pytestmark = pytest.mark.usefixtures("loopback_only")

FAST = 0.01  # back-off base for tests [s]


def _send(month: Month, **kw: object) -> SendReport:
    opts = SendOptions(retry_delay_s=FAST, **kw)  # type: ignore[arg-type]
    return send_month(month.month_dir, opts)


@pytest.fixture
def handler() -> FaultyHandler:
    return FaultyHandler()


def _outcomes(month: Month) -> list[tuple[str, str, str]]:
    return [(e["client"], e["kind"], e["result"]) for e in month.ledger()]


def test_messages_arrive_with_headers_bodies_and_the_exact_pdf(
    tmp_path: Path,
    handler: FaultyHandler,
    loopback_only: list,  # noqa: F811
) -> None:
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port)
        report = _send(month)
    assert report.exit_code == 0
    assert sorted(handler.recipients()) == [
        "ivo@example.net",
        "maren@example.org",
        "zoe@example.com",
    ]
    by_to = {m["To"].addresses[0].addr_spec: m for m in handler.messages()}
    msg = by_to["zoe@example.com"]
    assert msg["To"].addresses[0].display_name == "Zoë Łukasiewicz-Øster"
    assert str(msg["From"]) == "Harbour Clinic Reports <reports@harbourclinic.example>"
    assert str(msg["Reply-To"]) == "Harbour Clinic Reports <team@harbourclinic.example>"
    assert msg["Subject"] == "Your monthly report for November 2026 from Harbour Clinic"
    assert msg["Message-ID"].endswith("@harbourclinic.example>")
    assert msg["Date"].datetime is not None
    assert msg.get_content_type() == "multipart/mixed"
    text = msg.get_body(preferencelist=("plain",)).get_content()
    html = msg.get_body(preferencelist=("html",)).get_content()
    assert "Hello Zoë," in text  # greeted by first name
    assert "Hello Zoë," in html
    assert "November 2026" in text and "personal health information" in text
    (att,) = list(msg.iter_attachments())
    assert att.get_content_type() == "application/pdf"
    assert att.get_filename() == "report-2026-11-c002.pdf"
    assert att.get_content() == month.pdf("c002")
    # the ledger: one attempt and one sent line per message, with the server's reply
    lines = month.ledger()
    sent = [e for e in lines if e["result"] == "sent"]
    assert len(sent) == 3 and all(e["reply"].startswith("250 2.0.0 Ok: queued as Q") for e in sent)
    zoe = next(e for e in sent if e["client"] == "c002")
    assert zoe["sha256"] == hashlib.sha256(month.pdf("c002")).hexdigest()
    assert zoe["message_id"] == msg["Message-ID"]  # unfolded: no leading space
    assert zoe["address"] == "zoe@example.com" and zoe["kind"] == "report"
    assert zoe["time"].endswith("Z")
    assert {h for h, _ in loopback_only} == {"127.0.0.1"}
    assert set(handler.peers) == {"127.0.0.1"}


def test_rerun_sends_nothing_twice_and_resend_forces(
    tmp_path: Path,
    handler: FaultyHandler,
    loopback_only: list,  # noqa: F811
) -> None:
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port)
        assert _send(month).exit_code == 0
        again = _send(month)
        assert again.exit_code == 0
        assert [r.result for r in again.rows] == ["already-sent"] * 3
        assert len(handler.accepted) == 3
        forced = _send(month, resend=frozenset({"c003"}))
        assert forced.exit_code == 0
    assert sorted(handler.recipients()) == sorted(
        ["ivo@example.net", "maren@example.org", "zoe@example.com", "ivo@example.net"]
    )
    ids = [m["Message-ID"] for m in handler.messages() if m["To"].addresses[0].username == "ivo"]
    assert len(set(ids)) == 2  # a forced resend is a new message


def test_practitioner_copies_go_to_the_referral_address(
    tmp_path: Path, handler: FaultyHandler
) -> None:
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port)
        report = _send(month, practitioner_copies=True)
    assert report.exit_code == 0
    gp = [m for m in handler.messages() if m["To"].addresses[0].addr_spec == "gp@example.org"]
    assert len(gp) == 1
    assert gp[0]["Subject"] == (
        "Practitioner summary for November 2026 (client ref. c001) from Harbour Clinic"
    )
    (att,) = list(gp[0].iter_attachments())
    assert att.get_filename() == "practitioner-summary-2026-11-c001.pdf"
    assert att.get_content() == month.pdf("c001", "practitioner")
    assert "Maren Test" in gp[0].get_body(preferencelist=("plain",)).get_content()


def test_refused_recipient_is_recorded_and_the_run_goes_on(
    tmp_path: Path, handler: FaultyHandler
) -> None:
    handler.refuse = {"maren@example.org"}
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port)
        report = _send(month)
        assert report.exit_code == 1
        results = {r.client: r.result for r in report.rows}
        assert results == {"c001": "refused", "c002": "sent", "c003": "sent"}
        refused = [e for e in month.ledger() if e["result"] == "refused"]
        assert len(refused) == 1 and refused[0]["reply"] == "550 5.1.1 No such mailbox here"
        # 5xx is permanent: one try only; refused at RCPT, so nothing was handed over
        # and no attempt line precedes the outcome
        c001 = [(e["result"], e["try"]) for e in month.ledger() if e["client"] == "c001"]
        assert c001 == [("refused", 1)]
        # the clinic fixes the mailbox; a rerun delivers just that one
        handler.refuse = set()
        rerun = _send(month)
    assert rerun.exit_code == 0
    assert sorted(handler.recipients()) == [
        "ivo@example.net",
        "maren@example.org",
        "zoe@example.com",
    ]


def test_temporary_failures_are_retried_with_backoff(
    tmp_path: Path, handler: FaultyHandler
) -> None:
    handler.temp_fail = {"zoe@example.com": 2}
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port, mail={"retries": 2})
        report = _send(month)
    assert report.exit_code == 0
    zoe = [e["result"] for e in month.ledger() if e["client"] == "c002"]
    assert zoe == ["attempt", "failed-temporary"] * 2 + ["attempt", "sent"]
    assert handler.recipients().count("zoe@example.com") == 1
    tries = {e["message_id"] for e in month.ledger() if e["client"] == "c002"}
    assert len(tries) == 1  # retries carry the same Message-ID


def test_retries_are_bounded_then_recorded_and_a_rerun_completes(
    tmp_path: Path, handler: FaultyHandler
) -> None:
    handler.temp_fail = {"maren@example.org": 5}
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port, mail={"retries": 1})
        report = _send(month)
        assert report.exit_code == 1
        assert {r.client: r.result for r in report.rows}["c001"] == "failed-temporary"
        assert [e["result"] for e in month.ledger() if e["client"] == "c001"] == [
            "attempt",
            "failed-temporary",
        ] * 2
        handler.temp_fail = {}
        assert _send(month).exit_code == 0
    assert sorted(handler.recipients()) == [
        "ivo@example.net",
        "maren@example.org",
        "zoe@example.com",
    ]


def test_dropped_connection_reconnects_and_delivers_exactly_once(
    tmp_path: Path, handler: FaultyHandler
) -> None:
    handler.drop = {"zoe@example.com": 1}
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port)
        report = _send(month)
        assert report.exit_code == 0
        assert _send(month).exit_code == 0
    assert sorted(handler.recipients()) == [
        "ivo@example.net",
        "maren@example.org",
        "zoe@example.com",
    ]
    zoe = [e for e in month.ledger() if e["client"] == "c002"]
    assert [e["result"] for e in zoe] == ["attempt", "failed-temporary", "attempt", "sent"]
    assert "connection closed" in zoe[1]["reply"]


def test_time_out_is_temporary(tmp_path: Path, handler: FaultyHandler) -> None:
    handler.stall = {"ivo@example.net": 1}
    handler.stall_s = 1.0
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port, mail={"timeout_s": 0.4})
        report = _send(month)
    assert report.exit_code == 0
    ivo = [e for e in month.ledger() if e["client"] == "c003"]
    assert [e["result"] for e in ivo] == ["attempt", "failed-temporary", "attempt", "sent"]
    assert "time-out" in ivo[1]["reply"]
    assert handler.recipients().count("ivo@example.net") == 1


def test_server_down_stops_early_and_records_nothing_as_sent(tmp_path: Path) -> None:
    from _delivery_helpers import free_port

    month = make_month(tmp_path, free_port(), mail={"retries": 1})
    report = _send(month)
    assert report.exit_code == 1
    assert [r.result for r in report.rows] == [
        "failed-temporary",
        "failed-temporary",
        "not-attempted",
    ]
    assert not any(e["result"] == "sent" for e in month.ledger())


def test_crash_after_attempt_is_not_resent_until_asked(
    tmp_path: Path, handler: FaultyHandler
) -> None:
    """A run killed while the server had the message leaves an attempt with no outcome."""
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port)
        sha = hashlib.sha256(month.pdf("c002")).hexdigest()
        mid = "<12345.reportgen@harbourclinic.example>"
        crash = {
            "time": "2026-12-01T08:00:00Z",
            "month": MONTH,
            "client": "c002",
            "kind": "report",
            "address": "zoe@example.com",
            "sha256": sha,
            "message_id": mid,
            "try": 1,
            "result": "attempt",
        }
        ledger = month.month_dir / "deliveries.jsonl"
        # a torn half line after it, as a kill during the next write would leave
        ledger.write_text(json.dumps(crash) + "\n" + '{"time": "2026-12-01T08:00:01Z", "cli')
        report = _send(month)
        assert report.exit_code == 1
        row = next(r for r in report.rows if r.client == "c002")
        assert row.result == "unconfirmed" and "--resend c002" in row.detail
        assert report.notes == ["deliveries.jsonl line 2 is not complete JSON and was ignored"]
        assert "zoe@example.com" not in handler.recipients()
        resent = _send(month, resend=frozenset({"c002"}))
        assert resent.exit_code == 0
    zoe = [m for m in handler.messages() if m["To"].addresses[0].addr_spec == "zoe@example.com"]
    assert len(zoe) == 1 and zoe[0]["Message-ID"] == mid  # same id: a duplicate is recognisable
    # every ledger line after the torn one is complete JSON again
    for line in ledger.read_text().splitlines()[2:]:
        json.loads(line)


def test_invalid_and_missing_addresses_are_listed_not_guessed(
    tmp_path: Path, handler: FaultyHandler
) -> None:
    clients = (
        RosterRow("c001", "Ana", "ana@example.org"),
        RosterRow("c002", "Ben", ""),
        RosterRow("c003", "Cai", "cai@example,org"),
        RosterRow("c004", "Dee", "dee@example"),
        RosterRow("c005", "Eli", "eli@example.org", status="error"),
    )
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port, clients=clients)
        report = _send(month)
    assert report.exit_code == 1
    got = {r.client: (r.result, r.detail) for r in report.rows}
    assert got["c001"] == ("sent", "250 2.0.0 Ok: queued as Q0001")
    assert got["c002"] == ("skipped-no-address", "no address")
    assert got["c003"][0] == "skipped-invalid-address"
    assert "one address per cell" in got["c003"][1]
    assert got["c004"] == ("skipped-invalid-address", "'dee@example' is not a valid e-mail address")
    assert got["c005"] == ("skipped-no-report", "batch error")
    assert handler.recipients() == ["ana@example.org"]
    skipped = [e for e in month.ledger() if e["result"].startswith("skipped-")]
    assert [e["client"] for e in skipped] == ["c002", "c003", "c004"]


def test_modified_report_is_refused(tmp_path: Path, handler: FaultyHandler) -> None:
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port)
        path = month.month_dir / "c003.pdf"
        path.write_bytes(path.read_bytes() + b"\n% edited\n")
        report = _send(month)
    assert report.exit_code == 1
    row = next(r for r in report.rows if r.client == "c003")
    assert row.result == "skipped-modified-file"
    assert "ivo@example.net" not in handler.recipients()


def test_dry_run_writes_eml_files_and_sends_nothing(tmp_path: Path, handler: FaultyHandler) -> None:
    from email import policy
    from email.parser import BytesParser

    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port)
        report = _send(month, dry_run=True, practitioner_copies=True)
    assert report.exit_code == 0
    assert handler.accepted == [] and handler.data_commands == 0
    outbox = month.month_dir / "outbox"
    names = sorted(p.name for p in outbox.iterdir())
    assert names == [
        "c001-practitioner.eml",
        "c001-report.eml",
        "c002-report.eml",
        "c003-report.eml",
    ]
    msg = BytesParser(policy=policy.default).parsebytes((outbox / "c001-report.eml").read_bytes())
    assert msg["To"].addresses[0].addr_spec == "maren@example.org"
    (att,) = list(msg.iter_attachments())
    assert att.get_content() == month.pdf("c001")
    assert not (month.month_dir / "deliveries.jsonl").exists()


def test_smtp_login_password_comes_from_the_environment_only(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capfd: pytest.CaptureFixture[str]
) -> None:
    from aiosmtpd.smtp import AuthResult, LoginPassword

    secret = "S3cr3t-smtp-pw!"
    logins: list[tuple[bytes, bytes]] = []

    def authenticator(server, session, envelope, mechanism, auth_data):
        assert isinstance(auth_data, LoginPassword)
        logins.append((auth_data.login, auth_data.password))
        # handled=False: let the server answer 535 itself on a wrong password
        return AuthResult(success=auth_data.password == secret.encode(), handled=False)

    handler = FaultyHandler()
    monkeypatch.setenv("REPORTGEN_SMTP_PASSWORD", secret)
    with smtp_server(handler, authenticator=authenticator, auth_require_tls=False) as srv:
        month = make_month(tmp_path, srv.port)
        report = send_month(
            month.month_dir, SendOptions(user="clinic", retry_delay_s=FAST), progress=print
        )
        assert report.exit_code == 0
        monkeypatch.setenv("REPORTGEN_SMTP_PASSWORD", "wrong")
        bad = send_month(
            month.month_dir,
            SendOptions(user="clinic", retry_delay_s=FAST, resend=frozenset({"c001"})),
        )
    assert logins[0] == (b"clinic", secret.encode())
    assert bad.exit_code == 2 and "refused the login" in (bad.fatal or "")
    out = capfd.readouterr()
    blobs = [out.out, out.err, (month.month_dir / "deliveries.jsonl").read_text()]
    blobs += [m.as_string() for m in handler.messages()]
    assert all(secret not in b for b in blobs)


def test_password_over_plain_text_to_a_remote_host_is_refused(tmp_path: Path) -> None:
    month = make_month(tmp_path, 2525)
    with pytest.raises(DeliveryError, match="refusing to send the password for 'clinic'"):
        send_month(month.month_dir, SendOptions(host="mail.example.org", user="clinic"))


def test_missing_manifest_is_a_usage_error(tmp_path: Path) -> None:
    (tmp_path / MONTH).mkdir()
    with pytest.raises(DeliveryError, match=r"has no manifest\.json"):
        send_month(tmp_path / MONTH, SendOptions())


def test_unknown_resend_client_is_a_usage_error(tmp_path: Path) -> None:
    month = make_month(tmp_path, 2525)
    with pytest.raises(DeliveryError, match="--resend: c999 not in the manifest"):
        send_month(month.month_dir, SendOptions(resend=frozenset({"c999"})))


def test_report_changed_during_the_run_is_skipped_and_the_run_goes_on(
    tmp_path: Path, handler: FaultyHandler
) -> None:
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port)

        def tamper(row: object) -> None:  # after the first message, someone edits c003's PDF
            if getattr(row, "client", None) == "c001":
                path = month.month_dir / "c003.pdf"
                path.write_bytes(path.read_bytes() + b"%")

        report = send_month(month.month_dir, SendOptions(retry_delay_s=FAST), progress=tamper)
    got = {r.client: r.result for r in report.rows}
    assert got == {"c001": "sent", "c002": "sent", "c003": "skipped-modified-file"}
    assert report.exit_code == 1
    assert "ivo@example.net" not in handler.recipients()
    assert month.ledger()[-1]["result"] == "skipped-modified-file"


def test_messages_are_7bit_clean(tmp_path: Path, handler: FaultyHandler) -> None:
    # Non-ASCII names travel as RFC 2047 words and quoted-printable, so the server
    # needs no 8BITMIME or SMTPUTF8.
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port)
        assert _send(month).exit_code == 0
    for env in handler.accepted:
        raw = env.original_content or env.content
        assert isinstance(raw, bytes) and raw.isascii()
        assert max(len(line) for line in raw.splitlines()) <= 998
    assert env.mail_options == []


def test_dry_run_outbox_shows_only_what_the_next_run_would_send(
    tmp_path: Path, handler: FaultyHandler
) -> None:
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port)
        _send(month, dry_run=True)
        assert len(list((month.month_dir / "outbox").glob("*.eml"))) == 3
        assert _send(month, resend=frozenset()).exit_code == 0  # real run: all three go
        again = _send(month, dry_run=True)
    assert [r.result for r in again.rows] == ["already-sent"] * 3
    assert list((month.month_dir / "outbox").glob("*.eml")) == []
