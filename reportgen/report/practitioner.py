"""The one-page practitioner summary: dense, technical and exact, for referral notes."""

from __future__ import annotations

import datetime as dt
import html
import time
from dataclasses import dataclass
from typing import Any

from reportlab.lib import colors
from reportlab.lib.styles import ParagraphStyle
from reportlab.lib.units import mm
from reportlab.pdfbase.pdfmetrics import stringWidth
from reportlab.platypus import Flowable, KeepInFrame, Spacer, Table, TableStyle

from reportgen.config import Config
from reportgen.results import ClientAnalysis, Estimate

from . import theme as T
from .cautions import caution_values
from .citation import short_citation
from .client import Timing
from .layout import data_table
from .outlook import outlook
from .para import Paragraph
from .pdfbuild import Document, build, mark_heading
from .plateau_view import plateau_flowables
from .theme import Theme, page_size, theme_for
from .units import DASH, Units
from .viewmodel import ClientView, client_view
from .wording import Wording, blocks, esc, whole_dates


@dataclass
class SummaryView:
    """The client view plus the measurement rows of the summary table."""

    base: ClientView
    rows: list[tuple[str, str, str, str]]  # (row key, value, interval, method)
    ident: list[tuple[str, str]]

    def __getattr__(self, name: str) -> Any:
        return getattr(self.base, name)  # the ClientView's fields, as they are typed there


