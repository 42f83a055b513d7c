"""Books as coaches keep them: headers with units, day-first dates, date-times with several
weigh-ins a day, .ods/.xlsm logs, scale body-fat readings, weight-only clients, no phases.

One invented book (written with the csv module, openpyxl and pandas' odfpy writer) holds the
same invented log several times, each written differently; ``check`` and ``batch`` run on it
through click's runner, and every variant must give the summary of the plain canonical log.
The exact conversions are the unit definitions in :mod:`reportgen.io.units` (the 1959
international pound, the thermochemical calorie).
"""

from __future__ import annotations

import csv
import datetime as dt
import json
import re
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
from pypdf import PdfReader

from reportgen.cli import main
from reportgen.io.units import KCAL_PER_KJ, KG_PER_LB

START = dt.date(2026, 9, 1)
DAYS = 91  # to 2026-11-30
TODAY = "2026-12-01"
NAMES = {
    "c000": "Plain Canonical",
    "c001": "Unit Headers",
    "c002": "Pounds Kilojoules Dayfirst",
    "c003": "Open Document",
    "c004": "Scale Export",
    "c005": "Weight Only",
}


def _base() -> list[list[object]]:
    return daily_rows(start=START, days=DAYS)


def _roster(ids: list[str]) -> str:
    lines = [ROSTER_HEADER] + [
        f"{cid},{NAMES.get(cid, 'Test Client')},female,1990-05-01,168,,no" for cid in ids
    ]
    return "\n".join(lines) + "\n"


def _phases(ids: list[str]) -> str:
    rows = ["client_id,name,start,end,kind"] + [f"{c},Autumn cut,{START},,deficit" for c in ids]
    return "\n".join(rows) + "\n"


def _unit_headers() -> str:
    rows = _base()
    return csv_text([["Date", "Weight (kg)", "Calories (kcal)", "Steps"], *rows[1:]])


def _pounds_kilojoules_day_first() -> str:
    out: list[list[object]] = [["Date", "Body weight (lbs)", "Energy (kJ)", "Steps"]]
    for d, w, kcal, steps in _base()[1:]:
        day = dt.date.fromisoformat(str(d)).strftime("%d/%m/%Y")
        out.append(
            [day, f"{float(str(w)) / KG_PER_LB:.3f}", f"{float(str(kcal)) * 4.184:.1f}", steps]
        )
    return csv_text(out)


def _ods(path: Path) -> None:
    import pandas as pd

    rows = _base()
    frame = pd.DataFrame(
        {
            "date": [dt.date.fromisoformat(str(r[0])) for r in rows[1:]],
            "weight_kg": [float(str(r[1])) for r in rows[1:]],
            "intake_kcal": [float(str(r[2])) for r in rows[1:]],
            "steps": [float(str(r[3])) for r in rows[1:]],
        }
    )
    with pd.ExcelWriter(path, engine="odf") as writer:
        frame.to_excel(writer, sheet_name="daily", index=False)


def _scale_export(path: Path) -> None:
    """Date-times; every fifth day an evening weigh-in 1.2 kg heavier (to be ignored)."""
    out: list[list[object]] = [["Date", "Weight (kg)", "Body fat (%)", "Calories (kcal)", "Steps"]]
    for i, (d, w, kcal, steps) in enumerate(_base()[1:]):
        day = dt.date.fromisoformat(str(d))
        morning = dt.datetime.combine(day, dt.time(7, 10))
        out.append([morning, float(str(w)), round(31.0 - 0.02 * i, 2), kcal, steps])
        if i % 5 == 0:
            evening = dt.datetime.combine(day, dt.time(19, 30))
            out.append([evening, float(str(w)) + 1.2, round(30.0 - 0.02 * i, 2), None, None])
    write_xlsx(path, {"daily": out})


def _weight_only() -> str:
    return csv_text([["date", "weight_kg"], *[r[:2] for r in _base()[1:]]])


