"""Shared test fixtures; each area keeps its own helpers in tests/_<area>_helpers.py."""

from __future__ import annotations

import os
from pathlib import Path

import pytest

os.environ.setdefault("MPLBACKEND", "Agg")

REPO = Path(__file__).resolve().parent.parent
SAMPLE_BOOK = REPO / "sample_inputs"
SAMPLE_MONTH = "2026-11"


@pytest.fixture
def sample_book(tmp_path: Path) -> Path:
    """A private copy of the shipped sample book (tests must never touch the original)."""
    import shutil

    dest = tmp_path / "book"
    shutil.copytree(SAMPLE_BOOK, dest)
    return dest
