"""Expected TDEE without adaptation, and metabolic adaptation.

Expected TDEE is what the client's expenditure would be now if it had only
followed the change in body size: the client's own measured baseline adjusted
with the Hall et al. 2011 model terms (resting cost of fat and lean tissue,
body-weight-proportional activity cost, thermic effect of food, cost of tissue
change).  Metabolic adaptation is observed minus expected, the same definition
as the model's adaptive thermogenesis and Fothergill 2016's residual
expenditure (Hall et al. 2011; Fothergill et al. 2016 measure residual resting
expenditure, a related but narrower quantity).

When there is no usable baseline the fallback is a resting equation times an
activity factor, which is much less certain and is labelled so.
"""

from __future__ import annotations

import datetime as dt
import math
from dataclasses import dataclass

from reportgen.results import Estimate
from reportgen.science.hall import HALL_2011, HallParams
from reportgen.science.trend import Z80

# Literature magnitudes to set an estimate beside (each with its source
# kind).  kcal/day unless the unit says otherwise.
LITERATURE_ADAPTATION: tuple[tuple[str, str, str], ...] = (
    (
        "leibel-1995",
        "TEE -6 +/- 3 (never obese) and -8 +/- 5 (obese) kcal/kg FFM/day after >= 10 % loss",
        "published: Leibel, Rosenbaum & Hirsch 1995, NEJM 332:621-8, abstract",
    ),
    (
        "muller-2015",
        "REE -266 kcal/day and adaptive thermogenesis -108 kcal/day after 3 weeks at -50 % "
        "intake, of which about 36 is a change in FFM composition: about -72 kcal/day of "
        "'true' adaptation, resting expenditure only",
        "published: Muller et al. 2015, AJCN 102:807-19, abstract",
    ),
    (
        "fothergill-2016",
        "-499 +/- 207 kcal/day of residual resting expenditure (RMR adjusted for FFM, FM and "
        "age) six years after a 58 kg loss in class III obesity; not a TDEE figure",
        "published: Fothergill et al. 2016, Obesity 24:1612-9, abstract",
    ),
    (
        "synthesis",
        "moderate diets: about betaAT x intake cut, 70-100 kcal/day (2-4 % of TDEE) for a "
        "500-700 kcal/day cut (Hall et al. 2011 model, betaAT 0.14 from memory), plus any fall "
        "in activity; the 10-15 % below prediction of Rosenbaum & Leibel is TEE at a "
        "maintained reduced weight after >= 10 % loss",
        "synthesis of the above, not a single published number",
    ),
)
# Beyond this share of expected TDEE an "adaptation" is more likely a logging or data
# problem (common practice / judgment; the analysis now uses the deficit-scaled rule of
# reportgen.science.adaptation).
IMPLAUSIBLE_ADAPTATION_PCT = 20.0
# Relative SD of a resting equation x activity factor for one person (judgment: resting
# equations are within about 10 % for most adults and the activity factor is a guess).
FALLBACK_REL_SD = 0.15


# A maintenance phase is planned as energy balance, but clients are seldom exactly in balance:
# prior SD of the true deficit during a planned maintenance phase (judgment, common practice:
# a plan at maintenance lands within about +/- 250 kcal/day for most clients).
MAINTENANCE_BALANCE_PRIOR_SD_KCAL = 250.0


def maintenance_deficit_posterior(
    deficit_kcal: float,
    deficit_se_kcal: float,
    prior_sd_kcal: float = MAINTENANCE_BALANCE_PRIOR_SD_KCAL,
) -> tuple[float, float, float]:
    """Realised deficit of a planned maintenance phase, combined with the plan's balance.

    Parameters
    ----------
    deficit_kcal, deficit_se_kcal : float
        Realised deficit measured from the weight trend and its standard error. [kcal/day]
    prior_sd_kcal : float, default 250
        SD of the true deficit of a planned maintenance phase, centred on zero
        (judgment). [kcal/day]

    Returns
    -------
    tuple of float
        (posterior mean [kcal/day], posterior SD [kcal/day], shrinkage factor k
        [unitless]) with k = prior^2 / (prior^2 + SE^2): the normal-normal
        conjugate posterior.

    Notes
    -----
    A three-week weight trend is noisy (water swings persist for days), so a
    measured "deficit" of a few hundred kcal/day in a maintenance phase is often
    water.  The plan itself is evidence that the client was near balance; the
    posterior weighs the two by their precisions, so a clear imbalance (small SE)
    is kept almost whole and a noisy one is pulled towards zero, and the
    posterior SD is never larger than either.  Standard Bayesian updating
    (e.g. Gelman et al., Bayesian Data Analysis, 3rd ed., 2013, §2.5).
    """
    if deficit_se_kcal <= 0 or prior_sd_kcal <= 0:
        return deficit_kcal, max(deficit_se_kcal, 0.0), 1.0
    p2 = prior_sd_kcal * prior_sd_kcal
    k = p2 / (p2 + deficit_se_kcal * deficit_se_kcal)
    return k * deficit_kcal, math.sqrt(k) * deficit_se_kcal, k


