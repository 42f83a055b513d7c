"""The "Is progress stalling?" section: view model, the small causes drawing, flowables.

The view holds already formatted text in the report's display units; the wording is in
``templates/report/plateau.j2``.  The drawing is our own: one row per cause, a bar from
zero for how much it closed (to the right) or widened (to the left) the deficit, and a
thin line for its 80 % interval, drawn with reportlab's vector graphics (no chart page).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

from reportlab.lib import colors
from reportlab.lib.units import mm
from reportlab.platypus import Flowable, Spacer, Table, TableStyle

from reportgen.config import Config
from reportgen.results import ClientAnalysis, Estimate, PlateauResult
from reportgen.science.plateau import ON_TRACK_SHARE, ZERO_Z

from . import theme as T
from .layout import data_table
from .para import Paragraph
from .theme import Theme
from .units import Units
from .wording import Wording, blocks, esc

CAUSE_ORDER = ("intake", "body-size", "activity", "metabolic", "logging")


@dataclass
class CauseRow:
    code: str
    measured: bool
    closed_kcal: float = 0.0  # how much it closed the deficit (display value, + = closed)
    low: float = 0.0  # its 80 % interval, same sign convention
    high: float = 0.0
    text: str = ""  # e.g. "120 kcal/day"
    interval: str = ""  # e.g. "40-200 kcal/day"
    closed: bool = True  # closed (True) or widened (False) the deficit
    effect: str = ""  # signed effect on the deficit without the unit, e.g. "-120"
    effect_interval: str = ""  # its 80 % range without the unit, e.g. "-200 to -40"


def _decision_interval(u: Units, r: Estimate) -> str:
    """The rate's 95 % range, widened from its printed 80 % range (normal, same SE)."""
    if r.value is None or r.low is None or r.high is None:
        return ""
    half = ZERO_Z * r.normal_sd
    return u.interval(Estimate(r.value, r.value - half, r.value + half), "pct_change")


def _bare_interval(u: Units, est: Estimate) -> str:
    """A signed energy interval without its unit ("-200 to -40"), for a table whose head
    carries the unit; '' when there is none."""
    if est.low is None or est.high is None:
        return ""
    return f"{u.e(est.low, signed=True, unit=False)} to {u.e(est.high, signed=True, unit=False)}"


@dataclass
class PlateauView:
    status: str
    reason: str | None
    underlying: str | None
    water_reasons: tuple[str, ...]
    phase_name: str
    weeks: int
    rate: str
    rate_interval: str
    planned: str
    planned_source: str | None
    energy_unit: str
    change: str = ""
    change_interval: str = ""
    change_effect: str = ""  # signed, without the unit (the practitioner table)
    change_effect_interval: str = ""
    leftover_effect: str = ""
    shrank: bool = False
    rows: list[CauseRow] = field(default_factory=list)
    largest: str | None = None
    causes_reason: str | None = None
    leftover: str = ""
    intake_change: str = ""
    completeness_change: str = ""
    completeness_fell: bool = False
    logging_gap: str = ""
    logging_gap_interval: str = ""
    logging_gap_bare_interval: str = ""
    metabolic_expected: str = ""
    hunger_change: str = ""
    energy_change: str = ""
    hunger_words: str = ""  # "clearly higher than", "about the same as", ...
    energy_words: str = ""
    hunger_rose: bool = False
    energy_fell: bool = False
    gap: str = ""
    options: list[dict[str, str]] = field(default_factory=list)
    cautions: tuple[str, ...] = ()
    # the 95 % range that the "cannot tell yet" decision uses (science.plateau.ZERO_Z)
    rate_interval_decision: str = ""
    # where the printed 80 % range of the rate lies against the planned rate: "inside",
    # "slower" (the whole range is slower than the plan) or "faster"; "" without a plan
    plan_side: str = ""
    on_track_share: str = ""  # the share of the planned pace counted as on track, "75 %"


