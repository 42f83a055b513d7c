"""Analysis of one client for one report month: record in, :class:`ClientAnalysis` out.

Glue only: every number comes from a pure function in ``reportgen.science``.
The order follows the chain a practitioner would check by hand: trend weight
-> trend change -> stored energy -> observed TDEE -> expected TDEE ->
adaptation, then the signals, the projection and the flags.
"""

from __future__ import annotations

import calendar
import dataclasses
import datetime as dt
import itertools
import math
from dataclasses import dataclass

import numpy as np

from reportgen.config import AnalysisSettings
from reportgen.io.model import ClientRecord, DailyLog, Phase
from reportgen.results import (
    BodyCompResult,
    ClientAnalysis,
    DataQuality,
    Estimate,
    ExpenditureSeries,
    MethodUsed,
    PhaseResult,
    Projection,
    Signal,
    TrendSeries,
)
from reportgen.science import balance as bal
from reportgen.science import expected as exp_
from reportgen.science.composition import energy_density_kcal_per_kg, fat_and_lean_mass_kg
from reportgen.science.flags import FlagInputs, safety_flags
from reportgen.science.hall import project_weight
from reportgen.science.rates import NoiseModel, WindowRate, fit_noise_model, segment_rate
from reportgen.science.resting import RESTING_METHODS, resting_kcal_all
from reportgen.science.signals import summarise_signal
from reportgen.science.skinfolds import estimate_body_fat, estimate_body_fat_from_bmi
from reportgen.science.trend import Z80, TrendFit, ema_series, local_linear_trend

MIN_ANALYSIS_DAYS = bal.MIN_DAYS
# Baseline when there is no maintenance phase: the first 28 days of data (judgment; the
# notes ask for 2-3 weeks at least).  When the data begin with a deficit, its glycogen-and-
# water step is fitted at the start of the data (``_start_shift_index``) instead of being
# read as tissue, the adaptation the window already holds is added back with its own size as
# uncertainty (``expected.early_adaptation_kcal``), and the window is offset
# BASELINE_SKIP_DAYS into that deficit.  Measured on the accuracy benchmark (100 clients
# without a maintenance phase, seed 1): an offset of 0 days gives an adaptation RMSE of
# 82 kcal/day, 7 days 94, 14 days 103 (a later window holds more of the early adaptation,
# and the model's correction for it is uncertain); hence 0.
BASELINE_FIRST_WEEKS_DAYS = 28
BASELINE_SKIP_DAYS = 0
RECENT_DAYS = 28  # window of the current weekly rate and current intake (judgment)
PROJECTION_DAYS = 84  # 12 weeks; the report shows the configured part of it
FLAG_INTAKE_DAYS = 14  # recent window of the intake-floor flag (judgment)
FLAG_RATE_WEEKS = 4  # recent weeks whose trend rates feed the rapid-loss flag
SIGNAL_NAMES = ("steps", "hunger", "energy", "sleep")
GAP_DAYS = 7  # runs longer than this without a weigh-in are listed as gaps
# Short windows (science notes §4.4 and the §8 "short-window" rule): the first week after an
# intake change is mostly glycogen and water, so a phase that starts with one needs
# MIN_ANALYSIS_DAYS (14) usable days after its first EARLY_PHASE_SKIP_DAYS (7) before an
# observed TDEE or an adaptation is given (reason "early-phase"); its realised deficit and
# rate are still shown, with the note "early-phase-water-glycogen".
EARLY_PHASE_SKIP_DAYS = 7
EARLY_PHASE_DAYS = EARLY_PHASE_SKIP_DAYS + MIN_ANALYSIS_DAYS  # 21
# Phase kinds whose start is an intake change when they are the first phase of the data.
INTAKE_CHANGE_KINDS = ("deficit", "surplus")

METHODS: dict[str, MethodUsed] = {
    "local-linear-trend": MethodUsed(
        code="local-linear-trend",
        name="Local linear trend model, Kalman filter and RTS smoother, robust to spikes",
        reference="Durbin J, Koopman SJ. Time Series Analysis by State Space Methods, 2nd ed. "
        "Oxford University Press; 2012.",
        see=None,
    ),
    "ema": MethodUsed(
        code="ema",
        name="Exponential smoothing, alpha 0.1 per day (for comparison)",
        reference="Common practice in weight self-monitoring; no single source.",
    ),
    "hall-2008-energy-density": MethodUsed(
        code="hall-2008-energy-density",
        name="Energy content of weight change: Hall 2008 tissue energy densities with "
        "Forbes' fat/lean partition",
        reference="Hall KD. What is the required energy deficit per unit weight loss? Int J Obes "
        "2008;32:573-576. doi:10.1038/sj.ijo.0803720. Forbes GB. Lean body mass-body fat "
        "interrelationships in humans. Nutr Rev 1987;45:225-231.",
        see="fat 9440 kcal/kg, lean 1816 kcal/kg",
    ),
    "expenditure-state-space": MethodUsed(
        code="expenditure-state-space",
        name="Daily expenditure from a state-space model of weight with intake as input",
        reference="Energy balance W' = W + (intake - expenditure)/rho with expenditure a random "
        "walk; Kalman filter and RTS smoother (Durbin & Koopman 2012).",
    ),
    "hall-2011": MethodUsed(
        code="hall-2011",
        name="Hall et al. 2011 adult weight-dynamics model with adaptive thermogenesis",
        reference="Hall KD, Sacks G, Chandramohan D, et al. Quantification of the effect of "
        "energy imbalance on bodyweight. Lancet 2011;378:826-837. "
        "doi:10.1016/S0140-6736(11)60812-X",
    ),
}


