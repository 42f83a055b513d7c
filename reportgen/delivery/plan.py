"""Planning a month's sending: configuration, server settings and the messages due.

Pure reading and deciding: nothing here sends, writes or asks for anything.
"""

from __future__ import annotations

import ssl
from dataclasses import dataclass
from pathlib import Path

from reportgen.choices import MAIL_SECURITY, MailSecurity
from reportgen.config import Config, ConfigError, config_from_dict, load_config
from reportgen.delivery.addresses import check_address
from reportgen.delivery.ledger import DeliveryKey, KeyHistory
from reportgen.delivery.messages import KINDS, Kind
from reportgen.delivery.month import (
    DeliveryError,
    Manifest,
    ManifestClient,
    extra_value,
    read_manifest,
)
from reportgen.delivery.protect import SecretError, derive_pdf_password, read_practice_secret
from reportgen.delivery.smtp import ServerSettings, is_loopback
from reportgen.io.guard import has_control
from reportgen.manifest import sha256_file

# Results that mean "this message is where it should be" for the exit code.
DONE_RESULTS = ("sent", "already-sent", "written")


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


@dataclass(frozen=True)
class Planned:
    client: ManifestClient
    kind: Kind
    name: str
    address: str
    source: Path
    sha256: str
    pdf_password: str | None
    message_id: str | None  # reused when resending an unconfirmed attempt


#: Settings that name files or folders: never taken from a manifest without a trusted file.
PATH_SETTINGS = (("report", "templates_dir"), ("practice", "logo"), ("mail", "secret_file"))


def mail_security(value: str) -> MailSecurity:
    """``value`` as one of :data:`~reportgen.choices.MAIL_SECURITY`, or a DeliveryError."""
    for mode in MAIL_SECURITY:
        if value == mode:
            return mode
    choices = ", ".join(MAIL_SECURITY[:-1]) + " or " + MAIL_SECURITY[-1]
    raise DeliveryError(f"--security {value!r}: use {choices}")


def resolve_config(manifest: Manifest, options: SendOptions) -> Config:
    """--config, else the batch's configuration file, else the settings stored in the manifest.

    ``manifest.json`` sits in the output folder, where others may edit it, so a path read
    from it is never trusted on its own: the configuration file it names is used only if its
    bytes still have the sha256 the batch recorded, and stored settings that name files or
    folders are refused.  Naming the file with ``--config`` always works.
    """
    try:
        if options.config_file is not None:
            return load_config(options.config_file)
        if manifest.config_file is not None:
            cfg = load_config(manifest.config_file) if manifest.config_file.is_file() else None
            if cfg is None or manifest.config_sha256 is None:
                raise DeliveryError(
                    f"the manifest names the configuration {manifest.config_file}, which is "
                    "missing or whose fingerprint the batch did not record; name the "
                    "configuration with --config"
                )
            if cfg.source_sha256 != manifest.config_sha256:
                raise DeliveryError(
                    f"the configuration {manifest.config_file} named in the manifest is not the "
                    "file the batch used (it has changed since, or the manifest was edited); "
                    "name the configuration with --config"
                )
            return cfg
        if manifest.config:
            for table, key in PATH_SETTINGS:
                section = manifest.config.get(table)
                if isinstance(section, dict) and section.get(key):
                    raise DeliveryError(
                        f"the manifest's stored settings name a file ([{table}] {key}) but no "
                        "configuration file; name the configuration with --config"
                    )
            return config_from_dict(manifest.config, source=None)
        return Config()
    except ConfigError as exc:
        raise DeliveryError(str(exc)) from None


def server_settings(config: Config, options: SendOptions) -> ServerSettings:
    m = config.mail
    security = mail_security(options.security or m.security)
    server = ServerSettings(
        host=options.host or m.host,
        port=options.port or m.port,
        security=security,
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
) -> tuple[list[Planned], list[Row]]:
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

    planned: list[Planned] = []
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
            name = client.name or mc.name
            # The name reaches the To header (reports) and the subject (both kinds).
            if address is not None and has_control(name):
                address, why = (
                    None,
                    f"the name {name!r} holds a control character (line break, tab...)",
                )
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
            planned.append(Planned(mc, kind, name, address, mf.path, mf.sha256, password, mid))
    return planned, rows


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