def _plan_side(r: Estimate, planned: float | None) -> str:
    """Where the rate's range, as printed, lies against the planned rate (negative = loss)."""
    if planned is None or r.low is None or r.high is None:
        return ""
    # compared as printed (two decimals), so the words agree with the figures
    lo, hi, plan = round(r.low, 2), round(r.high, 2), round(planned, 2)
    if lo > plan:
        return "slower"
    if hi < plan:
        return "faster"
    return "inside"


def plateau_view(a: ClientAnalysis, config: Config) -> PlateauView | None:
    """The section's view, or None when the month ends outside a deficit phase."""
    p = a.plateau
    if p is None:
        return None
    u = Units.from_config(config)
    r = p.recent_rate_pct_per_week
    view = PlateauView(
        status=p.status,
        reason=p.reason,
        underlying=p.underlying,
        water_reasons=p.water_reasons,
        phase_name=p.phase_name,
        weeks=p.recent_days // 7,
        rate=u.pct(r.value, dp=2, signed=True) if r.known else "",
        rate_interval=u.interval(r, "pct_change") if r.known else "",
        rate_interval_decision=_decision_interval(u, r),
        planned=(
            u.pct(p.planned_rate_pct_per_week, dp=2, signed=True)
            if p.planned_rate_pct_per_week is not None
            else ""
        ),
        planned_source=p.planned_source,
        plan_side=_plan_side(r, p.planned_rate_pct_per_week) if r.known else "",
        on_track_share=u.pct(100.0 * ON_TRACK_SHARE, dp=0),
        energy_unit=u.energy_label,
        largest=p.largest,
        causes_reason=p.causes_reason,
        cautions=p.cautions,
    )
    if p.parts:
        _causes(view, p, u)
    view.options = [_option(o.code, o.values, u) for o in p.options]
    if p.gap_kcal is not None:
        view.gap = u.e(p.gap_kcal)
    return view


def _causes(view: PlateauView, p: PlateauResult, u: Units) -> None:
    c = p.change_kcal
    view.change = u.e(abs(c.value)) if c.value is not None else ""
    view.shrank = c.value is not None and c.value < 0
    view.change_interval = u.interval(c, "e_change")
    view.change_effect = u.e(c.value, signed=True, unit=False)
    view.change_effect_interval = _bare_interval(u, c)
    for code in CAUSE_ORDER:
        part = p.part(code)
        if part is None:
            continue
        k = part.kcal
        if k.value is None:
            view.rows.append(CauseRow(code, False))
            continue
        lo = -(k.high if k.high is not None else k.value)
        hi = -(k.low if k.low is not None else k.value)
        view.rows.append(
            CauseRow(
                code,
                True,
                float(u.energy(-k.value)),
                float(u.energy(lo)),
                float(u.energy(hi)),
                u.e(abs(k.value)),
                u.interval(k, "e_change"),
                k.value <= 0,
                u.e(k.value, signed=True, unit=False),
                _bare_interval(u, k),
            )
        )
    view.leftover = u.e(p.leftover_kcal, signed=True) if p.leftover_kcal is not None else ""
    if p.leftover_kcal is not None:
        view.leftover_effect = u.e(p.leftover_kcal, signed=True, unit=False)
    view.intake_change = u.e(p.intake_change_kcal, signed=True)
    if p.completeness_change_pct is not None:
        view.completeness_change = u.pp(p.completeness_change_pct, dp=0)
        view.completeness_fell = p.completeness_change_pct <= -10.0
    g = p.logging_gap_kcal
    if g.value is not None:
        view.logging_gap = u.e(g.value, signed=True)
        view.logging_gap_interval = u.interval(g, "e_change")
        view.logging_gap_bare_interval = _bare_interval(u, g)
    if p.metabolic_expected_kcal is not None:
        view.metabolic_expected = u.e(p.metabolic_expected_kcal, signed=True)
    if p.hunger_change is not None:
        view.hunger_change = u.number(p.hunger_change, 1, signed=True)
        view.hunger_words = rating_words(p.hunger_change)
        view.hunger_rose = p.hunger_change >= RATING_SMALL
    if p.energy_change is not None:
        view.energy_change = u.number(p.energy_change, 1, signed=True)
        view.energy_words = rating_words(p.energy_change)
        view.energy_fell = p.energy_change <= -RATING_SMALL


