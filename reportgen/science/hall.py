"""Hall et al. 2011 adult body-weight dynamics model with adaptive thermogenesis.

The two-compartment (fat, lean) form of the model, without the glycogen and
extracellular-water compartments (Hall et al. 2011; Chow & Hall 2008).  Used for
the forward projection of a client's weight at the current intake, for the
intake needed for a chosen weekly rate, and by the benchmark simulator as the
ground truth.

Equations (day time step, forward Euler)::

    dF/dt = (1 - p) (EI - EE) / rhoF          dL/dt = p (EI - EE) / rhoL
    p = C' / (C' + F),  C' = 10.4 rhoL / rhoF  (about 2.0 kg)
    EE = K + gF F + gL L + delta BW + TEF + AT + etaF dF/dt + etaL dL/dt
    TEF = betaTEF (EI - EI0),   tauAT dAT/dt = betaAT (EI - EI0) - AT
    delta = ((1 - betaTEF) PAL - 1) RMR0 / BW0,   K such that EE = EI0 at baseline

EE contains dF/dt and dL/dt, so it is solved algebraically each day.  Every
function broadcasts over numpy arrays (an ensemble of states).

References
----------
.. [1] Hall KD, Sacks G, Chandramohan D, et al. Quantification of the effect of
   energy imbalance on bodyweight. Lancet 2011;378:826-37.
   doi:10.1016/S0140-6736(11)60812-X
.. [2] Chow CC, Hall KD. The dynamics of human body weight change. PLoS Comput
   Biol 2008;4:e1000045. doi:10.1371/journal.pcbi.1000045
.. [3] Hall KD. What is the required energy deficit per unit weight loss?
   Int J Obes 2008;32:573-6. doi:10.1038/sj.ijo.0803720
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from reportgen.io.model import FloatArray
from reportgen.science.composition import (
    FORBES_C_KG,
    RHO_FAT_KCAL_PER_KG,
    RHO_LEAN_KCAL_PER_KG,
)


@dataclass(frozen=True)
class HallParams:
    """Model parameters of Hall et al. 2011 (the source kind is given beside each)."""

    rho_fat_kcal_per_kg: float = RHO_FAT_KCAL_PER_KG  # published 39.5 MJ/kg (Hall 2008)
    rho_lean_kcal_per_kg: float = RHO_LEAN_KCAL_PER_KG  # from memory (unverified)
    gamma_fat_kcal_per_kg_day: float = 3.2  # from memory; matches third-party model code
    gamma_lean_kcal_per_kg_day: float = 22.0  # from memory; matches third-party model code
    eta_fat_kcal_per_kg: float = 180.0  # from memory; matches third-party model code
    eta_lean_kcal_per_kg: float = 230.0  # from memory; matches third-party model code
    beta_tef: float = 0.10  # from memory (unverified)
    beta_at: float = 0.14  # from memory (unverified)
    tau_at_days: float = 14.0  # from memory (unverified)
    forbes_c_kg: float = FORBES_C_KG  # from memory (unverified)

    @property
    def energy_partition_c_kg(self) -> float:
        """C' = C rhoL / rhoF, the energy-partition constant (about 2.0 kg)."""
        return self.forbes_c_kg * self.rho_lean_kcal_per_kg / self.rho_fat_kcal_per_kg


HALL_2011 = HallParams()


@dataclass(frozen=True)
class HallBaseline:
    """A calibrated client: baseline intake EI0, the constant K and activity delta."""

    intake0_kcal: float | FloatArray
    k_kcal: float | FloatArray
    delta_kcal_per_kg_day: float | FloatArray
    params: HallParams = HALL_2011