def _month_bounds(month: str) -> tuple[dt.date, dt.date]:
    try:
        year, mon = (int(p) for p in month.split("-"))
        first = dt.date(year, mon, 1)
    except (ValueError, TypeError) as exc:
        raise ValueError(f"month must be YYYY-MM, got {month!r}") from exc
    return first, dt.date(year, mon, calendar.monthrange(year, mon)[1])


def _cut_log(log: DailyLog, as_of: dt.date) -> DailyLog:
    if log.n_days == 0:
        return log
    keep = log.dates <= np.datetime64(as_of, "D")
    if bool(keep.all()):
        return log
    return DailyLog(
        dates=log.dates[keep],
        weight_kg=log.weight_kg[keep],
        weight_outlier=log.weight_outlier[keep],
        intake_kcal=log.intake_kcal[keep],
        steps=log.steps[keep],
        hunger=log.hunger[keep],
        energy=log.energy[keep],
        sleep_h=log.sleep_h[keep],
    )


def _index(log: DailyLog, day: dt.date) -> int:
    return int((np.datetime64(day, "D") - log.dates[0]).astype(int))


def _date(d: np.datetime64) -> dt.date:
    day: dt.date = d.astype("datetime64[D]").item()
    return day


def _est(value: float | None, sd: float | None) -> Estimate:
    if value is None or not math.isfinite(value):
        return Estimate.missing("not-estimable")
    if sd is None or not math.isfinite(sd):
        return Estimate(value)
    return Estimate(value, value - Z80 * sd, value + Z80 * sd)


def _scale(e: Estimate, factor: float) -> Estimate:
    if not e.known:
        return e
    assert e.value is not None
    lo = None if e.low is None else e.low * factor
    hi = None if e.high is None else e.high * factor
    if factor < 0 and lo is not None and hi is not None:
        lo, hi = hi, lo
    return Estimate(e.value * factor, lo, hi, e.level)


@dataclass(frozen=True)
class _Comp:
    """Reference body composition for the energy density (latest result)."""

    fat_kg: float | None
    fat_se_kg: float
    weight_kg: float | None


def _bodycomp(
    record: ClientRecord,
    log: DailyLog,
    fit: TrendFit | None,
    settings: AnalysisSettings,
    as_of: dt.date,
    notes: list[str],
) -> tuple[tuple[BodyCompResult, ...], BodyCompResult | None, list[MethodUsed]]:
    c = record.client
    out: list[BodyCompResult] = []
    methods: dict[str, MethodUsed] = {}

    def trend_at(day: dt.date) -> float | None:
        if fit is None or log.n_days == 0:
            return None
        i = min(max(_index(log, day), 0), log.n_days - 1)
        return float(fit.level_kg[i])

    for s in sorted(record.skinfolds, key=lambda s: s.date):
        if s.date > as_of:
            continue
        age = c.age_years(s.date)
        w = trend_at(s.date)
        if c.sex is None or age is None or w is None:
            notes.append("bodycomp-needs-sex-age-weight")
            continue
        try:
            est = estimate_body_fat(
                c.sex, age, s.sites_mm, settings.bodyfat_equation, settings.density_conversion
            )
        except ValueError:
            notes.append(f"skinfold-session-unusable:{s.date.isoformat()}")
            continue
        fm, lm = fat_and_lean_mass_kg(w, est.bodyfat_pct)
        out.append(
            BodyCompResult(
                date=s.date,
                equation=est.equation,
                conversion=est.conversion,
                sum_mm=est.sum_mm,
                sites=est.sites,
                density_g_ml=est.density_g_ml,
                bodyfat_pct=est.bodyfat_pct,
                bodyfat_se_pct=est.se_pct,
                weight_kg=w,
                fat_mass_kg=fm,
                lean_mass_kg=lm,
                rough=est.rough,
                warnings=est.warnings,
            )
        )
        methods[est.equation] = est.method()
    fallback: BodyCompResult | None = None
    if not out:
        age = c.age_years(as_of)
        w = trend_at(as_of)
        if c.sex is not None and age is not None and w is not None and c.height_cm:
            try:
                est = estimate_body_fat_from_bmi(c.sex, age, w, c.height_cm)
            except ValueError:
                notes.append("bodyfat-fallback-unavailable")
            else:
                fm, lm = fat_and_lean_mass_kg(w, est.bodyfat_pct)
                fallback = BodyCompResult(
                    date=as_of,
                    equation=est.equation,
                    conversion=est.conversion,
                    sum_mm=None,
                    sites=(),
                    density_g_ml=None,
                    bodyfat_pct=est.bodyfat_pct,
                    bodyfat_se_pct=est.se_pct,
                    weight_kg=w,
                    fat_mass_kg=fm,
                    lean_mass_kg=lm,
                    rough=True,
                    warnings=est.warnings,
                )
                methods[est.equation] = est.method()
        else:
            notes.append("bodyfat-unknown")
    return tuple(out), fallback, list(methods.values())


