"""Where shipped resources (templates, fonts) are found, installed or not."""

from __future__ import annotations

import contextlib
from functools import cache
from importlib import resources
from pathlib import Path
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from jinja2 import Environment


@cache
def templates_dir() -> Path:
    """The shipped templates folder.

    Installed, it is the ``reportgen.templates`` package (the top-level
    ``templates/`` folder mapped into the package by pyproject.toml).  From a
    bare source checkout that was never installed it is ``templates/`` beside
    the package.
    """
    try:
        return Path(str(resources.files("reportgen.templates")))
    except ModuleNotFoundError:
        return Path(__file__).resolve().parent.parent / "templates"


@cache
def font_path(bold: bool = False) -> Path:
    """DejaVu Sans from matplotlib's own data folder (always installed with it)."""
    import matplotlib

    name = "DejaVuSans-Bold.ttf" if bold else "DejaVuSans.ttf"
    return Path(matplotlib.get_data_path()) / "fonts" / "ttf" / name


def template_problem(exc: Exception, name: str, env: Environment | None = None) -> str:
    """One line naming the template (and where it was found) and what is wrong with it."""
    from jinja2.sandbox import SecurityError

    where = name
    if env is not None and env.loader is not None:
        with contextlib.suppress(Exception):
            where = f"{name} ({env.loader.get_source(env, name)[1]})"
    line = getattr(exc, "lineno", None)
    at = f", line {line}" if line else ""
    kind = "unsafe operation" if isinstance(exc, SecurityError) else "error"
    msg = str(getattr(exc, "message", None) or exc).strip().splitlines()
    return f"template {where}{at}: {kind}: {msg[0] if msg else type(exc).__name__}"
