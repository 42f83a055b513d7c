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
RTS form of the smoother).  Scalar arithmetic on Python floats: for 2x2 matrices it
is faster than numpy.

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