def _comp_reference(bodycomp: tuple[BodyCompResult, ...], fallback: BodyCompResult | None) -> _Comp:
    ref = bodycomp[-1] if bodycomp else fallback
    if ref is None or ref.fat_mass_kg <= 0:
        return _Comp(None, 0.0, None)
    return _Comp(ref.fat_mass_kg, ref.bodyfat_se_pct / 100.0 * ref.weight_kg, ref.weight_kg)


def _fat_at(comp: _Comp, weight_kg: float) -> float | None:
    if comp.fat_kg is None or comp.weight_kg is None:
        return None
    try:
        return bal.fat_mass_at(comp.fat_kg, comp.weight_kg, weight_kg)
    except ValueError:
        return None


@dataclass(frozen=True)
class _Window:
    phase: Phase
    i0: int
    i1: int  # inclusive
    window_end: dt.date
    bal: bal.WindowBalance | None
    mean_weight_kg: float | None
    rate: WindowRate | None = None  # also for special handling (trend only)


def _phase_windows(
    phases: tuple[Phase, ...], log: DailyLog, as_of: dt.date
) -> list[tuple[Phase, int, int, dt.date]]:
    """Every phase started by ``as_of`` with its log indices (i1 < i0: no logged days)."""
    out = []
    for ph in sorted(phases, key=lambda p: p.start):
        if ph.start > as_of:
            continue
        end = as_of if ph.end is None or ph.end > as_of else ph.end
        if log.n_days == 0:
            out.append((ph, 0, -1, end))
            continue
        i0 = min(max(_index(log, ph.start), 0), log.n_days)
        i1 = max(min(_index(log, end), log.n_days - 1), -1)
        if i1 < i0:
            i0, i1 = 0, -1
        out.append((ph, i0, i1, end))
    return out


def _start_shift_index(phases: tuple[Phase, ...], log: DailyLog, as_of: dt.date) -> int | None:
    """Log index where the intake changed at (or just before) the start of the data.

    When the first phase is a deficit or a surplus, the intake changed at its
    start, and glycogen with its water shifts over the following days (science
    notes §4.4; about 1-2 kg early in a diet).  A phase start inside the log is a
    knot anyway; this is the case where the data begin with the change, so there
    is no earlier segment for the step to be a knot of.  None when the first phase
    is maintenance or a break, or there are no phases.
    """
    started = sorted((p for p in phases if p.start <= as_of), key=lambda p: p.start)
    if not started or started[0].kind not in INTAKE_CHANGE_KINDS or log.n_days == 0:
        return None
    return _index(log, started[0].start)


def _days_in_deficit(windows: list[tuple[Phase, int, int, dt.date]], k: int) -> int | None:
    ph, _, _, end = windows[k]
    if ph.kind != "deficit":
        return 0
    start = ph.start
    j = k - 1
    while j >= 0:
        prev, _, _, prev_end = windows[j]
        if prev.kind != "deficit" or (start - prev_end).days > 1:
            break
        start = prev.start
        j -= 1
    return (end - start).days + 1