def summary_view(a: ClientAnalysis, config: Config, words: Wording) -> SummaryView:
    u = Units.from_config(config)

    def _est(u: Units, e: Estimate, kind: str) -> tuple[str, str]:
        if not e.known:  # the reason in words (the table cells are escaped on layout)
            return DASH, f"({_plain(words.text('reason', e.reason))})" if e.reason else ""
        return u.fmt(e.value, kind), u.interval(e, kind)

    vm = client_view(a, config)
    M = words.labels["methods"]
    c = a.client
    ph = a.current_phase
    title = _plain(words.text("phase_title", ph.name, ph.kind)) if ph is not None else ""
    ident = [
        ("client", c.name),
        ("id", c.client_id),
        ("born", f"{u.d(c.birth_date)} ({a.age_years})" if c.birth_date else DASH),
        ("sex", c.sex or DASH),
        ("height", f"{u.number(c.height_cm, 1)} cm" if c.height_cm else DASH),
        ("bmi", u.number(a.bmi, 1) if a.bmi is not None else DASH),
        (
            "period",
            u.span(_first_day(a) or a.as_of, a.as_of) + f" ({a.log.n_days} days)",
        ),
        ("month", vm.month),
        (
            "phase",
            f"{title}, week {a.week_of_phase}, from {u.d(ph.start)}"
            if ph is not None and a.week_of_phase
            else (title if ph is not None else DASH),
        ),
    ]
    trend_method = DASH
    if a.trend is not None:
        trend_method = M.get(a.trend.method, a.trend.method).replace(
            "{noise}", u.w(a.trend.noise_sd_kg, dp=2)
        )
    rows: list[tuple[str, str, str, str]] = []
    rows.append(("weight", *_est(u, a.current_weight_kg, "w"), trend_method))
    rows.append(("change", *_est(u, a.month_change_kg, "w_change"), trend_method))

    def _rate(e: Estimate) -> tuple[str, str]:
        v, i = _est(u, e, "w_rate")
        return v, (f"{i}/week" if e.known and i else i)

    # the rate the progress status (and, unless the rapid-loss flag is up, the client's
    # page 1) uses, beside the smoothed slope, so the two are never read as one figure
    p = a.plateau
    if p is not None and p.recent_rate_kg_per_week.known and p.recent_rate_pct_per_week.known:
        v, i = _rate(p.recent_rate_kg_per_week)
        pct = u.pct(p.recent_rate_pct_per_week.value, dp=2, signed=True)
        where = (
            "on the client report and in the status"
            if vm.story["rate_span_weeks"]
            else "in the status"
        )
        span = f"last {p.recent_days // 7} weeks ({pct}); as {where}"
        rows.append(("rate_recent", f"{v}/week", i, span))
        v, i = _rate(a.weekly_rate_kg)
        pct = u.pct(a.weekly_rate_pct.value, dp=2, signed=True)
        rows.append(
            ("rate", v + ("/week" if a.weekly_rate_kg.known else ""), i, f"trend slope ({pct})")
        )
    else:
        v, i = _rate(a.weekly_rate_kg)
        rows.append(("rate", v + ("/week" if a.weekly_rate_kg.known else ""), i, "trend slope"))
        rows.append(("rate_pct", *_est(u, a.weekly_rate_pct, "pct_change"), "trend slope ÷ trend"))
    rows.append(
        ("intake", u.e(a.month_mean_intake_kcal), "", f"{vm.figures['intake'].detail or 0} days")
    )
    if ph is not None:
        rows.append(("deficit", *_est(u, ph.realised_deficit_kcal, "e"), M["balance"]))
        rows.append(("tdee", *_est(u, ph.observed_tdee_kcal, "e"), M["balance"]))
        rows.append(
            (
                "expected",
                *_est(u, ph.expected_tdee_kcal, "e"),
                M.get(ph.expected_method or "", ph.expected_method or DASH),
            )
        )
        if ph.adaptation_data_kcal.known:
            # the three side by side: the data alone, the literature, their combination
            rows.append(
                ("adapt_data", *_est(u, ph.adaptation_data_kcal, "e_change"), M["adapt_data"])
            )
            rows.append(
                (
                    "adapt_typical",
                    *_est(u, ph.adaptation_typical_kcal, "e_change"),
                    M["adapt_typical"],
                )
            )
        v, i = _est(u, ph.adaptation_kcal, "e_change")
        pct = u.pct(ph.adaptation_pct.value, signed=True) if ph.adaptation_pct.known else ""
        basis = "of expected" if ph.adaptation_kcal.known else ""
        if ph.adaptation_data_kcal.known:
            k = ph.adaptation_kcal
            zero_inside = u.zero_shown(k.low, k.high)  # as the range is printed
            basis = M["adapt_zero"] if zero_inside else M["adapt_combined"]
        label = "adaptation_combined" if ph.adaptation_data_kcal.known else "adaptation"
        rows.append((label, v + (f" ({pct})" if pct else ""), i, basis))
        if ph.adaptation_data_kcal.known:
            if ph.activity_change_kcal.known:
                rows.append(
                    ("activity", *_est(u, ph.activity_change_kcal, "e_change"), M["activity"])
                )
            else:
                rows.append(("activity", M["not_measured"], "", M["activity_none"]))
            if ph.implied_intake_kcal.known:
                rows.append(
                    (
                        "implied_intake",
                        *_est(u, ph.implied_intake_kcal, "e"),
                        M["implied"].replace("{logged}", u.e(ph.mean_intake_kcal)),
                    )
                )
        rows.append(("depth", u.pct(ph.deficit_depth_pct), "", "realised deficit ÷ maintenance"))
        if ph.kind == "month":  # no phases recorded: nothing says when a deficit began
            rows.append(("days_deficit", DASH, "", _plain(words.text("phase_kind", ph.kind))))
        else:
            rows.append(("days_deficit", u.number(ph.days_in_deficit), "", "up to month end"))
    if a.resting_kcal:
        values = sorted(a.resting_kcal.items(), key=lambda kv: kv[1])
        lo, hi = values[0][1], values[-1][1]
        span = u.e(lo) if len(values) == 1 else f"{u.e(lo, unit=False)}{chr(0x2013)}{u.e(hi)}"
        detail = "; ".join(
            f"{_short_name(_method_name(a, c))} {u.e(k, unit=False)}" for c, k in values
        )
        rows.append(("resting", span, "", detail))
    if a.bodycomp:
        last = a.bodycomp[-1]
        rows.append(
            (
                "bodyfat",
                u.pct(last.bodyfat_pct),
                f"± {u.number(last.bodyfat_se_pct, 1)} points",
                "± is the equation's standard error; "
                f"{_method_name(a, last.equation)}, "
                f"{u.d(last.date)}" + (f", Σ {u.number(last.sum_mm, 1)} mm" if last.sum_mm else ""),
            )
        )
        rows.append(
            (
                "fat_mass",
                f"{u.w(last.fat_mass_kg)} / {u.w(last.lean_mass_kg)}",
                "",
                "at trend weight " + u.w(last.weight_kg),
            )
        )
        if len(a.bodycomp) >= 2:
            rows.append(
                (
                    "bodyfat_change",
                    vm.figures["bodyfat"].value,
                    "",
                    vm.figures["bodyfat"].detail + ", " + vm.figures["bodyfat"].interval,
                )
            )
    elif a.bodyfat_fallback is not None:
        fb = a.bodyfat_fallback
        rows.append(
            (
                "bodyfat",
                u.pct(fb.bodyfat_pct),
                f"± {u.number(fb.bodyfat_se_pct, 1)} points",
                f"{_method_name(a, fb.equation)}; no skinfold sessions",
            )
        )
    pr = a.projection
    look = outlook(a, config.report.projection_weeks, lambda kg: round(float(u.weight(kg)), 1))
    if pr is not None and look is not None and look.days and a.quality.weight_days:
        goal = ""
        if look.goal_kg is not None:
            g = u.w(look.goal_kg)
            goal = "; goal " + {
                "reached": f"{g} reached (trend {u.w(a.current_weight_kg.value)})",
                "on-track": f"{g} by {u.d(look.goal_date)}",
                "beyond": f"{g} not within this horizon",
                "away": f"{g}: trend moving away",
            }.get(look.goal_status, g)
        rows.append(
            (
                "projection",
                u.w(look.weight_kg),
                f"{u.w(look.low_kg, unit=False)}{chr(0x2013)}{u.w(look.high_kg)}",
                f"{M['hall']} ({u.e(pr.intake_kcal)}), to {u.d(look.end)}{goal}",
            )
        )
    if pr is not None:
        for rate, est in sorted(pr.intake_for_rate_kcal.items()):
            rows.append(
                (
                    "intake_for_rate",
                    *_est(u, est, "e"),
                    f"for {u.pct(-rate, dp=2)} body weight/week",
                )
            )
    # An estimate that could not be made says why in the method column, where there is room
    # (in place of the method: nothing was computed by it).
    for n, (key, value, interval, _method) in enumerate(rows):
        if value == DASH and interval.startswith("(") and interval.endswith(")"):
            rows[n] = (key, value, "", interval[1:-1])
    return SummaryView(base=vm, rows=rows, ident=ident)


