"""Plateaus: has progress stalled, why did the deficit shrink, and what could change.

Three pure steps, each over plain numbers:

* :func:`progress_status` - the recent trend rate and its interval against the
  planned rate: ``on-track``, ``slower``, ``stalled``, ``gaining``, or
  ``likely-water`` when a glycogen-and-water shift explains the stall
  (:func:`water_explanation`), or ``too-early`` / ``too-few-data`` with a reason;
* ``plateau_causes.deficit_change_causes`` - the change in realised deficit between the
  phase's first weeks (after its glycogen weeks) and the recent window, split
  into intake drift, the smaller body, activity (steps), a metabolic remainder
  and logging, each in kcal/day with an 80 % interval; the parts add up to the
  change, and what the split cannot place is stated as the leftover;
* :func:`discussion_options` - options to discuss (never prescriptions): the
  intake for the planned rate, extra steps a day to close the gap, and a planned
  break at maintenance after a long and deep deficit, with flag-gated cautions.

Why a plateau happens: as a diet goes on, expenditure falls with the smaller
body and beyond it (less spontaneous movement, adaptive thermogenesis), and
intake tends to creep up as adherence declines; weight plateaus at six to eight
months are mostly explained by declining adherence rather than by adaptation
alone (Thomas et al. 2014 [3]_).  Weight from water and glycogen can hide fat
loss for one to two weeks after an intake change (glycogen is stored with its
water: Hall et al. 2011's model uses 2.7 g per g, the literature 3-4 g/g), so a
flat scale after high-intake days is named as such rather than as a stall.

Sign convention: every part is its effect on the realised deficit in kcal/day;
negative means it closed the deficit.

References
----------
.. [1] Hall KD, Sacks G, Chandramohan D, et al. Quantification of the effect of
   energy imbalance on bodyweight. Lancet 2011;378:826-37.
   doi:10.1016/S0140-6736(11)60812-X
.. [2] Hall KD, Chow CC. Estimating changes in free-living energy intake and its
   confidence interval. Am J Clin Nutr 2011;94:66-74 (from memory).
.. [3] Thomas DM, Martin CK, Redman LM, et al. Effect of dietary adherence on the
   body weight plateau: a mathematical model incorporating intermittent
   compliance with energy intake prescription. Am J Clin Nutr
   2014;100:787-95 (from memory).
.. [4] Byrne NM, Sainsbury A, King NA, Hills AP, Wood RE. Intermittent energy
   restriction improves weight loss efficiency in obese men: the MATADOR study.
   Int J Obes 2018;42:129-38 (from memory).
.. [5] Lichtman SW, Pisarska K, Berman ER, et al. Discrepancy between
   self-reported and actual caloric intake and exercise in obese subjects.
   N Engl J Med 1992;327:1893-8 (from memory).
.. [6] Leibel RL, Rosenbaum M, Hirsch J. Changes in energy expenditure resulting
   from altered body weight. N Engl J Med 1995;332:621-8.
.. [7] Bravata DM, Smith-Spangler C, Sundaram V, et al. Using pedometers to increase
   physical activity and improve health: a systematic review. JAMA
   2007;298:2296-304 (from memory: pedometer users added about 2,500 steps a day
   over controls in the randomised trials).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from reportgen.io.model import FloatArray
from reportgen.results import Estimate, PlateauOption
from reportgen.science.diet_break import BREAK_WEEKS, diet_break_due
from reportgen.science.flags import (
    BMI_UNDERWEIGHT,
    INTAKE_FLOOR_MEN_KCAL,
    INTAKE_FLOOR_WOMEN_KCAL,
)
from reportgen.science.rates import NoiseModel, WindowRate, segment_rate
from reportgen.science.trend import Z80

PROGRESS_STATUSES: tuple[str, ...] = (
    "on-track",  # the rate reaches at least ON_TRACK_SHARE of the planned rate
    "slower",  # losing, but clearly slower than planned
    "stalled",  # the rate's interval includes zero and excludes the planned rate
    "gaining",  # the rate's interval lies above zero
    "likely-water",  # would read stalled/slower/gaining, but water and glycogen explain it
    "too-early",  # the deficit phase is younger than MIN_PHASE_DAYS
    "too-few-data",  # see ProgressStatus.reason
    "not-in-deficit",  # the phase is not a deficit: no planned loss to compare with
)
SHORTFALL: tuple[str, ...] = ("stalled", "slower", "gaining")
STATUS_REASONS: tuple[str, ...] = (
    "phase-under-3-weeks",
    "recent-window-under-3-weeks",
    "too-few-weigh-ins",
    "no-rate",
    "no-planned-rate",
    "interval-too-wide",  # the interval holds both zero and the planned rate
)
WATER_REASONS: tuple[str, ...] = (
    "high-intake-days",  # high logged intake in the last days of the window
    "break-before",  # a diet break or maintenance phase ended shortly before or inside it
    "intake-rise-inside",  # intake stepped up inside the window
)

# The recent window: the last four weeks, at least three (the "last 3-4 weeks").
RECENT_WINDOW_DAYS = 28
MIN_RECENT_DAYS = 21
# Sequential rule: when the last four weeks hold both no change and the plan, the rate
# over the last six, then eight weeks decides, if those weeks lie after the deficit's
# glycogen weeks and the longer rate agrees with the four-week one (judgment: a stall that
# has lasted longer is measured over its whole span; more weigh-ins, narrower interval).
LONGER_WINDOWS_DAYS = (42, 56)
MIN_RECENT_WEIGH_INS = 10  # judgment: fewer cannot pin a three-week rate
# The first two weeks after an intake change are dominated by glycogen and water (common
# practice, no single source): the comparison window starts after them, and a phase
# needs a week of data beyond them for a status.
GLYCOGEN_WEEKS_DAYS = 14
MIN_PHASE_DAYS = GLYCOGEN_WEEKS_DAYS + 7
EARLY_WINDOW_DAYS = 28  # the phase's "first weeks": days 15-42 of the deficit
# A rate at three quarters of the planned one or faster is on track (common practice, no
# single source: coaches accept a week-to-week shortfall of about a quarter).
ON_TRACK_SHARE = 0.75
# The status is a yes/no call on the rate, so it uses wider intervals than the report's
# 80 % (judgment: an 80 % interval would leave one truly flat client in five outside
# "stalled" by chance alone): whether the rate is distinguishable from zero is judged on
# its 95 % interval, whether it reaches the plan on its 90 % interval.
# "Gaining" means a gain that matters: the 95 % interval lies above +0.1 % of body weight a
# week (about 0.4 kg a month at 90 kg, inside the glycogen-and-water swing of a change in
# intake).  A smaller rise is reported as no change (judgment, no single source: a flat
# scale drifting up by a few hundred grams as glycogen refills is a stall, not a gain).
GAIN_MARGIN_PCT_PER_WEEK = 0.1
ZERO_Z = 1.959963984540054  # scipy.stats.norm.ppf(0.975)
STATUS_Z = 1.6448536269514722  # scipy.stats.norm.ppf(0.95)

# Water and glycogen: glycogen 17.6 MJ/kg (Hall 2008) is stored with 2.7-4 g of water per g
# (from memory), so a day 1000 kcal above plan, mostly carbohydrate, can add about
# 1 kg for several days.  Thresholds are judgment / common practice, no single source.
HIGH_DAY_LOOKBACK_DAYS = 7  # "just before": the window's last week
HIGH_DAY_MARGIN_KCAL = 600.0  # a day this far above the window's median is a high day
HIGH_DAYS_MIN_EXCESS_KCAL = 1000.0  # total excess over those days that can move the scale
BREAK_WATER_DAYS = GLYCOGEN_WEEKS_DAYS  # glycogen refilled in a break leaves within 2 weeks
INTAKE_RISE_KCAL = 300.0  # a step up in mean intake inside the window (second vs first half)
MIN_HALF_LOGGED_DAYS = 5

# Options.  When a break at maintenance is offered: science.diet_break, the one rule the
# report's narrative uses too (evidence from Byrne et al. 2018 [4]_, judgment marked there).
STEPS_ROUND = 100
# The most extra steps a day an option asks for: about the increase that pedometer
# trials achieved on average (about 2,500 steps/day over controls, Bravata et al. 2007
# [7]_, from memory), rounded up to 3,000 (judgment).  A larger gap is shown as what
# 3,000 steps would close, with "steps alone cannot close it".
STEPS_OPTION_MAX = 3000
RECHECK_DAYS = (7, 14)


@dataclass(frozen=True)
class ProgressStatus:
    """Progress over the recent window against the planned rate."""

    status: str  # one of PROGRESS_STATUSES
    reason: str | None = None  # one of STATUS_REASONS for too-early / too-few-data
    rate_pct_per_week: Estimate = field(default_factory=lambda: Estimate.missing("no-rate"))
    planned_pct_per_week: float | None = None
    underlying: str | None = None  # the status before the water explanation
    water_reasons: tuple[str, ...] = ()
    window_days: int | None = None  # calendar days the rate spans (None: no rate)


RECENT_MARGIN_DAYS = 28  # weeks before the recent window that pin its starting level


def recent_window_rate(
    weight_kg: FloatArray,
    i0: int,
    i1: int,
    robust_weights: FloatArray | None,
    noise: NoiseModel | None,
    margin_days: int = RECENT_MARGIN_DAYS,
) -> WindowRate | None:
    """Rate of weight change over a recent window, continuous with the weeks before it.

    Parameters
    ----------
    weight_kg : numpy.ndarray
        Daily weights on the calendar grid, NaN on missing days; the series must
        end where the fit should stop seeing data (cut it before high-intake days
        to measure the rate before them). [kg]
    i0, i1 : int
        First and last index of the window (inclusive).
    robust_weights : numpy.ndarray or None
        Weigh-in precision weights from the robust trend fit.
    noise : NoiseModel or None
        AR(1)-plus-white weigh-in noise (:func:`noise_pieces` for where to fit it).
    margin_days : int, default 28
        Days before the window in the fit. [day]

    Returns
    -------
    WindowRate or None
        ``rates.segment_rate`` with a knot at ``i0`` and no glycogen step there.

    Notes
    -----
    A linear spline with one knot at the window's start, fitted by generalised
    least squares over the window and the ``margin_days`` before it: the window
    has its own slope, and its starting level is pinned by the weeks before
    (tissue mass is continuous).  One slope over the whole phase would average
    the recent weeks with the earlier ones, which is exactly what a plateau
    breaks.  Keep the margin inside the phase's weeks after its glycogen weeks.
    """
    return segment_rate(
        weight_kg,
        i0,
        i1,
        (i0,),
        robust_weights,
        noise,
        margin_days=margin_days,
        shift_prior_sd_kg=None,
        edge_knots=False,
    )


def noise_pieces(i0: int, i1: int, length_days: int = RECENT_WINDOW_DAYS) -> list[tuple[int, int]]:
    """Consecutive pieces of a span over which the trend is taken as a straight line.

    The weigh-in noise model (``rates.fit_noise_model``) is fitted to residuals
    about straight lines; over a whole phase that stalls the trend is not
    straight and its curvature would pass for water swings (widening every
    interval).  Pieces of ``length_days`` (the last one at least half as long)
    from ``i0`` to ``i1`` inclusive.
    """
    out = []
    for a in range(i0, i1 + 1, length_days):
        b = min(a + length_days - 1, i1)
        if b - a + 1 >= length_days // 2:
            out.append((a, b))
    return out


def planned_rate_pct_per_week(
    expected_tdee_kcal: float,
    target_kcal: float,
    energy_density_kcal_per_kg: float,
    weight_kg: float,
) -> float:
    """Weekly rate a planned intake implies from today's expected expenditure.

    Parameters
    ----------
    expected_tdee_kcal : float
        Expenditure expected today without adaptation (the client's baseline scaled
        to today's body, ``expected.expected_tdee_from_baseline``). [kcal/day]
    target_kcal : float
        The phase's planned intake. [kcal/day]
    energy_density_kcal_per_kg : float
        Energy per kg of weight change (Hall 2008 at today's fat mass). [kcal/kg]
    weight_kg : float
        Today's trend weight. [kg]

    Returns
    -------
    float
        Planned rate, negative for a loss. [% of body weight/week]

    Notes
    -----
    rate = -(E - I) x 7 / rho / W x 100.  Check value (hand-calculated): E 2500,
    I 2000, rho 7700, W 80 kg gives -0.568 %/week.  The plan's own adaptation is
    not subtracted, so a client on plan runs a little slower than this (Hall et al.
    2011 [1]_: about 0.14 of the cut), which ``ON_TRACK_SHARE`` leaves room for.
    """
    if energy_density_kcal_per_kg <= 0 or weight_kg <= 0:
        raise ValueError(
            "need positive energy density and weight, got "
            f"{energy_density_kcal_per_kg!r} and {weight_kg!r}"
        )
    return -(expected_tdee_kcal - target_kcal) * 7.0 / energy_density_kcal_per_kg / weight_kg * 100


def first_high_day(
    intake_kcal: FloatArray, high_day_margin_kcal: float = HIGH_DAY_MARGIN_KCAL
) -> int | None:
    """Index of the first high-intake day in the window's last week, if they count.

    Parameters
    ----------
    intake_kcal : numpy.ndarray
        Logged intake over the window, oldest first, NaN on unlogged days. [kcal/day]
    high_day_margin_kcal : float, default 600
        A day at least this far above the window's median is a high day. [kcal/day]

    Returns
    -------
    int or None
        Index into ``intake_kcal`` of the first high day among the last 7 days,
        when the high days' excess over the median totals at least 1000 kcal
        (judgment / common practice, see :func:`water_explanation`); else None.
        None with fewer than 5 logged days.
    """
    x = np.asarray(intake_kcal, dtype=float)
    logged = x[np.isfinite(x)]
    if logged.size < MIN_HALF_LOGGED_DAYS:
        return None
    med = float(np.median(logged))
    start = max(len(x) - HIGH_DAY_LOOKBACK_DAYS, 0)
    tail = x[start:]
    high = np.isfinite(tail) & (tail >= med + high_day_margin_kcal)
    if not high.any() or float(np.sum(tail[high] - med)) < HIGH_DAYS_MIN_EXCESS_KCAL:
        return None
    return start + int(np.argmax(high))


def water_explanation(
    intake_kcal: FloatArray,
    *,
    days_since_break_end: int | None = None,
    high_day_margin_kcal: float = HIGH_DAY_MARGIN_KCAL,
) -> tuple[str, ...]:
    """Reasons a glycogen-and-water shift may hide fat loss at the end of a window.

    Parameters
    ----------
    intake_kcal : numpy.ndarray
        Logged intake over the recent window, oldest first, NaN on unlogged days.
        [kcal/day]
    days_since_break_end : int or None
        Days from the end of the latest diet break or maintenance phase to the end
        of the window (0 = it ended on the last day); None when there was none. [day]
    high_day_margin_kcal : float, default 600
        A day at least this far above the window's median intake is a high day.
        [kcal/day]

    Returns
    -------
    tuple of str
        Codes from ``WATER_REASONS``, empty when none applies.

    Notes
    -----
    Glycogen is stored with 2.7-4 g of water per g (Hall et al. 2011 [1]_ use 2.7;
    3-4 g/g elsewhere; from memory), so
    refilling it after high-carbohydrate days or a break adds 1-2 kg that leaves
    over one to two weeks.  Rules (judgment / common practice, no single source):

    * ``high-intake-days``: in the last 7 days, days at least 600 kcal above the
      window's median whose excess over the median totals 1000 kcal or more;
    * ``break-before``: a break ended within the last 14 days;
    * ``intake-rise-inside``: the second half's mean logged intake is at least
      300 kcal/day above the first half's (each with at least 5 logged days).
      A fall in intake is not a reason: losing glycogen makes the scale fall
      faster, it cannot hide a loss.
    """
    x = np.asarray(intake_kcal, dtype=float)
    out: list[str] = []
    if first_high_day(x, high_day_margin_kcal) is not None:
        out.append("high-intake-days")
    if days_since_break_end is not None and 0 <= days_since_break_end <= BREAK_WATER_DAYS:
        out.append("break-before")
    half = len(x) // 2
    first, second = x[:half], x[half:]
    first = first[np.isfinite(first)]
    second = second[np.isfinite(second)]
    if (
        first.size >= MIN_HALF_LOGGED_DAYS
        and second.size >= MIN_HALF_LOGGED_DAYS
        and float(second.mean() - first.mean()) >= INTAKE_RISE_KCAL
    ):
        out.append("intake-rise-inside")
    return tuple(out)


def reference_rate(
    planned_pct_per_week: float | None,
    planned_se_pct_per_week: float,
    early_rate: tuple[float, float] | None,
) -> tuple[float | None, float, bool]:
    """The rate a stall is judged against: the plan, sharpened by the phase's early rate.

    Parameters
    ----------
    planned_pct_per_week, planned_se_pct_per_week : float or None, float
        The planned rate (negative = loss) and its standard error (from the
        baseline's). [% of body weight/week]
    early_rate : (float, float) or None
        Rate and SE of the phase's first weeks after its glycogen weeks. [% of body
        weight/week]

    Returns
    -------
    (float or None, float, bool)
        Reference rate, its SE, and whether the early rate was pooled in: the
        inverse-variance weighted mean of the two when they agree (their
        difference within ``ZERO_Z`` of its SE, a homogeneity test at the 5 %
        level), else the plan unchanged.

    Notes
    -----
    Both estimate the rate this phase runs at when its plan is kept: the plan from
    the target and the expected expenditure, the early rate from the scale in
    weeks 3-6.  When they agree, pooling them is the standard fixed-effect
    combination (precision-weighted mean, SE 1/sqrt(sum of precisions)); when
    they do not, the client never ran at the plan and the plan stays the
    reference.  Check value (hand-calculated): plan -0.50 +/- 0.20 and early
    -0.40 +/- 0.10 give -0.42 +/- 0.089.
    """
    plan = (planned_pct_per_week, planned_se_pct_per_week, False)
    if planned_pct_per_week is None or early_rate is None or planned_se_pct_per_week <= 0:
        return plan
    e, e_se = early_rate
    if not (math.isfinite(e) and math.isfinite(e_se) and e_se > 0):
        return plan
    if abs(planned_pct_per_week - e) > ZERO_Z * math.hypot(planned_se_pct_per_week, e_se):
        return plan
    wp = 1.0 / planned_se_pct_per_week**2
    we = 1.0 / e_se**2
    return (wp * planned_pct_per_week + we * e) / (wp + we), 1.0 / math.sqrt(wp + we), True


def _rate_status(
    rate: float, se: float, planned: float, planned_se: float = 0.0
) -> tuple[str, str | None]:
    lo = rate - ZERO_Z * se
    hi = rate + ZERO_Z * se
    if lo > GAIN_MARGIN_PCT_PER_WEEK:
        return "gaining", None
    if hi >= 0:  # the interval includes zero
        if rate - planned > STATUS_Z * math.hypot(se, planned_se):
            return "stalled", None
        return "too-few-data", "interval-too-wide"
    bar = ON_TRACK_SHARE * planned
    if rate - bar <= STATUS_Z * math.hypot(se, ON_TRACK_SHARE * planned_se):
        return "on-track", None
    return "slower", None


def progress_status(
    rate_pct_per_week: float | None,
    rate_se_pct_per_week: float | None,
    planned_pct_per_week: float | None,
    *,
    phase_kind: str = "deficit",
    phase_days: int,
    recent_days: int,
    recent_weigh_ins: int,
    water_reasons: tuple[str, ...] = (),
    rate_before_water: tuple[float, float] | None = None,
    planned_se_pct_per_week: float = 0.0,
    before_water_days: int | None = None,
) -> ProgressStatus:
    """Progress status of a deficit phase over its recent window.

    Parameters
    ----------
    rate_pct_per_week, rate_se_pct_per_week : float or None
        Trend rate over the recent window (negative = loss) and its standard error
        (allowing for autocorrelated water swings, ``rates.segment_rate``).
        [% of body weight/week]
    planned_pct_per_week : float or None
        The planned rate (negative = loss), from ``target_kcal``
        (:func:`planned_rate_pct_per_week`) or else the phase's own earlier rate.
        [% of body weight/week]
    phase_kind : str
        Only "deficit" phases get a status; others are "not-in-deficit".
    phase_days : int
        Days of the phase so far (up to the window end). [day]
    recent_days, recent_weigh_ins : int
        Calendar days and weigh-ins of the recent window.
    water_reasons : tuple of str
        From :func:`water_explanation`.
    rate_before_water : (float, float) or None
        Rate and SE over the window ending before the high-intake days, when that
        is at least two weeks long. [% of body weight/week]
    planned_se_pct_per_week : float, default 0
        Standard error of the planned rate (from the expected expenditure's, which
        a short baseline dominates). [% of body weight/week]
    before_water_days : int or None
        Days spanned by ``rate_before_water``. [day]

    Returns
    -------
    ProgressStatus

    Notes
    -----
    With the 95 % interval [lo, hi] = r -/+ 1.96 s of the rate r for the
    comparison with zero, z = 1.645 (90 %) for the comparison with the planned
    rate p and its SE s_p, and the bar b = 0.75 p (``ON_TRACK_SHARE``, common
    practice, no single source):

    * ``gaining``: lo > 0.1 (``GAIN_MARGIN_PCT_PER_WEEK``, judgment);
    * ``stalled``: lo <= 0 <= hi and r - p > z sqrt(s^2 + s_p^2) (the interval
      includes zero and excludes the planned rate, allowing for the plan's own
      uncertainty);
    * ``too-few-data`` (``interval-too-wide``): hi >= 0 but the planned rate
      cannot be excluded;
    * ``on-track``: hi < 0 and r - b <= z sqrt(s^2 + (0.75 s_p)^2) (three
      quarters of the plan cannot be excluded);
    * ``slower``: hi < 0 and the bar is excluded.

    A ``stalled``, ``slower`` or ``gaining`` reading, or an ``interval-too-wide``
    one, with a water reason becomes ``likely-water`` ("recheck in 1-2 weeks"),
    unless the rate measured before the high-intake days reads stalled, slower or
    gaining: then the shortfall was there before the water, and that reading is
    the status.
    """
    if phase_kind != "deficit":
        return ProgressStatus("not-in-deficit")
    if phase_days < MIN_PHASE_DAYS:
        return ProgressStatus("too-early", "phase-under-3-weeks")
    if recent_days < MIN_RECENT_DAYS:
        return ProgressStatus("too-few-data", "recent-window-under-3-weeks")
    if recent_weigh_ins < MIN_RECENT_WEIGH_INS:
        return ProgressStatus("too-few-data", "too-few-weigh-ins")
    if (
        rate_pct_per_week is None
        or rate_se_pct_per_week is None
        or not math.isfinite(rate_pct_per_week)
        or not math.isfinite(rate_se_pct_per_week)
    ):
        return ProgressStatus("too-few-data", "no-rate")
    half = Z80 * rate_se_pct_per_week
    rate = Estimate(rate_pct_per_week, rate_pct_per_week - half, rate_pct_per_week + half)
    if planned_pct_per_week is None or not planned_pct_per_week < 0:
        return ProgressStatus("too-few-data", "no-planned-rate", rate, window_days=recent_days)
    status, reason = _rate_status(
        rate_pct_per_week, rate_se_pct_per_week, planned_pct_per_week, planned_se_pct_per_week
    )
    if water_reasons and (status in SHORTFALL or reason == "interval-too-wide"):
        if rate_before_water is not None and "high-intake-days" in water_reasons:
            before, _ = _rate_status(
                *rate_before_water, planned_pct_per_week, planned_se_pct_per_week
            )
            if before in SHORTFALL:
                # the shortfall was there before the high days: not water; report that rate
                b, b_se = rate_before_water
                b_rate = Estimate(b, b - Z80 * b_se, b + Z80 * b_se)
                return ProgressStatus(
                    before,
                    None,
                    b_rate,
                    planned_pct_per_week,
                    None,
                    water_reasons,
                    before_water_days,
                )
        return ProgressStatus(
            "likely-water", None, rate, planned_pct_per_week, status, water_reasons, recent_days
        )
    return ProgressStatus(
        status, reason, rate, planned_pct_per_week, None, water_reasons, recent_days
    )


@dataclass(frozen=True)
class PlateauOptions:
    options: tuple[PlateauOption, ...]
    cautions: tuple[str, ...]  # "refer-practitioner", "below-intake-floor", "minor", ...


def intake_floor_kcal(sex: str | None) -> float:
    """Intake floor below which no "eat less" option is offered (flags.py, common practice)."""
    return INTAKE_FLOOR_MEN_KCAL if sex == "male" else INTAKE_FLOOR_WOMEN_KCAL


def steps_to_close_gap(gap_kcal: float, kcal_per_step: float) -> int:
    """Extra steps a day whose energy cost equals a gap in the deficit.

    Parameters
    ----------
    gap_kcal : float
        Planned minus realised deficit (positive = short of plan). [kcal/day]
    kcal_per_step : float
        Net energy cost of one step at the client's weight. [kcal/step]

    Returns
    -------
    int
        gap / cost, rounded up to the next 100 steps; 0 when there is no gap.
        Check value (hand-calculated): 200 kcal/day at 0.028 kcal/step (the
        ACSM walking equation's 28 kcal per 1000 steps of 0.7 m at 80 kg) is 7143,
        shown as 7200.
    """
    if kcal_per_step <= 0:
        raise ValueError(f"kcal_per_step must be positive, got {kcal_per_step!r}")
    if gap_kcal <= 0:
        return 0
    return int(math.ceil(gap_kcal / kcal_per_step / STEPS_ROUND) * STEPS_ROUND)


def discussion_options(
    status: str,
    *,
    gap_kcal: float | None,
    intake_for_planned_rate: Estimate | None,
    recent_intake_kcal: float | None,
    kcal_per_step: float | None,
    days_in_deficit: int | None,
    deficit_depth_pct: float | None,
    sex: str | None,
    minor: bool,
    pregnant: bool,
    bmi_kg_m2: float | None,
) -> PlateauOptions:
    """Options to discuss for a phase's progress status (never prescriptions).

    Parameters
    ----------
    status : str
        From :func:`progress_status`.
    gap_kcal : float or None
        Planned minus recent realised deficit. [kcal/day]
    intake_for_planned_rate : Estimate or None
        Intake for the planned rate from today's estimated state, with its interval
        (``hall.project_weight``'s intake-for-rate). [kcal/day]
    recent_intake_kcal : float or None
        Mean logged intake over the recent window. [kcal/day]
    kcal_per_step : float or None
        Net energy cost of one step at today's weight (None when the client does not
        log steps: then no step option). [kcal/step]
    days_in_deficit : int or None
        Consecutive days in deficit up to now. [day]
    deficit_depth_pct : float or None
        Realised deficit as % of expected maintenance. [%]
    sex, minor, pregnant, bmi_kg_m2
        Gate the options (flags.py thresholds).

    Returns
    -------
    PlateauOptions

    Notes
    -----
    * Minors, pregnancy and BMI below 18.5 (WHO 2000, from memory): no option that
      deepens a deficit; caution "refer-practitioner".
    * ``intake-for-planned-rate`` only for ``stalled`` and ``slower``, and never
      below the intake floor (1200 kcal/day women, 1500 men; common practice,
      flags.py): then the caution "below-intake-floor" instead.
    * ``extra-steps``: the gap over the cost per step (:func:`steps_to_close_gap`),
      at most ``STEPS_OPTION_MAX`` (3,000 a day; Bravata et al. 2007 [7]_ and
      judgment); when more would be needed the option says what 3,000 steps close
      (``closes_kcal``) and carries ``needed_steps`` and ``capped``.  Only when
      ``kcal_per_step`` is given, i.e. when the client logs steps.
    * ``likely-water``: "recheck" in 7-14 days, and no option that changes intake.
    * ``maintenance-break``: whenever ``diet_break.diet_break_due`` says so (at
      least 12 weeks in deficit at a depth of at least 20 % of maintenance, or of
      unknown depth; evidence and judgment in ``reportgen.science.diet_break``),
      whatever the status, so that the report's narrative and this section agree.
    """
    cautions: list[str] = []
    if minor:
        cautions.append("minor")
    if pregnant:
        cautions.append("pregnant")
    if bmi_kg_m2 is not None and bmi_kg_m2 < BMI_UNDERWEIGHT:
        cautions.append("low-bmi")
    if cautions:
        return PlateauOptions((), ("refer-practitioner", *cautions))
    opts: list[PlateauOption] = []
    if status == "likely-water":
        opts.append(
            PlateauOption("recheck", {"days_min": RECHECK_DAYS[0], "days_max": RECHECK_DAYS[1]})
        )
    if status in ("stalled", "slower"):
        ifr = intake_for_planned_rate
        if ifr is not None and ifr.value is not None:
            floor = intake_floor_kcal(sex)
            if ifr.value < floor:
                cautions.append("below-intake-floor")
            else:
                vals = {"intake_kcal": ifr.value, "floor_kcal": floor}
                if ifr.low is not None and ifr.high is not None:
                    vals |= {"low_kcal": ifr.low, "high_kcal": ifr.high}
                if recent_intake_kcal is not None:
                    vals["change_kcal"] = ifr.value - recent_intake_kcal
                opts.append(PlateauOption("intake-for-planned-rate", vals))
        if gap_kcal is not None and gap_kcal > 0 and kcal_per_step is not None:
            needed = steps_to_close_gap(gap_kcal, kcal_per_step)
            steps = min(needed, STEPS_OPTION_MAX)
            vals = {
                "steps": float(steps),
                "gap_kcal": gap_kcal,
                "closes_kcal": min(steps * kcal_per_step, gap_kcal),
                "kcal_per_1000_steps": 1000.0 * kcal_per_step,
            }
            if needed > STEPS_OPTION_MAX:
                vals["needed_steps"] = float(needed)
                vals["capped"] = 1.0
            opts.append(PlateauOption("extra-steps", vals))
    if status != "not-in-deficit" and diet_break_due(days_in_deficit, deficit_depth_pct):
        assert days_in_deficit is not None
        vals = {"weeks": float(BREAK_WEEKS), "days_in_deficit": float(days_in_deficit)}
        if deficit_depth_pct is not None:
            vals["depth_pct"] = deficit_depth_pct
        opts.append(PlateauOption("maintenance-break", vals))
    return PlateauOptions(tuple(opts), tuple(cautions))
