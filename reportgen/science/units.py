"""Unit conversions used across reportgen (mass, energy, length).

Canonical units inside the project are kg, kcal, cm and mm; readers convert
once on the way in and reports once on the way out, through these constants.

The constants themselves (and their sources) are in :mod:`reportgen.unit_constants`,
the one place every layer takes them from.

References
----------
.. [1] Thompson A, Taylor BN. Guide for the Use of the International System of
   Units (SI). NIST Special Publication 811, 2008 edition, Appendix B.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import numpy.typing as npt

from reportgen.science._checks import finite
from reportgen.unit_constants import CM_PER_INCH as CM_PER_INCH
from reportgen.unit_constants import KG_PER_LB as KG_PER_LB
from reportgen.unit_constants import KJ_PER_KCAL as KJ_PER_KCAL

MJ_PER_KCAL = KJ_PER_KCAL / 1000.0

Number = float | npt.NDArray[np.float64]


@dataclass(frozen=True)
class UnitConversion:
    """An exact conversion: multiply by ``factor`` to go from ``source`` to ``target``.

    ``forward`` converts source -> target (x * factor), ``backward`` target -> source
    (x / factor); both take a float or an array.
    """

    source: str
    target: str
    factor: float

    def forward(self, value: Number) -> Number:
        """``value`` [source unit] in the target unit."""
        return value * self.factor

    def backward(self, value: Number) -> Number:
        """``value`` [target unit] in the source unit."""
        return value / self.factor


POUNDS_TO_KG = UnitConversion("lb", "kg", KG_PER_LB)
KCAL_TO_KJ = UnitConversion("kcal", "kJ", KJ_PER_KCAL)  # thermochemical kilocalorie
KCAL_TO_MJ = UnitConversion("kcal", "MJ", MJ_PER_KCAL)
INCHES_TO_CM = UnitConversion("in", "cm", CM_PER_INCH)

#: Pounds to kilograms [lb -> kg] and back.
lb_to_kg = POUNDS_TO_KG.forward
kg_to_lb = POUNDS_TO_KG.backward
#: Kilocalories to kilojoules [kcal -> kJ] and back.
kcal_to_kj = KCAL_TO_KJ.forward
kj_to_kcal = KCAL_TO_KJ.backward
#: Kilocalories to megajoules [kcal -> MJ] and back.
kcal_to_mj = KCAL_TO_MJ.forward
mj_to_kcal = KCAL_TO_MJ.backward
#: Inches to centimetres [in -> cm] and back.
inch_to_cm = INCHES_TO_CM.forward
cm_to_inch = INCHES_TO_CM.backward


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
