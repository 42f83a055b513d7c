"""Sending one month: plan the messages, then send (or write them to the outbox) one by one."""

from __future__ import annotations

import hashlib
import os
import ssl
import time
from collections.abc import Callable
from dataclasses import dataclass, field
from email.message import EmailMessage
from pathlib import Path

import jinja2

from reportgen.atomic import write_bytes_atomic
from reportgen.config import Config, ConfigError, config_from_dict, load_config
from reportgen.delivery.addresses import check_address
from reportgen.delivery.ledger import (
    DeliveryKey,
    KeyHistory,
    Ledger,
    LedgerBusyError,
    read_ledger,
    summarise,
    utc_now,
)
from reportgen.delivery.messages import (
    FILE_POLICY,
    KINDS,
    Kind,
    Sender,
    attachment_name,
    build_message,
    mail_environment,
    render_content,
    sender_from_config,
    templates_available,
)
from reportgen.delivery.month import (
    DeliveryError,
    Manifest,
    ManifestClient,
    extra_value,
    read_manifest,
)
from reportgen.delivery.protect import (
    SecretError,
    derive_pdf_password,
    encrypt_pdf,
    read_practice_secret,
    secret_file_is_private,
)
from reportgen.delivery.smtp import (
    FatalSMTPError,
    SendResult,
    ServerSettings,
    SMTPConnection,
    is_loopback,
)
from reportgen.manifest import sha256_file

OUTBOX = "outbox"
PASSWORD_ENV = "REPORTGEN_SMTP_PASSWORD"
# Results that mean "this message is where it should be" for the exit code.
DONE_RESULTS = ("sent", "already-sent", "written")
# After this many messages in a row end in a temporary failure the server is taken to be
# down: the rest are left for a rerun instead of each waiting through its own retries.
MAX_CONSECUTIVE_FAILURES = 2


@dataclass(frozen=True)
class SendOptions:
    """What the command line (or a caller) asks for; ``None`` means "as configured"."""

    config_file: Path | None = None
    host: str | None = None
    port: int | None = None
    security: str | None = None
    user: str | None = None
    dry_run: bool = False
    resend: frozenset[str] = frozenset()
    encrypt: bool | None = None
    practitioner_copies: bool | None = None
    retry_delay_s: float = 2.0  # first back-off; doubles per try, capped at retry_max_delay_s
    retry_max_delay_s: float = 60.0
    ssl_context: ssl.SSLContext | None = None


@dataclass
class Row:
    """One line of the summary (and, for every message tried, of the ledger)."""

    client: str
    kind: str
    address: str | None
    result: str
    detail: str = ""
    counts: bool = True  # False for clients the batch could not report on (nothing to send)

    @property
    def done(self) -> bool:
        return self.result in DONE_RESULTS or not self.counts


@dataclass
class SendReport:
    month: str
    dry_run: bool
    rows: list[Row] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    fatal: str | None = None  # why the run stopped early (bad login, no TLS): exit code 2

    @property
    def exit_code(self) -> int:
        if self.fatal:
            return 2
        return 0 if all(r.done for r in self.rows) else 1


class _FileChanged(Exception):
    """A report file no longer matches the manifest when it is read for attaching."""


@dataclass(frozen=True)
class _Planned:
    client: ManifestClient
    kind: Kind
    name: str
    address: str
    source: Path
    sha256: str
    pdf_password: str | None
    message_id: str | None  # reused when resending an unconfirmed attempt


def resolve_config(manifest: Manifest, options: SendOptions) -> Config:
    """--config, else the batch's configuration file, else the settings stored in the manifest."""
    try:
        if options.config_file is not None:
            return load_config(options.config_file)
        if manifest.config_file is not None and manifest.config_file.is_file():
            return load_config(manifest.config_file)
        if manifest.config:
            source = str(manifest.config_file) if manifest.config_file else None
            return config_from_dict(manifest.config, source=source)
        return Config()
    except ConfigError as exc:
        raise DeliveryError(str(exc)) from None


def server_settings(config: Config, options: SendOptions) -> ServerSettings:
    m = config.mail
    security = options.security or m.security
    if security not in ("starttls", "tls", "none"):
        raise DeliveryError(f"--security {security!r}: use starttls, tls or none")
    server = ServerSettings(
        host=options.host or m.host,
        port=options.port or m.port,
        security=security,  # type: ignore[arg-type]
        user=m.user if options.user is None else options.user,
        timeout_s=m.timeout_s,
    )
    if server.user and server.security == "none" and not is_loopback(server.host):
        raise DeliveryError(
            f"refusing to send the password for {server.user!r} unencrypted to {server.host}; "
            "use --security starttls or tls"
        )
    return server


