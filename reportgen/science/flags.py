"""Safety flags: plain rules over plain numbers, returned as ``Flag`` objects.

The rules decide *whether* a flag is raised; wording and advice live in the
report templates, keyed by the flag code.  Every flag carries the numbers
behind it in ``Flag.values`` (and the threshold it crossed), so a reader can
see why it fired.  Unknown inputs (None or NaN) never raise a flag.

Codes, in the fixed order :func:`safety_flags` returns them
-----------------------------------------------------------
``pregnant`` (urgent)
    The client is pregnant: no deficit advice; refer to a licensed
    practitioner.
``minor`` (urgent)
    Under 18 (completed years): adult equations and deficit targets do not
    apply; special care and parental/clinical involvement.
``low-bmi`` (caution; urgent below 17.0)
    BMI below 18.5 kg/m², the WHO underweight cut-off (WHO 2000, TRS 894;
    from memory, unverified but standard).  Below 17.0 (WHO moderate thinness,
    from memory) the severity rises to urgent.
``very-low-intake`` (urgent)
    Mean logged intake below 800 kcal/day: a very-low-calorie diet that needs
    medical supervision (common practice).  Replaces ``low-intake``.
``low-intake`` (caution)
    Mean logged intake below 1200 kcal/day (women) or 1500 kcal/day (men),
    1200 when sex is unknown (common practice; the 2013 AHA/ACC/TOS guideline
    targets, from memory).
``rapid-loss`` (caution)
    Loss faster than 1.0 % of body weight per week, either as the current rate
    (the trend slope over the recent weeks that the report prints) or in each
    of the last two or more weeks (Helms, Aragon & Fitschen 2014, published:
    0.5-1.0 %/week recommended to keep lean mass).  :func:`rapid_loss` is the
    one rule; the report's wording uses it too.
``essential-fat`` (caution)
    Body fat at or below 5 % (men) or 14 % (women), near essential levels
    (Behnke's reference man/woman, about 3 % and 12 %, from memory; the
    warning margins are common practice).
``implausible-adaptation`` (caution)
    The client's data alone put expenditure more than 2.5 SDs from what the
    literature expects for a deficit of this depth and length (the rule scales
    with the deficit: Hall et al. 2011's adaptive-thermogenesis term with the
    between-person spread of Leibel et al. 1995; see
    ``reportgen.science.adaptation``); more likely a logging or data problem.

References
----------
.. [1] Helms ER, Aragon AA, Fitschen PJ. Evidence-based recommendations for
   natural bodybuilding contest preparation: nutrition and supplementation.
   J Int Soc Sports Nutr 2014;11:20. doi:10.1186/1550-2783-11-20
.. [2] World Health Organization. Obesity: preventing and managing the global
   epidemic. WHO Technical Report Series 894. Geneva: WHO; 2000.
.. [3] Jensen MD, Ryan DH, Apovian CM, et al. 2013 AHA/ACC/TOS guideline for
   the management of overweight and obesity in adults. Circulation
   2014;129(25 Suppl 2):S102-S138. doi:10.1161/01.cir.0000437739.71477.ee
"""

from __future__ import annotations

from dataclasses import dataclass

from reportgen.io.model import Sex
from reportgen.results import Flag, FlagSeverity
from reportgen.science._checks import finite

FLAG_CODES = (
    "pregnant",
    "minor",
    "low-bmi",
    "very-low-intake",
    "low-intake",
    "rapid-loss",
    "essential-fat",
    "implausible-adaptation",
)

ADULT_AGE_YEARS = 18  # under this, "minor"
BMI_UNDERWEIGHT = 18.5  # WHO 2000 (from memory, standard)
BMI_MODERATE_THINNESS = 17.0  # WHO (from memory): severity becomes urgent below this
INTAKE_FLOOR_WOMEN_KCAL = 1200.0  # common practice
INTAKE_FLOOR_MEN_KCAL = 1500.0  # common practice
INTAKE_VLCD_KCAL = 800.0  # very-low-calorie diet, medical supervision (common practice)
RAPID_LOSS_PCT_PER_WEEK = 1.0  # Helms 2014 (published)
RAPID_LOSS_MIN_WEEKS = 2  # "sustained over two weeks or more"
ESSENTIAL_FAT_MEN_PCT = 5.0  # from memory / common practice
ESSENTIAL_FAT_WOMEN_PCT = 14.0  # from memory / common practice (upper end of 12-14 %)


