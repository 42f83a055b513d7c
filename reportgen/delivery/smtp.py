"""One SMTP connection kept open for a run, with classified results and reconnects.

Each message is one explicit transaction (MAIL, RCPT, DATA) so that the
server's final reply (often with its queue id) can go into the ledger.
Results are classified the way RFC 5321 does: 2xx sent, 5xx refused
(permanent, do not retry), 4xx / dropped connection / time-out temporary.
"""

from __future__ import annotations

import smtplib
import socket
import ssl
from collections.abc import Callable
from dataclasses import dataclass
from email.message import EmailMessage
from typing import Literal

from reportgen.choices import MailSecurity
from reportgen.delivery.messages import WIRE_POLICY

Security = MailSecurity
Outcome = Literal["sent", "refused", "failed-temporary"]


@dataclass(frozen=True)
class ServerSettings:
    host: str
    port: int
    security: Security
    user: str
    timeout_s: float


@dataclass(frozen=True)
class SendResult:
    outcome: Outcome
    reply: str  # "250 2.0.0 Ok: queued as ..." or a short description of the failure


class FatalSMTPError(RuntimeError):
    """A problem no retry can fix for any message: bad login, no TLS where it was asked for."""


def _reply(code: int, resp: bytes | str) -> str:
    text = resp.decode("utf-8", "replace") if isinstance(resp, bytes) else str(resp)
    return f"{code} {' '.join(text.split())}".strip()


def _classify(code: int) -> Outcome:
    if 200 <= code < 300:
        return "sent"
    if 500 <= code < 600:
        return "refused"
    return "failed-temporary"


def is_loopback(host: str) -> bool:
    return host in ("localhost", "127.0.0.1", "::1")


