"""What the analysis of one client produces: the contract between the science
pipeline (``reportgen.analysis``) and everything that shows or exports it
(reports, summary.csv, the overview).

All values are in canonical units (kg, kcal/day, %, dates).  A value the data
cannot support is ``None`` and carries a ``reason`` code instead; it is never
replaced by zero or a guess.  Wording lives in templates, not here: reasons
and flags are short stable codes plus numbers.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, field
from typing import Literal

from reportgen.io.model import Client, DailyLog, DateArray, FloatArray, Problem
from reportgen.month import ReportMonth

FlagSeverity = Literal["info", "caution", "urgent"]

Z80 = 1.2815515655446004  # two-sided 80 % normal quantile, scipy.stats.norm.ppf(0.9)

# Stable codes set by ``reportgen.analysis`` (templates word them; tests check that no
# other code appears).
# Estimate.reason when a value is missing:
REASON_CODES: tuple[str, ...] = (
    "too-few-days",  # window shorter than 14 days (no expenditure from fewer)
    "too-few-weigh-ins",  # fewer than 8 weigh-ins in the window, or no trend at all
    "too-few-intake-days",  # fewer than 7 logged intake days in the window
    "no-intake-logged",  # no intake at all in the window (a weight-only client)
    "special-handling",  # minor or pregnant client: no deficit or adaptation analysis
    "no-resting-equation",  # no baseline and no sex/age/height for a resting equation
    "no-observed",  # adaptation without an observed TDEE
    "no-expected",  # adaptation without an expected TDEE
    "no-baseline",  # no phases: the report month as one window has no baseline to expect from
    "no-data-in-month",  # no trend data inside the report month
    "baseline-phase",  # adaptation of the baseline phase itself (it is the reference)
    "early-phase",  # under 14 usable days after the first 7 of a phase that changed intake
    "not-estimable",  # the computation gave no finite value
    "not-assessed",  # adaptation evidence needs the client's own baseline and observed TDEE
    "not-measured",  # activity change: too few logged step counts in either window
    "no-intake",  # logging check without logged intake
)
# PhaseResult.status:
PHASE_STATUSES: tuple[str, ...] = ("ok", "running", "too-few-days", "special-handling")
# PhaseResult.notes:
PHASE_NOTE_CODES: tuple[str, ...] = (
    "early-phase-water-glycogen",  # under 21 days: glycogen and water dominate (deficit and
    # rate shown; no observed TDEE or adaptation when the phase changed intake)
    "expected-lower-confidence",  # expected TDEE from a resting equation x activity factor
    "baseline-first-weeks",  # baseline from the first weeks of data, not a maintenance phase
    "baseline-phase",  # this phase is the baseline: expected TDEE = its observed TDEE
    "implausible-adaptation",  # data alone far outside the literature for this cut: logging?
    "composition-change-from-skinfolds",  # fat/lean change from two skinfold sessions
    "composition-change-from-forbes",  # fat/lean change from the Forbes partition
)
# ClientAnalysis.notes ("skinfold-session-unusable" carries ":<ISO date>:<reason>",
# "resting-equations-unavailable" ":<reason>"; reasons from science.errors.NOT_COMPUTABLE_REASONS):
ANALYSIS_NOTE_CODES: tuple[str, ...] = (
    "too-few-weigh-ins",
    "bodycomp-needs-sex-age-weight",
    "skinfold-session-unusable",
    "bodyfat-fallback-unavailable",
    "bodyfat-unknown",
    "resting-equations-unavailable",
    "expenditure-too-few-days",
    "expenditure-too-few-intake-days",
)


@dataclass(frozen=True)
class Estimate:
    """A point estimate with an interval (default 80 %), or a reason it is missing."""

    value: float | None
    low: float | None = None
    high: float | None = None
    level: float = 0.80
    reason: str | None = None  # code such as "too-few-days" when value is None

    @property
    def known(self) -> bool:
        return self.value is not None

    @classmethod
    def missing(cls, reason: str) -> Estimate:
        return cls(value=None, reason=reason)

    @classmethod
    def normal(cls, value: float, sd: float) -> Estimate:
        """``value`` with the 80 % interval of a normal distribution of SD ``sd``."""
        return cls(value, value - Z80 * sd, value + Z80 * sd)

    @property
    def normal_sd(self) -> float:
        """The normal SD behind an 80 % interval (0.0 when there is no interval)."""
        if self.low is None or self.high is None:
            return 0.0
        return (self.high - self.low) / (2.0 * Z80)


NOT_ASSESSED = Estimate.missing("not-assessed")


@dataclass(frozen=True)
class TrendSeries:
    """Smoothed trend weight on the log's daily grid."""

    method: str  # "local-linear-trend"
    dates: DateArray
    level_kg: FloatArray
    level_low_kg: FloatArray  # 80 % band
    level_high_kg: FloatArray
    slope_kg_per_day: FloatArray
    slope_sd_kg_per_day: FloatArray
    noise_sd_kg: float  # estimated day-to-day weigh-in noise (observation SD)


