"""Helpers for the science tests: simulated records and small hand-made logs."""

from __future__ import annotations

import datetime as dt
from dataclasses import replace
from typing import Any

import numpy as np

from reportgen.io.model import Client, ClientRecord, DailyLog, Phase, Problem
from reportgen.testing.simulate import SimulatedClient, SimulationSpec, simulate_client


def simulated(seed: int = 7, **fixed: Any) -> SimulatedClient:
    """A simulated client (invented data) from a fixed seed; ``fixed``: SimulationSpec fields."""
    spec = replace(SimulationSpec(client_id=f"s{seed:03d}"), **fixed)
    return simulate_client(np.random.default_rng(seed), spec)


def with_client(sim: SimulatedClient, **changes: object) -> ClientRecord:
    """The simulated record with some roster fields changed."""
    client = replace(sim.record.client, **changes)  # type: ignore[arg-type]
    return replace(sim.record, client=client)


def with_error(record: ClientRecord) -> ClientRecord:
    bad = Problem("error", "bad-number", "weight is not a number", file="logs/x.csv", row=3)
    return replace(record, problems=(bad,))


def short_record(days: int, start: dt.date = dt.date(2026, 11, 10)) -> ClientRecord:
    """A flat, noise-free log of ``days`` days ending inside November 2026 (invented)."""
    dates = np.arange(np.datetime64(start, "D"), np.datetime64(start, "D") + days)
    n = len(dates)
    nan = np.full(n, np.nan)
    log = DailyLog(
        dates=dates,
        weight_kg=np.full(n, 80.0),
        weight_outlier=np.zeros(n, dtype=bool),
        intake_kcal=np.full(n, 2200.0),
        steps=nan.copy(),
        hunger=nan.copy(),
        energy=nan.copy(),
        sleep_h=nan.copy(),
    )
    client = Client("t001", "Test client", "female", dt.date(1990, 5, 1), 168.0)
    phases = (Phase("Start", start, None, "deficit", 1800.0),)
    return ClientRecord(client, log, (), phases, (), ())
