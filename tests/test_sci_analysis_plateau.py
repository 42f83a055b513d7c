"""The plateau stage inside the analysis: one invented client whose loss stops.

The log is invented (28 days at maintenance, then a deficit whose loss of 0.09 kg/day
stops after eight weeks), so the checks are the shape's own consequences (see
``test_sci_plateau_assess.py``).
"""

from __future__ import annotations

import dataclasses
import datetime as dt

import numpy as np

from reportgen.analysis import analyse_client
from reportgen.config import AnalysisSettings
from reportgen.io.model import Client, ClientRecord, DailyLog, Phase
from reportgen.science.plateau import PROGRESS_STATUSES

END = dt.date(2026, 11, 30)
MAINT, DEFICIT = 28, 84


def _record(stall: bool = True) -> ClientRecord:
    n = MAINT + DEFICIT
    start = END - dt.timedelta(days=n - 1)
    rng = np.random.default_rng(11)
    t = np.arange(n, dtype=float)
    tissue = 88.0 - 0.09 * np.clip(t - MAINT, 0, 56 if stall else DEFICIT)
    log = DailyLog(
        dates=np.arange(np.datetime64(start, "D"), np.datetime64(END, "D") + 1),
        weight_kg=np.round(tissue + rng.normal(0, 0.25, n), 1),
        weight_outlier=np.zeros(n, dtype=bool),
        intake_kcal=np.round(np.where(t < MAINT, 2450.0, 1850.0) + rng.normal(0, 150, n), -1),
        steps=np.round(8500 + rng.normal(0, 1500, n), -1),
        hunger=np.clip(np.round(np.where(t < MAINT + 42, 4, 6) + rng.normal(0, 1, n)), 1, 10),
        energy=np.full(n, np.nan),
        sleep_h=np.full(n, np.nan),
    )
    client = Client("p001", "Invented client", "female", dt.date(1986, 3, 4), 167.0)
    d0 = start + dt.timedelta(days=MAINT)
    phases = (
        Phase("Baseline", start, d0 - dt.timedelta(days=1), "maintenance"),
        Phase("Autumn cut", d0, None, "deficit", 1850.0),
    )
    return ClientRecord(client, log, (), phases, (), ())


def test_stalled_client_gets_a_plateau_result() -> None:
    a = analyse_client(_record(stall=True), "2026-11", AnalysisSettings())
    p = a.plateau
    assert p is not None
    assert p.phase_name == "Autumn cut"
    assert p.status == "stalled"
    assert p.planned_source in ("target", "target-and-early-rate")
    assert p.recent_days == 28
    assert p.largest in ("metabolic", "logging")
    assert {x.code for x in p.parts} == {"intake", "body-size", "activity", "metabolic", "logging"}
    assert p.hunger_change is not None and p.hunger_change > 1.0  # invented: 4 -> 6
    assert "extra-steps" in [o.code for o in p.options]


def test_steady_client_is_on_track() -> None:
    p = analyse_client(_record(stall=False), "2026-11", AnalysisSettings()).plateau
    assert p is not None
    assert p.status == "on-track"
    assert p.status in PROGRESS_STATUSES


def test_no_plateau_result_outside_a_deficit_or_for_minors() -> None:
    rec = _record()
    maint_last = dataclasses.replace(
        rec, phases=(*rec.phases[:1], Phase("Holding", rec.phases[1].start, None, "maintenance"))
    )
    assert analyse_client(maint_last, "2026-11", AnalysisSettings()).plateau is None
    minor = dataclasses.replace(rec, minor=True)
    assert analyse_client(minor, "2026-11", AnalysisSettings()).plateau is None
