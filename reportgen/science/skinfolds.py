"""Body fat from skinfolds: Jackson-Pollock, Jackson-Pollock-Ward, Durnin-Womersley.

Each published equation is one function that returns body density [g/ml];
:func:`estimate_body_fat` picks the equation from the sites present and the
client's sex, converts the density to %BF (Siri by default, Brozek optional),
and attaches the equation's standard error and validity warnings.

Age convention: ``age_years`` is the age in completed years at the date of the
skinfold session (birthdays rounded down, as ``Client.age_years`` gives it).
The Jackson-Pollock equations use it linearly; the Durnin & Womersley age band
is chosen by it (a client measured the day before turning 30 uses the 20-29
row).

Validity is reported, never enforced: estimates are not clamped, and each
warning is a stable code in ``BodyFatEstimate.warnings``:

``age-outside-derivation``
    Age outside the equation's derivation sample (JP men 18-61, JPW women
    18-55, D&W men 17-72 and women 16-68; published populations).
``sum-over-120``
    JP/JPW sum of skinfolds above 120 mm, where the quadratic equations
    underestimate fat (Nevill et al. 2008 [1]_).
``sum-beyond-vertex``
    JP/JPW sum past the quadratic's vertex (b/2c), where predicted fat falls as
    skinfolds rise (computed from the coefficients).
``density-implausible``
    Body density outside 0.99-1.10 g/ml (two-compartment assumptions fail).
``bodyfat-out-of-range``
    The %BF came out below 0 or at/above 100.

The 120 mm limit applies to the sum the equation uses (3 or 7 sites): Nevill
et al. [1]_ re-analysed the original JP data and advise caution with the
quadratic equations "for subjects with sums of skinfolds > 120 mm" without
restricting it to one site set (published, abstract).

References
----------
.. [1] Nevill AM, Metsios GS, Jackson AS, Wang J, Thornton J, Gallagher D. Can
   we use the Jackson and Pollock equations to predict body density/fat of
   obese individuals in the 21st century? Int J Body Compos Res 2008;6:114-121
   (journal volume and pages from memory).
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass

from reportgen.choices import BODYFAT_EQUATIONS
from reportgen.io.model import Sex
from reportgen.results import MethodUsed
from reportgen.science._checks import finite
from reportgen.science.density import (
    CONVERSION_NAMES,
    CONVERSIONS,
    body_fat_pct,
    body_fat_se_pct,
    density_plausible,
)
from reportgen.science.errors import NotComputable
from reportgen.science.units import bmi_kg_m2

# ---------------------------------------------------------------------------
# Sites (canonical names as in reportgen.io.model.SKINFOLD_SITES)
SITES_7 = ("chest", "midaxillary", "triceps", "subscapular", "abdominal", "suprailiac", "thigh")
SITES_3_MEN = ("chest", "abdominal", "thigh")  # Jackson & Pollock 1978
SITES_3_WOMEN = ("triceps", "suprailiac", "thigh")  # Jackson, Pollock & Ward 1980
SITES_4_DW = ("biceps", "triceps", "subscapular", "suprailiac")  # Durnin & Womersley 1974

# Names a user may choose (configuration [analysis] bodyfat_equation), defined once in
# reportgen.choices.  The sex picks JP or JPW.
EQUATIONS = BODYFAT_EQUATIONS

# ---------------------------------------------------------------------------
# Quadratic JP/JPW equations: Db = a - b*S + c*S^2 - d*age, SEE [g/ml].
# Jackson & Pollock 1978 (men, 308 aged 18-61): coefficients, R and SEE published as
# quoted by the medicalalgorithms.com reference page.
JP7_MEN = (1.112, 0.00043499, 0.00000055, 0.00028826)
JP7_MEN_SEE_G_ML = 0.0078  # R = 0.902, published
JP3_MEN = (1.10938, 0.0008267, 0.0000016, 0.0002574)
JP3_MEN_SEE_G_ML = 0.0077  # R = 0.905, published
# Log form: Db = a - b*ln(S7) - d*age (published, same source).
JP7_LOG_MEN = (1.21394, 0.03101, 0.00029)
JP7_LOG_MEN_SEE_G_ML = 0.0082  # R = 0.893, published
# Jackson, Pollock & Ward 1980 (women, 249 aged 18-55 derivation), §2.2.
JPW7_WOMEN = (1.0970, 0.00046971, 0.00000056, 0.00012828)
JPW7_WOMEN_SEE_G_ML = 0.0083  # R = 0.852, published
# Intercept 1.0994921 (published in several secondary copies; a vendor page's 1.0994291
# looks like a transposition typo, 0.03 %BF apart).
JPW3_WOMEN = (1.0994921, 0.0009929, 0.0000023, 0.0001392)
JPW3_WOMEN_SEE_G_ML = 0.0086  # from memory (unverified); R about 0.842

JP_MEN_AGE_RANGE = (18.0, 61.0)  # published derivation sample
JPW_WOMEN_AGE_RANGE = (18.0, 55.0)  # published derivation sample
# Nevill et al. 2008: quadratic JP equations underestimate fat above about 120 mm.
JP_SUM_LIMIT_MM = 120.0

# ---------------------------------------------------------------------------
# Durnin & Womersley 1974, Table 5: Db = c - m*log10(sum of 4) by sex and age band.
# Published, as transcribed by two independent secondary pages that agree on every value.
# (lowest age, highest age or None for open-ended, c, m)
DW_MEN_BANDS = (
    (17, 19, 1.1620, 0.0630),
    (20, 29, 1.1631, 0.0632),
    (30, 39, 1.1422, 0.0544),
    (40, 49, 1.1620, 0.0700),
    (50, None, 1.1715, 0.0779),
)
DW_WOMEN_BANDS = (
    (16, 19, 1.1549, 0.0678),
    (20, 29, 1.1599, 0.0717),
    (30, 39, 1.1423, 0.0632),
    (40, 49, 1.1333, 0.0612),
    (50, None, 1.1339, 0.0645),
)
# The rows sometimes printed for "<17 y" come from a different adolescent study and are
# deliberately not included here.
DW_MEN_AGE_RANGE = (17.0, 72.0)  # published sample 16-72; men's bands start at 17
DW_WOMEN_AGE_RANGE = (16.0, 68.0)
# The per-band SEEs are in the paper's Table 4, not seen here; roughly 0.008-0.010 g/ml
# (from memory, unverified).  One mid value is used for every band.
DW_SEE_G_ML = 0.0090

# ---------------------------------------------------------------------------
# Deurenberg, Weststrate & Seidell 1991, adult BMI equation (from memory, unverified):
# %BF = 1.20*BMI + 0.23*age - 10.8*sex - 5.4, sex = 1 men, 0 women.
DEURENBERG_1991 = (1.20, 0.23, 10.8, 5.4)
DEURENBERG_SEE_PCT = 4.1  # from memory (unverified): "about 4 %BF"
DEURENBERG_MIN_AGE = 16.0  # adult equation; children had a separate formula (from memory)

REFERENCES = {
    "jackson-pollock": (
        "Jackson AS, Pollock ML. Generalized equations for predicting body density of men. "
        "Br J Nutr 1978;40:497-504. doi:10.1079/BJN19780152"
    ),
    "jackson-pollock-ward": (
        "Jackson AS, Pollock ML, Ward A. Generalized equations for predicting body density "
        "of women. Med Sci Sports Exerc 1980;12:175-182."
    ),
    "durnin-womersley": (
        "Durnin JVGA, Womersley J. Body fat assessed from total body density and its "
        "estimation from skinfold thickness: measurements on 481 men and women aged from 16 "
        "to 72 years. Br J Nutr 1974;32:77-97. doi:10.1079/BJN19740060"
    ),
    "deurenberg": (
        "Deurenberg P, Weststrate JA, Seidell JC. Body mass index as a measure of body "
        "fatness: age- and sex-specific prediction formulas. Br J Nutr 1991;65:105-114. "
        "doi:10.1079/BJN19910073"
    ),
}


@dataclass(frozen=True)
class BodyFatEstimate:
    """Body fat from one skinfold session (or the BMI-based rough estimate).

    ``equation`` is the code ("jackson-pollock-7", "jackson-pollock-3",
    "durnin-womersley-4", "jackson-pollock-7-log" or "bmi-deurenberg"); women's
    JP codes mean the Jackson, Pollock & Ward 1980 equations.  ``sum_mm`` is
    the sum of the equation's sites, the measurement with no equation error.
    ``se_pct`` is the equation's SEE expressed in %BF at this density.
    """

    equation: str
    name: str  # published name
    conversion: str  # "siri", "brozek" or "none" (BMI-based)
    sum_mm: float | None
    sites: tuple[str, ...]
    density_g_ml: float | None
    bodyfat_pct: float
    se_pct: float
    warnings: tuple[str, ...] = ()
    density_se_g_ml: float | None = None
    reference: str = ""
    rough: bool = False

    def method(self) -> MethodUsed:
        """The methods-page entry for this estimate."""
        if self.density_se_g_ml is not None:
            see = (
                f"standard error of estimate {self.density_se_g_ml:.4f} g/ml "
                f"(about {self.se_pct:.1f} %BF here)"
            )
        else:
            see = f"standard error of estimate about {self.se_pct:.1f} %BF"
        name = self.name
        if self.conversion in CONVERSION_NAMES:
            name = f"{name}; density to %BF by {CONVERSION_NAMES[self.conversion]}"
        return MethodUsed(code=self.equation, name=name, reference=self.reference, see=see)


# ---------------------------------------------------------------------------
def _check_sum(sum_mm: float) -> None:
    if not finite(sum_mm) or sum_mm <= 0:
        raise ValueError(f"sum of skinfolds must be a positive number of mm, got {sum_mm!r}")


def _check_age(age_years: float) -> None:
    if not finite(age_years) or age_years < 0:
        raise ValueError(f"age_years must be a non-negative number, got {age_years!r}")


def _quadratic_density(
    coeffs: tuple[float, float, float, float], sum_mm: float, age_years: float
) -> float:
    _check_sum(sum_mm)
    _check_age(age_years)
    a, b, c, d = coeffs
    return a - b * sum_mm + c * sum_mm**2 - d * age_years


def quadratic_vertex_mm(coeffs: tuple[float, float, float, float]) -> float:
    """Sum of skinfolds at which a quadratic JP/JPW equation turns back, b / (2c). [mm]"""
    _, b, c, _ = coeffs
    return b / (2.0 * c)


def body_density_jackson_pollock_7(sum7_mm: float, age_years: float) -> float:
    """Body density of men from seven skinfolds, Jackson & Pollock 1978 (quadratic).

    Parameters
    ----------
    sum7_mm : float
        Sum of chest, midaxillary, triceps, subscapular, abdominal, suprailiac
        and thigh skinfolds. [mm]
    age_years : float
        Age in completed years at the measurement date. [years]

    Returns
    -------
    float
        Db = 1.112 - 0.00043499 S + 0.00000055 S² - 0.00028826 age. [g/ml]

    Notes
    -----
    Derived on 308 men aged 18-61, cross-validated on 95 more; R = 0.902,
    SEE 0.0078 g/ml [1]_.  Generalized equation for non-athletic adults; less
    accurate for very lean, obese and older men, and it underestimates fat for
    sums above about 120 mm.

    References
    ----------
    .. [1] Jackson AS, Pollock ML. Generalized equations for predicting body
       density of men. Br J Nutr 1978;40:497-504. doi:10.1079/BJN19780152
    """
    return _quadratic_density(JP7_MEN, sum7_mm, age_years)


def body_density_jackson_pollock_7_log(sum7_mm: float, age_years: float) -> float:
    """Body density of men from seven skinfolds, Jackson & Pollock 1978 (log form).

    Parameters
    ----------
    sum7_mm : float
        Sum of the seven JP sites. [mm]
    age_years : float
        Age in completed years at the measurement date. [years]

    Returns
    -------
    float
        Db = 1.21394 - 0.03101 ln(S) - 0.00029 age. [g/ml]

    Notes
    -----
    Same sample as :func:`body_density_jackson_pollock_7`; R = 0.893, SEE
    0.0082 g/ml [1]_.  Monotone in the sum (no vertex).

    References
    ----------
    .. [1] Jackson AS, Pollock ML. Generalized equations for predicting body
       density of men. Br J Nutr 1978;40:497-504. doi:10.1079/BJN19780152
    """
    _check_sum(sum7_mm)
    _check_age(age_years)
    a, b, d = JP7_LOG_MEN
    return a - b * math.log(sum7_mm) - d * age_years


def body_density_jackson_pollock_3(sum3_mm: float, age_years: float) -> float:
    """Body density of men from three skinfolds, Jackson & Pollock 1978.

    Parameters
    ----------
    sum3_mm : float
        Sum of chest, abdominal and thigh skinfolds. [mm]
    age_years : float
        Age in completed years at the measurement date. [years]

    Returns
    -------
    float
        Db = 1.10938 - 0.0008267 S + 0.0000016 S² - 0.0002574 age. [g/ml]

    Notes
    -----
    Men aged 18-61; R = 0.905, SEE 0.0077 g/ml [1]_.  The quadratic turns back
    at 258 mm.

    References
    ----------
    .. [1] Jackson AS, Pollock ML. Generalized equations for predicting body
       density of men. Br J Nutr 1978;40:497-504. doi:10.1079/BJN19780152
    """
    return _quadratic_density(JP3_MEN, sum3_mm, age_years)


def body_density_jackson_pollock_ward_7(sum7_mm: float, age_years: float) -> float:
    """Body density of women from seven skinfolds, Jackson, Pollock & Ward 1980.

    Parameters
    ----------
    sum7_mm : float
        Sum of the seven JP sites. [mm]
    age_years : float
        Age in completed years at the measurement date. [years]

    Returns
    -------
    float
        Db = 1.0970 - 0.00046971 S + 0.00000056 S² - 0.00012828 age. [g/ml]

    Notes
    -----
    Derived on 249 women aged 18-55 (82 more for cross-validation); R = 0.852,
    SEE 0.0083 g/ml [1]_.

    References
    ----------
    .. [1] Jackson AS, Pollock ML, Ward A. Generalized equations for predicting
       body density of women. Med Sci Sports Exerc 1980;12:175-182.
    """
    return _quadratic_density(JPW7_WOMEN, sum7_mm, age_years)


def body_density_jackson_pollock_ward_3(sum3_mm: float, age_years: float) -> float:
    """Body density of women from three skinfolds, Jackson, Pollock & Ward 1980.

    Parameters
    ----------
    sum3_mm : float
        Sum of triceps, suprailiac and thigh skinfolds. [mm]
    age_years : float
        Age in completed years at the measurement date. [years]

    Returns
    -------
    float
        Db = 1.0994921 - 0.0009929 S + 0.0000023 S² - 0.0001392 age. [g/ml]

    Notes
    -----
    Women aged 18-55 [1]_.  SEE about 0.0086 g/ml (from memory, unverified).
    The quadratic turns back at 216 mm.

    References
    ----------
    .. [1] Jackson AS, Pollock ML, Ward A. Generalized equations for predicting
       body density of women. Med Sci Sports Exerc 1980;12:175-182.
    """
    return _quadratic_density(JPW3_WOMEN, sum3_mm, age_years)


def durnin_womersley_band(sex: Sex, age_years: float) -> tuple[str, float, float]:
    """The Durnin & Womersley 1974 age band, intercept and slope for a client.

    Parameters
    ----------
    sex : {"male", "female"}
        Sex of the client.
    age_years : float
        Age in completed years at the measurement date; the band is chosen by
        ``floor(age_years)``. [years]

    Returns
    -------
    tuple
        (band label such as "20-29" or "50+", c [g/ml], m [g/ml per log10 mm]).
        Ages below the youngest band use it; the caller warns.
    """
    _check_age(age_years)
    bands = _dw_bands(sex)
    age = math.floor(age_years)
    chosen = bands[0]
    for band in bands:
        if age >= band[0]:
            chosen = band
    lo, hi, c, m = chosen
    label = f"{lo}-{hi}" if hi is not None else f"{lo}+"
    return label, c, m


def _dw_bands(sex: Sex) -> tuple[tuple[int, int | None, float, float], ...]:
    if sex == "male":
        return DW_MEN_BANDS
    if sex == "female":
        return DW_WOMEN_BANDS
    raise ValueError(f"sex must be 'male' or 'female', got {sex!r}")


def body_density_durnin_womersley(sum4_mm: float, age_years: float, sex: Sex) -> float:
    """Body density from four skinfolds, Durnin & Womersley 1974.

    Parameters
    ----------
    sum4_mm : float
        Sum of biceps, triceps, subscapular and supra-iliac skinfolds. [mm]
    age_years : float
        Age in completed years at the measurement date (selects the band). [years]
    sex : {"male", "female"}
        Sex of the client.

    Returns
    -------
    float
        Db = c - m log10(S), with c and m from the sex and age band (Table 5
        of [1]_). [g/ml]

    Notes
    -----
    209 men and 272 women aged 16-72, density by underwater weighing; body
    fat 5-50 % (men) and 10-61 % (women) [1]_.  The paper converts with Siri.
    Age bands: men 17-19, 20-29, 30-39, 40-49, 50+ (to 72); women 16-19,
    20-29, 30-39, 40-49, 50+ (to 68).

    References
    ----------
    .. [1] Durnin JVGA, Womersley J. Body fat assessed from total body density
       and its estimation from skinfold thickness: measurements on 481 men and
       women aged from 16 to 72 years. Br J Nutr 1974;32:77-97.
       doi:10.1079/BJN19740060
    """
    _check_sum(sum4_mm)
    _, c, m = durnin_womersley_band(sex, age_years)
    return c - m * math.log10(sum4_mm)


# ---------------------------------------------------------------------------
def _sex_check(sex: object) -> Sex:
    if sex not in ("male", "female"):
        raise ValueError(f"sex must be 'male' or 'female', got {sex!r}")
    return sex


def _present(sites_mm: Mapping[str, float]) -> dict[str, float]:
    out: dict[str, float] = {}
    for site, value in sites_mm.items():
        try:
            v = float(value)
        except (TypeError, ValueError):
            raise ValueError(
                f"skinfold {site!r} must be a positive number of mm, got {value!r}"
            ) from None
        if math.isnan(v):
            continue  # a site not measured this session
        if not finite(v) or v <= 0:
            raise ValueError(f"skinfold {site!r} must be a positive number of mm, got {value!r}")
        out[site] = v
    return out


def choose_equation(sex: Sex, sites: set[str] | frozenset[str] | Mapping[str, float]) -> str | None:
    """Which skinfold equation ``auto`` uses for the sites present.

    Parameters
    ----------
    sex : {"male", "female"}
        Sex of the client.
    sites : set of str or mapping
        Site names measured (NaN values in a mapping count as absent).

    Returns
    -------
    str or None
        "jackson-pollock-7" when all seven JP sites are present, else
        "jackson-pollock-3" when the sex's three JP/JPW sites are, else
        "durnin-womersley-4" when its four sites are, else None.
    """
    _sex_check(sex)
    present = set(_present(sites)) if isinstance(sites, Mapping) else set(sites)
    three = SITES_3_MEN if sex == "male" else SITES_3_WOMEN
    if present.issuperset(SITES_7):
        return "jackson-pollock-7"
    if present.issuperset(three):
        return "jackson-pollock-3"
    if present.issuperset(SITES_4_DW):
        return "durnin-womersley-4"
    return None


def _required_sites(equation: str, sex: Sex) -> tuple[str, ...]:
    if equation == "jackson-pollock-7":
        return SITES_7
    if equation == "jackson-pollock-3":
        return SITES_3_MEN if sex == "male" else SITES_3_WOMEN
    return SITES_4_DW


def _age_warning(age_years: float, age_range: tuple[float, float]) -> list[str]:
    lo, hi = age_range
    return ["age-outside-derivation"] if not lo <= age_years <= hi else []


def estimate_body_fat(
    sex: Sex,
    age_years: float,
    sites_mm: Mapping[str, float],
    equation: str = "auto",
    conversion: str = "siri",
) -> BodyFatEstimate:
    """Percent body fat from one skinfold session, with its SEE and warnings.

    Parameters
    ----------
    sex : {"male", "female"}
        Sex of the client (men: Jackson & Pollock 1978; women: Jackson,
        Pollock & Ward 1980).
    age_years : float
        Age in completed years at the session date. [years]
    sites_mm : mapping of str to float
        Site name -> skinfold (mean of two or median of three readings).
        NaN means not measured; sites the equation does not use are ignored. [mm]
    equation : str, default "auto"
        One of :data:`EQUATIONS`.  "auto" picks by :func:`choose_equation`.
    conversion : {"siri", "brozek"}, default "siri"
        Density to %BF conversion.

    Returns
    -------
    BodyFatEstimate
        Equation used, sum of its sites, density, %BF, the SEE in %BF and
        validity warnings (see the module docstring for the codes).

    Raises
    ------
    NotComputable
        Reason "skinfold-sites-missing" when the sites needed (or, with "auto",
        any equation's sites) were not measured (the message names them), or
        "skinfold-no-density" for a sum far outside any equation's range.
    ValueError
        For an unknown sex, equation or conversion, or a non-positive skinfold.
    """
    sex = _sex_check(sex)
    _check_age(age_years)
    if equation not in EQUATIONS:
        raise ValueError(
            f"unknown body-fat equation {equation!r}; use one of: {', '.join(EQUATIONS)}"
        )
    if conversion not in CONVERSIONS:
        raise ValueError(
            f"unknown density conversion {conversion!r}; use one of: {', '.join(CONVERSIONS)}"
        )
    present = _present(sites_mm)
    if equation == "auto":
        chosen = choose_equation(sex, present)
        if chosen is None:
            three = SITES_3_MEN if sex == "male" else SITES_3_WOMEN
            have = ", ".join(sorted(present)) or "none"
            raise NotComputable(
                "skinfold-sites-missing",
                f"no skinfold equation fits the sites measured ({have}); need the 3-site set "
                f"({', '.join(three)}), all seven ({', '.join(SITES_7)}) or the 4-site set "
                f"({', '.join(SITES_4_DW)})",
            )
        equation = chosen
    needed = _required_sites(equation, sex)
    missing = [s for s in needed if s not in present]
    if missing:
        raise NotComputable(
            "skinfold-sites-missing",
            f"{equation} needs skinfold sites that were not measured: {', '.join(missing)}",
        )
    total = math.fsum(present[s] for s in needed)
    warnings: list[str] = []
    if equation == "durnin-womersley-4":
        density = body_density_durnin_womersley(total, age_years, sex)
        band, _, _ = durnin_womersley_band(sex, age_years)
        see = DW_SEE_G_ML
        sex_word = "men" if sex == "male" else "women"
        name = f"Durnin & Womersley 1974, 4-site ({sex_word} aged {band})"
        reference = REFERENCES["durnin-womersley"]
        warnings += _age_warning(
            age_years, DW_MEN_AGE_RANGE if sex == "male" else DW_WOMEN_AGE_RANGE
        )
    else:
        seven = equation == "jackson-pollock-7"
        if sex == "male":
            coeffs = JP7_MEN if seven else JP3_MEN
            see = JP7_MEN_SEE_G_ML if seven else JP3_MEN_SEE_G_ML
            name = f"Jackson & Pollock 1978, {'7' if seven else '3'}-site"
            reference = REFERENCES["jackson-pollock"]
            age_range = JP_MEN_AGE_RANGE
        else:
            coeffs = JPW7_WOMEN if seven else JPW3_WOMEN
            see = JPW7_WOMEN_SEE_G_ML if seven else JPW3_WOMEN_SEE_G_ML
            name = f"Jackson, Pollock & Ward 1980, {'7' if seven else '3'}-site"
            reference = REFERENCES["jackson-pollock-ward"]
            age_range = JPW_WOMEN_AGE_RANGE
        density = _quadratic_density(coeffs, total, age_years)
        warnings += _age_warning(age_years, age_range)
        if total > JP_SUM_LIMIT_MM:
            warnings.append("sum-over-120")
        if total > quadratic_vertex_mm(coeffs):
            warnings.append("sum-beyond-vertex")
    return _finish(equation, name, conversion, total, needed, density, see, warnings, reference)


def estimate_body_fat_jackson_pollock_7_log(
    age_years: float, sites_mm: Mapping[str, float], conversion: str = "siri"
) -> BodyFatEstimate:
    """Percent body fat of a man by the Jackson & Pollock 1978 7-site log equation.

    Parameters
    ----------
    age_years : float
        Age in completed years at the session date. [years]
    sites_mm : mapping of str to float
        Must hold the seven JP sites. [mm]
    conversion : {"siri", "brozek"}, default "siri"
        Density to %BF conversion.

    Returns
    -------
    BodyFatEstimate
        With code "jackson-pollock-7-log" and SEE 0.0082 g/ml (published).
    """
    _check_age(age_years)
    if conversion not in CONVERSIONS:
        raise ValueError(
            f"unknown density conversion {conversion!r}; use one of: {', '.join(CONVERSIONS)}"
        )
    present = _present(sites_mm)
    missing = [s for s in SITES_7 if s not in present]
    if missing:
        raise NotComputable(
            "skinfold-sites-missing",
            f"jackson-pollock-7-log needs skinfold sites that were not measured: "
            f"{', '.join(missing)}",
        )
    total = math.fsum(present[s] for s in SITES_7)
    density = body_density_jackson_pollock_7_log(total, age_years)
    warnings = _age_warning(age_years, JP_MEN_AGE_RANGE)
    return _finish(
        "jackson-pollock-7-log",
        "Jackson & Pollock 1978, 7-site (log form)",
        conversion,
        total,
        SITES_7,
        density,
        JP7_LOG_MEN_SEE_G_ML,
        warnings,
        REFERENCES["jackson-pollock"],
    )


def _finish(
    equation: str,
    name: str,
    conversion: str,
    total: float,
    sites: tuple[str, ...],
    density: float,
    see: float,
    warnings: list[str],
    reference: str,
) -> BodyFatEstimate:
    if density <= 0:  # only for absurd sums far outside any published range
        raise NotComputable(
            "skinfold-no-density",
            f"{equation}: sum of skinfolds {total} mm gives no usable body density",
        )
    if not density_plausible(density):
        warnings.append("density-implausible")
    bf = body_fat_pct(density, conversion)
    if not 0.0 <= bf < 100.0:
        warnings.append("bodyfat-out-of-range")
    return BodyFatEstimate(
        equation=equation,
        name=name,
        conversion=conversion,
        sum_mm=total,
        sites=sites,
        density_g_ml=density,
        bodyfat_pct=bf,
        se_pct=body_fat_se_pct(density, see, conversion),
        warnings=tuple(warnings),
        density_se_g_ml=see,
        reference=reference,
    )


# ---------------------------------------------------------------------------
def body_fat_pct_deurenberg_1991(bmi_kg_m2: float, age_years: float, sex: Sex) -> float:
    """Rough percent body fat from BMI, age and sex (Deurenberg et al. 1991).

    Parameters
    ----------
    bmi_kg_m2 : float
        Body-mass index. [kg/m²]
    age_years : float
        Age in completed years. [years]
    sex : {"male", "female"}
        Sex of the client (sex = 1 for men, 0 for women in the equation).

    Returns
    -------
    float
        %BF = 1.20 BMI + 0.23 age - 10.8 sex - 5.4, not clamped. [%]

    Notes
    -----
    Adult equation from Dutch adults and children with density by underwater
    weighing; SEE about 4 %BF [1]_.  Coefficients, SEE and sample from memory
    (unverified).  It cannot tell muscle from fat: it overestimates fat
    in muscular clients and is a rough estimate only, for clients without
    skinfolds.

    References
    ----------
    .. [1] Deurenberg P, Weststrate JA, Seidell JC. Body mass index as a
       measure of body fatness: age- and sex-specific prediction formulas.
       Br J Nutr 1991;65:105-114. doi:10.1079/BJN19910073
    """
    sex = _sex_check(sex)
    _check_age(age_years)
    if not finite(bmi_kg_m2) or bmi_kg_m2 <= 0:
        raise ValueError(f"bmi_kg_m2 must be a positive number, got {bmi_kg_m2!r}")
    a, b, c, d = DEURENBERG_1991
    return a * bmi_kg_m2 + b * age_years - c * (1.0 if sex == "male" else 0.0) - d


def estimate_body_fat_from_bmi(
    sex: Sex, age_years: float, weight_kg: float, height_cm: float
) -> BodyFatEstimate:
    """The BMI-based rough body-fat estimate for clients with no skinfolds.

    Parameters
    ----------
    sex : {"male", "female"}
        Sex of the client.
    age_years : float
        Age in completed years. [years]
    weight_kg : float
        Body weight (trend weight). [kg]
    height_cm : float
        Height. [cm]

    Returns
    -------
    BodyFatEstimate
        Code "bmi-deurenberg", conversion "none", no sum or density,
        ``rough=True``, SE about 4 %BF (from memory).  Warns
        "age-outside-derivation" under 16 and "bodyfat-out-of-range" outside
        0-100 %.
    """
    bf = body_fat_pct_deurenberg_1991(bmi_kg_m2(weight_kg, height_cm), age_years, sex)
    warnings = []
    if age_years < DEURENBERG_MIN_AGE:
        warnings.append("age-outside-derivation")
    if not 0.0 <= bf < 100.0:
        warnings.append("bodyfat-out-of-range")
    return BodyFatEstimate(
        equation="bmi-deurenberg",
        name="Deurenberg, Weststrate & Seidell 1991 (from BMI, rough estimate)",
        conversion="none",
        sum_mm=None,
        sites=(),
        density_g_ml=None,
        bodyfat_pct=bf,
        se_pct=DEURENBERG_SEE_PCT,
        warnings=tuple(warnings),
        reference=REFERENCES["deurenberg"],
        rough=True,
    )


# ---------------------------------------------------------------------------
def technical_error_of_measurement_mm(pairs: Iterable[Sequence[float]]) -> float:
    """Technical error of measurement (TEM) of paired repeat skinfold readings.

    Parameters
    ----------
    pairs : iterable of (float, float)
        First and second reading of the same site/client, at least one pair. [mm]

    Returns
    -------
    float
        TEM = sqrt(sum(d²) / (2 n)), d the within-pair difference. [mm]

    Notes
    -----
    The standard anthropometry formula (from memory, unverified); ISAK accepts
    an intra-tester %TEM up to about 5 % for skinfolds (from memory).
    """
    diffs = _pair_list(pairs)
    return math.sqrt(math.fsum((a - b) ** 2 for a, b in diffs) / (2 * len(diffs)))


def technical_error_of_measurement_pct(pairs: Iterable[Sequence[float]]) -> float:
    """Relative TEM: 100 x TEM / mean of all readings. [%]

    Parameters
    ----------
    pairs : iterable of (float, float)
        Paired repeat readings. [mm]

    Returns
    -------
    float
        %TEM. [%]
    """
    diffs = _pair_list(pairs)
    mean = math.fsum(a + b for a, b in diffs) / (2 * len(diffs))
    return 100.0 * technical_error_of_measurement_mm(diffs) / mean


def _pair_list(pairs: Iterable[Sequence[float]]) -> list[tuple[float, float]]:
    out: list[tuple[float, float]] = []
    for p in pairs:
        if len(p) != 2:
            raise ValueError(f"each pair must hold two readings, got {p!r}")
        a, b = float(p[0]), float(p[1])
        if not (finite(a) and finite(b)) or a <= 0 or b <= 0:
            raise ValueError(f"readings must be positive numbers of mm, got {p!r}")
        out.append((a, b))
    if not out:
        raise ValueError("at least one pair of readings is needed for the TEM")
    return out
