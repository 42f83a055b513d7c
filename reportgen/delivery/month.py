"""Reading a month folder written by the batch: manifest, roster and the report files."""

from __future__ import annotations

import json
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from reportgen.manifest import MANIFEST_NAME
from reportgen.month import InvalidMonth, ReportMonth


class DeliveryError(ValueError):
    """The month folder, configuration or options cannot be used (exit code 2)."""


@dataclass(frozen=True)
class ManifestFile:
    path: Path  # absolute, inside the month folder
    sha256: str


@dataclass(frozen=True)
class ManifestClient:
    client_id: str
    status: str
    name: str
    files: dict[str, ManifestFile]  # "report", "practitioner"


@dataclass(frozen=True)
class Manifest:
    month: ReportMonth
    book: Path
    config_file: Path | None
    config: dict[str, Any]
    clients: dict[str, ManifestClient]
    config_sha256: str | None = None


def read_manifest(month_dir: Path) -> Manifest:
    """Parse ``manifest.json``; every problem is a :class:`DeliveryError` naming what to do."""
    path = month_dir / MANIFEST_NAME
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise DeliveryError(
            f"{month_dir} has no {MANIFEST_NAME}; give the month folder written by "
            "'reportgen batch' (OUT/YYYY-MM)"
        ) from None
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise DeliveryError(f"{path}: cannot read the manifest ({exc})") from None
    if not isinstance(data, dict) or data.get("tool") != "reportgen":
        raise DeliveryError(f"{path} is not a reportgen manifest")
    month_text = data.get("month")
    try:
        month = ReportMonth(month_text if isinstance(month_text, str) else repr(month_text))
    except InvalidMonth:
        raise DeliveryError(f"{path}: 'month' must be YYYY-MM, got {month_text!r}") from None
    book = data.get("book")
    if not isinstance(book, str) or not book:
        raise DeliveryError(f"{path}: 'book' is missing")
    clients_raw = data.get("clients")
    if not isinstance(clients_raw, dict):
        raise DeliveryError(f"{path}: 'clients' is missing")
    root = month_dir.resolve()
    clients: dict[str, ManifestClient] = {}
    for cid, entry in clients_raw.items():
        if not isinstance(entry, dict):
            raise DeliveryError(f"{path}: client {cid!r} is not an entry")
        files: dict[str, ManifestFile] = {}
        for kind, f in (entry.get("files") or {}).items():
            try:
                rel, digest = f["path"], f["sha256"]
            except (TypeError, KeyError):
                raise DeliveryError(
                    f"{path}: client {cid!r} file {kind!r} lacks path or sha256"
                ) from None
            target = (root / rel).resolve()
            if root not in target.parents:
                raise DeliveryError(f"{path}: client {cid!r} file {rel!r} is outside {month_dir}")
            files[kind] = ManifestFile(target, str(digest))
        clients[str(cid)] = ManifestClient(
            client_id=str(cid),
            status=str(entry.get("status", "")),
            name=str(entry.get("name") or cid),
            files=files,
        )
    cfg_file, cfg = data.get("config_file"), data.get("config")
    return Manifest(
        month=month,
        book=Path(book),
        config_file=Path(cfg_file) if isinstance(cfg_file, str) and cfg_file else None,
        config=cfg if isinstance(cfg, dict) else {},
        clients=clients,
        config_sha256=str(data["config_sha256"]) if data.get("config_sha256") else None,
    )


def extra_value(extra: dict[str, str], column: str) -> str:
    """A roster extra column's value, matching the column name as the readers do."""
    want = column.strip().lower()
    for key, value in extra.items():
        if key.strip().lower() == want:
            return (value or "").strip()
    return ""