def _pdf_password(
    config: Config,
    client_extra: dict[str, str],
    client_id: str,
    month: str,
    secret: bytes | None,
    kind: str = "report",
) -> str | None:
    """The client's own password for their report, else the one derived from the secret."""
    own = extra_value(client_extra, config.mail.password_column) if kind == "report" else ""
    if own:
        return own
    if secret is not None:
        return derive_pdf_password(secret, client_id, month, kind)
    return None


def plan_month(
    month_dir: Path,
    manifest: Manifest,
    config: Config,
    options: SendOptions,
    history: dict[DeliveryKey, KeyHistory],
) -> tuple[list[_Planned], list[Row]]:
    """Every message to send now, and a summary row for each one that will not be."""
    from reportgen.io.book import read_roster
    from reportgen.io.model import InputError

    try:
        roster = read_roster(manifest.book)
    except InputError as exc:
        raise DeliveryError(f"cannot read the roster of {manifest.book}: {exc}") from None
    except FileNotFoundError:
        raise DeliveryError(f"the book {manifest.book} named in the manifest is gone") from None
    by_id = {c.client_id: c for c in roster.clients}
    unknown = sorted(options.resend - set(manifest.clients))
    if unknown:
        raise DeliveryError(f"--resend: {', '.join(unknown)} not in the manifest of {month_dir}")

    mail = config.mail
    encrypt = mail.encrypt if options.encrypt is None else options.encrypt
    copies = (
        mail.send_practitioner_copy
        if options.practitioner_copies is None
        else options.practitioner_copies
    )
    secret: bytes | None = None
    if encrypt and mail.secret_file:
        secret_path = config.resolve_path(mail.secret_file)
        assert secret_path is not None
        try:
            secret = read_practice_secret(secret_path, book_dir=manifest.book)
        except SecretError as exc:
            raise DeliveryError(str(exc)) from None

    planned: list[_Planned] = []
    rows: list[Row] = []
    for cid in sorted(manifest.clients):
        mc = manifest.clients[cid]
        if mc.status != "ok":
            rows.append(Row(cid, "report", None, "skipped-no-report", "batch error", counts=False))
            continue
        client = by_id.get(cid)
        if client is None:
            rows.append(Row(cid, "report", None, "skipped-not-in-roster", "not in the roster"))
            continue
        for kind in KINDS:
            if kind == "report":
                raw = client.email
            else:
                raw = extra_value(client.extra, mail.referral_column)
                if not copies or not raw:
                    continue
            address, why = check_address(raw)
            if address is None:
                result = "skipped-no-address" if why == "no address" else "skipped-invalid-address"
                rows.append(Row(cid, kind, (raw or "").strip() or None, result, why or ""))
                continue
            mf = mc.files.get(kind)
            if mf is None:
                rows.append(Row(cid, kind, address, "skipped-missing-file", "not in manifest"))
                continue
            if not mf.path.is_file():
                rows.append(Row(cid, kind, address, "skipped-missing-file", f"{mf.path.name}"))
                continue
            if sha256_file(mf.path) != mf.sha256:
                rows.append(
                    Row(
                        cid,
                        kind,
                        address,
                        "skipped-modified-file",
                        f"{mf.path.name} differs from the manifest; rerun the batch",
                    )
                )
                continue
            password = None
            if encrypt:
                password = _pdf_password(config, client.extra, cid, manifest.month, secret, kind)
                if password is None:
                    rows.append(
                        Row(
                            cid,
                            kind,
                            address,
                            "skipped-no-password",
                            f"no {mail.password_column} and no [mail] secret_file"
                            if kind == "report"
                            else "practitioner copies need [mail] secret_file",
                        )
                    )
                    continue
            key = DeliveryKey(cid, kind, address, mf.sha256)
            state = history.get(key)
            mid = None
            if state is not None and cid not in options.resend:
                if state.state == "delivered":
                    rows.append(Row(cid, kind, address, "already-sent", "in the ledger"))
                    continue
                if state.state == "unconfirmed":
                    rows.append(
                        Row(
                            cid,
                            kind,
                            address,
                            "unconfirmed",
                            "stopped while sending last time; check, then --resend " + cid,
                        )
                    )
                    continue
            if state is not None and state.state == "unconfirmed":
                mid = state.message_id  # same Message-ID: receivers can spot a duplicate
            planned.append(
                _Planned(
                    mc, kind, client.name or mc.name, address, mf.path, mf.sha256, password, mid
                )
            )
    return planned, rows