def early_adaptation_kcal(
    deficit_kcal: float,
    first_day: int,
    days: int,
    params: HallParams = HALL_2011,
) -> float:
    """Adaptive thermogenesis already present in a baseline window taken inside a deficit.

    Parameters
    ----------
    deficit_kcal : float
        Realised deficit of the window (positive = deficit), standing in for the
        intake cut. [kcal/day]
    first_day : int
        Day of the window's first day counted from the deficit's start (0 = its
        first day). [day]
    days : int
        Length of the window. [day]
    params : HallParams
        betaAT and tauAT of the adaptive-thermogenesis term.

    Returns
    -------
    float
        Mean adaptation over the window, <= 0 (0 without a deficit). [kcal/day]

    Notes
    -----
    The Hall et al. 2011 model's tauAT dAT/dt = betaAT dEI - AT (betaAT 0.14,
    tauAT 14 days; Hall et al. 2011, from memory) after a step dEI = -deficit at
    day 0: AT(t) = -betaAT deficit (1 - exp(-t/tauAT)), averaged over the window.
    For a 28-day window from the first day that is 0.077 x the deficit; for
    comparison Muller et al. 2015 (AJCN 102:807-19, abstract) measured 108
    kcal/day after 3 weeks at -50 % intake, about 0.07 of the cut.
    """
    if deficit_kcal <= 0 or days <= 0:
        return 0.0
    t = [max(first_day + i, 0) for i in range(days)]
    share = sum(1.0 - math.exp(-ti / params.tau_at_days) for ti in t) / days
    return -params.beta_at * deficit_kcal * share


@dataclass(frozen=True)
class Baseline:
    """The client's own reference period (first maintenance phase or first weeks)."""

    tdee_kcal: float
    tdee_se_kcal: float
    weight_kg: float
    fat_kg: float
    intake_kcal: float
    resting_kcal: float  # resting equation at the baseline weight
    fat_rate_kg_per_day: float = 0.0
    lean_rate_kg_per_day: float = 0.0
    source: str = "maintenance-phase"  # or "first-weeks"
    phase_start: dt.date | None = None  # start of the baseline phase, if it is one

    @property
    def lean_kg(self) -> float:
        return self.weight_kg - self.fat_kg


def activity_coefficient_kcal_per_kg_day(
    tdee_kcal: float, resting_kcal: float, weight_kg: float, params: HallParams = HALL_2011
) -> float:
    """Body-weight-proportional activity cost delta from a measured TDEE.

    delta = ((1 - betaTEF) TDEE - RMR) / BW [kcal/kg/day], the Hall 2011 definition
    delta = ((1 - betaTEF) PAL - 1) RMR / BW with PAL = TDEE/RMR (Hall et al. 2011);
    not allowed below 0.
    """
    return max(((1.0 - params.beta_tef) * tdee_kcal - resting_kcal) / weight_kg, 0.0)