@pytest.fixture(scope="module")
def variation_book(tmp_path_factory: pytest.TempPathFactory) -> Path:
    root = tmp_path_factory.mktemp("variations") / "book"
    ids = list(NAMES)
    book = write_book(
        root,
        roster=_roster(ids),
        logs={
            "c000.csv": csv_text(_base()),
            "c001.csv": _unit_headers(),
            "c002.csv": _pounds_kilojoules_day_first(),
            "c005.csv": _weight_only(),
        },
        phases=_phases(ids),
    )
    _ods(book / "logs" / "c003.ods")
    _scale_export(book / "logs" / "c004.xlsm")
    return book


@pytest.fixture(scope="module")
def batch_run(variation_book: Path, tmp_path_factory: pytest.TempPathFactory) -> Path:
    out = tmp_path_factory.mktemp("variations_out")
    result = CliRunner().invoke(
        main,
        ["batch", str(variation_book), "--month", "2026-11", "--out", str(out), "--workers", "1"],
        catch_exceptions=False,
    )
    assert result.exit_code == 0, result.output
    return out / "2026-11"


def _summary(month_dir: Path) -> dict[str, dict[str, str]]:
    with (month_dir / "summary.csv").open(encoding="utf-8", newline="") as f:
        return {r["client_id"]: r for r in csv.DictReader(f)}


def _check(*args: str) -> tuple[int, dict[str, object]]:
    result = CliRunner().invoke(main, ["check", *args, "--json"], catch_exceptions=False)
    return result.exit_code, json.loads(result.stdout)


def test_check_says_once_per_file_how_each_variation_was_read(variation_book: Path) -> None:
    code, data = _check(str(variation_book), "--month", "2026-11", "--today", TODAY)
    assert code == 0
    problems = data["problems"]
    assert isinstance(problems, list)
    notes = sorted((p["client_id"], p["code"], p["message"]) for p in problems)
    assert notes == [
        (
            "c001",
            "header-read-as",
            'logs/c001.csv: read "Weight (kg)" as weight_kg, "Calories (kcal)" as intake_kcal',
        ),
        (
            "c002",
            "date-order",
            "logs/c002.csv: Date read as day-first (DD/MM/YYYY): "
            '"13/09/2026" can only be read that way',
        ),
        (
            "c002",
            "header-read-as",
            'logs/c002.csv: read "Body weight (lbs)" as weight_lb, "Energy (kJ)" as intake_kj',
        ),
        (
            "c004",
            "header-read-as",
            'logs/c004.xlsm (sheet daily): read "Weight (kg)" as '
            'weight_kg, "Body fat (%)" as body_fat_pct, "Calories (kcal)" as intake_kcal',
        ),
        (
            "c004",
            "several-weigh-ins",
            "logs/c004.xlsm (sheet daily): 19 days had more than "
            "one weigh-in; the first of each day is used (the usual morning weigh-in)",
        ),
    ]
    assert data["errors"] == 0 and data["warnings"] == 0 and data["notes"] == 5


def test_every_variant_gives_the_canonical_logs_summary(batch_run: Path) -> None:
    rows = _summary(batch_run)
    assert set(rows) == set(NAMES)
    ref = rows["c000"]
    numeric = ("trend_start_kg", "trend_end_kg", "trend_change_kg", "rate_pct_per_week")
    for cid in ("c001", "c002", "c003", "c004"):
        for key in (*numeric, "mean_intake_kcal", "observed_tdee_kcal", "weight_days"):
            # c002 is written in lb (3 decimals) and kJ (1 decimal): 0.0005 lb = 0.0002 kg
            # and 0.05 kJ = 0.012 kcal per value; the summary's rounding is coarser still.
            assert float(rows[cid][key]) == pytest.approx(float(ref[key]), abs=0.051), (cid, key)


def test_headers_with_units_are_the_canonical_columns(variation_book: Path) -> None:
    plain = read_book_client(variation_book, "c000", dt.date(2026, 11, 30))
    for cid in ("c001", "c002", "c003"):
        rec = read_book_client(variation_book, cid, dt.date(2026, 11, 30))
        assert rec.ok, rec.problems
        assert rec.log.n_days == DAYS
        # lb -> kg with the 1959 pound and kJ -> kcal with the thermochemical calorie
        assert rec.log.weight_kg == pytest.approx(plain.log.weight_kg, abs=0.0005)
        assert rec.log.intake_kcal == pytest.approx(plain.log.intake_kcal, abs=0.05 * KCAL_PER_KJ)