def _first_day(a: ClientAnalysis) -> dt.date | None:
    if not a.log.n_days:
        return None
    return dt.date.fromisoformat(str(a.log.dates[0].astype("datetime64[D]")))


def _plain(text: str) -> str:
    """Template output (escaped markup) back to plain text, for cells escaped on layout."""
    return html.unescape(text)


def _short_name(name: str) -> str:
    """'Harris-Benedict revised by Roza & Shizgal 1984, standard...' -> up to the first comma."""
    return name.split(",")[0].split(" (")[0].strip()


def _method_name(a: ClientAnalysis, code: str) -> str:
    for m in a.methods:
        if m.code == code:
            return m.name
    return code


def _short_method(m: dict[str, str]) -> dict[str, str]:
    """A method for the summary's reference list: its name up to a colon (the name's
    headline; the rest restates what the table says) and the citation without titles and
    DOIs (room for the cautions).  ``methods.pdf`` carries both in full."""
    short = short_citation(m["reference"], doi=False)
    return {**m, "name": m["name"].split(":")[0], "reference": short}


def _title(text: str, theme: Theme, width: float, outline: str) -> list[Flowable]:
    """The title in the compact heading size with the subtitle (client, month, practice) on
    the same line when both fit: the page is dense by design, and the identification table
    below repeats the client and the month."""
    head = blocks(text, theme)
    if not head or not isinstance(head[0], Paragraph):
        return head
    lines = [ln.strip() for ln in text.splitlines() if ln.strip()]
    title = next((ln[2:] for ln in lines if ln.startswith("= ")), "")
    sub = next((ln[2:] for ln in lines if ln.startswith("+ ")), "")
    h1 = theme["h1"]
    w_title = stringWidth(_plain(title), h1.fontName, h1.fontSize)
    w_sub = stringWidth("\u2003" + _plain(sub), T.FONT, T.SIZE_LEAD)
    if sub and len(head) == 2 and w_title + w_sub <= width:
        font = f'<font name="{T.FONT}" size="{T.SIZE_LEAD}" color="{T.MUTED}">'
        para = Paragraph(f"{title}{font}\u2003{sub}</font>", h1)
        mark_heading(para, 0, outline)
        return [para]
    first = Paragraph(title, h1)  # a long name or practice: two lines
    mark_heading(first, 0, outline)
    return [first, *head[1:]]