@dataclass(frozen=True)
class BodyCompResult:
    """One skinfold session turned into body composition."""

    date: dt.date
    equation: str  # e.g. "jackson-pollock-3", "durnin-womersley-4", "bmi-deurenberg"
    conversion: str  # "siri" or "brozek" ("none" for BMI-based estimates)
    sum_mm: float | None  # sum of the equation's sites (None for BMI-based)
    sites: tuple[str, ...]
    density_g_ml: float | None
    bodyfat_pct: float
    bodyfat_se_pct: float  # equation standard error expressed in %BF
    weight_kg: float  # trend weight on that date
    fat_mass_kg: float
    lean_mass_kg: float
    rough: bool = False  # True for the BMI-based fallback
    warnings: tuple[str, ...] = ()  # codes: "age-outside-derivation", "sum-over-120", ...


@dataclass(frozen=True)
class PhaseResult:
    """One phase, analysed from its start to its end or the report month's end."""

    name: str
    kind: str
    start: dt.date
    end: dt.date | None  # as written in the book; None while running
    window_end: dt.date  # last day analysed (phase end or month end, whichever first)
    days: int
    weight_days: int
    intake_days: int
    trend_start_kg: float | None
    trend_end_kg: float | None
    trend_change_kg: float | None
    rate_kg_per_week: Estimate
    rate_pct_per_week: Estimate
    mean_intake_kcal: float | None
    target_kcal: float | None
    realised_deficit_kcal: Estimate  # positive = deficit
    observed_tdee_kcal: Estimate
    expected_tdee_kcal: Estimate
    expected_method: str | None  # "own-baseline" or "resting-equation" (lower confidence)
    # combined estimate (data and literature weighed by precision, with the logging-drift
    # component); negative = below expected.  See reportgen.science.adaptation.
    adaptation_kcal: Estimate
    adaptation_pct: Estimate  # of expected
    deficit_depth_pct: float | None  # realised deficit as % of maintenance
    days_in_deficit: int | None  # consecutive deficit days up to window end
    bodyfat_start_pct: float | None
    bodyfat_end_pct: float | None
    fat_mass_change_kg: float | None
    lean_mass_change_kg: float | None
    status: str  # "ok", "running", "too-few-days", "special-handling", ...
    notes: tuple[str, ...] = ()
    # The evidence behind adaptation_kcal, against the client's baseline (missing with
    # reason "not-assessed" where there is no own baseline or no observed TDEE):
    adaptation_data_kcal: Estimate = NOT_ASSESSED  # "your data alone"
    adaptation_typical_kcal: Estimate = NOT_ASSESSED  # "typical for a deficit like this"
    adaptation_implausible: bool = False  # data far outside the literature for this cut
    logging_drift_probability: float | None = None  # weight of the logging-drift component
    # the change in expenditure from the baseline, in parts (data alone)
    expenditure_change_kcal: Estimate = NOT_ASSESSED
    body_size_change_kcal: Estimate = NOT_ASSESSED  # expected: smaller body, less food
    activity_change_kcal: Estimate = NOT_ASSESSED  # logged steps; "not-measured" without
    metabolic_change_kcal: Estimate = NOT_ASSESSED  # remainder
    implied_intake_kcal: Estimate = NOT_ASSESSED  # intake the weights imply
    logging_gap_kcal: Estimate = NOT_ASSESSED  # logged minus implied intake


@dataclass(frozen=True)
class ExpenditureSeries:
    """Daily expenditure trajectory from the state-space model of weight with intake."""

    dates: DateArray
    tdee_kcal: FloatArray
    low_kcal: FloatArray
    high_kcal: FloatArray


@dataclass(frozen=True)
class Signal:
    """One adaptation signal beyond expenditure (steps, hunger, energy rating)."""

    name: str  # "steps", "hunger", "energy"
    baseline: float | None
    recent: float | None
    change: float | None  # recent - baseline, in the signal's unit
    change_pct: float | None
    slope_per_week: float | None
    direction: str  # "up", "down", "flat", "unknown"
    size: str  # "none", "small", "moderate", "large", "unknown"
    days: int


@dataclass(frozen=True)
class Projection:
    """Forward simulation at the current intake (Hall et al. 2011 adult model)."""

    start: dt.date
    intake_kcal: float
    dates: DateArray
    weight_kg: FloatArray
    low_kg: FloatArray
    high_kg: FloatArray
    goal_weight_kg: float | None
    goal_date: dt.date | None  # None with a goal means "not at this intake" within the horizon
    intake_for_rate_kcal: dict[float, Estimate] = field(default_factory=dict)  # %BW/week -> intake