def _baseline(
    windows: list[_Window],
    log: DailyLog,
    fit: TrendFit,
    comp: _Comp,
    resting_at: object,
    noise: NoiseModel | None,
    knots: tuple[int, ...],
    start_shift: int | None = None,
) -> exp_.Baseline | None:
    """First maintenance phase before any deficit with a TDEE, else the first weeks of data."""
    resting = resting_at  # callable weight -> kcal or None

    def make(
        b: bal.WindowBalance, mean_w: float, source: str, start: dt.date | None = None
    ) -> exp_.Baseline | None:
        if not b.tdee_kcal.known or b.tdee_se_kcal is None or b.mean_intake_kcal is None:
            return None
        r = resting(mean_w)  # type: ignore[operator]
        fat = _fat_at(comp, mean_w)
        if r is None or fat is None:
            return None
        days = max(b.days, 1)
        fr = (b.fat_change_kg or 0.0) / days
        lr = (b.lean_change_kg or 0.0) / days
        assert b.tdee_kcal.value is not None
        tdee, tdee_se = b.tdee_kcal.value, b.tdee_se_kcal
        if (
            source == "maintenance-phase"
            and b.deficit_kcal.value is not None
            and b.deficit_se_kcal is not None
        ):
            # planned balance as a prior on the stored-energy term (expected.py)
            d, d_sd, k = exp_.maintenance_deficit_posterior(b.deficit_kcal.value, b.deficit_se_kcal)
            tdee = b.mean_intake_kcal + d
            tdee_se = math.sqrt(d_sd * d_sd + (b.intake_se_kcal or 0.0) ** 2)
            fr, lr = k * fr, k * lr
        return exp_.Baseline(
            tdee,
            tdee_se,
            mean_w,
            fat,
            b.mean_intake_kcal,
            r,
            fr,
            lr,
            source,
            start,
        )

    first_deficit = min((w.phase.start for w in windows if w.phase.kind == "deficit"), default=None)
    for w in windows:
        if first_deficit is not None and w.phase.start > first_deficit:
            break  # a baseline comes before the first deficit
        if w.phase.kind == "maintenance" and w.bal is not None and w.mean_weight_kg is not None:
            got = make(w.bal, w.mean_weight_kg, "maintenance-phase", w.phase.start)
            if got is not None:
                return got
    lo, hi = _first_weeks_window(windows, log.n_days)
    if hi - lo + 1 < MIN_ANALYSIS_DAYS:
        return None
    wts = log.weight_used_kg[lo : hi + 1]
    mean_w = float(np.mean(fit.level_kg[lo : hi + 1]))
    fat = _fat_at(comp, mean_w)
    # not a phase: no knots (nor glycogen steps) at the window's own edges
    rate = segment_rate(
        log.weight_used_kg,
        lo,
        hi,
        knots,
        fit.weights,
        noise,
        edge_knots=False,
        start_shift_at=start_shift,
    )
    b = bal.window_balance(
        wts,
        log.intake_kcal[lo : hi + 1],
        fat,
        comp.fat_se_kg,
        fit.weights[lo : hi + 1],
        noise,
        rate,
    )
    got = make(b, mean_w, "first-weeks")
    d0 = _first_change_index(windows)
    if got is None or d0 is None or d0 > hi or not b.deficit_kcal.known:
        return got
    # Inside a deficit the window already holds its first weeks of adaptation: expected
    # TDEE without adaptation is that much higher.  Model-based (Hall 2011 AT term), so
    # its whole size is also carried as uncertainty (judgment: individual AT varies
    # from about none to twice the model's).
    assert b.deficit_kcal.value is not None
    at = exp_.early_adaptation_kcal(b.deficit_kcal.value, lo - d0, hi - lo + 1)
    return dataclasses.replace(
        got,
        tdee_kcal=got.tdee_kcal - at,
        tdee_se_kcal=math.hypot(got.tdee_se_kcal, at),
    )


def _first_change_index(windows: list[_Window]) -> int | None:
    """Log index of the first phase that changed intake (deficit or surplus), if any."""
    for w in windows:
        if w.phase.kind in INTAKE_CHANGE_KINDS and w.i1 >= w.i0:
            return w.i0
    return None


def _first_weeks_window(windows: list[_Window], n_days: int) -> tuple[int, int]:
    """Log indices (inclusive) of the first-weeks baseline when there is no maintenance phase.

    ``BASELINE_FIRST_WEEKS_DAYS`` days from the start of the data, or, when the
    first deficit (or surplus) starts inside that span, from
    ``BASELINE_SKIP_DAYS`` days after its start: the first one to two weeks of a
    new intake are dominated by glycogen and water (science notes §4.4, §8), and
    the step they make is hardest to separate from tissue at the start of the
    data, where there is no level before it to compare with.
    """
    lo = 0
    for w in windows:
        if w.phase.kind in INTAKE_CHANGE_KINDS and w.i1 >= w.i0:
            if w.i0 < BASELINE_FIRST_WEEKS_DAYS:
                lo = w.i0 + BASELINE_SKIP_DAYS
            break
    hi = min(lo + BASELINE_FIRST_WEEKS_DAYS, n_days) - 1
    return lo, hi


def _gaps(log: DailyLog) -> tuple[tuple[dt.date, dt.date], ...]:
    idx = np.nonzero(np.isfinite(log.weight_used_kg))[0]
    out = []
    for a, b in itertools.pairwise(idx):
        if b - a - 1 > GAP_DAYS:
            out.append((_date(log.dates[a + 1]), _date(log.dates[b - 1])))
    return tuple(out)


def _weekly_rates_pct(fit: TrendFit | None, n: int) -> tuple[float, ...]:
    """Trend rate at the end of each of the last weeks, oldest first [% of body weight/week].

    The smoothed slope (7 x kg/day over the level) rather than a difference of
    levels a week apart, so that a water swing does not pass for a week of rapid
    loss.
    """
    if fit is None:
        return ()
    out = []
    for k in range(FLAG_RATE_WEEKS, 0, -1):
        end = n - 1 - 7 * (k - 1)
        if end - 6 < 0:
            continue
        out.append(700.0 * fit.slope_kg_per_day[end] / fit.level_kg[end])
    return tuple(float(x) for x in out)


def _mean(x: np.ndarray) -> float | None:
    x = x[np.isfinite(x)]
    return float(x.mean()) if x.size else None


