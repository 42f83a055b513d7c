"""Batch test helpers: running the command, snapshotting folders, a shared reference run."""

from __future__ import annotations

import hashlib
import os
import shutil
import sys
from dataclasses import dataclass
from pathlib import Path

import pytest
from click.testing import CliRunner, Result

os.environ.setdefault("MPLBACKEND", "Agg")

REPO = Path(__file__).resolve().parent.parent
SAMPLE_BOOK = REPO / "sample_inputs"
MONTH = "2026-11"
FAILING_CLIENT = (
    "c007"  # the sample client with a deliberate error (sample_inputs/EXPECTED_PROBLEMS.md)
)


def expected_problems() -> list[tuple[str, str, int | None, str]]:
    """(severity, file, row, column) of the sample's deliberate problems, from its own list."""
    out = []
    for line in (SAMPLE_BOOK / "EXPECTED_PROBLEMS.md").read_text(encoding="utf-8").splitlines():
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        if len(cells) >= 5 and cells[0] in ("error", "warning"):
            out.append((cells[0], cells[2], int(cells[3]) if cells[3] else None, cells[4]))
    return out


def failing_value() -> str:
    """The bad cell's text as the failing client's log holds it."""
    for line in (SAMPLE_BOOK / "EXPECTED_PROBLEMS.md").read_text(encoding="utf-8").splitlines():
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        if cells and cells[0] == "error":
            return cells[5].strip("`")
    raise AssertionError("the sample lists no error")


def failing_location() -> str:
    """``file:row:column`` of the failing client's one error."""
    (err,) = [p for p in expected_problems() if p[0] == "error"]
    return f"{err[1]}:{err[2]}:{err[3]}"


# Launches the batch command in a fresh interpreter (used by the kill-and-rerun test).
CLI_LAUNCH = [
    sys.executable,
    "-c",
    "from reportgen.cli.batch import batch_command; batch_command()",
]


def run_cli(args: list[str]) -> Result:
    from reportgen.cli.batch import batch_command

    return CliRunner().invoke(batch_command, [str(a) for a in args], catch_exceptions=False)


def snapshot(root: Path) -> dict[str, str]:
    """Every file under ``root`` (relative path -> sha256), hidden files included."""
    out: dict[str, str] = {}
    for p in sorted(root.rglob("*")):
        if p.is_file():
            out[p.relative_to(root).as_posix()] = hashlib.sha256(p.read_bytes()).hexdigest()
    return out


def copy_sample(dest: Path) -> Path:
    shutil.copytree(SAMPLE_BOOK, dest)
    return dest


@dataclass(frozen=True)
class ReferenceRun:
    """One batch run over the whole sample book, shared by several tests."""

    root: Path  # holds book/ and out/ and nothing else
    book: Path
    out: Path
    month_dir: Path
    result: Result
    book_before: dict[str, str]

    def files(self) -> dict[str, bytes]:
        return {p.name: p.read_bytes() for p in sorted(self.month_dir.iterdir())}


_REFERENCE: list[ReferenceRun] = []


@pytest.fixture(scope="session")
def reference_run(tmp_path_factory: pytest.TempPathFactory) -> ReferenceRun:
    """Run once per test session, however many test modules import this fixture."""
    if not _REFERENCE:
        _REFERENCE.append(_make_reference(tmp_path_factory))
    return _REFERENCE[0]


def _make_reference(tmp_path_factory: pytest.TempPathFactory) -> ReferenceRun:
    root = tmp_path_factory.mktemp("batch-ref")
    book = copy_sample(root / "book")
    before = snapshot(book)
    out = root / "out"
    result = run_cli([book, "--month", MONTH, "--out", out, "--workers", "2"])
    return ReferenceRun(
        root=root,
        book=book,
        out=out,
        month_dir=out / MONTH,
        result=result,
        book_before=before,
    )
