"""PDF password protection (AES-256, R6) and the documented password rule."""

from __future__ import annotations

import base64
import io
import shutil
import subprocess
from pathlib import Path

import pikepdf
import pytest
from _delivery_helpers import (
    MONTH,
    FaultyHandler,
    RosterRow,
    loopback_only,  # noqa: F401  (fixture)
    make_month,
    make_pdf,
    smtp_server,
)
from cryptography.hazmat.primitives import hashes
from cryptography.hazmat.primitives import hmac as c_hmac
from pypdf import PasswordType, PdfReader

from reportgen.delivery.month import DeliveryError
from reportgen.delivery.protect import (
    SecretError,
    derive_pdf_password,
    encrypt_pdf,
    read_practice_secret,
)
from reportgen.delivery.send import SendOptions, pdf_password_for, send_month

# Every test here fails if anything but 127.0.0.1 is contacted or looked up.
pytestmark = pytest.mark.usefixtures("loopback_only")

PASSWORD = "Zoë-2026"  # non-ASCII on purpose: R6 passwords are UTF-8 after SASLprep


def _hmac_sha256(key: bytes, data: bytes) -> bytes:
    """Reference HMAC from the `cryptography` package (independent of the stdlib one)."""
    h = c_hmac.HMAC(key, hashes.SHA256())
    h.update(data)
    return h.finalize()


def test_reference_hmac_matches_rfc_4231() -> None:
    # RFC 4231 section 4.3, test case 2: key "Jefe", data "what do ya want for nothing?"
    assert _hmac_sha256(b"Jefe", b"what do ya want for nothing?").hex() == (
        "5bdcc146bf60754e6a042426089575c75a003f089d2739839dec58b964ec3843"
    )


def test_derived_password_follows_the_documented_rule() -> None:
    secret = b"harbour-clinic-practice-secret-2026"
    expected = base64.b32encode(_hmac_sha256(secret, b"c001:2026-11")).decode()[:12]
    got = derive_pdf_password(secret, "c001", "2026-11")
    assert got == f"{expected[:4]}-{expected[4:8]}-{expected[8:12]}"
    assert set(got) <= set("ABCDEFGHIJKLMNOPQRSTUVWXYZ234567-")
    assert derive_pdf_password(secret, "c001", "2026-12") != got  # new month, new password
    assert derive_pdf_password(secret, "c002", "2026-11") != got
    summary = base64.b32encode(_hmac_sha256(secret, b"c001:2026-11:practitioner")).decode()[:12]
    assert derive_pdf_password(secret, "c001", "2026-11", "practitioner") == (
        f"{summary[:4]}-{summary[4:8]}-{summary[8:12]}"
    )


def test_encrypted_pdf_opens_with_the_password_only(tmp_path: Path) -> None:
    plain = make_pdf("report c001 2026-11", pages=2)
    enc = encrypt_pdf(plain, PASSWORD)
    assert enc.startswith(b"%PDF-1.7")
    assert b"report c001" not in enc  # content streams are encrypted
    reader = PdfReader(io.BytesIO(enc))
    assert reader.is_encrypted
    assert reader.decrypt("wrong password") == PasswordType.NOT_DECRYPTED
    reader = PdfReader(io.BytesIO(enc))
    assert reader.decrypt(PASSWORD) == PasswordType.USER_PASSWORD
    assert "report c001 2026-11 - page 2" in reader.pages[1].extract_text()
    with pytest.raises(pikepdf.PasswordError):
        pikepdf.open(io.BytesIO(enc))
    with pytest.raises(pikepdf.PasswordError):
        pikepdf.open(io.BytesIO(enc), password="Zoe-2026")
    with pikepdf.open(io.BytesIO(enc), password=PASSWORD) as pdf:
        assert len(pdf.pages) == 2
        assert pdf.encryption.R == 6  # AES-256, PDF 2.0 / 1.7 extension level 8
        assert pdf.encryption.bits == 256
        assert pdf.encryption.stream_method.name == "aesv3"


@pytest.mark.skipif(shutil.which("qpdf") is None, reason="qpdf is not on PATH")
def test_encrypted_pdf_passes_qpdf_check(tmp_path: Path) -> None:
    path = tmp_path / "enc.pdf"
    path.write_bytes(encrypt_pdf(make_pdf("report c001 2026-11", pages=2), PASSWORD))
    out = subprocess.run(
        ["qpdf", "--check", f"--password={PASSWORD}", str(path)],
        capture_output=True,
        text=True,
        check=False,
    )
    assert out.returncode == 0, out.stdout + out.stderr
    assert "R = 6" in out.stdout and "No syntax or stream encoding errors" in out.stdout
    bad = subprocess.run(["qpdf", "--check", str(path)], capture_output=True, text=True)
    assert bad.returncode != 0 and "invalid password" in (bad.stdout + bad.stderr)


def test_empty_password_is_refused() -> None:
    with pytest.raises(ValueError, match="empty PDF password"):
        encrypt_pdf(make_pdf("x"), "")


