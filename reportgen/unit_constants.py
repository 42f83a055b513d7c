"""Unit conversion constants, defined once for every layer (io, science, report, scaffold).

Canonical units inside the project are kg, kcal, cm and mm; readers convert once on the
way in and reports once on the way out, through these constants.  This module imports
nothing, so the lowest layer (``reportgen.io``) may use it as well as the highest.

Constants and their sources
---------------------------
``KG_PER_LB = 0.45359237``
    The international avoirdupois pound, exact by definition (International Yard and
    Pound Agreement, 1959; NIST SP 811, Appendix B).
``KJ_PER_KCAL = 4.184``
    The thermochemical calorie, exact by definition (NIST SP 811, Appendix B); the
    calorie used on food labels and in the nutrition literature cited here.
``CM_PER_INCH = 2.54``
    The international inch, exact by definition (1959 agreement; NIST SP 811).

References
----------
.. [1] Thompson A, Taylor BN. Guide for the Use of the International System of Units
   (SI). NIST Special Publication 811, 2008 edition, Appendix B.
"""

from __future__ import annotations

from typing import Final

KG_PER_LB: Final = 0.45359237  # exact, 1959 international pound
KJ_PER_KCAL: Final = 4.184  # exact, thermochemical calorie
KCAL_PER_KJ: Final = 1.0 / KJ_PER_KCAL  # the factor readers multiply kJ by
CM_PER_INCH: Final = 2.54  # exact, 1959 international inch
