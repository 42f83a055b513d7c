"""One worked client through every stage of the analysis, each stage checked on its own.

The client is invented for this test: a woman of 36, 165 cm, one skinfold session, four
weeks at maintenance (70.0 kg, 2000 kcal/day) and then a deficit (1500 kcal/day) in which
her weight falls by exactly 0.05 kg/day.  The chain is the one a practitioner checks by
hand: trend -> change -> stored energy -> observed TDEE -> expected TDEE -> adaptation.
Each stage's expected values are worked out here from the published equation that stage
uses, with the previous stage's output as input; the source is named beside each value.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import math

import numpy as np
import pytest

from reportgen.analysis import ClientStages, analyse_client, run_stages
from reportgen.analysis.resting import RestingModel
from reportgen.config import AnalysisSettings
from reportgen.io.model import Client, ClientRecord, DailyLog, Phase, SkinfoldSession

START = dt.date(2026, 9, 1)
DAYS = 91  # 1 September to 30 November 2026
MAINTENANCE_DAYS = 28
LOSS_KG_PER_DAY = 0.05  # the constructed rate of the deficit phase
Z80 = 1.2815516  # standard normal 90th percentile (any normal table): 80 % intervals
FORBES_C_KG = 10.4  # Forbes' curve constant as refitted by Hall 2007 (from memory)
RHO_FAT = 9440.0  # kcal/kg, Hall 2008 / Hall 2011 (published, science notes §4.2)
RHO_LEAN = 1816.0  # kcal/kg, Hall 2011 (from memory, science notes §4.2)
# 17.6 kJ/g glycogen (Hall 2008, published) with 2.7 g water per g (Hall's model, from memory)
GLYCOGEN_WATER_KCAL_PER_KG = 17.6e3 / 4.184 / 3.7


def worked_record() -> ClientRecord:
    """The worked client (invented)."""
    dates = np.arange(np.datetime64(START, "D"), np.datetime64(START, "D") + DAYS)
    day = np.arange(DAYS)
    in_deficit = day >= MAINTENANCE_DAYS
    weight = np.where(in_deficit, 70.0 - LOSS_KG_PER_DAY * (day - MAINTENANCE_DAYS + 1), 70.0)
    nan = np.full(DAYS, np.nan)
    log = DailyLog(
        dates=dates,
        weight_kg=weight,
        weight_outlier=np.zeros(DAYS, dtype=bool),
        intake_kcal=np.where(in_deficit, 1500.0, 2000.0),
        steps=nan.copy(),
        hunger=nan.copy(),
        energy=nan.copy(),
        sleep_h=nan.copy(),
    )
    client = Client("w001", "Worked example", "female", dt.date(1990, 6, 15), 165.0)
    phases = (
        Phase("Maintenance", START, dt.date(2026, 9, 28), "maintenance", 2000.0),
        Phase("Deficit", dt.date(2026, 9, 29), None, "deficit", 1500.0),
    )
    session = SkinfoldSession(START, {"triceps": 20.0, "suprailiac": 15.0, "thigh": 30.0}, {})
    return ClientRecord(client, log, (session,), phases, (), ())


@pytest.fixture(scope="module")
def stages() -> ClientStages:
    return run_stages(worked_record(), "2026-11", AnalysisSettings())


def forbes_fat_kg(fat_ref_kg: float, weight_change_kg: float) -> float:
    """Fat mass after a weight change along Forbes' curve, by bisection (Hall 2007).

    Solves F + C ln F = F0 + dW + C ln F0 (the curve FFM = C ln FM + const moved by dW),
    independently of the Lambert-W closed form the project uses.
    """
    target = fat_ref_kg + weight_change_kg + FORBES_C_KG * math.log(fat_ref_kg)
    low, high = 1e-6, fat_ref_kg + abs(weight_change_kg) + 1.0
    for _ in range(200):
        middle = (low + high) / 2
        if middle + FORBES_C_KG * math.log(middle) < target:
            low = middle
        else:
            high = middle
    return (low + high) / 2


def test_stage_trend(stages: ClientStages) -> None:
    """Trend weight, month change and weekly rate recover the constructed data."""
    trend = stages.trend
    assert trend.fit is not None
    # constructed: 70.0 - 0.05 x 63 days of deficit = 66.85 kg on 30 November; the smoother
    # lags the kink at the deficit's start a little (tolerance 0.05 kg)
    assert trend.current_weight.value == pytest.approx(66.85, abs=0.05)
    # constructed: 30 days x -0.05 kg/day = -1.50 kg over November
    assert trend.month_change.value == pytest.approx(-1.50, abs=0.05)
    # constructed: 7 x -0.05 = -0.35 kg/week (segment fit of the current phase)
    assert trend.weekly_rate.value == pytest.approx(-0.35, abs=0.002)
    # 80 % interval of a difference of two smoothed levels: +/- z0.90 sqrt(var1 + var2)
    last, october_31 = DAYS - 1, DAYS - 31
    half = Z80 * math.sqrt(trend.fit.level_var_kg2[last] + trend.fit.level_var_kg2[october_31])
    assert trend.month_change.high is not None
    assert trend.month_change.high - trend.month_change.value == pytest.approx(half, rel=1e-6)
    # rate as % of body weight: 100 x rate / current weight
    assert trend.weekly_rate_pct.value == pytest.approx(
        100 * trend.weekly_rate.value / trend.current_weight.value, rel=1e-12
    )


def test_stage_composition(stages: ClientStages) -> None:
    """Jackson, Pollock & Ward 1980 three-site equation for women, then Siri."""
    (session,) = stages.composition.sessions
    # Db = 1.0994921 - 0.0009929 S + 0.0000023 S^2 - 0.0001392 A, S = 65 mm, A = 36 (JPW 1980,
    # published coefficients, science notes §2.2): 1.0994921 - 0.0645385 + 0.0097175
    # - 0.0050112 = 1.0396599 g/ml
    assert session.sum_mm == pytest.approx(65.0, abs=1e-9)
    assert session.density_g_ml == pytest.approx(1.0396599, abs=1e-7)
    # Siri: 495 / 1.0396599 - 450 = 26.1172 % (science notes §1, published)
    assert session.bodyfat_pct == pytest.approx(26.1172, abs=1e-4)
    # SEE 0.0086 g/ml (JPW3, from memory) in %BF: 495 / Db^2 x 0.0086 = 3.9384 %
    assert session.bodyfat_se_pct == pytest.approx(3.9384, abs=1e-4)
    # fat mass = %BF x trend weight on the session day
    assert session.fat_mass_kg == pytest.approx(0.261172 * session.weight_kg, abs=1e-4)
    reference = stages.composition.reference
    assert reference.fat_kg == pytest.approx(session.fat_mass_kg, abs=1e-12)
    assert reference.fat_se_kg == pytest.approx(0.039384 * session.weight_kg, abs=1e-4)


def test_stage_resting(stages: ClientStages) -> None:
    """Mifflin-St Jeor 1990 for women: 10 W + 6.25 H - 5 A - 161 (published abstract)."""
    model = stages.resting.model
    # 10 x 70 + 6.25 x 165 - 5 x 36 - 161 = 700 + 1031.25 - 180 - 161 = 1390.25 kcal/day
    assert model(70.0) == pytest.approx(1390.25, abs=1e-9)
    current = stages.trend.current_weight_kg
    assert current is not None
    assert stages.resting.equations_kcal["mifflin-st-jeor"] == pytest.approx(
        10 * current + 690.25, abs=1e-9
    )
    assert RestingModel(None, 165.0, 36)(70.0) is None  # sex unknown: no resting model
    assert RestingModel("female", 165.0, 0)(70.0) is None  # not defined at age 0


def test_stage_stored_energy_and_observed_tdee(stages: ClientStages) -> None:
    """Deficit phase: Hall 2008 energy density of the Forbes partition, then energy balance."""
    deficit_phase = stages.balances[1]
    balance = deficit_phase.balance
    assert balance is not None and balance.rate is not None
    assert balance.fat_start_kg is not None
    rate, shift, days = balance.rate.rate_kg_per_day, balance.rate.shift_kg, balance.days
    assert days == 63
    # the fat mass at the phase start, moved along Forbes' curve from the skinfold reference
    reference = stages.composition.reference
    assert reference.fat_kg is not None and reference.weight_kg is not None
    assert stages.trend.fit is not None
    start_level = float(stages.trend.fit.level_kg[MAINTENANCE_DAYS])
    assert balance.fat_start_kg == pytest.approx(
        forbes_fat_kg(reference.fat_kg, start_level - reference.weight_kg), abs=1e-6
    )
    # change = rate x days; its fat part along Forbes' curve (Hall 2007); energy density
    # rho = (9440 dF + 1816 dL) / dW (Hall 2008)
    change = rate * days
    fat_change = forbes_fat_kg(balance.fat_start_kg, change) - balance.fat_start_kg
    rho = (RHO_FAT * fat_change + RHO_LEAN * (change - fat_change)) / change
    assert balance.fat_change_kg == pytest.approx(fat_change, abs=1e-6)
    assert balance.energy_density_kcal_per_kg == pytest.approx(rho, abs=0.01)
    # stored energy per day, with the glycogen-and-water step at the phase start
    # deficit = -(rho x rate + 1137 kcal/kg x shift / days)
    deficit = -(rho * rate + GLYCOGEN_WATER_KCAL_PER_KG * shift / days)
    assert balance.deficit_kcal.value == pytest.approx(deficit, abs=0.01)
    # constructed: 0.05 kg/day x about 6550 kcal/kg (a woman with ~18 kg fat; Hall 2008
    # Fig. 1 puts her between 5000 and 7000 kcal/kg) = about 330 kcal/day
    assert 5000.0 < rho < 7000.0
    assert deficit == pytest.approx(330.0, abs=15.0)
    # observed TDEE = mean intake + deficit (energy balance, science notes §4.1)
    assert balance.tdee_kcal.value == pytest.approx(1500.0 + deficit, abs=0.01)


def test_stage_baseline(stages: ClientStages) -> None:
    """Maintenance phase as baseline: its deficit shrunk towards the planned balance."""
    baseline = stages.baseline
    maintenance = stages.balances[0].balance
    assert baseline is not None and maintenance is not None
    assert baseline.source == "maintenance-phase" and baseline.phase_start == START
    assert maintenance.deficit_kcal.value is not None and maintenance.deficit_se_kcal
    # normal-normal conjugate posterior around 0 with prior SD 250 kcal/day (Gelman et al.
    # 2013 §2.5; the prior SD is judgment): k = 250^2 / (250^2 + SE^2), TDEE0 = intake + k d
    shrink = 250.0**2 / (250.0**2 + maintenance.deficit_se_kcal**2)
    assert baseline.tdee_kcal == pytest.approx(2000.0 + shrink * maintenance.deficit_kcal.value)
    # constructed: the weight was flat at 70.0 kg, so the baseline is the intake, 2000 kcal/day
    assert baseline.tdee_kcal == pytest.approx(2000.0, abs=5.0)
    # resting expenditure at the baseline weight (Mifflin-St Jeor, as in test_stage_resting)
    assert baseline.resting_kcal == pytest.approx(10 * baseline.weight_kg + 690.25, abs=1e-9)


def test_stage_expected_tdee(stages: ClientStages) -> None:
    """Hall et al. 2011 expenditure terms applied to the client's own baseline."""
    baseline = stages.baseline
    expectation = stages.expectations[1]
    phase = stages.balances[1]
    assert baseline is not None and expectation is not None
    assert phase.balance is not None and phase.mean_weight_kg is not None
    weight = phase.mean_weight_kg
    fat = stages.composition.reference.fat_at(weight)
    assert fat is not None
    # E = E0 + gF dF + gL dL + delta dBW + bTEF dEI + etaF d(dF/dt) + etaL d(dL/dt) with
    # delta = ((1 - bTEF) E0 - RMR0) / BW0; gF 3.2, gL 22 kcal/kg/day, etaF 180, etaL 230
    # kcal/kg, bTEF 0.10 (Hall et al. 2011, values from memory, science notes §5; §0 gives gF
    # as 13 kJ = 3.1 kcal/kg/day, which moves this value by under 0.2 kcal/day)
    delta = (0.9 * baseline.tdee_kcal - baseline.resting_kcal) / baseline.weight_kg
    days = phase.balance.days
    fat_rate = (phase.balance.fat_change_kg or 0.0) / days
    lean_rate = (phase.balance.lean_change_kg or 0.0) / days
    expected = (
        baseline.tdee_kcal
        + 3.2 * (fat - baseline.fat_kg)
        + 22.0 * ((weight - fat) - baseline.lean_kg)
        + delta * (weight - baseline.weight_kg)
        + 0.10 * (1500.0 - baseline.intake_kcal)
        + 180.0 * (fat_rate - baseline.fat_rate_kg_per_day)
        + 230.0 * (lean_rate - baseline.lean_rate_kg_per_day)
    )
    assert expectation.expected_method == "own-baseline"
    assert expectation.expected_tdee.value == pytest.approx(expected, abs=0.01)
    # interval: the baseline's SE, +/- z0.90
    assert expectation.expected_tdee.high is not None
    half = expectation.expected_tdee.high - expected
    assert half == pytest.approx(Z80 * baseline.tdee_se_kcal, abs=0.01)