def hall_baseline(
    weight_kg: float,
    fat_mass_kg: float,
    resting_kcal: float,
    pal: float,
    params: HallParams = HALL_2011,
) -> HallBaseline:
    """Calibrate the model to a weight-stable adult.

    Parameters
    ----------
    weight_kg : float
        Baseline body weight BW0. [kg]
    fat_mass_kg : float
        Baseline fat mass F0. [kg]
    resting_kcal : float
        Baseline resting expenditure RMR0 (e.g. Mifflin-St Jeor). [kcal/day]
    pal : float
        Physical activity level, TDEE/RMR. [unitless]
    params : HallParams

    Returns
    -------
    HallBaseline
        EI0 = PAL RMR0 [kcal/day], K [kcal/day] and delta [kcal/kg/day].

    Notes
    -----
    Hall et al. 2011: delta = ((1 - betaTEF) PAL - 1) RMR0 / BW0 and K makes
    EE = EI0 at baseline (TEF = AT = 0, no tissue change).  Check value
    (computed there): 100 kg, F0 35 kg, RMR0 1899, PAL 1.6 gives EI0 3038,
    delta 8.35 and K 661.
    """
    if not (weight_kg > fat_mass_kg > 0):
        raise ValueError(f"need weight_kg > fat_mass_kg > 0, got {weight_kg!r} and {fat_mass_kg!r}")
    ei0 = pal * resting_kcal
    delta = ((1.0 - params.beta_tef) * pal - 1.0) * resting_kcal / weight_kg
    lean = weight_kg - fat_mass_kg
    k = ei0 - (
        params.gamma_fat_kcal_per_kg_day * fat_mass_kg
        + params.gamma_lean_kcal_per_kg_day * lean
        + delta * weight_kg
    )
    return HallBaseline(ei0, k, delta, params)


def expenditure_kcal(
    fat_kg: FloatArray | float,
    lean_kg: FloatArray | float,
    intake_kcal: FloatArray | float,
    at_kcal: FloatArray | float,
    base: HallBaseline,
    offset_kcal: FloatArray | float = 0.0,
) -> FloatArray:
    """Total expenditure EE of the model for a state and the day's intake.

    Parameters
    ----------
    fat_kg, lean_kg : array_like
        Fat and lean mass. [kg]
    intake_kcal : array_like
        Energy intake EI that day. [kcal/day]
    at_kcal : array_like
        Adaptive-thermogenesis state AT. [kcal/day]
    base : HallBaseline
    offset_kcal : array_like, default 0
        Extra expenditure (e.g. a change in activity) added to K. [kcal/day]

    Returns
    -------
    numpy.ndarray
        EE, solved algebraically for the dF/dt and dL/dt terms (Hall et al. 2011). [kcal/day]
    """
    pr = base.params
    f = np.asarray(fat_kg, dtype=float)
    lean = np.asarray(lean_kg, dtype=float)
    ei = np.asarray(intake_kcal, dtype=float)
    p = pr.energy_partition_c_kg / (pr.energy_partition_c_kg + f)
    a = (pr.eta_fat_kcal_per_kg / pr.rho_fat_kcal_per_kg) * (1.0 - p) + (
        pr.eta_lean_kcal_per_kg / pr.rho_lean_kcal_per_kg
    ) * p
    tef = pr.beta_tef * (ei - base.intake0_kcal)
    num = (
        base.k_kcal
        + offset_kcal
        + pr.gamma_fat_kcal_per_kg_day * f
        + pr.gamma_lean_kcal_per_kg_day * lean
        + base.delta_kcal_per_kg_day * (f + lean)
        + tef
        + at_kcal
        + ei * a
    )
    return np.asarray(num / (1.0 + a))


@dataclass(frozen=True)
class HallPath:
    """Daily states of a forward simulation; index 0 is the start."""

    fat_kg: FloatArray  # shape (days + 1, ...)
    lean_kg: FloatArray
    at_kcal: FloatArray
    expenditure_kcal: FloatArray  # shape (days, ...): EE on each simulated day

    @property
    def weight_kg(self) -> FloatArray:
        return self.fat_kg + self.lean_kg