def send_month(
    month_dir: Path,
    options: SendOptions,
    password: Callable[[], str] | None = None,
    progress: Callable[[Row], None] | None = None,
) -> SendReport:
    """Send (or, with ``dry_run``, write to the outbox) every report of one month.

    ``password`` is asked only when a login is needed and something is to be sent.
    Raises :class:`DeliveryError` for anything that stops the whole run before it
    starts (exit code 2).
    """
    month_dir = Path(month_dir)
    if not month_dir.is_dir():
        raise DeliveryError(f"{month_dir} is not a folder")
    manifest = read_manifest(month_dir)
    if month_dir.resolve().name != manifest.month:
        raise DeliveryError(
            f"{month_dir} holds the manifest of {manifest.month}; "
            f"give the folder OUT/{manifest.month}"
        )
    config = resolve_config(manifest, options)
    try:
        sender = sender_from_config(config)
    except ValueError as exc:
        raise DeliveryError(str(exc)) from None
    env = mail_environment(config)
    missing = templates_available(env)
    if missing:
        raise DeliveryError(f"mail templates not found: {', '.join(missing)}")
    server = server_settings(config, options)
    report = SendReport(month=manifest.month, dry_run=options.dry_run)
    secret_path = config.resolve_path(config.mail.secret_file)
    if (
        secret_path is not None
        and secret_path.is_file()
        and not secret_file_is_private(secret_path)
    ):
        report.notes.append(
            f"{secret_path} can be read by other users of this computer; "
            f"restrict it with: chmod 600 {secret_path}"
        )

    def emit(row: Row) -> None:
        report.rows.append(row)
        if progress is not None:
            progress(row)

    if options.dry_run:
        entries, notes = read_ledger(month_dir / "deliveries.jsonl")
        report.notes.extend(notes)
        planned, skipped = plan_month(month_dir, manifest, config, options, summarise(entries))
        for row in skipped:
            emit(row)
        outbox = month_dir / OUTBOX
        outbox.mkdir(exist_ok=True)
        for old in outbox.glob("*.eml"):  # the outbox shows what the next run would send
            old.unlink()
        for item in planned:
            cid = item.client.client_id
            try:
                msg, _ = _message(item, config, env, sender, manifest.month)
            except _FileChanged as exc:
                emit(Row(cid, item.kind, item.address, "skipped-modified-file", str(exc)))
                continue
            name = f"{cid}-{item.kind}.eml"
            write_bytes_atomic(outbox / name, msg.as_bytes(policy=FILE_POLICY))
            emit(Row(cid, item.kind, item.address, "written", f"{OUTBOX}/{name}"))
        return report

    try:
        ledger = Ledger(month_dir)
    except LedgerBusyError as exc:
        raise DeliveryError(str(exc)) from None
    with ledger:
        report.notes.extend(ledger.notes)
        planned, skipped = plan_month(month_dir, manifest, config, options, ledger.history())
        for row in skipped:
            if row.result.startswith("skipped-") and row.counts:
                _log_skip(ledger, manifest.month, row)
            emit(row)
        if not planned:
            return report
        smtp_password: str | None = None
        if server.user:
            smtp_password = os.environ.get(PASSWORD_ENV) or (password() if password else None)
            if not smtp_password:
                raise DeliveryError(
                    f"no SMTP password: set {PASSWORD_ENV} or run in a terminal to be asked"
                )
        conn = SMTPConnection(server, smtp_password, ssl_context=options.ssl_context)
        try:
            report.fatal = _send_all(
                planned, conn, ledger, options, config, env, sender, manifest.month, emit
            )
        finally:
            conn.close()
    return report


def _log_skip(ledger: Ledger, month: str, row: Row, sha256: str | None = None) -> None:
    ledger.append(
        {
            "time": utc_now(),
            "month": month,
            "client": row.client,
            "kind": row.kind,
            "address": row.address,
            "sha256": sha256,
            "message_id": None,
            "result": row.result,
            "reply": row.detail,
        }
    )


def _message(
    item: _Planned, config: Config, env: jinja2.Environment, sender: Sender, month: str
) -> tuple[EmailMessage, bytes]:
    """The message for one planned delivery, and the attached bytes."""
    cid = item.client.client_id
    pdf = item.source.read_bytes()
    # Checked once in the plan; checked again on the bytes that are actually attached.
    if hashlib.sha256(pdf).hexdigest() != item.sha256:
        raise _FileChanged(f"{item.source.name} changed while sending; rerun the batch")
    if item.pdf_password is not None:
        pdf = encrypt_pdf(pdf, item.pdf_password)
    filename = attachment_name(item.kind, month, cid)
    content = render_content(
        env,
        item.kind,
        config=config,
        client_name=item.name,
        client_id=cid,
        month=month,
        filename=filename,
        encrypted=item.pdf_password is not None,
    )
    msg = build_message(
        sender=sender,
        to_address=item.address,
        to_name=item.name if item.kind == "report" else "",
        content=content,
        pdf=pdf,
        filename=filename,
        message_id=item.message_id,
    )
    return msg, pdf


