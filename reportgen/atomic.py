"""Crash-safe file writes: temporary name, fsync, rename into place.

A reader (or a rerun after a crash) sees either the old file or the complete
new one, never a half-written file.  Temporary files live in the target's own
folder (a rename is only atomic within one file system) and carry a name that
:func:`remove_temp_files` recognises, so a rerun after a killed run clears
what the killed run left behind.
"""

from __future__ import annotations

import contextlib
import os
import secrets
from pathlib import Path

TEMP_PREFIX = "."
TEMP_MARKER = ".part-"


def temp_name(path: Path) -> Path:
    """A unique temporary sibling of ``path`` (hidden, recognisable by :func:`is_temp_file`)."""
    token = f"{os.getpid()}-{secrets.token_hex(4)}"
    return path.with_name(f"{TEMP_PREFIX}{path.name}{TEMP_MARKER}{token}")


def is_temp_file(path: Path) -> bool:
    """True for a temporary file left by :func:`write_bytes_atomic`."""
    name = path.name
    return name.startswith(TEMP_PREFIX) and TEMP_MARKER in name


def _fsync_dir(folder: Path) -> None:
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:  # pragma: no cover - some file systems refuse to open folders
        return
    try:
        with contextlib.suppress(OSError):  # pragma: no cover - not supported everywhere
            os.fsync(fd)
    finally:
        os.close(fd)


def write_bytes_atomic(path: Path, data: bytes, *, sync: bool = True) -> None:
    """Write ``data`` to ``path`` so that ``path`` is never seen half-written.

    The bytes go to a temporary file in the same folder, are flushed and
    fsynced, and the file is renamed over ``path`` (``os.replace``).  With
    ``sync`` the folder is fsynced too, so the rename itself survives a power
    loss.  On any error the temporary file is removed and the error re-raised.
    """
    path = Path(path)
    tmp = temp_name(path)
    fd = os.open(tmp, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o644)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            if sync:
                os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        with contextlib.suppress(OSError):
            tmp.unlink()
        raise
    if sync:
        _fsync_dir(path.parent)


def write_text_atomic(path: Path, text: str, *, sync: bool = True) -> None:
    """:func:`write_bytes_atomic` for UTF-8 text (newlines written as given)."""
    write_bytes_atomic(path, text.encode("utf-8"), sync=sync)


def remove_temp_files(folder: Path) -> list[Path]:
    """Delete temporary files a killed run left in ``folder``; returns what was removed."""
    removed: list[Path] = []
    if not folder.is_dir():
        return removed
    for p in sorted(folder.iterdir()):
        if p.is_file() and is_temp_file(p):
            with contextlib.suppress(FileNotFoundError):
                p.unlink()
                removed.append(p)
    return removed
