"""The cohort overview: one line per client, those who need attention first, then the failures."""

from __future__ import annotations

from collections.abc import Sequence
from types import SimpleNamespace

import numpy as np
from reportlab.lib.units import mm
from reportlab.platypus import Flowable, Spacer

from reportgen.config import Config
from reportgen.month import ReportMonth
from reportgen.results import ClientAnalysis

from .cautions import caution_values
from .layout import data_table, practice_header
from .overview_model import OverviewLine
from .para import Paragraph
from .pdfbuild import Document, build, mark_heading
from .theme import page_size, theme_for
from .units import DASH, Units
from .viewmodel import headline_rate
from .wording import Wording, blocks, esc

# Attention score: an urgent flag outranks any number of cautions, a caution any number of notes.
SEVERITY_WEIGHT = {"urgent": 10_000, "caution": 100, "info": 1}
# Fewer than half the month's days with a weigh-in also calls for a look (common practice).
SPARSE_LOGGING_WEIGHT = 50
# A stall or a gain in a deficit phase comes right after the urgent flags (above cautions).
PROGRESS_WEIGHT = {"stalled": 1_000, "gaining": 1_000}


def make_overview_line(analysis: ClientAnalysis) -> OverviewLine:
    """The client's line in the overview (small and picklable: built in the worker)."""
    a = analysis
    days = a.month.days
    first = np.datetime64(a.month.first_day, "D")
    after = first + days
    in_month = (a.log.dates >= first) & (a.log.dates < after)
    weights = a.log.weight_used_kg
    weight_days = int(np.sum(in_month & np.isfinite(weights)))
    intake_days = int(np.sum(in_month & np.isfinite(a.log.intake_kcal)))
    ph = a.current_phase
    bf_change = None
    if ph is not None and ph.bodyfat_start_pct is not None and ph.bodyfat_end_pct is not None:
        bf_change = ph.bodyfat_end_pct - ph.bodyfat_start_pct
    flags = tuple((f.code, f.severity) for f in a.flags)
    attention = sum(SEVERITY_WEIGHT.get(sev, 0) for _, sev in flags)
    if weight_days * 2 < days:
        attention += SPARSE_LOGGING_WEIGHT
    progress = a.plateau.status if a.plateau is not None else None
    attention += PROGRESS_WEIGHT.get(progress or "", 0)
    return OverviewLine(
        client_id=a.client.client_id,
        name=a.client.name,
        phase_name=ph.name if ph else None,
        phase_kind=ph.kind if ph else None,
        week_of_phase=a.week_of_phase,
        month_change_kg=a.month_change_kg.value,
        weekly_rate_pct=headline_rate(a)[1].value,  # the rate of the client's page 1
        realised_deficit_kcal=ph.realised_deficit_kcal.value if ph else None,
        observed_tdee_kcal=ph.observed_tdee_kcal.value if ph else None,
        adaptation_kcal=ph.adaptation_kcal.value if ph else None,
        adaptation_pct=ph.adaptation_pct.value if ph else None,
        bodyfat_change_pct=bf_change,
        weight_days=weight_days,
        intake_days=intake_days,
        days_in_month=days,
        flags=flags,
        attention=attention,
        progress_status=progress,
        adaptation_low_kcal=ph.adaptation_kcal.low if ph else None,
        adaptation_high_kcal=ph.adaptation_kcal.high if ph else None,
    )


def sort_lines(lines: list[OverviewLine]) -> list[OverviewLine]:
    """Attention first (highest score), then by name and id so the order is stable."""
    return sorted(lines, key=lambda ln: (-ln.attention, ln.name.casefold(), ln.client_id))


