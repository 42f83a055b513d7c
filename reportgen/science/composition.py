"""Body composition of a weight change: Forbes' partition and tissue energy densities.

How much of a kilogram lost (or gained) is fat and how much is lean tissue, and
how much energy that kilogram holds.  These turn a trend-weight change into
stored energy (``reportgen.science`` energy balance) and back.

Constants and their sources
---------------------------
``RHO_FAT_KCAL_PER_KG = 9440``
    Metabolizable energy of body fat, 39.5 MJ/kg in Hall 2008 [1]_ (published;
    after Livesey & Elia 1988); 9440 kcal/kg is the rounded value Hall et al.
    2011 [3]_ use.
``RHO_LEAN_KCAL_PER_KG = 1816``
    Energy density of a lean (fat-free) mass change, 7.6 MJ/kg.  From memory
    (unverified) as a quoted number; consistent with lean tissue of about 73 %
    water and 20 % protein.
``FORBES_C_KG = 10.4``
    Forbes' constant: FFM = 10.4 ln(FM) + 14.2, so dFFM/dFM = 10.4/FM.  From
    memory (unverified); the Hall 2007 [2]_ abstract confirms the log relation
    but does not print the numbers.
``KCAL_PER_KG_3500_RULE = 7716.2``
    Wishnofsky's 3500 kcal per pound expressed per kilogram (3500 / 0.45359237,
    computed).
"""

from __future__ import annotations

import math

import numpy as np
from scipy.special import lambertw

from reportgen.science._checks import finite
from reportgen.unit_constants import KG_PER_LB

# Hall 2008 [1]: 39.5 MJ/kg fat (published); Hall 2011 rounds it to 9440 kcal/kg.
RHO_FAT_KCAL_PER_KG = 9440.0
# Hall 2011: 7.6 MJ/kg lean tissue = 1816 kcal/kg (from memory, unverified).
RHO_LEAN_KCAL_PER_KG = 1816.0
# Forbes' constant as used by Hall 2007 (from memory, unverified).
FORBES_C_KG = 10.4
# Wishnofsky 1958: 3500 kcal/lb; per kg computed exactly from the pound definition.
KCAL_PER_KG_3500_RULE = 3500.0 / KG_PER_LB
# Energy-partition constant of the Hall 2011 ODE model, C' = C * rhoL / rhoF
# (computed: about 2.0 kg).  Not the same thing as the mass fraction below.
ENERGY_PARTITION_C_KG = FORBES_C_KG * RHO_LEAN_KCAL_PER_KG / RHO_FAT_KCAL_PER_KG


def _check_fat_mass(fat_mass_kg: float) -> None:
    if not finite(fat_mass_kg) or fat_mass_kg <= 0:
        raise ValueError(f"fat_mass_kg must be a positive number, got {fat_mass_kg!r}")


def lean_fraction_forbes(fat_mass_kg: float) -> float:
    """Fraction of a small weight change that is lean tissue (Forbes).

    Parameters
    ----------
    fat_mass_kg : float
        Current body fat mass, F. [kg]

    Returns
    -------
    float
        dFFM/dBW = C / (C + F), between 0 and 1. [unitless]

    Raises
    ------
    ValueError
        If ``fat_mass_kg`` is not a positive finite number.

    Notes
    -----
    Derivative of Forbes' cross-sectional curve FFM = C ln(FM) + 14.2 with
    C = 10.4 kg, as refitted by Hall 2007 [2]_.  The curve comes from adults
    across a wide range of fatness; leaner people lose a larger share of lean
    tissue.

    References
    ----------
    .. [1] Hall KD. What is the required energy deficit per unit weight loss?
       Int J Obes 2008;32:573-576. doi:10.1038/sj.ijo.0803720
    .. [2] Hall KD. Body fat and fat-free mass inter-relationships: Forbes's
       theory revisited. Br J Nutr 2007;97:1059-1063.
       doi:10.1017/S0007114507691946
    """
    _check_fat_mass(fat_mass_kg)
    return FORBES_C_KG / (FORBES_C_KG + fat_mass_kg)


