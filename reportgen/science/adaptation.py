"""Metabolic adaptation as a combined estimate, and the drop in expenditure taken apart.

Three pieces:

* :func:`literature_adaptation_kcal` - what the published literature expects for
  a deficit of a given depth and duration: the adaptive-thermogenesis (AT) term
  of the Hall et al. 2011 model, proportional to the intake change and building
  up with its time constant, with a between-person spread from the measured
  studies.
* :func:`combine_adaptation` - the client's own evidence ("data alone":
  observed minus expected expenditure) and the literature expectation, weighed
  by their precisions (normal-normal), with a second mixture component for the
  case that the intake log drifted during the diet (then the data say little
  about metabolism and the interval widens).
* :func:`decompose_expenditure_change` - the fall in expenditure between two
  windows split into the smaller body, activity (from logged steps) and the
  metabolic remainder, each with an 80 % interval.  The same call serves
  "this phase against the baseline" and "recent weeks against the phase's first
  weeks".

Sign convention: an adaptation or a change in expenditure is negative when
expenditure is below the reference. [kcal/day] throughout.

References
----------
.. [1] Hall KD, Sacks G, Chandramohan D, et al. Quantification of the effect of
   energy imbalance on bodyweight. Lancet 2011;378:826-37.
.. [2] Leibel RL, Rosenbaum M, Hirsch J. Changes in energy expenditure resulting
   from altered body weight. N Engl J Med 1995;332:621-8.
.. [3] Müller MJ, Enderle J, Pourhassan M, et al. Metabolic adaptation to caloric
   restriction and subsequent refeeding: the Minnesota Starvation Experiment
   revisited. Am J Clin Nutr 2015;102:807-19.
.. [4] Gelman A, Carlin JB, Stern HS, et al. Bayesian Data Analysis, 3rd ed.
   CRC Press 2013, section 2.5 (normal data with a normal prior).
.. [5] Lichtman SW, Pisarska K, Berman ER, et al. Discrepancy between self-reported
   and actual caloric intake and exercise in obese subjects. N Engl J Med
   1992;327:1893-8.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import special, stats

from reportgen.results import Estimate
from reportgen.science._checks import finite
from reportgen.science.hall import HALL_2011, HallParams
from reportgen.science.implied_intake import implied_intake as _implied
from reportgen.science.implied_intake import implied_intake_change_kcal
from reportgen.science.trend import Z80

# The literature prior for a client's adaptation (see literature_adaptation_kcal):
#
# Between-person spread relative to the mean.  Leibel et al. 1995 report the fall in TEE after
# >= 10 % loss as 6 +/- 3 (never obese) and 8 +/- 5 (obese) kcal/kg FFM/day (published,
# abstract): SD/mean 0.50 and 0.63.  Each of those SDs is the spread of a *difference of two
# TEE measurements* per person, so it holds twice the measurement error besides the true
# between-person spread.  Taking half of the published variance as measurement error
# (judgment: a TEE measurement in that kind of study repeats within about 5-8 % of TEE, from
# memory) leaves SD/mean 0.35 and 0.45; we take 0.4.
BETWEEN_PERSON_CV = 0.4
# Uncertainty of the mean coefficient itself (the same for every client).  The Hall et al.
# 2011 model's betaAT 0.14 (from memory) predicts about 160 kcal/day after 3 weeks at -50 %
# intake; Müller et al. 2015 measured 72-108 kcal/day of *resting* adaptation there
# (published, abstract), and Leibel et al. 1995 found non-resting expenditure falling about as
# much as resting, so the TEE figure may lie near the model's or at half of it.  A factor of
# two either way as the 80 % range is ln 2 / 1.28 = 0.54 on the log scale; as a relative SD
# we take 0.5 (judgment).
COEFFICIENT_CV = 0.5
# Absolute spread added to the proportional one: expenditure departs from the model's body-size
# terms by a few tens of kcal/day even without a cut (individual tissue costs and the
# activity coefficient differ from the model's averages; judgment: about 1 % of TDEE).
LITERATURE_SD_FLOOR_KCAL = 30.0
# Degrees of freedom of the Student-t prior: a minority of clients adapt far more or less
# than the typical value (Fothergill et al. 2016 report -499 +/- 207 kcal/day of residual
# resting expenditure six years after a very large loss), so the prior has heavier tails than
# a normal; where data and literature clearly disagree the data pull the estimate further
# than a normal prior of the same scale would let them (judgment; 4 is a common robust choice,
# Gelman et al. 2013, section 17.2).
PRIOR_DOF = 4.0
PRIOR_NODES = 16  # Gauss-Laguerre nodes for the t prior's scale mixture
# Logging drift: self-reported intake is commonly 20-50 % below measured expenditure and the
# gap can change during a diet (Lichtman et al. 1992; Schoeller 1995, Metabolism 44 Suppl 2:
# 18-22).  Prior probability that a client's logging changed when the diet started, and the
# SD of that change as a share of logged intake (judgment, from the range above).
LOGGING_DRIFT_PRIOR = 0.2
LOGGING_DRIFT_SD_FRACTION = 0.15
# An apparent adaptation beyond this many literature SDs from the expectation for that
# deficit is more likely logging or data (replaces a fixed share of TDEE).  Judgment: 2.5 SD
# is outside the 99 % range of the literature spread.
IMPLAUSIBLE_Z = 2.5
# Without logged steps the data's "adaptation" also holds any change in activity, which
# the literature AT term does not: spontaneous activity often falls during a diet (Leibel
# et al. 1995: non-resting expenditure fell about as much as resting).  SD added to the
# literature expectation when steps are not logged (judgment).
UNMEASURED_ACTIVITY_SD_KCAL = 60.0
NOT_DISTINGUISHABLE = "not distinguishable from no adaptation"


def _require(name: str, value: object, *, positive: bool = False) -> float:
    if not finite(value):
        raise ValueError(f"{name} must be a finite number, got {value!r}")
    v = float(value)  # type: ignore[arg-type]
    if positive and v <= 0:
        raise ValueError(f"{name} must be > 0, got {v}")
    return v


def at_share_of_step(first_day: float, days: int, tau_at_days: float) -> float:
    """Mean of 1 - exp(-t/tau) over ``days`` daily points from ``first_day``.

    The share of its final size that the Hall 2011 AT term (tauAT dAT/dt =
    betaAT dEI - AT) has reached on average over a window that starts
    ``first_day`` days after a step change in intake. [unitless, 0-1]
    """
    if days <= 0:
        return 0.0
    tau = _require("tau_at_days", tau_at_days, positive=True)
    return sum(1.0 - math.exp(-max(first_day + i, 0.0) / tau) for i in range(days)) / days


def literature_adaptation_kcal(
    intake_change_kcal: float,
    first_day: float,
    days: int,
    params: HallParams = HALL_2011,
) -> tuple[float, float]:
    """Adaptation the literature expects for an intake change of given size and age.

    Parameters
    ----------
    intake_change_kcal : float
        Change in intake from the client's maintenance (negative for a cut). [kcal/day]
    first_day : float
        Days from the intake change to the window's first day (0 = first day). [day]
    days : int
        Length of the window. [day], >= 1
    params : HallParams
        betaAT (0.14) and tauAT (14 days) of the Hall et al. 2011 model (from memory).

    Returns
    -------
    (mean, sd) : tuple of float
        Expected mean adaptation over the window (same sign as the intake change)
        and the spread of a client's adaptation about it (the scale of the
        Student-t prior :func:`combine_adaptation` uses; a normal SD where one is
        used). [kcal/day]

    Notes
    -----
    Hall et al. 2011's AT term after a step dEI: AT(t) = betaAT dEI (1 - exp(-t/tauAT)).
    The spread is sd = hypot(0.64 |mean|, 30): the true between-person spread
    (SD/mean 0.4: Leibel et al. 1995's 0.50-0.63 with the measurement error of
    their two TEE measurements taken out, judgment), the uncertainty of betaAT
    itself (relative SD 0.5: Müller et al. 2015's resting figure and Leibel et
    al.'s non-resting share bracket the model within a factor of two, judgment)
    and 30 kcal/day of departure from the model's body-size terms (judgment).
    Check (computed here): a 600 kcal/day cut over weeks 8-12 gives a mean of
    about -83 and an SD of about 61.  Valid for intake changes of up to about 50 %
    of maintenance over weeks to months; it says nothing about the years-long
    adaptation after extreme losses (Fothergill et al. 2016 report -499 +/- 207
    kcal/day of residual *resting* expenditure six years on).
    """
    d = _require("intake_change_kcal", intake_change_kcal)
    _require("first_day", first_day)
    mean = params.beta_at * d * at_share_of_step(first_day, days, params.tau_at_days)
    cv = math.hypot(BETWEEN_PERSON_CV, COEFFICIENT_CV)
    sd = math.hypot(cv * mean, LITERATURE_SD_FLOOR_KCAL)
    return mean, sd


def _normal_cdf(x: float) -> float:
    return 0.5 * math.erfc(-x / math.sqrt(2.0))


def _mixture_quantile(
    weights: list[float], means: list[float], sds: list[float], q: float
) -> float:
    """Quantile of a mixture of normals by bisection."""
    lo = min(m - 8 * s for m, s in zip(means, sds, strict=True))
    hi = max(m + 8 * s for m, s in zip(means, sds, strict=True))
    for _ in range(80):
        mid = 0.5 * (lo + hi)
        c = sum(w * _normal_cdf((mid - m) / s) for w, m, s in zip(weights, means, sds, strict=True))
        if c < q:
            lo = mid
        else:
            hi = mid
    return 0.5 * (lo + hi)


@dataclass(frozen=True)
class AdaptationEvidence:
    """The three figures a practitioner sees side by side, each with an 80 % interval."""

    data: Estimate  # observed minus expected TDEE ("your data alone")
    literature: Estimate  # "typical for a deficit like this"
    combined: Estimate  # precision-weighted, with the logging-drift component
    data_weight: float  # weight of the data in the honest-log component, 0-1
    logging_drift_probability: float  # posterior probability of the drift component
    implausible: bool  # data far outside the literature range for this deficit
    distinguishable_from_zero: bool  # combined interval excludes zero

    @property
    def phrase(self) -> str:
        """Plain words for the combined estimate."""
        if not self.distinguishable_from_zero:
            return NOT_DISTINGUISHABLE
        assert self.combined.value is not None
        v = self.combined.value
        side = "below" if v < 0 else "above"
        return f"about {abs(round(v, -1)):.0f} kcal/day {side} what body size explains"


def prior_scale_nodes(dof: float | None, n: int = PRIOR_NODES) -> tuple[list[float], list[float]]:
    """Precision multipliers and weights that make a normal prior a Student-t one.

    A Student-t prior with ``dof`` degrees of freedom and scale s is a normal
    N(m, s^2 / lambda) with lambda ~ Gamma(dof/2, rate dof/2) (a scale mixture of
    normals; Gelman et al. 2013, section 17.2).  The integral over lambda is done
    by generalised Gauss-Laguerre quadrature with ``n`` nodes.

    Returns
    -------
    (multipliers, weights) : lists of float
        lambda_i and weights summing to 1; ([1.0], [1.0]) for ``dof`` None (normal).
    """
    if dof is None:
        return [1.0], [1.0]
    if not finite(dof) or dof <= 0:
        raise ValueError(f"prior_dof must be > 0 or None, got {dof!r}")
    a = dof / 2.0
    x, w = special.roots_genlaguerre(n, a - 1.0)
    total = float(np.sum(w))
    return [float(v) / a for v in x], [float(v) / total for v in w]


def combine_adaptation(
    data_kcal: float,
    data_se_kcal: float,
    literature_kcal: float,
    literature_sd_kcal: float,
    logging_drift_sd_kcal: float = 0.0,
    drift_prior: float = LOGGING_DRIFT_PRIOR,
    prior_dof: float | None = PRIOR_DOF,
) -> AdaptationEvidence:
    """Combine the client's data with the literature expectation.

    Parameters
    ----------
    data_kcal, data_se_kcal : float
        Observed minus expected TDEE and its standard error, which must include
        the noise of the client's own baseline. [kcal/day]
    literature_kcal, literature_sd_kcal : float
        From :func:`literature_adaptation_kcal`: the prior's centre and scale. [kcal/day]
    logging_drift_sd_kcal : float, default 0
        SD of a possible change in logging since the baseline
        (see :func:`logging_drift_sd_kcal`); 0 switches the drift component off.
    drift_prior : float, default 0.2
        Prior probability that logging drifted (judgment).
    prior_dof : float or None, default 4
        Degrees of freedom of the Student-t prior; None for a normal prior.

    Returns
    -------
    AdaptationEvidence

    Notes
    -----
    The prior is a Student-t around the literature value, written as a scale
    mixture of normals (:func:`prior_scale_nodes`).  For each of its normal
    components the posterior is the normal-normal one (Gelman et al. 2013, §2.5),
    mean = (d/se^2 + m/sd^2) / (1/se^2 + 1/sd^2).  The drift alternative is the
    same with the data's variance raised by the drift variance, because an
    under-reporting change shifts observed TDEE one for one.  All components are
    weighed by their marginal likelihoods of the data, so the probability of
    drift rises with the gap between data and literature (which is the gap
    between logged intake and the intake the weights imply); the point estimate
    is the mixture median and the interval its 10th-90th percentiles.  Where data
    and literature agree the interval is the narrow precision-weighted one; where
    they disagree the t prior's tails let the data pull the estimate away from the
    literature, unless a logging change explains the gap better.
    """
    d = _require("data_kcal", data_kcal)
    se = _require("data_se_kcal", data_se_kcal, positive=True)
    m = _require("literature_kcal", literature_kcal)
    sd = _require("literature_sd_kcal", literature_sd_kcal, positive=True)
    drift = _require("logging_drift_sd_kcal", logging_drift_sd_kcal)
    if drift < 0:
        raise ValueError("logging_drift_sd_kcal must be >= 0")
    if not 0.0 <= drift_prior < 1.0:
        raise ValueError("drift_prior must be in [0, 1)")

    alternatives = [(se * se, 1.0)]
    if drift > 0 and drift_prior > 0:
        alternatives = [(se * se, 1.0 - drift_prior), (se * se + drift * drift, drift_prior)]
    log_w: list[float] = []
    means: list[float] = []
    sds: list[float] = []
    data_w: list[float] = []
    is_drift: list[bool] = []
    for lam, pi in zip(*prior_scale_nodes(prior_dof), strict=True):
        v_prior = sd * sd / lam
        for k, (v_data, p_alt) in enumerate(alternatives):
            tot = v_data + v_prior
            w = v_prior / tot
            log_w.append(
                math.log(pi * p_alt) - 0.5 * math.log(2 * math.pi * tot) - 0.5 * (d - m) ** 2 / tot
            )
            means.append(w * d + (1 - w) * m)
            sds.append(math.sqrt(v_prior * v_data / tot))
            data_w.append(w)
            is_drift.append(k == 1)
    top = max(log_w)
    raw = [math.exp(x - top) for x in log_w]
    norm = sum(raw)
    weights = [x / norm for x in raw]
    p_drift = sum(w for w, dr in zip(weights, is_drift, strict=True) if dr)
    honest = sum(w for w, dr in zip(weights, is_drift, strict=True) if not dr)
    w0 = sum(w * dw for w, dw, dr in zip(weights, data_w, is_drift, strict=True) if not dr) / honest
    if len(weights) == 1:
        combined = Estimate.normal(means[0], sds[0])
    else:
        combined = Estimate(
            _mixture_quantile(weights, means, sds, 0.5),
            _mixture_quantile(weights, means, sds, 0.1),
            _mixture_quantile(weights, means, sds, 0.9),
        )
    assert combined.low is not None and combined.high is not None
    implausible = abs(d - m) > IMPLAUSIBLE_Z * math.hypot(sd, se)
    # the prior's own 80 % range ("typical for a deficit like this")
    q_lit = float(stats.t.ppf(0.9, prior_dof)) if prior_dof is not None else Z80
    return AdaptationEvidence(
        data=Estimate.normal(d, se),
        literature=Estimate(m, m - q_lit * sd, m + q_lit * sd),
        combined=combined,
        data_weight=w0,
        logging_drift_probability=p_drift,
        implausible=implausible,
        distinguishable_from_zero=not (combined.low <= 0.0 <= combined.high),
    )


def logging_drift_sd_kcal(
    logged_intake_kcal: float, fraction_sd: float = LOGGING_DRIFT_SD_FRACTION
) -> float:
    """SD of a possible change in the share of intake logged since the baseline.

    Parameters
    ----------
    logged_intake_kcal : float
        Mean logged intake of the window. [kcal/day], >= 0
    fraction_sd : float, default 0.15
        SD of the change in the unlogged share (judgment from the 20-50 %
        under-reporting range of Lichtman et al. 1992 and Schoeller 1995, and its
        known change during diets).

    Returns
    -------
    float
        [kcal/day]; a change in under-reporting from 0 to 20 % at 1800 kcal/day
        logged is 1800 x 0.2 / 0.8 = 450 kcal/day of true intake not seen.
    """
    x = _require("logged_intake_kcal", logged_intake_kcal)
    if x < 0:
        raise ValueError("logged_intake_kcal must be >= 0")
    return fraction_sd * x


@dataclass(frozen=True)
class ExpenditureChange:
    """The change in expenditure between a reference window and a later one, in parts."""

    total: Estimate  # observed TDEE now minus the reference's (negative = fell)
    body_size: Estimate  # expected from the change in fat and lean mass
    activity: Estimate  # from logged steps; missing("not-measured") without steps
    metabolic: Estimate  # the remainder; includes any activity change when not measured
    activity_measured: bool

    @property
    def remainder_note(self) -> str:
        if self.activity_measured:
            return "metabolic remainder (after body size and logged steps)"
        return "remainder (includes any change in activity: steps not logged)"


def body_size_change_kcal(
    fat_change_kg: float,
    lean_change_kg: float,
    weight_change_kg: float,
    activity_coefficient_kcal_per_kg_day: float,
    params: HallParams = HALL_2011,
) -> float:
    """Change in expenditure explained by a smaller (or larger) body.

    Parameters
    ----------
    fat_change_kg, lean_change_kg : float
        Change in fat and fat-free mass between the windows. [kg]
    weight_change_kg : float
        Change in body weight between the windows (usually their sum). [kg]
    activity_coefficient_kcal_per_kg_day : float
        delta of the Hall model, the weight-proportional cost of activity. [kcal/kg/day]
    params : HallParams
        gammaF and gammaL (3.2 and 22 kcal/kg/day; Hall et al. 2011, from memory).

    Returns
    -------
    float
        gammaF dF + gammaL dL + delta dBW. [kcal/day]

    Notes
    -----
    The resting and weight-bearing terms of the Hall et al. 2011 expenditure
    equation.  Example (hand calculation): dF -4, dL -1, dBW -5, delta 8.35 gives
    3.2 x -4 + 22 x -1 + 8.35 x -5 = -76.55 kcal/day.
    """
    return (
        params.gamma_fat_kcal_per_kg_day * _require("fat_change_kg", fat_change_kg)
        + params.gamma_lean_kcal_per_kg_day * _require("lean_change_kg", lean_change_kg)
        + _require("activity_coefficient", activity_coefficient_kcal_per_kg_day)
        * _require("weight_change_kg", weight_change_kg)
    )


def decompose_expenditure_change(
    observed_change_kcal: float,
    observed_change_se_kcal: float,
    body_size_kcal: float,
    body_size_sd_kcal: float,
    activity_kcal: float | None,
    activity_sd_kcal: float | None,
) -> ExpenditureChange:
    """Split a change in observed expenditure into body size, activity and a remainder.

    Parameters
    ----------
    observed_change_kcal, observed_change_se_kcal : float
        Observed TDEE of the later window minus that of the reference window, and
        its SE (both windows' noise). [kcal/day]
    body_size_kcal, body_size_sd_kcal : float
        From :func:`body_size_change_kcal`, with the SD carried from the fat/lean
        change (partition spread). [kcal/day]
    activity_kcal, activity_sd_kcal : float or None
        From :func:`reportgen.science.activity.step_energy_change_kcal`; None when
        the client logged too few steps in either window. [kcal/day]

    Returns
    -------
    ExpenditureChange
        Each part with an 80 % interval; the parts add up to the total exactly
        (remainder = total - body size - activity), and the remainder's SD is the
        root sum of squares of the others (independent errors).

    Notes
    -----
    Used for "this phase against the baseline" (the adaptation) and for "recent
    weeks against the phase's first weeks" (a stall); only the windows differ.
    """
    tot = _require("observed_change_kcal", observed_change_kcal)
    tse = _require("observed_change_se_kcal", observed_change_se_kcal)
    body = _require("body_size_kcal", body_size_kcal)
    bsd = _require("body_size_sd_kcal", body_size_sd_kcal)
    measured = activity_kcal is not None and activity_sd_kcal is not None
    if measured:
        act = _require("activity_kcal", activity_kcal)
        asd = _require("activity_sd_kcal", activity_sd_kcal)
        activity = Estimate.normal(act, asd)
    else:
        act = asd = 0.0
        activity = Estimate.missing("not-measured")
    rem = tot - body - act
    rsd = math.sqrt(tse * tse + bsd * bsd + asd * asd)
    return ExpenditureChange(
        total=Estimate.normal(tot, tse),
        body_size=Estimate.normal(body, bsd),
        activity=activity,
        metabolic=Estimate.normal(rem, rsd),
        activity_measured=measured,
    )


@dataclass(frozen=True)
class PhaseAdaptation:
    """Everything said about a phase's expenditure against the client's baseline."""

    evidence: AdaptationEvidence  # data alone, typical, combined (all: observed - expected)
    adaptation: Estimate  # the combined estimate (= evidence.combined)
    change: ExpenditureChange  # observed change from the baseline in parts (data alone)
    implied_intake: Estimate  # intake implied by weight [kcal/day]
    logging_gap: Estimate  # logged minus implied intake [kcal/day]
    intake_change_kcal: float  # cut implied by weight, used for the literature value


def assess_phase_adaptation(
    observed_tdee: Estimate,
    expected_tdee: Estimate,
    baseline_tdee_kcal: float,
    baseline_tdee_se_kcal: float,
    baseline_intake_kcal: float,
    baseline_intake_se_kcal: float,
    baseline_deficit_kcal: float,
    phase_deficit: Estimate,
    logged_intake_kcal: float | None,
    logged_intake_se_kcal: float,
    body_size_kcal: float,
    first_day: float,
    days: int,
    activity: tuple[float, float] | None,
    params: HallParams = HALL_2011,
) -> PhaseAdaptation:
    """Adaptation of one phase against the client's baseline, with its parts and the logging check.

    Parameters
    ----------
    observed_tdee, expected_tdee : Estimate
        The phase's observed TDEE (intake minus stored energy) and its expected TDEE
        (baseline scaled to the phase's body size, thermic effect and tissue
        turnover; its interval includes the baseline's own noise). [kcal/day]
    baseline_tdee_kcal, baseline_tdee_se_kcal : float
        The baseline's observed TDEE and its SE. [kcal/day]
    baseline_intake_kcal, baseline_intake_se_kcal, baseline_deficit_kcal : float
        The baseline's mean logged intake, its SE and its realised deficit. [kcal/day]
    phase_deficit : Estimate
        The phase's realised deficit (energy drawn from stores). [kcal/day]
    logged_intake_kcal, logged_intake_se_kcal : float or None, float
        The phase's mean logged intake and its SE. [kcal/day]
    body_size_kcal : float
        Change in expenditure from fat, lean and weight change alone
        (:func:`body_size_change_kcal`). [kcal/day]
    first_day, days : float, int
        Days from the intake change to the window's start, and its length. [day]
    activity : (mean, sd) or None
        Change in step expenditure (:func:`reportgen.science.activity.step_energy_change_kcal`).

    Returns
    -------
    PhaseAdaptation

    Notes
    -----
    1. The cut is taken from the weights, not the log: the intake change implied
       by weight (Hall & Chow 2011) with the literature adaptation for that cut
       (two fixed-point passes from AT = 0).
    2. The literature expectation for that cut and window
       (:func:`literature_adaptation_kcal`).
    3. The data: observed minus expected.  The "typical" value on the same footing:
       the literature's metabolic term plus the measured change in step
       expenditure (so that fewer steps are not read as metabolism); without logged
       steps the literature value gets an extra 60 kcal/day of spread for activity
       changes it does not describe (judgment).
    4. :func:`combine_adaptation` with a logging-drift component sized by
       :func:`logging_drift_sd_kcal`.
    5. The parts of the change from the baseline (data alone): body size,
       activity, metabolic remainder (:func:`decompose_expenditure_change`).
    """
    if not (observed_tdee.known and expected_tdee.known and phase_deficit.known):
        raise ValueError("observed, expected TDEE and the phase deficit are needed")
    assert observed_tdee.value is not None and expected_tdee.value is not None
    assert phase_deficit.value is not None
    d_def = phase_deficit.value - baseline_deficit_kcal
    d_def_se = phase_deficit.normal_sd
    cut = implied_intake_change_kcal(d_def, body_size_kcal, 0.0, 0.0, params)
    lit_mean, lit_sd = literature_adaptation_kcal(min(cut, 0.0), first_day, days, params)
    cut = implied_intake_change_kcal(d_def, body_size_kcal, lit_mean, 0.0, params)
    lit_mean, lit_sd = literature_adaptation_kcal(min(cut, 0.0), first_day, days, params)
    if activity is None:
        lit_sd = math.hypot(lit_sd, UNMEASURED_ACTIVITY_SD_KCAL)

    obs_sd, exp_sd = observed_tdee.normal_sd, expected_tdee.normal_sd
    total = observed_tdee.value - baseline_tdee_kcal
    total_se = math.hypot(obs_sd, baseline_tdee_se_kcal)
    body = expected_tdee.value - baseline_tdee_kcal
    body_sd = math.sqrt(max(exp_sd * exp_sd - baseline_tdee_se_kcal**2, 0.0))
    act_m, act_sd = activity if activity is not None else (None, None)
    change = decompose_expenditure_change(total, total_se, body, body_sd, act_m, act_sd)
    # On the same footing as the data (observed - expected, which holds any activity
    # change): the literature's metabolic term plus the measured change in steps.
    typical_m = lit_mean + (act_m or 0.0)
    typical_sd = math.hypot(lit_sd, act_sd or 0.0)
    data = observed_tdee.value - expected_tdee.value
    data_se = max(math.hypot(obs_sd, exp_sd), 1.0)
    drift = logging_drift_sd_kcal(logged_intake_kcal) if logged_intake_kcal else 0.0
    ev = combine_adaptation(data, data_se, typical_m, typical_sd, drift)
    adaptation = ev.combined
    imp = _implied(
        baseline_intake_kcal,
        baseline_intake_se_kcal,
        d_def,
        d_def_se,
        body_size_kcal,
        lit_mean,
        lit_sd,
        logged_intake_kcal,
        logged_intake_se_kcal,
        0.0,
        params,
    )
    assert imp.implied.value is not None
    return PhaseAdaptation(
        ev, adaptation, change, imp.implied, imp.gap, imp.implied.value - baseline_intake_kcal
    )
