"""Usage errors and an unreadable book: exit code 2, nothing written."""

from __future__ import annotations

import fcntl
import os
from pathlib import Path

from _batch_helpers import MONTH, copy_sample, run_cli


def test_bad_month_is_a_usage_error(tmp_path: Path) -> None:
    out = tmp_path / "out"
    r = run_cli([tmp_path, "--month", "2026-13", "--out", out])
    assert r.exit_code == 2
    assert "month '2026-13' has no month 13; use 01 to 12" in r.output
    r = run_cli([tmp_path, "--month", "Nov 2026", "--out", out])
    assert r.exit_code == 2
    assert not out.exists()


def test_missing_options_are_usage_errors(tmp_path: Path) -> None:
    assert run_cli([tmp_path, "--month", MONTH]).exit_code == 2  # no --out
    assert run_cli([tmp_path, "--out", tmp_path / "o"]).exit_code == 2  # no --month
    r = run_cli([tmp_path, "--month", MONTH, "--out", tmp_path / "o", "--workers", "0"])
    assert r.exit_code == 2
    assert "--workers" in r.output


def test_unreadable_book_exits_2_and_writes_nothing(tmp_path: Path) -> None:
    book = tmp_path / "empty-book"
    book.mkdir()
    out = tmp_path / "out"
    r = run_cli([book, "--month", MONTH, "--out", out])
    assert r.exit_code == 2
    assert "the book cannot be read" in r.stderr
    assert not out.exists()


def test_unknown_client_id_exits_2(tmp_path: Path) -> None:
    book = copy_sample(tmp_path / "book")
    out = tmp_path / "out"
    r = run_cli([book, "--month", MONTH, "--out", out, "--clients", "c001,c999"])
    assert r.exit_code == 2
    assert "no such client in the roster: c999" in r.output
    assert not out.exists()
    r = run_cli([book, "--month", MONTH, "--out", out, "--clients", " , "])
    assert r.exit_code == 2
    assert "at least one client id" in r.output


def test_bad_configuration_exits_2_naming_the_key(tmp_path: Path) -> None:
    cfg = tmp_path / "practice.toml"
    cfg.write_text('[report]\npaper = "A3"\n')
    out = tmp_path / "out"
    r = run_cli([tmp_path, "--month", MONTH, "--out", out, "--config", cfg])
    assert r.exit_code == 2
    assert "paper" in r.output
    assert not out.exists()


def test_second_batch_into_the_same_month_folder_is_refused(tmp_path: Path) -> None:
    book = copy_sample(tmp_path / "book")
    month_dir = tmp_path / "out" / MONTH
    month_dir.mkdir(parents=True)
    fd = os.open(month_dir, os.O_RDONLY)
    try:
        fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)  # as a running batch holds it
        r = run_cli([book, "--month", MONTH, "--out", tmp_path / "out", "--clients", "c001"])
    finally:
        os.close(fd)
    assert r.exit_code == 2
    assert "another batch is writing" in r.output
    assert list(month_dir.iterdir()) == []


def test_progress_bar_only_when_stdout_is_a_terminal(tmp_path: Path) -> None:
    import pty
    import subprocess

    from _batch_helpers import CLI_LAUNCH

    book = copy_sample(tmp_path / "book")
    env = dict(os.environ, MPLBACKEND="Agg", TERM="xterm", COLUMNS="100")

    def run(*extra: str) -> tuple[int, bytes]:
        master, slave = pty.openpty()
        args = [str(book), "--month", MONTH, "--out", str(tmp_path / "out"), "--clients", "c010"]
        proc = subprocess.Popen([*CLI_LAUNCH, *args, *extra], stdout=slave, stderr=slave, env=env)
        os.close(slave)
        data = b""
        while True:
            try:
                chunk = os.read(master, 4096)
            except OSError:  # EIO: the other end closed
                break
            if not chunk:
                break
            data += chunk
        os.close(master)
        return proc.wait(timeout=120), data

    code, data = run()
    assert code == 0, data.decode(errors="replace")
    assert b"Reports for 2026-11" in data  # the bar's label
    assert b"Files are in" in data
    code, data = run("--quiet")
    assert code == 0
    assert data == b""