@dataclass(frozen=True)
class FlagInputs:
    """The numbers the safety rules look at; every field is optional.

    Attributes
    ----------
    sex : {"male", "female"} or None
        Sex of the client.
    age_years : int or None
        Age in completed years at the report date. [years]
    minor : bool or None
        Explicitly under 18; None derives it from ``age_years``.
    pregnant : bool
        Pregnant according to the roster.
    bmi_kg_m2 : float or None
        Current BMI from trend weight. [kg/m²]
    mean_intake_kcal : float or None
        Mean logged intake over the recent window (e.g. the last 14 days). [kcal/day]
    weekly_rates_pct : tuple of float
        Rate of weight change for consecutive recent weeks, oldest first,
        negative for a loss. [% of body weight/week]
    current_rate_pct : float or None
        The current weekly rate the report prints (trend slope over the recent
        weeks), negative for a loss. [% of body weight/week]
    bodyfat_pct : float or None
        Latest body-fat estimate. [%]
    adaptation_implausible : bool
        The client's data alone put expenditure far outside what the literature
        expects for this deficit (``reportgen.science.adaptation``: more than 2.5
        SDs from the expectation); more likely logging or data than metabolism.
    adaptation_data_kcal, adaptation_typical_kcal : float or None
        The two figures, for the flag's wording. [kcal/day]
    """

    sex: Sex | None = None
    age_years: int | None = None
    minor: bool | None = None
    pregnant: bool = False
    bmi_kg_m2: float | None = None
    mean_intake_kcal: float | None = None
    weekly_rates_pct: tuple[float, ...] = ()
    current_rate_pct: float | None = None
    bodyfat_pct: float | None = None
    adaptation_implausible: bool = False
    adaptation_data_kcal: float | None = None
    adaptation_typical_kcal: float | None = None


def _value(x: float | None) -> float | None:
    """A known number, or None for missing/NaN."""
    if x is None or not finite(x):
        return None
    return float(x)


def rapid_loss_weeks(weekly_rates_pct: tuple[float, ...]) -> int:
    """Number of most recent consecutive weeks with loss faster than 1 %/week.

    Parameters
    ----------
    weekly_rates_pct : tuple of float
        Weekly rates, oldest first; negative is a loss; NaN breaks a run.
        [% of body weight/week]

    Returns
    -------
    int
        Length of the trailing run of weeks with rate < -1.0 %/week. [weeks]
    """
    n = 0
    for r in reversed(weekly_rates_pct):
        v = _value(r)
        if v is not None and v < -RAPID_LOSS_PCT_PER_WEEK:
            n += 1
        else:
            break
    return n


def _running_mean(values: tuple[float, ...]) -> float:
    """Mean of finite numbers that stays finite near the float limit.

    The running update stays between the smallest and largest value, where a sum
    (or ``math.fsum``, which raises OverflowError) of rates near 1e308 would not.
    """
    mean = 0.0
    for k, v in enumerate(values, 1):
        mean += (v - mean) / k
    return mean


def rapid_loss(current_rate_pct: float | None, weekly_rates_pct: tuple[float, ...] = ()) -> bool:
    """The rapid-loss rule: loss faster than 1.0 % of body weight a week.

    True when the current rate is a loss faster than the limit, or the trend
    rate was in each of the last :data:`RAPID_LOSS_MIN_WEEKS` weeks or more
    (Helms, Aragon & Fitschen 2014: 0.5-1.0 %/week recommended).

    Parameters
    ----------
    current_rate_pct : float or None
        Current weekly rate, negative for a loss; None or NaN is unknown.
        [% of body weight/week]
    weekly_rates_pct : tuple of float
        Weekly rates, oldest first. [% of body weight/week]

    Returns
    -------
    bool
        Whether the loss is faster than recommended.
    """
    cur = _value(current_rate_pct)
    if cur is not None and cur < -RAPID_LOSS_PCT_PER_WEEK:
        return True
    return rapid_loss_weeks(weekly_rates_pct) >= RAPID_LOSS_MIN_WEEKS


