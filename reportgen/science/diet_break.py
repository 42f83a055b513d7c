"""When a planned diet break at maintenance is worth discussing: the one rule.

The client report's narrative and the plateau section's options both ask this
question; both call :func:`diet_break_due` so they cannot disagree.

What the published evidence supports
------------------------------------
* MATADOR (Byrne et al. 2018 [1]_; from memory): men with obesity, 16 weeks of
  energy restriction to about 67 % of measured requirements (a deficit of about
  33 %), given either continuously or as eight 2-week blocks of restriction
  alternating with 2-week blocks at energy balance (30 weeks in all).  The
  intermittent group lost more weight and fat and had a smaller fall in resting
  expenditure (adjusted for body composition), and kept more of the loss at
  follow-up.  So: 2-week breaks at maintenance within a deep (about one-third)
  restriction are supported for men with obesity; the trial did not test when a
  first break becomes due, breaks in shallow deficits, or women.
* ICECAP (Peos et al. 2021 [2]_; from memory): resistance-trained adults, 1-week
  breaks at maintenance after every 3 weeks of a moderate (about 25 %) deficit,
  against continuous dieting: similar fat loss and lean-mass retention, and less
  reported hunger with the breaks.  So the benefit on fat loss is not
  established for moderate deficits; the breaks did no harm to fat loss per week
  of dieting and eased hunger.

The rule (judgment, informed by the above; not from either trial)
-----------------------------------------------------------------
* **Length**: at least 12 weeks (84 days) of continuous deficit
  (``BREAK_MIN_DAYS_IN_DEFICIT``).  Neither trial ran one long block: MATADOR's
  continuous arm dieted 16 weeks straight; 12 weeks is the point at which coaches
  commonly raise the question (common practice, no single source).
* **Depth**: a deficit of at least 20 % of maintenance (``BREAK_MIN_DEPTH_PCT``),
  between ICECAP's about 25 % and MATADOR's about 33 % with room for the estimate's
  error; a shallower deficit is not offered a break on this evidence.  When the
  depth cannot be estimated (no baseline to set maintenance), the length alone
  decides: the break is an option to discuss, and its cost is two weeks of time.
* **Length of the break**: 2 weeks at maintenance (``BREAK_WEEKS``, MATADOR's).

References
----------
.. [1] Byrne NM, Sainsbury A, King NA, Hills AP, Wood RE. Intermittent energy
   restriction improves weight loss efficiency in obese men: the MATADOR study.
   Int J Obes 2018;42:129-38 (from memory).
.. [2] Peos JJ, Helms ER, Fournier PA, et al. Continuous versus intermittent
   dieting for fat loss and fat-free mass retention in resistance-trained adults:
   the ICECAP trial. Med Sci Sports Exerc 2021;53:1685-98 (from memory).
"""

from __future__ import annotations

import math

BREAK_MIN_DAYS_IN_DEFICIT = 84  # judgment / common practice, see the module notes
BREAK_MIN_DEPTH_PCT = 20.0  # judgment, between ICECAP's ~25 % and MATADOR's ~33 %
BREAK_WEEKS = 2  # MATADOR's break length (Byrne et al. 2018)


def diet_break_due(days_in_deficit: int | None, deficit_depth_pct: float | None) -> bool:
    """Whether a planned break at maintenance is worth discussing.

    Parameters
    ----------
    days_in_deficit : int or None
        Consecutive days in deficit up to now (None: not in a deficit). [day]
    deficit_depth_pct : float or None
        Deficit as % of maintenance expenditure; None when it cannot be estimated.
        [%]

    Returns
    -------
    bool
        True after at least 84 days in deficit at a depth of at least 20 %, or of
        unknown depth (see the module notes for the evidence and the judgment).
        Check values (hand): (84, 20.0) True; (83, 35.0) False; (120, 15.0)
        False; (120, None) True; (None, 30.0) False.
    """
    if days_in_deficit is None or days_in_deficit < BREAK_MIN_DAYS_IN_DEFICIT:
        return False
    if deficit_depth_pct is None or not math.isfinite(deficit_depth_pct):
        return True
    return deficit_depth_pct >= BREAK_MIN_DEPTH_PCT