def analyse_client(record: ClientRecord, month: str, settings: AnalysisSettings) -> ClientAnalysis:
    """Analyse one client's record for the report month ``month`` ("YYYY-MM").

    Parameters
    ----------
    record : ClientRecord
        As read from the book; must be ``record.ok``.
    month : str
        Report month, "YYYY-MM"; data after its last day are ignored.
    settings : AnalysisSettings
        Equation choice, density conversion, fallback activity factor, target rates.

    Returns
    -------
    ClientAnalysis
        Every field filled; values the data cannot support are missing with a reason.

    Raises
    ------
    ValueError
        If the record has errors or ``month`` is not YYYY-MM.
    """
    if not record.ok:
        raise ValueError(
            f"record for {record.client.client_id} has errors; analyse only ok records"
        )
    month_start, as_of = _month_bounds(month)
    client = record.client
    log = _cut_log(record.log, as_of)
    notes: list[str] = []
    age = client.age_years(as_of)
    minor = bool(record.minor or (age is not None and age < 18))
    special = tuple(s for s, on in (("minor", minor), ("pregnant", client.pregnant)) if on)
    methods: dict[str, MethodUsed] = {}

    # 1. Trend weight.
    weights_used = log.weight_used_kg if log.n_days else np.empty(0)
    fit: TrendFit | None = None
    trend: TrendSeries | None = None
    ema: TrendSeries | None = None
    if int(np.isfinite(weights_used).sum()) >= 2:
        fit = local_linear_trend(weights_used)
        trend = fit.series(log.dates)
        ema = ema_series(log.dates, weights_used)
        methods["local-linear-trend"] = METHODS["local-linear-trend"]
        methods["ema"] = METHODS["ema"]
    else:
        notes.append("too-few-weigh-ins")

    # One weigh-in noise model per client, pooled over its phase windows (the whole
    # log when there are none); used by every rate's standard error.
    raw_windows = _phase_windows(record.phases, log, as_of)
    start_shift = _start_shift_index(record.phases, log, as_of)
    noise: NoiseModel | None = None
    if fit is not None:
        spans = [(i0, i1) for _, i0, i1, _ in raw_windows if i1 - i0 + 1 >= MIN_ANALYSIS_DAYS]
        noise = fit_noise_model(weights_used, spans or [(0, log.n_days - 1)], fit.weights)
    last = log.n_days - 1
    recent_lo = max(log.n_days - RECENT_DAYS, 0)
    if fit is not None:
        cur_w = float(fit.level_kg[last])
        current_weight = _est(cur_w, math.sqrt(fit.level_var_kg2[last]))
        i_m = max(_index(log, month_start) - 1, 0)
        month_change = _est(
            cur_w - float(fit.level_kg[i_m]),
            math.sqrt(fit.level_var_kg2[last] + fit.level_var_kg2[i_m]) if i_m < last else None,
        )
        if i_m >= last:
            month_change = Estimate.missing("no-data-in-month")
        # Current rate: the last 4 weeks, but not before the current phase started
        # unless that leaves fewer than 14 days (then the fit spans the phase change).
        lo = max(log.n_days - RECENT_DAYS, 0)
        starts = [i0 for _, i0, i1, _ in raw_windows if i1 == last]
        if starts and starts[-1] > lo:
            lo = min(starts[-1], max(log.n_days - MIN_ANALYSIS_DAYS, 0))
        all_knots = tuple(sorted({i0 for _, i0, _, _ in raw_windows}))
        recent_lo = lo
        wr = segment_rate(
            weights_used,
            lo,
            last,
            all_knots,
            fit.weights,
            noise,
            edge_knots=False,
            start_shift_at=start_shift,
        )
        if wr is None or log.n_days - lo < MIN_ANALYSIS_DAYS:
            weekly_rate = Estimate.missing("too-few-days")
        else:
            weekly_rate = _est(7 * wr.rate_kg_per_day, 7 * wr.se_kg_per_day)
        weekly_rate_pct = _scale(weekly_rate, 100.0 / cur_w)
    else:
        cur_w = None
        current_weight = month_change = weekly_rate = weekly_rate_pct = Estimate.missing(
            "too-few-weigh-ins"
        )
    in_month = log.dates >= np.datetime64(month_start, "D") if log.n_days else np.empty(0, bool)
    month_intake = _mean(log.intake_kcal[in_month]) if log.n_days else None
    bmi = cur_w / (client.height_cm / 100) ** 2 if cur_w and client.height_cm else None

    # 2. Body composition and resting equations.
    bodycomp, fallback, bc_methods = _bodycomp(record, log, fit, settings, as_of, notes)
    for m in bc_methods:
        methods[m.code] = m
    comp = _comp_reference(bodycomp, fallback)
    resting: dict[str, float] = {}

    def resting_at(weight_kg: float) -> float | None:
        if client.sex is None or age is None or not client.height_cm:
            return None
        try:
            return resting_kcal_all(client.sex, weight_kg, client.height_cm, age)["mifflin-st-jeor"]
        except (ValueError, KeyError):
            return None

    if cur_w is not None and client.sex is not None and age is not None and client.height_cm:
        lean_now = None
        if comp.fat_kg is not None:
            f_now = _fat_at(comp, cur_w)
            lean_now = None if f_now is None else cur_w - f_now
        try:
            resting = resting_kcal_all(client.sex, cur_w, client.height_cm, age, lean_now)
        except ValueError:
            notes.append("resting-equations-unavailable")
        for code in resting:
            if code in RESTING_METHODS:
                methods[code] = RESTING_METHODS[code]

    # 3. Phases: energy balance per window.
    windows: list[_Window] = []
    # Slope may change where a phase starts or ends (the intake changed there).
    knots = tuple(
        sorted({i0 for _, i0, _, _ in raw_windows} | {i1 + 1 for _, _, i1, _ in raw_windows})
    )
    for ph, i0, i1, end in raw_windows:
        b = None
        mean_w = None
        rate = None
        if fit is not None and i1 >= i0:
            mean_w = float(np.mean(fit.level_kg[i0 : i1 + 1]))
            rate = segment_rate(
                weights_used, i0, i1, knots, fit.weights, noise, start_shift_at=start_shift
            )
            if not special:
                fat0 = _fat_at(comp, float(fit.level_kg[i0]))
                b = bal.window_balance(
                    weights_used[i0 : i1 + 1],
                    log.intake_kcal[i0 : i1 + 1],
                    fat0,
                    comp.fat_se_kg,
                    fit.weights[i0 : i1 + 1],
                    noise,
                    rate,
                )
        windows.append(_Window(ph, i0, i1, end, b, mean_w, rate))
    baseline = None
    if fit is not None and not special:
        baseline = _baseline(windows, log, fit, comp, resting_at, noise, knots, start_shift)
        methods["hall-2008-energy-density"] = METHODS["hall-2008-energy-density"]
    phase_results = []
    for k, w in enumerate(windows):
        phase_results.append(
            _phase_result(
                w, k, raw_windows, log, fit, bodycomp, comp, baseline, resting_at, settings, special
            )
        )
    current = None
    week_of_phase = None
    for pr, w in zip(phase_results, windows, strict=True):
        if w.phase.start <= as_of and (w.phase.end is None or w.phase.end >= as_of):
            current = pr
            week_of_phase = (as_of - w.phase.start).days // 7 + 1

    # 4. Expenditure trajectory.
    expenditure = None
    path = None
    if fit is not None and not special and log.n_days >= MIN_ANALYSIS_DAYS and cur_w is not None:
        f_now = _fat_at(comp, cur_w)
        rho = energy_density_kcal_per_kg(f_now) if f_now else bal.KCAL_PER_KG_SPREADSHEET
        if np.isfinite(log.intake_kcal).sum() < bal.MIN_INTAKE_DAYS:
            notes.append("expenditure-too-few-intake-days")
        else:
            shift_starts = tuple(i0 for _, i0, _, _ in raw_windows if i0 > 0)
            if start_shift is not None:
                shift_starts = (start_shift, *shift_starts)
            path = bal.expenditure_path(
                weights_used,
                log.intake_kcal,
                rho,
                fit.noise_sd_kg,
                fit.weights,
                shift_days=shift_starts,
            )
            expenditure = ExpenditureSeries(
                dates=log.dates,
                tdee_kcal=path.tdee_kcal,
                low_kcal=path.tdee_kcal - Z80 * path.sd_kcal,
                high_kcal=path.tdee_kcal + Z80 * path.sd_kcal,
            )
            methods["expenditure-state-space"] = METHODS["expenditure-state-space"]
    elif fit is not None and not special:
        notes.append("expenditure-too-few-days")

    # 5. Projection at the current intake.
    projection = None
    if path is not None and cur_w is not None and fit is not None:
        projection = _projection(
            log,
            fit,
            path,
            comp,
            cur_w,
            baseline,
            resting_at,
            client.goal_weight_kg,
            settings,
            as_of,
            recent_lo,
        )
        if projection is not None:
            methods["hall-2011"] = METHODS["hall-2011"]

    # 6. Signals beyond expenditure, against the time before the first deficit.
    signals: tuple[Signal, ...] = ()
    if log.n_days:
        deficits = [w.phase.start for w in windows if w.phase.kind == "deficit"]
        base_end = np.datetime64(deficits[0], "D") if deficits else None
        series = {
            "steps": log.steps,
            "hunger": log.hunger,
            "energy": log.energy,
            "sleep": log.sleep_h,
        }
        signals = tuple(
            summarise_signal(name, log.dates, series[name], base_end) for name in SIGNAL_NAMES
        )

    # 7. Safety flags.
    lo14 = max(log.n_days - FLAG_INTAKE_DAYS, 0)
    adapt_pct = None
    for pr in reversed(phase_results):
        if pr.adaptation_pct.known:
            adapt_pct = pr.adaptation_pct.value
            break
    latest_bf = (
        bodycomp[-1].bodyfat_pct
        if bodycomp
        else (fallback.bodyfat_pct if fallback is not None else None)
    )
    flags = safety_flags(
        FlagInputs(
            sex=client.sex,
            age_years=age,
            minor=minor,
            pregnant=client.pregnant,
            bmi_kg_m2=bmi,
            mean_intake_kcal=_mean(log.intake_kcal[lo14:]) if log.n_days else None,
            weekly_rates_pct=_weekly_rates_pct(fit, log.n_days),
            bodyfat_pct=latest_bf,
            adaptation_pct=adapt_pct,
        )
    )

    quality = DataQuality(
        days_in_period=(as_of - month_start).days + 1,
        weight_days=int(np.isfinite(weights_used[in_month]).sum()) if log.n_days else 0,
        intake_days=int(np.isfinite(log.intake_kcal[in_month]).sum()) if log.n_days else 0,
        outliers=tuple(o for o in record.outliers if o[0] <= as_of),
        gaps=_gaps(log) if log.n_days else (),
        warnings=record.warnings,
    )
    return ClientAnalysis(
        client=client,
        month=month,
        as_of=as_of,
        age_years=age,
        minor=minor,
        special_handling=special,
        log=log,
        trend=trend,
        ema=ema,
        current_weight_kg=current_weight,
        month_change_kg=month_change,
        weekly_rate_kg=weekly_rate,
        weekly_rate_pct=weekly_rate_pct,
        month_mean_intake_kcal=month_intake,
        bmi=bmi,
        bodycomp=bodycomp,
        bodyfat_fallback=fallback,
        resting_kcal=resting,
        phases=tuple(phase_results),
        current_phase=current,
        week_of_phase=week_of_phase,
        expenditure=expenditure,
        signals=signals,
        projection=projection,
        flags=flags,
        methods=tuple(methods.values()),
        quality=quality,
        notes=tuple(dict.fromkeys(notes)),
    )


