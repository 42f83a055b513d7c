"""Where shipped resources (templates, fonts) are found, installed or not."""

from __future__ import annotations

from functools import cache
from importlib import resources
from pathlib import Path


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
