"""Energy cost of a change in logged steps.

The net cost of level walking from the ACSM walking equation,
VO2 = 0.1 x speed + 1.8 x speed x grade + 3.5 (ml O2/kg/min, speed in m/min):
the horizontal term is 0.1 ml O2 per kg per metre walked above rest.  With
about 5 kcal per litre of oxygen (the Weir 1949 equation gives 4.7-5.05 kcal/L
over the usual respiratory quotients; 5.0 is the usual rounding) that is
0.0005 kcal per kg per metre, i.e. 0.5 kcal per kg per km.  A step covers a
step length, commonly taken as 0.413 x height (women) or 0.415 x height (men)
(common practice for pedometer set-up, no single source; from memory).

References
----------
.. [1] American College of Sports Medicine. ACSM's Guidelines for Exercise
   Testing and Prescription, metabolic equations (walking). From memory.
.. [2] Weir JB de V. New methods for calculating metabolic rate with special
   reference to protein metabolism. J Physiol 1949;109:1-9.
"""

from __future__ import annotations

import math

import numpy as np

from reportgen.io.model import FloatArray
from reportgen.science._checks import finite

ACSM_HORIZONTAL_ML_O2_PER_KG_M = 0.1  # ACSM walking equation, level-walking term
KCAL_PER_L_O2 = 5.0  # Weir 1949 range 4.7-5.05; common rounding
STEP_LENGTH_PER_HEIGHT = {"female": 0.413, "male": 0.415}  # common practice, from memory
DEFAULT_STEP_LENGTH_M = 0.7  # when height is unknown (judgment: adult average)
# Relative SD of the cost per step for one person: step length varies about 10 % at a
# given height and the oxygen cost of walking about 10-15 % between people (judgment).
COST_REL_SD = 0.2
MIN_STEP_DAYS = 7  # fewer logged days in a window: not measured (judgment)


def step_length_m(height_cm: float | None, sex: str | None) -> float:
    """Step length from height (0.413 x height for women, 0.415 for men). [m]

    Common practice for pedometers (from memory).  Without a height: 0.7 m; without a
    sex: the mean of the two factors.
    """
    if height_cm is None or not finite(height_cm) or not 100.0 <= float(height_cm) <= 250.0:
        return DEFAULT_STEP_LENGTH_M
    factor = STEP_LENGTH_PER_HEIGHT.get(sex or "", 0.414)
    return factor * float(height_cm) / 100.0


def kcal_per_1000_steps(weight_kg: float, step_m: float = DEFAULT_STEP_LENGTH_M) -> float:
    """Net energy cost of 1000 level-walking steps above rest. [kcal]

    ACSM horizontal term 0.1 ml O2/kg/m x 5 kcal/L x step length x 1000 x weight.
    Check (computed here): 80 kg, 0.7 m -> 0.0005 x 700 x 80 = 28.0 kcal.
    Valid for adults walking at ordinary speeds (50-100 m/min) on level ground.
    """
    if not finite(weight_kg) or weight_kg <= 0:
        raise ValueError(f"weight_kg must be a positive number, got {weight_kg!r}")
    if not finite(step_m) or step_m <= 0:
        raise ValueError(f"step_m must be a positive number, got {step_m!r}")
    return ACSM_HORIZONTAL_ML_O2_PER_KG_M / 1000.0 * KCAL_PER_L_O2 * step_m * 1000.0 * weight_kg


def _mean_se(x: FloatArray) -> tuple[float, float, int]:
    v = x[np.isfinite(x)]
    n = int(v.size)
    if n == 0:
        return math.nan, math.nan, 0
    sd = float(v.std(ddof=1)) if n > 1 else 0.0
    return float(v.mean()), sd / math.sqrt(n), n


def step_energy_change_kcal(
    steps_ref: FloatArray,
    steps_now: FloatArray,
    weight_kg: float,
    height_cm: float | None = None,
    sex: str | None = None,
    min_days: int = MIN_STEP_DAYS,
) -> tuple[float, float] | None:
    """Change in activity expenditure from the change in mean daily steps.

    Parameters
    ----------
    steps_ref, steps_now : array of float
        Daily step counts of the reference window and the later window (NaN =
        not logged). [steps/day]
    weight_kg : float
        Body weight in the later window. [kg]
    height_cm, sex : optional
        For the step length.
    min_days : int, default 7
        Fewer logged days in either window gives None ("not measured").

    Returns
    -------
    (mean, sd) or None
        Change in expenditure (negative = fewer steps) and its SD from the two
        window means' sampling errors and a 20 % uncertainty of the cost per step.
        [kcal/day]
    """
    m0, se0, n0 = _mean_se(np.asarray(steps_ref, dtype=float))
    m1, se1, n1 = _mean_se(np.asarray(steps_now, dtype=float))
    if n0 < min_days or n1 < min_days:
        return None
    per = kcal_per_1000_steps(weight_kg, step_length_m(height_cm, sex)) / 1000.0
    change = (m1 - m0) * per
    sd = math.hypot(per * math.hypot(se0, se1), COST_REL_SD * change)
    return change, sd
