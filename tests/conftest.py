"""Shared test fixtures; each area keeps its own helpers in tests/_<area>_helpers.py."""

from __future__ import annotations

import os
from pathlib import Path

import pytest
from hypothesis import settings

os.environ.setdefault("MPLBACKEND", "Agg")

# No per-example deadline anywhere: shared 2-core machines make timings noisy, and speed is
# measured by the benchmarks, not by tests.  In CI the examples are derived from each test
# itself (derandomize), so a run is repeatable; locally they are random, to keep exploring.
settings.register_profile("dev", deadline=None)
settings.register_profile("ci", deadline=None, derandomize=True, print_blob=True)
settings.load_profile("ci" if os.environ.get("CI") else "dev")

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


def pytest_addoption(parser: pytest.Parser) -> None:
    parser.addoption(
        "--update-goldens",
        action="store_true",
        default=False,
        help="Rewrite tests/golden/*.json from the PDFs rendered now (review the diff after).",
    )


@pytest.fixture
def update_goldens(request: pytest.FixtureRequest) -> bool:
    return bool(request.config.getoption("--update-goldens"))
