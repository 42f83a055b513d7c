"""Energy density of a weight change with its between-person uncertainty, and the glycogen step.

Forbes' curve (as refitted by Hall 2007) gives the *average* lean share of a
weight change for a given fat mass; individuals differ widely around it with
training, protein intake and starting fatness (Heymsfield et al. 2014, from
memory).  Here the lean share is taken as log-normal around Forbes' value, with
a 90 % range of a factor of two either way (judgment: resistance training and
high protein can halve the lean share, a very low protein intake double it).
When a client has serial skinfold sessions, the measured change in fat and lean
mass informs the partition, the way the intake-balance method of the CALERIE
studies used measured body composition (Racette et al. 2012).

The fast glycogen-and-water shift at an intake change is sized in proportion to
the intake change, with a time constant taken as uncertain between 3 and 10 days.

References
----------
.. [1] Hall KD. Body fat and fat-free mass inter-relationships: Forbes's theory
   revisited. Br J Nutr 2007;97:1059-63.
.. [2] Hall KD. What is the required energy deficit per unit weight loss?
   Int J Obes 2008;32:573-6.
.. [3] Heymsfield SB, Gonzalez MC, Shen W, Redman L, Thomas D. Weight loss
   composition is one-fourth fat-free mass: a critical review and critique of
   this widely cited rule. Obes Rev 2014;15:310-21. (From memory.)
.. [4] Racette SB, Das SK, Bhapkar M, et al. Approaches for quantifying energy
   intake and %calorie restriction during calorie restriction interventions in
   humans: the multicenter CALERIE study. Am J Physiol Endocrinol Metab
   2012;302:E441-8. (From memory.)
"""

from __future__ import annotations

import math

from reportgen.science._checks import finite
from reportgen.science.composition import (
    RHO_FAT_KCAL_PER_KG,
    RHO_LEAN_KCAL_PER_KG,
    partition_weight_change_hall,
)
from reportgen.unit_constants import KJ_PER_KCAL

# log-SD of the lean share around Forbes' curve: a factor of 2 at the 5th/95th percentile
# (judgment, see the module docstring).
LEAN_SHARE_LOG_SD = math.log(2.0) / 1.6448536269514722
# Glycogen with its water per kcal/day of intake change: about 400 g of glycogen at full
# stores (from memory), of which a 50 % cut empties about a quarter to a half in days; with
# 2.7-4 g water per g (Hall's model uses 2.7; literature 3-4, from memory) that is roughly
# 1-2 kg for a 1000 kcal/day cut.  Mean 1.4 g per kcal/day, SD 0.5 (judgment).
GLYCOGEN_STEP_KG_PER_KCAL = 0.0014
GLYCOGEN_STEP_SD_KG_PER_KCAL = 0.0005
GLYCOGEN_TAU_RANGE_DAYS = (3.0, 10.0)  # uniform (judgment, from the brief range)
# Energy of a kg of glycogen-with-water: 17.6 MJ/kg glycogen (Hall 2008, published) with
# 2.7 g water per g (Hall's model, weight change 3.7 x glycogen; from memory; the
# literature range is 3-4 g/g): 4206 / 3.7 = 1137 kcal/kg.  The one value used by the
# energy balance, the plateau parts and the simulator.
GLYCOGEN_WATER_KCAL_PER_KG = 17.6e3 / KJ_PER_KCAL / 3.7


def _req(name: str, v: object) -> float:
    if not finite(v):
        raise ValueError(f"{name} must be a finite number, got {v!r}")
    return float(v)  # type: ignore[arg-type]


def energy_density_with_spread(
    fat_mass_kg: float,
    delta_weight_kg: float,
    fat_se_kg: float = 0.0,
    lean_share_log_sd: float = LEAN_SHARE_LOG_SD,
) -> tuple[float, float]:
    """Energy per kg of a weight change and its SD from the partition spread.

    Parameters
    ----------
    fat_mass_kg : float
        Fat mass at the start. [kg], > 0
    delta_weight_kg : float
        The weight change (tissue, no water). [kg]
    fat_se_kg : float, default 0
        SE of the fat mass (equation error). [kg]
    lean_share_log_sd : float
        Log-SD of the lean share around Forbes' curve.

    Returns
    -------
    (rho, sd) : tuple of float
        rho = rhoF (1 - p) + rhoL p with p Forbes' lean share of the change
        (Hall 2007/2008); sd by the delta method from the log-normal spread of p
        and the SE of the fat mass. [kcal/kg]

    Notes
    -----
    Check (computed from Hall 2007's curve with Hall 2008's densities):
    F0 20 kg, dBW -10 kg gives dF -6.166, dL -3.834 and 6518 kcal/kg.
    """
    f = _req("fat_mass_kg", fat_mass_kg)
    dw = _req("delta_weight_kg", delta_weight_kg)
    if f <= 0:
        raise ValueError("fat_mass_kg must be > 0")
    step = dw if abs(dw) > 1e-6 else -1e-6
    _, d_l = partition_weight_change_hall(f, step)
    p = d_l / step
    rho = RHO_FAT_KCAL_PER_KG * (1 - p) + RHO_LEAN_KCAL_PER_KG * p
    span = RHO_FAT_KCAL_PER_KG - RHO_LEAN_KCAL_PER_KG
    # partition spread: d rho / d ln p = -span p
    sd_part = span * p * lean_share_log_sd
    # fat-mass error: rho at F +/- SE(F)
    sd_fat = 0.0
    se = _req("fat_se_kg", fat_se_kg)
    if se > 0:
        f_hi = f + se
        f_lo = max(f - se, 0.5)
        r = []
        for ff in (f_lo, f_hi):
            _, b = partition_weight_change_hall(ff, step)
            r.append(RHO_FAT_KCAL_PER_KG * (1 - b / step) + RHO_LEAN_KCAL_PER_KG * (b / step))
        sd_fat = abs(r[1] - r[0]) / 2.0
    return rho, math.hypot(sd_part, sd_fat)


