"""Arbitrary cell contents: only our own Problems come out, never a stray exception."""

from __future__ import annotations

import csv
import datetime as dt
import io
import math
import shutil
import tempfile
from pathlib import Path

from _io_helpers import ROSTER_HEADER, ROSTER_ROW, write_book, write_xlsx
from hypothesis import HealthCheck, example, given, settings
from hypothesis import strategies as st

from reportgen.io.book import read_client, read_roster
from reportgen.io.cells import CellError, parse_date, parse_number
from reportgen.io.daily import number_column
from reportgen.io.dates import iso_text_ordinals as _iso_text_ordinals
from reportgen.io.model import ClientRecord, InputError, Problem
from reportgen.io.problems import PROBLEM_CODES

MONTH_END = dt.date(2026, 11, 30)
TODAY = dt.date(2026, 12, 1)

TRICKY = st.sampled_from(
    [
        "",
        " ",
        "82,4",
        "82.4kg",
        "nan",
        "NaN",
        "inf",
        "-inf",
        "1e400",
        "1_000",
        "１２",
        "0x1A",
        "-0",
        "2026-11-31",
        "2026-02-29",
        "2026-11-01",
        "2026-11-01T07:30",
        "20261101",
        "2026-W45-1",
        "01/11/2026",
        "=1+1",
        '"',
        "\n",
        "\r\n",
        ";",
        "yes",
        "TRUE",
        "é",
        "\ufeff",
    ]
)
PLAUSIBLE = st.one_of(
    st.dates(min_value=dt.date(2026, 8, 1), max_value=dt.date(2026, 12, 31)).map(str),
    st.floats(min_value=-10, max_value=3000, allow_nan=False).map(lambda x: f"{x:.1f}"),
    st.integers(min_value=0, max_value=20).map(str),
)
TEXT = st.one_of(TRICKY, st.text(max_size=12), PLAUSIBLE, PLAUSIBLE)
LOG_COLUMNS = st.sampled_from(
    [
        "date",
        "Date ",
        "weight_kg",
        "weight_lb",
        "intake_kcal",
        "intake_kj",
        "steps",
        "hunger",
        "energy",
        "sleep_h",
        "notes",
        "",
        "weight_kg",
    ]
)
SKIN_COLUMNS = st.sampled_from(["date", "triceps", "chest", "abdominal", "thigh", "neck", ""])
PHASE_COLUMNS = st.sampled_from(["client_id", "name", "start", "end", "kind", "target_kcal"])
# Usually (not always) the required columns, so that most examples get past the header check.
LOG_FIRST = (
    st.sampled_from(["date", "date", " Date", "day"]),
    st.sampled_from(["weight_kg", "weight_lb", "WEIGHT_KG"]),
    st.sampled_from(["intake_kcal", "intake_kj", "kcal"]),
)
PHASE_FIRST = (st.just("client_id"), st.just("start"), st.sampled_from(["kind", "end"]))


def table(  # type: ignore[no-untyped-def]
    columns: st.SearchStrategy[str],
    cells: st.SearchStrategy[object],
    rows: int = 12,
    first: tuple[st.SearchStrategy[str], ...] = (),
):
    """A header (the ``first`` columns, then random ones) and rows of arbitrary cells."""
    return (
        st.tuples(*first, st.lists(columns, max_size=5))
        .map(lambda t: [*t[:-1], *t[-1]])
        .filter(bool)
        .flatmap(
            lambda header: st.lists(
                st.lists(cells, min_size=0, max_size=len(header) + 1), max_size=rows
            ).map(lambda body: [header, *body])
        )
    )


def to_csv(rows: list[list[object]]) -> str:
    buf = io.StringIO()
    csv.writer(buf, lineterminator="\n").writerows(rows)
    return buf.getvalue()


def check_only_our_problems(book: Path) -> None:
    try:
        roster = read_roster(book, today=TODAY)
    except InputError as exc:
        assert exc.problem.code in PROBLEM_CODES
        return
    for p in roster.problems:
        assert isinstance(p, Problem)
        assert PROBLEM_CODES[p.code][0] == p.severity, p
    for client in roster.clients:
        rec = read_client(
            book,
            client,
            roster.phases.get(client.client_id, ()),
            MONTH_END,
            TODAY,
            roster_problems=roster.problems,
        )
        assert isinstance(rec, ClientRecord)
        for p in rec.problems:
            assert PROBLEM_CODES[p.code][0] == p.severity, p
            assert p.message
        n = rec.log.n_days
        assert rec.log.weight_kg.shape == rec.log.weight_outlier.shape == (n,)
        assert all(d <= MONTH_END for d, _ in rec.outliers)


FAST = settings(
    max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)


