"""The delivery ledger: ``OUT/<YYYY-MM>/deliveries.jsonl``, append-only.

Every SMTP try writes one outcome line (``sent``, ``refused`` or
``failed-temporary``).  When the try gets as far as handing the message over
(connected, signed in, recipient accepted), an ``attempt`` line with its
Message-ID is written just before the transfer.  Each line is flushed and
``os.fsync``-ed before the next step.  Messages that are not tried get one
``skipped-...`` line.

A delivery is identified by (client, kind, address, sha256 of the source PDF).
For each such key the ledger says one of:

* ``delivered``: some ``sent`` line exists;
* ``unconfirmed``: the last line is an ``attempt`` with no outcome after it, i.e.
  the program stopped while the server had the message.  It may or may not have
  gone out, so it is *not* sent again automatically (see the README, "Sending reports by e-mail");
* ``pending``: anything else (never tried, refused, failed, skipped).

No password of any kind is ever written here.
"""

from __future__ import annotations

import datetime as dt
import fcntl
import json
import os
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import IO, Any, Literal

LEDGER_NAME = "deliveries.jsonl"
LOCK_NAME = ".send.lock"

DeliveryState = Literal["delivered", "unconfirmed", "pending"]
OUTCOMES = ("sent", "refused", "failed-temporary")


@dataclass(frozen=True)
class DeliveryKey:
    client: str
    kind: str  # "report" or "practitioner"
    address: str
    sha256: str


@dataclass(frozen=True)
class KeyHistory:
    state: DeliveryState
    message_id: str | None  # of the last attempt, reused when an unconfirmed one is resent


class LedgerBusyError(RuntimeError):
    """Another ``reportgen send`` is working on the same month."""


def utc_now() -> str:
    return dt.datetime.now(dt.UTC).isoformat(timespec="seconds").replace("+00:00", "Z")


def read_ledger(path: Path) -> tuple[list[dict[str, Any]], list[str]]:
    """All readable lines of a ledger, and a note for each line that could not be read.

    A torn last line (the program was killed while writing it) is the expected
    kind of damage and is reported, not fatal.
    """
    if not path.exists():
        return [], []
    entries: list[dict[str, Any]] = []
    notes: list[str] = []
    with path.open("r", encoding="utf-8", errors="replace") as fh:
        for n, line in enumerate(fh, start=1):
            if not line.strip():
                continue
            try:
                obj = json.loads(line)
            except json.JSONDecodeError:
                notes.append(f"{path.name} line {n} is not complete JSON and was ignored")
                continue
            if isinstance(obj, dict):
                entries.append(obj)
            else:
                notes.append(f"{path.name} line {n} is not a ledger entry and was ignored")
    return entries, notes


def _key_of(entry: dict[str, Any]) -> DeliveryKey | None:
    try:
        return DeliveryKey(
            str(entry["client"]), str(entry["kind"]), str(entry["address"]), str(entry["sha256"])
        )
    except KeyError:
        return None


def summarise(entries: list[dict[str, Any]]) -> dict[DeliveryKey, KeyHistory]:
    """The state of every key that has at least one attempt or outcome."""
    sent: set[DeliveryKey] = set()
    last: dict[DeliveryKey, dict[str, Any]] = {}
    last_mid: dict[DeliveryKey, str | None] = {}
    for e in entries:
        result = e.get("result")
        if result != "attempt" and result not in OUTCOMES:
            continue
        key = _key_of(e)
        if key is None or e.get("address") is None:
            continue
        if result == "sent":
            sent.add(key)
        last[key] = e
        if result == "attempt":
            last_mid[key] = e.get("message_id")
    out: dict[DeliveryKey, KeyHistory] = {}
    for key, e in last.items():
        if key in sent:
            state: DeliveryState = "delivered"
        elif e.get("result") == "attempt":
            state = "unconfirmed"
        else:
            state = "pending"
        out[key] = KeyHistory(state, last_mid.get(key))
    return out


class Ledger:
    """An open ledger with an exclusive lock on the month folder for the whole run."""

    def __init__(self, month_dir: Path) -> None:
        self.path = month_dir / LEDGER_NAME
        self._lock_fh: IO[str] | None = None
        self._fh: IO[str] | None = None
        lock_fh = (month_dir / LOCK_NAME).open("a", encoding="utf-8")
        try:
            fcntl.flock(lock_fh.fileno(), fcntl.LOCK_EX | fcntl.LOCK_NB)
        except BlockingIOError as exc:
            lock_fh.close()
            raise LedgerBusyError(
                f"another 'reportgen send' is running on {month_dir}; wait for it to finish"
            ) from exc
        self._lock_fh = lock_fh
        self.entries, self.notes = read_ledger(self.path)
        fh = self.path.open("a+", encoding="utf-8")
        # A torn last line must not swallow the next entry: start on a fresh line.
        fh.seek(0, os.SEEK_END)
        if fh.tell() > 0:
            fh.seek(fh.tell() - 1)
            if fh.read(1) != "\n":
                fh.write("\n")
        self._fh = fh

    def history(self) -> dict[DeliveryKey, KeyHistory]:
        return summarise(self.entries)

    def append(self, entry: dict[str, Any]) -> None:
        """Write one line and make it durable before returning."""
        assert self._fh is not None, "ledger is closed"
        line = json.dumps(entry, ensure_ascii=False, sort_keys=True)
        self._fh.write(line + "\n")
        self._fh.flush()
        os.fsync(self._fh.fileno())
        self.entries.append(entry)

    def close(self) -> None:
        if self._fh is not None:
            self._fh.close()
            self._fh = None
        if self._lock_fh is not None:
            fcntl.flock(self._lock_fh.fileno(), fcntl.LOCK_UN)
            self._lock_fh.close()
            self._lock_fh = None

    def __enter__(self) -> Ledger:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()


def iter_results(entries: list[dict[str, Any]], result: str) -> Iterator[dict[str, Any]]:
    return (e for e in entries if e.get("result") == result)
