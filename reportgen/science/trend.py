"""Trend weight: a robust local-linear-trend smoother, exponential smoothing, window rates.

A daily weigh-in is the underlying body mass plus day-to-day noise (water,
gut content, scale): 0.4-0.7 kg SD is typical.  The trend is what the noise
hides.  This module estimates it three ways:

* :func:`local_linear_trend` - the structural time-series model of Harvey
  (1989) / Durbin & Koopman (2012), fitted per client by concentrated maximum
  likelihood on a small grid of signal-to-noise ratios, Kalman filter + RTS
  smoother, with a second, robust pass that down-weights spikes.  Gives the
  level and the slope with their variances on every calendar day, missing
  days included.
* :func:`ema` - exponential smoothing with alpha 0.1/day, kept for comparison
  (common practice in weight self-monitoring, no single source).
* :func:`window_rate` - the weighted least-squares slope over a window with a
  standard error that allows for autocorrelated (AR(1)) water swings.  This is
  what the energy balance uses.

All functions are pure (numpy in, numpy out) and work on a complete calendar
grid where missing days are NaN.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.linalg import solveh_banded
from scipy.signal import lfilter

from reportgen.io.model import DateArray, FloatArray
from reportgen.results import TrendSeries

Z80 = 1.2815515655446004  # two-sided 80 % normal quantile, scipy.stats.norm.ppf(0.9)

# Grid of signal-to-noise ratios searched by maximum likelihood (variances relative
# to the observation variance r).  Level ratios span a nearly-flat trend (1/400) to a
# jumpy one (1/20), with 1/90 the EMA-equivalent value (science notes §7.3); slope
# ratios keep the slope changing over weeks, not days.  A 3 x 2 grid fitted the
# benchmark's trend as well as a 5 x 3 one (RMSE 0.200 vs 0.217 kg) in 40 % of the time.
LEVEL_RATIOS: tuple[float, ...] = (1 / 400, 1 / 90, 1 / 20)
SLOPE_RATIOS: tuple[float, ...] = (2e-6, 5e-5)
# Robust pass: standardized residuals beyond this many SD get their variance inflated
# by (|z|/c)^2 (a Huber-type weight on the precision).  Judgment, not published.
ROBUST_C = 2.5
_DIFFUSE = 1e6  # variance of the diffuse initial level, in units of r
_DIFFUSE_SLOPE = 1e4  # variance of the initial slope, in units of r


@dataclass(frozen=True)
class TrendFit:
    """Result of :func:`local_linear_trend` (all arrays on the input's daily grid)."""

    level_kg: FloatArray
    level_var_kg2: FloatArray
    slope_kg_per_day: FloatArray
    slope_var: FloatArray
    weights: FloatArray  # robust precision weight of each weigh-in (NaN on missing days)
    noise_sd_kg: float
    level_ratio: float
    slope_ratio: float
    n_obs: int

    def series(self, dates: DateArray) -> TrendSeries:
        """As the shared :class:`~reportgen.results.TrendSeries` with 80 % bands."""
        half = Z80 * np.sqrt(self.level_var_kg2)
        return TrendSeries(
            method="local-linear-trend",
            dates=dates,
            level_kg=self.level_kg,
            level_low_kg=self.level_kg - half,
            level_high_kg=self.level_kg + half,
            slope_kg_per_day=self.slope_kg_per_day,
            slope_sd_kg_per_day=np.sqrt(self.slope_var),
            noise_sd_kg=self.noise_sd_kg,
        )


def _filter(
    y: list[float], h: list[float], ql: float, qs: float, smooth: bool
) -> tuple[float, float, int, tuple[list[float], ...] | None]:
    """Kalman filter (and optionally RTS smoother) for the local linear trend, r = 1.

    ``y`` holds NaN on missing days; ``h`` is the observation-variance multiplier of
    each day (1 normally, larger for down-weighted spikes).  Returns the sum of
    v^2/F, the sum of log F over the likelihood terms, their count, and the smoothed
    (level, level var, slope, slope var) when ``smooth``.  Scalar arithmetic on
    Python floats is faster than numpy for 2x2 matrices.
    """
    n = len(y)
    a0 = a1 = 0.0
    p00, p01, p11 = _DIFFUSE, 0.0, _DIFFUSE_SLOPE
    ssq = 0.0
    slogf = 0.0
    m = 0
    seen = 0
    if smooth:
        fa0 = [0.0] * n
        fa1 = [0.0] * n
        f00 = [0.0] * n
        f01 = [0.0] * n
        f11 = [0.0] * n
    for t in range(n):
        yt = y[t]
        if yt == yt:  # observed (NaN != NaN)
            f = p00 + h[t]
            v = yt - a0
            k0 = p00 / f
            k1 = p01 / f
            a0 += k0 * v
            a1 += k1 * v
            p11 -= k1 * p01
            p01 -= k0 * p01
            p00 -= k0 * p00
            seen += 1
            if seen > 2:  # the first two observations only initialise the diffuse states
                ssq += v * v / f
                slogf += math.log(f)
                m += 1
        if smooth:
            fa0[t] = a0
            fa1[t] = a1
            f00[t] = p00
            f01[t] = p01
            f11[t] = p11
        # predict: T = [[1, 1], [0, 1]], Q = diag(ql, qs)
        a0 += a1
        p00 = p00 + 2.0 * p01 + p11 + ql
        p01 = p01 + p11
        p11 = p11 + qs
    if not smooth:
        return ssq, slogf, m, None
    # Rauch-Tung-Striebel smoother, backwards.
    s0 = [0.0] * n
    s1 = [0.0] * n
    v00 = [0.0] * n
    v11 = [0.0] * n
    sa0, sa1 = fa0[n - 1], fa1[n - 1]
    sp00, sp01, sp11 = f00[n - 1], f01[n - 1], f11[n - 1]
    s0[n - 1], s1[n - 1], v00[n - 1], v11[n - 1] = sa0, sa1, sp00, sp11
    for t in range(n - 2, -1, -1):
        c00, c01, c11 = f00[t], f01[t], f11[t]
        # predicted covariance of t+1 given t
        q00 = c00 + 2.0 * c01 + c11 + ql
        q01 = c01 + c11
        q11 = c11 + qs
        det = q00 * q11 - q01 * q01
        i00, i01, i11 = q11 / det, -q01 / det, q00 / det
        # J = P T' Pred^-1, with P T' = [[c00 + c01, c01], [c01 + c11, c11]]
        m00, m01 = c00 + c01, c01
        m10, m11 = c01 + c11, c11
        j00 = m00 * i00 + m01 * i01
        j01 = m00 * i01 + m01 * i11
        j10 = m10 * i00 + m11 * i01
        j11 = m10 * i01 + m11 * i11
        d0 = sa0 - (fa0[t] + fa1[t])
        d1 = sa1 - fa1[t]
        sa0 = fa0[t] + j00 * d0 + j01 * d1
        sa1 = fa1[t] + j10 * d0 + j11 * d1
        e00, e01, e11 = sp00 - q00, sp01 - q01, sp11 - q11
        # P_s = P + J (P_s' - Pred) J'
        t00 = j00 * e00 + j01 * e01
        t01 = j00 * e01 + j01 * e11
        t10 = j10 * e00 + j11 * e01
        t11 = j10 * e01 + j11 * e11
        sp00 = c00 + t00 * j00 + t01 * j01
        sp01 = c01 + t00 * j10 + t01 * j11
        sp11 = c11 + t10 * j10 + t11 * j11
        s0[t], s1[t], v00[t], v11[t] = sa0, sa1, sp00, sp11
    return ssq, slogf, m, (s0, v00, s1, v11)


def _fit(y: list[float], h: list[float]) -> tuple[float, float, float]:
    """Grid maximum likelihood with r concentrated out: (level ratio, slope ratio, r)."""
    best: tuple[float, float, float, float] | None = None
    for ql in LEVEL_RATIOS:
        for qs in SLOPE_RATIOS:
            ssq, slogf, m, _ = _filter(y, h, ql, qs, smooth=False)
            if m == 0:
                return LEVEL_RATIOS[1], SLOPE_RATIOS[0], 0.25
            r = ssq / m
            loglik = -0.5 * (slogf + m * math.log(max(r, 1e-12)))
            if best is None or loglik > best[0]:
                best = (loglik, ql, qs, r)
    assert best is not None
    return best[1], best[2], best[3]


def local_linear_trend(
    weight_kg: FloatArray,
    *,
    robust: bool = True,
    level_ratio: float | None = None,
    slope_ratio: float | None = None,
) -> TrendFit:
    """Smoothed trend weight and slope from daily weigh-ins (local linear trend).

    Parameters
    ----------
    weight_kg : numpy.ndarray
        Daily weights on a complete calendar grid, NaN on days without a weigh-in. [kg]
    robust : bool, default True
        Run a second pass in which weigh-ins with a standardized residual beyond
        ``ROBUST_C`` get their observation variance inflated by (|z|/c)^2.
    level_ratio, slope_ratio : float, optional
        Fix the level / slope disturbance variances relative to the observation
        variance instead of choosing them by maximum likelihood. [unitless]

    Returns
    -------
    TrendFit
        Smoothed level and slope with their variances, the robust weights, and
        the estimated observation noise SD. [kg, kg/day]

    Raises
    ------
    ValueError
        If fewer than 2 weigh-ins are present.

    Notes
    -----
    Model [1]_: y_t = mu_t + eps_t, mu_{t+1} = mu_t + beta_t + eta_t,
    beta_{t+1} = beta_t + zeta_t with Var eps = r / w_t, Var eta = q_l,
    Var zeta = q_s.  Missing days skip the measurement update.  The ratios
    q_l/r and q_s/r are chosen from ``LEVEL_RATIOS`` x ``SLOPE_RATIOS`` by the
    likelihood with r concentrated out (r = mean of v^2/F); the first two
    weigh-ins initialise the diffuse states and are left out of the likelihood.
    The robust second pass uses the smoothed residuals standardized by their
    median absolute deviation (x 1.4826), keeps the ratios and re-estimates r.

    References
    ----------
    .. [1] Durbin J, Koopman SJ. Time Series Analysis by State Space Methods,
       2nd ed. Oxford University Press; 2012. (Local linear trend model, ch. 3.)
    .. [2] Harvey AC. Forecasting, Structural Time Series Models and the Kalman
       Filter. Cambridge University Press; 1989.
    """
    w = np.asarray(weight_kg, dtype=np.float64)
    obs = np.isfinite(w)
    n_obs = int(obs.sum())
    if n_obs < 2:
        raise ValueError(f"need at least 2 weigh-ins for a trend, got {n_obs}")
    y = [float(v) if math.isfinite(v) else math.nan for v in w]
    h = [1.0] * len(y)
    fixed = level_ratio is not None and slope_ratio is not None
    if fixed:
        ql, qs = float(level_ratio), float(slope_ratio)  # type: ignore[arg-type]
        ssq, _, m, _ = _filter(y, h, ql, qs, smooth=False)
        r = ssq / m if m else 0.25
    else:
        ql, qs, r = _fit(y, h)
    _, _, _, sm = _filter(y, h, ql, qs, smooth=True)
    assert sm is not None
    weights = np.where(obs, 1.0, np.nan)
    if robust and n_obs >= 7:
        resid = w - np.asarray(sm[0])
        # robust scale (MAD) so that the spikes themselves do not hide in a large SD
        sd = 1.4826 * float(np.median(np.abs(resid[obs])))
        sd = max(sd, 1e-6)
        z = np.abs(resid) / sd
        infl = np.where(obs & (z > ROBUST_C), (z / ROBUST_C) ** 2, 1.0)
        if np.any(infl > 1.0):
            # Keep the ratios of the first pass; re-estimate r with the spikes down-weighted.
            h = [float(v) for v in infl]
            ssq, _, m, sm = _filter(y, h, ql, qs, smooth=True)
            r = ssq / m if m else r
            assert sm is not None
            weights = np.where(obs, 1.0 / infl, np.nan)
    level = np.asarray(sm[0])
    slope = np.asarray(sm[2])
    return TrendFit(
        level_kg=level,
        level_var_kg2=np.maximum(np.asarray(sm[1]), 0.0) * r,
        slope_kg_per_day=slope,
        slope_var=np.maximum(np.asarray(sm[3]), 0.0) * r,
        weights=weights,
        noise_sd_kg=math.sqrt(max(r, 0.0)),
        level_ratio=ql,
        slope_ratio=qs,
        n_obs=n_obs,
    )


def local_level_steady_gain(q_over_r: float) -> float:
    """Steady-state Kalman gain of the local-level model.

    Parameters
    ----------
    q_over_r : float
        Level disturbance variance over observation variance. [unitless]

    Returns
    -------
    float
        K = x/(x + 1) with x = (q + sqrt(q^2 + 4q))/2 the steady predicted variance
        for r = 1. [unitless]

    Notes
    -----
    Derived in the science notes (§7.3): q/r = 1/90 gives K = 0.1, which is
    exponential smoothing with alpha 0.1.
    """
    q = float(q_over_r)
    if not q > 0:
        raise ValueError(f"q_over_r must be positive, got {q_over_r!r}")
    x = (q + math.sqrt(q * q + 4.0 * q)) / 2.0
    return x / (x + 1.0)


def local_level_filter(weight_kg: FloatArray, q_over_r: float) -> FloatArray:
    """Filtered level of the local-level model (r = 1), started at the first weigh-in.

    Parameters
    ----------
    weight_kg : numpy.ndarray
        Daily weights, NaN on missing days. [kg]
    q_over_r : float
        Level disturbance variance over observation variance. [unitless]

    Returns
    -------
    numpy.ndarray
        Filtered level on every day (carried forward over missing days; NaN before
        the first weigh-in). [kg]

    Notes
    -----
    Started in its steady state (predicted variance x of
    :func:`local_level_steady_gain`) so that on complete data it equals an EMA
    with alpha = K from the first day.
    """
    q = float(q_over_r)
    x = (q + math.sqrt(q * q + 4.0 * q)) / 2.0
    out = np.full(len(weight_kg), np.nan)
    level = math.nan
    p = x
    for t, v in enumerate(np.asarray(weight_kg, dtype=float)):
        if math.isfinite(v):
            if math.isnan(level):
                level = v
                p = x - q  # so that tomorrow's predicted variance is the steady x
            else:
                k = p / (p + 1.0)
                level += k * (v - level)
                p = p * (1.0 - k)
            p += q  # predict for tomorrow
        elif not math.isnan(level):
            p += q
        out[t] = level
    return out


def ema(weight_kg: FloatArray, alpha: float = 0.1, missing: str = "carry") -> FloatArray:
    """Exponentially smoothed trend weight.

    Parameters
    ----------
    weight_kg : numpy.ndarray
        Daily weights, NaN on missing days. [kg]
    alpha : float, default 0.1
        Smoothing constant per day, 0 < alpha <= 1. [1/day]
    missing : {"carry", "catch-up"}, default "carry"
        "carry": on a day without a weigh-in the trend is carried forward unchanged
        and the next weigh-in gets the ordinary alpha.  "catch-up": the next
        weigh-in after a gap of g days gets alpha_eff = 1 - (1 - alpha)^(g + 1), as
        if it had been seen on each missing day too.

    Returns
    -------
    numpy.ndarray
        T_t = T_{t-1} + alpha (w_t - T_{t-1}), started at the first weigh-in;
        NaN before it. [kg]

    Notes
    -----
    Common practice in weight self-monitoring, no single source.  Step half-life
    ln 0.5 / ln(1 - alpha) = 6.58 days and lag (1 - alpha)/alpha = 9 days of slope
    on a straight line for alpha 0.1 (science notes §7.3, computed there).
    """
    if not 0.0 < alpha <= 1.0:
        raise ValueError(f"alpha must be in (0, 1], got {alpha!r}")
    if missing not in ("carry", "catch-up"):
        raise ValueError(f"missing must be 'carry' or 'catch-up', got {missing!r}")
    out = np.full(len(weight_kg), np.nan)
    level = math.nan
    gap = 0
    for t, v in enumerate(np.asarray(weight_kg, dtype=float)):
        if math.isfinite(v):
            if math.isnan(level):
                level = v
            else:
                a = alpha if missing == "carry" else 1.0 - (1.0 - alpha) ** (gap + 1)
                level += a * (v - level)
            gap = 0
        elif not math.isnan(level):
            gap += 1
        out[t] = level
    return out


def ema_series(dates: DateArray, weight_kg: FloatArray, alpha: float = 0.1) -> TrendSeries:
    """EMA as a :class:`~reportgen.results.TrendSeries` (bands and slope SD are NaN).

    The slope is the 7-day difference of the EMA divided by 7 (science notes §7.3).
    """
    level = ema(weight_kg, alpha)
    slope = np.full(len(level), np.nan)
    if len(level) > 7:
        slope[7:] = (level[7:] - level[:-7]) / 7.0
    nan = np.full(len(level), np.nan)
    resid = np.asarray(weight_kg, dtype=float) - level
    finite = resid[np.isfinite(resid)]
    noise = float(np.std(finite, ddof=1)) if finite.size > 2 else math.nan
    return TrendSeries(
        method="ema",
        dates=dates,
        level_kg=level,
        level_low_kg=nan,
        level_high_kg=nan.copy(),
        slope_kg_per_day=slope,
        slope_sd_kg_per_day=nan.copy(),
        noise_sd_kg=noise,
    )


@dataclass(frozen=True)
class WindowRate:
    """Weighted least-squares rate of weight change over a window."""

    rate_kg_per_day: float
    se_kg_per_day: float  # allows for AR(1) residual autocorrelation
    se_iid_kg_per_day: float  # the textbook independent-noise SE
    ar1_phi: float
    resid_sd_kg: float
    n_obs: int
    days: int
    # fast glycogen-and-water shift completed inside the window (segment_rate only)
    shift_kg: float = 0.0
    shift_se_kg: float = 0.0
    rate_shift_cov: float = 0.0


@dataclass(frozen=True)
class NoiseModel:
    """Weigh-in noise about the trend: AR(1) water swings plus white noise."""

    ar_var_kg2: float  # marginal variance of the AR(1) part
    phi: float  # its day-to-day autocorrelation
    white_var_kg2: float  # variance of the independent part (scale, spikes left over)
    n_obs: int

    @property
    def sd_kg(self) -> float:
        return math.sqrt(self.ar_var_kg2 + self.white_var_kg2)


NOISE_PHI_GRID = tuple(float(x) for x in np.linspace(0.0, 0.95, 20))
NOISE_MAX_LAG = 10


def _design(t: FloatArray, wt: FloatArray) -> tuple[FloatArray, FloatArray]:
    """X = [1, t - mean] and B = W X (X'WX)^-1, so that the WLS hat matrix is X B'."""
    x = np.column_stack([np.ones_like(t), t - t.mean()])
    g = np.linalg.inv(x.T @ (x * wt[:, None]))
    return x, (x * wt[:, None]) @ g


def fit_noise_model(
    weight_kg: FloatArray,
    windows: list[tuple[int, int]],
    weights: FloatArray | None = None,
    max_lag: int = NOISE_MAX_LAG,
) -> NoiseModel | None:
    """Fit the AR(1)-plus-white noise model to residuals about straight lines.

    Parameters
    ----------
    weight_kg : numpy.ndarray
        Daily weights on the calendar grid, NaN on missing days. [kg]
    windows : list of (int, int)
        Index ranges (inclusive) within which the trend is taken as a straight line
        (the phase windows); residual moments are pooled over them.
    weights : numpy.ndarray, optional
        Robust precision weights (spikes down-weighted).
    max_lag : int
        Largest calendar lag whose autocovariance is matched. [day]

    Returns
    -------
    NoiseModel or None
        None when the windows hold fewer than 10 weigh-ins in all.

    Notes
    -----
    Method of moments with the exact expectation of the residual
    autocovariances: residuals e = M y of a weighted least-squares line have
    E[e e'] = M Sigma M' with Sigma = A R(phi) + s2 W^-1 and R_ij = phi^|t_i - t_j|.
    Matching the pooled sums of e_i e_j over pairs at lags 0..10 days gives A and
    s2 by non-negative least squares for each phi on a grid, and the phi with the
    smallest misfit is kept.  Using the expectation (rather than the raw sample
    autocorrelation) removes the downward bias that fitting the line puts into
    short-window autocorrelations.
    """
    w = np.asarray(weight_kg, dtype=float)
    phis = np.asarray(NOISE_PHI_GRID)
    k_n = max_lag + 1
    emp = np.zeros(k_n)
    cnt = np.zeros(k_n)
    white = np.zeros(k_n)
    ar = np.zeros((phis.size, k_n))
    n_total = 0
    for i0, i1 in windows:
        seg = w[i0 : i1 + 1]
        obs = np.isfinite(seg)
        if weights is not None:
            obs &= np.isfinite(weights[i0 : i1 + 1])
        n = int(obs.sum())
        if n < 6:
            continue
        n_total += n
        pos = np.nonzero(obs)[0]
        t = pos.astype(float)
        y = seg[obs]
        wt = np.ones(n) if weights is None else np.asarray(weights[i0 : i1 + 1])[obs]
        x, b = _design(t, wt)
        e = y - x @ (b.T @ y)
        # all pairs (i, j) with t_j - t_i = k, k = 0..max_lag, as flat index arrays
        lookup = np.full(len(seg) + k_n, -1)
        lookup[pos] = np.arange(n)
        ii_l, jj_l, kk_l = [], [], []
        for k in range(k_n):
            jj = lookup[pos + k]
            ok = jj >= 0
            ii_l.append(np.nonzero(ok)[0])
            jj_l.append(jj[ok])
            kk_l.append(np.full(int(ok.sum()), k))
        ii = np.concatenate(ii_l)
        jj = np.concatenate(jj_l)
        kk = np.concatenate(kk_l)
        emp += np.bincount(kk, weights=e[ii] * e[jj], minlength=k_n)
        cnt += np.bincount(kk, minlength=k_n)
        xi, xj = x[ii], x[jj]
        # white part: E[e e'] = M W^-1 M' = W^-1 - X B'W^-1 - W^-1 B X' + X B'W^-1 B X'
        db = b / wt[:, None]
        bdb = b.T @ db
        mdm = (
            np.where(ii == jj, 1.0 / wt[ii], 0.0)
            - np.einsum("pk,pk->p", xi, db[jj])
            - np.einsum("pk,pk->p", db[ii], xj)
            + np.einsum("pk,kl,pl->p", xi, bdb, xj)
        )
        white += np.bincount(kk, weights=mdm, minlength=k_n)
        # AR(1) part for every phi: C = R(phi) B by forward and backward recursions on the
        # calendar grid (R_ij = phi^|t_i - t_j|), so no n x n matrix is formed.
        grid_b = np.zeros((len(seg), 2))
        grid_b[pos] = b
        c_all = np.empty((phis.size, n, 2))
        for f_i, phi in enumerate(phis):
            fwd = lfilter([1.0], [1.0, -phi], grid_b, axis=0)
            bwd = lfilter([1.0], [1.0, -phi], grid_b[::-1], axis=0)[::-1]
            c_all[f_i] = (fwd + bwd - grid_b)[pos]
        brb = np.einsum("nk,fnl->fkl", b, c_all)
        r_pairs = phis[:, None] ** kk[None, :]
        mrm = (
            r_pairs
            - np.einsum("pk,fpk->fp", xi, c_all[:, jj])
            - np.einsum("fpk,pk->fp", c_all[:, ii], xj)
            + np.einsum("pk,fkl,pl->fp", xi, brb, xj)
        )
        onehot = np.zeros((kk.size, k_n))
        onehot[np.arange(kk.size), kk] = 1.0
        ar += mrm @ onehot
    if n_total < 10:
        return None
    use = cnt > 0
    sw = np.sqrt(cnt[use])
    target = emp[use] / cnt[use] * sw
    best: tuple[float, float, float, float] | None = None
    for f_i, phi in enumerate(phis):
        design = np.column_stack([ar[f_i, use] / cnt[use], white[use] / cnt[use]]) * sw[:, None]
        coef = _nnls2(design, target)
        sse = float(np.sum((design @ coef - target) ** 2))
        if best is None or sse < best[0]:
            best = (sse, float(phi), float(coef[0]), float(coef[1]))
    assert best is not None
    _, phi, a_var, w_var = best
    if a_var <= 0:
        phi = 0.0
    # keep a little white noise (scale resolution): the GLS needs a positive diagonal
    w_var = max(w_var, 0.01 * (a_var + w_var), 1e-6)
    return NoiseModel(a_var, phi, w_var, n_total)


def _nnls2(a: FloatArray, b: FloatArray) -> FloatArray:
    """Non-negative least squares with two unknowns (closed form over the active sets)."""
    g00 = float(a[:, 0] @ a[:, 0])
    g01 = float(a[:, 0] @ a[:, 1])
    g11 = float(a[:, 1] @ a[:, 1])
    r0 = float(a[:, 0] @ b)
    r1 = float(a[:, 1] @ b)
    det = g00 * g11 - g01 * g01
    if det > 1e-12 * max(g00 * g11, 1e-300):
        x0 = (g11 * r0 - g01 * r1) / det
        x1 = (g00 * r1 - g01 * r0) / det
        if x0 >= 0 and x1 >= 0:
            return np.array([x0, x1])
    best = np.zeros(2)
    best_sse = float(b @ b)
    for j, (g, r) in enumerate(((g00, r0), (g11, r1))):
        if g <= 0:
            continue
        cand = np.zeros(2)
        cand[j] = max(r / g, 0.0)
        sse = float(np.sum((a @ cand - b) ** 2))
        if sse < best_sse:
            best, best_sse = cand, sse
    return best


def window_rate(
    weight_kg: FloatArray,
    weights: FloatArray | None = None,
    *,
    noise: NoiseModel | None = None,
    min_obs: int = 5,
) -> WindowRate | None:
    """Rate of weight change over a window, with an autocorrelation-aware SE.

    Parameters
    ----------
    weight_kg : numpy.ndarray
        Daily weights over the window (index = day), NaN on missing days. [kg]
    weights : numpy.ndarray, optional
        Robust precision weights per day (from :func:`local_linear_trend`). [unitless]
    noise : NoiseModel, optional
        The client's noise model (:func:`fit_noise_model`, pooled over all its
        windows); without it the model is fitted to this window's residuals alone.
    min_obs : int, default 5
        Fewer weigh-ins than this return None.

    Returns
    -------
    WindowRate or None
        Slope [kg/day] with its standard errors.

    Notes
    -----
    The weighted least-squares slope of weight on day.  For a path that is
    quadratic in time it equals the mean rate over the window, i.e. the trend
    change divided by the days.  The textbook SE, sigma sqrt(12/(n(n^2 - 1)))
    for n consecutive days (science notes §4.5), assumes independent noise; real
    residuals carry water swings that persist for days.  The SE here is
    sqrt(c' Sigma c), with c the least-squares weights and Sigma the covariance
    of the AR(1)-plus-white-noise model of :func:`fit_noise_model`.  It is never
    smaller than the textbook SE.
    """
    w = np.asarray(weight_kg, dtype=float)
    obs = np.isfinite(w)
    if weights is not None:
        obs &= np.isfinite(weights)
    n = int(obs.sum())
    if n < min_obs:
        return None
    t = np.nonzero(obs)[0].astype(float)
    y = w[obs]
    wt = np.ones(n) if weights is None else np.asarray(weights, dtype=float)[obs]
    sw = float(wt.sum())
    tbar = float(np.dot(wt, t) / sw)
    ybar = float(np.dot(wt, y) / sw)
    dt_ = t - tbar
    sxx = float(np.dot(wt, dt_ * dt_))
    if sxx <= 0:
        return None
    c = wt * dt_ / sxx
    slope = float(np.dot(c, y))
    resid = y - (ybar + slope * dt_)
    dof = max(n - 2, 1)
    s2 = float(np.dot(wt, resid * resid) / dof)
    se_iid = math.sqrt(s2 * float(np.dot(c * c, 1.0 / wt)))
    if noise is None:
        noise = fit_noise_model(w, [(0, len(w) - 1)], weights)
    if noise is None:
        amp, phi, white = 0.0, 0.0, s2
    else:
        amp, phi, white = noise.ar_var_kg2, noise.phi, noise.white_var_kg2
    lag = np.abs(t[:, None] - t[None, :])
    sigma = amp * phi**lag
    sigma[np.diag_indices(n)] = amp + white / wt
    var = float(c @ sigma @ c)
    se = math.sqrt(max(var, se_iid * se_iid))
    return WindowRate(
        rate_kg_per_day=slope,
        se_kg_per_day=se,
        se_iid_kg_per_day=se_iid,
        ar1_phi=phi,
        resid_sd_kg=math.sqrt(s2),
        n_obs=n,
        days=len(w),
    )


SEGMENT_MARGIN_DAYS = 56  # neighbouring days used on each side (judgment, tuned on the benchmark)
# Glycogen with its water shifts quickly when intake changes: 1-2 kg early in a diet
# (science notes §4.4).  Modelled as a step with a 4-day exponential approach at each
# phase boundary (time constant: judgment, days rather than weeks) whose size has a
# N(0, 1 kg^2) prior (judgment), so a shift is absorbed without being mistaken for tissue.
SHIFT_TAU_DAYS = 4.0
SHIFT_PRIOR_SD_KG = 1.0


def segment_rate(
    weight_kg: FloatArray,
    i0: int,
    i1: int,
    knots: tuple[int, ...] = (),
    weights: FloatArray | None = None,
    noise: NoiseModel | None = None,
    margin_days: int = SEGMENT_MARGIN_DAYS,
    shift_prior_sd_kg: float | None = SHIFT_PRIOR_SD_KG,
    edge_knots: bool = True,
) -> WindowRate | None:
    """Rate over a window from a piecewise-linear GLS fit that spans its edges.

    Parameters
    ----------
    weight_kg : numpy.ndarray
        Daily weights on the whole calendar grid, NaN on missing days. [kg]
    i0, i1 : int
        First and last index of the window (inclusive).
    knots : tuple of int
        Indices where the trend may change slope (phase starts); ``i0`` and
        ``i1 + 1`` are knots too unless ``edge_knots`` is False (a window that is
        not a phase, e.g. the last four weeks).
    weights : numpy.ndarray, optional
        Robust precision weights of the weigh-ins.
    noise : NoiseModel, optional
        AR(1)-plus-white noise of the weigh-ins; None means independent noise with
        the residual variance.
    margin_days : int, default 56
        Days used on each side of the window. [day]
    shift_prior_sd_kg : float or None, default 1.0
        Prior SD of the glycogen-and-water shift at each knot; None fits no shift
        (body mass continuous and piecewise linear). [kg]

    Returns
    -------
    WindowRate or None
        The window segment's tissue slope with its GLS standard error, and the
        shift completed inside the window (``shift_kg``; its SE and covariance with
        the slope).  ``se_iid_kg_per_day`` is the textbook independent-noise SE of
        the window's own least-squares slope.  None with fewer than 5 weigh-ins in
        the window.

    Notes
    -----
    Tissue mass is continuous, so the level at a phase boundary is shared by the
    segments on both sides: the fit is a linear spline in time with knots at the
    phase boundaries, plus at each knot k a glycogen-and-water step
    s_k (1 - exp(-(t - k)/4)) for t >= k, estimated by generalised least squares
    with the noise covariance A phi^|t_i - t_j| + s2/w_i (Aitken's estimator) and
    a N(0, 1 kg^2) prior on each step.  Using the neighbouring weeks pins the
    window's end levels better than the window alone; the knots let the slope
    change, and the steps let the weight drop or rise quickly, where the intake
    changed.
    """
    w = np.asarray(weight_kg, dtype=float)
    lo = max(i0 - margin_days, 0)
    hi = min(i1 + margin_days, len(w) - 1)
    seg = w[lo : hi + 1]
    obs = np.isfinite(seg)
    if weights is not None:
        obs &= np.isfinite(weights[lo : hi + 1])
    inside = obs[i0 - lo : i1 - lo + 1]
    if int(inside.sum()) < 5:
        return None
    t = np.nonzero(obs)[0].astype(float) + lo
    y = seg[obs]
    wt = np.ones(t.size) if weights is None else np.asarray(weights[lo : hi + 1])[obs]
    edges = (i0, i1 + 1) if edge_knots else ()
    kn = sorted({k for k in (*knots, *edges) if t[0] < k <= t[-1]})
    cols = [np.ones_like(t), t - t[0]] + [np.maximum(t - k, 0.0) for k in kn]
    n_lin = len(cols)
    if shift_prior_sd_kg is not None:
        cols += [np.where(t >= k, 1.0 - np.exp(-(t - k) / SHIFT_TAU_DAYS), 0.0) for k in kn]
    x = np.column_stack(cols)

    def row(day: float) -> FloatArray:
        """Design row at a (possibly unobserved) day, for linear functionals of beta."""
        r = [1.0, day - t[0]] + [max(day - k, 0.0) for k in kn]
        if shift_prior_sd_kg is not None:
            r += [1.0 - math.exp(-(day - k) / SHIFT_TAU_DAYS) if day >= k else 0.0 for k in kn]
        return np.asarray(r)

    # Mean tissue rate over the window = (tissue at i1 + 1 - tissue at i0) / days, and
    # the glycogen-and-water shift inside the window; with knots only at the window's
    # edges the first is simply the slope of the window's segment.
    days = float(i1 + 1 - i0)
    diff = row(i1 + 1.0) - row(float(i0))
    sel = np.zeros(x.shape[1])
    sel[:n_lin] = diff[:n_lin] / days
    shift_sel = np.zeros(x.shape[1])
    shift_sel[n_lin:] = diff[n_lin:]
    prior = np.zeros(x.shape[1])
    if shift_prior_sd_kg is not None:
        prior[n_lin:] = 1.0 / shift_prior_sd_kg**2
    if noise is None:
        amp, phi, white = 0.0, 0.0, None
    else:
        amp, phi, white = noise.ar_var_kg2, noise.phi, noise.white_var_kg2
    if white is None or amp + white <= 0:
        # independent noise: WLS with the residual variance (prior scaled to it)
        xw = x * wt[:, None]
        beta = np.linalg.pinv(x.T @ xw) @ (xw.T @ y)
        res = y - x @ beta
        s2 = max(float(np.dot(wt, res * res) / max(t.size - x.shape[1], 1)), 1e-12)
        cov = np.linalg.pinv(x.T @ xw / s2 + np.diag(prior))
        beta = cov @ (xw.T @ y / s2)
    else:
        beta, cov = _gls_ar1_white(t, y, x, amp, phi, white / wt, prior)
    res = y - x @ beta
    slope = float(sel @ beta)
    se = math.sqrt(max(float(sel @ cov @ sel), 0.0))
    tw = t[(t >= i0) & (t <= i1)]
    n_in = tw.size
    resid_sd = float(np.sqrt(np.mean(res * res)))
    sxx = float(np.sum((tw - tw.mean()) ** 2))
    se_iid = resid_sd / math.sqrt(sxx) if sxx > 0 else math.nan
    return WindowRate(
        rate_kg_per_day=slope,
        se_kg_per_day=se,
        se_iid_kg_per_day=se_iid,
        ar1_phi=phi,
        resid_sd_kg=resid_sd,
        n_obs=n_in,
        days=i1 - i0 + 1,
        shift_kg=float(shift_sel @ beta),
        shift_se_kg=math.sqrt(max(float(shift_sel @ cov @ shift_sel), 0.0)),
        rate_shift_cov=float(sel @ cov @ shift_sel),
    )


def _gls_ar1_white(
    t: FloatArray,
    y: FloatArray,
    x: FloatArray,
    amp: float,
    phi: float,
    dvar: FloatArray,
    prior_precision: FloatArray | None = None,
) -> tuple[FloatArray, FloatArray]:
    """GLS with Sigma = amp R(phi) + diag(dvar), R_ij = phi^|t_i - t_j|, in O(n).

    ``prior_precision`` adds a zero-mean Gaussian prior on the coefficients
    (a diagonal precision; 0 = flat).

    The AR(1) process sampled at (possibly irregular) times is Markov, so R^-1 is
    tridiagonal; by the Woodbury identity Sigma^-1 = D^-1 - D^-1 (R^-1/amp + D^-1)^-1
    D^-1 with a banded inner solve.  Returns (beta, Var beta).
    """
    dinv = 1.0 / dvar
    dx = x * dinv[:, None]
    dy = y * dinv
    if amp > 0 and phi > 0:
        a = phi ** np.diff(t)
        a = np.minimum(a, 1.0 - 1e-12)
        q = 1.0 / (1.0 - a * a)
        diag = np.ones(t.size)
        diag[:-1] += a * a * q
        diag[1:] += q - 1.0
        off = -a * q
        banded = np.zeros((2, t.size))
        banded[0, 1:] = off / amp  # upper diagonal, solveh_banded's upper form
        banded[1] = diag / amp + dinv
        rhs = np.column_stack([dx, dy])
        sol = solveh_banded(banded, rhs)
        six = dx - dinv[:, None] * sol[:, :-1]
        siy = dy - dinv * sol[:, -1]
    elif amp > 0:  # phi = 0: the AR part is white too
        dtot = 1.0 / (dvar + amp)
        six = x * dtot[:, None]
        siy = y * dtot
    else:
        six, siy = dx, dy
    info = x.T @ six
    if prior_precision is not None:
        info = info + np.diag(prior_precision)
    cov = np.linalg.pinv(info)
    beta = cov @ (x.T @ siy)
    return beta, cov
