"""Resting (basal) energy expenditure equations [kcal/day].

Used for the fallback expectation when a client has no usable baseline, and
listed on the report's methods page (:data:`RESTING_METHODS`).

Codes: ``mifflin-st-jeor``, ``harris-benedict-1919``, ``roza-shizgal-1984``,
``schofield-1985``, and, when fat-free mass is known, ``katch-mcardle`` (the
same formula as Cunningham 1991) and ``cunningham-1980``.

Henry 2005 ("Oxford") equations are deliberately left out: their coefficients
could not be confirmed against the paper's tables, and a resting equation
printed in a client report must come from a checked source.

Schofield age bands: the paper's "18-30, 30-60, >60" are read as
18 <= age < 30, 30 <= age < 60 and age >= 60 (completed years), so a client
aged exactly 30 uses the 30-60 row.  Schofield is not defined here under 18.

The equations based on fat-free mass inherit every error of the body-fat
estimate behind it.
"""

from __future__ import annotations

from reportgen.io.model import Sex
from reportgen.results import MethodUsed
from reportgen.science._checks import finite
from reportgen.science.errors import NotComputable

# Mifflin et al. 1990: 10 W + 6.25 H - 5 A + 5 (men) / - 161 (women) (published, abstract).
MSJ = (10.0, 6.25, 5.0)
MSJ_MEN_CONST = 5.0
MSJ_WOMEN_CONST = -161.0
# Harris & Benedict 1919 original (published; several encyclopedia copies agree).
HB1919_MEN = (66.4730, 13.7516, 5.0033, 6.7550)
HB1919_WOMEN = (655.0955, 9.5634, 1.8496, 4.6756)
# Roza & Shizgal 1984 revision (published, secondary copies).
RS1984_MEN = (88.362, 13.397, 4.799, 5.677)
RS1984_WOMEN = (447.593, 9.247, 3.098, 4.330)
# Katch-McArdle = Cunningham 1991: 370 + 21.6 FFM (from memory, unverified).
KATCH_MCARDLE = (370.0, 21.6)
# Cunningham 1980: 500 + 22 LBM (secondary sites only; from memory, unverified).
CUNNINGHAM_1980 = (500.0, 22.0)
# Schofield 1985 (WHO/FAO/UNU), weight only: (lowest age, slope, intercept, SEE) per band;
# published (secondary encyclopedia copy, matching the MJ/d form in a second source).
SCHOFIELD_MEN = ((18, 15.057, 692.2, 153.0), (30, 11.472, 873.1, 167.0), (60, 11.711, 587.7, 164.0))
SCHOFIELD_WOMEN = ((18, 14.818, 486.6, 119.0), (30, 8.126, 845.6, 111.0), (60, 9.082, 658.5, 108.0))