def expected_tdee_from_baseline(
    baseline: Baseline,
    weight_kg: float,
    fat_kg: float,
    intake_kcal: float,
    fat_rate_kg_per_day: float = 0.0,
    lean_rate_kg_per_day: float = 0.0,
    params: HallParams = HALL_2011,
) -> Estimate:
    """Expected TDEE without adaptation from the client's own baseline.

    Parameters
    ----------
    baseline : Baseline
        Measured baseline TDEE, composition and intake.
    weight_kg, fat_kg : float
        Current trend weight and fat mass. [kg]
    intake_kcal : float
        Current mean intake (sets the thermic effect of food). [kcal/day]
    fat_rate_kg_per_day, lean_rate_kg_per_day : float
        Current rates of fat and lean change (cost of tissue change). [kg/day]
    params : HallParams

    Returns
    -------
    Estimate
        Expected TDEE with an 80 % interval from the baseline's SE. [kcal/day]

    Notes
    -----
    E = E0 + gF dF + gL dL + delta dBW + betaTEF dEI + etaF d(dF/dt) + etaL d(dL/dt),
    with gF 3.2, gL 22 kcal/kg/day, etaF 180, etaL 230 kcal/kg, betaTEF 0.10 and
    delta from the baseline (:func:`activity_coefficient_kcal_per_kg_day`): the
    terms of the Hall et al. 2011 expenditure equation other than adaptive
    thermogenesis (Hall et al. 2011).  A constant fractional under-logging of
    intake enters E0 and the observed TDEE alike, so it largely cancels in the
    adaptation (it remains through betaTEF and the change in intake).
    """
    lean = weight_kg - fat_kg
    delta = activity_coefficient_kcal_per_kg_day(
        baseline.tdee_kcal, baseline.resting_kcal, baseline.weight_kg, params
    )
    value = (
        baseline.tdee_kcal
        + params.gamma_fat_kcal_per_kg_day * (fat_kg - baseline.fat_kg)
        + params.gamma_lean_kcal_per_kg_day * (lean - baseline.lean_kg)
        + delta * (weight_kg - baseline.weight_kg)
        + params.beta_tef * (intake_kcal - baseline.intake_kcal)
        + params.eta_fat_kcal_per_kg * (fat_rate_kg_per_day - baseline.fat_rate_kg_per_day)
        + params.eta_lean_kcal_per_kg * (lean_rate_kg_per_day - baseline.lean_rate_kg_per_day)
    )
    half = Z80 * baseline.tdee_se_kcal
    return Estimate(value, value - half, value + half)


def expected_tdee_fallback(resting_kcal: float, activity_factor: float) -> Estimate:
    """Lower-confidence expected TDEE: resting equation x activity factor.

    Parameters
    ----------
    resting_kcal : float
        Resting expenditure from an equation (Mifflin-St Jeor by default). [kcal/day]
    activity_factor : float
        Physical activity level (practice setting). [unitless]

    Returns
    -------
    Estimate
        With an 80 % interval of +/- 1.28 x 15 % (judgment: resting equations are
        within about 10 % for most adults, and the activity factor is a guess). [kcal/day]
    """
    value = resting_kcal * activity_factor
    half = Z80 * FALLBACK_REL_SD * value
    return Estimate(value, value - half, value + half)


@dataclass(frozen=True)
class Adaptation:
    kcal: Estimate
    pct: Estimate
    implausible: bool


def adaptation(observed: Estimate, expected: Estimate) -> Adaptation:
    """Metabolic adaptation = observed - expected TDEE, in kcal/day and % of expected.

    Parameters
    ----------
    observed, expected : Estimate
        80 % intervals; their half-widths are combined as independent errors.

    Returns
    -------
    Adaptation
        Negative means expenditure below what body size explains.  ``implausible``
        when |adaptation| exceeds 20 % of expected (more likely a logging or data
        problem; common practice / judgment).
    """
    if not observed.known:
        return Adaptation(
            Estimate.missing(observed.reason or "no-observed"),
            Estimate.missing(observed.reason or "no-observed"),
            False,
        )
    if not expected.known:
        return Adaptation(
            Estimate.missing(expected.reason or "no-expected"),
            Estimate.missing(expected.reason or "no-expected"),
            False,
        )
    assert observed.value is not None and expected.value is not None
    diff = observed.value - expected.value

    def half(e: Estimate) -> float:
        if e.low is None or e.high is None:
            return 0.0
        return (e.high - e.low) / 2.0

    h = math.hypot(half(observed), half(expected))
    kcal = Estimate(diff, diff - h, diff + h)
    pct_v = 100.0 * diff / expected.value
    pct_h = 100.0 * h / expected.value
    pct = Estimate(pct_v, pct_v - pct_h, pct_v + pct_h)
    return Adaptation(kcal, pct, abs(pct_v) > IMPLAUSIBLE_ADAPTATION_PCT)


def deficit_depth_pct(deficit_kcal: float | None, maintenance_kcal: float | None) -> float | None:
    """Realised deficit as % of maintenance (expected TDEE); None when either is unknown."""
    if deficit_kcal is None or maintenance_kcal is None or maintenance_kcal <= 0:
        return None
    return 100.0 * deficit_kcal / maintenance_kcal
