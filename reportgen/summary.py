"""summary.csv: one row per client per phase overlapping the report month.

Values come straight from :class:`reportgen.results.PhaseResult`, always in kg,
kcal/day and %, whatever the report's display units.  A value the analysis
could not estimate is written blank, never as zero.  Numbers have a fixed
number of decimals per column so that reruns are byte-identical; every column
is described in the README (section "summary.csv columns").
"""

from __future__ import annotations

import csv
import datetime as dt
import io
import math
from collections.abc import Iterable

from reportgen.month import ReportMonth
from reportgen.results import ClientAnalysis, Estimate, PhaseResult, PlateauResult

SUMMARY_COLUMNS: tuple[str, ...] = (
    "client_id",
    "phase",
    "start",
    "end",
    "days",
    "weight_days",
    "intake_days",
    "trend_start_kg",
    "trend_end_kg",
    "trend_change_kg",
    "rate_pct_per_week",
    "mean_intake_kcal",
    "realised_deficit_kcal",
    "observed_tdee_kcal",
    "observed_tdee_low_kcal",
    "observed_tdee_high_kcal",
    "expected_tdee_kcal",
    "adaptation_kcal",
    "adaptation_low_kcal",
    "adaptation_high_kcal",
    "adaptation_pct",
    "activity_change_kcal",
    "implied_intake_kcal",
    "bodyfat_start_pct",
    "bodyfat_end_pct",
    "fat_mass_change_kg",
    "lean_mass_change_kg",
    "status",
    "progress_status",
    "recent_rate_pct_per_week",
    "intake_drift_kcal",
    "body_size_change_kcal",
    "activity_change_recent_kcal",
    "metabolic_change_kcal",
    "logging_completeness_change_pct",
    "progress_reason",
)
# Filled on the row of the running deficit phase only (the plateau assessment's phase).
PLATEAU_COLUMNS = SUMMARY_COLUMNS[SUMMARY_COLUMNS.index("progress_status") :]

# Decimals per numeric column (the unit is in the column name).
DECIMALS: dict[str, int] = {
    "trend_start_kg": 2,
    "trend_end_kg": 2,
    "trend_change_kg": 2,
    "rate_pct_per_week": 2,
    "mean_intake_kcal": 0,
    "realised_deficit_kcal": 0,
    "observed_tdee_kcal": 0,
    "observed_tdee_low_kcal": 0,
    "observed_tdee_high_kcal": 0,
    "expected_tdee_kcal": 0,
    "adaptation_kcal": 0,
    "adaptation_low_kcal": 0,
    "adaptation_high_kcal": 0,
    "adaptation_pct": 1,
    "activity_change_kcal": 0,
    "implied_intake_kcal": 0,
    "bodyfat_start_pct": 1,
    "bodyfat_end_pct": 1,
    "fat_mass_change_kg": 2,
    "lean_mass_change_kg": 2,
    "recent_rate_pct_per_week": 2,
    "intake_drift_kcal": 0,
    "body_size_change_kcal": 0,
    "activity_change_recent_kcal": 0,
    "metabolic_change_kcal": 0,
    "logging_completeness_change_pct": 1,
}

SummaryRow = dict[str, str]

#: Columns holding text from the book (ids, phase names); all others are numbers or dates.
TEXT_COLUMNS: tuple[str, ...] = ("client_id", "phase", "status")
#: A text cell starting with one of these is a formula (or starts one) in spreadsheet
#: programs; such cells get a leading apostrophe (OWASP, "CSV Injection", from memory).
FORMULA_START = ("=", "+", "-", "@", "\t", "\r")


def neutralise(text: str) -> str:
    """A text cell made safe to open in a spreadsheet program: ``'=1+1`` for ``=1+1``.

    A carriage return becomes a space (the writer would not quote it, and readers would
    take it for the end of the row).
    """
    return ("'" + text if text.startswith(FORMULA_START) else text).replace("\r", " ")


def format_number(value: float | None, decimals: int) -> str:
    """Fixed-decimal text; blank for a missing or non-finite value; never ``-0``."""
    if value is None:
        return ""
    x = float(value)
    if not math.isfinite(x):
        return ""
    text = f"{x:.{decimals}f}"
    if text.startswith("-") and float(text) == 0.0:
        text = text[1:]
    return text


def _count(value: int | None) -> str:
    return "" if value is None else str(int(value))


def _date(value: dt.date | None) -> str:
    return "" if value is None else value.isoformat()


def overlaps_month(phase: PhaseResult, month: ReportMonth) -> bool:
    """Whether the phase has at least one day inside the report month."""
    first, last = month.first_day, month.last_day
    return phase.start <= last and (phase.end is None or phase.end >= first)