def _session_between(
    bodycomp: tuple[BodyCompResult, ...], lo: dt.date, hi: dt.date
) -> BodyCompResult | None:
    """Latest session with lo <= date <= hi."""
    found = None
    for b in bodycomp:
        if lo <= b.date <= hi:
            found = b
    return found


def _phase_result(
    w: _Window,
    k: int,
    raw_windows: list[tuple[Phase, int, int, dt.date]],
    log: DailyLog,
    fit: TrendFit | None,
    bodycomp: tuple[BodyCompResult, ...],
    comp: _Comp,
    baseline: exp_.Baseline | None,
    resting_at: object,
    settings: AnalysisSettings,
    special: tuple[str, ...],
) -> PhaseResult:
    ph = w.phase
    days = (w.window_end - ph.start).days + 1  # calendar days of the window
    data_days = max(w.i1 - w.i0 + 1, 0)  # of which inside the log
    wts = log.weight_used_kg[w.i0 : w.i1 + 1] if data_days else np.empty(0)
    intake = log.intake_kcal[w.i0 : w.i1 + 1] if data_days else np.empty(0)
    notes: list[str] = []
    running = ph.end is None or ph.end > w.window_end
    t_start = t_end = t_change = None
    if fit is not None and data_days:
        t_start = float(fit.level_kg[w.i0])
        t_end = float(fit.level_kg[w.i1])
        t_change = t_end - t_start
    b = w.bal
    if special:
        reason = "special-handling"
        # trend only: the rate of weight change, but no energy balance
        if w.rate is not None and data_days >= MIN_ANALYSIS_DAYS:
            rate = _est(7 * w.rate.rate_kg_per_day, 7 * w.rate.se_kg_per_day)
            rate_pct = _scale(rate, 100.0 / (w.mean_weight_kg or 1.0))
        else:
            rate = rate_pct = Estimate.missing("too-few-days")
        deficit = tdee = expected = adapt_k = adapt_p = Estimate.missing(reason)
        expected_method = None
        depth = None
        status = "special-handling"
    else:
        if b is None or b.rate is None:
            reason = "too-few-days" if data_days < MIN_ANALYSIS_DAYS else "too-few-weigh-ins"
            rate = rate_pct = Estimate.missing(reason)
        else:
            rate = _est(7 * b.rate.rate_kg_per_day, 7 * b.rate.se_kg_per_day)
            rate_pct = _scale(rate, 100.0 / (w.mean_weight_kg or 1.0))
        deficit = b.deficit_kcal if b is not None else Estimate.missing("too-few-days")
        tdee = b.tdee_kcal if b is not None else Estimate.missing("too-few-days")
        # intake changed at the start: any phase after the first, or a first phase that
        # is a deficit or surplus (the client ate at maintenance before it)
        intake_changed = k > 0 or ph.kind in INTAKE_CHANGE_KINDS
        early = intake_changed and data_days < EARLY_PHASE_DAYS
        if early and tdee.known:
            tdee = Estimate.missing("early-phase")
        expected, expected_method = _expected(w, b, comp, baseline, resting_at, settings)
        a = exp_.adaptation(tdee, expected)
        adapt_k, adapt_p = a.kcal, a.pct
        if baseline is not None and baseline.phase_start == ph.start:
            # the reference itself: expected is its own observed TDEE by construction
            adapt_k = adapt_p = Estimate.missing("baseline-phase")
            notes.append("baseline-phase")
        elif a.implausible:
            notes.append("implausible-adaptation")
        depth = exp_.deficit_depth_pct(deficit.value, expected.value)
        if data_days < MIN_ANALYSIS_DAYS:
            status = "too-few-days"
        elif running:
            status = "running"
        else:
            status = "ok"
        if early or days < EARLY_PHASE_DAYS:
            notes.append("early-phase-water-glycogen")
        if expected_method == "resting-equation":
            notes.append("expected-lower-confidence")
        if baseline is not None and baseline.source == "first-weeks":
            notes.append("baseline-first-weeks")
    # Body fat at the start and end of the window, from skinfold sessions.
    s0 = _session_between(bodycomp, ph.start - dt.timedelta(days=14), ph.start + dt.timedelta(7))
    s1 = _session_between(bodycomp, ph.start + dt.timedelta(days=8), w.window_end)
    fat_change = lean_change = None
    if s0 is not None and s1 is not None and s1.date > s0.date:
        fat_change = s1.fat_mass_kg - s0.fat_mass_kg
        lean_change = s1.lean_mass_kg - s0.lean_mass_kg
        notes.append("composition-change-from-skinfolds")
    elif b is not None and b.fat_change_kg is not None and not special:
        fat_change, lean_change = b.fat_change_kg, b.lean_change_kg
        notes.append("composition-change-from-forbes")
    return PhaseResult(
        name=ph.name,
        kind=ph.kind,
        start=ph.start,
        end=ph.end,
        window_end=w.window_end,
        days=days,
        weight_days=int(np.isfinite(wts).sum()),
        intake_days=int(np.isfinite(intake).sum()),
        trend_start_kg=t_start,
        trend_end_kg=t_end,
        trend_change_kg=t_change,
        rate_kg_per_week=rate,
        rate_pct_per_week=rate_pct,
        mean_intake_kcal=_mean(intake),
        target_kcal=ph.target_kcal,
        realised_deficit_kcal=deficit,
        observed_tdee_kcal=tdee,
        expected_tdee_kcal=expected,
        expected_method=expected_method,
        adaptation_kcal=adapt_k,
        adaptation_pct=adapt_p,
        deficit_depth_pct=depth,
        days_in_deficit=None if special else _days_in_deficit(raw_windows, k),
        bodyfat_start_pct=None if s0 is None else s0.bodyfat_pct,
        bodyfat_end_pct=None if s1 is None else s1.bodyfat_pct,
        fat_mass_change_kg=fat_change,
        lean_mass_change_kg=lean_change,
        status=status,
        notes=tuple(notes),
    )


