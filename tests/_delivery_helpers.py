"""Test parts for delivery: a real SMTP server on 127.0.0.1 and month folders to send.

The server is aiosmtpd's in-process ``Controller`` (a real SMTP exchange over
loopback, no mocks).  Its handler can refuse recipients, answer 4xx, stall past
the client's time-out or drop the connection during DATA, each a set number of
times, so the fault paths of the sender are exercised against a real peer.
"""

from __future__ import annotations

import asyncio
import csv
import io
import socket
from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass, field
from email import policy
from email.message import EmailMessage
from email.parser import BytesParser
from pathlib import Path
from typing import Any

import pytest
from aiosmtpd.controller import Controller
from aiosmtpd.smtp import SMTP, Envelope, Session

from reportgen.manifest import ClientEntry, build_manifest, manifest_bytes, sha256_bytes

MONTH = "2026-11"
TEST_SERVER_NAME = "mail.test.invalid"  # never resolved: the server is always 127.0.0.1


def free_port() -> int:
    """A port that was free a moment ago (aiosmtpd cannot use port 0, it checks itself)."""
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
        s.bind(("127.0.0.1", 0))
        return int(s.getsockname()[1])


@dataclass
class FaultyHandler:
    """Keeps every accepted message; misbehaves on purpose where told to.

    ``refuse``: recipients answered 550 at RCPT.  ``temp_fail``: recipient ->
    how many DATA commands get 451 before one is accepted.  ``drop``: recipient
    -> how many times the connection is closed during DATA (nothing accepted).
    ``stall``: recipient -> how many DATA commands are answered only after
    ``stall_s`` seconds (past the client's time-out; nothing accepted).
    """

    refuse: set[str] = field(default_factory=set)
    temp_fail: dict[str, int] = field(default_factory=dict)
    drop: dict[str, int] = field(default_factory=dict)
    stall: dict[str, int] = field(default_factory=dict)
    stall_s: float = 1.5
    accepted: list[Envelope] = field(default_factory=list)
    data_commands: int = 0
    peers: list[str] = field(default_factory=list)

    async def handle_RCPT(
        self, server: SMTP, session: Session, envelope: Envelope, address: str, options: list
    ) -> str:
        if address in self.refuse:
            return "550 5.1.1 No such mailbox here"
        envelope.rcpt_tos.append(address)
        return "250 OK"

    async def handle_DATA(self, server: SMTP, session: Session, envelope: Envelope) -> str:
        self.data_commands += 1
        self.peers.append(str(session.peer[0]))
        rcpt = envelope.rcpt_tos[0]
        if self.drop.get(rcpt, 0) > 0:
            self.drop[rcpt] -= 1
            assert server.transport is not None
            server.transport.close()
            return "421 4.4.2 closing"  # never reaches the client
        if self.stall.get(rcpt, 0) > 0:
            self.stall[rcpt] -= 1
            await asyncio.sleep(self.stall_s)
            return "451 4.4.2 too slow"
        if self.temp_fail.get(rcpt, 0) > 0:
            self.temp_fail[rcpt] -= 1
            return "451 4.3.0 Try again later"
        self.accepted.append(envelope)
        return f"250 2.0.0 Ok: queued as Q{len(self.accepted):04d}"

    def messages(self) -> list[EmailMessage]:
        out = []
        for env in self.accepted:
            raw = env.original_content or env.content
            assert isinstance(raw, bytes)
            msg = BytesParser(policy=policy.default).parsebytes(raw)
            assert isinstance(msg, EmailMessage)
            out.append(msg)
        return out

    def recipients(self) -> list[str]:
        return [r for env in self.accepted for r in env.rcpt_tos]


@contextmanager
def smtp_server(handler: Any, **kwargs: Any) -> Iterator[Controller]:
    """A running aiosmtpd server on 127.0.0.1 (stopped on exit)."""
    controller = Controller(
        handler,
        hostname="127.0.0.1",
        port=free_port(),
        server_hostname=TEST_SERVER_NAME,
        **kwargs,
    )
    controller.start()
    try:
        yield controller
    finally:
        controller.stop()


@pytest.fixture
def loopback_only(monkeypatch: pytest.MonkeyPatch) -> list[tuple[str, int]]:
    """Fail the test if anything connects anywhere but 127.0.0.1 (or looks a name up)."""
    seen: list[tuple[str, int]] = []
    real_connect = socket.socket.connect
    real_getaddrinfo = socket.getaddrinfo

    def connect(self: socket.socket, address: Any) -> None:
        if self.family in (socket.AF_INET, socket.AF_INET6):
            host = address[0]
            seen.append((host, address[1]))
            assert host == "127.0.0.1", f"test tried to connect to {address!r}"
        return real_connect(self, address)

    def getaddrinfo(host: Any, *args: Any, **kwargs: Any) -> Any:
        assert host in ("127.0.0.1", None), f"test tried to look up {host!r}"
        return real_getaddrinfo(host, *args, **kwargs)

    monkeypatch.setattr(socket.socket, "connect", connect)
    monkeypatch.setattr(socket, "getaddrinfo", getaddrinfo)
    monkeypatch.setattr(socket, "getfqdn", lambda name="": "client.test.invalid")
    return seen


