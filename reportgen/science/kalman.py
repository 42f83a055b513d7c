"""Kalman filter and Rauch-Tung-Striebel smoother for the two-state models of this package.

Both state-space models here have the same shape: a first state that is observed
(body weight) and a second state that drives it and follows a random walk (the
trend slope, or daily expenditure)::

    y_t       = x0_t + e_t                                  Var e_t = obs_var[t]
    x0_{t+1}  = x0_t + coupling * x1_t + input[t] + u_t     Var u_t = first_var[t]
    x1_{t+1}  = x1_t + v_t                                  Var v_t = second_var

* the local linear trend (:mod:`reportgen.science.trend`): coupling 1, no input;
* weight with intake as input (:func:`reportgen.science.balance.expenditure_path`):
  coupling -1/rho, input intake/rho.

:func:`kalman_smoother` is the one implementation of the filter and smoother
algebra for both (Durbin & Koopman 2012, §4.3 filter, §4.4 state smoothing; the
RTS form of the smoother); :func:`trend_water_smoother` is the same algebra for
the local linear trend with a third, AR(1) state for water swings
(:class:`TrendWaterModel`).  Scalar arithmetic on Python floats: for 2x2 and 3x3
matrices it is faster than numpy.

References
----------
.. [1] Durbin J, Koopman SJ. Time Series Analysis by State Space Methods, 2nd ed.
   Oxford University Press; 2012.
.. [2] Rauch HE, Tung F, Striebel CT. Maximum likelihood estimates of linear dynamic
   systems. AIAA J 1965;3:1445-1450. doi:10.2514/3.3166
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass


@dataclass(frozen=True)
class TwoStateModel:
    """Transition and noise of the two-state model (see the module docstring).

    ``inputs`` and ``first_var`` hold one value per day; the state moves from day t
    to day t+1 with ``inputs[t]`` and ``first_var[t]``.
    """

    coupling: float
    inputs: Sequence[float]
    first_var: Sequence[float]
    second_var: float


@dataclass(frozen=True)
class InitialState:
    """Mean and covariance of the state on the first day, before its observation."""

    first: float
    second: float
    var_first: float
    cov: float
    var_second: float


@dataclass(frozen=True)
class SmoothedStates:
    """Smoothed means and variances of both states on every day."""

    first: list[float]
    first_var: list[float]
    second: list[float]
    second_var: list[float]


@dataclass(frozen=True)
class FilterOutput:
    """Prediction-error terms of the likelihood, and the smoothed states when asked for.

    ``sum_sq`` is the sum of v^2/F and ``sum_log_f`` the sum of log F over the
    observations after the first ``diffuse_observations``; ``terms`` counts them.
    """

    sum_sq: float
    sum_log_f: float
    terms: int
    smoothed: SmoothedStates | None


@dataclass(frozen=True)
class _Filtered:
    """Filtered means and covariances of every day (after its observation)."""

    first: list[float]
    second: list[float]
    var_first: list[float]
    cov: list[float]
    var_second: list[float]


def kalman_smoother(
    y: Sequence[float],
    obs_var: Sequence[float],
    model: TwoStateModel,
    initial: InitialState,
    *,
    smooth: bool = True,
    diffuse_observations: int = 0,
) -> FilterOutput:
    """Kalman filter, and RTS smoother when ``smooth``, of the two-state model.

    Parameters
    ----------
    y : sequence of float
        Observation of the first state on each day; NaN on days without one.
    obs_var : sequence of float
        Observation variance of each day (ignored on days without an observation).
    model : TwoStateModel
        Coupling, inputs and process variances.
    initial : InitialState
        Prior mean and covariance of the state on the first day.
    smooth : bool, default True
        Also run the smoother backwards (otherwise only the likelihood terms).
    diffuse_observations : int, default 0
        Number of first observations that only initialise diffuse states and are
        left out of the likelihood terms.

    Returns
    -------
    FilterOutput
    """
    n = len(y)
    coupling = model.coupling
    inputs, first_var, second_var = model.inputs, model.first_var, model.second_var
    a0, a1 = initial.first, initial.second
    p00, p01, p11 = initial.var_first, initial.cov, initial.var_second
    sum_sq = 0.0
    sum_log_f = 0.0
    terms = 0
    seen = 0
    filtered = _Filtered([0.0] * n, [0.0] * n, [0.0] * n, [0.0] * n, [0.0] * n) if smooth else None
    for t in range(n):
        yt = y[t]
        if yt == yt:  # observed (NaN != NaN)
            f = p00 + obs_var[t]
            v = yt - a0
            k0 = p00 / f
            k1 = p01 / f
            a0 += k0 * v
            a1 += k1 * v
            p11 -= k1 * p01
            p01 -= k0 * p01
            p00 -= k0 * p00
            seen += 1
            if seen > diffuse_observations:
                sum_sq += v * v / f
                sum_log_f += math.log(f)
                terms += 1
        if filtered is not None:
            filtered.first[t] = a0
            filtered.second[t] = a1
            filtered.var_first[t] = p00
            filtered.cov[t] = p01
            filtered.var_second[t] = p11
        # predict: T = [[1, coupling], [0, 1]], Q = diag(first_var[t], second_var)
        a0 = a0 + inputs[t] + coupling * a1
        p00, p01, p11 = (
            p00 + 2.0 * coupling * p01 + coupling * coupling * p11 + first_var[t],
            p01 + coupling * p11,
            p11 + second_var,
        )
    if filtered is None:
        return FilterOutput(sum_sq, sum_log_f, terms, None)
    return FilterOutput(sum_sq, sum_log_f, terms, _rts_smoother(filtered, model))


def _rts_smoother(filtered: _Filtered, model: TwoStateModel) -> SmoothedStates:
    """Rauch-Tung-Striebel smoother, backwards over the filtered states."""
    n = len(filtered.first)
    coupling = model.coupling
    inputs, first_var, second_var = model.inputs, model.first_var, model.second_var
    fa0, fa1 = filtered.first, filtered.second
    f00, f01, f11 = filtered.var_first, filtered.cov, filtered.var_second
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
        q00 = c00 + 2.0 * coupling * c01 + coupling * coupling * c11 + first_var[t]
        q01 = c01 + coupling * c11
        q11 = c11 + second_var
        det = q00 * q11 - q01 * q01
        i00, i01, i11 = q11 / det, -q01 / det, q00 / det
        # J = P T' Pred^-1, with P T' = [[c00 + b c01, c01], [c01 + b c11, c11]]
        m00, m01 = c00 + coupling * c01, c01
        m10, m11 = c01 + coupling * c11, c11
        j00 = m00 * i00 + m01 * i01
        j01 = m00 * i01 + m01 * i11
        j10 = m10 * i00 + m11 * i01
        j11 = m10 * i01 + m11 * i11
        d0 = sa0 - (fa0[t] + inputs[t] + coupling * fa1[t])
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
    return SmoothedStates(s0, v00, s1, v11)


@dataclass(frozen=True)
class TrendWaterModel:
    """Local linear trend plus an AR(1) water state, observed with white noise.

    ::

        y_t      = mu_t + w_t + e_t           Var e_t = obs_var[t]
        mu_{t+1} = mu_t + beta_t + eta_t      Var eta = level_var
        beta_{t+1} = beta_t + zeta_t          Var zeta = slope_var
        w_{t+1}  = phi w_t + xi_t             Var xi = water_var

    The level and slope start diffuse (variances ``diffuse_level`` and
    ``diffuse_slope``); the water starts in its stationary distribution,
    variance water_var / (1 - phi^2).  This is the structural model of
    Harvey (1989, ch. 2) with an autoregressive component, as in statsmodels'
    ``UnobservedComponents(level="local linear trend", autoregressive=1)``.
    """

    level_var: float
    slope_var: float
    phi: float
    water_var: float
    diffuse_level: float = 1e6
    diffuse_slope: float = 1e4


@dataclass(frozen=True)
class TrendWaterStates:
    """Smoothed level, slope and water with their variances on every day."""

    level: list[float]
    level_var: list[float]
    slope: list[float]
    slope_var: list[float]
    water: list[float]
    water_var: list[float]


@dataclass(frozen=True)
class TrendWaterOutput:
    """Likelihood terms (as :class:`FilterOutput`) and, when asked for, the smoothed states."""

    sum_sq: float
    sum_log_f: float
    terms: int
    smoothed: TrendWaterStates | None


def trend_water_smoother(
    y: Sequence[float],
    obs_var: Sequence[float],
    model: TrendWaterModel,
    *,
    smooth: bool = True,
    diffuse_observations: int = 2,
) -> TrendWaterOutput:
    """Kalman filter, and RTS smoother when ``smooth``, of :class:`TrendWaterModel`.

    Parameters
    ----------
    y : sequence of float
        Weigh-in of each day; NaN on days without one. [kg]
    obs_var : sequence of float
        Variance of the white part of each day's weigh-in. [kg^2]
    model : TrendWaterModel
        Disturbance variances and the water's autocorrelation.
    smooth : bool, default True
        Also run the smoother backwards (otherwise only the likelihood terms).
    diffuse_observations : int, default 2
        First observations that only initialise the diffuse level and slope and
        are left out of the likelihood terms.

    Returns
    -------
    TrendWaterOutput

    Notes
    -----
    Same algebra as :func:`kalman_smoother` (Durbin & Koopman 2012, §4.3 and §4.4)
    with three states, Z = [1, 0, 1] and T = [[1, 1, 0], [0, 1, 0], [0, 0, phi]];
    unrolled on Python floats (the 3 x 3 covariance as its six distinct entries).
    """
    n = len(y)
    phi = model.phi
    ql, qs, qw = model.level_var, model.slope_var, model.water_var
    a0 = a1 = a2 = 0.0
    p00, p01, p02 = model.diffuse_level, 0.0, 0.0
    p11, p12 = model.diffuse_slope, 0.0
    p22 = qw / (1.0 - phi * phi)
    sum_sq = 0.0
    sum_log_f = 0.0
    terms = 0
    seen = 0
    keep = smooth
    fa: list[tuple[float, float, float]] = []
    fp: list[tuple[float, float, float, float, float, float]] = []
    for t in range(n):
        yt = y[t]
        if yt == yt:
            m0 = p00 + p02
            m1 = p01 + p12
            m2 = p02 + p22
            f = m0 + m2 + obs_var[t]
            v = yt - a0 - a2
            g = v / f
            a0 += m0 * g
            a1 += m1 * g
            a2 += m2 * g
            i_f = 1.0 / f
            p00 -= m0 * m0 * i_f
            p01 -= m0 * m1 * i_f
            p02 -= m0 * m2 * i_f
            p11 -= m1 * m1 * i_f
            p12 -= m1 * m2 * i_f
            p22 -= m2 * m2 * i_f
            seen += 1
            if seen > diffuse_observations:
                sum_sq += v * g
                sum_log_f += math.log(f)
                terms += 1
        if keep:
            fa.append((a0, a1, a2))
            fp.append((p00, p01, p02, p11, p12, p22))
        a0 += a1
        a2 *= phi
        p00, p01, p02, p11, p12, p22 = (
            p00 + 2.0 * p01 + p11 + ql,
            p01 + p11,
            phi * (p02 + p12),
            p11 + qs,
            phi * p12,
            phi * phi * p22 + qw,
        )
    if not keep:
        return TrendWaterOutput(sum_sq, sum_log_f, terms, None)
    return TrendWaterOutput(sum_sq, sum_log_f, terms, _rts3(fa, fp, model))


def _rts3(
    fa: list[tuple[float, float, float]],
    fp: list[tuple[float, float, float, float, float, float]],
    model: TrendWaterModel,
) -> TrendWaterStates:
    """Rauch-Tung-Striebel smoother of :func:`trend_water_smoother`, backwards."""
    n = len(fa)
    phi = model.phi
    ql, qs, qw = model.level_var, model.slope_var, model.water_var
    lv = [0.0] * n
    lvv = [0.0] * n
    sv = [0.0] * n
    svv = [0.0] * n
    wv = [0.0] * n
    wvv = [0.0] * n
    s0, s1, s2 = fa[n - 1]
    c = fp[n - 1]
    q00, q01, q02, q11, q12, q22 = c
    lv[n - 1], sv[n - 1], wv[n - 1] = s0, s1, s2
    lvv[n - 1], svv[n - 1], wvv[n - 1] = q00, q11, q22
    for t in range(n - 2, -1, -1):
        c00, c01, c02, c11, c12, c22 = fp[t]
        f0, f1, f2 = fa[t]
        # predicted covariance of t+1 given t: T C T' + Q
        n00 = c00 + 2.0 * c01 + c11 + ql
        n01 = c01 + c11
        n02 = phi * (c02 + c12)
        n11 = c11 + qs
        n12 = phi * c12
        n22 = phi * phi * c22 + qw
        # its inverse by cofactors
        k00 = n11 * n22 - n12 * n12
        k01 = n02 * n12 - n01 * n22
        k02 = n01 * n12 - n02 * n11
        det = n00 * k00 + n01 * k01 + n02 * k02
        k11 = (n00 * n22 - n02 * n02) / det
        k12 = (n01 * n02 - n00 * n12) / det
        k22 = (n00 * n11 - n01 * n01) / det
        k00 /= det
        k01 /= det
        k02 /= det
        # M = C T'
        m00, m01, m02 = c00 + c01, c01, phi * c02
        m10, m11, m12 = c01 + c11, c11, phi * c12
        m20, m21, m22 = c02 + c12, c12, phi * c22
        # J = M N^-1
        j00 = m00 * k00 + m01 * k01 + m02 * k02
        j01 = m00 * k01 + m01 * k11 + m02 * k12
        j02 = m00 * k02 + m01 * k12 + m02 * k22
        j10 = m10 * k00 + m11 * k01 + m12 * k02
        j11 = m10 * k01 + m11 * k11 + m12 * k12
        j12 = m10 * k02 + m11 * k12 + m12 * k22
        j20 = m20 * k00 + m21 * k01 + m22 * k02
        j21 = m20 * k01 + m21 * k11 + m22 * k12
        j22 = m20 * k02 + m21 * k12 + m22 * k22
        d0 = s0 - (f0 + f1)
        d1 = s1 - f1
        d2 = s2 - phi * f2
        s0 = f0 + j00 * d0 + j01 * d1 + j02 * d2
        s1 = f1 + j10 * d0 + j11 * d1 + j12 * d2
        s2 = f2 + j20 * d0 + j21 * d1 + j22 * d2
        # P_s = C + J (P_s' - N) J'
        e00, e01, e02 = q00 - n00, q01 - n01, q02 - n02
        e11, e12, e22 = q11 - n11, q12 - n12, q22 - n22
        # rows of J E
        u00 = j00 * e00 + j01 * e01 + j02 * e02
        u01 = j00 * e01 + j01 * e11 + j02 * e12
        u02 = j00 * e02 + j01 * e12 + j02 * e22
        u10 = j10 * e00 + j11 * e01 + j12 * e02
        u11 = j10 * e01 + j11 * e11 + j12 * e12
        u12 = j10 * e02 + j11 * e12 + j12 * e22
        u20 = j20 * e00 + j21 * e01 + j22 * e02
        u21 = j20 * e01 + j21 * e11 + j22 * e12
        u22 = j20 * e02 + j21 * e12 + j22 * e22
        q00 = c00 + u00 * j00 + u01 * j01 + u02 * j02
        q01 = c01 + u00 * j10 + u01 * j11 + u02 * j12
        q02 = c02 + u00 * j20 + u01 * j21 + u02 * j22
        q11 = c11 + u10 * j10 + u11 * j11 + u12 * j12
        q12 = c12 + u10 * j20 + u11 * j21 + u12 * j22
        q22 = c22 + u20 * j20 + u21 * j21 + u22 * j22
        lv[t], sv[t], wv[t] = s0, s1, s2
        lvv[t], svv[t], wvv[t] = q00, q11, q22
    return TrendWaterStates(lv, lvv, sv, svv, wv, wvv)