def phase_row(client_id: str, p: PhaseResult) -> SummaryRow:
    """The summary.csv row for one analysed phase."""

    def est(e: Estimate, column: str) -> str:
        return format_number(e.value, DECIMALS[column])

    def num(v: float | None, column: str) -> str:
        return format_number(v, DECIMALS[column])

    tdee = p.observed_tdee_kcal
    adapt = p.adaptation_kcal
    row: SummaryRow = {
        "client_id": client_id,
        "phase": p.name,
        "start": _date(p.start),
        "end": _date(p.end),
        "days": _count(p.days),
        "weight_days": _count(p.weight_days),
        "intake_days": _count(p.intake_days),
        "trend_start_kg": num(p.trend_start_kg, "trend_start_kg"),
        "trend_end_kg": num(p.trend_end_kg, "trend_end_kg"),
        "trend_change_kg": num(p.trend_change_kg, "trend_change_kg"),
        "rate_pct_per_week": est(p.rate_pct_per_week, "rate_pct_per_week"),
        "mean_intake_kcal": num(p.mean_intake_kcal, "mean_intake_kcal"),
        "realised_deficit_kcal": est(p.realised_deficit_kcal, "realised_deficit_kcal"),
        "observed_tdee_kcal": est(tdee, "observed_tdee_kcal"),
        # The interval only makes sense around a known estimate.
        "observed_tdee_low_kcal": num(tdee.low if tdee.known else None, "observed_tdee_low_kcal"),
        "observed_tdee_high_kcal": num(
            tdee.high if tdee.known else None, "observed_tdee_high_kcal"
        ),
        "expected_tdee_kcal": est(p.expected_tdee_kcal, "expected_tdee_kcal"),
        "adaptation_kcal": est(p.adaptation_kcal, "adaptation_kcal"),
        "adaptation_low_kcal": num(adapt.low if adapt.known else None, "adaptation_low_kcal"),
        "adaptation_high_kcal": num(adapt.high if adapt.known else None, "adaptation_high_kcal"),
        "adaptation_pct": est(p.adaptation_pct, "adaptation_pct"),
        "activity_change_kcal": est(p.activity_change_kcal, "activity_change_kcal"),
        "implied_intake_kcal": est(p.implied_intake_kcal, "implied_intake_kcal"),
        "bodyfat_start_pct": num(p.bodyfat_start_pct, "bodyfat_start_pct"),
        "bodyfat_end_pct": num(p.bodyfat_end_pct, "bodyfat_end_pct"),
        "fat_mass_change_kg": num(p.fat_mass_change_kg, "fat_mass_change_kg"),
        "lean_mass_change_kg": num(p.lean_mass_change_kg, "lean_mass_change_kg"),
        "status": p.status,
    }
    row.update(dict.fromkeys(PLATEAU_COLUMNS, ""))
    return row


def plateau_cells(plateau: PlateauResult) -> SummaryRow:
    """The progress and cause columns of the plateau assessment's phase row."""

    def part(code: str, column: str) -> str:
        found = plateau.part(code)
        return "" if found is None else format_number(found.kcal.value, DECIMALS[column])

    return {
        "progress_status": plateau.status,
        "recent_rate_pct_per_week": format_number(
            plateau.recent_rate_pct_per_week.value, DECIMALS["recent_rate_pct_per_week"]
        ),
        "intake_drift_kcal": format_number(
            plateau.intake_change_kcal if plateau.parts else None, DECIMALS["intake_drift_kcal"]
        ),
        "body_size_change_kcal": part("body-size", "body_size_change_kcal"),
        "activity_change_recent_kcal": part("activity", "activity_change_recent_kcal"),
        "metabolic_change_kcal": part("metabolic", "metabolic_change_kcal"),
        "logging_completeness_change_pct": format_number(
            plateau.completeness_change_pct, DECIMALS["logging_completeness_change_pct"]
        ),
        "progress_reason": progress_reason(plateau),
    }


def progress_reason(plateau: PlateauResult) -> str:
    """Why the status is what it is, where the status alone does not say: the reason code
    of ``too-early`` / ``too-few-data``, the water reasons of ``likely-water`` joined by
    "+", else ''."""
    if plateau.status in ("too-early", "too-few-data"):
        return plateau.reason or ""
    if plateau.status == "likely-water":
        return "+".join(plateau.water_reasons)
    return ""


def summary_rows(analysis: ClientAnalysis) -> list[SummaryRow]:
    """Rows for every phase of ``analysis`` that overlaps its report month, by start date."""
    cid = analysis.client.client_id
    phases = [p for p in analysis.phases if overlaps_month(p, analysis.month)]
    phases.sort(key=lambda p: (p.start, p.name))
    rows = []
    pl = analysis.plateau
    for p in phases:
        row = phase_row(cid, p)
        if pl is not None and p.start == pl.phase_start and p.name == pl.phase_name:
            row.update(plateau_cells(pl))
        rows.append(row)
    return rows


def sort_rows(rows: Iterable[SummaryRow]) -> list[SummaryRow]:
    """Deterministic order: by client id, then phase start, then phase name."""
    return sorted(rows, key=lambda r: (r["client_id"], r["start"], r["phase"]))


def summary_csv(rows: Iterable[SummaryRow]) -> bytes:
    """The whole summary.csv (UTF-8, no BOM, ``\\n`` line ends, header first)."""
    buf = io.StringIO()
    writer = csv.DictWriter(
        buf, fieldnames=list(SUMMARY_COLUMNS), lineterminator="\n", extrasaction="raise"
    )
    writer.writeheader()
    for row in sort_rows(rows):
        # Only text from the book is neutralised: "-0.45" in a number column stays a number.
        writer.writerow({k: neutralise(v) if k in TEXT_COLUMNS else v for k, v in row.items()})
    return buf.getvalue().encode("utf-8")
