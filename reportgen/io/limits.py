"""Physical limits for values in the client book.

A value outside these limits cannot be a correct measurement of an adult or adolescent
client under outpatient nutrition care, so it is an error that the practitioner must fix
(usually a typo or a unit mix-up).  The limits are deliberately wide: they catch impossible
values, not unusual ones.  Common practice, no single source, unless noted.

One exception: a single weigh-in far from the client's surrounding weigh-ins (8.2 among
82s) is an isolated entry error that the analysis can simply leave out, so it is reported as
an ``outlier`` warning even when it is also outside :data:`WEIGHT_KG`
(see :mod:`reportgen.io.outliers`).  Limits apply inclusively.
"""

from __future__ import annotations

import datetime as dt
from typing import Final

#: [kg] Below 25 kg no adolescent or adult is plausible; above 350 kg is beyond ordinary
#: platform scales (most top out at 150-300 kg) and beyond outpatient care.
WEIGHT_KG: Final = (25.0, 350.0)
#: [cm] 100-250 cm covers every adolescent and adult outside extreme medical cases.
HEIGHT_CM: Final = (100.0, 250.0)
#: [kcal/day] 0 allows fasting days; 15000 kcal is beyond even extreme endurance events.
INTAKE_KCAL: Final = (0.0, 15000.0)
#: [kcal/day] A phase's planned intake: the same limits as a logged day.
TARGET_KCAL: Final = INTAKE_KCAL
#: [mm] Per single reading.  Common skinfold calipers open to about 50-80 mm (Harpenden and
#: Lange about 80 mm at most, from memory); below 1 mm is less than a double skin layer.
SKINFOLD_MM: Final = (1.0, 80.0)
#: [steps/day] 100000 steps is an ultramarathon day; more is a device error.
STEPS: Final = (0.0, 100000.0)
#: Self-rated scales 1-10 as defined in the input contract.
RATING: Final = (1.0, 10.0)
#: [h/day] A day has 24 hours.
SLEEP_H: Final = (0.0, 24.0)
#: [%] A scale's body-fat reading: below 2 % or above 75 % no adult or adolescent is
#: plausible (essential fat alone is about 2-5 % in men, from memory).
BODY_FAT_PCT: Final = (2.0, 75.0)
#: [years] Oldest plausible age at the report month (oldest documented people are ~120).
MAX_AGE_YEARS: Final = 120
#: [years] Under this age at the end of the report month a client is a minor (special care).
ADULT_AGE_YEARS: Final = 18
#: [days] Longer runs of days without any entry are reported as a gap.
MAX_GAP_DAYS: Final = 7
#: Longest client id (input contract).
MAX_CLIENT_ID_LEN: Final = 40
#: Dates a phase may start or end on: no client data predates 1900, and a plan running past
#: 2199 is a typo (year 9999 also leaves no room for date arithmetic).  Common practice.
DATE_RANGE: Final = (dt.date(1900, 1, 1), dt.date(2199, 12, 31))