def _column_widths(
    rows: list[list[str]], header: list[str], width: float, label_fraction: float
) -> list[float]:
    """Value and interval columns as wide as their longest text (capped), the quantity
    column as given (a long label may wrap), the method column takes the rest: fewer
    wrapped lines than fixed fractions for all four."""
    pad = 4.5  # the table's left + right cell padding, and a little air
    out = [label_fraction * width]
    for n in (1, 2):
        texts = [header[n], *(r[n] for r in rows)]
        longest = max(stringWidth(t, T.FONT, T.SIZE_SMALL) for t in texts)
        out.append(min(0.2 * width, longest + pad))
    return [*out, width - sum(out)]


def _ident_table(sv: SummaryView, words: Wording, theme: Theme, width: float) -> Table:
    """Identification in three label/value column pairs."""
    L = words.labels["ident"]
    cells: list[list[object]] = [
        [Paragraph(esc(L[k]), theme["cell_head"]), Paragraph(esc(v), theme["cell"])]
        for k, v in sv.ident
    ]
    per_col = (len(cells) + 2) // 3
    cols = [cells[i * per_col : (i + 1) * per_col] for i in range(3)]
    for col in cols:
        col += [["", ""]] * (per_col - len(col))
    data = [[cell for col in cols for cell in col[r]] for r in range(per_col)]
    # label/value pairs sized to what they hold: the period and phase are the longest
    fractions = (0.1, 0.2, 0.07, 0.12, 0.11, 0.40)
    return Table(
        data,
        colWidths=[f * width for f in fractions],
        hAlign="LEFT",
        style=TableStyle(
            [
                ("FONTNAME", (0, 0), (-1, -1), T.FONT),
                ("VALIGN", (0, 0), (-1, -1), "TOP"),
                ("LEFTPADDING", (0, 0), (-1, -1), 2),
                ("RIGHTPADDING", (0, 0), (-1, -1), 2),
                ("TOPPADDING", (0, 0), (-1, -1), 1.2),
                ("BOTTOMPADDING", (0, 0), (-1, -1), 1.6),
                ("LINEBELOW", (0, 0), (-1, -1), 0.3, colors.HexColor(T.RULE)),
            ]
        ),
    )


def _signature(words: Wording, theme: Theme, width: float) -> Table:
    """The practitioner's note box on the left, name/registration/signature/date lines right."""
    L = words.labels
    sign = L["sign"]
    rows: list[list[object]] = [[Paragraph(esc(L["note"]), theme["cell_head"]), ""]]
    for label in sign:
        rows.append(["", Paragraph(esc(label), theme["cell_head"])])
    heights = [5 * mm] + [6 * mm] * len(sign)
    style: list[tuple[Any, ...]] = [
        ("FONTNAME", (0, 0), (-1, -1), T.FONT),
        ("SPAN", (0, 0), (0, -1)),
        ("BOX", (0, 0), (0, -1), 0.6, colors.HexColor(T.MUTED)),
        ("VALIGN", (0, 0), (-1, -1), "BOTTOM"),
        ("VALIGN", (0, 0), (0, -1), "TOP"),
        ("LEFTPADDING", (0, 0), (-1, -1), 3),
        ("TOPPADDING", (0, 0), (-1, -1), 2),
        ("BOTTOMPADDING", (0, 0), (-1, -1), 1),
    ]
    for r in range(1, len(rows)):
        style.append(("LINEABOVE", (1, r), (1, r), 0.6, colors.HexColor(T.MUTED)))
    gap = 4 * mm
    return Table(
        rows,
        colWidths=[width * 0.62 - gap, width * 0.38 + gap],
        rowHeights=heights,
        hAlign="LEFT",
        style=TableStyle(style),
    )


