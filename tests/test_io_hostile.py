"""Hostile and broken book files: archive bombs, absurd sheets, huge logs, special files.

Each test builds its input itself.  Where the old behaviour was to exhaust memory, abort the
process or block, the reading runs in a child process with an address-space limit and a
time-out, so a regression fails the test instead of taking the machine down.
"""

from __future__ import annotations

import datetime as dt
import json
import os
import resource
import subprocess
import sys
import zipfile
from pathlib import Path

import pytest
from _io_helpers import (
    ROSTER_HEADER,
    csv_text,
    daily_rows,
    read_book_client,
    write_book,
    write_xlsx,
)
from click.testing import CliRunner

from reportgen.cli import main
from reportgen.io import guard
from reportgen.io.book import read_roster
from reportgen.io.model import InputError

TODAY = "2026-12-01"
MEMORY_LIMIT = 1_500 * 1024 * 1024  # the bound for one bad file
TIMEOUT_S = 60

CHECK = """
import datetime as dt, json, sys
from pathlib import Path
from reportgen.io.check import check_book
r = check_book(Path(sys.argv[1]), month="2026-11", today=dt.date(2026, 12, 1))
print(json.dumps([[p.client_id, p.code, p.file, p.message] for p in r.problems]))
"""


def _limit() -> None:
    resource.setrlimit(resource.RLIMIT_AS, (MEMORY_LIMIT + 1_000_000_000,) * 2)


def check_in_child(book: Path) -> list[list[str | None]]:
    """``check_book`` in a child process bounded in memory and time; its problem list."""
    env = {**os.environ, "OPENBLAS_NUM_THREADS": "1", "OMP_NUM_THREADS": "1"}
    proc = subprocess.run(
        [sys.executable, "-c", CHECK, str(book)],
        capture_output=True,
        text=True,
        timeout=TIMEOUT_S,
        preexec_fn=_limit,
        env=env,
        check=False,
    )
    assert proc.returncode == 0, f"check died ({proc.returncode}): {proc.stderr[-2000:]}"
    problems: list[list[str | None]] = json.loads(proc.stdout)
    return problems


def _two_clients(tmp_path: Path, logs: dict[str, str | bytes]) -> Path:
    roster = (
        f"{ROSTER_HEADER}\n"
        "c001,Ada Test,female,1990-05-01,168,ada@example.org,no\n"
        "c002,Ben Test,male,1985-02-01,180,ben@example.org,no\n"
    )
    logs = {"c001.csv": csv_text(daily_rows()), **logs}
    return write_book(tmp_path / "book", roster=roster, logs=logs)


def _codes(problems: list[list[str | None]], client: str) -> set[str | None]:
    return {p[1] for p in problems if p[0] == client}


# --- item 7: archive bombs and absurd sheets ---------------------------------------------


def test_workbook_bomb_is_refused_for_that_client_only(tmp_path: Path) -> None:
    book = _two_clients(tmp_path, {})
    bomb = book / "logs" / "c002.xlsx"
    write_xlsx(bomb, {"daily": daily_rows()})
    # Re-pack with a sheet part that unpacks to 120 MB (a few hundred kB packed): valid XML,
    # white space between the rows, so only the size gives it away.
    with zipfile.ZipFile(bomb) as src:
        parts = {i.filename: src.read(i) for i in src.infolist()}
    with zipfile.ZipFile(bomb, "w", zipfile.ZIP_DEFLATED) as out:
        for name, data in parts.items():
            if name != "xl/worksheets/sheet1.xml":
                out.writestr(name, data)
        sheet = parts["xl/worksheets/sheet1.xml"]
        head, tail = sheet.split(b"</sheetData>")
        with out.open("xl/worksheets/sheet1.xml", "w", force_zip64=True) as fh:
            fh.write(head)
            block = b" " * (1 << 20)
            for _ in range(120):
                fh.write(block)
            fh.write(b"</sheetData>" + tail)
    assert bomb.stat().st_size < 2_000_000
    problems = check_in_child(book)
    assert "file-too-large" in _codes(problems, "c002")
    (msg,) = [p[3] for p in problems if p[1] == "file-too-large"]
    assert "logs/c002.xlsx" in str(msg) and "unpacked" in str(msg)
    assert not [p for p in problems if p[0] == "c001" and p[1] != "gap"]


