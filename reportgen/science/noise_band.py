"""Widening a white-noise trend band for autocorrelated water swings.

The local-linear-trend smoother treats the day-to-day noise about the trend as
independent.  Real weigh-in noise has an AR(1) part (water, gut content) that
persists for days (the rate fit estimates it per client), so the smoother's band
for the level is too narrow: averaging n correlated days removes less noise than
averaging n independent ones.  The classical correction is the variance of the
mean of an AR(1) sample: for n points with lag-one correlation phi,

    Var(mean) = sigma^2 / n x g(phi, n),
    g(phi, n) = 1 + 2 sum_{k=1}^{n-1} (1 - k/n) phi^k
              = (1 + phi)/(1 - phi) - 2 phi (1 - phi^n) / (n (1 - phi)^2)

(e.g. Brockwell PJ, Davis RA. Introduction to Time Series and Forecasting, 2nd ed.
Springer 2002, section 2.4, variance of the sample mean).  The smoother's level
variance r/n_eff defines the number of days it effectively averages; the band is
widened by the ratio of the AR-aware to the white-noise variance of that mean.
"""

from __future__ import annotations

import math

import numpy as np

from reportgen.io.model import FloatArray
from reportgen.science._checks import finite


def ar1_mean_variance_factor(phi: float, n: float) -> float:
    """g(phi, n): variance of the mean of n AR(1) points relative to independent ones.

    Parameters
    ----------
    phi : float
        Lag-one autocorrelation, 0 <= phi < 1. [unitless]
    n : float
        Number of (consecutive, daily) points averaged, >= 1; non-integer values
        interpolate the closed form. [days]

    Returns
    -------
    float
        >= 1 for phi >= 0; 1 at phi = 0 or n = 1; (1 + phi)/(1 - phi) as n grows.
    """
    if not finite(phi) or not 0.0 <= phi < 1.0:
        raise ValueError(f"phi must be in [0, 1), got {phi!r}")
    if not finite(n) or n < 1.0:
        raise ValueError(f"n must be >= 1, got {n!r}")
    if phi == 0.0:
        return 1.0
    p, m = float(phi), float(n)
    return (1 + p) / (1 - p) - 2 * p * (1 - math.pow(p, m)) / (m * (1 - p) ** 2)


def widen_level_variance(
    level_var_kg2: FloatArray,
    white_model_var_kg2: float,
    ar_var_kg2: float,
    phi: float,
    white_var_kg2: float,
) -> FloatArray:
    """Level variance of a white-noise smoother, widened for AR(1) noise.

    Parameters
    ----------
    level_var_kg2 : array
        The smoother's level variance per day. [kg^2]
    white_model_var_kg2 : float
        The observation variance the smoother assumed (r). [kg^2]
    ar_var_kg2, phi, white_var_kg2 : float
        The client's noise model: AR(1) marginal variance, its autocorrelation and
        the independent part. [kg^2, unitless, kg^2]

    Returns
    -------
    array
        level_var x (white + ar g(phi, n_eff)) / (white + ar), with n_eff =
        r / level_var the days the smoother effectively averages. [kg^2]
    """
    v = np.asarray(level_var_kg2, dtype=float)
    tot = ar_var_kg2 + white_var_kg2
    if tot <= 0 or white_model_var_kg2 <= 0 or ar_var_kg2 <= 0 or phi <= 0:
        return v.copy()
    phi = min(phi, 0.99)
    out = v.copy()
    for i, x in enumerate(v):
        if not math.isfinite(x) or x <= 0:
            continue
        n_eff = max(white_model_var_kg2 / x, 1.0)
        g = ar1_mean_variance_factor(phi, n_eff)
        out[i] = x * (white_var_kg2 + ar_var_kg2 * g) / tot
    return out