def test_secret_inside_the_book_or_too_short_is_refused(tmp_path: Path) -> None:
    book = tmp_path / "book"
    book.mkdir()
    inside = book / "secret.txt"
    inside.write_text("a-long-enough-practice-secret\n")
    with pytest.raises(SecretError, match="inside the book folder"):
        read_practice_secret(inside, book_dir=book)
    short = tmp_path / "short.txt"
    short.write_text("tiny\n")
    with pytest.raises(SecretError, match="shorter than 16 characters"):
        read_practice_secret(short, book_dir=book)
    with pytest.raises(SecretError, match="cannot read the practice secret"):
        read_practice_secret(tmp_path / "nope.txt")
    assert read_practice_secret(inside.rename(tmp_path / "ok.txt")) == (
        b"a-long-enough-practice-secret"
    )


def test_encrypted_send_roster_and_derived_passwords(tmp_path: Path) -> None:
    secret_file = tmp_path / "practice-secret.txt"
    secret_file.write_text("harbour-clinic-practice-secret-2026\n")
    secret_file.chmod(0o600)
    clients = (
        RosterRow("c001", "Ana Test", "ana@example.org", pdf_password=PASSWORD),
        RosterRow("c002", "Ben Test", "ben@example.org"),  # derived from the secret
    )
    handler = FaultyHandler()
    with smtp_server(handler) as srv:
        month = make_month(
            tmp_path,
            srv.port,
            clients=clients,
            mail={"encrypt": True, "secret_file": str(secret_file)},
        )
        report = send_month(month.month_dir, SendOptions(retry_delay_s=0.01))
    assert report.exit_code == 0
    assert report.notes == []  # the secret file is private (0600)
    derived = derive_pdf_password(b"harbour-clinic-practice-secret-2026", "c002", MONTH)
    by_to = {m["To"].addresses[0].addr_spec: m for m in handler.messages()}
    for addr, cid, pw in (
        ("ana@example.org", "c001", PASSWORD),
        ("ben@example.org", "c002", derived),
    ):
        msg = by_to[addr]
        (att,) = list(msg.iter_attachments())
        data = att.get_content()
        assert data != month.pdf(cid)
        reader = PdfReader(io.BytesIO(data))
        assert reader.decrypt(pw) == PasswordType.USER_PASSWORD
        assert f"report {cid} {MONTH}" in reader.pages[0].extract_text()
        raw = msg.as_string()
        assert pw not in raw and "protected with a password" in raw
    ledger = (month.month_dir / "deliveries.jsonl").read_text()
    assert PASSWORD not in ledger and derived not in ledger
    sent = [e for e in month.ledger() if e["result"] == "sent"]
    # the ledger keys on the source file's hash (taken before encryption)
    import hashlib

    assert {e["sha256"] for e in sent} == {
        hashlib.sha256(month.pdf(c)).hexdigest() for c in ("c001", "c002")
    }
    assert all(e["encrypted"] for e in sent)
    # the clinic can look the passwords up to tell the client (and the practitioner)
    summary_pw = derive_pdf_password(
        b"harbour-clinic-practice-secret-2026", "c002", MONTH, "practitioner"
    )
    assert pdf_password_for(month.month_dir, SendOptions(), "c002") == [
        f"report: {derived}",
        f"practitioner: {summary_pw}",
    ]


def test_a_secret_others_can_read_gets_a_note(tmp_path: Path) -> None:
    secret_file = tmp_path / "practice-secret.txt"
    secret_file.write_text("harbour-clinic-practice-secret-2026\n")
    secret_file.chmod(0o644)
    month = make_month(tmp_path, 2525, mail={"encrypt": True, "secret_file": str(secret_file)})
    report = send_month(month.month_dir, SendOptions(dry_run=True))
    assert report.notes == [
        f"{secret_file} can be read by other users of this computer; "
        f"restrict it with: chmod 600 {secret_file}"
    ]
    assert report.exit_code == 0


def test_encryption_without_any_password_source_skips_the_client(tmp_path: Path) -> None:
    handler = FaultyHandler()
    clients = (RosterRow("c001", "Ana", "ana@example.org"),)
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port, clients=clients, mail={"encrypt": True})
        report = send_month(month.month_dir, SendOptions(retry_delay_s=0.01))
    assert report.exit_code == 1
    assert [r.result for r in report.rows] == ["skipped-no-password"]
    assert handler.accepted == []  # never sent unencrypted when encryption was asked for


def test_secret_file_in_the_book_stops_the_run(tmp_path: Path) -> None:
    month = make_month(tmp_path, 2525, mail={"encrypt": True, "secret_file": "book/s.txt"})
    (month.book / "s.txt").write_text("a-long-enough-practice-secret\n")
    with pytest.raises(DeliveryError, match="inside the book folder"):
        send_month(month.month_dir, SendOptions())


def test_practitioner_copy_never_uses_the_clients_own_password(tmp_path: Path) -> None:
    handler = FaultyHandler()
    clients = (
        RosterRow(
            "c001", "Ana", "ana@example.org", referral_email="gp@example.org", pdf_password=PASSWORD
        ),
    )
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port, clients=clients, mail={"encrypt": True})
        report = send_month(
            month.month_dir, SendOptions(retry_delay_s=0.01, practitioner_copies=True)
        )
    got = {(r.kind, r.result, r.detail) for r in report.rows}
    assert (
        "practitioner",
        "skipped-no-password",
        "practitioner copies need [mail] secret_file",
    ) in got
    assert handler.recipients() == ["ana@example.org"]
    assert report.exit_code == 1