RESTING_METHODS: dict[str, MethodUsed] = {
    "mifflin-st-jeor": MethodUsed(
        code="mifflin-st-jeor",
        name="Mifflin-St Jeor 1990",
        reference=(
            "Mifflin MD, St Jeor ST, Hill LA, Scott BJ, Daugherty SA, Koh YO. A new predictive "
            "equation for resting energy expenditure in healthy individuals. Am J Clin Nutr "
            "1990;51:241-247. doi:10.1093/ajcn/51.2.241"
        ),
        # accuracy as remembered, not looked up (kept out of the printed text)
        see="derived on 498 adults aged 19-78; within about 10 % of measured REE for most adults",
    ),
    "harris-benedict-1919": MethodUsed(
        code="harris-benedict-1919",
        name="Harris-Benedict 1919",
        reference=(
            "Harris JA, Benedict FG. A Biometric Study of Basal Metabolism in Man. Washington DC: "
            "Carnegie Institution of Washington; 1919. Publication no. 279."
        ),
        see="overestimates measured REE by about 5 % in modern adults (Mifflin et al. 1990)",
    ),
    "roza-shizgal-1984": MethodUsed(
        code="roza-shizgal-1984",
        name="Harris-Benedict revised by Roza & Shizgal 1984",
        reference=(
            "Roza AM, Shizgal HM. The Harris Benedict equation reevaluated: resting energy "
            "requirements and the body cell mass. Am J Clin Nutr 1984;40:168-182. "
            "doi:10.1093/ajcn/40.1.168"
        ),
        see="95 % range ±213 kcal/day (men), ±201 kcal/day (women)",
    ),
    "schofield-1985": MethodUsed(
        code="schofield-1985",
        name="Schofield 1985 (WHO/FAO/UNU), weight only",
        reference=(
            "Schofield WN. Predicting basal metabolic rate, new standards and review of previous "
            "work. Hum Nutr Clin Nutr 1985;39 Suppl 1:5-41."
        ),
        see="standard error of estimate 108-167 kcal/day by sex and age band",
    ),
    "katch-mcardle": MethodUsed(
        code="katch-mcardle",
        name="Katch-McArdle (Cunningham 1991 form), from fat-free mass",
        reference=(
            "Cunningham JJ. Body composition as a determinant of energy expenditure: a synthetic "
            "review and a proposed general prediction equation. Am J Clin Nutr 1991;54:963-969. "
            "doi:10.1093/ajcn/54.6.963"
        ),
        see="inherits the error of the fat-free mass estimate",
    ),
    "cunningham-1980": MethodUsed(
        code="cunningham-1980",
        name="Cunningham 1980, from lean body mass",
        reference=(
            "Cunningham JJ. A reanalysis of the factors influencing basal metabolic rate in "
            "normal adults. Am J Clin Nutr 1980;33:2372-2374. doi:10.1093/ajcn/33.11.2372"
        ),
        see="inherits the error of the lean mass estimate",
    ),
}


def _positive(name: str, value: float) -> None:
    if not finite(value) or value <= 0:
        raise ValueError(f"{name} must be a positive number, got {value!r}")


def _sex(sex: object) -> Sex:
    if sex not in ("male", "female"):
        raise ValueError(f"sex must be 'male' or 'female', got {sex!r}")
    return sex


def _whs(sex: object, weight_kg: float, height_cm: float, age_years: float) -> Sex:
    s = _sex(sex)
    _positive("weight_kg", weight_kg)
    _positive("height_cm", height_cm)
    if age_years == 0:
        # valid data (an infant) but outside every equation here
        raise NotComputable(
            "age-outside-equation", "the resting equations are not defined at age 0 years"
        )
    _positive("age_years", age_years)
    return s


def resting_kcal_mifflin_st_jeor(
    sex: Sex, weight_kg: float, height_cm: float, age_years: float
) -> float:
    """Resting energy expenditure, Mifflin-St Jeor 1990.

    Parameters
    ----------
    sex : {"male", "female"}
        Sex of the client.
    weight_kg : float
        Body weight. [kg]
    height_cm : float
        Height. [cm]
    age_years : float
        Age in completed years. [years]

    Returns
    -------
    float
        10 W + 6.25 H - 5 A + 5 (men) or - 161 (women). [kcal/day]

    Notes
    -----
    Derived on 498 healthy adults aged 19-78, normal weight and obese, with
    REE by indirect calorimetry [1]_.  The unified form in the abstract is
    9.99 W + 6.25 H - 4.92 A + 166 sex - 161.

    References
    ----------
    .. [1] Mifflin MD, St Jeor ST, Hill LA, et al. A new predictive equation
       for resting energy expenditure in healthy individuals. Am J Clin Nutr
       1990;51:241-247. doi:10.1093/ajcn/51.2.241
    """
    s = _whs(sex, weight_kg, height_cm, age_years)
    a, b, c = MSJ
    const = MSJ_MEN_CONST if s == "male" else MSJ_WOMEN_CONST
    return a * weight_kg + b * height_cm - c * age_years + const


def _hb(coeffs: tuple[float, float, float, float], w: float, h: float, a: float) -> float:
    k, cw, ch, ca = coeffs
    return k + cw * w + ch * h - ca * a