def test_scale_export_uses_the_first_weigh_in_of_each_day(variation_book: Path) -> None:
    plain = read_book_client(variation_book, "c000", dt.date(2026, 11, 30))
    rec = read_book_client(variation_book, "c004", dt.date(2026, 11, 30))
    assert rec.log.n_days == DAYS
    assert rec.log.weight_kg == pytest.approx(plain.log.weight_kg, abs=1e-9)
    # the morning reading of the scale, never the evening one (30.0 - 0.02 i)
    assert rec.log.body_fat_pct[0] == pytest.approx(31.0, abs=1e-9)
    assert rec.log.body_fat_pct[5] == pytest.approx(31.0 - 0.1, abs=1e-9)
    # the body-fat reading stays apart from intake and skinfolds
    assert rec.skinfolds == ()
    assert rec.log.intake_kcal == pytest.approx(plain.log.intake_kcal, abs=1e-9)


def test_weight_only_client_is_read_and_reported(variation_book: Path, batch_run: Path) -> None:
    rec = read_book_client(variation_book, "c005", dt.date(2026, 11, 30))
    assert rec.ok, rec.problems
    assert not rec.log.has_intake
    row = _summary(batch_run)["c005"]
    ref = _summary(batch_run)["c000"]
    assert float(row["trend_end_kg"]) == pytest.approx(float(ref["trend_end_kg"]), abs=0.051)
    assert row["intake_days"] == "0"
    # the realised deficit comes from the weight trend alone; expenditure needs intake
    for key in ("mean_intake_kcal", "observed_tdee_kcal", "adaptation_kcal"):
        assert row[key] == "", key
    assert (batch_run / "c005.pdf").is_file()
    # the words say why expenditure is missing: no intake at all, not "a few more weeks"
    page1 = " ".join(PdfReader(batch_run / "c005.pdf").pages[0].extract_text().split())
    assert "they need logged intake, and none is logged" in page1
    assert "more weeks of weigh-ins and intake" not in page1


# ------------------------------------------------------------------ headers (refusals)


def _one_log(tmp_path: Path, header: list[str], config: str | None = None) -> tuple[int, dict]:
    rows = _base()
    book = write_book(tmp_path / "book", logs={"c001.csv": csv_text([header, *rows[1:]])})
    args = [str(book), "--month", "2026-11", "--today", TODAY]
    if config is not None:
        (tmp_path / "practice.toml").write_text(config, encoding="utf-8")
        args += ["--config", str(tmp_path / "practice.toml")]
    return _check(*args)


def test_weight_without_unit_is_one_error_naming_both_choices(tmp_path: Path) -> None:
    code, data = _one_log(tmp_path, ["date", "Weight", "intake_kcal", "steps"])
    assert code == 1
    (p,) = data["problems"]
    assert p["code"] == "ambiguous-column"
    assert p["message"] == (
        'column "Weight" in logs/c001.csv could be "weight_kg" or "weight_lb"; write the unit '
        'in the header (e.g. "Weight (kg)") or use one of those names'
    )


def test_unknown_header_close_to_a_known_one_gets_did_you_mean(tmp_path: Path) -> None:
    code, data = _one_log(tmp_path, ["date", "weight_kg", "intake_kcal", "stpes"])
    assert code == 0
    (p,) = data["problems"]
    assert p["code"] == "unknown-column"
    assert p["message"] == (
        'column "stpes" in logs/c001.csv is not one reportgen uses; it is ignored '
        '(did you mean "steps"?)'
    )


# ------------------------------------------------------------------ dates


def _dated_log(tmp_path: Path, fmt: str, config: str | None = None) -> tuple[int, dict]:
    rows = _base()
    out = [["date", "weight_kg", "intake_kcal", "steps"]]
    for d, *rest in rows[1:]:
        out.append([dt.date.fromisoformat(str(d)).strftime(fmt), *rest])
    book = write_book(tmp_path / "book", logs={"c001.csv": csv_text(out)})
    args = [str(book), "--month", "2026-11", "--today", TODAY]
    if config is not None:
        (tmp_path / "practice.toml").write_text(config, encoding="utf-8")
        args += ["--config", str(tmp_path / "practice.toml")]
    return _check(*args)