# A change in a mean 1-10 rating of less than one point reads as "about the same", two
# points or more as "clearly" (common practice, no single source).
RATING_SMALL = 1.0
RATING_CLEAR = 2.0


def rating_words(change: float) -> str:
    """A change in a mean 1-10 rating in words, ending with the comparison word; judged on
    the change as printed (one decimal)."""
    change = round(change, 1)
    if abs(change) < RATING_SMALL:
        return "about the same as"
    size = "clearly" if abs(change) >= RATING_CLEAR else "a little"
    return f"{size} {'higher' if change > 0 else 'lower'} than"


def _option(code: str, values: dict[str, float], u: Units) -> dict[str, str]:
    out = {"code": code}
    for key, v in values.items():
        if key == "kcal_per_1000_steps":  # the one cost per step of the page, in its unit
            out["per_1000_steps"] = f"{u.number(float(u.energy(v)))} {u.energy_unit}"
        elif key == "closes_kcal":  # beside the gap, which carries the unit
            out["closes_e"] = u.e(v, unit=False)
            out[key] = u.e(v)
        elif key.endswith("_kcal"):
            out[key] = u.e(v, signed=key == "change_kcal")
        else:
            out[key] = u.number(v)
    return out


class CausesDrawing(Flowable):
    """One row per cause: a bar for how much it closed the deficit, a line for its interval.

    Bars to the right of the zero line closed the deficit; to the left, widened it.  A
    cause that was not measured gets its name and a dash.  Scale: the largest end of any
    interval, at least 100 kcal/day (or 400 kJ/day).  Drawn straight on the canvas with
    the report's embedded font.
    """

    ROW_H = 5.2 * mm

    def __init__(self, view: PlateauView, names: dict[str, str], theme: Theme, width: float):
        super().__init__()
        self.view = view
        self.names = names
        self.accent = theme.accent
        self.width = width
        self.height = self.ROW_H * len(view.rows) + 2 * mm

    def wrap(self, avail_width: float, avail_height: float) -> tuple[float, float]:
        return self.width, self.height

    def draw(self) -> None:
        c = self.canv
        rows = self.view.rows
        label_w = 0.30 * self.width
        plot_w = self.width - label_w - 4 * mm
        measured = [r for r in rows if r.measured]
        ends = [abs(r.low) for r in measured] + [abs(r.high) for r in measured]
        floor = 100.0 if self.view.energy_unit.startswith("kcal") else 400.0
        span = max([*ends, floor])
        zero = label_w + plot_w / 2
        scale = (plot_w / 2) / span
        ink = colors.HexColor(T.INK)
        c.saveState()
        c.setFont(T.FONT, T.SIZE_SMALL)
        for i, r in enumerate(rows):
            mid = self.height - (i + 0.5) * self.ROW_H - 1 * mm
            c.setFillColor(ink)
            c.drawString(0, mid - 2.5, self.names.get(r.code, r.code))
            if not r.measured:
                c.drawString(zero + 2, mid - 2.5, "\u2013")
                continue
            x0, x1 = sorted((zero, zero + r.closed_kcal * scale))
            c.setFillColor(self.accent if r.closed else colors.HexColor(T.POINTS))
            c.rect(x0, mid - self.ROW_H * 0.28, max(x1 - x0, 0.6), self.ROW_H * 0.56, 0, 1)
            lo, hi = zero + r.low * scale, zero + r.high * scale
            c.setStrokeColor(ink)
            c.setLineWidth(0.6)
            c.line(lo, mid, hi, mid)
            c.line(lo, mid - 1.5, lo, mid + 1.5)
            c.line(hi, mid - 1.5, hi, mid + 1.5)
        c.setStrokeColor(colors.HexColor(T.MUTED))
        c.setLineWidth(0.5)
        c.line(zero, 0, zero, self.height)
        c.restoreState()


