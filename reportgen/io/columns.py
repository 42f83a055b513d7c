"""Checking a table's columns against what a file of that kind may hold."""

from __future__ import annotations

from collections.abc import Iterable, Sequence

from reportgen.io.model import Problem
from reportgen.io.tables import Table


def missing_column(
    table: Table, options: Sequence[str], client_id: str | None, *, why: str = ""
) -> Problem:
    """The error for a required column (any of ``options``) that is not there."""
    names = " or ".join(f'"{o}"' for o in options)
    found = ", ".join(f'"{c}"' for c in table.raw_columns if c) or "none"
    hint = ""
    if len(table.raw_columns) == 1 and ";" in table.raw_columns[0]:
        hint = " The header looks semicolon-separated: save the file as comma-separated CSV."
    return Problem(
        "error",
        "missing-column",
        f"{table.where()} has no {names} column{why}; add it to the header row "
        f"(columns found: {found}).{hint}",
        file=table.file,
        row=table.header_row,
        client_id=client_id,
    )


def check_columns(
    table: Table,
    required: Iterable[Sequence[str]],
    known: Iterable[str],
    client_id: str | None,
    *,
    warn_unknown: bool = True,
    suggestions: dict[str, str] | None = None,
) -> tuple[list[Problem], bool]:
    """Errors for missing required columns, warnings for unknown ones.

    Each entry of ``required`` lists alternatives (``("weight_kg", "weight_lb")``).  Returns
    the problems and whether every required column is present.  ``suggestions`` maps an
    unknown header (as written) to the known name it is close to ("did you mean").
    """
    problems: list[Problem] = []
    have = set(table.columns)
    ok = True
    for options in required:
        if not have.intersection(options):
            problems.append(missing_column(table, options, client_id))
            ok = False
    if warn_unknown:
        known_set = set(known)
        for raw, name in zip(table.raw_columns, table.columns, strict=True):
            if name and name not in known_set:
                close = (suggestions or {}).get(raw)
                hint = (
                    f'did you mean "{close}"?'
                    if close
                    else "check the spelling if it should be used"
                )
                problems.append(
                    Problem(
                        "warning",
                        "unknown-column",
                        f'column "{raw}" in {table.where()} is not one reportgen uses; it is '
                        f"ignored ({hint})",
                        file=table.file,
                        column=raw,
                        value=raw,
                        client_id=client_id,
                    )
                )
    return problems, ok
