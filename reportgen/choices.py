"""The closed vocabularies offered at the command line and in the configuration, defined once.

Each tuple is what ``click.Choice`` offers, what the configuration accepts, and what the
code that acts on the value checks against, so a new choice is added in one place.  This
module imports nothing of the project, so every layer (science, delivery, the command
line, the configuration) may use it without pulling in anything heavy.
"""

from __future__ import annotations

from typing import Final, Literal

#: Skinfold body-fat equations: "auto" picks by the sites measured (science/skinfolds.py).
BODYFAT_EQUATIONS: Final = (
    "auto",
    "jackson-pollock-7",
    "jackson-pollock-3",
    "durnin-womersley-4",
)
#: Body density to percent fat (science/density.py).
DENSITY_CONVERSIONS: Final = ("siri", "brozek")

#: How ambiguous daily-log dates are read: decided from the data, day-first or month-first.
DATE_ORDERS: Final = ("auto", "day-first", "month-first")

MailSecurity = Literal["starttls", "tls", "none"]
#: SMTP connection security: STARTTLS (port 587), implicit TLS (port 465) or none.
MAIL_SECURITY: Final[tuple[MailSecurity, ...]] = ("starttls", "tls", "none")

UnitSystem = Literal["metric", "imperial"]
#: Units of a new client book's columns.
UNIT_SYSTEMS: Final[tuple[UnitSystem, ...]] = ("metric", "imperial")
EnergyUnit = Literal["kcal", "kJ"]
#: Energy units of intake columns and of the reports.
ENERGY_UNITS: Final[tuple[EnergyUnit, ...]] = ("kcal", "kJ")