def test_month_first_dates_are_decided_from_the_values(tmp_path: Path) -> None:
    code, data = _dated_log(tmp_path, "%m/%d/%Y")
    assert code == 0
    (p,) = data["problems"]
    assert p["message"] == (
        'logs/c001.csv: date read as month-first (MM/DD/YYYY): "09/13/2026" can only be read '
        "that way"
    )


def test_undecidable_dates_are_one_error_with_the_setting_to_use(tmp_path: Path) -> None:
    rows = _base()
    first_twelve = [r for r in rows[1:] if int(str(r[0])[8:10]) <= 12]  # days 1-12 only
    out = [["date", "weight_kg", "intake_kcal", "steps"]]
    out += [[dt.date.fromisoformat(str(r[0])).strftime("%d.%m.%Y"), *r[1:]] for r in first_twelve]
    book = write_book(tmp_path / "book", logs={"c001.csv": csv_text(out)})
    code, data = _check(str(book), "--month", "2026-11", "--today", TODAY)
    assert code == 1
    assert [p["code"] for p in data["problems"]] == ["no-data", "ambiguous-dates"]
    p = data["problems"][1]
    assert p["row"] == 2
    assert p["message"] == (
        "logs/c001.csv: no date in date shows whether dates are day-first or month-first "
        '("01.09.2026" could be either, and no day is above 12); add date_order = "day-first" '
        '(or "month-first") under [book] in the configuration file, or write the dates as '
        "YYYY-MM-DD"
    )
    config = tmp_path / "practice.toml"
    config.write_text('[book]\ndate_order = "day-first"\n', encoding="utf-8")
    code, data = _check(str(book), "--month", "2026-11", "--today", TODAY, "--config", str(config))
    assert code == 0
    (p,) = [p for p in data["problems"] if p["code"] != "gap"]  # days 13-31 are not logged
    assert p["code"] == "date-order"
    assert "the [book] date_order setting" in str(p["message"])
    rec_days = read_book_client(book, "c001", dt.date(2026, 11, 30))  # no setting: refused
    assert not rec_days.ok


def test_seventy_bad_dates_are_one_message_with_count_and_first_rows(tmp_path: Path) -> None:
    code, data = _dated_log(tmp_path, "%d %B %Y")  # "01 September 2026": not a date we read
    assert code == 1
    assert [p["code"] for p in data["problems"]] == ["no-data", "bad-date"]
    p = data["problems"][1]
    assert p["code"] == "bad-date" and p["row"] == 2 and p["column"] == "date"
    assert p["message"] == (
        "91 cells in column date have this problem (rows 2, 3, 4, 5, 6, …); the first: "
        'date "01 September 2026" is not a date; write dates as YYYY-MM-DD (e.g. 2026-11-03) '
        "or format the cell as a date"
    )


def test_midnight_date_times_are_plain_dates() -> None:
    """Date cells delivered as date-times at 00:00 are dates, not weigh-in times."""
    from reportgen.io.dates import parse_date_column

    days = [dt.datetime(2026, 11, 1), dt.datetime(2026, 11, 2), dt.datetime(2026, 11, 2)]
    col = parse_date_column(days, "date", "logs/c001.xlsx")
    assert not col.has_times
    assert col.ords.tolist() == [d.toordinal() for d in days]
    timed = parse_date_column([*days[:2], dt.datetime(2026, 11, 2, 7, 5)], "date", "x")
    assert timed.has_times
    assert timed.minutes[2] == pytest.approx(7 * 60 + 5, abs=1e-9)


def test_mixed_day_first_and_month_first_is_refused(tmp_path: Path) -> None:
    rows = _base()
    out = [["date", "weight_kg", "intake_kcal", "steps"]]
    for i, (d, *rest) in enumerate(rows[1:]):
        fmt = "%d/%m/%Y" if i < 45 else "%m/%d/%Y"
        out.append([dt.date.fromisoformat(str(d)).strftime(fmt), *rest])
    book = write_book(tmp_path / "book", logs={"c001.csv": csv_text(out)})
    code, data = _check(str(book), "--month", "2026-11", "--today", TODAY)
    assert code == 1
    codes = [p["code"] for p in data["problems"]]
    assert codes == ["no-data", "ambiguous-dates"]  # one message for 91 dates
    assert re.match(
        r'logs/c001.csv: date mixes day-first dates \("13/09/2026"\) and month-first dates '
        r'\("10/16/2026"\)',
        str(data["problems"][1]["message"]),
    )