class SMTPConnection:
    """A lazily opened connection; ``send`` reconnects after a drop."""

    def __init__(
        self,
        server: ServerSettings,
        password: str | None,
        ssl_context: ssl.SSLContext | None = None,
    ) -> None:
        self.server = server
        self._password = password
        self._context = ssl_context
        self._conn: smtplib.SMTP | None = None

    def _ssl(self) -> ssl.SSLContext:
        if self._context is None:
            # Verifies the certificate and host name; trusts the system store (and
            # SSL_CERT_FILE when set, for a practice's own certificate authority).
            self._context = ssl.create_default_context()
        return self._context

    def _open(self) -> smtplib.SMTP:
        s = self.server
        conn: smtplib.SMTP
        # Host given to the constructor: smtplib verifies the certificate against it.
        # A placeholder EHLO name stops smtplib from calling socket.getfqdn(), which can
        # query DNS; the real name is set from the connected socket below.
        try:
            if s.security == "tls":
                conn = smtplib.SMTP_SSL(
                    s.host,
                    s.port,
                    local_hostname="localhost",
                    timeout=s.timeout_s,
                    context=self._ssl(),
                )
            else:
                conn = smtplib.SMTP(s.host, s.port, local_hostname="localhost", timeout=s.timeout_s)
        except ssl.SSLCertVerificationError as exc:
            raise self._untrusted(exc) from None
        try:
            conn.local_hostname = _address_literal(conn.sock)
            conn.ehlo()
            if s.security == "starttls":
                if not conn.has_extn("starttls"):
                    raise FatalSMTPError(
                        f"{s.host}:{s.port} does not offer STARTTLS; use --security tls "
                        "if the server expects TLS from the start"
                    )
                conn.starttls(context=self._ssl())
                conn.ehlo()
            if s.user:
                if self._password is None:
                    raise FatalSMTPError("a user name was given but no password")
                self._login(conn)
        except ssl.SSLCertVerificationError as exc:
            conn.close()
            raise self._untrusted(exc) from None
        except BaseException:
            conn.close()
            raise
        return conn

    def _untrusted(self, exc: ssl.SSLCertVerificationError) -> FatalSMTPError:
        return FatalSMTPError(
            f"the certificate of {self.server.host} could not be verified "
            f"({exc.verify_message}); if the practice uses its own certificate authority, "
            "point SSL_CERT_FILE at its certificate"
        )

    def _login(self, conn: smtplib.SMTP) -> None:
        """AUTH with one mechanism (PLAIN, else LOGIN), inside TLS except on loopback.

        smtplib's ``login()`` would try every advertised mechanism in turn, CRAM-MD5
        first; one try with one mechanism gives one clear answer for a wrong password
        and sends the password once.
        """
        s = self.server
        offered = conn.esmtp_features.get("auth", "").upper().split()
        mech = next((m for m in ("PLAIN", "LOGIN") if m in offered), None)
        if mech is None:
            raise FatalSMTPError(
                f"{s.host}:{s.port} offers no PLAIN or LOGIN sign-in on this connection"
            )
        conn.user, conn.password = s.user, self._password or ""
        auth_object = conn.auth_plain if mech == "PLAIN" else conn.auth_login
        try:
            conn.auth(mech, auth_object, initial_response_ok=True)
        except smtplib.SMTPAuthenticationError as exc:
            raise FatalSMTPError(
                f"the server refused the login for user {s.user!r}: "
                f"{_reply(exc.smtp_code, exc.smtp_error)}"
            ) from None
        finally:
            conn.password = ""  # not kept on the connection object longer than needed

    def close(self) -> None:
        if self._conn is not None:
            try:
                self._conn.quit()
            except (smtplib.SMTPException, OSError):
                self._conn.close()
            self._conn = None

    def _drop(self) -> None:
        if self._conn is not None:
            self._conn.close()
            self._conn = None

    def connect(self) -> SendResult | None:
        """Open the connection if it is not open; a failure result, or None when ready.

        Called before a message's ``attempt`` line is written, so that only the
        MAIL/RCPT/DATA exchange lies between that line and its outcome.
        """
        if self._conn is not None:
            return None
        try:
            self._conn = self._open()
        except smtplib.SMTPConnectError as exc:
            if exc.smtp_code >= 500:  # the server will not talk to us at all
                raise FatalSMTPError(
                    f"{self.server.host} refused the connection: "
                    f"{_reply(exc.smtp_code, exc.smtp_error)}"
                ) from None
            return self._error(exc)
        except OSError as exc:  # smtplib's own errors are OSErrors too
            return self._error(exc)
        return None

    def send(
        self,
        msg: EmailMessage,
        from_addr: str,
        to_addr: str,
        before_data: Callable[[], None] | None = None,
    ) -> SendResult:
        """One try at one message; never raises for a per-message problem.

        ``before_data`` runs once the server has accepted the recipient and just
        before the message itself is handed over: the only point after which the
        server may have the message without us having heard its answer.
        """
        failed = self.connect()
        if failed is not None:
            return failed
        conn = self._conn
        assert conn is not None
        try:
            code, resp = conn.mail(from_addr)
            if code != 250:
                return self._fail(code, resp)
            code, resp = conn.rcpt(to_addr)
            if code not in (250, 251):
                return self._fail(code, resp)
            data = msg.as_bytes(policy=WIRE_POLICY)
            if before_data is not None:
                before_data()
            code, resp = conn.data(data)
            if code != 250:
                return self._fail(code, resp)
            return SendResult("sent", _reply(code, resp))
        except smtplib.SMTPDataError as exc:  # DATA itself answered with non-354
            return self._fail(exc.smtp_code, exc.smtp_error)
        except OSError as exc:
            return self._error(exc)

    def _error(self, exc: OSError) -> SendResult:
        """A dropped connection, time-out or unreachable server: temporary; reconnect next."""
        self._drop()
        if isinstance(exc, smtplib.SMTPServerDisconnected):
            if "timed out" in str(exc):  # smtplib reports a read time-out as a disconnect
                return SendResult("failed-temporary", "no answer from the server (time-out)")
            return SendResult("failed-temporary", f"connection closed by the server ({exc})")
        if isinstance(exc, smtplib.SMTPResponseException):  # e.g. a 421/554 greeting
            outcome: Outcome = "refused" if exc.smtp_code >= 500 else "failed-temporary"
            return SendResult(outcome, _reply(exc.smtp_code, exc.smtp_error))
        if isinstance(exc, TimeoutError):
            return SendResult("failed-temporary", "no answer from the server (time-out)")
        if isinstance(exc, ConnectionError):
            return SendResult("failed-temporary", f"connection problem ({exc.strerror or exc})")
        return SendResult("failed-temporary", f"cannot reach {self.server.host}: {exc}")

    def _fail(self, code: int, resp: bytes | str) -> SendResult:
        outcome = _classify(code)
        if outcome == "sent":  # pragma: no cover - callers pass non-2xx only
            outcome = "failed-temporary"
        if code == 421:  # the server is closing the connection
            self._drop()
        else:
            try:
                assert self._conn is not None
                self._conn.rset()
            except (smtplib.SMTPException, OSError):
                self._drop()
        return SendResult(outcome, _reply(code, resp))


def _address_literal(sock: socket.socket | None) -> str:
    """RFC 5321 address literal of our end of the connection, used as the EHLO name."""
    if sock is None:  # pragma: no cover
        return "[127.0.0.1]"
    host = sock.getsockname()[0]
    return f"[IPv6:{host}]" if ":" in host else f"[{host}]"
