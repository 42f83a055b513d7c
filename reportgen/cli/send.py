"""`reportgen send OUT/YYYY-MM`: e-mail the month's reports (or write them to an outbox)."""

from __future__ import annotations

from pathlib import Path

import click

from reportgen.choices import MAIL_SECURITY


def _ask_password() -> str:
    """Ask for the SMTP password without echo; empty when there is no one to ask."""
    try:
        return str(click.prompt("SMTP password", hide_input=True, err=True, default=""))
    except click.Abort:
        return ""


@click.command("send")
@click.argument(
    "month_dir",
    type=click.Path(exists=True, file_okay=False, path_type=Path),
    metavar="OUT/YYYY-MM",
)
@click.option(
    "--config",
    "config_file",
    type=click.Path(exists=True, dir_okay=False, path_type=Path),
    help="Practice configuration (TOML). Default: the one the batch used.",
)
@click.option("--host", help="SMTP server host name. Default: [mail] host.")
@click.option(
    "--port", type=click.IntRange(1, 65535), help="SMTP server port. Default: [mail] port."
)
@click.option(
    "--security",
    type=click.Choice(MAIL_SECURITY),
    help="starttls (port 587), tls (implicit TLS, port 465) or none. Default: [mail] security.",
)
@click.option(
    "--user",
    help="SMTP login name. The password is read from REPORTGEN_SMTP_PASSWORD or asked for.",
)
@click.option(
    "--dry-run",
    is_flag=True,
    help="Write every message as an .eml file under OUT/YYYY-MM/outbox/ and send nothing.",
)
@click.option(
    "--resend",
    "resend",
    multiple=True,
    metavar="CLIENT_ID",
    help="Send this client's messages again even if the ledger says they went (repeatable).",
)
@click.option(
    "--encrypt/--no-encrypt",
    default=None,
    help="Password-protect the PDFs (AES-256). Default: [mail] encrypt.",
)
@click.option(
    "--practitioner-copies/--no-practitioner-copies",
    default=None,
    help="Also send the practitioner summary to each client's referral address.",
)
@click.option(
    "--retry-delay",
    type=click.FloatRange(0, 600),
    default=2.0,
    show_default=True,
    help="Seconds before the first retry of a temporary failure; doubles per retry.",
)
@click.option(
    "--show-pdf-password",
    metavar="CLIENT_ID",
    help="Print this client's PDF passwords for the month (to tell them by phone) and exit.",
)
def send_command(
    month_dir: Path,
    config_file: Path | None,
    host: str | None,
    port: int | None,
    security: str | None,
    user: str | None,
    dry_run: bool,
    resend: tuple[str, ...],
    encrypt: bool | None,
    practitioner_copies: bool | None,
    retry_delay: float,
    show_pdf_password: str | None,
) -> None:
    """E-mail each client's report for one month, exactly once.

    Reads OUT/YYYY-MM/manifest.json written by `reportgen batch`, takes the
    addresses from the book's roster and records every message in
    OUT/YYYY-MM/deliveries.jsonl, so a rerun sends only what has not gone yet.
    Run with --dry-run first and look at the messages in the outbox.

    Exit code: 0 everything delivered, 1 some messages not delivered,
    2 a usage or configuration problem.
    """
    from reportgen.delivery.month import DeliveryError
    from reportgen.delivery.send import SendOptions, pdf_password_for, send_month
    from reportgen.delivery.summary import print_row, print_summary

    options = SendOptions(
        config_file=config_file,
        host=host,
        port=port,
        security=security,
        user=user,
        dry_run=dry_run,
        resend=frozenset(resend),
        encrypt=encrypt,
        practitioner_copies=practitioner_copies,
        retry_delay_s=retry_delay,
    )
    try:
        if show_pdf_password is not None:
            for line in pdf_password_for(month_dir, options, show_pdf_password):
                click.echo(line)
            return
        report = send_month(
            month_dir,
            options,
            password=_ask_password,
            progress=print_row,
        )
    except DeliveryError as exc:
        from reportgen.io.guard import escape_controls

        click.echo(f"Error: {escape_controls(exc, keep_newlines=True)}", err=True)
        raise SystemExit(2) from None
    print_summary(report)
    raise SystemExit(report.exit_code)