def test_bad_date_order_setting_is_refused(tmp_path: Path) -> None:
    book = write_book(tmp_path / "book")
    config = tmp_path / "practice.toml"
    config.write_text('[book]\ndate_order = "year-first"\n', encoding="utf-8")
    result = CliRunner().invoke(main, ["check", str(book), "--config", str(config)])
    assert result.exit_code == 2
    assert (
        "[book] date_order = 'year-first' is not allowed; use one of: auto, day-first, "
        "month-first" in result.output
    )


# ------------------------------------------------------------------ file types


def test_unsupported_file_is_named_first(tmp_path: Path) -> None:
    book = write_book(tmp_path / "book", logs={"c001.numbers": b"PK\x03\x04"})
    code, data = _check(str(book), "--month", "2026-11", "--today", TODAY)
    assert code == 1
    (p,) = data["problems"]
    assert p["code"] == "unsupported-file" and p["file"] == "logs/c001.numbers"
    assert p["message"] == (
        "logs/c001.numbers is a file type reportgen does not read; save the daily log as c001 "
        "with one of .csv, .xlsx, .xlsm, .xls or .ods"
    )


def test_roster_as_ods_is_read(tmp_path: Path) -> None:
    import pandas as pd

    book = write_book(tmp_path / "book")
    (book / "clients.csv").unlink()
    frame = pd.DataFrame(
        [["c001", "Ada Test", "female", dt.date(1990, 5, 1), 168.0, "", "no"]],
        columns=ROSTER_HEADER.split(","),
    )
    with pd.ExcelWriter(book / "clients.ods", engine="odf") as writer:
        frame.to_excel(writer, sheet_name="clients", index=False)
    code, data = _check(str(book), "--month", "2026-11", "--today", TODAY)
    assert code == 0, data
    rec = read_book_client(book)
    assert rec.client.birth_date == dt.date(1990, 5, 1)
    assert rec.client.roster_file == "clients.ods"


# ------------------------------------------------------------------ no phases, empty month


def test_book_without_phases_is_valid(tmp_path: Path) -> None:
    book = write_book(tmp_path / "book")
    assert not (book / "phases.csv").exists()
    code, data = _check(str(book), "--month", "2026-11", "--today", TODAY)
    assert code == 0 and data["problems"] == []
    out = tmp_path / "out"
    result = CliRunner().invoke(
        main,
        ["batch", str(book), "--month", "2026-11", "--out", str(out), "--workers", "1"],
        catch_exceptions=False,
    )
    assert result.exit_code == 0, result.output
    # the report month is one window: deficit and expenditure from weight and intake, no
    # expected expenditure or adaptation (no baseline without phases)
    (row,) = _summary(out / "2026-11").values()
    assert (row["phase"], row["start"], row["end"], row["days"]) == (
        "Report month",
        "2026-11-01",
        "",
        "30",
    )
    assert float(row["mean_intake_kcal"]) == pytest.approx(1900.0, abs=0.5)  # daily_rows
    # energy balance (Hall 2008 method of the project): expenditure = intake + deficit
    tdee = float(row["mean_intake_kcal"]) + float(row["realised_deficit_kcal"])
    assert float(row["observed_tdee_kcal"]) == pytest.approx(tdee, abs=1.0)
    assert row["expected_tdee_kcal"] == row["adaptation_kcal"] == ""
    import pypdf

    pdf = out / "2026-11" / "c001.pdf"
    text = " ".join(" ".join(p.extract_text() for p in pypdf.PdfReader(pdf).pages).split())
    assert "Report month (no phases recorded), since 01 Nov 2026" in text
    assert "Adaptation Not estimated no baseline period to compare against" in text
    assert (
        "No phases are recorded for you, so this month is shown as one window. Phases in the "
        "client book would add a window for each phase, the expected expenditure and "
        "adaptation against a baseline period, and how long a deficit has run." in text
    )