def test_sheet_with_a_giant_used_range_is_refused(tmp_path: Path) -> None:
    import openpyxl

    book = _two_clients(tmp_path, {})
    wb = openpyxl.Workbook()
    ws = wb.active
    assert ws is not None
    ws.title = "daily"
    for r in daily_rows():
        ws.append(r)
    ws.cell(row=1_048_576, column=16_384, value=1)  # one stray cell in the far corner
    wb.save(book / "logs" / "c002.xlsx")
    problems = check_in_child(book)
    (msg,) = [p[3] for p in problems if p[0] == "c002" and p[1] == "file-too-large"]
    assert "logs/c002.xlsx" in str(msg) and "1048576 rows" in str(msg)


def test_roster_workbook_without_sheets_is_a_clear_error(tmp_path: Path) -> None:
    book = tmp_path / "book"
    book.mkdir()
    ct = (
        '<?xml version="1.0" encoding="UTF-8"?><Types xmlns="http://schemas.openxmlformats.org/'
        'package/2006/content-types"><Default Extension="rels" ContentType="application/'
        'vnd.openxmlformats-package.relationships+xml"/><Override PartName="/xl/workbook.xml" '
        'ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+'
        'xml"/></Types>'
    )
    rels = (
        '<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="http://schemas.'
        'openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="http://'
        'schemas.openxmlformats.org/officeDocument/2006/relationships/officeDocument" '
        'Target="xl/workbook.xml"/></Relationships>'
    )
    workbook = (
        '<?xml version="1.0" encoding="UTF-8"?><workbook xmlns="http://schemas.openxmlformats.'
        'org/spreadsheetml/2006/main"><sheets/></workbook>'
    )
    wrels = (
        '<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="http://schemas.'
        'openxmlformats.org/package/2006/relationships"/>'
    )
    with zipfile.ZipFile(book / "clients.xlsx", "w") as zf:
        zf.writestr("[Content_Types].xml", ct)
        zf.writestr("_rels/.rels", rels)
        zf.writestr("xl/workbook.xml", workbook)
        zf.writestr("xl/_rels/workbook.xml.rels", wrels)
    with pytest.raises(InputError, match=r"clients\.xlsx"):
        read_roster(book)
    res = CliRunner().invoke(main, ["check", str(book)])
    assert res.exit_code == 2 and "clients.xlsx" in res.output
    assert "Traceback" not in res.output


# --- item 8: huge logs ---------------------------------------------------------------------


