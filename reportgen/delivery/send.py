"""Sending one month: plan the messages, then send (or write them to the outbox) one by one."""

from __future__ import annotations

import hashlib
import os
import time
from collections.abc import Callable
from dataclasses import dataclass, field
from email.message import EmailMessage
from pathlib import Path

import jinja2

from reportgen.atomic import write_bytes_atomic
from reportgen.config import Config
from reportgen.delivery.ledger import (
    LEDGER_NAME,
    LOCK_NAME,
    Ledger,
    LedgerBusyError,
    read_ledger,
    summarise,
    utc_now,
)
from reportgen.delivery.messages import (
    FILE_POLICY,
    MailTemplateError,
    Sender,
    attachment_name,
    build_message,
    mail_environment,
    render_content,
    sender_from_config,
    templates_available,
)
from reportgen.delivery.month import DeliveryError, read_manifest
from reportgen.delivery.plan import (
    Planned,
    Row,
    SendOptions,
    pdf_password_for,
    plan_month,
    resolve_config,
    server_settings,
)
from reportgen.delivery.protect import (
    encrypt_pdf,
    secret_file_is_private,
)
from reportgen.delivery.smtp import (
    FatalSMTPError,
    SendResult,
    SMTPConnection,
)
from reportgen.month import ReportMonth

OUTBOX = "outbox"
PASSWORD_ENV = "REPORTGEN_SMTP_PASSWORD"
# After this many messages in a row end in a temporary failure the server is taken to be
# down: the rest are left for a rerun instead of each waiting through its own retries.
MAX_CONSECUTIVE_FAILURES = 2


# From of dry-run messages when no sender is configured (.invalid never resolves, RFC 2606).
PLACEHOLDER_SENDER = Sender(
    address="sender-not-configured@example.invalid",
    name="PLACEHOLDER SENDER - set [mail] from_address before sending",
    reply_to="sender-not-configured@example.invalid",
    domain="example.invalid",
)


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


class _Skip(Exception):
    """This one message cannot be made; the others go on."""

    result = "skipped-invalid-address"


class _FileChanged(_Skip):
    """A report file no longer matches the manifest when it is read for attaching."""

    result = "skipped-modified-file"


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
    placeholder_note = ""
    try:
        sender = sender_from_config(config)
    except ValueError as exc:
        if not options.dry_run:
            raise DeliveryError(str(exc)) from None
        # a dry run only writes .eml files: it works before the sender is configured, with a
        # placeholder that the messages and the terminal both name as such
        sender = PLACEHOLDER_SENDER
        placeholder_note = (
            f"no sender configured: the dry-run messages are From {PLACEHOLDER_SENDER.address} "
            f"(a placeholder); a real send needs it ({exc})"
        )
    env = mail_environment(config)
    try:
        missing = templates_available(env)
    except MailTemplateError as exc:
        raise DeliveryError(str(exc)) from None
    if missing:
        raise DeliveryError(f"mail templates not found: {', '.join(missing)}")
    server = server_settings(config, options)
    report = SendReport(month=manifest.month, dry_run=options.dry_run)
    if placeholder_note:
        report.notes.append(placeholder_note)
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
        if outbox.is_symlink() or (outbox.exists() and not outbox.is_dir()):
            raise DeliveryError(
                f"{outbox} is a symbolic link or not a folder; the dry run writes only inside "
                f"{month_dir}. Remove it and run again"
            )
        outbox.mkdir(exist_ok=True)
        for old in outbox.glob("*.eml"):  # the outbox shows what the next run would send
            old.unlink()
        for item in planned:
            cid = item.client.client_id
            try:
                msg, _ = _message(item, config, env, sender, manifest.month)
            except _Skip as exc:
                emit(Row(cid, item.kind, item.address, exc.result, str(exc)))
                continue
            name = f"{cid}-{item.kind}.eml"
            write_bytes_atomic(outbox / name, msg.as_bytes(policy=FILE_POLICY))
            emit(Row(cid, item.kind, item.address, "written", f"{OUTBOX}/{name}"))
        return report

    for name in (LEDGER_NAME, LOCK_NAME):
        if (month_dir / name).is_symlink():
            raise DeliveryError(
                f"{month_dir / name} is a symbolic link; the ledger is kept only inside "
                f"{month_dir}. Remove the link and run again"
            )
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
    item: Planned, config: Config, env: jinja2.Environment, sender: Sender, month: ReportMonth
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
    try:
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
    except MailTemplateError as exc:  # the same template for everyone: stop the run
        raise DeliveryError(str(exc)) from None
    try:
        msg = build_message(
            sender=sender,
            to_address=item.address,
            to_name=item.name if item.kind == "report" else "",
            content=content,
            pdf=pdf,
            filename=filename,
            message_id=item.message_id,
        )
    except ValueError as exc:  # a header the email package refuses (CR/LF and the like)
        raise _Skip(f"the message headers cannot be made: {exc}") from None
    return msg, pdf


def _send_all(
    planned: list[Planned],
    conn: SMTPConnection,
    ledger: Ledger,
    options: SendOptions,
    config: Config,
    env: jinja2.Environment,
    sender: Sender,
    month: ReportMonth,
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
        except _Skip as exc:
            row = Row(cid, item.kind, item.address, exc.result, str(exc))
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
            # The attempt line is written just before the message is handed over (after
            # connecting, TLS, login and an accepted recipient), so only a stop during
            # the transfer itself leaves a message whose fate is unknown.
            tried = attempt + 1

            def mark_attempt(tried: int = tried, base: dict[str, object] = base) -> None:
                ledger.append({**base, "time": utc_now(), "try": tried, "result": "attempt"})

            try:
                result = conn.send(msg, sender.address, item.address, before_data=mark_attempt)
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


__all__ = [
    "DeliveryError",
    "Row",
    "SendOptions",
    "SendReport",
    "pdf_password_for",
    "send_month",
]
