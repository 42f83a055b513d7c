"""`reportgen new-book`: layout, header comments, validation, units, refusals, add-client."""

from __future__ import annotations

import datetime as dt
import zipfile
from pathlib import Path

import openpyxl
import pytest
from _scaffold_helpers import tree_hashes
from click.testing import CliRunner

from reportgen.cli import main
from reportgen.io import limits
from reportgen.io.units import KG_PER_LB
from reportgen.scaffold import (
    ScaffoldError,
    add_client,
    book_units,
    new_book,
    workbook_bytes,
)


def _validations(ws: openpyxl.worksheet.worksheet.Worksheet) -> dict[str, object]:
    """Header name -> the data validation covering that column's data rows."""
    header = {c.column_letter: c.value for c in ws[1]}
    out = {}
    for dv in ws.data_validations.dataValidation:
        for rng in dv.sqref.ranges:
            letter = rng.coord.split(":")[0].rstrip("0123456789")
            assert rng.coord == f"{letter}2:{letter}1048576"  # every row below the header
            out[header[letter]] = dv
    return out


def test_new_book_layout(tmp_path: Path) -> None:
    book = tmp_path / "book"
    written = new_book(book, ["c001", "anna-b_2"])
    rel = sorted(p.relative_to(book).as_posix() for p in written)
    assert rel == ["clients.xlsx", "logs/anna-b_2.xlsx", "logs/c001.xlsx", "phases.csv"]
    assert sorted(p.relative_to(book).as_posix() for p in book.rglob("*") if p.is_file()) == rel
    assert (book / "phases.csv").read_text() == "client_id,name,start,end,kind,target_kcal\n"
    roster = openpyxl.load_workbook(book / "clients.xlsx")
    assert roster.sheetnames == ["clients"]
    ws = roster["clients"]
    assert [c.value for c in ws[1]] == [
        "client_id", "name", "sex", "birth_date", "height_cm", "email", "pregnant",
        "goal_weight_kg",
    ]  # fmt: skip
    assert [ws.cell(row=r, column=1).value for r in (2, 3, 4)] == ["c001", "anna-b_2", None]
    log = openpyxl.load_workbook(book / "logs" / "c001.xlsx")
    assert log.sheetnames == ["daily", "skinfolds", "phases"]
    assert [c.value for c in log["daily"][1]] == [
        "date", "weight_kg", "intake_kcal", "steps", "hunger", "energy", "sleep_h",
    ]  # fmt: skip
    assert [c.value for c in log["skinfolds"][1]] == [
        "date", "chest", "abdominal", "thigh", "triceps", "subscapular", "suprailiac",
        "midaxillary", "biceps",
    ]  # fmt: skip
    assert [c.value for c in log["phases"][1]] == ["name", "start", "end", "kind", "target_kcal"]


@pytest.mark.parametrize(
    ("units", "energy", "weight", "intake", "height", "goal"),
    [
        ("metric", "kcal", "weight_kg", "intake_kcal", "height_cm", "goal_weight_kg"),
        ("metric", "kJ", "weight_kg", "intake_kj", "height_cm", "goal_weight_kg"),
        ("imperial", "kcal", "weight_lb", "intake_kcal", "height_in", "goal_weight_lb"),
        ("imperial", "kJ", "weight_lb", "intake_kj", "height_in", "goal_weight_lb"),
    ],
)
def test_units_are_reflected_in_column_names(
    tmp_path: Path, units: str, energy: str, weight: str, intake: str, height: str, goal: str
) -> None:
    book = tmp_path / "book"
    new_book(book, ["c1"], units=units, energy=energy)  # type: ignore[arg-type]
    daily = [c.value for c in openpyxl.load_workbook(book / "logs" / "c1.xlsx")["daily"][1]]
    assert daily[1:3] == [weight, intake]
    roster = [c.value for c in openpyxl.load_workbook(book / "clients.xlsx")["clients"][1]]
    assert height in roster and goal in roster
    assert book_units(book) == units


