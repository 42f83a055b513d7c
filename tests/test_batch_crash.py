"""A batch killed part-way leaves only complete files; the rerun completes the month."""

from __future__ import annotations

import os
import signal
import subprocess
import time
from pathlib import Path

import pytest
from _batch_helpers import CLI_LAUNCH, MONTH, ReferenceRun, reference_run, run_cli

__all__ = ["reference_run"]


def _children(pid: int) -> list[int]:
    """PIDs whose parent is ``pid`` (from /proc)."""
    kids = []
    for entry in Path("/proc").iterdir():
        if not entry.name.isdigit():
            continue
        try:
            stat = (entry / "stat").read_text()
        except OSError:
            continue
        fields = stat.rpartition(")")[2].split()
        if int(fields[1]) == pid:
            kids.append(int(entry.name))
    return kids


def _alive(pid: int) -> bool:
    try:
        state = Path(f"/proc/{pid}/stat").read_text().rpartition(")")[2].split()[0]
    except OSError:
        return False
    return state != "Z"


@pytest.mark.skipif(not Path("/proc/self/stat").exists(), reason="needs /proc (Linux)")
def test_killed_run_leaves_complete_files_and_rerun_completes(
    reference_run: ReferenceRun, tmp_path: Path
) -> None:
    out = tmp_path / "out"
    month_dir = out / MONTH
    env = dict(os.environ, MPLBACKEND="Agg")
    args = [str(reference_run.book), "--month", MONTH, "--out", str(out), "--workers", "2"]
    proc = subprocess.Popen(
        [*CLI_LAUNCH, *args, "--quiet"],
        stdout=subprocess.DEVNULL,
        stderr=subprocess.DEVNULL,
        env=env,
    )
    workers: list[int] = []
    try:
        deadline = time.monotonic() + 90
        while not (month_dir.is_dir() and any(month_dir.glob("c*.pdf"))):
            assert proc.poll() is None, "the batch ended before it could be killed"
            assert time.monotonic() < deadline, "no PDF appeared"
            time.sleep(0.02)
        workers = _children(proc.pid)
        os.kill(proc.pid, signal.SIGKILL)
        proc.wait(timeout=30)
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait()
    assert proc.returncode == -signal.SIGKILL

    # the pool's workers die with the batch (no orphans left running)
    deadline = time.monotonic() + 20
    while any(_alive(w) for w in workers) and time.monotonic() < deadline:
        time.sleep(0.05)
    assert workers and not any(_alive(w) for w in workers)

    reference = reference_run.files()
    written = {p.name: p.read_bytes() for p in month_dir.iterdir() if not p.name.startswith(".")}
    assert "manifest.json" not in written  # the month is not sealed
    assert 0 < len(written) < len(reference), sorted(written)  # really killed part-way
    for name, data in written.items():
        assert data == reference[name], f"{name} is not the complete file"

    # what a kill during a write leaves behind: a temporary file, cleared by the rerun
    leftover = month_dir / ".c009.pdf.part-999999-0badc0de"
    leftover.write_bytes(b"%PDF-1.4\n% half a file")

    r = run_cli([*args, "--quiet"])
    assert r.exit_code == 1  # c007's deliberate error, as in the reference run
    assert reference_run.files() == {p.name: p.read_bytes() for p in month_dir.iterdir()}


@pytest.mark.skipif(not Path("/proc/self/stat").exists(), reason="needs /proc (Linux)")
def test_a_worker_killed_mid_run_costs_no_client(
    reference_run: ReferenceRun, tmp_path: Path
) -> None:
    # As when the out-of-memory killer takes one worker: the pool breaks, the tasks that were
    # in flight are retried one by one in a fresh worker, the rest go on in a new pool.
    out = tmp_path / "out"
    month_dir = out / MONTH
    args = [str(reference_run.book), "--month", MONTH, "--out", str(out), "--workers", "2"]
    proc = subprocess.Popen(
        [*CLI_LAUNCH, *args, "--quiet"],
        stdout=subprocess.DEVNULL,
        stderr=subprocess.DEVNULL,
        env=dict(os.environ, MPLBACKEND="Agg"),
    )
    try:
        deadline = time.monotonic() + 90
        while not (month_dir.is_dir() and any(month_dir.glob("c*.pdf"))):
            assert proc.poll() is None, "the batch ended before a worker could be killed"
            assert time.monotonic() < deadline, "no PDF appeared"
            time.sleep(0.02)
        workers = _children(proc.pid)
        assert len(workers) == 2
        os.kill(workers[0], signal.SIGKILL)
        assert proc.wait(timeout=120) == 1  # c007's deliberate error only
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait()
    assert {p.name: p.read_bytes() for p in month_dir.iterdir()} == reference_run.files()