def test_stage_adaptation(stages: ClientStages) -> None:
    """Adaptation = observed - expected TDEE (science notes §6), in kcal/day and %."""
    baseline_phase, deficit_phase = stages.expectations
    assert baseline_phase is not None and deficit_phase is not None
    # the baseline phase is its own reference: no adaptation by construction
    assert baseline_phase.is_baseline
    assert baseline_phase.adaptation.kcal.reason == "baseline-phase"
    observed, expected = deficit_phase.observed_tdee, deficit_phase.expected_tdee
    assert observed.value is not None and expected.value is not None
    adaptation = deficit_phase.adaptation
    assert adaptation.kcal.value == pytest.approx(observed.value - expected.value, abs=1e-9)
    assert adaptation.pct.value == pytest.approx(
        100 * (observed.value - expected.value) / expected.value, abs=1e-9
    )
    # independent errors: half-widths add in quadrature
    assert observed.low is not None and observed.high is not None
    assert expected.low is not None and expected.high is not None
    half = math.hypot((observed.high - observed.low) / 2, (expected.high - expected.low) / 2)
    assert adaptation.kcal.high == pytest.approx(adaptation.kcal.value + half, abs=1e-9)
    assert not adaptation.implausible  # |pct| under 20 % (science notes §6)
    # the constructed data hold no adaptation; the model's own estimate of what a 500 kcal/day
    # cut brings after two months is about -beta_AT x 500 = -70 kcal/day (Hall 2011, beta_AT
    # 0.14 from memory); the measured value lies in that region
    assert -150.0 < adaptation.kcal.value < 0.0