def test_every_header_has_a_comment_with_its_unit(tmp_path: Path) -> None:
    new_book(tmp_path / "b", ["c1"], units="imperial", energy="kJ")
    wb = openpyxl.load_workbook(tmp_path / "b" / "logs" / "c1.xlsx")
    for ws in wb.worksheets:
        for cell in ws[1]:
            assert cell.comment is not None and len(cell.comment.text) > 20, cell.value
    daily = {c.value: c.comment.text for c in wb["daily"][1]}
    assert "pounds (lb)" in daily["weight_lb"]
    assert "kilojoules (kJ)" in daily["intake_kj"]
    assert "hours (h)" in daily["sleep_h"]
    assert "millimetres (mm)" in {c.value: c.comment.text for c in wb["skinfolds"][1]}["thigh"]
    roster = openpyxl.load_workbook(tmp_path / "b" / "clients.xlsx")["clients"]
    assert "inches (in)" in {c.value: c.comment.text for c in roster[1]}["height_in"]


def test_frozen_headers_and_date_formatted_columns(tmp_path: Path) -> None:
    new_book(tmp_path / "b", ["c1"])
    for path in (tmp_path / "b" / "logs" / "c1.xlsx", tmp_path / "b" / "clients.xlsx"):
        for ws in openpyxl.load_workbook(path).worksheets:
            assert ws.freeze_panes == "A2"
            for cell in ws[1]:
                if cell.value in ("date", "start", "end", "birth_date"):
                    fmt = ws.column_dimensions[cell.column_letter].number_format
                    assert fmt == "yyyy-mm-dd", (ws.title, cell.value)


def test_data_validation_matches_reader_limits(tmp_path: Path) -> None:
    new_book(tmp_path / "b", ["c1"])
    wb = openpyxl.load_workbook(tmp_path / "b" / "logs" / "c1.xlsx")
    daily = _validations(wb["daily"])

    def bounds(dv: object) -> tuple[str, str, str]:
        return dv.type, dv.formula1, dv.formula2  # type: ignore[attr-defined]

    assert bounds(daily["weight_kg"]) == ("decimal", *(f"{v:g}" for v in limits.WEIGHT_KG))
    assert bounds(daily["intake_kcal"]) == ("decimal", *(f"{v:g}" for v in limits.INTAKE_KCAL))
    assert bounds(daily["hunger"]) == ("whole", "1", "10")
    assert bounds(daily["energy"]) == ("whole", "1", "10")
    assert bounds(daily["steps"]) == ("whole", "0", f"{limits.STEPS[1]:g}")
    assert bounds(daily["sleep_h"]) == ("decimal", "0", "24")
    assert daily["date"].type == "date"  # type: ignore[attr-defined]
    for dv in daily.values():
        assert dv.showErrorMessage and dv.allow_blank and dv.error  # type: ignore[attr-defined]
    skin = _validations(wb["skinfolds"])
    assert set(skin) == {"date", *[c.value for c in wb["skinfolds"][1]][1:]}
    assert bounds(skin["triceps"]) == ("decimal", *(f"{v:g}" for v in limits.SKINFOLD_MM))
    phases = _validations(wb["phases"])
    assert phases["kind"].type == "list"  # type: ignore[attr-defined]
    assert phases["kind"].formula1 == '"deficit,maintenance,surplus,break"'  # type: ignore[attr-defined]
    roster = _validations(openpyxl.load_workbook(tmp_path / "b" / "clients.xlsx")["clients"])
    assert roster["sex"].formula1 == '"female,male"'  # type: ignore[attr-defined]
    assert roster["pregnant"].formula1 == '"yes,no"'  # type: ignore[attr-defined]
    assert bounds(roster["height_cm"]) == ("decimal", *(f"{v:g}" for v in limits.HEIGHT_CM))