def test_log_with_too_many_rows_is_refused_fast(tmp_path: Path) -> None:
    rows = daily_rows()
    text = csv_text(rows) + csv_text(rows[1:]) * (guard.MAX_ROWS // 60 + 10)
    book = _two_clients(tmp_path, {"c002.csv": text})
    problems = check_in_child(book)
    (msg,) = [p[3] for p in problems if p[0] == "c002" and p[1] == "file-too-large"]
    assert "logs/c002.csv" in str(msg) and str(guard.MAX_ROWS) in str(msg)


def test_log_beyond_the_size_limit_is_refused_without_reading(tmp_path: Path) -> None:
    book = _two_clients(tmp_path, {"c002.csv": ""})
    with (book / "logs" / "c002.csv").open("wb") as fh:  # sparse: no disk space used
        fh.truncate(guard.MAX_CSV_BYTES + 1)
    rec = read_book_client(book, "c002")
    (p,) = [p for p in rec.errors if p.code == "file-too-large"]
    assert p.file == "logs/c002.csv" and "MB" in p.message


# --- item 9: special and unreadable files -----------------------------------------------


@pytest.mark.parametrize("kind", ["fifo", "folder", "broken-link"])
def test_special_files_instead_of_phases_or_skinfolds_are_named(tmp_path: Path, kind: str) -> None:
    book = _two_clients(tmp_path, {"c002.csv": csv_text(daily_rows())})
    (book / "skinfolds").mkdir()
    for path in (book / "phases.csv", book / "skinfolds" / "c001.csv"):
        if kind == "fifo":
            os.mkfifo(path)
        elif kind == "folder":
            path.mkdir()
        else:
            path.symlink_to(tmp_path / "gone.csv")
    problems = check_in_child(book)  # a FIFO must never block: bounded by the time-out
    for client in ("c001", "c002"):
        assert any(
            p[1] == "skipped-file" and p[2] == "phases.csv" for p in problems if p[0] == client
        )
    skin = [p for p in problems if p[2] == "skinfolds/c001.csv"]
    assert [(p[0], p[1]) for p in skin] == [("c001", "skipped-file")]
    if kind != "fifo":
        return  # the batch path is the same for every kind; run it once
    # and in the batch, as the client's warnings (reports still made)
    out = tmp_path / "out"
    res = CliRunner().invoke(
        main, ["batch", str(book), "--month", "2026-11", "--out", str(out), "--workers", "1", "-q"]
    )
    assert res.exit_code == 0, res.output
    manifest = json.loads((out / "2026-11" / "manifest.json").read_text("utf-8"))
    warned = {w["file"] for w in manifest["clients"]["c001"]["warnings"]}
    assert {"phases.csv", "skinfolds/c001.csv"} <= warned


def test_fifo_in_place_of_a_daily_log_is_that_clients_error(tmp_path: Path) -> None:
    book = _two_clients(tmp_path, {})
    os.mkfifo(book / "logs" / "c002.csv")
    problems = check_in_child(book)
    (p,) = [p for p in problems if p[0] == "c002" and p[1] == "unreadable-file"]
    assert p[2] == "logs/c002.csv" and "FIFO" in str(p[3])


def test_read_input_never_blocks_on_a_fifo(tmp_path: Path) -> None:
    fifo = tmp_path / "pipe.csv"
    os.mkfifo(fifo)
    with pytest.raises(guard.InputRefused, match="FIFO"):
        guard.read_input(fifo, "pipe.csv", 1000)


# --- item 12: extreme dates in phases ----------------------------------------------------


@pytest.mark.parametrize("date", ["0001-01-01", "9999-12-01"])
def test_extreme_phase_dates_name_the_file_row_and_column(tmp_path: Path, date: str) -> None:
    phases = (
        "client_id,name,start,end,kind,target_kcal\n"
        f"c001,Cut,{date},,deficit,1800\n"
        "c002,Cut,2026-10-01,,deficit,1800\n"
    )
    book = _two_clients(tmp_path, {"c002.csv": csv_text(daily_rows())})
    (book / "phases.csv").write_text(phases, encoding="utf-8")
    roster = read_roster(book, today=dt.date(2026, 12, 1))
    (p,) = [p for p in roster.problems if p.code == "out-of-range"]
    assert (p.file, p.row, p.column, p.client_id) == ("phases.csv", 2, "start", "c001")
    out = tmp_path / "out"
    res = CliRunner().invoke(
        main, ["batch", str(book), "--month", "2026-11", "--out", str(out), "--workers", "1", "-q"]
    )
    assert "OverflowError" not in res.output and "unexpected" not in res.output
    manifest = json.loads((out / "2026-11" / "manifest.json").read_text("utf-8"))
    assert manifest["clients"]["c002"]["status"] == "ok"
    assert "phases.csv:2:start" in manifest["clients"]["c001"]["messages"][0]


# --- item 13: one huge cell in the roster -----------------------------------------------


def test_one_huge_roster_cell_costs_only_its_row(tmp_path: Path) -> None:
    roster = (
        f"{ROSTER_HEADER}\n"
        "c001,Ada Test,female,1990-05-01,168,ada@example.org,no\n"
        f"c002,{'B' * 200_000},male,1985-02-01,180,ben@example.org,no\n"
    )
    book = write_book(tmp_path / "book", roster=roster)
    r = read_roster(book, today=dt.date(2026, 12, 1))
    assert [c.client_id for c in r.clients] == ["c001"]
    (p,) = [p for p in r.problems if p.code == "cell-too-long"]
    assert (p.row, p.column, p.client_id) == (3, "name", "c002")


# --- item 14: ids that differ only in case ----------------------------------------------


def test_case_only_duplicate_ids_are_duplicates(tmp_path: Path) -> None:
    roster = (
        f"{ROSTER_HEADER}\n"
        "C001,Ada Test,female,1990-05-01,168,ada@example.org,no\n"
        "c001,Ada Again,female,1990-05-01,168,ada2@example.org,no\n"
    )
    book = write_book(tmp_path / "book", roster=roster)
    r = read_roster(book, today=dt.date(2026, 12, 1))
    assert [c.client_id for c in r.clients] == ["C001"]
    (p,) = [p for p in r.problems if p.code == "duplicate-client"]
    assert p.row == 3 and '"c001"' in p.message and '"C001"' in p.message and "row 2" in p.message


# --- item 15: new-book validates ids exactly as the reader does ---------------------------


@pytest.mark.parametrize("cid", ["c001\n", "c0\n01", "c001\r", "c001\t"])
def test_new_book_refuses_ids_the_reader_refuses(tmp_path: Path, cid: str) -> None:
    from reportgen.io.roster import CLIENT_ID_RE

    assert not CLIENT_ID_RE.fullmatch(cid)
    book = tmp_path / "book"
    res = CliRunner().invoke(main, ["new-book", str(book), "--client", cid])
    assert res.exit_code != 0 and "is not allowed" in res.output
    assert not book.exists() or not any("\n" in p.name for p in book.rglob("*"))


# --- item 16: the manifest hashes the bytes that were parsed ------------------------------


def test_manifest_hashes_the_bytes_that_were_parsed(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    import hashlib

    import reportgen.batch as batch

    book = write_book(tmp_path / "book")
    log = book / "logs" / "c001.csv"
    original = hashlib.sha256(log.read_bytes()).hexdigest()
    real = batch.read_client

    def read_then_edit(*args: object, **kwargs: object) -> object:
        record = real(*args, **kwargs)  # type: ignore[arg-type]
        with log.open("a", encoding="utf-8") as fh:  # someone saves the file mid-run
            fh.write("2026-11-30,80.0,1900,8000\n")
        return record

    monkeypatch.setattr(batch, "read_client", read_then_edit)
    out = tmp_path / "out"
    result = batch.run_batch(book, "2026-11", out, workers=1, today=dt.date(2026, 12, 1))
    (outcome,) = result.outcomes
    assert outcome.inputs["logs/c001.csv"] == original
    manifest = json.loads((out / "2026-11" / "manifest.json").read_text("utf-8"))
    assert manifest["clients"]["c001"]["inputs"]["logs/c001.csv"] == original


def test_a_panic_in_the_workbook_reader_costs_only_that_file(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    import python_calamine

    class PanicException(BaseException):  # what pyo3 raises for a Rust panic
        pass

    class Exploding:
        @staticmethod
        def from_filelike(_fh: object) -> object:
            raise PanicException("index out of bounds")

    book = _two_clients(tmp_path, {})
    write_xlsx(book / "logs" / "c002.xlsx", {"daily": daily_rows()})
    (book / "logs" / "c002.csv").unlink(missing_ok=True)
    monkeypatch.setattr(python_calamine, "CalamineWorkbook", Exploding)
    rec = read_book_client(book, "c002")
    (p,) = [p for p in rec.errors if p.code == "unreadable-file"]
    assert p.file == "logs/c002.xlsx" and "PanicException" in p.message
