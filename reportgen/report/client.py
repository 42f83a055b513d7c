"""The client report: overview, "Is progress stalling?", "how we estimate this", charts,
phase table, data quality and cautions, on at most four A4 pages.

Equations, standard errors and references are not in the client report: they are for the
practice and sit in the practitioner summary."""

from __future__ import annotations

import datetime as dt
import functools
import time
from dataclasses import dataclass, field

from reportlab.lib.units import mm
from reportlab.platypus import Flowable, KeepTogether, PageBreak, Spacer

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
from .plateau_view import PlateauView, plateau_flowables, plateau_view, showing_causes
from .theme import MARGIN, Theme, page_size, theme_for
from .units import Units
from .viewmodel import ClientView, client_view
from .wording import Wording, blocks, esc, whole_dates

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
        title = labels[key]
        if key == "rate" and vm.story["rate_span_weeks"]:  # the span the page-1 rate covers
            title = labels["rate_recent"].replace("{weeks}", vm.story["rate_span_weeks"])
        items.append((title, value, f.known, words.text("figure_note", f, vm).strip()))
    return items


def _heading_hook(para: Paragraph, level: int) -> None:
    mark_heading(para, level)


def client_page_view(
    analysis: ClientAnalysis, config: Config
) -> tuple[ClientView, PlateauView | None]:
    """The client report's view with the page-level facts its wording reads from
    ``vm.extra``, and the progress section's view (None when it is not shown).  Every
    route that fills ``templates/report/client.j2`` starts from this."""
    vm = client_view(analysis, config)
    axis = chart_context(analysis, config, 0.0, {})
    vm.extra["planned_intake"] = has_planned_intake(analysis, axis)
    pv = plateau_view(analysis, config) if "overview" in config.report.sections else None
    # the progress section states the ratings beside the causes and offers the break
    causes = pv is not None and showing_causes(pv)
    vm.extra["plateau_causes"] = causes
    vm.extra["plateau_hunger"] = causes and pv is not None and bool(pv.hunger_words)
    vm.extra["plateau_energy"] = causes and pv is not None and bool(pv.energy_words)
    # when the progress section is shown it decides about a break (as an option or not,
    # by science.diet_break on the recent depth); the narrative's line stays out of it
    vm.extra["plateau_break"] = pv is not None
    return vm, pv


