"""`reportgen settings write FILE` / `reportgen settings check FILE`: the practice configuration."""

from __future__ import annotations

from pathlib import Path

import click


@click.group("settings")
def settings_group() -> None:
    """Write or check a practice configuration file (TOML).

    One file holds your practice details, report look, analysis choices and mail
    server. Start from `reportgen settings write practice.toml`, edit it, check it with
    `reportgen settings check practice.toml`, and pass it to `reportgen batch` and
    `reportgen send` with --config.
    """


@settings_group.command("write")
@click.argument("file", type=click.Path(dir_okay=False, path_type=Path))
@click.option("--force", is_flag=True, help="Replace FILE if it already exists.")
def write_command(file: Path, force: bool) -> None:
    """Write a commented configuration FILE with every setting at its default."""
    from reportgen.config import config_toml

    if file.exists() and not force:
        raise click.ClickException(
            f"{file} already exists; nothing was changed (use --force to replace it)"
        )
    if not file.parent.is_dir():
        raise click.ClickException(f"folder {file.parent} does not exist; create it first")
    file.write_text(config_toml(), encoding="utf-8")
    click.echo(f"wrote {file}: edit it, then run `reportgen settings check {file}`")


@settings_group.command("check")
@click.argument("file", type=click.Path(dir_okay=False, path_type=Path))
def check_command(file: Path) -> None:
    """Check a configuration FILE: unknown keys, bad values, missing logo or folders.

    Prints every problem, one per line, and exits with status 1 if there is any.
    """
    from reportgen.config import Config, check_config_file, load_config

    problems = check_config_file(file)
    if problems:
        for line in problems:
            click.echo(line, err=True)
        n = len(problems)
        click.echo(f"{n} problem{'s' if n != 1 else ''} in {file}", err=True)
        raise SystemExit(1)
    cfg = load_config(file)
    default = Config().as_dict()
    changed = sum(
        1
        for table, values in cfg.as_dict().items()
        for k, v in values.items()
        if default[table][k] != v
    )
    click.echo(
        f"{file}: OK ({changed} setting{'s' if changed != 1 else ''} differ from the defaults)"
    )