def resting_kcal_harris_benedict_1919(
    sex: Sex, weight_kg: float, height_cm: float, age_years: float
) -> float:
    """Basal metabolic rate, original Harris-Benedict 1919 equations.

    Parameters
    ----------
    sex : {"male", "female"}
        Sex of the client.
    weight_kg : float
        Body weight. [kg]
    height_cm : float
        Height. [cm]
    age_years : float
        Age in completed years. [years]

    Returns
    -------
    float
        Men 66.4730 + 13.7516 W + 5.0033 H - 6.7550 A; women 655.0955 +
        9.5634 W + 1.8496 H - 4.6756 A. [kcal/day]

    Notes
    -----
    Fitted on 136 men and 103 women early in the 20th century [1]_ (sample
    sizes from memory); Mifflin et al. 1990 found it overestimates measured
    REE by about 5 % (published, abstract).

    References
    ----------
    .. [1] Harris JA, Benedict FG. A Biometric Study of Basal Metabolism in
       Man. Carnegie Institution of Washington, Publication no. 279; 1919.
    """
    s = _whs(sex, weight_kg, height_cm, age_years)
    return _hb(HB1919_MEN if s == "male" else HB1919_WOMEN, weight_kg, height_cm, age_years)


def resting_kcal_roza_shizgal_1984(
    sex: Sex, weight_kg: float, height_cm: float, age_years: float
) -> float:
    """Resting energy expenditure, Harris-Benedict revised by Roza & Shizgal 1984.

    Parameters
    ----------
    sex : {"male", "female"}
        Sex of the client.
    weight_kg : float
        Body weight. [kg]
    height_cm : float
        Height. [cm]
    age_years : float
        Age in completed years. [years]

    Returns
    -------
    float
        Men 88.362 + 13.397 W + 4.799 H - 5.677 A; women 447.593 + 9.247 W +
        3.098 H - 4.330 A. [kcal/day]

    Notes
    -----
    The Harris-Benedict data refitted with added measurements; 95 % range
    ±213 kcal/day (men) and ±201 kcal/day (women) [1]_.

    References
    ----------
    .. [1] Roza AM, Shizgal HM. The Harris Benedict equation reevaluated:
       resting energy requirements and the body cell mass. Am J Clin Nutr
       1984;40:168-182. doi:10.1093/ajcn/40.1.168
    """
    s = _whs(sex, weight_kg, height_cm, age_years)
    return _hb(RS1984_MEN if s == "male" else RS1984_WOMEN, weight_kg, height_cm, age_years)


def resting_kcal_katch_mcardle(lean_mass_kg: float) -> float:
    """Resting energy expenditure from fat-free mass, Katch-McArdle / Cunningham 1991.

    Parameters
    ----------
    lean_mass_kg : float
        Fat-free (lean) mass. [kg]

    Returns
    -------
    float
        370 + 21.6 FFM. [kcal/day]

    Notes
    -----
    The form proposed by Cunningham 1991 [1]_ from a synthesis of studies and
    known in practice as Katch-McArdle.  Coefficients from memory (unverified).

    References
    ----------
    .. [1] Cunningham JJ. Body composition as a determinant of energy
       expenditure: a synthetic review and a proposed general prediction
       equation. Am J Clin Nutr 1991;54:963-969. doi:10.1093/ajcn/54.6.963
    """
    _positive("lean_mass_kg", lean_mass_kg)
    a, b = KATCH_MCARDLE
    return a + b * lean_mass_kg


def resting_kcal_cunningham_1991(lean_mass_kg: float) -> float:
    """Resting energy expenditure, Cunningham 1991 (the same formula as Katch-McArdle).

    Parameters
    ----------
    lean_mass_kg : float
        Fat-free mass. [kg]

    Returns
    -------
    float
        370 + 21.6 FFM. [kcal/day]

    References
    ----------
    .. [1] Cunningham JJ. Am J Clin Nutr 1991;54:963-969.
       doi:10.1093/ajcn/54.6.963
    """
    return resting_kcal_katch_mcardle(lean_mass_kg)


def resting_kcal_cunningham_1980(lean_mass_kg: float) -> float:
    """Basal metabolic rate from lean body mass, Cunningham 1980.

    Parameters
    ----------
    lean_mass_kg : float
        Lean body mass. [kg]

    Returns
    -------
    float
        500 + 22 LBM. [kcal/day]

    Notes
    -----
    A reanalysis of the Harris-Benedict subjects [1]_; coefficients
    corroborated only by secondary sources (from memory, unverified).

    References
    ----------
    .. [1] Cunningham JJ. A reanalysis of the factors influencing basal
       metabolic rate in normal adults. Am J Clin Nutr 1980;33:2372-2374.
       doi:10.1093/ajcn/33.11.2372
    """
    _positive("lean_mass_kg", lean_mass_kg)
    a, b = CUNNINGHAM_1980
    return a + b * lean_mass_kg


