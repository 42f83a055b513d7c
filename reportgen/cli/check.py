"""`reportgen check BOOK [--month YYYY-MM] [--json]`: every problem in the client book."""

from __future__ import annotations

import datetime as dt
import json
import sys
from pathlib import Path

import click

from reportgen.cli.params import REPORT_MONTH
from reportgen.month import ReportMonth

#: Exit codes: 0 no errors (warnings allowed), 1 some client or book-level error,
#: 2 the book cannot be used at all (no or unreadable roster) or bad options.
EXIT_OK, EXIT_ERRORS, EXIT_UNUSABLE = 0, 1, 2


def _today(_ctx: click.Context, _param: click.Parameter, value: str | None) -> dt.date | None:
    if value is None:
        return None
    try:
        return dt.date.fromisoformat(value)
    except ValueError:
        raise click.BadParameter(f'"{value}" is not a date of the form YYYY-MM-DD') from None


@click.command("check")
@click.argument("book", type=click.Path(path_type=Path))
@click.option(
    "--month",
    type=REPORT_MONTH,
    help="Report month to check for (default: the month of the latest data in the book).",
)
@click.option("--json", "as_json", is_flag=True, help="Print the problems as JSON for scripts.")
@click.option(
    "--today",
    metavar="YYYY-MM-DD",
    callback=_today,
    help="Date after which entries count as future dates (default: the computer's date).",
)
@click.option(
    "--config",
    "config_file",
    type=click.Path(dir_okay=False, path_type=Path),
    help="Practice configuration (TOML); its [book] settings decide how the book is read.",
)
def check_command(
    book: Path,
    month: ReportMonth | None,
    as_json: bool,
    today: dt.date | None,
    config_file: Path | None,
) -> None:
    """Check the client book BOOK and list every problem found.

    Errors (the client would be skipped) and warnings (the report is still made) are shown
    with file:row:column. Exits 1 when any client has an error, 2 when the book cannot be
    used at all, 0 otherwise. Input files are only read, never changed.
    """
    from reportgen.config import ConfigError, load_config
    from reportgen.io.check import check_book
    from reportgen.io.model import InputError

    try:
        config = load_config(config_file)
    except ConfigError as exc:
        raise click.BadParameter(str(exc), param_hint="--config") from None
    try:
        result = check_book(
            book, month=month, today=today, date_order=config.book.date_order_setting()
        )
    except InputError as exc:
        if as_json:
            click.echo(json.dumps({"unusable": exc.problem.as_dict()}, indent=2, sort_keys=True))
        else:
            from reportgen.io.guard import escape_controls

            p = exc.problem
            where = f"{p.location}: " if p.file else ""
            click.echo(f"reportgen check: {escape_controls(where + p.message)}", err=True)
        sys.exit(EXIT_UNUSABLE)

    if as_json:
        click.echo(json.dumps(result.as_dict(), indent=2, sort_keys=True, ensure_ascii=False))
    else:
        _print_table(result)
    sys.exit(EXIT_OK if result.ok else EXIT_ERRORS)


def _print_table(result: object) -> None:
    from rich.console import Console
    from rich.table import Table
    from rich.text import Text

    from reportgen.io.check import CheckResult
    from reportgen.io.guard import escape_controls

    assert isinstance(result, CheckResult)
    console = Console(highlight=False, width=None if sys.stdout.isatty() else 160)
    problems = result.problems
    if problems:
        table = Table(title=f"Problems in {result.book_dir}", title_justify="left")
        table.add_column("severity", no_wrap=True)
        table.add_column("client", no_wrap=True)
        table.add_column("where (file:row:column)", overflow="fold")
        table.add_column("problem", ratio=1)
        for p in problems:
            style = {"error": "bold red", "warning": "yellow"}.get(p.severity, "cyan")
            table.add_row(
                Text(p.severity, style=style),
                Text(escape_controls(p.client_id or "-")),
                Text(escape_controls(p.location)),
                Text(escape_controls(p.message)),
            )
        console.print(table)
    console.print(Text(result.summary()))
