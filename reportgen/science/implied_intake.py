"""Intake implied by body weight, set beside logged intake.

From weight alone, the energy-balance model gives the intake a client must have
eaten for the weight to change as it did (Hall & Chow 2011).  The version here is
the Hall et al. 2011 expenditure equation solved for intake over a window,
relative to the client's own baseline window:

    EI - EI0 = (S - S0 + dEE_body + AT + dEE_tissue) / (1 - betaTEF)

with S the energy drawn from stores per day (the realised deficit, positive for a
loss, so that EI = EE - S), dEE_body the change in expenditure explained by body
size (gammaF dF + gammaL dL + delta dBW), AT the adaptive thermogenesis (taken
at its literature expectation) and dEE_tissue the change in the cost of tissue
turnover.  EI0 is the baseline's mean logged intake.

Because the baseline's own intake is logged, a *constant* under-reporting cancels
out; what the comparison shows is a *change* in logging (or an adaptation well
beyond the literature's: from weight and intake alone the two cannot be told
apart, which is why both are named as candidate causes).

References
----------
.. [1] Hall KD, Chow CC. Estimating changes in free-living energy intake and its
   confidence interval. Am J Clin Nutr 2011;94:66-74.
.. [2] Sanghvi A, Redman LM, Martin CK, Ravussin E, Hall KD. Validation of an
   inexpensive and accurate mathematical method to measure long-term changes in
   free-living energy intake. Am J Clin Nutr 2015;102:353-8.
.. [3] Hall KD, Sacks G, Chandramohan D, et al. Quantification of the effect of
   energy imbalance on bodyweight. Lancet 2011;378:826-37.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from reportgen.results import Estimate
from reportgen.science._checks import finite
from reportgen.science.hall import HALL_2011, HallParams


def _req(name: str, value: object) -> float:
    if not finite(value):
        raise ValueError(f"{name} must be a finite number, got {value!r}")
    return float(value)  # type: ignore[arg-type]


@dataclass(frozen=True)
class ImpliedIntake:
    implied: Estimate  # intake implied by weight [kcal/day]
    logged_kcal: float | None  # mean logged intake of the window
    gap: Estimate  # logged minus implied; negative = less logged than eaten


def implied_intake_change_kcal(
    deficit_change_kcal: float,
    body_size_change_kcal: float,
    adaptation_kcal: float,
    tissue_cost_change_kcal: float = 0.0,
    params: HallParams = HALL_2011,
) -> float:
    """Change in intake from the baseline implied by the weight change.

    Parameters
    ----------
    deficit_change_kcal : float
        Realised deficit of the window minus that of the baseline (energy drawn
        from stores per day; positive = more drawn). [kcal/day]
    body_size_change_kcal : float
        Change in expenditure explained by body size
        (:func:`reportgen.science.adaptation.body_size_change_kcal`). [kcal/day]
    adaptation_kcal : float
        Adaptive thermogenesis assumed (negative in a deficit). [kcal/day]
    tissue_cost_change_kcal : float, default 0
        Change in etaF dF/dt + etaL dL/dt. [kcal/day]
    params : HallParams
        betaTEF (0.10, Hall et al. 2011, from memory).

    Returns
    -------
    float
        [kcal/day], negative for eating less than at baseline.

    Notes
    -----
    Hand check against the Hall et al. 2011 steady state (the linearised model,
    20.9 kcal/day per kg for a man with 35 kg fat, computed here): at steady
    state (no deficit) a 1 kg loss with lean share 10.4/45.4 costs
    3.2 x -0.771 + 22 x -0.229 + 8.35 x -1 = -15.86 kcal/day of body size; with
    AT = 0.14 x dEI, dEI = -15.86 / (1 - 0.10 - 0.14) = -20.9 kcal/day.
    """
    s = _req("deficit_change_kcal", deficit_change_kcal)
    b = _req("body_size_change_kcal", body_size_change_kcal)
    a = _req("adaptation_kcal", adaptation_kcal)
    t = _req("tissue_cost_change_kcal", tissue_cost_change_kcal)
    return (-s + b + a + t) / (1.0 - params.beta_tef)


def implied_intake(
    baseline_intake_kcal: float,
    baseline_intake_se_kcal: float,
    deficit_change_kcal: float,
    deficit_change_se_kcal: float,
    body_size_change_kcal: float,
    adaptation_kcal: float,
    adaptation_sd_kcal: float,
    logged_kcal: float | None,
    logged_se_kcal: float = 0.0,
    tissue_cost_change_kcal: float = 0.0,
    params: HallParams = HALL_2011,
) -> ImpliedIntake:
    """Mean intake implied by weight over a window, with an 80 % interval, and the gap.

    Parameters
    ----------
    baseline_intake_kcal, baseline_intake_se_kcal : float
        Mean logged intake of the baseline window and its SE. [kcal/day]
    deficit_change_kcal, deficit_change_se_kcal : float
        See :func:`implied_intake_change_kcal`; SE of the difference of the two
        windows' realised deficits. [kcal/day]
    body_size_change_kcal, adaptation_kcal, adaptation_sd_kcal : float
        Body-size term; literature adaptation and its SD. [kcal/day]
    logged_kcal : float or None
        Mean logged intake of the window; None gives a missing gap. [kcal/day]
    logged_se_kcal : float, default 0
        Its SE. [kcal/day]

    Returns
    -------
    ImpliedIntake
    """
    k = 1.0 / (1.0 - params.beta_tef)
    change = implied_intake_change_kcal(
        deficit_change_kcal,
        body_size_change_kcal,
        adaptation_kcal,
        tissue_cost_change_kcal,
        params,
    )
    base = _req("baseline_intake_kcal", baseline_intake_kcal)
    value = base + change
    sd = math.sqrt(
        _req("baseline_intake_se_kcal", baseline_intake_se_kcal) ** 2
        + (k * _req("deficit_change_se_kcal", deficit_change_se_kcal)) ** 2
        + (k * _req("adaptation_sd_kcal", adaptation_sd_kcal)) ** 2
    )
    imp = Estimate.normal(value, sd)
    if logged_kcal is None or not finite(logged_kcal):
        return ImpliedIntake(imp, None, Estimate.missing("no-intake"))
    g = float(logged_kcal) - value
    gsd = math.hypot(sd, _req("logged_se_kcal", logged_se_kcal))
    return ImpliedIntake(imp, float(logged_kcal), Estimate.normal(g, gsd))
