"""analyse_client: the glue from a ClientRecord to a ClientAnalysis.

Records are simulated (reportgen.testing.simulate, invented data).  The checks
are identities of the published chain (science notes §4.4: observed TDEE =
mean intake + realised deficit; §6: adaptation = observed - expected) and the
special-handling rules of the issue, not regression pins.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import math

import numpy as np
import pytest
from _sci_helpers import short_record, simulated, with_client, with_error
from hypothesis import given, settings
from hypothesis import strategies as st

from reportgen.analysis import analyse_client
from reportgen.config import AnalysisSettings
from reportgen.io.model import ClientRecord
from reportgen.results import ClientAnalysis, Estimate

SETTINGS = AnalysisSettings()


@pytest.fixture(scope="module")
def sim_analysis() -> tuple[object, ClientAnalysis]:
    sim = simulated(11, two_deficits=True)
    return sim, analyse_client(sim.record, sim.month, SETTINGS)


def test_every_field_is_filled(sim_analysis: tuple[object, ClientAnalysis]) -> None:
    _, a = sim_analysis
    for f in dataclasses.fields(ClientAnalysis):
        if f.name in ("bodyfat_fallback", "notes"):
            continue  # None when skinfolds exist; notes may be empty
        assert getattr(a, f.name) is not None, f.name
    assert a.trend is not None and a.trend.level_kg.shape == a.log.dates.shape
    assert a.expenditure is not None and np.all(np.isfinite(a.expenditure.tdee_kcal))
    # 26 weeks and the start day: as far as [report] projection_weeks may ask
    assert a.projection is not None and len(a.projection.weight_kg) == 7 * 26 + 1
    assert {s.name for s in a.signals} >= {"steps", "hunger", "energy"}
    assert a.bodycomp and a.bodycomp[-1].equation == "jackson-pollock-3"
    codes = {m.code for m in a.methods}
    assert {"local-linear-trend", "hall-2008-energy-density", "mifflin-st-jeor"} <= codes


def test_phases_cut_at_month_end(sim_analysis: tuple[object, ClientAnalysis]) -> None:
    sim, a = sim_analysis
    assert len(a.phases) == len(sim.record.phases)  # type: ignore[attr-defined]
    for p in a.phases:
        assert p.window_end <= a.as_of == dt.date(2026, 11, 30)
        assert p.days == (p.window_end - p.start).days + 1
    assert a.current_phase is not None and a.week_of_phase is not None
    assert a.week_of_phase == (a.as_of - a.current_phase.start).days // 7 + 1


def test_chain_identities(sim_analysis: tuple[object, ClientAnalysis]) -> None:
    """TDEE = mean intake + deficit; the data's adaptation = observed - expected, and the
    combined estimate lies between it and the typical value (normal-normal combination)."""
    _, a = sim_analysis
    checked = 0
    for p in a.phases:
        if not p.observed_tdee_kcal.known:
            continue
        assert p.mean_intake_kcal is not None and p.realised_deficit_kcal.value is not None
        assert p.observed_tdee_kcal.value == pytest.approx(
            p.mean_intake_kcal + p.realised_deficit_kcal.value, abs=1e-9
        )
        if "baseline-phase" in p.notes:
            # the reference itself, no adaptation of its own; its expected TDEE is the
            # mean intake plus the realised deficit pulled towards the planned balance
            # (conjugate-normal update, expected.maintenance_deficit_posterior), so it
            # lies between the mean intake and the observed TDEE
            e = p.expected_tdee_kcal.value
            lo_, hi_ = sorted((p.mean_intake_kcal, p.observed_tdee_kcal.value))
            assert lo_ - 1e-9 <= e <= hi_ + 1e-9
            assert p.adaptation_kcal.reason == "baseline-phase"
            continue
        data = p.adaptation_data_kcal if p.adaptation_data_kcal.known else p.adaptation_kcal
        assert data.value == pytest.approx(
            p.observed_tdee_kcal.value - p.expected_tdee_kcal.value, abs=1e-9
        )
        if p.adaptation_data_kcal.known:
            typical = p.adaptation_typical_kcal.value
            lo_, hi_ = sorted((data.value, typical))
            assert lo_ - 1e-6 <= p.adaptation_kcal.value <= hi_ + 1e-6
        assert p.adaptation_pct.value == pytest.approx(
            100 * p.adaptation_kcal.value / p.expected_tdee_kcal.value, abs=1e-9
        )
        for e in (p.observed_tdee_kcal, p.realised_deficit_kcal, p.adaptation_kcal):
            assert e.low is not None and e.high is not None
            assert e.low <= e.value <= e.high
        checked += 1
    assert checked >= 2  # the two cuts (the 14-day break has no TDEE: early-phase)


def test_days_in_deficit_counts_consecutive_deficit_phases(
    sim_analysis: tuple[object, ClientAnalysis],
) -> None:
    _, a = sim_analysis
    for p in a.phases:
        if p.kind == "deficit":
            assert p.days_in_deficit == p.days  # separated by a maintenance break
        else:
            assert p.days_in_deficit == 0


def test_minor_gets_special_handling() -> None:
    sim = simulated(5)
    young = dt.date(2026 - 16, 3, 1)
    a = analyse_client(with_client(sim, birth_date=young), sim.month, SETTINGS)
    assert a.minor and a.special_handling == ("minor",)
    assert a.trend is not None  # trend only
    assert a.expenditure is None and a.projection is None
    assert all(p.status == "special-handling" for p in a.phases)
    assert all(p.realised_deficit_kcal.reason == "special-handling" for p in a.phases)
    assert any(p.rate_kg_per_week.known for p in a.phases)  # the trend is still shown
    assert "minor" in {f.code for f in a.flags}


def test_pregnant_gets_special_handling() -> None:
    sim = simulated(5)
    a = analyse_client(with_client(sim, pregnant=True), sim.month, SETTINGS)
    assert a.special_handling == ("pregnant",)
    assert all(not p.observed_tdee_kcal.known for p in a.phases)
    assert "pregnant" in {f.code for f in a.flags}


def test_fewer_than_14_days_gives_no_expenditure() -> None:
    a = analyse_client(short_record(10), "2026-11", SETTINGS)
    (p,) = a.phases
    assert p.status == "too-few-days"
    assert p.observed_tdee_kcal == Estimate.missing("too-few-days")
    assert p.realised_deficit_kcal == Estimate.missing("too-few-days")
    assert a.expenditure is None
    assert "expenditure-too-few-days" in a.notes


def test_flat_noise_free_log_has_zero_deficit() -> None:
    """A flat series has zero trend change, so TDEE equals intake (notes §4.4)."""
    a = analyse_client(short_record(21), "2026-11", SETTINGS)
    (p,) = a.phases
    assert p.realised_deficit_kcal.value == pytest.approx(0.0, abs=1e-6)
    assert p.observed_tdee_kcal.value == pytest.approx(2200.0, abs=1e-6)
    # the smoother's large-but-finite diffuse prior leaves a few grams at most
    assert p.trend_change_kg == pytest.approx(0.0, abs=1e-3)
    assert a.current_weight_kg.value == pytest.approx(80.0, abs=1e-3)


def test_data_after_month_end_is_ignored() -> None:
    sim = simulated(3)
    a_nov = analyse_client(sim.record, "2026-10", SETTINGS)
    assert a_nov.as_of == dt.date(2026, 10, 31)
    assert a_nov.log.dates[-1] <= np.datetime64("2026-10-31")
    assert all(p.window_end <= dt.date(2026, 10, 31) for p in a_nov.phases)


def test_record_with_errors_is_refused() -> None:
    with pytest.raises(ValueError, match="has errors; analyse only ok records"):
        analyse_client(with_error(simulated(2).record), "2026-11", SETTINGS)


def test_bad_month_is_refused() -> None:
    with pytest.raises(ValueError, match="is not in the form YYYY-MM"):
        analyse_client(simulated(2).record, "November", SETTINGS)


def test_no_skinfolds_uses_rough_bmi_estimate() -> None:
    sim = simulated(4)
    rec = dataclasses.replace(sim.record, skinfolds=())
    a = analyse_client(rec, sim.month, SETTINGS)
    assert a.bodycomp == ()
    assert a.bodyfat_fallback is not None and a.bodyfat_fallback.rough
    assert any(p.observed_tdee_kcal.known for p in a.phases)


def test_unknown_sex_still_gives_trend_and_balance() -> None:
    sim = simulated(4)
    a = analyse_client(with_client(sim, sex=None), sim.month, SETTINGS)
    assert a.trend is not None and a.resting_kcal == {}
    assert "bodyfat-unknown" in a.notes
    known = [p for p in a.phases if p.observed_tdee_kcal.known]
    assert known  # 7700 kcal/kg simplification when fat mass is unknown
    assert all(p.expected_tdee_kcal.reason == "no-resting-equation" for p in known)


def test_deterministic() -> None:
    sim = simulated(8)
    a = analyse_client(sim.record, sim.month, SETTINGS)
    b = analyse_client(sim.record, sim.month, SETTINGS)
    assert a.phases == b.phases
    assert a.projection is not None and b.projection is not None
    assert np.array_equal(a.projection.low_kg, b.projection.low_kg)
    assert math.isclose(a.trend.noise_sd_kg, b.trend.noise_sd_kg)  # type: ignore[union-attr]


def _odd_record(
    n: int, weight_frac: float, intake_frac: float, seed: int, n_phases: int
) -> ClientRecord:
    import dataclasses as dc

    from reportgen.io.model import DailyLog, Phase

    rng = np.random.default_rng(seed)
    base = short_record(max(n, 1), start=dt.date(2026, 11, 30) - dt.timedelta(days=max(n, 1) - 1))
    w = 80 + rng.normal(0, 0.6, base.log.n_days)
    w[rng.random(base.log.n_days) > weight_frac] = np.nan
    intake = 2000 + rng.normal(0, 400, base.log.n_days)
    intake[rng.random(base.log.n_days) > intake_frac] = np.nan
    log = DailyLog(
        dates=base.log.dates,
        weight_kg=w,
        weight_outlier=np.zeros(base.log.n_days, dtype=bool),
        intake_kcal=intake,
        steps=base.log.steps,
        hunger=base.log.hunger,
        energy=base.log.energy,
        sleep_h=base.log.sleep_h,
    )
    first = _date0(log)
    phases = []
    for k in range(n_phases):
        start = first + dt.timedelta(days=int(rng.integers(-10, max(n, 1) + 10)))
        length = int(rng.integers(1, 60))
        end = None if rng.random() < 0.3 else start + dt.timedelta(days=length)
        kind = ("deficit", "maintenance", "break", "surplus")[k % 4]
        phases.append(Phase(f"P{k}", start, end, kind, None))  # type: ignore[arg-type]
    phases.sort(key=lambda p: p.start)
    return dc.replace(base, log=log, phases=tuple(phases))


def _date0(log: object) -> dt.date:
    return log.dates[0].astype("datetime64[D]").item()  # type: ignore[attr-defined]


@settings(max_examples=40, deadline=None)
@given(
    n=st.integers(1, 90),
    weight_frac=st.floats(0.0, 1.0),
    intake_frac=st.floats(0.0, 1.0),
    seed=st.integers(0, 10_000),
    n_phases=st.integers(0, 4),
)
def test_odd_logs_never_crash(
    n: int, weight_frac: float, intake_frac: float, seed: int, n_phases: int
) -> None:
    """Short, gappy or empty logs and odd phase layouts give an analysis, never an error."""
    rec = _odd_record(n, weight_frac, intake_frac, seed, n_phases)
    a = analyse_client(rec, "2026-11", SETTINGS)
    for p in a.phases:
        for e in (p.realised_deficit_kcal, p.observed_tdee_kcal, p.adaptation_kcal):
            assert e.known or e.reason
            if e.known:
                assert math.isfinite(e.value)  # type: ignore[arg-type]
                assert e.low <= e.value <= e.high  # type: ignore[operator]
    if a.trend is not None:
        assert np.all(np.isfinite(a.trend.level_kg))


def test_empty_log() -> None:
    import dataclasses as dc

    from reportgen.io.model import DailyLog

    rec = dc.replace(short_record(5), log=DailyLog.empty())
    a = analyse_client(rec, "2026-11", SETTINGS)
    assert a.trend is None and a.projection is None
    (p,) = a.phases  # listed even without data
    assert p.status == "too-few-days" and p.weight_days == 0
    assert a.current_weight_kg.reason == "too-few-weigh-ins"
    assert a.quality.weight_days == 0 and a.quality.days_in_period == 30


def test_only_documented_codes_appear() -> None:
    from reportgen.results import (
        ANALYSIS_NOTE_CODES,
        PHASE_NOTE_CODES,
        PHASE_STATUSES,
        REASON_CODES,
    )

    records = [simulated(s).record for s in range(6)]
    records += [short_record(10), short_record(20), with_client(simulated(1), sex=None)]
    records.append(with_client(simulated(2), pregnant=True))
    records.append(dataclasses.replace(simulated(3).record, skinfolds=()))
    for rec in records:
        a = analyse_client(rec, "2026-11", SETTINGS)
        for code in a.notes:
            assert code.split(":")[0] in ANALYSIS_NOTE_CODES, code
        for p in a.phases:
            assert p.status in PHASE_STATUSES
            assert set(p.notes) <= set(PHASE_NOTE_CODES), p.notes
            for e in (
                p.rate_kg_per_week,
                p.realised_deficit_kcal,
                p.observed_tdee_kcal,
                p.expected_tdee_kcal,
                p.adaptation_kcal,
                p.adaptation_pct,
            ):
                assert e.known or e.reason in REASON_CODES, e.reason
        for e in (a.current_weight_kg, a.month_change_kg, a.weekly_rate_kg):
            assert e.known or e.reason in REASON_CODES


def test_phase_before_the_log_has_no_data_and_does_not_borrow_any() -> None:
    from reportgen.io.model import Phase

    rec = short_record(30, start=dt.date(2026, 11, 1))
    early = Phase("Old cut", dt.date(2026, 9, 1), dt.date(2026, 9, 30), "deficit", 1800.0)
    rec = dataclasses.replace(rec, phases=(early, *rec.phases))
    a = analyse_client(rec, "2026-11", SETTINGS)
    old, new = a.phases
    assert old.days == 30 and old.weight_days == 0 and old.intake_days == 0
    assert old.status == "too-few-days" and not old.realised_deficit_kcal.known
    assert old.trend_start_kg is None
    assert new.weight_days == 30 and new.observed_tdee_kcal.known


def test_sample_book_clients_analyse() -> None:
    """Integration with the io readers on the shipped sample book (invented clients)."""
    from pathlib import Path

    from reportgen.io.book import read_client, read_roster
    from reportgen.month import ReportMonth

    book = Path(__file__).resolve().parent.parent / "sample_inputs"
    roster = read_roster(book)
    done = 0
    for client in roster.clients:
        rec = read_client(
            book, client, roster.phases.get(client.client_id, ()), ReportMonth("2026-11").last_day
        )
        if not rec.ok:
            continue
        a = analyse_client(rec, "2026-11", SETTINGS)
        assert a.current_weight_kg.known and a.trend is not None
        assert len(a.phases) == len(rec.phases)
        for p in a.phases:
            if p.observed_tdee_kcal.known:
                assert 1000 < p.observed_tdee_kcal.value < 4500  # type: ignore[operator]
                # the chain identity holds on real readers' output too
                assert p.observed_tdee_kcal.value == pytest.approx(
                    p.mean_intake_kcal + p.realised_deficit_kcal.value,
                    abs=1e-9,  # type: ignore[operator]
                )
        done += 1
    assert done >= 8


def test_rapid_loss_flag_from_the_trend() -> None:
    """Loss of 1.5 %/week for 4 weeks raises rapid-loss (Helms 2014 threshold 1 %/week,
    published; the rule is A's flags module); 0.5 %/week does not."""
    import dataclasses as dc

    def with_rate(pct: float) -> ClientRecord:
        rec = short_record(42, start=dt.date(2026, 10, 20))
        t = np.arange(rec.log.n_days)
        w = 80.0 * (1 - pct / 100 / 7) ** t + np.random.default_rng(0).normal(0, 0.3, t.size)
        return dc.replace(rec, log=dc.replace(rec.log, weight_kg=w))

    fast = analyse_client(with_rate(1.5), "2026-11", SETTINGS)
    slow = analyse_client(with_rate(0.5), "2026-11", SETTINGS)
    assert "rapid-loss" in {f.code for f in fast.flags}
    assert "rapid-loss" not in {f.code for f in slow.flags}
    assert fast.weekly_rate_pct.value == pytest.approx(-1.5, abs=0.3)


def test_realised_deficit_does_not_depend_on_logged_intake(
    sim_analysis: tuple[object, ClientAnalysis],
) -> None:
    """The realised deficit is read from the weigh-ins alone.

    Same weigh-ins, intake under-logged by a share that grows from 0 to 20 % and a
    third of the days unlogged: every phase's realised deficit and its interval are
    unchanged (observed TDEE, which adds logged intake, moves).  The property the
    energy balance states (deficit = energy drawn from stores, from the weight).
    """
    sim, base = sim_analysis
    record = sim.record  # type: ignore[attr-defined]
    log = record.log
    n = len(log.intake_kcal)
    share = np.clip(np.arange(n) / n, 0.0, 1.0) * 0.2
    intake = log.intake_kcal * (1.0 - share)
    intake[np.arange(n) % 3 == 1] = np.nan
    altered = dataclasses.replace(record, log=dataclasses.replace(log, intake_kcal=intake))
    other = analyse_client(altered, sim.month, SETTINGS)  # type: ignore[attr-defined]
    assert len(other.phases) == len(base.phases)
    moved = 0
    for a, b in zip(base.phases, other.phases, strict=True):
        assert a.realised_deficit_kcal == b.realised_deficit_kcal
        moved += a.observed_tdee_kcal != b.observed_tdee_kcal
    assert moved > 0
