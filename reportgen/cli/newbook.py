"""`reportgen new-book BOOK_DIR`: an empty, ready-to-fill client book."""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING, cast

import click

from reportgen.choices import ENERGY_UNITS, UNIT_SYSTEMS

if TYPE_CHECKING:
    from reportgen.scaffold import Energy, Units


@click.command("new-book")
@click.argument("book_dir", type=click.Path(file_okay=False, path_type=Path))
@click.option(
    "--client",
    "clients",
    multiple=True,
    metavar="ID",
    help="Start a log workbook logs/ID.xlsx and a roster row for this client (repeatable).",
)
@click.option(
    "--add-client",
    "add_clients",
    multiple=True,
    metavar="ID",
    help="Add logs/ID.xlsx to an existing book without touching any other file (repeatable).",
)
@click.option(
    "--units",
    type=click.Choice(UNIT_SYSTEMS),
    default=None,
    help="Weights in kg and heights in cm (metric, the default for a new book) or lb and "
    "inches (imperial). With --add-client the book's roster decides unless given.",
)
@click.option(
    "--energy",
    type=click.Choice(ENERGY_UNITS),
    default="kcal",
    show_default=True,
    help="Unit of the daily intake column.",
)
def new_book_command(
    book_dir: Path,
    clients: tuple[str, ...],
    add_clients: tuple[str, ...],
    units: str | None,
    energy: str,
) -> None:
    """Create an empty client book in BOOK_DIR, ready to fill in.

    Writes clients.xlsx (the roster), phases.csv and, for each --client ID, a workbook
    logs/ID.xlsx with the sheets daily, skinfolds and phases. Every header has a comment
    explaining the column and its unit, and Excel refuses values outside the limits that
    `reportgen check` enforces. An existing book is never overwritten.

    \b
    Examples:
      reportgen new-book mybook --client c001 --client c002
      reportgen new-book mybook --units imperial --energy kJ --client c001
      reportgen new-book mybook --add-client c003
    """
    from reportgen.scaffold import ScaffoldError, add_client, new_book

    try:
        if add_clients:
            if clients:
                raise ScaffoldError(
                    "use either --client (new book) or --add-client (existing book), not both"
                )
            for cid in add_clients:
                path = add_client(
                    book_dir, cid, cast("Units | None", units), cast("Energy", energy)
                )
                click.echo(f"wrote {path}")
            click.echo(
                "Next: add a row for each new client to the roster "
                f"({book_dir / 'clients.xlsx'}), then log days in the new workbook."
            )
            return
        written = new_book(
            book_dir, clients, cast("Units", units or "metric"), cast("Energy", energy)
        )
    except ScaffoldError as exc:
        raise click.ClickException(str(exc)) from None
    for path in written:
        click.echo(f"wrote {path}")
    if not clients:
        click.echo(
            f"Next: add clients with `reportgen new-book {book_dir} --add-client ID` and a "
            f"row each in {book_dir / 'clients.xlsx'}."
        )
    click.echo(
        f"Next: fill in {book_dir / 'clients.xlsx'}, log days in logs/<id>.xlsx, then run "
        f"`reportgen check {book_dir}` and `reportgen batch {book_dir} --month YYYY-MM --out OUT`."
    )