def simulate_hall(
    fat_kg: FloatArray | float,
    lean_kg: FloatArray | float,
    intake_kcal: FloatArray,
    base: HallBaseline,
    at_kcal: FloatArray | float = 0.0,
    offset_kcal: FloatArray | None = None,
    dt_days: float = 1.0,
) -> HallPath:
    """Forward simulation of the Hall 2011 model, forward Euler steps of ``dt_days``.

    Parameters
    ----------
    fat_kg, lean_kg : array_like
        Starting fat and lean mass (scalars or an ensemble of shape (m,)). [kg]
    intake_kcal : numpy.ndarray
        Intake on each day, shape (days,) or (days, m). [kcal/day]
    base : HallBaseline
        Calibration (EI0, K, delta), scalar or per ensemble member.
    at_kcal : array_like, default 0
        Starting adaptive-thermogenesis state. [kcal/day]
    offset_kcal : numpy.ndarray, optional
        Extra expenditure per day, shape like ``intake_kcal``. [kcal/day]
    dt_days : float, default 1
        Length of each step (one row of ``intake_kcal``).  Steps longer than a day
        are for smooth paths at constant intake (projections); keep dt < 2 tauAT
        for a stable AT update. [day]

    Returns
    -------
    HallPath
        Fat, lean and AT on days 0..n and expenditure on days 0..n-1.

    Notes
    -----
    Check values computed with these equations (100 kg man, F0 35 kg, PAL 1.6,
    -500 kcal/day) were computed with the same scheme: -12.69 kg at 1 year,
    half of the eventual change in about 307 days.
    """
    pr = base.params
    ei = np.asarray(intake_kcal, dtype=float)
    n = ei.shape[0]
    f = np.asarray(fat_kg, dtype=float) * np.ones(ei.shape[1:])
    lean = np.asarray(lean_kg, dtype=float) * np.ones(ei.shape[1:])
    at = np.asarray(at_kcal, dtype=float) * np.ones(ei.shape[1:])
    out_f = np.empty((n + 1, *f.shape))
    out_l = np.empty_like(out_f)
    out_at = np.empty_like(out_f)
    out_ee = np.empty((n, *f.shape))
    out_f[0], out_l[0], out_at[0] = f, lean, at
    cp = pr.energy_partition_c_kg
    for t in range(n):
        off = 0.0 if offset_kcal is None else offset_kcal[t]
        ee = expenditure_kcal(f, lean, ei[t], at, base, off)
        p = cp / (cp + f)
        imbalance = ei[t] - ee
        f = f + dt_days * (1.0 - p) * imbalance / pr.rho_fat_kcal_per_kg
        lean = lean + dt_days * p * imbalance / pr.rho_lean_kcal_per_kg
        at = at + dt_days * (pr.beta_at * (ei[t] - base.intake0_kcal) - at) / pr.tau_at_days
        out_f[t + 1], out_l[t + 1], out_at[t + 1], out_ee[t] = f, lean, at, ee
    return HallPath(out_f, out_l, out_at, out_ee)


def steady_state_change_kg(
    delta_intake_kcal: float,
    fat_mass_kg: float,
    delta_kcal_per_kg_day: float,
    params: HallParams = HALL_2011,
) -> float:
    """Eventual weight change for a sustained intake change (linearised steady state).

    Parameters
    ----------
    delta_intake_kcal : float
        Sustained change in intake from baseline. [kcal/day]
    fat_mass_kg : float
        Baseline fat mass, sets the lean share f = 10.4/(10.4 + F). [kg]
    delta_kcal_per_kg_day : float
        Physical-activity coefficient delta of the calibrated client. [kcal/kg/day]
    params : HallParams

    Returns
    -------
    float
        dBW = dEI (1 - betaTEF - betaAT) / (gF (1 - f) + gL f + delta). [kg]

    Notes
    -----
    Derived from the Hall et al. 2011 model at steady state (dF/dt =
    dL/dt = 0, AT = betaAT dEI).  For F = 35 kg and delta 8.35 it gives
    20.9 kcal/day per kg, the same as the simulation (computed there); Hall et al.
    2011 [1]_ publish "about 24 kcal/day (100 kJ/day) per kg".
    """
    f = params.forbes_c_kg / (params.forbes_c_kg + fat_mass_kg)
    slope = (
        params.gamma_fat_kcal_per_kg_day * (1.0 - f)
        + params.gamma_lean_kcal_per_kg_day * f
        + delta_kcal_per_kg_day
    )
    return delta_intake_kcal * (1.0 - params.beta_tef - params.beta_at) / slope


def time_constant_days(
    fat_mass_kg: float, delta_kcal_per_kg_day: float, params: HallParams = HALL_2011
) -> float:
    """Linearised time constant of the Hall et al. 2011 model, about 496 days for F 35 kg.

    tau = (rhoF (1 - f) + rhoL f + etaF (1 - f) + etaL f) / (gF (1 - f) + gL f + delta) [day].
    """
    f = params.forbes_c_kg / (params.forbes_c_kg + fat_mass_kg)
    num = (params.rho_fat_kcal_per_kg + params.eta_fat_kcal_per_kg) * (1.0 - f) + (
        params.rho_lean_kcal_per_kg + params.eta_lean_kcal_per_kg
    ) * f
    den = (
        params.gamma_fat_kcal_per_kg_day * (1.0 - f)
        + params.gamma_lean_kcal_per_kg_day * f
        + delta_kcal_per_kg_day
    )
    return num / den