def lean_share_from_skinfolds(
    fat_change_kg: float,
    lean_change_kg: float,
    change_se_kg: float,
    forbes_share: float,
    lean_share_log_sd: float = LEAN_SHARE_LOG_SD,
) -> tuple[float, float]:
    """Lean share of a weight change, combining measured composition with Forbes' curve.

    Parameters
    ----------
    fat_change_kg, lean_change_kg : float
        Change in fat and lean mass between two skinfold sessions (same equation,
        same tester). [kg]
    change_se_kg : float
        SE of the measured fat-mass change (the lean change is the weight change
        minus it, so its error is the same). [kg]
    forbes_share : float
        Forbes' lean share for the client (prior). [0-1]

    Returns
    -------
    (share, sd) : tuple of float
        Precision-weighted lean share and its SD (normal-normal on the share;
        the prior SD is Forbes' share times the log-SD). [unitless]

    Notes
    -----
    The measured share is dL / (dF + dL) with SD change_se / |dBW|.  Over small
    changes the measurement says little and Forbes' curve dominates; over a loss
    of several kg it dominates.  This is the spirit of the CALERIE intake-balance
    method (Racette et al. 2012), which used measured composition change.
    """
    df = _req("fat_change_kg", fat_change_kg)
    dl = _req("lean_change_kg", lean_change_kg)
    se = _req("change_se_kg", change_se_kg)
    prior = _req("forbes_share", forbes_share)
    prior_sd = max(prior * lean_share_log_sd, 1e-6)
    dw = df + dl
    if abs(dw) < 1e-9 or se <= 0:
        return prior, prior_sd
    meas = dl / dw
    meas_sd = se / abs(dw)
    w = prior_sd**2 / (prior_sd**2 + meas_sd**2)
    share = w * meas + (1 - w) * prior
    sd = math.sqrt(1.0 / (1.0 / prior_sd**2 + 1.0 / meas_sd**2))
    return min(max(share, 0.0), 1.0), sd


def glycogen_step_kg(intake_change_kcal: float) -> tuple[float, float]:
    """Size of the glycogen-and-water shift after a change in intake, with its SD.

    Parameters
    ----------
    intake_change_kcal : float
        Change in daily intake (negative = cut). [kcal/day]

    Returns
    -------
    (step, sd) : tuple of float
        Eventual change in body weight from glycogen and its water (same sign as
        the intake change) and its SD. [kg]
    """
    d = _req("intake_change_kcal", intake_change_kcal)
    return GLYCOGEN_STEP_KG_PER_KCAL * d, GLYCOGEN_STEP_SD_KG_PER_KCAL * abs(d)


# Smallest prior SD of a step (judgment): a phase change with little change in logged
# intake can still move carbohydrate and salt, and the logged change is itself uncertain.
GLYCOGEN_STEP_MIN_SD_KG = 0.3


def glycogen_step_prior_sd_kg(intake_change_kcal: float) -> float:
    """Prior SD of a zero-mean glycogen-and-water step for a trend fit. [kg]

    Parameters
    ----------
    intake_change_kcal : float
        Change in daily intake where the step starts. [kcal/day]

    Returns
    -------
    float
        sqrt(step^2 + sd^2) from :func:`glycogen_step_kg` (the root mean square
        of the step about zero, so a zero-mean prior has the same second moment
        as the sized one and does not pull the fit towards a value a client with
        larger or smaller stores would not have), at least 0.3 kg. [kg]

    Notes
    -----
    Check (computed here): a 1000 kcal/day cut gives sqrt(1.4^2 + 0.5^2) =
    1.487 kg, about the 1-2 kg of glycogen with its water seen early in a diet
    (Hall 2008, from memory).
    """
    step, sd = glycogen_step_kg(intake_change_kcal)
    return max(math.hypot(step, sd), GLYCOGEN_STEP_MIN_SD_KG)


def glycogen_remaining_share(days_since_change: float) -> tuple[float, float]:
    """Share of the glycogen step still to come after t days, with its SD.

    With a time constant uniform on 3-10 days, the share exp(-t/tau) is averaged
    over tau; its SD is that of exp(-t/tau) over the same range (Simpson's rule on
    50 points). [unitless]
    """
    t = _req("days_since_change", days_since_change)
    if t <= 0:
        return 1.0, 0.0
    lo, hi = GLYCOGEN_TAU_RANGE_DAYS
    n = 50
    vals = [math.exp(-t / (lo + (hi - lo) * i / n)) for i in range(n + 1)]
    wts = [1 if i in (0, n) else (4 if i % 2 else 2) for i in range(n + 1)]
    s = sum(wts)
    mean = sum(w * v for w, v in zip(wts, vals, strict=True)) / s
    var = sum(w * (v - mean) ** 2 for w, v in zip(wts, vals, strict=True)) / s
    return mean, math.sqrt(var)