def test_imperial_limits_are_the_reader_limits_converted(tmp_path: Path) -> None:
    new_book(tmp_path / "b", ["c1"], units="imperial", energy="kJ")
    daily = _validations(openpyxl.load_workbook(tmp_path / "b" / "logs" / "c1.xlsx")["daily"])
    lo, hi = (float(daily["weight_lb"].formula1), float(daily["weight_lb"].formula2))  # type: ignore[attr-defined]
    # 1 lb = 0.45359237 kg exactly (1959 agreement); bounds rounded inwards to 0.1 lb, so
    # Excel never accepts a weight the reader refuses.
    assert limits.WEIGHT_KG[0] <= lo * KG_PER_LB < limits.WEIGHT_KG[0] + 0.1 * KG_PER_LB
    assert limits.WEIGHT_KG[1] - 0.1 * KG_PER_LB < hi * KG_PER_LB <= limits.WEIGHT_KG[1]
    assert (lo, hi) == (55.2, 771.6)
    # 1 kcal = 4.184 kJ (thermochemical calorie): 15000 kcal = 62760 kJ.
    assert float(daily["intake_kj"].formula2) == 62760  # type: ignore[attr-defined]
    roster = _validations(openpyxl.load_workbook(tmp_path / "b" / "clients.xlsx")["clients"])
    # 1 in = 2.54 cm exactly: 100-250 cm = 39.37-98.43 in, rounded inwards.
    assert (roster["height_in"].formula1, roster["height_in"].formula2) == ("39.4", "98.4")  # type: ignore[attr-defined]


def test_scaffold_is_reproducible(tmp_path: Path) -> None:
    new_book(tmp_path / "a", ["c1", "c2"])
    new_book(tmp_path / "b", ["c1", "c2"])
    assert tree_hashes(tmp_path / "a") == tree_hashes(tmp_path / "b")
    # Nothing in the files depends on the clock: zip entry times and the document's
    # created/modified stamps are all the one fixed instant.
    for path in (tmp_path / "a").rglob("*.xlsx"):
        with zipfile.ZipFile(path) as z:
            assert {i.date_time for i in z.infolist()} == {(2026, 1, 1, 0, 0, 0)}
            core = z.read("docProps/core.xml").decode()
        assert core.count("2026-01-01T00:00:00Z") == 2, core
    wb = openpyxl.Workbook()
    assert workbook_bytes(wb) == workbook_bytes(wb)


def test_refuses_to_overwrite_a_book(tmp_path: Path) -> None:
    book = tmp_path / "book"
    new_book(book, ["c1"])
    before = tree_hashes(book)
    with pytest.raises(ScaffoldError, match=r"already holds a client book \(clients.xlsx"):
        new_book(book, ["c1"])
    assert tree_hashes(book) == before
    (tmp_path / "other").mkdir()
    (tmp_path / "other" / "notes.txt").write_text("mine")
    with pytest.raises(ScaffoldError, match="is not empty; nothing was changed"):
        new_book(tmp_path / "other", ["c1"])
    assert sorted(p.name for p in (tmp_path / "other").iterdir()) == ["notes.txt"]
    (tmp_path / "empty").mkdir()
    new_book(tmp_path / "empty")  # an empty folder is fine
    assert (tmp_path / "empty" / "clients.xlsx").is_file()


@pytest.mark.parametrize(
    ("ids", "message"),
    [
        (["c 1"], r'client id "c 1" is not allowed: use letters, digits, - and _'),
        (["x" * 41], r"at most 40 characters"),
        (["c1", "C1"], r'client id "C1" is given twice'),
        (["../evil"], r'client id "../evil" is not allowed'),
    ],
)
def test_bad_client_ids_are_refused(tmp_path: Path, ids: list[str], message: str) -> None:
    with pytest.raises(ScaffoldError, match=message):
        new_book(tmp_path / "b", ids)
    assert not (tmp_path / "b").exists()


def test_add_client_touches_no_other_file(tmp_path: Path) -> None:
    book = tmp_path / "book"
    new_book(book, ["c1"], units="imperial")
    before = {p: (p.read_bytes(), p.stat().st_mtime_ns) for p in book.rglob("*") if p.is_file()}
    path = add_client(book, "c2")
    assert path == book / "logs" / "c2.xlsx"
    after = {p: (p.read_bytes(), p.stat().st_mtime_ns) for p in book.rglob("*") if p.is_file()}
    assert set(after) - set(before) == {path}
    assert all(after[p] == before[p] for p in before)
    # Units follow the book's roster unless given.
    header = [c.value for c in openpyxl.load_workbook(path)["daily"][1]]
    assert header[1] == "weight_lb"
    metric = add_client(book, "c3", units="metric", energy="kJ")
    assert [c.value for c in openpyxl.load_workbook(metric)["daily"][1]][1:3] == [
        "weight_kg",
        "intake_kj",
    ]