def render_client_report(
    analysis: ClientAnalysis, config: Config, *, timing: Timing | None = None
) -> bytes:
    """The client's monthly report as PDF bytes (at most 4 A4 pages with every section)."""
    theme = theme_for(config.report.accent_colour)
    words = Wording(config, "report/client.j2")
    vm, _ = client_page_view(analysis, config)
    pagesize = page_size(config)
    width = pagesize[0] - 2 * 18 * mm
    sections = set(config.report.sections)

    t0 = time.perf_counter()
    charts: ChartPages | None = None
    if "charts" in sections:
        charts = draw_chart_pages(analysis, config, width / mm, words.labels["chart"], timing)
    t1 = time.perf_counter()

    first: list[Flowable] = []
    first += practice_header(config, theme, width)
    head = blocks(words.text("header", vm), theme)
    if head and isinstance(head[0], Paragraph):
        mark_heading(head[0], 0, words.labels["outline_overview"])
    first += head
    first.append(Spacer(1, 4 * mm))
    if "overview" in sections:
        first += card_grid(_figure_items(vm, words), theme, width)
        first.append(Spacer(1, 2 * mm))
        first += blocks(words.text("narrative", vm), theme, heading_hook=_heading_hook)

    # "Is progress stalling?" in one piece, after the narrative when page 1 has room
    plateau: list[Flowable] = []
    if "overview" in sections:
        found = plateau_flowables(
            analysis, config, theme, width, "client", heading_hook=_heading_hook
        )
        if found:
            plateau = [Spacer(1, 3 * mm), KeepTogether(found)]

    # plain-language "how we estimate this"; the equations, standard errors and
    # references are in the practitioner summary
    methods: list[Flowable] = []
    if "methods" in sections:
        methods = blocks(words.text("methods", vm), theme, heading_hook=_heading_hook)

    slots: list[ChartSlot] = []
    chart_story: list[Flowable] = []
    if "charts" in sections:
        chart_story += blocks(words.text("charts_intro", vm), theme, heading_hook=_heading_hook)
        titles = words.labels["charts"]
        ctx = chart_context(analysis, config, width / mm, words.labels["chart"])
        for key in CHARTS:
            slot = None
            if charts is not None and key in charts.pages:
                slot = ChartSlot(key, width, CHART_HEIGHTS_MM[key] * mm)
                slots.append(slot)
            chart_story.append(
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
    last: list[Flowable] = []
    if "phases" in sections:
        last += blocks(words.text("phases", vm), theme, heading_hook=_heading_hook)
        last.append(_phase_table(vm, words, theme, width))
        last.append(Spacer(1, 4 * mm))
    if "quality" in sections:
        last.append(section_break(35 * mm))
        last += blocks(words.text("quality", vm), theme, heading_hook=_heading_hook)
        last.append(Spacer(1, 3 * mm))
    # the cautions start where most of them fit, so their heading is not left at a page foot
    cautions = [section_break(CAUTIONS_MIN_MM * mm)]
    cautions += blocks(words.text("cautions", vm), theme, heading_hook=_heading_hook)

    story = _arrange(first, plateau, methods, chart_story, last, cautions, width, pagesize)

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


def _stack_height(flows: list[Flowable], width: float, height: float) -> float:
    """Height of flowables laid one under the other as a frame lays them: a space before
    a flowable counts only beyond the space after the one above it."""
    total = 0.0
    after: float | None = None  # space after the flowable above (None: at the top)
    for f in _flatten(flows):
        h = f.wrap(width, height)[1]
        if after is not None:
            total += after + max(f.getSpaceBefore() - after, 0.0)
        total += h
        after = f.getSpaceAfter()
    return total


def _flatten(flows: list[Flowable]) -> list[Flowable]:
    out: list[Flowable] = []
    for f in flows:
        inner = getattr(f, "_content", None) if isinstance(f, KeepTogether) else None
        out += _flatten(list(inner)) if inner is not None else [f]
    return out


def _arrange(
    first: list[Flowable],
    plateau: list[Flowable],
    methods: list[Flowable],
    chart_story: list[Flowable],
    last: list[Flowable],
    cautions: list[Flowable],
    width: float,
    pagesize: tuple[float, float],
) -> list[Flowable]:
    """The pages in order: page 1 (headline, narrative, the progress section and, when it
    fits, "how we estimate this"), the charts from page 2, then phases, data quality and the
    cautions; "how we estimate this" joins the last page when page 1 is full.  Measured
    here, before layout, so the report keeps to four pages without a second build."""
    room = pagesize[1] - 2 * MARGIN - 2 * mm  # a little slack for rounding
    # measured as one stack each, so the spaces where the parts meet count too
    h_first_plateau = _stack_height(first + plateau, width, room)
    h_page1 = _stack_height(first + plateau + methods, width, room)
    h_last_methods = _stack_height(last + cautions + methods, width, room)

    on_first = methods if methods else []
    methods_last: list[Flowable] = []
    plateau_first = plateau
    plateau_second: list[Flowable] = []
    if plateau and h_page1 > room:
        if h_first_plateau <= room and h_last_methods <= room:
            on_first, methods_last = [], methods
        else:  # page 1 has no room for it: it opens page 2, before the charts
            plateau_first, plateau_second = [], [*plateau[1:], Spacer(1, 4 * mm)]
    story = list(first) + plateau_first
    if on_first:
        story.append(section_break(40 * mm))
        story += on_first
    if plateau_second:
        story.append(PageBreak())
        story += plateau_second
    if chart_story:
        if not plateau_second:
            story.append(PageBreak())
        story += chart_story
    story.append(section_break(70 * mm))
    story += last
    if methods_last:
        story.append(Spacer(1, 2 * mm))
        story += methods_last
        story.append(Spacer(1, 3 * mm))
    story += cautions
    return story


def _phase_name_cell(words: Wording, name: str, kind: str) -> str:
    """The phase's name in bold, its kind below unless the name already says it."""
    k = words.text("phase_kind", kind, name)
    return f"<b>{esc(name)}</b>" + (f"<br/>{k}" if k else "")


def _phase_table(vm: ClientView, words: Wording, theme: Theme, width: float) -> Flowable:
    labels = words.labels
    cols = labels["phase_cols"]
    units = [x.replace("{e}", vm.energy_unit + "/day") for x in labels["phase_units"]]
    header = [esc(c) + (f"<br/>{esc(u)}" if u else "") for c, u in zip(cols, units, strict=True)]
    rows = [
        [
            _phase_name_cell(words, p["name"], p["kind"]),
            esc(whole_dates(p["dates"])),
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
