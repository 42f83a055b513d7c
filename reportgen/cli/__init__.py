"""The ``reportgen`` command line: a thin layer that parses options and calls one function.

Each command lives in its own module; heavy libraries are imported inside the
command so that ``reportgen --help`` stays fast.
"""

from __future__ import annotations

import click

from reportgen import __version__
from reportgen.cli.batch import batch_command
from reportgen.cli.check import check_command
from reportgen.cli.newbook import new_book_command
from reportgen.cli.send import send_command
from reportgen.cli.settings import settings_group


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="reportgen")
def main() -> None:
    """Monthly phase reports for nutrition coaches and clinics.

    Typical month end: `reportgen check BOOK`, then
    `reportgen batch BOOK --month YYYY-MM --out OUT`, then
    `reportgen send OUT/YYYY-MM`.
    """


main.add_command(check_command)
main.add_command(batch_command)
main.add_command(send_command)
main.add_command(new_book_command)
main.add_command(settings_group)