def test_the_stages_assemble_the_analysis(stages: ClientStages) -> None:
    """analyse_client is exactly the stages' assembly."""
    analysis = analyse_client(worked_record(), "2026-11", AnalysisSettings())
    deficit_phase = analysis.phases[1]
    expectation = stages.expectations[1]
    assert expectation is not None
    # the data's figure is the expectation's; the phase reports the combined estimate
    assert deficit_phase.adaptation_data_kcal.value == pytest.approx(
        expectation.adaptation.kcal.value, abs=1e-9
    )
    assessed = stages.adaptations[1]
    assert assessed is not None
    assert deficit_phase.adaptation_kcal == assessed.adaptation
    # 29 September to 30 November is 62 days: week 62 // 7 + 1 = 9
    assert analysis.current_phase == deficit_phase and analysis.week_of_phase == 9
    assert analysis.month_change_kg == stages.trend.month_change
    assert [m.code for m in analysis.methods] == [
        "local-linear-trend",
        "jackson-pollock-3",
        "mifflin-st-jeor",
        "harris-benedict-1919",
        "roza-shizgal-1984",
        "schofield-1985",
        "katch-mcardle",
        "cunningham-1980",
        "hall-2008-energy-density",
        "expenditure-state-space",
        "hall-2011",
        "adaptation-combined",
    ]