def test_add_client_refusals(tmp_path: Path) -> None:
    book = tmp_path / "book"
    new_book(book, ["c1"])
    with pytest.raises(ScaffoldError, match=r"logs/c1.xlsx already exists; nothing was changed"):
        add_client(book, "c1")
    (book / "logs" / "c9.csv").write_text("date,weight_kg\n")
    with pytest.raises(ScaffoldError, match=r"logs/c9.csv already exists"):
        add_client(book, "C9")
    with pytest.raises(ScaffoldError, match=r"is not a client book \(no clients.xlsx"):
        add_client(tmp_path / "nowhere", "c2")
    with pytest.raises(ScaffoldError, match=r'client id "a/b" is not allowed'):
        add_client(book, "a/b")


def test_add_client_to_a_csv_roster_book(sample_book: Path) -> None:
    before = tree_hashes(sample_book)
    path = add_client(sample_book, "c018")
    after = tree_hashes(sample_book)
    assert set(after) - set(before) == {"logs/c018.xlsx"}
    assert all(after[k] == before[k] for k in before)
    assert path.is_file()


def test_cli_new_book_and_add_client(tmp_path: Path) -> None:
    runner = CliRunner()
    book = tmp_path / "book"
    r = runner.invoke(
        main,
        ["new-book", str(book), "--client", "c1", "--client", "c2", "--energy", "kJ"],
        catch_exceptions=False,
    )
    assert r.exit_code == 0, r.output
    assert f"wrote {book / 'logs' / 'c2.xlsx'}" in r.output
    assert "reportgen check" in r.output
    header = [c.value for c in openpyxl.load_workbook(book / "logs" / "c1.xlsx")["daily"][1]]
    assert header[2] == "intake_kj"
    r = runner.invoke(main, ["new-book", str(book), "--client", "c3"])
    assert r.exit_code == 1
    assert "already holds a client book" in r.output and "--add-client" in r.output
    r = runner.invoke(main, ["new-book", str(book), "--add-client", "c3"], catch_exceptions=False)
    assert r.exit_code == 0, r.output
    assert "add a row for each new client to the roster" in r.output
    assert (book / "logs" / "c3.xlsx").is_file()
    r = runner.invoke(main, ["new-book", str(book), "--client", "c4", "--add-client", "c5"])
    assert r.exit_code == 1 and "not both" in r.output
    r = runner.invoke(main, ["new-book", str(book), "--units", "furlongs"])
    assert r.exit_code == 2 and "furlongs" in r.output


def test_cli_help_texts() -> None:
    runner = CliRunner()
    for args in (["new-book"], ["settings"], ["settings", "write"], ["settings", "check"]):
        r = runner.invoke(main, [*args, "--help"], catch_exceptions=False)
        assert r.exit_code == 0
        assert len(r.output.split("Options:")[0].strip().splitlines()) >= 3, args


def test_scaffolded_dates_accept_the_contract_range(tmp_path: Path) -> None:
    new_book(tmp_path / "b", ["c1"])
    dv = _validations(openpyxl.load_workbook(tmp_path / "b" / "logs" / "c1.xlsx")["daily"])["date"]
    # Excel 1900 date system: serial 1 = 1900-01-01 with the fictitious 1900-02-29, so
    # serials from 61 (1900-03-01) on are days since 1899-12-30 (from memory, Excel docs).
    epoch = dt.date(1899, 12, 30)
    lo = epoch + dt.timedelta(days=int(dv.formula1))  # type: ignore[attr-defined]
    hi = epoch + dt.timedelta(days=int(dv.formula2))  # type: ignore[attr-defined]
    assert lo == dt.date(1900, 3, 1) and hi == dt.date(2099, 12, 31)
