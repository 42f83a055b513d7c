"""The client report: overview with "how we estimate this", charts, phase table, data
quality and cautions, on at most four A4 pages.

Equations, standard errors and references are not in the client report: they are for the
practice and sit in the practitioner summary."""

from __future__ import annotations

import datetime as dt
import functools
import time
from dataclasses import dataclass, field

from reportlab.lib.units import mm
from reportlab.platypus import Flowable, PageBreak, Spacer

from reportgen.config import Config
from reportgen.results import ClientAnalysis

from .charts import (
    CHARTS,
    FIGURES,
    ChartContext,
    ChartPages,
    chart_pages,
    has_planned_intake,
    legend,
)
from .layout import card_grid, chart_block, data_table, practice_header, section_break
from .outlook import outlook
from .para import Paragraph
from .pdfbuild import ChartSlot, Document, build, mark_heading
from .theme import Theme, page_size, theme_for
from .units import Units
from .viewmodel import ClientView, client_view
from .wording import Wording, blocks, esc

# Chart box heights in mm (the width is the text width).
CHART_HEIGHTS_MM = {"weight": 84, "energy": 76, "signals": 78, "bodycomp": 46, "projection": 56}
CAUTIONS_MIN_MM = 110  # about the height of the cautions without the practice contact
HISTORY_DAYS = 183  # the time axis shows at most the last six months
MIN_AXIS_DAYS = 28  # and at least four weeks, so a few early days do not fill the width


@dataclass
class Timing:
    """Seconds spent drawing charts and laying out pages (for the benchmark)."""

    charts_s: float = 0.0
    layout_s: float = 0.0
    per_chart_s: dict[str, float] = field(default_factory=dict)


def _axis_start(a: ClientAnalysis) -> dt.date:
    first = a.as_of - dt.timedelta(days=MIN_AXIS_DAYS - 1)
    if a.log.n_days:
        first = min(first, dt.date.fromisoformat(str(a.log.dates[0].astype("datetime64[D]"))))
    return max(first, a.as_of - dt.timedelta(days=HISTORY_DAYS - 1))


def chart_context(
    a: ClientAnalysis, config: Config, width_mm: float, labels: dict[str, str]
) -> ChartContext:
    u = Units.from_config(config)
    return ChartContext(
        u,
        labels,
        config.report.accent_colour,
        width_mm,
        _axis_start(a),
        a.as_of,
        projection_days=projection_days(a, config),
    )


def projection_days(a: ClientAnalysis, config: Config) -> int:
    """Days of the projection the report shows: the configured weeks, none without a
    weigh-in in the report month (the text then makes no projection either)."""
    if a.quality.weight_days == 0:
        return 0
    u = Units.from_config(config)
    look = outlook(a, config.report.projection_weeks, lambda kg: round(float(u.weight(kg)), 1))
    return look.days if look is not None else 0


def draw_charts(
    a: ClientAnalysis,
    config: Config,
    width_mm: float,
    labels: dict[str, str],
    timing: Timing | None = None,
) -> dict[str, bytes | None]:
    ctx = chart_context(a, config, width_mm, labels)
    out: dict[str, bytes | None] = {}
    for key, fn in CHARTS.items():
        t0 = time.perf_counter()
        if key == "projection" and a.special_handling:
            out[key] = None
        else:
            out[key] = fn(a, ctx, CHART_HEIGHTS_MM[key])
        if timing is not None:
            timing.per_chart_s[key] = time.perf_counter() - t0
    return out


def draw_chart_pages(
    a: ClientAnalysis,
    config: Config,
    width_mm: float,
    labels: dict[str, str],
    timing: Timing | None = None,
) -> ChartPages | None:
    """Every chart with data, drawn into one PDF (one page each, fonts embedded once)."""
    ctx = chart_context(a, config, width_mm, labels)
    figures = [
        (key, functools.partial(fn, a, ctx, CHART_HEIGHTS_MM[key]))
        for key, fn in FIGURES.items()
        if not (key == "projection" and a.special_handling)
    ]
    clock = [time.perf_counter()]

    def lap(key: str) -> None:
        now = time.perf_counter()
        if timing is not None:
            timing.per_chart_s[key] = now - clock[0]
        clock[0] = now

    pages = chart_pages(figures, lap)
    if timing is not None and figures:  # the fonts are embedded when the file is closed
        timing.per_chart_s["fonts+file"] = time.perf_counter() - clock[0]
    return pages


def _figure_items(vm: ClientView, words: Wording) -> list[tuple[str, str, bool, str]]:
    labels = words.labels["figures"]
    items = []
    for key in ("weight", "change", "rate", "intake", "deficit", "tdee", "adaptation", "bodyfat"):
        f = vm.figures[key]
        if f.known:
            value = esc(f.value)
        elif f.reason == "no-data-in-month":
            value = esc(words.labels["not_measured"])  # nothing measured: not a guess either
        elif f.reason in words.labels["not_estimated_for"]:
            value = esc(words.labels["not_estimated"])  # by design, not for lack of data
        else:
            value = esc(words.labels["not_enough"])
        items.append((labels[key], value, f.known, words.text("figure_note", f, vm).strip()))
    return items