def render_practitioner_summary(
    analysis: ClientAnalysis, config: Config, *, timing: Timing | None = None
) -> bytes:
    """The one-page practitioner summary as PDF bytes (no charts: all of it is layout)."""
    t0 = time.perf_counter()
    theme = theme_for(config.report.accent_colour)
    words = Wording(config, "report/practitioner.j2")
    sv = summary_view(analysis, config, words)
    pagesize = page_size(config)
    margin = 14 * mm
    width = pagesize[0] - 2 * margin
    L = words.labels
    frame_h = pagesize[1] - 2 * margin
    body: list[Flowable] = []
    body += _title(words.text("header", sv), theme, width, L["document"])
    body.append(Spacer(1, 2 * mm))
    body.append(_ident_table(sv, words, theme, width))
    special = words.text("special_line", sv).strip()
    if special:
        body.append(Spacer(1, 1.5 * mm))
        body.append(Paragraph(special, theme["cell_bold"]))
    body.append(Spacer(1, 2 * mm))
    rl = L["rows"]
    rows = [[esc(rl[k]), esc(v), esc(i), esc(m)] for k, v, i, m in sv.rows]
    plain = [[rl[k], v, i] for k, v, i, _ in sv.rows]

    def quantities(label_fraction: float) -> Table:
        return data_table(
            [esc(c) for c in L["cols"]],
            rows,
            _column_widths(plain, L["cols"][:3], width, label_fraction),
            theme,
            right_from=1,
            right_to=3,
            dense=True,
        )

    # the quantity column's width that wraps fewest lines (label against method text)
    tables = [quantities(f / 100) for f in range(18, 27)]
    body.append(min(tables, key=lambda t: t.wrap(width, frame_h)[1]))
    body.append(Spacer(1, 2 * mm))
    if sv.phases:
        pcols = L["phase_cols"]
        prow = [
            [
                esc(p["name"]),
                words.text("phase_kind", p["kind"]),
                esc(whole_dates(p["dates"])),
                p["days"],
                esc(p["intake"]),
                esc(p["deficit"]),
                esc(p["rate"]),
                esc(p["tdee"]),
                esc(p["adaptation"]),
                esc(p["bodyfat"]),
                words.text("phase_status", p["status"]),
            ]
            for p in sv.phases
        ]
        fr = [0.14, 0.1, 0.17, 0.05, 0.07, 0.07, 0.07, 0.07, 0.07, 0.05, 0.14]
        body.append(
            data_table(
                [esc(c) for c in pcols],
                prow,
                [f * width for f in fr],
                theme,
                right_from=3,
                right_to=10,
                dense=True,
            )
        )
        body.append(Spacer(1, 2 * mm))
    plateau = plateau_flowables(analysis, config, theme, width, "practitioner")
    if plateau:
        body += plateau
        body.append(Spacer(1, 2 * mm))
    body.append(
        Paragraph(
            f"<b>{esc(L['flags'])}.</b> "
            + (
                " ".join(words.text("flag_line", f) for f in sv.flags)
                if sv.flags
                else esc(L["no_flags"])
            ),
            theme["cell"],
        )
    )
    body.append(Spacer(1, 1 * mm))
    body.append(
        Paragraph(f"<b>{esc(L['quality'])}.</b> " + words.text("quality_line", sv), theme["cell"])
    )
    body.append(Spacer(1, 1 * mm))
    if sv.methods:
        refs = " ".join(
            f"[{n}] " + words.text("reference_line", _short_method(m))
            for n, m in enumerate(sv.methods, 1)
        )
        # the cells' size: the references are read, not decoration
        refs_style = ParagraphStyle("refs", parent=theme["small"], leading=T.SIZE_SMALL * 1.2)
        body.append(Paragraph(f"<b>{esc(L['references'])}.</b> {refs}", refs_style))
    caution = words.text("caution", caution_values(Units.from_config(config)))
    body.append(Paragraph(words.text("footnote", sv) + " " + caution, theme["small"]))
    body.append(Spacer(1, 1 * mm))
    sig = _signature(words, theme, width)
    story: list[Flowable] = [
        # Shrinks only as a last resort (very many phases or methods); anchored top left.
        KeepInFrame(
            width,
            frame_h - sig.wrap(width, frame_h)[1] - 4 * mm,
            body,
            mode="shrink",
            hAlign="LEFT",
            vAlign="TOP",
        ),
        Spacer(1, 2 * mm),
        sig,
    ]
    doc = Document(
        title=f"{L['document']}: {analysis.client.name}, {sv.base.month}",
        author=config.practice.name or "reportgen",
        subject=f"{L['subject']}, {sv.base.month}",
        pagesize=pagesize,
        footer_right=f"{analysis.client.client_id} · {sv.base.month}",
        page_label=lambda n: f"{L['page']} {n} {L['of']}",
        margin=margin,
    )
    data = build(story, doc, theme)
    if timing is not None:
        timing.layout_s += time.perf_counter() - t0
    return data
