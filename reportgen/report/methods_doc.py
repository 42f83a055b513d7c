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

from reportgen.analysis.quality import FLAG_INTAKE_DAYS
from reportgen.analysis.trend import RECENT_DAYS
from reportgen.config import Config
from reportgen.month import ReportMonth
from reportgen.results import MethodUsed
from reportgen.science import flags as F

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
            "the client's own expenditure gap more than 2.5 SDs from what the literature "
            "expects for a deficit of that depth and length",
            "Hall et al. 2011 (adaptive thermogenesis); Leibel et al. 1995 (spread); judgment",
        ),
    ]


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
        projection_weeks=str(config.report.projection_weeks),
        recent_weeks=str(RECENT_DAYS // 7),
        adult_age=str(F.ADULT_AGE_YEARS),
        bmi_low=u.number(F.BMI_UNDERWEIGHT, 1),
        floor_women=u.e(F.INTAKE_FLOOR_WOMEN_KCAL),
        floor_men=u.e(F.INTAKE_FLOOR_MEN_KCAL),
        vlcd=u.e(F.INTAKE_VLCD_KCAL),
        rapid=u.pct(F.RAPID_LOSS_PCT_PER_WEEK, dp=0),
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
