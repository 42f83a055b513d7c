"""The package ships everything a fresh install needs."""

from __future__ import annotations

import tomllib
from pathlib import Path

from reportgen.resources import font_path, templates_dir

REPO = Path(__file__).resolve().parent.parent


def test_every_subpackage_is_listed_in_pyproject() -> None:
    listed = set(
        tomllib.loads((REPO / "pyproject.toml").read_text())["tool"]["setuptools"]["packages"]
    )
    found = {
        ".".join(p.parent.relative_to(REPO).parts)
        for p in (REPO / "reportgen").rglob("__init__.py")
    }
    assert found <= listed, f"add to [tool.setuptools] packages: {sorted(found - listed)}"


def test_templates_and_fonts_are_found() -> None:
    assert (templates_dir() / "__init__.py").is_file()
    assert font_path().is_file() and font_path(bold=True).is_file()