@dataclass(frozen=True)
class Flag:
    """A safety or data flag; wording and advice come from templates by ``code``."""

    # e.g. "rapid-loss", "low-bmi", "low-intake", "minor", "pregnant", "implausible-adaptation"
    code: str
    severity: FlagSeverity
    values: dict[str, float | str] = field(default_factory=dict)


@dataclass(frozen=True)
class MethodUsed:
    """An equation or model used for this client, for the methods page."""

    code: str  # e.g. "jackson-pollock-3"
    name: str  # published name, e.g. "Jackson & Pollock 1978, 3-site"
    reference: str  # full citation
    see: str | None = None  # standard error, formatted with its unit


@dataclass(frozen=True)
class DataQuality:
    days_in_period: int
    weight_days: int
    intake_days: int
    outliers: tuple[tuple[dt.date, float], ...]  # excluded weigh-ins (date, kg)
    gaps: tuple[tuple[dt.date, dt.date], ...]  # runs of > 7 days without a weigh-in
    warnings: tuple[Problem, ...]  # from reading the book


@dataclass(frozen=True)
class PlateauPart:
    """One cause of a change in realised deficit (negative = it closed the deficit)."""

    code: str  # "intake", "body-size", "activity", "metabolic", "logging"
    kcal: Estimate  # 80 % interval; missing with reason "not-measured"


@dataclass(frozen=True)
class PlateauOption:
    """An option to discuss, never a prescription, with the numbers behind it."""

    code: str  # "intake-for-planned-rate", "extra-steps", "maintenance-break", "recheck"
    values: dict[str, float] = field(default_factory=dict)


@dataclass(frozen=True)
class PlateauResult:
    """Is progress stalling in the running deficit phase, why, and what could change.

    Filled by ``reportgen.analysis.plateau`` from ``reportgen.science.plateau*``.
    """

    phase_name: str
    phase_start: dt.date
    status: str  # science.plateau.PROGRESS_STATUSES
    reason: str | None  # science.plateau.STATUS_REASONS for too-early / too-few-data
    underlying: str | None  # the reading a water explanation set aside
    water_reasons: tuple[str, ...]
    recent_rate_pct_per_week: Estimate
    planned_rate_pct_per_week: float | None
    planned_source: str | None  # "target", "early-rate" or "target-and-early-rate"
    recent_days: int
    change_kcal: Estimate  # realised deficit now minus in the phase's first weeks
    parts: tuple[PlateauPart, ...]  # empty when the causes cannot be split
    leftover_kcal: float | None
    largest: str | None
    causes_reason: str | None  # why there are no parts
    intake_change_kcal: float | None  # logged intake now minus then
    completeness_change_pct: float | None  # share of days logged, now minus then [points]
    implied_intake_kcal: Estimate  # intake implied by weight now
    logging_gap_kcal: Estimate  # logged minus implied intake now
    metabolic_expected_kcal: float | None  # literature expectation of the change
    hunger_change: float | None  # mean rating now minus then (1-10 scale)
    energy_change: float | None
    gap_kcal: float | None  # planned minus recent realised deficit
    options: tuple[PlateauOption, ...]
    cautions: tuple[str, ...]
    # the same rate as recent_rate_pct_per_week, in kg/week at today's trend weight
    recent_rate_kg_per_week: Estimate = field(default_factory=lambda: Estimate.missing("no-rate"))

    def part(self, code: str) -> PlateauPart | None:
        for p in self.parts:
            if p.code == code:
                return p
        return None


@dataclass(frozen=True)
class ClientAnalysis:
    """Everything computed for one client for one report month."""

    client: Client
    month: ReportMonth  # "YYYY-MM"
    as_of: dt.date  # last day of the report month (analysis cut-off)
    age_years: int | None
    minor: bool
    special_handling: tuple[str, ...]  # "minor", "pregnant": no deficit analysis
    log: DailyLog  # cut at as_of; for charts
    trend: TrendSeries | None
    current_weight_kg: Estimate  # trend weight at as_of
    month_change_kg: Estimate  # trend change over the report month
    weekly_rate_kg: Estimate  # current weekly rate (kg/week, negative = loss)
    weekly_rate_pct: Estimate  # as % of body weight per week
    month_mean_intake_kcal: float | None
    bmi: float | None
    bodycomp: tuple[BodyCompResult, ...]  # per skinfold session, in date order
    bodyfat_fallback: BodyCompResult | None  # BMI-based rough estimate when no skinfolds
    resting_kcal: dict[str, float]  # equation code -> kcal/day at current weight
    phases: tuple[PhaseResult, ...]  # every phase so far, in date order
    current_phase: PhaseResult | None
    week_of_phase: int | None
    expenditure: ExpenditureSeries | None
    signals: tuple[Signal, ...]
    projection: Projection | None
    flags: tuple[Flag, ...]
    methods: tuple[MethodUsed, ...]
    quality: DataQuality
    notes: tuple[str, ...] = ()  # reason codes for things not shown
    plateau: PlateauResult | None = None  # the running deficit phase's progress, if any
