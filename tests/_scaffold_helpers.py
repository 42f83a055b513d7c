"""Helpers for the scaffold tests: file hashes, the deliberate-problem table, a filled book."""

from __future__ import annotations

import datetime as dt
import hashlib
import re
from pathlib import Path

import numpy as np
import openpyxl

REPO = Path(__file__).resolve().parent.parent


def tree_hashes(root: Path) -> dict[str, str]:
    """sha256 of every file under ``root``, keyed by its path relative to ``root``."""
    return {
        p.relative_to(root).as_posix(): hashlib.sha256(p.read_bytes()).hexdigest()
        for p in sorted(root.rglob("*"))
        if p.is_file()
    }


def expected_problems(book: Path) -> set[tuple[str, str, int | None, str | None, str | None]]:
    """(severity, file, row, column, value) of each row of ``EXPECTED_PROBLEMS.md``."""
    out = set()
    for line in (book / "EXPECTED_PROBLEMS.md").read_text(encoding="utf-8").splitlines():
        m = re.match(r"^\| (error|warning|note) \|", line)
        if not m:
            continue
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        severity, _kind, file, row, column, value = cells[:6]
        row_n = int(row) if row else None
        out.add((severity, file, row_n, column or None, value.strip("`") or None))
    return out


def fill_client_log(
    path: Path,
    *,
    first: dt.date,
    days: int,
    seed: int,
    imperial: bool,
    kj: bool,
    phases: list[list[object]] | None,
) -> None:
    """Type a few weeks into a scaffolded log the way a coach would.

    Dates alternate between real date cells and ISO text; numbers are plain numbers.
    ``phases`` rows (name, start, end, kind, target_kcal) go into the ``phases`` sheet.
    """
    rng = np.random.default_rng(seed)
    wb = openpyxl.load_workbook(path)
    ws = wb["daily"]
    header = [c.value for c in ws[1]]
    for i in range(days):
        day = first + dt.timedelta(days=i)
        weight_kg = 84.0 - 0.05 * i + rng.normal(0.0, 0.35)
        intake_kcal = 1900.0 + rng.normal(0.0, 150.0)
        values = {
            "date": day if i % 2 == 0 else day.isoformat(),
            "weight_kg": round(weight_kg, 1),
            "weight_lb": round(weight_kg / 0.45359237, 1),
            "intake_kcal": round(intake_kcal),
            "intake_kj": int(round(intake_kcal * 4.184, -1)),
            "steps": int(rng.integers(6000, 11000)),
            "hunger": int(rng.integers(3, 7)),
            "energy": int(rng.integers(5, 9)),
            "sleep_h": round(float(rng.uniform(6.0, 8.5)), 1),
        }
        ws.append([values[h] for h in header])
    sk = wb["skinfolds"]
    sk_header = [c.value for c in sk[1]]
    for k, offset in enumerate((0, 21, 42)):
        day = first + dt.timedelta(days=offset)
        for reading in range(2):
            row: list[object] = [None] * len(sk_header)
            row[0] = day if reading == 0 else day.isoformat()
            for site, mm in (("chest", 15.0), ("abdominal", 26.0), ("thigh", 17.0)):
                row[sk_header.index(site)] = mm - k * 0.8 + 0.2 * reading
            sk.append(row)
    if phases:
        ph = wb["phases"]
        for r in phases:
            ph.append(r)
    assert not (imperial and "weight_kg" in header) and not (kj and "intake_kcal" in header)
    wb.save(path)
