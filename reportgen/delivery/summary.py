"""What a person sees while sending and at the end: one line per message, then a table."""

from __future__ import annotations

from collections import Counter

import click
from rich.console import Console
from rich.table import Table
from rich.text import Text

from reportgen.delivery.send import Row, SendReport
from reportgen.io.guard import escape_controls

_STYLE = {
    "sent": "green",
    "written": "green",
    "already-sent": "dim",
    "refused": "red",
    "failed-temporary": "yellow",
    "not-attempted": "yellow",
    "unconfirmed": "yellow",
}


def row_line(row: Row) -> str:
    to = escape_controls(row.address or "-")
    detail = f"  ({escape_controls(row.detail)})" if row.detail else ""
    return f"{escape_controls(row.client):<12} {row.kind:<12} {to:<36} {row.result}{detail}"


def print_row(row: Row) -> None:
    if row.result == "already-sent":
        return  # listed in the table; a line per old message would drown the new ones
    click.echo(row_line(row))


def print_summary(report: SendReport) -> None:
    console = Console(highlight=False, soft_wrap=False, width=120)
    for note in report.notes:
        console.print(Text(f"Note: {escape_controls(note)}"))
    title = f"Delivery {report.month}" + (" (dry run: nothing sent)" if report.dry_run else "")
    table = Table(title=title, show_lines=False)
    for col in ("client", "kind", "address", "result", "detail"):
        table.add_column(col, overflow="fold")
    order = {"report": 0, "practitioner": 1}
    for row in sorted(report.rows, key=lambda r: (r.client, order.get(r.kind, 2))):
        style = _STYLE.get(row.result, "red" if row.counts else "dim")
        table.add_row(
            *(
                Text(escape_controls(v))
                for v in (row.client, row.kind, row.address or "-", row.result, row.detail)
            ),
            style=style,
        )
    console.print(table)
    counts = Counter(r.result for r in report.rows)
    tally = ", ".join(f"{n} {result}" for result, n in sorted(counts.items()))
    console.print(tally or "nothing to do")
    if report.fatal:
        console.print(Text(f"Stopped: {escape_controls(report.fatal)}"))
    elif report.exit_code:
        console.print("Some messages were not delivered; see the table. Fix, then run again.")