def _expected(
    w: _Window,
    b: bal.WindowBalance | None,
    comp: _Comp,
    baseline: exp_.Baseline | None,
    resting_at: object,
    settings: AnalysisSettings,
) -> tuple[Estimate, str | None]:
    if w.mean_weight_kg is None:
        return Estimate.missing("too-few-weigh-ins"), None
    mean_w = w.mean_weight_kg
    intake = b.mean_intake_kcal if b is not None else None
    if baseline is not None and intake is not None and b is not None:
        fat = _fat_at(comp, mean_w)
        if fat is not None:
            days = max(b.days, 1)
            fr = (b.fat_change_kg or 0.0) / days
            lr = (b.lean_change_kg or 0.0) / days
            return exp_.expected_tdee_from_baseline(baseline, mean_w, fat, intake, fr, lr), (
                "own-baseline"
            )
    r = resting_at(mean_w)  # type: ignore[operator]
    if r is None:
        return Estimate.missing("no-resting-equation"), None
    return exp_.expected_tdee_fallback(r, settings.activity_factor), "resting-equation"


def _projection(
    log: DailyLog,
    fit: TrendFit,
    path: bal.ExpenditurePath,
    comp: _Comp,
    cur_w: float,
    baseline: exp_.Baseline | None,
    resting_at: object,
    goal: float | None,
    settings: AnalysisSettings,
    as_of: dt.date,
    recent_lo: int,
) -> Projection | None:
    # current intake: the same recent window as the current rate (the current phase's
    # last four weeks at most)
    intake = _mean(log.intake_kcal[recent_lo:])
    fat = _fat_at(comp, cur_w)
    rest = resting_at(cur_w)  # type: ignore[operator]
    if intake is None or fat is None or rest is None:
        return None
    tdee = float(path.tdee_kcal[-1])
    tdee_sd = float(path.sd_kcal[-1])
    if baseline is not None:
        maint = exp_.expected_tdee_from_baseline(baseline, cur_w, fat, intake).value
    else:
        maint = exp_.expected_tdee_fallback(rest, settings.activity_factor).value
    assert maint is not None
    run = project_weight(
        cur_w,
        fat,
        tdee,
        intake,
        maint,
        rest,
        horizon_days=PROJECTION_DAYS,
        goal_weight_kg=goal,
        rates_pct_per_week=tuple(settings.target_rates_pct_per_week),
        weight_sd_kg=math.sqrt(float(fit.level_var_kg2[-1])),
        fat_sd_kg=comp.fat_se_kg,
        tdee_sd_kcal=tdee_sd,
    )
    start = np.datetime64(as_of, "D")
    dates = start + np.arange(PROJECTION_DAYS + 1)
    goal_date = None if run.goal_day is None else as_of + dt.timedelta(days=run.goal_day)
    rates = {r: Estimate(v, lo_, hi_) for r, (v, lo_, hi_) in run.intake_for_rate_kcal.items()}
    return Projection(
        start=as_of,
        intake_kcal=intake,
        dates=dates,
        weight_kg=run.weight_kg,
        low_kg=run.low_kg,
        high_kg=run.high_kg,
        goal_weight_kg=goal,
        goal_date=goal_date,
        intake_for_rate_kcal=rates,
    )