def make_pdf(title: str, pages: int = 1) -> bytes:
    """A small real PDF (reportlab, invariant so it is the same bytes every time)."""
    from reportlab.lib.pagesizes import A4
    from reportlab.pdfgen import canvas

    buf = io.BytesIO()
    c = canvas.Canvas(buf, pagesize=A4, invariant=1)
    c.setTitle(title)
    for n in range(pages):
        c.drawString(72, 770, f"{title} - page {n + 1}")
        c.showPage()
    c.save()
    return buf.getvalue()


@dataclass(frozen=True)
class RosterRow:
    client_id: str
    name: str
    email: str = ""
    referral_email: str = ""
    pdf_password: str = ""
    status: str = "ok"


DEFAULT_CLIENTS = (
    RosterRow("c001", "Maren Test", "maren@example.org", referral_email="gp@example.org"),
    RosterRow("c002", "Zoë Łukasiewicz-Øster", "zoe@example.com"),
    RosterRow("c003", "Ivo Test", "ivo@example.net"),
)


@dataclass(frozen=True)
class Month:
    root: Path
    book: Path
    month_dir: Path
    config_file: Path
    clients: tuple[RosterRow, ...]

    def pdf(self, client_id: str, kind: str = "report") -> bytes:
        name = f"{client_id}.pdf" if kind == "report" else f"{client_id}-practitioner.pdf"
        return (self.month_dir / name).read_bytes()

    def ledger(self) -> list[dict[str, Any]]:
        import json

        path = self.month_dir / "deliveries.jsonl"
        if not path.exists():
            return []
        return [json.loads(line) for line in path.read_text("utf-8").splitlines() if line]


def write_config(path: Path, port: int, mail: dict[str, Any] | None = None) -> None:
    settings: dict[str, Any] = {
        "host": "127.0.0.1",
        "port": port,
        "security": "none",
        "from_address": "reports@harbourclinic.example",
        "from_name": "Harbour Clinic Reports",
        "reply_to": "team@harbourclinic.example",
        "timeout_s": 5.0,
        "retries": 2,
    }
    settings.update(mail or {})

    def toml(v: Any) -> str:
        if isinstance(v, bool):
            return "true" if v else "false"
        if isinstance(v, int | float):
            return repr(v)
        return '"' + str(v).replace("\\", "\\\\").replace('"', '\\"') + '"'

    lines = [
        "[practice]",
        'name = "Harbour Clinic"',
        'address = "1 Quay Street, Porthaven"',
        'phone = "+00 1234 5678"',
        'email = "team@harbourclinic.example"',
        "",
        "[mail]",
        *(f"{k} = {toml(v)}" for k, v in settings.items()),
    ]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")


ROSTER_HEADER = (
    "client_id",
    "name",
    "sex",
    "birth_date",
    "height_cm",
    "email",
    "referral_email",
    "pdf_password",
)


def make_month(
    root: Path,
    port: int = 2525,
    clients: tuple[RosterRow, ...] = DEFAULT_CLIENTS,
    mail: dict[str, Any] | None = None,
) -> Month:
    """A book (clients.csv as the input contract describes), a practice configuration and
    OUT/<month>/ with real PDFs and a manifest in the batch's own format."""
    from reportgen.config import load_config

    book = root / "book"
    book.mkdir(parents=True)
    with (book / "clients.csv").open("w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh)
        w.writerow(ROSTER_HEADER)
        for c in clients:
            row = (c.client_id, c.name, "female", "1990-01-01", "170", c.email)
            w.writerow((*row, c.referral_email, c.pdf_password))
    config_file = root / "practice.toml"
    write_config(config_file, port, mail)
    month_dir = root / "out" / MONTH
    month_dir.mkdir(parents=True)
    entries: dict[str, ClientEntry] = {}
    for c in clients:
        if c.status != "ok":
            entries[c.client_id] = ClientEntry(status="error", name=c.name, messages=["bad log"])
            continue
        files = {}
        for kind, name in (
            ("report", f"{c.client_id}.pdf"),
            ("practitioner", f"{c.client_id}-practitioner.pdf"),
        ):
            data = make_pdf(f"{kind} {c.client_id} {MONTH}")
            (month_dir / name).write_bytes(data)
            files[kind] = {"path": name, "sha256": sha256_bytes(data)}
        entries[c.client_id] = ClientEntry(status="ok", name=c.name, files=files)
    manifest = build_manifest(
        month=MONTH,
        book=book,
        config_file=config_file,
        config=load_config(config_file).as_dict(),
        config_sha256=load_config(config_file).source_sha256,
        files={},
        clients=entries,
    )
    (month_dir / "manifest.json").write_bytes(manifest_bytes(manifest))
    return Month(root, book, month_dir, config_file, clients)