def partition_weight_change_hall(fat_mass_kg: float, delta_weight_kg: float) -> tuple[float, float]:
    """Split a finite weight change into fat and lean change (Hall's Forbes curve).

    Parameters
    ----------
    fat_mass_kg : float
        Fat mass at the start of the change, F0. [kg]
    delta_weight_kg : float
        Body-weight change, negative for a loss. [kg]

    Returns
    -------
    tuple of float
        (delta_fat_kg, delta_lean_kg), summing to ``delta_weight_kg``. [kg]

    Raises
    ------
    ValueError
        If ``fat_mass_kg`` is not positive, or ``delta_weight_kg`` is not finite.

    Notes
    -----
    Moving parallel to Forbes' curve, the final fat mass solves
    F + C ln F = F0 + dBW + C ln F0, i.e.
    F = C W((F0/C) exp((F0 + dBW)/C)) with W the principal branch of the
    Lambert W function (Hall 2007 [2]_, solved here in closed form).  The lean
    change is dBW - dF.  A loss can never take fat mass to zero on this curve.

    References
    ----------
    .. [1] Hall KD. What is the required energy deficit per unit weight loss?
       Int J Obes 2008;32:573-576. doi:10.1038/sj.ijo.0803720
    .. [2] Hall KD. Body fat and fat-free mass inter-relationships: Forbes's
       theory revisited. Br J Nutr 2007;97:1059-1063.
       doi:10.1017/S0007114507691946
    """
    _check_fat_mass(fat_mass_kg)
    if not finite(delta_weight_kg):
        raise ValueError(f"delta_weight_kg must be a finite number, got {delta_weight_kg!r}")
    if delta_weight_kg == 0.0:
        return 0.0, 0.0
    c = FORBES_C_KG
    # Work in logs so that large gains do not overflow exp(): W(x) for
    # log x = log(F0/C) + (F0 + dBW)/C.
    log_x = math.log(fat_mass_kg / c) + (fat_mass_kg + delta_weight_kg) / c
    if log_x < 700.0:
        w = float(np.real(lambertw(math.exp(log_x))))
    else:  # exp() would overflow: solve w + ln w = log_x by Newton from the asymptote
        w = log_x - math.log(log_x)
        for _ in range(50):
            step = (w + math.log(w) - log_x) / (1.0 + 1.0 / w)
            w -= step
            if abs(step) < 1e-12 * w:
                break
    delta_fat = c * w - fat_mass_kg
    # Polish in terms of the change itself, so that small changes keep full relative
    # precision (c*w - F0 cancels): solve dF + C log1p(dF/F0) = dBW by Newton.
    for _ in range(3):
        g = delta_fat + c * math.log1p(delta_fat / fat_mass_kg) - delta_weight_kg
        delta_fat -= g / (1.0 + c / (fat_mass_kg + delta_fat))
    return delta_fat, delta_weight_kg - delta_fat


def energy_density_kcal_per_kg(fat_mass_kg: float, delta_weight_kg: float = 0.0) -> float:
    """Energy stored per kg of body-weight change.

    Parameters
    ----------
    fat_mass_kg : float
        Fat mass at the start of the change. [kg]
    delta_weight_kg : float, default 0.0
        Size of the change.  0 gives the infinitesimal (marginal) value. [kg]

    Returns
    -------
    float
        (rhoF dF + rhoL dL) / dBW. [kcal/kg]

    Notes
    -----
    With rhoF = 9440 and rhoL = 1816 kcal/kg (Hall 2008 [1]_, Hall 2011 [2]_)
    and the Forbes partition: the infinitesimal value is
    rhoF (1 - f) + rhoL f with f = C/(C + F); a finite change uses
    :func:`partition_weight_change_hall`.  For F0 above about 30 kg the result
    approaches the 3500 kcal/lb rule (7716 kcal/kg); for lean people it is far
    lower, which is why the rule overstates the deficit per kg for them [1]_.

    References
    ----------
    .. [1] Hall KD. What is the required energy deficit per unit weight loss?
       Int J Obes 2008;32:573-576. doi:10.1038/sj.ijo.0803720
    .. [2] Hall KD, Sacks G, Chandramohan D, et al. Quantification of the effect
       of energy imbalance on bodyweight. Lancet 2011;378:826-837.
       doi:10.1016/S0140-6736(11)60812-X
    """
    if delta_weight_kg == 0.0:
        f = lean_fraction_forbes(fat_mass_kg)
        return RHO_FAT_KCAL_PER_KG * (1.0 - f) + RHO_LEAN_KCAL_PER_KG * f
    d_fat, d_lean = partition_weight_change_hall(fat_mass_kg, delta_weight_kg)
    return (RHO_FAT_KCAL_PER_KG * d_fat + RHO_LEAN_KCAL_PER_KG * d_lean) / delta_weight_kg


def fat_and_lean_mass_kg(weight_kg: float, bodyfat_pct: float) -> tuple[float, float]:
    """Fat mass and lean (fat-free) mass from weight and percent body fat.

    Parameters
    ----------
    weight_kg : float
        Body weight. [kg]
    bodyfat_pct : float
        Body fat. [%]

    Returns
    -------
    tuple of float
        (fat_mass_kg, lean_mass_kg) with FM = BW %BF/100 and FFM = BW - FM. [kg]

    Raises
    ------
    ValueError
        If ``weight_kg`` is not positive or ``bodyfat_pct`` is not finite.

    Notes
    -----
    The two-compartment split.  ``bodyfat_pct`` is not limited to 0-100 here:
    an out-of-range estimate is the caller's to flag, never clamped silently.
    """
    if not finite(weight_kg) or weight_kg <= 0:
        raise ValueError(f"weight_kg must be a positive number, got {weight_kg!r}")
    if not finite(bodyfat_pct):
        raise ValueError(f"bodyfat_pct must be a finite number, got {bodyfat_pct!r}")
    fat = weight_kg * bodyfat_pct / 100.0
    return fat, weight_kg - fat
