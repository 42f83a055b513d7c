"""Why the deficit shrank: the change in realised deficit taken apart.

Compares the phase's first weeks (after its glycogen weeks) with the recent window
and splits the change in realised deficit into intake drift, the smaller body,
activity (steps), a metabolic remainder and logging, each in kcal/day with an 80 %
interval, on top of the adaptation work's decomposition of the change in
expenditure (``reportgen.science.adaptation``), its cost of steps
(``reportgen.science.activity``) and the intake implied by weight
(``reportgen.science.implied_intake``).  The parts add up to the change; what the
split cannot place is stated as the leftover.

Sign convention: every part is its effect on the realised deficit in kcal/day;
negative means it closed the deficit.

References
----------
.. [1] Hall KD, Sacks G, Chandramohan D, et al. Quantification of the effect of
   energy imbalance on bodyweight. Lancet 2011;378:826-37.
   doi:10.1016/S0140-6736(11)60812-X
.. [2] Hall KD, Chow CC. Estimating changes in free-living energy intake and its
   confidence interval. Am J Clin Nutr 2011;94:66-74 (from memory).
.. [3] Thomas DM, Martin CK, Redman LM, et al. Effect of dietary adherence on the
   body weight plateau: a mathematical model incorporating intermittent
   compliance with energy intake prescription. Am J Clin Nutr
   2014;100:787-95 (from memory).
.. [5] Lichtman SW, Pisarska K, Berman ER, et al. Discrepancy between
   self-reported and actual caloric intake and exercise in obese subjects.
   N Engl J Med 1992;327:1893-8 (from memory).
.. [6] Leibel RL, Rosenbaum M, Hirsch J. Changes in energy expenditure resulting
   from altered body weight. N Engl J Med 1995;332:621-8.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from reportgen.io.model import FloatArray
from reportgen.results import Estimate, PlateauPart
from reportgen.science.adaptation import (
    ExpenditureChange,
    body_size_change_kcal,
    decompose_expenditure_change,
    literature_adaptation_kcal,
    logging_drift_sd_kcal,
)
from reportgen.science.hall import HALL_2011, HallParams
from reportgen.science.implied_intake import implied_intake

CAUSE_CODES: tuple[str, ...] = ("intake", "body-size", "activity", "metabolic", "logging")

# Priors of the metabolic / logging split (judgment, stated in the docstring).
LOGGING_PRIOR_SD_SHARE = 0.025  # of the early intake: per-entry under-reporting can change
LOGGING_PRIOR_SD_BASE_KCAL = 25.0
# Days left unlogged during a diet tend to be the high days (common practice, no single
# source; Thomas et al. 2014 find declining adherence behind most plateaus): excess intake
# of an unlogged day over the logged mean, used for the logging prior.
UNLOGGED_DAY_EXCESS_KCAL = 500.0
# Leibel et al. 1995 (NEJM 332:621-8, abstract, published): TEE fell 6 +/- 3 kcal/kg FFM/day
# (never obese) after holding weight >= 10 % below usual; the scale of the slow part's spread.
LEIBEL_TEE_KCAL_PER_KG_FFM_PER_10PCT = 6.0
BODY_SIZE_REL_SD = 0.25  # judgment: composition and activity coefficient uncertain
BODY_SIZE_SD_BASE_KCAL = 10.0


@dataclass(frozen=True)
class WindowSummary:
    """What the cause split needs from one window (the phase's first weeks, or recent)."""

    days: int
    first_day_in_deficit: int  # window's first day counted from the deficit's start (0 = first)
    mean_weight_kg: float
    fat_kg: float
    deficit_kcal: float  # realised deficit (positive = deficit), balance.window_balance
    deficit_se_kcal: float
    intake_kcal: float | None  # mean logged intake
    intake_se_kcal: float | None
    intake_days: int  # days with a logged intake
    steps: float | None = None  # mean logged steps
    steps_se: float | None = None
    hunger: float | None = None  # mean rating, 1-10
    energy: float | None = None

    @property
    def completeness_pct(self) -> float:
        """Share of the window's days with a logged intake. [%]"""
        return 100.0 * self.intake_days / self.days if self.days > 0 else 0.0


def signal_mean(values: FloatArray) -> tuple[float | None, float | None]:
    """Mean of a logged daily signal and its standard error (None with fewer than 5 values).

    SE = s / sqrt(n), the sample standard error of a mean (days taken as
    independent; judgment).
    """
    x = np.asarray(values, dtype=float)
    x = x[np.isfinite(x)]
    if x.size < 5:
        return None, None
    return float(x.mean()), float(x.std(ddof=1) / math.sqrt(x.size))


@dataclass(frozen=True)
class DeficitChangeCauses:
    """Why the realised deficit changed between the phase's first weeks and now."""

    change_kcal: Estimate  # recent - early realised deficit (negative = shrank)
    parts: tuple[PlateauPart, ...]
    leftover_kcal: float  # change minus the sum of the parts (what noise keeps unplaced)
    largest: str | None  # code of the part that closed the deficit most, if any did
    intake_change_kcal: float | None  # logged intake now minus then
    completeness_change_pct: float  # logged-day share now minus then [percentage points]
    implied_intake_kcal: Estimate  # intake implied by weight now (then = logged then)
    logging_gap_kcal: Estimate  # logged minus implied intake now; negative = less logged
    metabolic_expected_kcal: float  # the literature expectation used as the prior mean
    expenditure: ExpenditureChange  # the adaptation work's decomposition of the change

    def part(self, code: str) -> PlateauPart:
        for p in self.parts:
            if p.code == code:
                return p
        raise KeyError(code)


def deficit_change_causes(
    early: WindowSummary,
    recent: WindowSummary,
    *,
    activity_coefficient_kcal_per_kg_day: float,
    activity_change: tuple[float, float] | None,
    params: HallParams = HALL_2011,
) -> DeficitChangeCauses:
    """Split the change in realised deficit between two windows into its causes.

    Parameters
    ----------
    early, recent : WindowSummary
        The phase's first weeks after its glycogen weeks, and the recent window.
        Both need a logged mean intake.
    activity_coefficient_kcal_per_kg_day : float
        delta of the Hall model for this client
        (``expected.activity_coefficient_kcal_per_kg_day`` from the baseline TDEE).
        [kcal/kg/day]
    activity_change : (float, float) or None
        Change in activity expenditure from logged steps and its SD
        (``activity.step_energy_change_kcal``); None when steps are not logged in
        both windows: activity is then "not measured" and the metabolic part
        includes any change in activity. [kcal/day]
    params : HallParams
        The Hall et al. 2011 coefficients (gammaF, gammaL, betaTEF, betaAT, tauAT).

    Returns
    -------
    DeficitChangeCauses
        Parts in kcal/day with 80 % intervals; ``leftover_kcal`` is what is not
        placed; ``largest`` the part that closed the deficit most.

    Raises
    ------
    ValueError
        If either window has no logged mean intake.

    Notes
    -----
    The realised deficit D = E - I_true, with logged intake I = I_true - U
    (U the intake not logged).  Observed expenditure is I + D, and its change
    between the windows is taken apart by the adaptation work
    (``adaptation.decompose_expenditure_change``): body size
    (``adaptation.body_size_change_kcal``: gammaF dF + gammaL dFFM + delta dBW,
    Hall et al. 2011 [1]_), activity from steps, and a remainder.  Then

        dD = -(1 - betaTEF) dI + body size + activity + (remainder - betaTEF dI)

    (eating more also costs betaTEF of it, so that share of the remainder moves to
    the intake part).  The remainder is dAT - dU: adaptation and a change in the
    unlogged intake, which weight and logged intake cannot tell apart.  It is
    split by normal priors (normal-normal updating, Gelman et al. 2013, §2.5):

    * dAT ~ N(m_A, s_A^2): m_A the change the literature expects between the
      windows (``adaptation.literature_adaptation_kcal`` at the early window's
      deficit: Hall et al. 2011's AT term, mostly in place within weeks), and
      s_A the root sum of squares of its between-person SD at the recent window
      and of a slower part that grows with the weight lost between the windows:
      6 kcal/kg FFM/day per 10 % lost (Leibel et al. 1995 [6]_, published: TEE
      -6 +/- 3 kcal/kg FFM/day in never-obese adults held 10 % below their usual
      weight; used as a scale of spread, not as a mean, because it was measured
      at a maintained reduced weight rather than during a deficit; judgment);
    * dU ~ N(m_U, s_U^2): m_U = 500 kcal x the fall in the share of days logged
      (unlogged days tend to be the high days; common practice, no single source;
      Thomas et al. 2014 [3]_ find declining adherence behind most plateaus) and
      s_U = ``adaptation.logging_drift_sd_kcal`` at 2.5 % of intake + 25 kcal/day
      + m_U/2 (judgment; under-reporting can change during a diet, Lichtman et al.
      1992 [5]_; within a phase less than the 15 % the adaptation work allows
      since the baseline).

    The noise of the remainder (deficit, intake, body-size and activity
    errors) keeps its share of it unplaced: that is ``leftover_kcal``, so the
    parts plus the leftover equal the change exactly.  The intake implied by
    weight now (``implied_intake.implied_intake``, Hall & Chow 2011 [2]_, with the
    early window as reference and the literature adaptation) is reported beside
    the logged intake.
    """
    if early.intake_kcal is None or recent.intake_kcal is None:
        raise ValueError("both windows need a logged mean intake")
    d_change = recent.deficit_kcal - early.deficit_kcal
    d_sd = math.hypot(recent.deficit_se_kcal, early.deficit_se_kcal)
    intake_change = recent.intake_kcal - early.intake_kcal
    intake_sd = math.hypot(recent.intake_se_kcal or 0.0, early.intake_se_kcal or 0.0)
    d_bw = recent.mean_weight_kg - early.mean_weight_kg
    d_fat = recent.fat_kg - early.fat_kg
    size = body_size_change_kcal(
        d_fat, d_bw - d_fat, d_bw, activity_coefficient_kcal_per_kg_day, params
    )
    size_sd = BODY_SIZE_REL_SD * abs(size) + BODY_SIZE_SD_BASE_KCAL
    act, act_sd = activity_change if activity_change is not None else (None, None)
    expenditure = decompose_expenditure_change(
        d_change + intake_change,
        math.hypot(d_sd, intake_sd),
        size,
        size_sd,
        act,
        act_sd,
    )
    tef = params.beta_tef * intake_change
    remainder = d_change + intake_change - size - (act or 0.0) - tef
    intake_part = (-(intake_change - tef), (1 - params.beta_tef) * intake_sd)
    noise_var = d_sd**2 + intake_part[1] ** 2 + size_sd**2 + (act_sd or 0.0) ** 2
    # metabolic / logging split of the remainder
    cut = max(early.deficit_kcal, 0.0)
    lit_e, _ = literature_adaptation_kcal(-cut, early.first_day_in_deficit, early.days, params)
    lit_r, s_lit = literature_adaptation_kcal(
        -cut, recent.first_day_in_deficit, recent.days, params
    )
    m_a = lit_r - lit_e
    loss_pct = max(-d_bw, 0.0) / early.mean_weight_kg * 100.0
    ffm = recent.mean_weight_kg - recent.fat_kg
    s_slow = LEIBEL_TEE_KCAL_PER_KG_FFM_PER_10PCT * ffm * loss_pct / 10.0
    s_a = math.hypot(s_lit, s_slow)
    completeness_change = recent.completeness_pct - early.completeness_pct
    m_u = UNLOGGED_DAY_EXCESS_KCAL * max(-completeness_change, 0.0) / 100.0
    s_u = (
        logging_drift_sd_kcal(early.intake_kcal, LOGGING_PRIOR_SD_SHARE)
        + LOGGING_PRIOR_SD_BASE_KCAL
        + m_u / 2
    )
    total = s_a * s_a + s_u * s_u + noise_var
    innov = remainder - (m_a - m_u)
    d_at = m_a + s_a * s_a / total * innov
    d_u = m_u - s_u * s_u / total * innov
    sd_at = s_a * math.sqrt(max(1 - s_a * s_a / total, 0.0))
    sd_u = s_u * math.sqrt(max(1 - s_u * s_u / total, 0.0))
    leftover = innov * noise_var / total
    values: dict[str, Estimate] = {
        "intake": Estimate.normal(*intake_part),
        "body-size": Estimate.normal(size, size_sd),
        "activity": expenditure.activity,
        "metabolic": Estimate.normal(d_at, sd_at),
        "logging": Estimate.normal(-d_u, sd_u),
    }
    out_parts = tuple(PlateauPart(code, values[code]) for code in CAUSE_CODES)
    closing = [(p.kcal.value, p.code) for p in out_parts if p.kcal.value is not None]
    worst = min(closing, default=None)
    largest = worst[1] if worst is not None and worst[0] < 0 else None
    implied = implied_intake(
        early.intake_kcal,
        early.intake_se_kcal or 0.0,
        d_change,
        d_sd,
        size + (act or 0.0),
        m_a,
        s_a,
        recent.intake_kcal,
        recent.intake_se_kcal or 0.0,
        params=params,
    )
    return DeficitChangeCauses(
        change_kcal=Estimate.normal(d_change, d_sd),
        parts=out_parts,
        leftover_kcal=leftover,
        largest=largest,
        intake_change_kcal=intake_change,
        completeness_change_pct=completeness_change,
        implied_intake_kcal=implied.implied,
        logging_gap_kcal=implied.gap,
        metabolic_expected_kcal=m_a,
        expenditure=expenditure,
    )