def test_check_month_warns_about_a_month_without_weigh_ins(tmp_path: Path) -> None:
    rows = daily_rows(start=START, days=30)  # September only
    intake_only = [[f"2026-11-{d:02d}", "", 1900, 8000] for d in range(1, 6)]
    roster = _roster(["c001", "c002"])
    book = write_book(
        tmp_path / "book",
        roster=roster,
        logs={"c001.csv": csv_text(rows), "c002.csv": csv_text(rows + intake_only)},
    )
    code, data = _check(str(book), "--month", "2026-11", "--today", TODAY)
    assert code == 0
    found = {p["client_id"]: p["message"] for p in data["problems"] if p["code"] != "gap"}
    assert found == {
        "c001": "no entries in 2026-11 (the last is from 2026-09-30); the 2026-11 report "
        "cannot show the month's weight trend. Add the month's entries if they exist",
        "c002": "no weigh-ins in 2026-11 (5 days with other entries; the last is from "
        "2026-09-30); the 2026-11 report cannot show the month's weight trend. Add the "
        "month's entries if they exist",
    }
    assert {p["code"] for p in data["problems"]} == {"no-month-data", "gap"}


def test_scale_body_fat_is_its_own_series_never_an_estimate(
    variation_book: Path, batch_run: Path
) -> None:
    import pypdf

    rows = _summary(batch_run)
    # Same weights and intake as c000 and no skinfolds: had the scale's body fat entered the
    # body-composition estimates or the energy density of weight change, these would differ.
    for key in ("observed_tdee_kcal", "realised_deficit_kcal", "bodyfat_end_pct"):
        assert rows["c004"][key] == rows["c000"][key], key
    text = "\n".join(p.extract_text() for p in pypdf.PdfReader(batch_run / "c004.pdf").pages)
    assert "▲ body fat, scale reading" in text
    assert "The body-fat readings of your scale (bioimpedance), shown as the scale gives them" in (
        " ".join(text.split())
    )
    plain = "\n".join(p.extract_text() for p in pypdf.PdfReader(batch_run / "c000.pdf").pages)
    assert "scale reading" not in plain


def test_scale_panel_sits_beside_the_skinfold_panels(variation_book: Path) -> None:
    import shutil

    from reportgen.analysis import analyse_client
    from reportgen.config import AnalysisSettings
    from reportgen.report.charts import FIGURES, ChartContext, legend
    from reportgen.report.units import Units

    book = variation_book.parent / "with_skinfolds"
    if not book.exists():
        shutil.copytree(variation_book, book)
        (book / "skinfolds").mkdir(exist_ok=True)
        (book / "skinfolds" / "c004.csv").write_text(
            "date,triceps,suprailiac,thigh\n2026-09-05,23.6,21.2,36.2\n"
            "2026-10-05,22.6,20.2,35.0\n2026-11-05,21.6,19.4,34.0\n",
            encoding="utf-8",
        )
    rec = read_book_client(book, "c004", dt.date(2026, 11, 30))
    a = analyse_client(rec, "2026-11", AnalysisSettings())
    assert len(a.bodycomp) == 3  # the skinfold sessions alone make the estimates
    labels = {"bodycomp_change": "change ({unit})", "fat_mass": "fat", "lean_mass": "lean"}
    labels |= {"skinfold_sum": "sum", "scale_bodyfat": "scale", "legend_fat": "f"}
    labels |= {"legend_lean": "l", "legend_sum": "s", "legend_scale_bodyfat": "scale"}
    ctx = ChartContext(Units(), labels, "#1F5A7A", 170, START, dt.date(2026, 11, 30))
    fig = FIGURES["bodycomp"](a, ctx)
    assert [ax.get_title(loc="left") for ax in fig.axes] == ["change (kg)", "sum (mm)", "scale (%)"]
    points = fig.axes[2].lines[0].get_ydata()
    assert len(points) == DAYS and points[0] == pytest.approx(31.0, abs=1e-9)
    assert [e[2] for e in legend("bodycomp", a, ctx)] == ["f", "l", "s", "scale"]