def _schofield_row(sex: Sex, age_years: float) -> tuple[int, float, float, float]:
    s = _sex(sex)
    if not finite(age_years) or age_years < 18:
        raise ValueError(f"Schofield adult equations need age_years >= 18, got {age_years!r}")
    rows = SCHOFIELD_MEN if s == "male" else SCHOFIELD_WOMEN
    chosen = rows[0]
    for row in rows:
        if age_years >= row[0]:
            chosen = row
    return chosen


def resting_kcal_schofield(sex: Sex, weight_kg: float, age_years: float) -> float:
    """Basal metabolic rate from weight, Schofield 1985 (WHO/FAO/UNU).

    Parameters
    ----------
    sex : {"male", "female"}
        Sex of the client.
    weight_kg : float
        Body weight. [kg]
    age_years : float
        Age in completed years; bands 18 <= A < 30, 30 <= A < 60, A >= 60. [years]

    Returns
    -------
    float
        slope x W + intercept for the sex and age band. [kcal/day]

    Raises
    ------
    ValueError
        Under 18 (the child bands are not included) or for a bad input.

    Notes
    -----
    Men: 15.057 W + 692.2 (SEE 153), 11.472 W + 873.1 (167), 11.711 W + 587.7
    (164).  Women: 14.818 W + 486.6 (119), 8.126 W + 845.6 (111), 9.082 W +
    658.5 (108) [1]_.  Compiled from several thousand BMR measurements, a large
    share from young Italian men, so it tends to overestimate in some
    populations (sample description from memory).

    References
    ----------
    .. [1] Schofield WN. Predicting basal metabolic rate, new standards and
       review of previous work. Hum Nutr Clin Nutr 1985;39 Suppl 1:5-41.
    """
    _positive("weight_kg", weight_kg)
    _, slope, intercept, _ = _schofield_row(sex, age_years)
    return slope * weight_kg + intercept


def schofield_see_kcal(sex: Sex, age_years: float) -> float:
    """Standard error of estimate of the Schofield band used. [kcal/day]"""
    return _schofield_row(sex, age_years)[3]


def resting_kcal_all(
    sex: Sex,
    weight_kg: float,
    height_cm: float,
    age_years: float,
    lean_mass_kg: float | None = None,
) -> dict[str, float]:
    """Every resting equation that applies, keyed by equation code.

    Parameters
    ----------
    sex : {"male", "female"}
        Sex of the client.
    weight_kg : float
        Body weight. [kg]
    height_cm : float
        Height. [cm]
    age_years : float
        Age in completed years. [years]
    lean_mass_kg : float, optional
        Fat-free mass; adds "katch-mcardle" and "cunningham-1980". [kg]

    Returns
    -------
    dict of str to float
        Code -> resting expenditure [kcal/day], in the order of
        :data:`RESTING_METHODS`.  "schofield-1985" is omitted under 18.

    Raises
    ------
    NotComputable
        Reason "age-outside-equation" at age 0.
    ValueError
        For an unknown sex or a weight, height or lean mass that is not a positive
        number.
    """
    out = {
        "mifflin-st-jeor": resting_kcal_mifflin_st_jeor(sex, weight_kg, height_cm, age_years),
        "harris-benedict-1919": resting_kcal_harris_benedict_1919(
            sex, weight_kg, height_cm, age_years
        ),
        "roza-shizgal-1984": resting_kcal_roza_shizgal_1984(sex, weight_kg, height_cm, age_years),
    }
    if age_years >= 18:
        out["schofield-1985"] = resting_kcal_schofield(sex, weight_kg, age_years)
    if lean_mass_kg is not None:
        out["katch-mcardle"] = resting_kcal_katch_mcardle(lean_mass_kg)
        out["cunningham-1980"] = resting_kcal_cunningham_1980(lean_mass_kg)
    return out