def test_a_session_without_the_equations_sites_is_noted_with_its_reason() -> None:
    """An expected condition (science.errors.NotComputable) is caught and its reason kept."""
    record = worked_record()
    incomplete = SkinfoldSession(START, {"triceps": 20.0, "thigh": 30.0}, {})
    record = dataclasses.replace(record, skinfolds=(incomplete,))
    analysis = analyse_client(record, "2026-11", AnalysisSettings())
    assert analysis.bodycomp == ()
    assert "skinfold-session-unusable:2026-09-01:skinfold-sites-missing" in analysis.notes
    assert analysis.bodyfat_fallback is not None  # the BMI-based estimate stands in


def test_resting_equations_at_age_zero_are_noted_with_their_reason() -> None:
    """A client born in the report month: no resting equation (NotComputable), a note."""
    record = worked_record()
    newborn = dataclasses.replace(record.client, birth_date=dt.date(2026, 11, 1))
    analysis = analyse_client(
        dataclasses.replace(record, client=newborn, skinfolds=()), "2026-11", AnalysisSettings()
    )
    assert analysis.special_handling == ("minor",)
    assert "resting-equations-unavailable:age-outside-equation" in analysis.notes
    assert analysis.resting_kcal == {}


def test_an_unexpected_science_error_is_not_silenced(monkeypatch: pytest.MonkeyPatch) -> None:
    """Anything but NotComputable propagates out of the analysis (to the batch's handling)."""
    import reportgen.analysis.composition as composition

    def broken(*args: object, **kwargs: object) -> None:
        raise ValueError("sex must be 'male' or 'female', got 'x'")

    monkeypatch.setattr(composition, "estimate_body_fat", broken)
    with pytest.raises(ValueError, match="sex must be"):
        analyse_client(worked_record(), "2026-11", AnalysisSettings())
