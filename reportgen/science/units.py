"""Unit conversions used across reportgen (mass, energy, length).

Canonical units inside the project are kg, kcal, cm and mm; readers convert
once on the way in and reports once on the way out, through these constants.

Constants and their sources
---------------------------
``KG_PER_LB = 0.45359237``
    The international avoirdupois pound, exact by definition (International
    Yard and Pound Agreement, 1959; NIST SP 811, Appendix B).
``KJ_PER_KCAL = 4.184``
    The thermochemical calorie, exact by definition (NIST SP 811, Appendix B);
    the calorie used on food labels and in the nutrition literature cited here.
``CM_PER_INCH = 2.54``
    The international inch, exact by definition (1959 agreement; NIST SP 811).

References
----------
.. [1] Thompson A, Taylor BN. Guide for the Use of the International System of
   Units (SI). NIST Special Publication 811, 2008 edition, Appendix B.
"""

from __future__ import annotations

import numpy as np
import numpy.typing as npt

from reportgen.science._checks import finite

KG_PER_LB = 0.45359237  # exact, 1959 international pound
KJ_PER_KCAL = 4.184  # exact, thermochemical calorie
CM_PER_INCH = 2.54  # exact, 1959 international inch
MJ_PER_KCAL = KJ_PER_KCAL / 1000.0

Number = float | npt.NDArray[np.float64]


def lb_to_kg(mass_lb: Number) -> Number:
    """Convert pounds to kilograms.

    Parameters
    ----------
    mass_lb : float or array
        Mass. [lb]

    Returns
    -------
    float or array
        Mass. [kg]
    """
    return mass_lb * KG_PER_LB


def kg_to_lb(mass_kg: Number) -> Number:
    """Convert kilograms to pounds.

    Parameters
    ----------
    mass_kg : float or array
        Mass. [kg]

    Returns
    -------
    float or array
        Mass. [lb]
    """
    return mass_kg / KG_PER_LB


def kj_to_kcal(energy_kj: Number) -> Number:
    """Convert kilojoules to (thermochemical) kilocalories.

    Parameters
    ----------
    energy_kj : float or array
        Energy. [kJ]

    Returns
    -------
    float or array
        Energy. [kcal]
    """
    return energy_kj / KJ_PER_KCAL


def kcal_to_kj(energy_kcal: Number) -> Number:
    """Convert (thermochemical) kilocalories to kilojoules.

    Parameters
    ----------
    energy_kcal : float or array
        Energy. [kcal]

    Returns
    -------
    float or array
        Energy. [kJ]
    """
    return energy_kcal * KJ_PER_KCAL


def mj_to_kcal(energy_mj: Number) -> Number:
    """Convert megajoules to kilocalories.

    Parameters
    ----------
    energy_mj : float or array
        Energy. [MJ]

    Returns
    -------
    float or array
        Energy. [kcal]
    """
    return energy_mj / MJ_PER_KCAL


def kcal_to_mj(energy_kcal: Number) -> Number:
    """Convert kilocalories to megajoules.

    Parameters
    ----------
    energy_kcal : float or array
        Energy. [kcal]

    Returns
    -------
    float or array
        Energy. [MJ]
    """
    return energy_kcal * MJ_PER_KCAL


def inch_to_cm(length_in: Number) -> Number:
    """Convert inches to centimetres.

    Parameters
    ----------
    length_in : float or array
        Length. [in]

    Returns
    -------
    float or array
        Length. [cm]
    """
    return length_in * CM_PER_INCH


def cm_to_inch(length_cm: Number) -> Number:
    """Convert centimetres to inches.

    Parameters
    ----------
    length_cm : float or array
        Length. [cm]

    Returns
    -------
    float or array
        Length. [in]
    """
    return length_cm / CM_PER_INCH


def bmi_kg_m2(weight_kg: float, height_cm: float) -> float:
    """Body-mass index.

    Parameters
    ----------
    weight_kg : float
        Body weight. [kg]
    height_cm : float
        Standing height. [cm]

    Returns
    -------
    float
        weight / height² with height in metres. [kg/m²]

    Raises
    ------
    ValueError
        If either input is not a positive number.
    """
    if not (finite(weight_kg) and finite(height_cm)) or weight_kg <= 0 or height_cm <= 0:
        raise ValueError(
            f"weight_kg and height_cm must be positive, got {weight_kg!r} and {height_cm!r}"
        )
    return weight_kg / (height_cm / 100.0) ** 2