ENSEMBLE_STEP_DAYS = 7  # step of the uncertainty ensemble [day]
GOAL_STEP_DAYS = 14  # step of the long goal search (AT is constant at constant intake) [day]


@dataclass(frozen=True)
class ProjectionRun:
    """Result of :func:`project_weight` (day 0 = the start state)."""

    weight_kg: FloatArray  # central path, days 0..horizon
    low_kg: FloatArray  # 10th percentile of the ensemble
    high_kg: FloatArray  # 90th percentile
    goal_day: int | None  # first day the central path reaches the goal, None if never
    intake_for_rate_kcal: dict[float, tuple[float, float, float]]  # rate -> (value, low, high)


def project_weight(
    weight_kg: float,
    fat_mass_kg: float,
    tdee_kcal: float,
    intake_kcal: float,
    maintenance_kcal: float,
    resting_kcal: float,
    *,
    horizon_days: int = 84,
    goal_weight_kg: float | None = None,
    goal_horizon_days: int = 730,
    rates_pct_per_week: tuple[float, ...] = (),
    weight_sd_kg: float = 0.0,
    fat_sd_kg: float = 0.0,
    tdee_sd_kcal: float = 0.0,
    n_draws: int = 200,
    seed: int = 20111,
    params: HallParams = HALL_2011,
) -> ProjectionRun:
    """Project weight forward at a constant intake from today's estimated state.

    Parameters
    ----------
    weight_kg : float
        Today's trend weight. [kg]
    fat_mass_kg : float
        Today's fat mass (latest skinfold result or the fallback estimate). [kg]
    tdee_kcal : float
        Today's estimated total expenditure (observed). [kcal/day]
    intake_kcal : float
        Intake held constant over the projection. [kcal/day]
    maintenance_kcal : float
        Expected expenditure without adaptation, used as the model's EI0. [kcal/day]
    resting_kcal : float
        Resting expenditure at today's weight (sets the activity coefficient). [kcal/day]
    horizon_days : int, default 84
        Length of the returned path. [day]
    goal_weight_kg : float, optional
        Goal; the first day the central path reaches it is returned. [kg]
    goal_horizon_days : int, default 730
        How far to look for the goal before answering "not at this intake". [day]
    rates_pct_per_week : tuple of float
        Weekly loss rates (% of body weight, positive = loss) for which the intake
        is solved. [%/week]
    weight_sd_kg, fat_sd_kg, tdee_sd_kcal : float
        Standard errors of today's state, propagated by an ensemble of
        ``n_draws`` draws (seeded, so the result is reproducible).

    Returns
    -------
    ProjectionRun

    Notes
    -----
    The model constant K of each draw is set so that EE today equals the drawn
    TDEE, with TEF and AT at their steady values betaTEF/betaAT (EI - EI0) for
    the current intake.  From then on the model (Hall et al. 2011 [1]_) lets
    expenditure fall with fat, lean and body weight.  The intake for a rate is
    solved so that the mean rate over the next 28 days matches it (the model is
    close to linear in intake over that range, so two runs and an interpolation
    suffice).
    """
    rng = np.random.default_rng(seed)
    m = n_draws + 1  # member 0 is the central path
    z = rng.standard_normal((3, m))
    z[:, 0] = 0.0
    bw = weight_kg + weight_sd_kg * z[0]
    fat = np.clip(fat_mass_kg + fat_sd_kg * z[1], 0.03 * bw, 0.7 * bw)
    tdee = tdee_kcal + tdee_sd_kcal * z[2]
    lean = bw - fat
    pal = maintenance_kcal / resting_kcal
    delta = ((1.0 - params.beta_tef) * pal - 1.0) * resting_kcal / bw
    d_ei = intake_kcal - maintenance_kcal
    at0 = params.beta_at * d_ei
    base0 = HallBaseline(maintenance_kcal, 0.0, delta, params)
    ee_k0 = expenditure_kcal(fat, lean, intake_kcal, at0, base0)
    p = params.energy_partition_c_kg / (params.energy_partition_c_kg + fat)
    a = (params.eta_fat_kcal_per_kg / params.rho_fat_kcal_per_kg) * (1.0 - p) + (
        params.eta_lean_kcal_per_kg / params.rho_lean_kcal_per_kg
    ) * p
    k = (tdee - ee_k0) * (1.0 + a)  # EE is linear in K with slope 1/(1 + a)
    base = HallBaseline(maintenance_kcal, k, delta, params)
    # Weekly Euler steps, interpolated to days: at a constant intake, with AT already at
    # its steady value, the path is smooth (time constant about a year), and weekly steps
    # stay within a few grams of daily ones over 12 weeks.
    weeks = -(-horizon_days // ENSEMBLE_STEP_DAYS)
    ens = simulate_hall(
        fat, lean, np.full((weeks, m), intake_kcal), base, at0, dt_days=ENSEMBLE_STEP_DAYS
    )
    grid = np.arange(weeks + 1) * ENSEMBLE_STEP_DAYS
    days = np.arange(horizon_days + 1)
    wk = ens.weight_kg
    central = np.interp(days, grid, wk[:, 0])
    low = high = central
    if m > 1:
        q_lo, q_hi = np.quantile(wk[:, 1:], [0.10, 0.90], axis=1)
        low = np.interp(days, grid, q_lo)
        high = np.interp(days, grid, q_hi)
    goal_day: int | None = None
    if goal_weight_kg is not None:
        loss = goal_weight_kg <= weight_kg
        c = wk[:, 0]
        day_of = list(grid.astype(float))
        steps = -(-max(goal_horizon_days - weeks * ENSEMBLE_STEP_DAYS, 0) // GOAL_STEP_DAYS)
        if steps > 0:
            base_c = HallBaseline(maintenance_kcal, float(k[0]), float(delta[0]), params)
            far = simulate_hall(
                ens.fat_kg[-1, 0],
                ens.lean_kg[-1, 0],
                np.full(steps, intake_kcal),
                base_c,
                ens.at_kcal[-1, 0],
                dt_days=GOAL_STEP_DAYS,
            ).weight_kg
            c = np.concatenate([c, far[1:]])
            day_of += [grid[-1] + GOAL_STEP_DAYS * (i + 1) for i in range(steps)]
        hit = c <= goal_weight_kg if loss else c >= goal_weight_kg
        idx = np.nonzero(hit)[0]
        if idx.size:
            j = int(idx[0])
            if j == 0:
                goal_day = 0
            else:  # crossing between steps j - 1 and j: interpolate the day
                w0, w1 = c[j - 1], c[j]
                frac = (goal_weight_kg - w0) / (w1 - w0) if w1 != w0 else 1.0
                goal_day = math.ceil(day_of[j - 1] + frac * (day_of[j] - day_of[j - 1]))
        if goal_day is not None and goal_day > goal_horizon_days:
            goal_day = None
    rates: dict[float, tuple[float, float, float]] = {}
    if rates_pct_per_week:
        horizon = 28
        step = 2.0  # two-day steps: AT (tau 14 days) still follows a change of intake
        test_intake = intake_kcal - 500.0
        slopes = []
        for ei in (intake_kcal, test_intake):
            pth = simulate_hall(
                fat, lean, np.full((int(horizon / step), m), ei), base, at0, dt_days=step
            )
            slopes.append((pth.weight_kg[-1] - pth.weight_kg[0]) / horizon)
        s0, s1 = slopes
        per_kcal = (s0 - s1) / 500.0  # kg/day per kcal/day of intake
        for r in rates_pct_per_week:
            target = -r / 100.0 * bw / 7.0
            need = intake_kcal + (target - s0) / per_kcal
            lo, hi = np.quantile(need[1:], [0.10, 0.90]) if m > 1 else (need[0], need[0])
            rates[float(r)] = (float(need[0]), float(lo), float(hi))
    return ProjectionRun(central, low, high, goal_day, rates)


def days_to_fraction(path_weight_kg: FloatArray, fraction: float) -> int | None:
    """First day on which a path has covered ``fraction`` of its final change."""
    w = np.asarray(path_weight_kg, dtype=float)
    total = w[-1] - w[0]
    if total == 0 or not math.isfinite(total):
        return None
    done = (w - w[0]) / total
    idx = np.nonzero(done >= fraction)[0]
    return int(idx[0]) if idx.size else None
