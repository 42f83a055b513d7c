"""`reportgen batch BOOK --month YYYY-MM --out OUT`: the month-end run for every client."""

from __future__ import annotations

import sys
from pathlib import Path
from typing import TYPE_CHECKING

import click

from reportgen.cli.params import REPORT_MONTH
from reportgen.month import ReportMonth

if TYPE_CHECKING:
    from reportgen.batch import BatchResult


def _split_ids(value: str | None) -> list[str] | None:
    if value is None:
        return None
    ids = [v.strip() for v in value.split(",") if v.strip()]
    if not ids:
        raise click.BadParameter(
            "give at least one client id, e.g. c001,c002", param_hint="--clients"
        )
    return ids


def _print_result(result: BatchResult, *, quiet: bool, verbose: bool) -> None:
    from rich.console import Console
    from rich.table import Table
    from rich.text import Text

    from reportgen.io.guard import escape_controls as esc

    out = Console(highlight=False)
    err = Console(stderr=True, highlight=False)
    failed = result.failed
    # warnings are counted among the clients done: a failed client is counted once, as failed
    with_warnings = [o for o in result.succeeded if o.warnings]
    n_warnings = sum(len(o.warnings) for o in with_warnings)

    if verbose:
        for o in failed:
            if o.traceback:
                err.print(f"[bold]{o.client_id}[/bold]: traceback", markup=True)
                # soft wrap: a long path in a frame is never folded (copy-paste, grep)
                err.print(
                    esc(o.traceback, keep_newlines=True), markup=False, end="", soft_wrap=True
                )

    if quiet:
        for o in failed:
            err.print(esc(f"{o.client_id}: {o.reason}"), markup=False)
        for e in result.errors:
            err.print(esc(e), markup=False)
        return

    table = Table(title=f"reportgen batch {result.month}", title_justify="left")
    table.add_column("", style="bold")
    table.add_column("clients", justify="right")
    table.add_column("")
    table.add_row("done", str(len(result.succeeded)), "")
    table.add_row(
        "  of these with warnings",
        str(len(with_warnings)),
        f"{n_warnings} in all, listed in manifest.json" if n_warnings else "",
    )
    table.add_row("failed", str(len(failed)), "")
    if result.book_problems:
        table.add_row(
            "book",
            "",
            f"{len(result.book_problems)} problem(s) not tied to a client in this run "
            "(manifest.json book_problems; `reportgen check` shows them)",
        )
    for o in failed:
        who = f"{o.name}: {o.reason}" if o.name else o.reason
        table.add_row("", Text(esc(o.client_id)), Text(esc(who)))
    out.print(table)
    for e in result.errors:
        err.print(esc(e), markup=False)
    out.print(esc(f"Files are in {result.month_dir}"), markup=False)
    if failed and not verbose and any(o.traceback for o in failed):
        out.print("Run again with --verbose to see the tracebacks of unexpected errors.")


@click.command("batch")
@click.argument("book", type=click.Path(file_okay=False, path_type=Path))
@click.option("--month", required=True, type=REPORT_MONTH, help="The report month, e.g. 2026-11.")
@click.option(
    "--out",
    "out_dir",
    required=True,
    type=click.Path(file_okay=False, path_type=Path),
    help="Output folder; files go to OUT/<YYYY-MM>/.",
)
@click.option(
    "--workers",
    type=click.IntRange(min=1),
    default=None,
    help="Worker processes (default: one per core; 1 makes the clients one after another in "
    "a single worker).",
)
@click.option(
    "--clients",
    "clients",
    metavar="ID,ID",
    help="Only these clients (summary.csv, overview.pdf and manifest.json then cover only them).",
)
@click.option(
    "--config",
    "config_file",
    type=click.Path(dir_okay=False, path_type=Path),
    help="Practice configuration (TOML).",
)
@click.option("--quiet", "-q", is_flag=True, help="No progress bar and no result table.")
@click.option("--verbose", "-v", is_flag=True, help="Show tracebacks of unexpected errors.")
@click.option(
    "--scheduler",
    metavar="ADDRESS",
    help=(
        "Send the per-client tasks to a Dask distributed scheduler (needs reportgen[cluster]); "
        "its workers must see BOOK and OUT at the same paths (a shared file system)."
    ),
)
def batch_command(
    book: Path,
    month: ReportMonth,
    out_dir: Path,
    workers: int | None,
    clients: str | None,
    config_file: Path | None,
    quiet: bool,
    verbose: bool,
    scheduler: str | None,
) -> None:
    """Make every client's reports for one month, plus overview.pdf, summary.csv and manifest.json.

    Exit code 0 when every client succeeded, 1 when some failed (the others
    are still written), 2 for a usage error or an unreadable book.
    """
    from reportgen.batch import BatchUsageError, run_batch
    from reportgen.config import ConfigError, load_config
    from reportgen.io.model import InputError

    ids = _split_ids(clients)
    try:
        config = load_config(config_file)
    except ConfigError as exc:
        raise click.BadParameter(str(exc), param_hint="--config") from None

    show_progress = not quiet and sys.stdout.isatty()
    progress = None
    bar = None
    if show_progress:
        from rich.progress import BarColumn, MofNCompleteColumn, Progress, TimeRemainingColumn

        progress = Progress(
            "[progress.description]{task.description}",
            BarColumn(),
            MofNCompleteColumn(),
            TimeRemainingColumn(),
            transient=True,
            # No refresh thread: the pool forks its workers while the bar is up, and a
            # thread holding the stdout lock at fork time could hang a worker.
            auto_refresh=False,
        )

    def on_start(total: int) -> None:
        nonlocal bar
        if progress is not None:
            progress.start()
            bar = progress.add_task(f"Reports for {month}", total=total)
            progress.refresh()

    def on_outcome(_outcome: object) -> None:
        if progress is not None and bar is not None:
            progress.update(bar, advance=1, refresh=True)

    try:
        result = run_batch(
            book,
            month,
            out_dir,
            config=config,
            workers=workers,
            client_ids=ids,
            scheduler=scheduler,
            on_start=on_start,
            on_outcome=on_outcome,
        )
    except InputError as exc:
        from reportgen.io.guard import escape_controls

        click.echo(f"Error: the book cannot be read: {escape_controls(exc)}", err=True)
        click.get_current_context().exit(2)
    except BatchUsageError as exc:
        from reportgen.io.guard import escape_controls

        raise click.UsageError(escape_controls(exc)) from None
    finally:
        if progress is not None:
            progress.stop()

    _print_result(result, quiet=quiet, verbose=verbose)
    click.get_current_context().exit(result.exit_code)
