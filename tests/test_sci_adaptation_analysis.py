"""Adaptation in the analysis: the interval still covers when under-reporting drifts.

Simulated clients (invented data, reportgen's own simulator) log honestly during the
baseline and then leave out a growing share of what they eat once the deficit starts
(0 % to 20 % over the first three weeks), which is common (Lichtman et al. 1992,
N Engl J Med 327:1893-8).  Observed TDEE then falls by the unlogged amount, one for one,
so "observed minus expected" alone reads as a large metabolic adaptation.  The
combined estimate must still cover the true adaptation, and the intake implied by
weight must show the gap to the logged intake.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
from _sci_helpers import simulated

from reportgen.analysis import analyse_client
from reportgen.config import AnalysisSettings


def _drifting(seed: int) -> tuple[object, object]:
    sim = simulated(seed, under_report=0.0, two_deficits=False, missing_intake=0.1)
    log = sim.record.log
    cut = next(p for p in sim.phases if p.kind == "deficit")
    days = np.arange(log.n_days)
    ramp = np.clip((days - cut.start_index) / 21.0, 0.0, 1.0)
    logged = log.intake_kcal * (1.0 - 0.2 * ramp)
    record = replace(sim.record, log=replace(log, intake_kcal=logged))
    return sim, analyse_client(record, sim.month, AnalysisSettings())


def test_drifting_under_reporting_is_covered_and_shown() -> None:
    covered = gaps = n = 0
    for seed in range(30):
        sim, a = _drifting(seed)
        for p, tr in zip(a.phases, sim.phases, strict=True):  # type: ignore[attr-defined]
            if p.kind != "deficit" or not p.adaptation_kcal.known or p.days < 56:
                continue
            n += 1
            covered += p.adaptation_kcal.low <= tr.adaptation_kcal <= p.adaptation_kcal.high
            gap = p.logging_gap_kcal
            gaps += gap.known and gap.value < 0
    assert n >= 20
    # 80 % intervals: at least 70 % of phases covered (well above the 10 % the data alone
    # reach in this situation)
    assert covered / n >= 0.7
    # logged intake below the intake the weights imply in most phases
    assert gaps / n >= 0.7
