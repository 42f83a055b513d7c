"""The client view model: every number already rounded, converted and formatted as text.

Templates receive this and do no arithmetic.  Categories the narrative branches on (is the
rate in the usual range, is expenditure clearly below expected) are decided here, with the
thresholds named below, so the wording stays free of numbers it would have to compare.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from reportgen.analysis.quality import FLAG_INTAKE_DAYS
from reportgen.config import Config
from reportgen.results import ClientAnalysis, Estimate, PhaseResult
from reportgen.science.diet_break import diet_break_due

from .cautions import caution_values
from .outlook import outlook
from .theme import missing_glyphs
from .units import Units

# Rate of loss bands in % of body weight per week.  0.5-1.0 %/week is the range Helms,
# Aragon & Fitschen 2014 (JISSN 11:20) recommend to keep lean mass; "fast" above 1.0 %.
RATE_TARGET_LOW_PCT = 0.5
RATE_FAST_PCT = 1.0
RATE_FLAT_PCT = 0.1  # |rate| below this reads as "holding steady" (common practice)
# Adaptation reads as "clear" only when the 80 % interval excludes zero and the estimate is at
# least this share of expected expenditure (common practice, no single source).
ADAPT_MIN_PCT = 3.0
# Signals: only changes the analysis sized "moderate" or "large" are called out.
SIGNAL_NOTABLE = ("moderate", "large")
# Below-expected expenditure of this share or more is worded as "check logging first": several
# times the 2-4 % of TDEE Hall et al. 2011's model expects for a moderate cut, and as large as
# Rosenbaum & Leibel's 10-15 % at a maintained reduced weight (judgment).
ADAPT_LARGE_PCT = 15.0


@dataclass
class Figure:
    """One headline figure: a formatted value, its interval and a plain-language detail."""

    key: str
    value: str = ""
    interval: str = ""
    detail: str = ""
    reason: str = ""  # code, when the value is not known

    @property
    def known(self) -> bool:
        return not self.reason


@dataclass
class ClientView:
    practice: dict[str, str]
    client: dict[str, str]
    month: str
    month_code: str
    as_of: str
    weight_unit: str
    energy_unit: str
    phase: dict[str, Any] | None
    special: list[str]
    figures: dict[str, Figure]
    story: dict[str, Any]
    phases: list[dict[str, str]]
    quality: dict[str, Any]
    methods: list[dict[str, str]]
    flags: list[dict[str, Any]]
    sections: tuple[str, ...]
    extra: dict[str, Any] = field(default_factory=dict)
    # the safety thresholds in the configured units (reportgen.report.cautions)
    caution: dict[str, str] = field(default_factory=dict)


def practice_view(config: Config) -> dict[str, str]:
    p = config.practice
    contact = [x for x in (p.phone, p.email, p.website) if x]
    return {
        "name": p.name,
        "address": p.address,
        "phone": p.phone,
        "email": p.email,
        "website": p.website,
        "contact": " · ".join(contact),
    }


def _estimate(u: Units, est: Estimate, kind: str, key: str) -> Figure:
    if not est.known:
        return Figure(key, reason=est.reason or "not-estimated")
    return Figure(key, value=u.fmt(est.value, kind), interval=u.interval(est, kind))


def _rate_band(pct: float | None, rapid: bool, progress: str | None = None) -> str:
    """How the narrative words the current rate; "fast" exactly when the rapid-loss rule
    (``science.flags.rapid_loss``, the rule of the rapid-loss flag) holds.

    ``progress`` is the progress section's status when the rate is the one it judged:
    then the words follow its reading, so that page 1 never calls "rising" what the
    section calls a stall or cannot tell yet, nor "slow loss" what it calls stalled."""
    if rapid:
        return "fast"
    if pct is None:
        return "unknown"
    if progress == "gaining":
        return "gain"
    if progress == "stalled" or (progress is not None and pct > 0):
        return "flat"
    loss = -pct
    if abs(pct) < RATE_FLAT_PCT:
        return "flat"
    if loss < 0:
        return "gain"
    if loss < RATE_TARGET_LOW_PCT:
        return "slow"
    return "target"


def _adapt_state(u: Units, est: Estimate, pct: Estimate, implausible: bool) -> str:
    if not est.known or est.value is None:
        return "unknown"
    if implausible:
        return "implausible"
    # decided on the printed range: a range printed as "-140 to ±0" includes no change
    if (
        est.low is not None
        and est.high is not None
        and u.e_shown(est.low) <= 0 <= u.e_shown(est.high)
    ):
        return "within"
    if pct.value is not None and abs(pct.value) < ADAPT_MIN_PCT:
        return "within"
    return "below" if est.value < 0 else "above"


def _adapt_causes(u: Units, p: PhaseResult) -> dict[str, str]:
    """What the data say about each candidate cause of expenditure below expected."""
    if not p.adaptation_typical_kcal.known or p.adaptation_typical_kcal.value is None:
        return {}
    out = {"adapt_typical": u.e(abs(p.adaptation_typical_kcal.value))}
    data = p.adaptation_data_kcal
    # the client's own data alone cannot tell the figure from no change: say that the
    # combined estimate leans on the typical value
    weak = data.known and data.value is not None and u.zero_shown(data.low, data.high)
    out["adapt_data_weak"] = "yes" if weak else ""
    if weak:
        out["adapt_data"] = u.e(data.value, signed=True, unit=False)
        out["adapt_data_range"] = u.interval(data, "e_change")
    act = p.activity_change_kcal
    # the typical value counts the measured change in steps (on the data's footing)
    out["adapt_typical_steps"] = (
        "yes" if act.known and act.value is not None and u.e_shown(act.value) != 0 else ""
    )
    if act.known and act.value is not None:
        # the phase's mean steps against the baseline's (not the recent weeks')
        out["adapt_activity"] = (
            "fewer" if act.value < 0 else "more"
        ) + f" steps on average this phase, worth about {u.e(abs(act.value))}"
    else:
        out["adapt_activity"] = "not measured (steps not logged)"
    gap = p.logging_gap_kcal
    if gap.known and gap.value is not None and gap.low is not None and gap.high is not None:
        if gap.high < 0:
            out["adapt_logging"] = (
                "over the phase your weight suggests about "
                f"{u.e(abs(gap.value))} more eaten than logged"
            )
        elif gap.low > 0:
            out["adapt_logging"] = (
                f"over the phase your weight suggests about {u.e(gap.value)} less eaten than logged"
            )
        else:
            out["adapt_logging"] = "over the phase, logged intake is in line with your weight"
    return out


def _deficit_words(u: Units, ph: PhaseResult | None) -> tuple[str, str]:
    """The realised deficit as a size and a side: ("50 kcal/day", "below" or "above")."""
    value = ph.realised_deficit_kcal.value if ph is not None else None
    if value is None:
        return "", ""
    return u.e(abs(value)), "below" if value >= 0 else "above"


def _phase_row(u: Units, p: PhaseResult) -> dict[str, str]:
    def est(e: Estimate, kind: str) -> str:
        return u.fmt(e.value, kind, unit=False) if e.known else "–"

    bf = (
        u.pp(p.bodyfat_end_pct - p.bodyfat_start_pct, dp=1)
        if p.bodyfat_start_pct is not None and p.bodyfat_end_pct is not None
        else "–"
    )
    return {
        "name": p.name,
        "kind": p.kind,
        "dates": u.span(p.start, p.end, running="running"),
        "days": str(p.days),
        "intake": u.e(p.mean_intake_kcal, unit=False),
        "deficit": est(p.realised_deficit_kcal, "e"),
        "rate": est(p.rate_pct_per_week, "pct_change"),
        "rate_kg": est(p.rate_kg_per_week, "w_rate"),
        "tdee": est(p.observed_tdee_kcal, "e"),
        "adaptation": est(p.adaptation_kcal, "e_change"),
        "bodyfat": bf.replace(" points", ""),
        "status": p.status,
        # why expenditure/adaptation are blank, so the table can say it under a dash
        "blank_reason": (
            p.observed_tdee_kcal.reason or p.adaptation_kcal.reason or ""
            if not (p.observed_tdee_kcal.known and p.adaptation_kcal.known)
            else ""
        ),
    }


def _signal_view(u: Units, s: Any) -> dict[str, str]:
    unit_dp = 0 if s.name == "steps" else 1
    return {
        "name": s.name,
        "direction": s.direction,
        "size": s.size,
        "baseline": u.number(s.baseline, unit_dp),
        "recent": u.number(s.recent, unit_dp),
        "change": u.number(s.change, unit_dp, signed=True),
        "change_pct": u.pct(s.change_pct, dp=0, signed=True),
        "change_pct_abs": u.pct(abs(s.change_pct), dp=0) if s.change_pct is not None else "",
        "notable": "yes" if s.size in SIGNAL_NOTABLE else "",
    }


def _beside(u: Units, value: float, limit: float, fmt: Callable[..., str]) -> str:
    """``value`` formatted as the report prints it, never printed equal to ``limit``.

    When rounding would print the value as the limit itself (1,196 and 1,200 kcal/day both
    read "1,200"), it is printed with one more step of precision (kcal: whole numbers)."""
    text = fmt(value)
    if text == fmt(limit) and value != limit:
        return fmt(value, fine=True)
    return text


def _flag_view(u: Units, f: Any) -> dict[str, Any]:
    """A flag as the report words it: the client's value and the limit, both formatted.

    ``value``/``limit`` are empty for flags without a number (pregnancy).  ``window`` names
    what the value is (e.g. the intake window); ``weeks`` the run of fast weeks."""
    v = dict(f.values)

    def energy(x: float, fine: bool = False) -> str:
        return f"{round(float(u.energy(x))):,} {u.energy_label}" if fine else u.e(x)

    def rate(x: float, fine: bool = False) -> str:
        return u.pct(abs(x), dp=3 if fine else 2)

    def pct(x: float, fine: bool = False) -> str:
        return u.pct(abs(x), dp=2 if fine else 1)

    def number(x: float, fine: bool = False) -> str:
        return u.number(x, 2 if fine else 1)

    out: dict[str, Any] = {
        "code": f.code,
        "severity": f.severity,
        "value": "",
        "limit": "",
        "weeks": "",
        "window": "",
    }
    if f.code in ("low-intake", "very-low-intake") and "intake_kcal" in v:
        out["value"] = _beside(u, float(v["intake_kcal"]), float(v["threshold_kcal"]), energy)
        out["limit"] = u.e(float(v["threshold_kcal"]))
        out["window"] = str(FLAG_INTAKE_DAYS)
    elif f.code == "rapid-loss":
        limit = float(v["threshold_pct_per_week"])
        shown = v.get("current_rate_pct_per_week", v.get("mean_rate_pct_per_week"))
        if shown is not None:
            out["value"] = _beside(u, float(shown), limit, rate)
        out["limit"] = rate(limit)
        if "weeks" in v:
            out["weeks"] = u.number(float(v["weeks"]), 0)
    elif f.code == "low-bmi":
        out["value"] = _beside(u, float(v["bmi_kg_m2"]), float(v["threshold"]), number)
        out["limit"] = number(float(v["threshold"]))
    elif f.code == "minor" and "age_years" in v:
        out["value"] = u.number(float(v["age_years"]), 0)
        out["limit"] = u.number(float(v["threshold_years"]), 0)
    elif f.code == "essential-fat":
        out["value"] = _beside(u, float(v["bodyfat_pct"]), float(v["threshold_pct"]), pct)
        out["limit"] = pct(float(v["threshold_pct"]))
    elif f.code == "implausible-adaptation" and "adaptation_kcal" in v:
        # the data alone against what the literature expects for this deficit
        out["value"] = u.e(float(v["adaptation_kcal"]))
        if "typical_kcal" in v:
            out["limit"] = u.e(float(v["typical_kcal"]))
    return out


def client_view(a: ClientAnalysis, config: Config) -> ClientView:
    u = Units.from_config(config)
    ph = a.current_phase
    phase = None
    if ph is not None:
        phase = {
            "name": ph.name,
            "kind": ph.kind,
            "week": str(a.week_of_phase) if a.week_of_phase else "",
            "start": u.d(ph.start),
            "end": u.d(ph.end) if ph.end else "",
            "running": ph.end is None or ph.end > a.as_of,
            "status": ph.status,
        }

    # No weigh-in inside the report month: the trend figures would be extrapolations, so
    # they are not shown as this month's (the narrative says so on page 1).
    no_month_data = a.quality.weight_days == 0
    figs: dict[str, Figure] = {}
    f = _estimate(u, a.current_weight_kg, "w", "weight")
    figs["weight"] = f
    f = _estimate(u, a.month_change_kg, "w_change", "change")
    figs["change"] = f
    # the words say "fast" exactly when the rapid-loss flag (science.flags.rapid_loss) is up
    rapid = any(fl.code == "rapid-loss" for fl in a.flags)
    rate_kg, pct, span_weeks = headline_rate(a)
    f = _estimate(u, rate_kg, "w_rate", "rate")
    if f.known:
        f.value = f"{f.value}/week"
        if pct.known:
            f.detail = f"{u.pct(pct.value, dp=2, signed=True)}"
            if pct.low is not None and pct.high is not None:
                f.detail += f" ({u.interval(pct, 'pct_change')})"
    figs["rate"] = f
    if no_month_data:
        for key in ("weight", "change", "rate"):
            figs[key] = Figure(key, reason="no-data-in-month")
    intake = Figure("intake")
    if a.month_mean_intake_kcal is not None:
        intake.value = u.e(a.month_mean_intake_kcal)
        intake.detail = str(int(np.sum(_month_mask(a) & np.isfinite(a.log.intake_kcal))))
    else:
        intake.reason = "no-intake" if a.log.has_intake else "no-intake-logged"
    figs["intake"] = intake

    def phase_est(attr: str, kind: str, key: str) -> Figure:
        if ph is None:
            return Figure(key, reason="no-phase")
        return _estimate(u, getattr(ph, attr), kind, key)

    figs["deficit"] = phase_est("realised_deficit_kcal", "e", "deficit")
    figs["tdee"] = phase_est("observed_tdee_kcal", "e", "tdee")
    adapt = phase_est("adaptation_kcal", "e_change", "adaptation")
    if adapt.known and ph is not None and ph.adaptation_pct.known:
        adapt.detail = u.pct(ph.adaptation_pct.value, dp=1, signed=True)
    figs["adaptation"] = adapt
    figs["bodyfat"] = _bodyfat_figure(a, u)

    implausible = any(fl.code == "implausible-adaptation" for fl in a.flags)
    look = None if no_month_data else outlook(a, config.report.projection_weeks, _display(u))
    last_weigh_in = _last_weigh_in(a)
    story: dict[str, Any] = {
        "change_dir": _direction(a.month_change_kg),
        "change_abs": "" if a.month_change_kg.value is None else u.w(abs(a.month_change_kg.value)),
        # the month's change cannot be told from none: its 80 % range, said beside it, so a
        # change "down" does not read against a flat or rising recent rate
        "change_unclear": (
            u.interval(a.month_change_kg, "w_change")
            if _holds_zero(a.month_change_kg) and _direction(a.month_change_kg) in ("down", "up")
            else ""
        ),
        # the realised deficit in words: "about 50 kcal/day more than", never "−50 ... below"
        "deficit_abs": _deficit_words(u, ph)[0],
        "deficit_side": _deficit_words(u, ph)[1],
        "rate_band": "unknown"
        if no_month_data
        else _rate_band(pct.value, rapid, a.plateau.status if span_weeks and a.plateau else None),
        # weeks the page-1 rate spans (0: the smoothed trend's slope at the month's end)
        "rate_span_weeks": str(span_weeks) if span_weeks else "",
        # the progress section's status when it judged that rate ("" otherwise)
        "progress": a.plateau.status if span_weeks and a.plateau else "",
        "no_month_data": no_month_data,
        "last_weigh_in": u.d(last_weigh_in) if last_weigh_in else "",
        "rate_pct_abs": "" if pct.value is None else u.pct(abs(pct.value), dp=2),
        "rate_pct": u.pct(pct.value, dp=2, signed=True) if pct.known else "",
        "bf_first": u.pct(a.bodycomp[0].bodyfat_pct) if a.bodycomp else "",
        "bf_last": u.pct(a.bodycomp[-1].bodyfat_pct) if a.bodycomp else "",
        "bf_first_date": u.d(a.bodycomp[0].date) if a.bodycomp else "",
        "bf_last_date": u.d(a.bodycomp[-1].date) if a.bodycomp else "",
        "adapt_state": "unknown",
        "adapt_abs": "",
        # "expenditure below expected" and its three candidate causes (empty when the
        # client has no own baseline to compare with)
        "adapt_typical": "",
        "adapt_activity": "",
        "adapt_logging": "",
        "adapt_data_weak": "",
        "adapt_typical_steps": "",
        "adapt_data": "",
        "adapt_data_range": "",
        "adapt_large": False,
        "signals": [_signal_view(u, s) for s in a.signals],
        "notable_signals": [_signal_view(u, s) for s in a.signals if s.size in SIGNAL_NOTABLE],
        # a break at maintenance is worth discussing: the one rule (science.diet_break)
        "long_deficit": ph is not None and diet_break_due(ph.days_in_deficit, ph.deficit_depth_pct),
        "weeks_in_deficit": str((ph.days_in_deficit or 0) // 7) if ph else "",
        "sessions": str(len(a.bodycomp)),
        "scale_bodyfat": bool(np.isfinite(a.log.body_fat_pct).any()),
        "goal": u.w(a.client.goal_weight_kg) if a.client.goal_weight_kg is not None else "",
        "goal_status": "none",
        "goal_direction": "",
        "goal_date": "",
        "goal_earliest": "",
        "goal_latest": "",
        "projection_weeks": "",
        "projection_date": "",
        "projection_end": "",
        "projection_band": "",
        "projection_dir": "",
    }
    if ph is not None:
        story["adapt_state"] = _adapt_state(u, ph.adaptation_kcal, ph.adaptation_pct, implausible)
        if ph.adaptation_kcal.known and ph.adaptation_kcal.value is not None:
            story["adapt_abs"] = u.e(abs(ph.adaptation_kcal.value))
        adapt_pct = ph.adaptation_pct.value
        story["adapt_large"] = bool(adapt_pct is not None and abs(adapt_pct) >= ADAPT_LARGE_PCT)
        story.update(_adapt_causes(u, ph))
    if look is not None and look.days:
        story["projection_weeks"] = look.weeks_text
        story["projection_date"] = u.d(look.end)
        story["projection_end"] = u.w(look.weight_kg)
        story["projection_band"] = f"{u.w(look.low_kg, unit=False)}–{u.w(look.high_kg)}"
        start = a.current_weight_kg.value
        if start is not None:
            delta = _display(u)(look.weight_kg) - _display(u)(start)
            story["projection_dir"] = "flat" if delta == 0 else ("down" if delta < 0 else "up")
        story["goal_status"] = look.goal_status
        story["goal_direction"] = look.goal_direction
        story["goal_date"] = u.d(look.goal_date) if look.goal_date else ""
        story["goal_earliest"] = u.d(look.goal_earliest) if look.goal_earliest else ""
        story["goal_latest"] = u.d(look.goal_latest) if look.goal_latest else ""
    elif a.client.goal_weight_kg is not None and a.current_weight_kg.known and not no_month_data:
        from .outlook import goal_status

        kind = ph.kind if ph is not None else None
        cur = float(a.current_weight_kg.value)  # type: ignore[arg-type]
        direction, status = goal_status(cur, a.client.goal_weight_kg, kind, _display(u))
        story["goal_status"] = status if status == "reached" else "none"
        story["goal_direction"] = direction
    extra_projection_days = look.days if look is not None else 0

    q = a.quality
    quality = {
        "days": str(q.days_in_period),
        "weight_days": str(q.weight_days),
        "intake_days": str(q.intake_days),
        "weight_share": u.pct(100 * q.weight_days / q.days_in_period, dp=0)
        if q.days_in_period
        else "",
        "intake_share": u.pct(100 * q.intake_days / q.days_in_period, dp=0)
        if q.days_in_period
        else "",
        "outliers": [{"date": u.d(d), "value": u.w(v)} for d, v in q.outliers],
        "gaps": [
            {"start": u.d(s), "end": u.d(e), "days": str((e - s).days + 1)} for s, e in q.gaps
        ],
        "warnings": [
            {"where": p.location, "message": p.message, "code": p.code} for p in q.warnings
        ],
        "unprintable": missing_glyphs(a.client.name + "".join(p.name for p in a.phases)),
    }
    methods = [
        {"code": m.code, "name": m.name, "reference": m.reference, "see": m.see or ""}
        for m in a.methods
    ]
    noise = a.trend.noise_sd_kg if a.trend is not None else None
    extra = {
        "noise_sd": u.w(noise) if noise is not None else "",
        "trend_method": a.trend.method if a.trend is not None else "",
        "bmi": u.number(a.bmi, 1) if a.bmi is not None else "",
        "age": str(a.age_years) if a.age_years is not None else "",
        "notes": list(a.notes),
        "projection_days": extra_projection_days,
        # the signals chart draws a dashed line only where there is a pre-deficit baseline
        "signal_baselines": any(
            s.baseline is not None and s.days > 0
            for s in a.signals
            if s.name in ("steps", "hunger", "energy")
        ),
        "planned_intake": False,  # set by the layout: whether the energy chart draws it
        # the signals' baseline is the time before the first deficit phase, or without one
        # the first 14 logged days (science.signals.summarise_signal)
        "signal_baseline_before_deficit": any(p.kind == "deficit" for p in a.phases),
    }
    return ClientView(
        practice=practice_view(config),
        client={"name": a.client.name, "id": a.client.client_id},
        month=a.month.label,
        month_code=a.month,
        as_of=u.d(a.as_of),
        weight_unit=u.weight_unit,
        energy_unit=u.energy_unit,
        phase=phase,
        special=list(a.special_handling),
        figures=figs,
        story=story,
        phases=[_phase_row(u, p) for p in a.phases],
        quality=quality,
        methods=methods,
        flags=[_flag_view(u, fl) for fl in a.flags],
        sections=config.report.sections,
        extra=extra,
        caution=caution_values(u),
    )


def _display(u: Units) -> Any:
    """A weight rounded as the report prints it (one decimal in the display unit)."""
    return lambda kg: round(float(u.weight(kg)), 1)


def _last_weigh_in(a: ClientAnalysis) -> dt.date | None:
    ok = np.isfinite(a.log.weight_used_kg) if a.log.n_days else np.zeros(0, bool)
    if not ok.any():
        return None
    return dt.date.fromisoformat(str(a.log.dates[ok][-1].astype("datetime64[D]")))


def headline_rate(a: ClientAnalysis) -> tuple[Estimate, Estimate, int]:
    """The one weekly rate a reader sees first (page 1, the overview): kg/week, % of body
    weight per week, and its span in weeks (0: the smoothed trend's slope).

    While a deficit phase runs, the rate of its last weeks that the progress section judges
    (named with its span), not the smoothed trend's slope, which lags a fresh stall;
    otherwise, and when the rapid-loss flag (which is about the smoothed slope) is up, the
    smoothed slope at the month's end, named as such.
    """
    rapid = any(fl.code == "rapid-loss" for fl in a.flags)
    p = a.plateau
    if (
        not rapid
        and p is not None
        and p.recent_rate_kg_per_week.known
        and p.recent_rate_pct_per_week.known
    ):
        return p.recent_rate_kg_per_week, p.recent_rate_pct_per_week, p.recent_days // 7
    return a.weekly_rate_kg, a.weekly_rate_pct, 0


def _holds_zero(est: Estimate) -> bool:
    return est.low is not None and est.high is not None and est.low <= 0.0 <= est.high


def _direction(est: Estimate) -> str:
    if not est.known or est.value is None:
        return "unknown"
    if abs(est.value) < 0.1:
        return "flat"
    return "down" if est.value < 0 else "up"


def _month_mask(a: ClientAnalysis) -> np.ndarray:
    return a.log.dates >= np.datetime64(a.month.first_day, "D")


def _bodyfat_figure(a: ClientAnalysis, u: Units) -> Figure:
    sessions = a.bodycomp
    if len(sessions) >= 2:
        first, last = sessions[0], sessions[-1]
        f = Figure("bodyfat")
        f.value = u.pp(last.bodyfat_pct - first.bodyfat_pct)
        f.interval = ""
        f.detail = f"{u.pct(first.bodyfat_pct)} → {u.pct(last.bodyfat_pct)}"
        f.interval = f"{u.d(first.date)} → {u.d(last.date)}"
        return f
    if len(sessions) == 1:
        return Figure("bodyfat", reason="one-session")
    return Figure("bodyfat", reason="no-skinfolds")