def showing_causes(view: PlateauView) -> bool:
    """Whether the client report shows the causes (words and drawing) for this status."""
    return bool(view.rows) and view.status in ("stalled", "slower", "gaining")


def plateau_flowables(
    a: ClientAnalysis,
    config: Config,
    theme: Theme,
    width: float,
    macro: str,
    heading_hook: Callable[[Paragraph, int], None] | None = None,
) -> list[Flowable]:
    """The section for the client report (``macro="client"``) or the practitioner summary."""
    view = plateau_view(a, config)
    if view is None:
        return []
    words = Wording(config, "report/plateau.j2")
    if macro == "practitioner":
        return practitioner_flowables(view, words, theme, width)
    out: list[Flowable] = []
    out += blocks(words.text(macro, view), theme, heading_hook=heading_hook)
    if macro == "client" and showing_causes(view):
        # the causes in words on the left, the small drawing with its key on the right
        names = dict(words.labels["cause_names"])
        left_w = 0.58 * width
        right_w = width - left_w
        text = blocks(words.text("client_causes", view), theme)
        text += blocks(words.text("options_heading", view), theme)  # beside the drawing
        drawing: list[Flowable] = [CausesDrawing(view, names, theme, right_w - 3 * mm)]
        drawing += blocks(words.text("drawing_caption", view), theme)
        table = Table([[text, drawing]], colWidths=[left_w, right_w])
        table.setStyle(
            TableStyle(
                [
                    ("VALIGN", (0, 0), (-1, -1), "TOP"),
                    ("LEFTPADDING", (0, 0), (-1, -1), 0),
                    ("RIGHTPADDING", (0, 0), (0, 0), 4 * mm),
                    ("RIGHTPADDING", (1, 0), (1, 0), 0),
                    ("LEFTPADDING", (1, 0), (1, 0), 3 * mm),
                    ("TOPPADDING", (0, 0), (-1, -1), 1 * mm),
                    ("BOTTOMPADDING", (0, 0), (-1, -1), 1 * mm),
                ]
            )
        )
        out.append(table)
    elif macro == "client":
        out += blocks(words.text("options_heading", view), theme)
    if macro == "client":
        out += blocks(words.text("client_options", view), theme)
    return out


def practitioner_flowables(
    view: PlateauView, words: Wording, theme: Theme, width: float
) -> list[Flowable]:
    """The practitioner summary's block, at the page's cell size: status and rate in one
    run-in paragraph, the parts as a three-row table (estimate and 80 % range per part,
    kcal/day), one line of logging figures and the method line."""
    out: list[Flowable] = [Paragraph(words.text("practitioner_status", view), theme["cell"])]
    if view.rows:
        tl = words.table_labels
        parts = tl["parts"]
        header = [esc(tl["head"]), esc(tl["total"])]
        header += [esc(parts[r.code]) for r in view.rows] + [esc(tl["left-over"])]
        estimate = [esc(tl["estimate"]), esc(view.change_effect)]
        estimate += [esc(r.effect) if r.measured else esc(tl["not-measured"]) for r in view.rows]
        estimate.append(esc(view.leftover_effect or "\u2013"))
        ranges = [esc(tl["range"]), esc(view.change_effect_interval)]
        ranges += [esc(r.effect_interval) if r.measured else "\u2013" for r in view.rows]
        ranges.append("")
        first = 0.19 * width
        rest = (width - first) / (len(header) - 1)
        out.append(Spacer(1, 0.5 * mm))
        out.append(
            data_table(
                header,
                [estimate, ranges],
                [first] + [rest] * (len(header) - 1),
                theme,
                right_from=1,
                dense=True,
            )
        )
        out.append(Spacer(1, 0.5 * mm))
    notes = words.text("practitioner_notes", view) + " " if view.rows else ""
    out.append(Paragraph(notes + words.text("practitioner_method", view), theme["small"]))
    return out
