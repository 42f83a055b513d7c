"""Body density to percent body fat: the Siri and Brozek two-compartment models.

Both assume fixed densities for fat and fat-free mass, which do not hold for
everyone (athletes with dense bone and muscle, older people, some ethnic
groups, children).  Results are never clamped: Siri gives a negative value for
a density above 1.100 g/ml.  :func:`density_plausible` tells the caller when a
density lies outside 0.99-1.10 g/ml so it can warn.

Coefficients (published): "495/Density - 450" (Siri) and "457/Density - 414.2"
(Brozek), as documented for the 252-men body-fat data by Johnson 1996 [3]_.
The two agree at Db = 38/35.8 = 1.06145 g/ml (about 16.3 %, computed); Brozek
is higher below that fatness and lower above it.

References
----------
.. [1] Siri WE. Body composition from fluid spaces and density: analysis of
   methods. In: Brozek J, Henschel A, eds. Techniques for Measuring Body
   Composition. Washington DC: National Academy of Sciences; 1961:223-244.
.. [2] Brozek J, Grande F, Anderson JT, Keys A. Densitometric analysis of body
   composition: revision of some quantitative assumptions. Ann N Y Acad Sci
   1963;110:113-140. doi:10.1111/j.1749-6632.1963.tb17079.x
.. [3] Johnson RW. Fitting percentage of body fat to simple body measurements.
   J Stat Educ 1996;4(1). doi:10.1080/10691898.1996.11910505
"""

from __future__ import annotations

from reportgen.choices import DENSITY_CONVERSIONS
from reportgen.science._checks import finite

# Siri 1961: fat 0.900 g/ml, fat-free mass 1.100 g/ml -> %BF = 495/Db - 450 (published [3]).
SIRI_A = 495.0
SIRI_B = 450.0
# Brozek et al. 1963 "reference man" -> %BF = 457/Db - 414.2 (published [3]).
BROZEK_A = 457.0
BROZEK_B = 414.2

CONVERSIONS = DENSITY_CONVERSIONS  # the one list (reportgen.choices)
CONVERSION_NAMES = {
    "siri": "Siri 1961",
    "brozek": "Brozek et al. 1963",
}
CONVERSION_REFERENCES = {
    "siri": (
        "Siri WE. Body composition from fluid spaces and density: analysis of methods. "
        "In: Brozek J, Henschel A, eds. Techniques for Measuring Body Composition. "
        "Washington DC: National Academy of Sciences; 1961:223-244."
    ),
    "brozek": (
        "Brozek J, Grande F, Anderson JT, Keys A. Densitometric analysis of body composition: "
        "revision of some quantitative assumptions. Ann N Y Acad Sci 1963;110:113-140."
    ),
}

# Plausible whole-body density range for the warning (Siri 1961 / Brozek 1963 two-compartment
# assumptions break down outside it; common practice, no single source).
DENSITY_PLAUSIBLE_G_ML = (0.99, 1.10)

_COEFFS = {"siri": (SIRI_A, SIRI_B), "brozek": (BROZEK_A, BROZEK_B)}


def _check_density(density_g_ml: float) -> None:
    if not finite(density_g_ml) or density_g_ml <= 0:
        raise ValueError(f"density_g_ml must be a positive number, got {density_g_ml!r}")


def body_fat_pct_siri(density_g_ml: float) -> float:
    """Percent body fat from body density, Siri's equation.

    Parameters
    ----------
    density_g_ml : float
        Whole-body density, Db. [g/ml]

    Returns
    -------
    float
        %BF = 495 / Db - 450, not clamped. [%]

    Raises
    ------
    ValueError
        If the density is not a positive finite number.

    Notes
    -----
    Two-compartment model with fat 0.900 g/ml and fat-free mass 1.100 g/ml [1]_.
    The conversion the Jackson-Pollock and Durnin-Womersley papers used.

    References
    ----------
    .. [1] Siri WE. Body composition from fluid spaces and density: analysis of
       methods. In: Techniques for Measuring Body Composition. Washington DC:
       National Academy of Sciences; 1961:223-244.
    """
    _check_density(density_g_ml)
    return SIRI_A / density_g_ml - SIRI_B


def body_fat_pct_brozek(density_g_ml: float) -> float:
    """Percent body fat from body density, Brozek's equation.

    Parameters
    ----------
    density_g_ml : float
        Whole-body density, Db. [g/ml]

    Returns
    -------
    float
        %BF = 457 / Db - 414.2, not clamped. [%]

    Raises
    ------
    ValueError
        If the density is not a positive finite number.

    Notes
    -----
    Two-compartment model based on the "reference man" composition [1]_.

    References
    ----------
    .. [1] Brozek J, Grande F, Anderson JT, Keys A. Densitometric analysis of
       body composition: revision of some quantitative assumptions. Ann N Y
       Acad Sci 1963;110:113-140. doi:10.1111/j.1749-6632.1963.tb17079.x
    """
    _check_density(density_g_ml)
    return BROZEK_A / density_g_ml - BROZEK_B


def body_fat_pct(density_g_ml: float, conversion: str = "siri") -> float:
    """Percent body fat from body density by the named conversion.

    Parameters
    ----------
    density_g_ml : float
        Whole-body density. [g/ml]
    conversion : {"siri", "brozek"}, default "siri"
        Which two-compartment model to use.

    Returns
    -------
    float
        Body fat. [%]

    Raises
    ------
    ValueError
        For an unknown conversion name or a non-positive density.
    """
    if conversion == "siri":
        return body_fat_pct_siri(density_g_ml)
    if conversion == "brozek":
        return body_fat_pct_brozek(density_g_ml)
    raise ValueError(f"unknown density conversion {conversion!r}; use one of: siri, brozek")


def body_fat_se_pct(density_g_ml: float, density_se_g_ml: float, conversion: str = "siri") -> float:
    """Standard error of %BF implied by a density standard error (delta method).

    Parameters
    ----------
    density_g_ml : float
        Estimated body density. [g/ml]
    density_se_g_ml : float
        Standard error of estimate of the density equation. [g/ml]
    conversion : {"siri", "brozek"}, default "siri"
        Conversion used for the %BF.

    Returns
    -------
    float
        |d(%BF)/dDb| x SE = A / Db² x SE, with A = 495 (Siri) or 457 (Brozek). [%]

    Notes
    -----
    First-order propagation; at Db = 1.055 g/ml an SEE of 0.0077 g/ml is about
    3.4 %BF with Siri (computed here: d%BF/dDb = -495/Db^2).
    """
    _check_density(density_g_ml)
    if conversion not in _COEFFS:
        raise ValueError(f"unknown density conversion {conversion!r}; use one of: siri, brozek")
    if not finite(density_se_g_ml) or density_se_g_ml < 0:
        raise ValueError(f"density_se_g_ml must be a non-negative number, got {density_se_g_ml!r}")
    a, _ = _COEFFS[conversion]
    return a / density_g_ml**2 * density_se_g_ml


def density_plausible(density_g_ml: float) -> bool:
    """Whether a body density lies inside the plausible 0.99-1.10 g/ml range.

    Parameters
    ----------
    density_g_ml : float
        Body density. [g/ml]

    Returns
    -------
    bool
        True inside [0.99, 1.10] g/ml (inclusive).
    """
    lo, hi = DENSITY_PLAUSIBLE_G_ML
    return lo <= density_g_ml <= hi
