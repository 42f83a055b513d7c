"""manifest.json: what a month's batch wrote, from which inputs, with which settings.

Written last by the batch (so its presence means the month folder is
complete) and read by delivery.  Keys are sorted, indentation is two spaces
and there are no timestamps, so the same book and configuration give the same
bytes.  Paths of written files are relative to the month folder; input paths
are relative to the book folder.
"""

from __future__ import annotations

import hashlib
import json
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from reportgen import __version__

MANIFEST_NAME = "manifest.json"
TOOL_NAME = "reportgen"


def sha256_bytes(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def sha256_file(path: Path) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for block in iter(lambda: fh.read(1 << 20), b""):
            h.update(block)
    return h.hexdigest()


def hash_inputs(book_dir: Path, relative_paths: tuple[str, ...] | list[str]) -> dict[str, str]:
    """sha256 of each input file (paths relative to the book); unreadable files are skipped."""
    out: dict[str, str] = {}
    for rel in relative_paths:
        try:
            out[rel] = sha256_file(book_dir / rel)
        except OSError:
            continue
    return out


@dataclass
class ClientEntry:
    """One client's part of the manifest."""

    status: str  # "ok" or "error"
    name: str
    messages: list[str] = field(default_factory=list)
    warnings: list[dict[str, object]] = field(default_factory=list)
    files: dict[str, dict[str, str]] = field(default_factory=dict)  # kind -> {path, sha256}
    inputs: dict[str, str] = field(default_factory=dict)  # book-relative path -> sha256

    def as_dict(self) -> dict[str, Any]:
        return {
            "status": self.status,
            "name": self.name,
            "messages": list(self.messages),
            "warnings": list(self.warnings),
            "files": {k: dict(v) for k, v in self.files.items()},
            "inputs": dict(self.inputs),
        }


def build_manifest(
    *,
    month: str,
    book: Path,
    config_file: Path | None,
    config: dict[str, Any],
    files: dict[str, str],
    config_sha256: str | None = None,
    clients: dict[str, ClientEntry],
    book_problems: list[dict[str, object]] | None = None,
) -> dict[str, Any]:
    """The manifest as a plain dict (clients in client-id order)."""
    return {
        "tool": TOOL_NAME,
        "version": __version__,
        "month": month,
        "book": str(book.resolve()),
        "config_file": str(config_file.resolve()) if config_file is not None else None,
        "config": config,
        "config_sha256": config_sha256,
        "files": dict(sorted(files.items())),
        "clients": {cid: clients[cid].as_dict() for cid in sorted(clients)},
        "book_problems": list(book_problems or []),
    }


def manifest_bytes(manifest: dict[str, Any]) -> bytes:
    """Serialised manifest: sorted keys, indent 2, UTF-8, trailing newline."""
    text = json.dumps(manifest, sort_keys=True, indent=2, ensure_ascii=False, allow_nan=False)
    return (text + "\n").encode("utf-8")


def read_manifest(path: Path) -> dict[str, Any]:
    """Load a manifest written by :func:`manifest_bytes`."""
    data: dict[str, Any] = json.loads(Path(path).read_text(encoding="utf-8"))
    return data
