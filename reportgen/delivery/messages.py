"""Building the e-mails: plain text with an HTML alternative and the PDF attached.

All wording is in ``templates/mail/`` (jinja2); a practice can override any of
those files with its own copy in ``<[report] templates_dir>/mail/``.  Templates
get already formatted text and never see a password.
"""

from __future__ import annotations

import datetime as dt
import re
from dataclasses import dataclass
from email import policy
from email.headerregistry import Address
from email.message import EmailMessage
from email.utils import format_datetime, make_msgid
from pathlib import Path
from typing import Literal

import jinja2
import jinja2.sandbox

from reportgen.config import Config
from reportgen.month import ReportMonth
from reportgen.resources import template_problem, templates_dir

# Header lines are not folded below the RFC 5322 hard limit of 998 characters: Python's
# folder moves a long Message-ID or Subject whole onto a continuation line, and readers
# then see a leading space (CPython gh-124452); for a Message-ID that also defeats
# duplicate detection by Message-ID (cyrus-imapd#3339).  Bodies are encoded at 78.
WIRE_POLICY = policy.SMTP.clone(max_line_length=998)
FILE_POLICY = policy.default.clone(max_line_length=998)

Kind = Literal["report", "practitioner"]
KINDS: tuple[Kind, ...] = ("report", "practitioner")


@dataclass(frozen=True)
class Sender:
    """Who the mail is from, checked once per run."""

    address: str
    name: str
    reply_to: str
    domain: str


def attachment_name(kind: Kind, month: str, client_id: str) -> str:
    """An ASCII-only file name that every mail client and file system accepts."""
    safe = re.sub(r"[^A-Za-z0-9_-]", "_", client_id)
    stem = "report" if kind == "report" else "practitioner-summary"
    return f"{stem}-{month}-{safe}.pdf"


def mail_environment(config: Config) -> jinja2.Environment:
    """Templates from the practice's override folder first, then the shipped ones."""
    search: list[str] = []
    override = config.resolve_path(config.report.templates_dir)
    if override is not None and (override / "mail").is_dir():
        search.append(str(override / "mail"))
    search.append(str(templates_dir() / "mail"))
    # Sandboxed like the report templates: an override can word the mail, never run code.
    return jinja2.sandbox.SandboxedEnvironment(
        loader=jinja2.FileSystemLoader(search),
        autoescape=lambda name: name is not None and name.endswith(".html.j2"),
        undefined=jinja2.StrictUndefined,
        keep_trailing_newline=True,
    )


_CONTROL = re.compile(r"[\x00-\x1f\x7f-\x9f]")


@dataclass(frozen=True)
class MailContent:
    subject: str
    text: str
    html: str


def greeting_name(full_name: str) -> str:
    """The name a message greets: the first name when the roster's name has one (two or more
    words, the first of them more than an initial), else the name as written."""
    words = full_name.split()
    if len(words) >= 2 and len(words[0].rstrip(".")) > 1:
        return words[0]
    return full_name.strip()


def render_content(
    env: jinja2.Environment,
    kind: Kind,
    *,
    config: Config,
    client_name: str,
    client_id: str,
    month: ReportMonth | str,
    filename: str,
    encrypted: bool,
) -> MailContent:
    p = config.practice
    context = {
        "practice": {
            "name": p.name,
            "address": p.address,
            "phone": p.phone,
            "email": p.email,
            "website": p.website,
        },
        "client_name": client_name,
        "greeting_name": greeting_name(client_name),
        "client_id": client_id,
        "month": month,
        "month_label": ReportMonth(month).label,
        "attachment": filename,
        "encrypted": encrypted,
    }
    subject = _render(env, f"{kind}_subject.txt.j2", context)
    subject = " ".join(subject.split())  # one line, whatever the template's layout
    subject = _CONTROL.sub("", subject)  # no control character ever reaches a header
    text = _render(env, f"{kind}.txt.j2", context)
    html = _render(env, f"{kind}.html.j2", context)
    return MailContent(subject=subject, text=text, html=html)


class MailTemplateError(ValueError):
    """A mail template that cannot be rendered; the message names the template."""


def _render(env: jinja2.Environment, name: str, context: dict[str, object]) -> str:
    try:
        return env.get_template(name).render(context)
    except (jinja2.TemplateError, jinja2.sandbox.SecurityError) as exc:
        raise MailTemplateError(template_problem(exc, name, env)) from None


def build_message(
    *,
    sender: Sender,
    to_address: str,
    to_name: str,
    content: MailContent,
    pdf: bytes,
    filename: str,
    message_id: str | None = None,
    now: dt.datetime | None = None,
) -> EmailMessage:
    """One complete message; ``message_id`` is reused when a message is sent again."""
    msg = EmailMessage()
    msg["Subject"] = content.subject
    msg["From"] = Address(display_name=sender.name, addr_spec=sender.address)
    msg["To"] = Address(display_name=to_name, addr_spec=to_address)
    msg["Reply-To"] = Address(display_name=sender.name, addr_spec=sender.reply_to)
    msg["Date"] = format_datetime(now or dt.datetime.now(dt.UTC))
    msg["Message-ID"] = message_id or make_msgid(idstring="reportgen", domain=sender.domain)
    # Quoted-printable keeps the message 7-bit clean, so no server needs 8BITMIME.
    msg.set_content(content.text, cte="quoted-printable")
    msg.add_alternative(content.html, subtype="html", cte="quoted-printable")
    msg.add_attachment(pdf, maintype="application", subtype="pdf", filename=filename)
    return msg


def sender_from_config(config: Config) -> Sender:
    """The From / Reply-To of the practice, or a ValueError naming the setting to fill in."""
    from reportgen.delivery.addresses import address_domain, check_address

    m, p = config.mail, config.practice
    raw_from = m.from_address or p.email
    address, why = check_address(raw_from)
    if address is None:
        raise ValueError(
            "set [mail] from_address (or [practice] email) in the configuration to the "
            f"address the reports are sent from ({why})"
        )
    raw_reply = m.reply_to or p.email or address
    reply, why = check_address(raw_reply)
    if reply is None:
        raise ValueError(f"[mail] reply_to: {why}")
    name = m.from_name or p.name
    return Sender(address=address, name=name, reply_to=reply, domain=address_domain(address))


def templates_available(env: jinja2.Environment) -> list[str]:
    """Names of the mail templates a run needs that cannot be found (empty when all are)."""
    missing = []
    for kind in KINDS:
        for part in ("_subject.txt.j2", ".txt.j2", ".html.j2"):
            name = f"{kind}{part}"
            try:
                env.get_template(name)
            except jinja2.TemplateNotFound:
                missing.append(name)
            except jinja2.TemplateError as exc:
                raise MailTemplateError(template_problem(exc, name, env)) from None
    return missing


def shipped_mail_dir() -> Path:
    return templates_dir() / "mail"