def safety_flags(inputs: FlagInputs) -> tuple[Flag, ...]:
    """Apply every safety rule to one client's numbers.

    Parameters
    ----------
    inputs : FlagInputs
        The client's current numbers; unknown fields raise no flag.

    Returns
    -------
    tuple of Flag
        Raised flags in the fixed order of :data:`FLAG_CODES`, each with the
        values behind it and the threshold crossed.

    Notes
    -----
    Thresholds and their sources are listed in the module docstring.
    """
    flags: list[Flag] = []
    if inputs.pregnant:
        flags.append(Flag("pregnant", "urgent"))

    minor = inputs.minor
    if minor is None and inputs.age_years is not None:
        minor = inputs.age_years < ADULT_AGE_YEARS
    if minor:
        values: dict[str, float | str] = {"threshold_years": float(ADULT_AGE_YEARS)}
        if inputs.age_years is not None:
            values["age_years"] = float(inputs.age_years)
        flags.append(Flag("minor", "urgent", values))

    bmi = _value(inputs.bmi_kg_m2)
    if bmi is not None and bmi < BMI_UNDERWEIGHT:
        severity: FlagSeverity = "urgent" if bmi < BMI_MODERATE_THINNESS else "caution"
        flags.append(Flag("low-bmi", severity, {"bmi_kg_m2": bmi, "threshold": BMI_UNDERWEIGHT}))

    intake = _value(inputs.mean_intake_kcal)
    if intake is not None:
        floor = INTAKE_FLOOR_MEN_KCAL if inputs.sex == "male" else INTAKE_FLOOR_WOMEN_KCAL
        if intake < INTAKE_VLCD_KCAL:
            flags.append(
                Flag(
                    "very-low-intake",
                    "urgent",
                    {"intake_kcal": intake, "threshold_kcal": INTAKE_VLCD_KCAL},
                )
            )
        elif intake < floor:
            flags.append(
                Flag(
                    "low-intake",
                    "caution",
                    {"intake_kcal": intake, "threshold_kcal": floor},
                )
            )

    if rapid_loss(inputs.current_rate_pct, inputs.weekly_rates_pct):
        weeks = rapid_loss_weeks(inputs.weekly_rates_pct)
        cur = _value(inputs.current_rate_pct)
        rapid_values: dict[str, float | str] = {"threshold_pct_per_week": -RAPID_LOSS_PCT_PER_WEEK}
        if cur is not None:
            rapid_values["current_rate_pct_per_week"] = cur
        if weeks >= RAPID_LOSS_MIN_WEEKS:
            run = inputs.weekly_rates_pct[-weeks:]
            rapid_values["weeks"] = float(weeks)
            rapid_values["mean_rate_pct_per_week"] = _running_mean(run)
            rapid_values["fastest_rate_pct_per_week"] = min(run)
        flags.append(Flag("rapid-loss", "caution", rapid_values))

    bf = _value(inputs.bodyfat_pct)
    if bf is not None and inputs.sex in ("male", "female"):
        limit = ESSENTIAL_FAT_MEN_PCT if inputs.sex == "male" else ESSENTIAL_FAT_WOMEN_PCT
        if bf <= limit:
            flags.append(
                Flag("essential-fat", "caution", {"bodyfat_pct": bf, "threshold_pct": limit})
            )

    if inputs.adaptation_implausible:
        shown: dict[str, float | str] = {}
        for key, v in (
            ("adaptation_kcal", _value(inputs.adaptation_data_kcal)),
            ("typical_kcal", _value(inputs.adaptation_typical_kcal)),
        ):
            if v is not None:
                shown[key] = v
        flags.append(Flag("implausible-adaptation", "caution", shown))
    return tuple(flags)