@FAST
@given(
    log=table(LOG_COLUMNS, TEXT, rows=20, first=LOG_FIRST),
    skin=table(SKIN_COLUMNS, TEXT, first=(st.just("date"),)),
    phases=table(PHASE_COLUMNS, st.one_of(st.just("c001"), TEXT), rows=5, first=PHASE_FIRST),
)
def test_arbitrary_csv_cells(log: list, skin: list, phases: list) -> None:  # type: ignore[type-arg]
    with tempfile.TemporaryDirectory() as tmp:
        book = write_book(
            Path(tmp) / "book",
            logs={"c001.csv": to_csv(log)},
            skinfolds={"c001.csv": to_csv(skin)},
            phases=to_csv(phases),
        )
        check_only_our_problems(book)


@FAST
@given(roster=table(st.sampled_from([*ROSTER_HEADER.split(","), "height_in", "x"]), TEXT, 6))
def test_arbitrary_roster_cells(roster: list) -> None:  # type: ignore[type-arg]
    with tempfile.TemporaryDirectory() as tmp:
        book = write_book(Path(tmp) / "book", roster=to_csv(roster))
        check_only_our_problems(book)


@settings(max_examples=40, deadline=None)
@given(data=st.binary(max_size=300))
def test_arbitrary_bytes_as_log_and_workbook(data: bytes) -> None:
    with tempfile.TemporaryDirectory() as tmp:
        book = write_book(
            Path(tmp) / "book", logs={"c001.csv": b"date,weight_kg,intake_kcal\n" + data}
        )
        check_only_our_problems(book)
        (book / "logs" / "c001.csv").unlink()
        (book / "logs" / "c001.xlsx").write_bytes(b"PK\x03\x04" + data)
        check_only_our_problems(book)


# openpyxl refuses control characters in strings, so the workbook cells use printable text.
XLSX_TEXT = st.one_of(
    TRICKY.filter(lambda s: s.isprintable()),
    st.text(st.characters(blacklist_categories=("Cc", "Cs")), max_size=10),
)
XLSX_CELL = st.one_of(
    XLSX_TEXT,
    PLAUSIBLE,
    st.floats(min_value=20, max_value=200),
    st.dates(min_value=dt.date(2026, 8, 1), max_value=dt.date(2026, 12, 31)),
    st.none(),
    st.booleans(),
    st.integers(min_value=-(10**6), max_value=10**6),
    st.floats(allow_nan=False, allow_infinity=False),
    st.dates(min_value=dt.date(1905, 1, 1), max_value=dt.date(2100, 1, 1)),
    st.datetimes(min_value=dt.datetime(1905, 1, 1), max_value=dt.datetime(2100, 1, 1)),
)


@settings(max_examples=25, deadline=None)
@given(
    daily=table(LOG_COLUMNS, XLSX_CELL, rows=15, first=LOG_FIRST),
    skin=table(SKIN_COLUMNS, XLSX_CELL, rows=6, first=(st.just("date"),)),
    phases=table(
        st.sampled_from(["name", "start", "end", "kind", "target_kcal"]),
        XLSX_CELL,
        4,
        first=(st.just("start"), st.just("kind")),
    ),
    epoch_1904=st.booleans(),
)
def test_arbitrary_xlsx_cells(daily: list, skin: list, phases: list, epoch_1904: bool) -> None:  # type: ignore[type-arg]
    with tempfile.TemporaryDirectory() as tmp:
        book = write_book(Path(tmp) / "book", roster=f"{ROSTER_HEADER}\n{ROSTER_ROW}\n", logs={})
        write_xlsx(
            book / "logs" / "c001.xlsx",
            {"daily": daily, "skinfolds": skin, "phases": phases},
            epoch_1904=epoch_1904,
        )
        check_only_our_problems(book)
        shutil.rmtree(book)


def _one_by_one(parse, cells, column):  # type: ignore[no-untyped-def]
    out, bad = [], []
    for i, c in enumerate(cells):
        try:
            out.append(parse(c, column))
        except CellError:
            out.append(None)
            bad.append(i)
    return out, bad


@settings(max_examples=150, deadline=None)
@given(
    cells=st.one_of(
        st.lists(TEXT, max_size=30),
        st.lists(st.one_of(XLSX_CELL, st.integers(), st.booleans()), max_size=30),
    )
)
@example(cells=["0\x00"])  # numpy drops a trailing NUL: must still be a bad number
def test_fast_number_column_agrees_with_cell_parser(cells: list) -> None:  # type: ignore[type-arg]
    values, errors = number_column(cells, "weight_kg")
    expected, bad = _one_by_one(parse_number, cells, "weight_kg")
    assert [i for i, _ in errors] == bad
    for got, want in zip(values.tolist(), expected, strict=True):
        assert (want is None and math.isnan(got)) or got == want


ISO_ISH = st.one_of(
    st.dates().map(str),
    st.from_regex(r"\A[0-9]{4}-[0-9]{2}-[0-9]{2}\Z"),
    TEXT,
)


@settings(max_examples=150, deadline=None)
@given(cells=st.lists(ISO_ISH, min_size=1, max_size=30))
def test_fast_date_column_agrees_with_cell_parser(cells: list[str]) -> None:
    fast = _iso_text_ordinals(cells)
    expected, bad = _one_by_one(parse_date, cells, "date")
    if fast is not None:
        assert bad == []
        assert fast.tolist() == [d.toordinal() for d in expected]
