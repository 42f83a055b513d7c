"""STARTTLS and implicit TLS against a real server with a certificate made in the test."""

from __future__ import annotations

import datetime as dt
import ipaddress
import ssl
from pathlib import Path

import pytest
from _delivery_helpers import FaultyHandler, loopback_only, make_month, smtp_server  # noqa: F401
from aiosmtpd.smtp import AuthResult
from click.testing import CliRunner
from cryptography import x509
from cryptography.hazmat.primitives import hashes, serialization
from cryptography.hazmat.primitives.asymmetric import ec
from cryptography.x509.oid import NameOID

from reportgen.cli.send import send_command
from reportgen.delivery.send import SendOptions, send_month

# Every test here fails if anything but 127.0.0.1 is contacted or looked up.
pytestmark = pytest.mark.usefixtures("loopback_only")

SMTP_PASSWORD = "tls-only-pw-5521"


@pytest.fixture(scope="module")
def certificate(tmp_path_factory: pytest.TempPathFactory) -> tuple[Path, Path]:
    """A self-signed certificate for 127.0.0.1 (IP subject alternative name)."""
    folder = tmp_path_factory.mktemp("tls")
    key = ec.generate_private_key(ec.SECP256R1())
    name = x509.Name([x509.NameAttribute(NameOID.COMMON_NAME, "reportgen test server")])
    now = dt.datetime.now(dt.UTC)
    cert = (
        x509.CertificateBuilder()
        .subject_name(name)
        .issuer_name(name)
        .public_key(key.public_key())
        .serial_number(x509.random_serial_number())
        .not_valid_before(now - dt.timedelta(minutes=5))
        .not_valid_after(now + dt.timedelta(days=1))
        .add_extension(
            x509.SubjectAlternativeName([x509.IPAddress(ipaddress.ip_address("127.0.0.1"))]),
            critical=False,
        )
        .add_extension(x509.BasicConstraints(ca=True, path_length=None), critical=True)
        .sign(key, hashes.SHA256())
    )
    cert_path, key_path = folder / "cert.pem", folder / "key.pem"
    cert_path.write_bytes(cert.public_bytes(serialization.Encoding.PEM))
    key_path.write_bytes(
        key.private_bytes(
            serialization.Encoding.PEM,
            serialization.PrivateFormat.PKCS8,
            serialization.NoEncryption(),
        )
    )
    return cert_path, key_path


def _server_context(certificate: tuple[Path, Path]) -> ssl.SSLContext:
    ctx = ssl.create_default_context(ssl.Purpose.CLIENT_AUTH)
    ctx.load_cert_chain(*certificate)
    return ctx


def _authenticator(server, session, envelope, mechanism, auth_data):
    return AuthResult(success=auth_data.password == SMTP_PASSWORD.encode(), handled=False)


def test_starttls_with_login(
    tmp_path: Path,
    certificate: tuple[Path, Path],
    monkeypatch: pytest.MonkeyPatch,
    loopback_only: list,  # noqa: F811
) -> None:
    handler = FaultyHandler()
    monkeypatch.setenv("REPORTGEN_SMTP_PASSWORD", SMTP_PASSWORD)
    client_ctx = ssl.create_default_context(cafile=str(certificate[0]))
    with smtp_server(
        handler,
        tls_context=_server_context(certificate),
        require_starttls=True,
        authenticator=_authenticator,
    ) as srv:
        month = make_month(tmp_path, srv.port, mail={"security": "starttls", "user": "clinic"})
        report = send_month(month.month_dir, SendOptions(ssl_context=client_ctx))
    assert report.exit_code == 0, report.rows
    assert len(handler.accepted) == 3


def test_untrusted_certificate_stops_the_run(
    tmp_path: Path, certificate: tuple[Path, Path]
) -> None:
    handler = FaultyHandler()
    with smtp_server(
        handler, tls_context=_server_context(certificate), require_starttls=True
    ) as srv:
        month = make_month(tmp_path, srv.port, mail={"security": "starttls"})
        report = send_month(month.month_dir, SendOptions(retry_delay_s=0.01))
    assert report.exit_code == 2
    assert "could not be verified" in (report.fatal or "")
    assert handler.accepted == []
    assert {r.result for r in report.rows} == {"failed-temporary", "not-attempted"}


def test_starttls_refused_when_the_server_does_not_offer_it(tmp_path: Path) -> None:
    handler = FaultyHandler()
    with smtp_server(handler) as srv:
        month = make_month(tmp_path, srv.port, mail={"security": "starttls"})
        report = send_month(month.month_dir, SendOptions())
    assert report.exit_code == 2 and "does not offer STARTTLS" in (report.fatal or "")
    assert handler.accepted == []


def test_implicit_tls_from_the_command_line_trusting_ssl_cert_file(
    tmp_path: Path, certificate: tuple[Path, Path], monkeypatch: pytest.MonkeyPatch
) -> None:
    handler = FaultyHandler()
    with smtp_server(handler, ssl_context=_server_context(certificate)) as srv:
        month = make_month(tmp_path, srv.port)
        result = CliRunner().invoke(
            send_command,
            [str(month.month_dir), "--security", "tls"],
            env={"SSL_CERT_FILE": str(certificate[0])},
            catch_exceptions=False,
        )
    assert result.exit_code == 0, result.output
    assert len(handler.accepted) == 3