def _send_all(
    planned: list[_Planned],
    conn: SMTPConnection,
    ledger: Ledger,
    options: SendOptions,
    config: Config,
    env: jinja2.Environment,
    sender: Sender,
    month: str,
    emit: Callable[[Row], None],
) -> str | None:
    """Send each planned message with retries; returns the reason if the run had to stop."""
    retries = config.mail.retries
    consecutive_failures = 0
    stop_reason: str | None = None  # set when the run cannot go on (bad login, no TLS)
    for n, item in enumerate(planned):
        cid = item.client.client_id
        if stop_reason is not None or consecutive_failures >= MAX_CONSECUTIVE_FAILURES:
            why = stop_reason or "server unavailable; rerun later"
            for rest in planned[n:]:
                emit(Row(rest.client.client_id, rest.kind, rest.address, "not-attempted", why))
            return stop_reason
        try:
            msg, pdf = _message(item, config, env, sender, month)
        except _FileChanged as exc:
            row = Row(cid, item.kind, item.address, "skipped-modified-file", str(exc))
            _log_skip(ledger, month, row, item.sha256)
            emit(row)
            continue
        base = {
            "month": month,
            "client": cid,
            "kind": item.kind,
            "address": item.address,
            "sha256": item.sha256,
            "message_id": str(msg["Message-ID"]),
            "attachment": attachment_name(item.kind, month, cid),
            "attachment_sha256": hashlib.sha256(pdf).hexdigest(),
            "encrypted": item.pdf_password is not None,
        }
        result = SendResult("failed-temporary", "not tried")
        for attempt in range(retries + 1):
            if attempt:
                delay = min(options.retry_delay_s * 2 ** (attempt - 1), options.retry_max_delay_s)
                time.sleep(delay)
            try:
                # Connect (TLS, login) before the attempt line: a crash while connecting
                # must not leave the message looking as if the server might have it.
                not_ready = conn.connect()
                ledger.append({**base, "time": utc_now(), "try": attempt + 1, "result": "attempt"})
                result = not_ready or conn.send(msg, sender.address, item.address)
            except FatalSMTPError as exc:
                # Nothing reached the server (login and TLS come before MAIL FROM).
                result = SendResult("failed-temporary", str(exc))
                stop_reason = str(exc)
            ledger.append(
                {
                    **base,
                    "time": utc_now(),
                    "try": attempt + 1,
                    "result": result.outcome,
                    "reply": result.reply,
                }
            )
            if result.outcome != "failed-temporary" or stop_reason is not None:
                break
        failed = result.outcome == "failed-temporary"
        consecutive_failures = consecutive_failures + 1 if failed else 0
        detail = result.reply if attempt == 0 else f"{result.reply} (after {attempt + 1} tries)"
        emit(Row(cid, item.kind, item.address, result.outcome, detail))
    return stop_reason


def pdf_password_for(month_dir: Path, options: SendOptions, client_id: str) -> list[str]:
    """The PDF passwords of one client's files this month, one ``kind: password`` line each.

    For the clinic to tell the client (report) or the practitioner (summary) by phone.
    """
    from reportgen.io.book import read_roster

    manifest = read_manifest(Path(month_dir))
    config = resolve_config(manifest, options)
    roster = read_roster(manifest.book)
    client = next((c for c in roster.clients if c.client_id == client_id), None)
    if client is None:
        raise DeliveryError(f"{client_id} is not in the roster of {manifest.book}")
    secret = None
    if config.mail.secret_file:
        path = config.resolve_path(config.mail.secret_file)
        assert path is not None
        try:
            secret = read_practice_secret(path, book_dir=manifest.book)
        except SecretError as exc:
            raise DeliveryError(str(exc)) from None
    lines = []
    for kind in KINDS:
        password = _pdf_password(config, client.extra, client_id, manifest.month, secret, kind)
        if password is not None:
            lines.append(f"{kind}: {password}")
    if not lines:
        raise DeliveryError(
            f"{client_id} has no {config.mail.password_column} and [mail] secret_file is not set"
        )
    return lines
