"""Energy balance: stored energy, realised deficit, observed TDEE and a daily expenditure path.

Observed TDEE over a window = mean logged intake + realised deficit, where the
realised deficit is the energy drawn from body stores per day.  The energy per
kg of the weight change comes from Hall 2008's tissue energy densities and
Forbes' fat/lean partition (``reportgen.science.composition``), with the
client's fat mass from the latest skinfold result or the BMI-based
fallback.

The 80 % interval combines, as independent parts:

* the rate's standard error from :func:`reportgen.science.rates.window_rate`,
  which allows for autocorrelated water swings (AR(1) plus white noise);
* the sampling SE of the mean intake over the logged days (missing days);
* the energy-density bracket: the density at fat mass F +/- its standard error.

Logging bias is systematic and is deliberately left out of the interval; the
report states it in words (if intake is under-logged by 20 %, TDEE is lower by
0.2 x intake).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from reportgen.io.model import FloatArray
from reportgen.results import Estimate
from reportgen.science.composition import (
    RHO_FAT_KCAL_PER_KG,
    RHO_LEAN_KCAL_PER_KG,
    energy_density_kcal_per_kg,
    partition_weight_change_hall,
)
from reportgen.science.energy_density import (
    GLYCOGEN_WATER_KCAL_PER_KG,
    LEAN_SHARE_LOG_SD,
    energy_density_with_spread,
)
from reportgen.science.kalman import InitialState, TwoStateModel, kalman_smoother
from reportgen.science.rates import (
    SHIFT_PRIOR_SD_KG,
    SHIFT_TAU_DAYS,
    NoiseModel,
    WindowRate,
    window_rate,
)
from reportgen.science.trend import Z80

MIN_DAYS = 14  # no expenditure from fewer days (common practice: glycogen and water)
MIN_WEIGH_INS = 8  # judgment: fewer weigh-ins than this cannot pin a rate
MIN_INTAKE_DAYS = 7  # judgment: a mean intake from fewer logged days is not used
KCAL_PER_KG_SPREADSHEET = 7700.0  # the constant a spreadsheet typically uses (common practice)
FALLBACK_RHO_HALF_RANGE = 600.0  # judgment: bracket of 7700 when the fat mass is unknown


def stored_energy_kcal(fat_change_kg: float, lean_change_kg: float) -> float:
    """Energy stored in (positive) or drawn from (negative) body tissue.

    Parameters
    ----------
    fat_change_kg, lean_change_kg : float
        Change in fat and lean (fat-free) mass. [kg]

    Returns
    -------
    float
        rhoF dF + rhoL dL with rhoF 9440 and rhoL 1816 kcal/kg. [kcal]

    Notes
    -----
    Tissue energy densities of Hall 2008 [1]_ (fat 39.5 MJ/kg, published; lean
    7.6 MJ/kg, from memory), as rounded by Hall et al. 2011.

    References
    ----------
    .. [1] Hall KD. What is the required energy deficit per unit weight loss?
       Int J Obes 2008;32:573-6. doi:10.1038/sj.ijo.0803720
    """
    return RHO_FAT_KCAL_PER_KG * fat_change_kg + RHO_LEAN_KCAL_PER_KG * lean_change_kg


def observed_tdee_kcal(
    mean_intake_kcal: float,
    weight_change_kg: float,
    days: float,
    energy_density_kcal_per_kg_: float,
) -> float:
    """Observed TDEE = mean intake - rho dW / days (energy balance; Hall 2008 for rho).

    Parameters
    ----------
    mean_intake_kcal : float
        Mean logged intake over the window. [kcal/day]
    weight_change_kg : float
        Trend weight change over the window (negative = loss). [kg]
    days : float
        Length of the window. [day]
    energy_density_kcal_per_kg_ : float
        Energy per kg of the change. [kcal/kg]

    Returns
    -------
    float
        [kcal/day].  Check value (computed here): 2000 kcal/day,
        -1.0 kg in 14 days, 7700 kcal/kg gives 2550.
    """
    return mean_intake_kcal - energy_density_kcal_per_kg_ * weight_change_kg / days


def rate_se_iid_kg_per_day(noise_sd_kg: float, n_days: int) -> float:
    """Least-squares slope SE for n consecutive daily weights with independent noise.

    sigma sqrt(12 / (n (n^2 - 1))) [kg/day] (the standard
    regression result).  Check value (computed here): n 14, sigma 0.5, times
    7700 kcal/kg gives 255 kcal/day.
    """
    if n_days < 2:
        raise ValueError(f"need at least 2 days, got {n_days!r}")
    return noise_sd_kg * math.sqrt(12.0 / (n_days * (n_days * n_days - 1.0)))


def fat_mass_at(fat_ref_kg: float, weight_ref_kg: float, weight_kg: float) -> float:
    """Fat mass at another weight, moving along Hall's Forbes curve from a reference.

    Parameters
    ----------
    fat_ref_kg : float
        Fat mass at the reference (e.g. the latest skinfold session). [kg]
    weight_ref_kg : float
        Trend weight at the reference. [kg]
    weight_kg : float
        Weight at which the fat mass is wanted. [kg]

    Returns
    -------
    float
        Fat mass [kg] (``partition_weight_change_hall`` in either direction).
    """
    d_fat, _ = partition_weight_change_hall(fat_ref_kg, weight_kg - weight_ref_kg)
    return fat_ref_kg + d_fat


def intake_mean_se_kcal(logged_kcal: FloatArray, days: int) -> float:
    """Standard error of the mean logged intake as an estimate of the window's mean intake.

    Parameters
    ----------
    logged_kcal : numpy.ndarray
        Intake on the logged days only. [kcal/day]
    days : int
        Days in the window (logged or not).

    Returns
    -------
    float
        sqrt(s_true^2 (1 - n/N) / n + (c m)^2 / n) [kcal/day]: the sampling error of
        the unlogged days (finite-population correction) plus random day-to-day
        logging error of c = 10 % of the mean m (judgment), with
        s_true^2 = max(s^2 - (c m)^2, 0) the spread of the true intakes.
    """
    x = np.asarray(logged_kcal, dtype=float)
    n = x.size
    m = float(x.mean())
    s2 = float(x.var(ddof=1))
    log_var = (INTAKE_LOG_NOISE_FRACTION * m) ** 2
    s2_true = max(s2 - log_var, 0.0)
    fpc = max(1.0 - n / max(days, n), 0.0)
    return math.sqrt(s2_true * fpc / n + log_var / n)


@dataclass(frozen=True)
class WindowBalance:
    """Energy balance of one window (a phase from its start to its analysed end)."""

    days: int
    weight_days: int
    intake_days: int
    rate: WindowRate | None
    mean_intake_kcal: float | None
    intake_se_kcal: float | None
    fat_start_kg: float | None
    energy_density_kcal_per_kg: float | None
    energy_density_low: float | None
    energy_density_high: float | None
    fat_change_kg: float | None  # from the Forbes partition of the fitted change
    lean_change_kg: float | None
    deficit_kcal: Estimate  # positive = deficit
    tdee_kcal: Estimate
    deficit_se_kcal: float | None = None
    tdee_se_kcal: float | None = None


def window_balance(
    weight_kg: FloatArray,
    intake_kcal: FloatArray,
    fat_start_kg: float | None,
    fat_se_kg: float,
    robust_weights: FloatArray | None = None,
    noise: NoiseModel | None = None,
    rate: WindowRate | None = None,
    lean_share_log_sd: float = LEAN_SHARE_LOG_SD,
    lean_share: tuple[float, float] | None = None,
) -> WindowBalance:
    """Realised deficit and observed TDEE over one window, with 80 % intervals.

    Parameters
    ----------
    weight_kg : numpy.ndarray
        Daily weights over the window, NaN on missing days. [kg]
    intake_kcal : numpy.ndarray
        Daily logged intake over the window, NaN on missing days. [kcal/day]
    fat_start_kg : float or None
        Fat mass at the start of the window; None (unknown) falls back to the
        7700 kcal/kg simplification with a +/- 600 kcal/kg bracket (judgment). [kg]
    fat_se_kg : float
        Its standard error (equation SEE in kg). [kg]
    robust_weights : numpy.ndarray, optional
        Per-day weigh-in weights from the robust trend fit. [unitless]
    noise : NoiseModel, optional
        The client's weigh-in noise model (pooled over its phases); fitted to this
        window alone when not given.
    rate : WindowRate, optional
        A rate already estimated for this window (e.g. by
        :func:`reportgen.science.rates.segment_rate`, which also uses the
        neighbouring weeks); by default the window's own least-squares rate.

    Returns
    -------
    WindowBalance
        Deficit and TDEE are ``Estimate.missing("too-few-days")`` for windows shorter
        than 14 days, "too-few-weigh-ins" with fewer than 8 weigh-ins, and TDEE is
        "too-few-intake-days" with fewer than 7 logged intake days ("no-intake-logged" with none).

    Notes
    -----
    rate = tissue slope (AR(1)-aware SE); dW = rate x days;
    rho = (rhoF dF + rhoL dL)/dW from the Hall/Forbes partition at F (Hall 2008);
    deficit = -(rho rate + rhoG shift/days), where shift is the fitted
    glycogen-and-water shift inside the window (1137 kcal/kg,
    :data:`reportgen.science.energy_density.GLYCOGEN_WATER_KCAL_PER_KG`) when the rate
    comes from :func:`reportgen.science.rates.segment_rate`; TDEE = mean intake +
    deficit.
    Var(deficit) = rho^2 SE(rate)^2 + rate^2 s_rho^2 with s_rho combining half the
    spread of rho over F +/- SE(F) and the between-person spread of the fat/lean
    partition around Forbes' curve (``lean_share_log_sd``, log-SD of the lean share;
    :func:`reportgen.science.energy_density.energy_density_with_spread`; 0 switches
    it off); with ``lean_share`` (share, SD) from the client's serial skinfolds
    (:func:`reportgen.science.energy_density.lean_share_from_skinfolds`) the
    partition is the measured one instead of Forbes' curve;
    Var(TDEE) = Var(deficit) + s_I^2 / n_I.  Intervals are +/- 1.2816 SD (80 %).
    """
    w = np.asarray(weight_kg, dtype=float)
    intake = np.asarray(intake_kcal, dtype=float)
    days = len(w)
    weight_days = int(np.isfinite(w).sum())
    logged = intake[np.isfinite(intake)]
    intake_days = int(logged.size)
    mean_i = float(logged.mean()) if intake_days else None
    se_i = intake_mean_se_kcal(logged, days) if intake_days > 1 else None

    def empty(reason: str) -> WindowBalance:
        return WindowBalance(
            days,
            weight_days,
            intake_days,
            None,
            mean_i,
            se_i,
            fat_start_kg,
            None,
            None,
            None,
            None,
            None,
            Estimate.missing(reason),
            Estimate.missing(reason),
        )

    if days < MIN_DAYS:
        return empty("too-few-days")
    if weight_days < MIN_WEIGH_INS:
        return empty("too-few-weigh-ins")
    if rate is None:
        rate = window_rate(w, robust_weights, noise=noise)
    if rate is None:
        return empty("too-few-weigh-ins")
    change = rate.rate_kg_per_day * days
    d_fat: float | None
    d_lean: float | None
    if fat_start_kg is None:
        rho = KCAL_PER_KG_SPREADSHEET
        rho_lo, rho_hi = rho - FALLBACK_RHO_HALF_RANGE, rho + FALLBACK_RHO_HALF_RANGE
        d_fat = d_lean = None
    else:
        rho = energy_density_kcal_per_kg(fat_start_kg, change)
        f_lo = max(fat_start_kg - fat_se_kg, 0.05 * fat_start_kg + 0.5)
        f_hi = fat_start_kg + fat_se_kg
        r_a = energy_density_kcal_per_kg(f_lo, change)
        r_b = energy_density_kcal_per_kg(f_hi, change)
        rho_lo, rho_hi = min(r_a, r_b), max(r_a, r_b)
        d_fat, d_lean = partition_weight_change_hall(fat_start_kg, change)
    s_rho = (rho_hi - rho_lo) / 2.0
    if lean_share is not None and fat_start_kg is not None:
        # the client's own measured composition change informs the partition (the
        # intake-balance method of CALERIE, Racette et al. 2012)
        p_lean, p_sd = lean_share
        rho = RHO_FAT_KCAL_PER_KG * (1.0 - p_lean) + RHO_LEAN_KCAL_PER_KG * p_lean
        s_rho = math.hypot(s_rho, (RHO_FAT_KCAL_PER_KG - RHO_LEAN_KCAL_PER_KG) * p_sd)
        d_fat, d_lean = (1.0 - p_lean) * change, p_lean * change
    elif fat_start_kg is not None and lean_share_log_sd > 0:
        # people differ around Forbes' curve (training, protein): partition spread
        _, s_part = energy_density_with_spread(fat_start_kg, change, 0.0, lean_share_log_sd)
        s_rho = math.hypot(s_rho, s_part)
    # energy of the glycogen-and-water shift inside the window (0 unless fitted)
    g = GLYCOGEN_WATER_KCAL_PER_KG / days
    deficit = -(rho * rate.rate_kg_per_day + g * rate.shift_kg)
    var_def = (
        (rho * rate.se_kg_per_day) ** 2
        + (g * rate.shift_se_kg) ** 2
        + 2 * rho * g * rate.rate_shift_cov
        + (rate.rate_kg_per_day * s_rho) ** 2
    )
    sd_def = math.sqrt(var_def)
    deficit_est = Estimate(deficit, deficit - Z80 * sd_def, deficit + Z80 * sd_def)
    if mean_i is None or intake_days < MIN_INTAKE_DAYS or se_i is None:
        # a weight-only client (or window) is not short of data: intake is simply not logged
        tdee_est = Estimate.missing(
            "no-intake-logged" if intake_days == 0 else "too-few-intake-days"
        )
        sd_tdee = None
    else:
        tdee = mean_i + deficit
        sd_tdee = math.sqrt(var_def + se_i * se_i)
        tdee_est = Estimate(tdee, tdee - Z80 * sd_tdee, tdee + Z80 * sd_tdee)
    return WindowBalance(
        days=days,
        weight_days=weight_days,
        intake_days=intake_days,
        rate=rate,
        mean_intake_kcal=mean_i,
        intake_se_kcal=se_i,
        fat_start_kg=fat_start_kg,
        energy_density_kcal_per_kg=rho,
        energy_density_low=rho_lo,
        energy_density_high=rho_hi,
        fat_change_kg=d_fat,
        lean_change_kg=d_lean,
        deficit_kcal=deficit_est,
        tdee_kcal=tdee_est,
        deficit_se_kcal=sd_def,
        tdee_se_kcal=sd_tdee,
    )


def spreadsheet_tdee_kcal(weight_kg: FloatArray, intake_kcal: FloatArray) -> tuple[float, float]:
    """The spreadsheet method: (first - last raw weight) x 7700 / days, plus mean intake.

    Returns (deficit, TDEE) [kcal/day]; the comparison method of the benchmark
    (common practice, no single source).  NaN when fewer than two weigh-ins.
    """
    w = np.asarray(weight_kg, dtype=float)
    idx = np.nonzero(np.isfinite(w))[0]
    if idx.size < 2:
        return math.nan, math.nan
    span = float(idx[-1] - idx[0])
    deficit = (w[idx[0]] - w[idx[-1]]) * KCAL_PER_KG_SPREADSHEET / span
    intake = np.asarray(intake_kcal, dtype=float)
    mean_i = float(np.nanmean(intake)) if np.isfinite(intake).any() else math.nan
    return float(deficit), mean_i + float(deficit)


@dataclass(frozen=True)
class ExpenditurePath:
    """Smoothed daily expenditure from the weight-with-intake state-space model."""

    tdee_kcal: FloatArray
    sd_kcal: FloatArray
    weight_kg: FloatArray


# Process noise of the expenditure random walk (judgment: lets expenditure drift by about
# 25 kcal/day per day, 130 kcal/day over 4 weeks) and the relative day-to-day logging noise
# of intake (judgment).
EXPENDITURE_RW_SD_KCAL = 25.0
INTAKE_LOG_NOISE_FRACTION = 0.10
WEIGHT_PROCESS_SD_KG = 0.05


def expenditure_path(
    weight_kg: FloatArray,
    intake_kcal: FloatArray,
    energy_density_kcal_per_kg_: float,
    noise_sd_kg: float,
    robust_weights: FloatArray | None = None,
    rw_sd_kcal: float = EXPENDITURE_RW_SD_KCAL,
    shift_days: tuple[int, ...] = (),
) -> ExpenditurePath:
    """Daily expenditure by Kalman filtering and RTS smoothing of weight with intake as input.

    Parameters
    ----------
    weight_kg : numpy.ndarray
        Daily weights, NaN on missing days. [kg]
    intake_kcal : numpy.ndarray
        Daily logged intake, NaN on missing days. [kcal/day]
    energy_density_kcal_per_kg_ : float
        Energy per kg of weight change (Hall/Forbes at the client's fat mass). [kcal/kg]
    noise_sd_kg : float
        Observation noise SD of a weigh-in (from the trend fit). [kg]
    robust_weights : numpy.ndarray, optional
        Weigh-in precision weights from the robust trend fit.
    rw_sd_kcal : float
        SD of the daily change in expenditure (random walk). [kcal/day]
    shift_days : tuple of int
        Indices where the intake plan changed (phase starts): over the following
        days the weight may shift by glycogen and water, N(0, 1 kg^2) in all, spread
        with a 4-day time constant, without that being read as expenditure.

    Returns
    -------
    ExpenditurePath
        Smoothed expenditure and its SD on every day. [kcal/day]

    Notes
    -----
    State x_t = [W_t, E_t]: W_{t+1} = W_t + (I_t - E_t)/rho + u_t, E_{t+1} = E_t + v_t,
    y_t = W_t + e_t.  Var u = (s_I/rho)^2 + s_W^2 where s_I is the logging noise
    (10 % of intake) on logged days and the SD of the logged intakes on days without
    a log (whose intake is replaced by the mean); Var v = ``rw_sd_kcal``^2.  Every
    day counts, not just the endpoints.  The expenditure inherits any logging bias.
    """
    w = np.asarray(weight_kg, dtype=float)
    intake = np.asarray(intake_kcal, dtype=float)
    n = len(w)
    rho = float(energy_density_kcal_per_kg_)
    logged = intake[np.isfinite(intake)]
    mean_i = float(logged.mean()) if logged.size else 2000.0
    sd_i = float(logged.std()) if logged.size > 1 else 500.0
    r = max(noise_sd_kg, 0.05) ** 2
    wts = np.ones(n) if robust_weights is None else np.nan_to_num(robust_weights, nan=1.0)
    first = np.nonzero(np.isfinite(w))[0]
    u = [0.0] * n
    qw = [0.0] * n
    for t in range(n):
        it = intake[t]
        if it == it:
            u[t] = it / rho
            qw[t] = (INTAKE_LOG_NOISE_FRACTION * it / rho) ** 2 + WEIGHT_PROCESS_SD_KG**2
        else:
            u[t] = mean_i / rho
            qw[t] = (sd_i / rho) ** 2 + WEIGHT_PROCESS_SD_KG**2
    for k in shift_days:
        for d in range(max(k, 0), min(k + 5 * int(SHIFT_TAU_DAYS), n)):
            qw[d] += (
                SHIFT_PRIOR_SD_KG**2
                * (1 - math.exp(-1 / SHIFT_TAU_DAYS))
                * math.exp(-(d - k) / SHIFT_TAU_DAYS)
            )
    # weigh-ins with a zero robust weight are left out; the others have variance r / weight
    weight_list, weight_of = w.tolist(), wts.tolist()
    used = [v if wt > 0 else math.nan for v, wt in zip(weight_list, weight_of, strict=True)]
    obs_var = [r / wt if wt > 0 else math.inf for wt in weight_of]
    # W_{t+1} = W_t - E_t / rho + I_t / rho: coupling -1/rho, input I_t / rho
    model = TwoStateModel(coupling=-(1.0 / rho), inputs=u, first_var=qw, second_var=rw_sd_kcal**2)
    start = InitialState(
        first=float(w[first[0]]) if first.size else 70.0,
        second=mean_i,
        var_first=4.0,
        cov=0.0,
        var_second=1000.0**2,
    )
    states = kalman_smoother(used, obs_var, model, start).smoothed
    assert states is not None
    s_w, s_e, s_v = states.first, states.second, states.second_var
    return ExpenditurePath(
        tdee_kcal=np.asarray(s_e),
        sd_kcal=np.sqrt(np.maximum(np.asarray(s_v), 0.0)),
        weight_kg=np.asarray(s_w),
    )