def render_overview(
    lines: list[OverviewLine],
    failures: Sequence[tuple[str, str] | tuple[str, str, str]],
    month: ReportMonth | str,
    config: Config,
) -> bytes:
    """The coach's overview of every client for the month as PDF bytes (landscape).

    ``failures`` are (client id, reason) or (client id, name, reason): the clients without a
    report, listed by name and id after the table."""
    theme = theme_for(config.report.accent_colour)
    words = Wording(config, "report/overview.j2")
    u = Units.from_config(config)
    L = words.labels
    pagesize = page_size(config, wide=True)
    margin = 14 * mm
    width = pagesize[0] - 2 * margin
    ordered = sort_lines(list(lines))
    vm = SimpleNamespace(
        month=ReportMonth(month).label,
        count=str(len(ordered)),
        attention=str(sum(1 for ln in ordered if ln.flags)),
        stalled=str(sum(1 for ln in ordered if ln.progress_status in PROGRESS_WEIGHT)),
        failed=str(len(failures)),
        caution=caution_values(u),
    )
    story: list[Flowable] = []
    story += practice_header(config, theme, width)[:1]
    head = blocks(words.text("header", vm), theme)
    if head and isinstance(head[0], Paragraph):
        mark_heading(head[0], 0, L["document"])
    story += head
    story.append(Spacer(1, 3 * mm))

    units = [x.replace("{w}", u.weight_unit).replace("{e}", u.energy_label) for x in L["units"]]
    header = [
        esc(c) + (f"<br/>{esc(x)}" if x else "") for c, x in zip(L["cols"], units, strict=True)
    ]
    rows = []
    for ln in ordered:
        view = SimpleNamespace(
            phase_name=ln.phase_name,
            phase_kind=ln.phase_kind,
            week=str(ln.week_of_phase) if ln.week_of_phase else "",
        )
        adapt = u.e(ln.adaptation_kcal, signed=True, unit=False)
        if u.zero_shown(ln.adaptation_low_kcal, ln.adaptation_high_kcal):
            adapt += " (≈0)"
        elif ln.adaptation_pct is not None:
            adapt += f" ({u.pct(ln.adaptation_pct, dp=0, signed=True)})"
        # no weigh-in in the month: the trend change and rate would be extrapolations
        measured = ln.weight_days > 0
        flags_cell = words.text("flags_cell", ln.flags)
        if not measured:
            flags_cell = words.text("no_data_cell") + (", " + flags_cell if flags_cell else "")
        rows.append(
            [
                f"<b>{esc(ln.name)}</b><br/>{esc(ln.client_id)}",
                words.text("phase_cell", view),
                words.text("progress_cell", ln.progress_status),
                esc(u.w(ln.month_change_kg if measured else None, signed=True, unit=False)),
                esc(u.number(ln.weekly_rate_pct if measured else None, 2, signed=True)),
                esc(u.e(ln.realised_deficit_kcal, unit=False)),
                esc(u.e(ln.observed_tdee_kcal, unit=False)),
                esc(adapt),
                esc(u.number(ln.bodyfat_change_pct, 1, signed=True)),
                esc(f"{ln.weight_days} / {ln.intake_days} of {ln.days_in_month}"),
                flags_cell or DASH,
            ]
        )
    fr = [0.13, 0.14, 0.07, 0.065, 0.055, 0.06, 0.07, 0.085, 0.055, 0.09, 0.175]
    if rows:
        story.append(
            data_table(header, rows, [f * width for f in fr], theme, right_from=3, right_to=10)
        )
    else:
        story.append(Paragraph(esc(L["none"]), theme["body"]))
    story.append(Spacer(1, 2 * mm))
    story.append(Paragraph(words.text("footnote", vm), theme["small"]))
    story.append(Paragraph(words.text("caution", vm), theme["small"]))
    if failures:
        story.append(Spacer(1, 5 * mm))
        h = Paragraph(esc(L["failed"]), theme["h2"])
        mark_heading(h, 1)
        story.append(h)
        frows = []
        for item in sorted(failures):
            cid, reason = item[0], item[-1]
            name = item[1] if len(item) == 3 else ""
            who = f"<b>{esc(name)}</b><br/>{esc(cid)}" if name else f"<b>{esc(cid)}</b>"
            frows.append([who, esc(reason)])
        story.append(
            data_table(
                [esc(c) for c in L["failed_cols"]],
                frows,
                [0.14 * width, 0.86 * width],
                theme,
                right_from=2,
            )
        )
    doc = Document(
        title=f"{L['document']}: {vm.month}",
        author=config.practice.name or "reportgen",
        subject=f"{L['subject']}, {vm.month}",
        pagesize=pagesize,
        footer_right=config.practice.name,
        header=f"{L['document']} · {vm.month}",
        page_label=lambda n: f"{L['page']} {n} {L['of']}",
        margin=margin,
    )
    return build(story, doc, theme)
