"""Adaptation evidence, decomposition of the fall in expenditure, implied intake,
energy density with its spread, the glycogen step and the cost of steps.

Check values are hand calculations from the named equations (source beside each).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from scipy import stats

from reportgen.results import Estimate
from reportgen.science.activity import (
    kcal_per_1000_steps,
    step_energy_change_kcal,
    step_length_m,
)
from reportgen.science.adaptation import (
    NOT_DISTINGUISHABLE,
    assess_phase_adaptation,
    at_share_of_step,
    body_size_change_kcal,
    combine_adaptation,
    decompose_expenditure_change,
    literature_adaptation_kcal,
    logging_drift_sd_kcal,
    prior_scale_nodes,
)
from reportgen.science.energy_density import (
    energy_density_with_spread,
    glycogen_remaining_share,
    glycogen_step_kg,
    lean_share_from_skinfolds,
)
from reportgen.science.implied_intake import implied_intake, implied_intake_change_kcal
from reportgen.science.trend import Z80


def test_at_share_matches_closed_form() -> None:
    # Hall et al. 2011 AT term after a step: mean of 1 - exp(-t/14) over t = 0..27.
    # Closed form (geometric series, computed here): 1 - (1 - q^28) / (28 (1 - q)), q = e^(-1/14)
    q = math.exp(-1 / 14)
    expected = 1 - (1 - q**28) / (28 * (1 - q))
    assert at_share_of_step(0, 28, 14.0) == pytest.approx(expected, rel=1e-12)
    # the notes' figure: a 28-day window from the first day holds 0.077 x the deficit at
    # betaAT 0.14 (science notes, expected.early_adaptation_kcal docstring; computed there)
    assert 0.14 * expected == pytest.approx(0.077, abs=0.001)


def test_literature_expectation_for_a_moderate_cut() -> None:
    # science notes §0: Hall's model gives AT ~ betaAT x cut, about 70-100 kcal/day for a
    # 500-700 kcal/day cut once built up (synthesis; betaAT 0.14 from memory).
    mean, _ = literature_adaptation_kcal(-600.0, 56, 28)
    assert -84.0 <= mean <= -70.0
    # a 3-week -50 % cut (~1500 kcal/day): Müller et al. 2015 measured 72-108 kcal/day
    # (published, abstract); the expectation's 80 % range must include that.
    m2, s2 = literature_adaptation_kcal(-1500.0, 0, 21)
    assert m2 - Z80 * s2 < -108 and m2 + Z80 * s2 > -72
    # spread relative to the mean for a large cut: Leibel et al. 1995 (published, abstract)
    # give SD/mean 0.50 (never obese) and 0.63 (obese) for the fall in TEE, each a difference
    # of two TEE measurements.  The true between-person part lies below 0.63 and, with half
    # the variance taken as measurement error (judgment), near 0.50 / sqrt 2 = 0.35; the prior
    # adds the coefficient's own uncertainty (a factor of two at most, judgment), so it must
    # lie between 0.35 and hypot(0.63, 0.5) = 0.80.
    m3, s3 = literature_adaptation_kcal(-1500.0, 56, 56)
    assert 0.35 < s3 / abs(m3) < math.hypot(0.63, 0.5)
    # no cut: no adaptation expected, and a spread of a few tens of kcal/day, about 1 % of
    # TDEE (judgment), not the 90-110 kcal/day the uncorrected Leibel SDs would give
    m0, s0 = literature_adaptation_kcal(0.0, 0, 28)
    assert m0 == 0.0 and 15.0 <= s0 <= 50.0


def test_combination_is_the_normal_normal_posterior() -> None:
    # Gelman et al. 2013 §2.5: data -150 (SE 60), prior -70 (SD 80):
    # w = 80²/(80²+60²) = 0.64, mean = 0.64 x -150 + 0.36 x -70 = -121.2, SD = 48.
    e = combine_adaptation(-150.0, 60.0, -70.0, 80.0, prior_dof=None)
    assert e.data_weight == pytest.approx(0.64, rel=1e-12)
    assert e.combined.value == pytest.approx(-121.2, rel=1e-12)
    assert e.combined.high - e.combined.value == pytest.approx(Z80 * 48.0, rel=1e-12)  # type: ignore[operator]
    assert e.data.value == -150.0 and e.literature.value == -70.0
    assert e.distinguishable_from_zero and not e.implausible


def test_t_prior_alone_has_student_t_quantiles() -> None:
    # Data with no information: the combined 80 % interval is the prior's, m +/- t_0.9(4) s
    # with t_0.9(4) = 1.5332 (scipy.stats.t, the reference implementation; Student's t
    # table value 1.533, from memory).
    e = combine_adaptation(0.0, 1e6, -70.0, 50.0)
    t90 = float(stats.t.ppf(0.9, 4))
    assert t90 == pytest.approx(1.533, abs=5e-4)
    assert e.combined.value == pytest.approx(-70.0, abs=0.01)
    assert e.combined.high - (-70.0) == pytest.approx(t90 * 50.0, rel=1e-3)  # type: ignore[operator]
    assert -70.0 - e.combined.low == pytest.approx(t90 * 50.0, rel=1e-3)  # type: ignore[operator]
    assert e.literature.high == pytest.approx(-70.0 + t90 * 50.0, rel=1e-12)
    # the scale-mixture nodes integrate the gamma mixing density: weights sum to 1 and the
    # mean precision multiplier is 1 (Gamma(2, rate 2) has mean 1)
    lam, w = prior_scale_nodes(4.0)
    assert sum(w) == pytest.approx(1.0, rel=1e-12)
    assert sum(a * b for a, b in zip(lam, w, strict=True)) == pytest.approx(1.0, rel=1e-9)


def test_heavy_tailed_prior_yields_to_clear_data() -> None:
    # Precise data far from the literature (6 prior SDs) move a t prior's estimate much
    # further than a normal prior's (Gelman et al. 2013 §17.2: t priors let outlying
    # individuals stand out); where data and literature agree the two priors give nearly the
    # same answer.
    far_t = combine_adaptation(-380.0, 40.0, -80.0, 50.0)
    far_n = combine_adaptation(-380.0, 40.0, -80.0, 50.0, prior_dof=None)
    assert far_t.combined.value < far_n.combined.value - 50.0  # type: ignore[operator]
    # normal-normal reference: w = 50^2 / (50^2 + 40^2) = 0.61, -80 + 0.61 x -300 = -262.9
    assert far_n.combined.value == pytest.approx(-80.0 - 300.0 * 2500.0 / 4100.0, rel=1e-12)
    near_t = combine_adaptation(-100.0, 40.0, -80.0, 50.0)
    near_n = combine_adaptation(-100.0, 40.0, -80.0, 50.0, prior_dof=None)
    assert near_t.combined.value == pytest.approx(near_n.combined.value, abs=3.0)


def test_interval_including_zero_is_said_in_words() -> None:
    e = combine_adaptation(-20.0, 90.0, -30.0, 60.0)
    assert not e.distinguishable_from_zero
    assert e.phrase == NOT_DISTINGUISHABLE


def test_logging_drift_widens_only_on_conflict() -> None:
    drift = logging_drift_sd_kcal(1800.0)
    assert drift == pytest.approx(270.0)  # 15 % of logged intake (judgment)
    agree = combine_adaptation(-90.0, 60.0, -70.0, 70.0, drift)
    plain = combine_adaptation(-90.0, 60.0, -70.0, 70.0)
    w_agree = agree.combined.high - agree.combined.low  # type: ignore[operator]
    w_plain = plain.combined.high - plain.combined.low  # type: ignore[operator]
    assert w_agree < 1.3 * w_plain
    # under-reporting rising 0 -> 20 % at 1800 kcal/day logged hides 450 kcal/day (see
    # logging_drift_sd_kcal): the data say -520 where the truth is about -70
    conflict = combine_adaptation(-520.0, 60.0, -70.0, 70.0, drift)
    assert conflict.implausible
    # (a t prior leaves some room for a truly outlying client, so not certainty)
    assert conflict.logging_drift_probability > 0.8
    assert conflict.combined.low <= -70.0 <= conflict.combined.high  # type: ignore[operator]


@given(
    st.floats(-800, 300),
    st.floats(5, 400),
    st.floats(-300, 0),
    st.floats(10, 300),
    st.floats(0, 600),
)
def test_combined_lies_between_its_inputs(
    d: float, se: float, m: float, sd: float, drift: float
) -> None:
    e = combine_adaptation(d, se, m, sd, drift)
    assert e.combined.value is not None and e.combined.low is not None
    assert min(d, m) - 1e-6 <= e.combined.value <= max(d, m) + 1e-6
    assert e.combined.low <= e.combined.value <= e.combined.high  # type: ignore[operator]


def test_bad_inputs_are_refused() -> None:
    with pytest.raises(ValueError):
        combine_adaptation(float("nan"), 10.0, 0.0, 10.0)
    with pytest.raises(ValueError):
        combine_adaptation(0.0, 0.0, 0.0, 10.0)
    with pytest.raises(ValueError):
        literature_adaptation_kcal(-500.0, float("inf"), 10)


def test_body_size_term_hand_calculation() -> None:
    # Hall et al. 2011 expenditure terms (gammaF 3.2, gammaL 22 kcal/kg/day, from memory):
    # dF -4, dL -1, dBW -5, delta 8.35 -> 3.2*-4 + 22*-1 + 8.35*-5 = -76.55 (computed here)
    assert body_size_change_kcal(-4.0, -1.0, -5.0, 8.35) == pytest.approx(-76.55, abs=1e-9)


def test_decomposition_adds_up_and_says_not_measured() -> None:
    ch = decompose_expenditure_change(-300.0, 50.0, -80.0, 20.0, -60.0, 15.0)
    assert ch.metabolic.value == pytest.approx(-160.0)
    sd = math.sqrt(50**2 + 20**2 + 15**2)
    assert ch.metabolic.high - ch.metabolic.value == pytest.approx(Z80 * sd)  # type: ignore[operator]
    none = decompose_expenditure_change(-300.0, 50.0, -80.0, 20.0, None, None)
    assert none.activity.reason == "not-measured" and not none.activity_measured
    assert none.metabolic.value == pytest.approx(-220.0)
    assert "includes any change in activity" in none.remainder_note


def test_step_cost_acsm() -> None:
    # ACSM walking equation horizontal term 0.1 ml O2/kg/m x 5 kcal/L: 0.5 kcal/kg/km;
    # science notes §0: about 28 kcal per 1000 steps at 80 kg with a 0.7 m step (computed there)
    assert kcal_per_1000_steps(80.0, 0.7) == pytest.approx(28.0, rel=1e-12)
    # step length 0.415 x height for men (common practice, from memory): 180 cm -> 0.747 m
    assert step_length_m(180.0, "male") == pytest.approx(0.747, rel=1e-12)
    assert step_length_m(None, None) == 0.7


def test_step_change_in_kcal() -> None:
    ref = np.full(28, 9000.0)
    now = np.full(28, 6000.0)
    now[::3] = np.nan
    res = step_energy_change_kcal(ref, now, 80.0)
    assert res is not None
    # -3000 steps x 28 kcal / 1000 = -84 kcal/day; SD = 20 % of it (no sampling noise)
    assert res[0] == pytest.approx(-84.0)
    assert res[1] == pytest.approx(0.2 * 84.0)
    assert step_energy_change_kcal(ref, np.full(28, np.nan), 80.0) is None


def test_implied_intake_steady_state_rule() -> None:
    # Hall et al. 2011 steady state, man with F 35 kg (science notes §5 shortcut, computed
    # there: 20.9 kcal/day per kg; the published rule of thumb is about 24, i.e. 100 kJ):
    f = 10.4 / (10.4 + 35.0)
    body = body_size_change_kcal(-(1 - f), -f, -1.0, 8.35)
    # solve dEI = (body + 0.14 dEI) / 0.9 -> dEI = body / 0.76
    d_ei = body / 0.76
    assert implied_intake_change_kcal(0.0, body, 0.14 * d_ei) == pytest.approx(d_ei, rel=1e-12)
    assert d_ei == pytest.approx(-20.9, abs=0.05)


def test_implied_intake_reveals_a_logging_change() -> None:
    # A client at 2500 kcal/day baseline cuts to 1900 (true) but logs 1600: the weight says
    # the deficit is 600 - body-size and adaptation savings.  With body -20 and AT -50:
    # dEI = (-S + body + AT)/0.9; S chosen so that dEI = -600: S = 600*0.9 - 70 = 470.
    r = implied_intake(2500.0, 20.0, 470.0, 40.0, -20.0, -50.0, 30.0, 1600.0, 15.0)
    assert r.implied.value == pytest.approx(1900.0)
    assert r.gap.value == pytest.approx(-300.0)
    assert r.gap.high is not None and r.gap.high < 0  # the logging change shows


def test_energy_density_check_value_and_spread() -> None:
    # science notes table 4.3 (computed there from Hall 2007/2008): F0 20, dBW -10 -> 6518
    rho, sd = energy_density_with_spread(20.0, -10.0)
    assert rho == pytest.approx(6518.0, abs=1.0)
    # the lean share halved (resistance training, high protein) moves rho by
    # (rhoF - rhoL) x p / 2 = 7624 x 0.3834 / 2 (computed here), which the log-normal
    # spread puts at its 5th percentile (factor of two at 1.645 log-SDs, judgment)
    p = 3.834 / 10.0
    half_rho = 9440 * (1 - p / 2) + 1816 * p / 2
    assert abs(half_rho - rho) == pytest.approx(7624 * p / 2, rel=1e-3)
    assert sd == pytest.approx(7624 * p * math.log(2) / 1.6448536, rel=1e-3)
    _, sd_fat = energy_density_with_spread(20.0, -10.0, fat_se_kg=3.0)
    assert sd_fat > sd


def test_skinfold_partition_pulls_towards_measurement() -> None:
    # 80 kg 25 % -> 76 kg 22 % (science notes §4.5, computed there): dF -3.28, dL -0.72
    share, sd = lean_share_from_skinfolds(-3.28, -0.72, 0.5, 0.35)
    assert 0.18 < share < 0.35
    assert sd < 0.35 * math.log(2) / 1.6448536
    assert lean_share_from_skinfolds(0.0, 0.0, 0.5, 0.3)[0] == 0.3


def test_glycogen_step_and_time_constant() -> None:
    step, sd = glycogen_step_kg(-1000.0)
    assert -2.0 <= step <= -1.0  # 1-2 kg early in a diet (science notes §4.4)
    assert sd > 0
    m0, s0 = glycogen_remaining_share(0.0)
    assert (m0, s0) == (1.0, 0.0)
    # exp(-t/tau) averaged over tau uniform on [3, 10]: at t = 7 between e^-7/3 and e^-0.7
    m, s = glycogen_remaining_share(7.0)
    assert math.exp(-7 / 3) < m < math.exp(-0.7)
    assert s > 0.05


def _est(v: float, sd: float) -> Estimate:
    return Estimate(v, v - Z80 * sd, v + Z80 * sd)


def test_phase_assessment_reads_fewer_steps_as_activity() -> None:
    # Baseline TDEE 2600 (SE 50), cut: observed 2050, expected 2250 -> 200 below expected,
    # of which 3000 fewer steps at 80 kg = -84 kcal/day (ACSM, see test_step_cost_acsm).
    res = assess_phase_adaptation(
        observed_tdee=_est(2050.0, 40.0),
        expected_tdee=_est(2250.0, 55.0),
        baseline_tdee_kcal=2600.0,
        baseline_tdee_se_kcal=50.0,
        baseline_intake_kcal=2600.0,
        baseline_intake_se_kcal=30.0,
        baseline_deficit_kcal=0.0,
        phase_deficit=_est(500.0, 40.0),
        logged_intake_kcal=1550.0,
        logged_intake_se_kcal=25.0,
        body_size_kcal=-60.0,
        first_day=0,
        days=84,
        activity=(-84.0, 17.0),
    )
    ch = res.change
    assert ch.total.value == pytest.approx(-550.0)
    assert ch.body_size.value == pytest.approx(-350.0)
    assert ch.activity.value == pytest.approx(-84.0)
    assert ch.metabolic.value == pytest.approx(-116.0)  # -550 + 350 + 84 (the parts add up)
    # data alone: observed - expected = -200; typical: the literature's metabolic term
    # plus the measured -84 from steps; the combined value lies between the two
    ev = res.evidence
    assert ev.data.value == pytest.approx(-200.0)
    assert ev.literature.value is not None and ev.combined.value is not None
    share = at_share_of_step(0, 84, 14.0)
    assert ev.literature.value == pytest.approx(
        0.14 * (-560.0 + 0.14 * (-560.0 / 0.9) * share) / 0.9 * share - 84.0, rel=1e-9
    )
    lo_, hi_ = sorted((-200.0, ev.literature.value))
    assert lo_ <= ev.combined.value <= hi_
    assert res.adaptation == ev.combined
    # weight says the cut was (-500 - 60 + AT)/0.9 (Hall & Chow 2011 form, betaTEF 0.10),
    # with AT the Hall 2011 term for the cut, two passes from AT = 0 over 84 days
    share = at_share_of_step(0, 84, 14.0)
    cut = -560.0 / 0.9
    for _ in range(2):
        cut = (-560.0 + 0.14 * cut * share) / 0.9
    assert res.intake_change_kcal == pytest.approx(cut, rel=1e-12)
    assert res.implied_intake.value == pytest.approx(2600.0 + res.intake_change_kcal)