def _heading_hook(para: Paragraph, level: int) -> None:
    mark_heading(para, level)


def render_client_report(
    analysis: ClientAnalysis, config: Config, *, timing: Timing | None = None
) -> bytes:
    """The client's monthly report as PDF bytes (at most 4 A4 pages with every section)."""
    theme = theme_for(config.report.accent_colour)
    words = Wording(config, "report/client.j2")
    vm = client_view(analysis, config)
    axis = chart_context(analysis, config, 0.0, {})
    vm.extra["planned_intake"] = has_planned_intake(analysis, axis)
    pagesize = page_size(config)
    width = pagesize[0] - 2 * 18 * mm
    sections = set(config.report.sections)

    t0 = time.perf_counter()
    charts: ChartPages | None = None
    if "charts" in sections:
        charts = draw_chart_pages(analysis, config, width / mm, words.labels["chart"], timing)
    t1 = time.perf_counter()

    story: list[Flowable] = []
    story += practice_header(config, theme, width)
    head = blocks(words.text("header", vm), theme)
    if head and isinstance(head[0], Paragraph):
        mark_heading(head[0], 0, words.labels["outline_overview"])
    story += head
    story.append(Spacer(1, 4 * mm))
    if "overview" in sections:
        story += card_grid(_figure_items(vm, words), theme, width)
        story.append(Spacer(1, 2 * mm))
        story += blocks(words.text("narrative", vm), theme, heading_hook=_heading_hook)

    if "methods" in sections:
        # plain-language "how we estimate this" fills page 1 after the narrative; the
        # equations, standard errors and references are in the practitioner summary
        story.append(section_break(40 * mm))
        story += blocks(words.text("methods", vm), theme, heading_hook=_heading_hook)

    slots: list[ChartSlot] = []
    if "charts" in sections:
        story.append(PageBreak())
        story += blocks(words.text("charts_intro", vm), theme, heading_hook=_heading_hook)
        titles = words.labels["charts"]
        ctx = chart_context(analysis, config, width / mm, words.labels["chart"])
        for key in CHARTS:
            slot = None
            if charts is not None and key in charts.pages:
                slot = ChartSlot(key, width, CHART_HEIGHTS_MM[key] * mm)
                slots.append(slot)
            story.append(
                chart_block(
                    titles[key],
                    slot,
                    words.text("chart_missing", key, vm),
                    words.text("chart_caption", key, vm),
                    theme,
                    legend(key, analysis, ctx) if slot is not None else (),
                )
            )

    # phases, data quality and the cautions share the last page; they follow the charts on
    # the same page when a client has few charts (no half-empty pages)
    story.append(section_break(70 * mm))
    if "phases" in sections:
        story += blocks(words.text("phases", vm), theme, heading_hook=_heading_hook)
        story.append(_phase_table(vm, words, theme, width))
        story.append(Spacer(1, 4 * mm))
    if "quality" in sections:
        story.append(section_break(35 * mm))
        story += blocks(words.text("quality", vm), theme, heading_hook=_heading_hook)
        story.append(Spacer(1, 3 * mm))
    # the cautions start where most of them fit, so their heading is not left at a page foot
    story.append(section_break(CAUTIONS_MIN_MM * mm))
    story += blocks(words.text("cautions", vm), theme, heading_hook=_heading_hook)

    labels = words.labels
    doc = Document(
        title=f"{labels['document']}: {analysis.client.name}, {vm.month}",
        author=config.practice.name or "reportgen",
        subject=f"{labels['subject']}, {vm.month}",
        pagesize=pagesize,
        header=f"{analysis.client.name} · {labels['document']} · {vm.month}",
        footer_right=config.practice.name,
        page_label=lambda n: f"{labels['page']} {n} {labels['of']}",
    )
    data = build(story, doc, theme, charts, slots)
    t2 = time.perf_counter()
    if timing is not None:
        timing.charts_s += t1 - t0
        timing.layout_s += t2 - t1
    return data


def _phase_table(vm: ClientView, words: Wording, theme: Theme, width: float) -> Flowable:
    labels = words.labels
    cols = labels["phase_cols"]
    units = [x.replace("{e}", vm.energy_unit + "/day") for x in labels["phase_units"]]
    header = [esc(c) + (f"<br/>{esc(u)}" if u else "") for c, u in zip(cols, units, strict=True)]
    rows = [
        [
            f"<b>{esc(p['name'])}</b><br/>{esc(p['kind'])}",
            esc(p["dates"]),
            p["days"],
            esc(p["intake"]),
            esc(p["deficit"]),
            esc(p["rate"]),
            esc(p["tdee"]),
            esc(p["adaptation"]),
            esc(p["bodyfat"]),
        ]
        for p in vm.phases
    ]
    if not rows:
        return Paragraph(esc(words.text("no_phases", vm)), theme["body"])
    fr = [0.19, 0.2, 0.06, 0.09, 0.09, 0.08, 0.1, 0.1, 0.09]
    return data_table(header, rows, [f * width for f in fr], theme, right_from=2)
