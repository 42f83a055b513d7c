"""The month's methods document (``methods.pdf``): one copy for the practice, beside the
overview, instead of equations and references in every client's report.

It lists every equation and model used for at least one client this month, with its
accuracy, reference and the number of clients it served, the safety rules with their
thresholds (taken from ``reportgen.science.flags``, so the page cannot drift from the
rules), and how trend, expenditure, adaptation and projection are made.
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Iterable, Sequence
from types import SimpleNamespace

from reportlab.lib.units import mm
from reportlab.platypus import Flowable, Spacer

from reportgen.analysis.baseline import BASELINE_FIRST_WEEKS_DAYS
from reportgen.analysis.quality import FLAG_INTAKE_DAYS
from reportgen.analysis.trend import RECENT_DAYS
from reportgen.config import Config
from reportgen.month import ReportMonth
from reportgen.results import MethodUsed
from reportgen.science import adaptation as A
from reportgen.science import diet_break as DB
from reportgen.science import flags as F
from reportgen.science import plateau as P
from reportgen.science.activity import (
    ACSM_HORIZONTAL_ML_O2_PER_KG_M,
    KCAL_PER_L_O2,
    STEP_LENGTH_PER_HEIGHT,
)
from reportgen.science.composition import RHO_FAT_KCAL_PER_KG, RHO_LEAN_KCAL_PER_KG
from reportgen.science.energy_density import GLYCOGEN_WATER_KCAL_PER_KG
from reportgen.science.expected import FALLBACK_REL_SD
from reportgen.science.hall import HALL_2011
from reportgen.science.rates import SHIFT_PRIOR_SD_KG, SHIFT_TAU_DAYS
from reportgen.unit_constants import KJ_PER_KCAL

from .cautions import caution_values
from .layout import data_table, practice_header
from .para import Paragraph
from .pdfbuild import Document, build, mark_heading
from .theme import page_size, theme_for
from .units import Units
from .viewmodel import ADAPT_MIN_PCT
from .wording import Wording, blocks, esc


def flag_rules(u: Units) -> list[tuple[str, str, str]]:
    """(flag, rule, source) for every safety rule, thresholds from ``science.flags``."""
    e = u.e
    return [
        (
            "Pregnancy recorded",
            "pregnant in the client list: no deficit analysis",
            "common practice",
        ),
        (
            "Client is under 18",
            f"age under {F.ADULT_AGE_YEARS} years: no deficit analysis",
            "common practice",
        ),
        (
            "BMI is below 18.5",
            f"BMI under {F.BMI_UNDERWEIGHT:.1f} kg/m² (urgent under {F.BMI_MODERATE_THINNESS:.1f})",
            "WHO 2000, TRS 894",
        ),
        (
            "Intake at very-low-calorie-diet level",
            f"mean logged intake over the last {FLAG_INTAKE_DAYS} days under "
            f"{e(F.INTAKE_VLCD_KCAL)}",
            "common practice",
        ),
        (
            "Intake is very low",
            f"under {e(F.INTAKE_FLOOR_WOMEN_KCAL)} (women, sex unknown) or "
            f"{e(F.INTAKE_FLOOR_MEN_KCAL)} (men)",
            "common practice; 2013 AHA/ACC/TOS guideline",
        ),
        (
            "Weight is coming off faster than recommended",
            f"current weekly rate a loss over {F.RAPID_LOSS_PCT_PER_WEEK:.1f} % of body weight, "
            f"or over that in each of the last {F.RAPID_LOSS_MIN_WEEKS} weeks",
            "Helms, Aragon & Fitschen 2014",
        ),
        (
            "Body fat near essential levels",
            f"at or under {F.ESSENTIAL_FAT_MEN_PCT:.0f} % (men) or "
            f"{F.ESSENTIAL_FAT_WOMEN_PCT:.0f} % (women)",
            "common practice",
        ),
        (
            "Expenditure estimate looks implausible",
            f"the client's own expenditure gap more than {A.IMPLAUSIBLE_Z:.1f} SDs from what "
            "the literature expects for a deficit of that depth and length",
            "Hall et al. 2011 (adaptive thermogenesis); Leibel et al. 1995 (spread); judgment",
        ),
    ]


def _per_kg(u: Units, kcal_per_kg: float) -> str:
    """An energy density in the configured energy unit, e.g. '9,440 kcal/kg'."""
    if u.energy_unit == "kJ":
        return f"{kcal_per_kg * KJ_PER_KCAL:,.0f} kJ/kg"
    return f"{kcal_per_kg:,.0f} kcal/kg"


def _share(x: float) -> str:
    return f"{x * 100:.0f} %"


def method_values(u: Units) -> dict[str, str]:
    """The constants the methods text quotes, taken from the code that uses them, so the
    page cannot drift from the methods."""
    hall = HALL_2011
    per_kg_day = "kJ" if u.energy_unit == "kJ" else "kcal"
    k = KJ_PER_KCAL if u.energy_unit == "kJ" else 1.0
    return {
        "rho_fat": _per_kg(u, RHO_FAT_KCAL_PER_KG),
        "rho_lean": _per_kg(u, RHO_LEAN_KCAL_PER_KG),
        "rho_glycogen": _per_kg(u, GLYCOGEN_WATER_KCAL_PER_KG),
        "shift_tau": u.number(SHIFT_TAU_DAYS, 0),
        "shift_sd": u.w(SHIFT_PRIOR_SD_KG, dp=1),
        "baseline_weeks": str(BASELINE_FIRST_WEEKS_DAYS // 7),
        "gamma_fat": f"{hall.gamma_fat_kcal_per_kg_day * k:.1f} {per_kg_day}/day",
        "gamma_lean": f"{hall.gamma_lean_kcal_per_kg_day * k:.0f} {per_kg_day}/day",
        "beta_tef": _share(hall.beta_tef),
        "fallback_sd": _share(FALLBACK_REL_SD),
        "beta_at": f"{hall.beta_at:.2f}",
        "tau_at": u.number(hall.tau_at_days, 0),
        "between_cv": f"{A.BETWEEN_PERSON_CV:.1f}",
        "coef_cv": f"{A.COEFFICIENT_CV:.1f}",
        "lit_floor": u.e(A.LITERATURE_SD_FLOOR_KCAL),
        "dof": u.number(A.PRIOR_DOF, 0),
        "unmeasured_sd": u.e(A.UNMEASURED_ACTIVITY_SD_KCAL),
        "drift_prior": _share(A.LOGGING_DRIFT_PRIOR),
        "drift_sd": _share(A.LOGGING_DRIFT_SD_FRACTION),
        "implausible_z": f"{A.IMPLAUSIBLE_Z:.1f}",
        "acsm_ml": f"{ACSM_HORIZONTAL_ML_O2_PER_KG_M:.1f}",
        "kcal_per_l": f"{KCAL_PER_L_O2:.0f}",
        "step_women": f"{STEP_LENGTH_PER_HEIGHT['female']:.3f}",
        "step_men": f"{STEP_LENGTH_PER_HEIGHT['male']:.3f}",
        "recent_window_weeks": str(P.RECENT_WINDOW_DAYS // 7),
        "min_recent_weeks": str(P.MIN_RECENT_DAYS // 7),
        "longer_weeks": " then ".join(str(d // 7) for d in P.LONGER_WINDOWS_DAYS),
        "glycogen_weeks": str(P.GLYCOGEN_WEEKS_DAYS // 7),
        "early_weeks": f"{P.GLYCOGEN_WEEKS_DAYS // 7 + 1}-"
        f"{(P.GLYCOGEN_WEEKS_DAYS + P.EARLY_WINDOW_DAYS) // 7}",
        "on_track": _share(P.ON_TRACK_SHARE),
        "gain_margin": u.pct(P.GAIN_MARGIN_PCT_PER_WEEK, dp=1),
        "min_phase_weeks": str(P.MIN_PHASE_DAYS // 7),
        "break_weeks_min": str(DB.BREAK_MIN_DAYS_IN_DEFICIT // 7),
        "break_depth": u.pct(DB.BREAK_MIN_DEPTH_PCT, dp=0),
        "break_weeks": str(DB.BREAK_WEEKS),
    }


def methods_used(per_client: Iterable[Sequence[MethodUsed]]) -> list[tuple[MethodUsed, int]]:
    """Every method used for at least one client, with the number of clients, in first-seen
    order (the analysis lists them in pipeline order)."""
    counts: Counter[str] = Counter()
    first: dict[str, MethodUsed] = {}
    for methods in per_client:
        for code in dict.fromkeys(m.code for m in methods):
            counts[code] += 1
        for m in methods:
            first.setdefault(m.code, m)
    return [(first[c], counts[c]) for c in first if c in counts]


def render_methods(
    per_client: Iterable[Sequence[MethodUsed]],
    clients: int,
    month: ReportMonth | str,
    config: Config,
) -> bytes:
    """The month's methods document as PDF bytes (A4 or letter, portrait)."""
    theme = theme_for(config.report.accent_colour)
    words = Wording(config, "report/methods.j2")
    u = Units.from_config(config)
    L = words.labels
    pagesize = page_size(config)
    width = pagesize[0] - 2 * 18 * mm
    used = methods_used(per_client)
    vm = SimpleNamespace(
        month=ReportMonth(month).label,
        count=str(clients),
        activity_factor=u.number(config.analysis.activity_factor, 2),
        adapt_min=u.pct(ADAPT_MIN_PCT, dp=0),
        **method_values(u),
        projection_weeks=str(config.report.projection_weeks),
        recent_weeks=str(RECENT_DAYS // 7),
        **caution_values(u),
        methods=[
            SimpleNamespace(name=m.name, see=m.see or "", reference=m.reference, clients=str(n))
            for m, n in used
        ],
    )
    story: list[Flowable] = []
    story += practice_header(config, theme, width)
    head = blocks(words.text("header", vm), theme)
    if head and isinstance(head[0], Paragraph):
        mark_heading(head[0], 0, L["document"])
    story += head
    story.append(Spacer(1, 3 * mm))

    def hook(para: Paragraph, level: int) -> None:
        mark_heading(para, level + 1)

    story += blocks(words.text("body", vm), theme, heading_hook=hook)
    rows = [[esc(a), esc(b), esc(c)] for a, b, c in flag_rules(u)]
    story.append(
        data_table(
            [esc(c) for c in L["flag_cols"]],
            rows,
            [0.3 * width, 0.45 * width, 0.25 * width],
            theme,
            right_from=3,
        )
    )
    story.append(Spacer(1, 3 * mm))
    story += blocks(words.text("methods_intro", vm), theme, heading_hook=hook)
    for m in vm.methods:
        story.append(Paragraph(words.text("method_line", m), theme["bullet"], bulletText="\u2022"))
    story.append(Spacer(1, 3 * mm))
    story += blocks(words.text("cautions", vm), theme, heading_hook=hook)
    story.append(Paragraph(words.text("footnote", vm), theme["small"]))
    doc = Document(
        title=f"{L['document']}: {vm.month}",
        author=config.practice.name or "reportgen",
        subject=f"{L['subject']}, {vm.month}",
        pagesize=pagesize,
        footer_right=config.practice.name,
        header=f"{L['document']} · {vm.month}",
        page_label=lambda n: f"{L['page']} {n} {L['of']}",
    )
    return build(story, doc, theme)
