"""The five client charts, drawn with matplotlib's object API into small vector PDFs.

Speed and reproducibility choices (measured, see the engineering notes): a fresh ``Figure``
per chart with an Agg canvas (never pyplot, so nothing lingers), fixed margins instead of a
layout engine, every daily series as one artist, few hand-placed ticks, and PDF output with
no creation date and TrueType (Type 42) fonts so text stays selectable and the bytes repeat.

Each chart is a function drawing its ``Figure`` (:data:`FIGURES`), or returning ``None``
when there is nothing to draw (the layout then prints one line saying what to log).  A
report saves all of its charts as pages of one PDF (:func:`chart_pages`), so the fonts are
subset and embedded once per report rather than once per chart; :data:`CHARTS` gives each
chart as a PDF of its own.  Axis labels and legend entries come from the template label
table; units are converted here for display only.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import hashlib
import io
import os
import re
import tempfile
from collections.abc import Callable, Iterable, Mapping, Sequence
from dataclasses import dataclass
from functools import cache
from pathlib import Path

import matplotlib
import numpy as np
from matplotlib.axes import Axes
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.backends.backend_pdf import PdfPages
from matplotlib.figure import Figure
from matplotlib.markers import TICKDOWN
from matplotlib.transforms import ScaledTranslation

from reportgen.io.limits import RATING
from reportgen.resources import font_path
from reportgen.results import ClientAnalysis, PhaseResult

from . import theme as T
from .units import Units

MM = 1 / 25.4  # inches per mm
PT = 72.0


CHART_FONT_FAMILY = "Reportgen Chart Sans"  # wide coverage, the fallback
CHART_FONT_LATIN = "Reportgen Chart Latin"  # what chart text almost always needs
FONT_TABLES_DROPPED = ("GPOS", "GSUB", "GDEF", "MATH", "FFTM")
# Scripts kept for chart text (labels from templates, phase names from the book): Latin with
# all extensions (incl. Vietnamese), Greek, Cyrillic, punctuation, the euro and minus signs.
CHART_FONT_RANGES = (
    (0x0020, 0x024F),  # Basic Latin, Latin-1, Latin Extended-A and -B
    (0x02B0, 0x036F),  # spacing modifiers and combining marks (decomposed accents)
    (0x0370, 0x03FF),  # Greek
    (0x0400, 0x04FF),  # Cyrillic
    (0x1E00, 0x1EFF),  # Latin Extended Additional (Vietnamese and others)
    (0x2000, 0x206F),  # general punctuation
    (0x20AC, 0x20AC),  # euro sign
    (0x2212, 0x2212),  # minus sign
)
# The first choice: 370 glyphs instead of about 1,500, so each chart's font subset is quicker
# to make; matplotlib falls back glyph by glyph to the wide font for anything else.
CHART_FONT_LATIN_RANGES = (
    (0x0020, 0x007E),  # Basic Latin
    (0x00A0, 0x017F),  # Latin-1 Supplement, Latin Extended-A
    (0x2010, 0x2027),  # dashes, quotes, bullet, ellipsis
    (0x20AC, 0x20AC),
    (0x2212, 0x2212),
)


def _chart_font_file(
    family: str, ranges: tuple[tuple[int, int], ...], folder: Path | None = None
) -> Path:
    """A reduced copy of DejaVu Sans for charts, renamed, cached on disk.

    matplotlib subsets the font for every chart PDF (Type 42 embedding), and fontTools spent
    about two thirds of all chart time decompiling DejaVu's large GPOS/GSUB tables (which
    matplotlib never uses: it kerns from the ``kern`` table) and its 6,000-glyph tables.  A
    copy without layout tables and limited to the scripts needed subsets several times
    faster, with identical outlines and metrics.  Modified copies must carry another name
    (Bitstream Vera licence), hence the family names.
    """
    src = font_path()
    recipe = f"v2:{src}:{src.stat().st_size}:{FONT_TABLES_DROPPED}:{family}:{ranges}"
    stamp = hashlib.sha256(recipe.encode()).hexdigest()[:16]
    if folder is None:
        folder = font_cache_folder()
    # The file name carries the hash of its own bytes: a copy is loaded only if it still
    # has them (a damaged or replaced file is rebuilt, never handed to the font loader).
    for found in sorted(folder.glob(f"chart-font-{stamp}-*.ttf")):
        if _verified(found):
            return found
    data = _build_chart_font(src, family, ranges)
    target = folder / f"chart-font-{stamp}-{hashlib.sha256(data).hexdigest()[:32]}.ttf"
    folder.mkdir(parents=True, exist_ok=True, mode=0o700)
    fd, tmp = tempfile.mkstemp(dir=folder, suffix=".tmp")
    with os.fdopen(fd, "wb") as fh:
        fh.write(data)
    os.replace(tmp, target)  # atomic: concurrent workers never see half a file
    return target


def _verified(path: Path) -> bool:
    """A regular file (not a link) of ours whose sha256 matches the one in its name."""
    import stat

    try:
        st = path.lstat()
        if not stat.S_ISREG(st.st_mode) or (hasattr(os, "getuid") and st.st_uid != os.getuid()):
            return False
        want = path.stem.rsplit("-", 1)[-1]
        return hashlib.sha256(path.read_bytes()).hexdigest()[: len(want)] == want
    except OSError:
        return False


@cache
def font_cache_folder() -> Path:
    """A per-user folder for the chart fonts, private to this user (mode 0700).

    The platform's cache folder (``$XDG_CACHE_HOME`` or ``~/.cache``, under ``reportgen``),
    never the shared temporary folder, where another user could plant a file under a name
    that is easy to predict.  If that folder cannot be made private, a fresh private
    temporary folder is used for this process.
    """
    import stat

    base = os.environ.get("XDG_CACHE_HOME") or str(Path.home() / ".cache")
    folder = Path(base) / "reportgen" / "fonts"
    try:
        folder.mkdir(parents=True, exist_ok=True, mode=0o700)
        st = folder.lstat()
        uid = os.getuid() if hasattr(os, "getuid") else st.st_uid
        if not stat.S_ISDIR(st.st_mode) or st.st_uid != uid:
            raise PermissionError(f"{folder} is not a folder of this user")
        if st.st_mode & 0o077:
            folder.chmod(0o700)
        return folder
    except OSError:
        return Path(tempfile.mkdtemp(prefix="reportgen-fonts-"))  # mode 0700, unpredictable


def _build_chart_font(src: Path, family: str, ranges: tuple[tuple[int, int], ...]) -> bytes:
    from fontTools import subset

    options = subset.Options()
    options.layout_features = []
    options.drop_tables += list(FONT_TABLES_DROPPED)
    options.name_IDs = ["*"]
    options.notdef_outline = True
    options.glyph_names = True  # keep post format 2: matplotlib's own subsetting is faster
    font = subset.load_font(str(src), options)
    subsetter = subset.Subsetter(options=options)
    subsetter.populate(unicodes=[c for lo, hi in ranges for c in range(lo, hi + 1)])
    subsetter.subset(font)
    for rec in font["name"].names:
        if rec.nameID in (1, 4, 16):
            rec.string = family
        elif rec.nameID == 6:
            rec.string = family.replace(" ", "")
    # keep DejaVu's own head.modified: a save-time timestamp would make the embedded subsets,
    # and so every PDF, differ between machines or after the cache is cleared
    font.recalcTimestamp = False
    buf = io.BytesIO()
    font.save(buf)
    return buf.getvalue()


@cache
def _setup() -> None:
    from matplotlib import font_manager

    font_manager.fontManager.addfont(
        str(_chart_font_file(CHART_FONT_LATIN, CHART_FONT_LATIN_RANGES))
    )
    font_manager.fontManager.addfont(str(_chart_font_file(CHART_FONT_FAMILY, CHART_FONT_RANGES)))
    matplotlib.rcParams.update(
        {
            "pdf.fonttype": 42,
            "pdf.compression": 6,
            "font.family": [CHART_FONT_LATIN, CHART_FONT_FAMILY],
            "font.size": 6.5,
            "axes.linewidth": 0.5,
            "axes.edgecolor": T.MUTED,
            "axes.labelcolor": T.MUTED,
            "axes.labelsize": 6.5,
            "axes.spines.top": False,
            "axes.spines.right": False,
            "xtick.color": T.MUTED,
            "ytick.color": T.MUTED,
            "xtick.labelsize": 6.0,
            "ytick.labelsize": 6.0,
            "xtick.major.width": 0.5,
            "ytick.major.width": 0.5,
            "xtick.major.size": 2.5,
            "ytick.major.size": 2.5,
            "legend.fontsize": 6.0,
            "legend.frameon": False,
            "path.simplify": True,
            "svg.hashsalt": "reportgen",
        }
    )


@dataclass(frozen=True)
class ChartContext:
    """What every chart needs besides its data."""

    units: Units
    labels: Mapping[str, str]
    accent: str
    width_mm: float
    start: dt.date  # first day on the time axis
    end: dt.date  # last day (the report month's end)
    projection_days: int | None = None  # days of the projection shown (None: all)


def day_numbers(dates: np.ndarray) -> np.ndarray:
    return dates.astype("datetime64[D]").astype(np.int64).astype(np.float64)


def _day(d: dt.date) -> float:
    return float(np.datetime64(d, "D").astype(np.int64))


def rolling_mean(values: np.ndarray, window: int = 7, min_count: int = 3) -> np.ndarray:
    """Trailing mean over ``window`` days ignoring NaN; NaN with fewer than ``min_count`` values."""
    ok = np.isfinite(values)
    v = np.where(ok, values, 0.0)
    cs = np.concatenate(([0.0], np.cumsum(v)))
    cn = np.concatenate(([0], np.cumsum(ok)))
    idx = np.arange(1, len(values) + 1)
    lo = np.maximum(idx - window, 0)
    s = cs[idx] - cs[lo]
    n = cn[idx] - cn[lo]
    with np.errstate(invalid="ignore", divide="ignore"):
        out = np.where(n >= min_count, s / np.maximum(n, 1), np.nan)
    return out


def _figure(
    ctx: ChartContext, height_mm: float, margins: tuple[float, float, float, float]
) -> Figure:
    """A figure of the box size with fixed margins (left, right, bottom, top) in mm."""
    _setup()
    w, h = ctx.width_mm * MM, height_mm * MM
    fig = Figure(figsize=(w, h), dpi=100)
    FigureCanvasAgg(fig)
    left, right, bottom, top = margins
    fig.subplots_adjust(
        left=left / ctx.width_mm,
        right=1 - right / ctx.width_mm,
        bottom=bottom / height_mm,
        top=1 - top / height_mm,
        hspace=0.18,
        wspace=0.35,
    )
    return fig


# no dates or versions: the same chart gives the same bytes on every run and machine
_PDF_METADATA = {"CreationDate": None, "Creator": None, "Producer": None}


def _save(fig: Figure) -> bytes:
    buf = io.BytesIO()
    fig.savefig(buf, format="pdf", metadata=_PDF_METADATA)
    return buf.getvalue()


def _time_ticks(
    ax: Axes,
    start: dt.date,
    end: dt.date,
    units: Units,
    *,
    label: bool = True,
    max_ticks: int = 8,
) -> None:
    """Month (or week) ticks over [start, end]; without ``label`` the axis gets no ticks at all.

    Every tick is a handful of matplotlib artists, the main per-chart cost after text, so
    panels that only need the time scale aligned (``label=False``) carry none.
    """
    ax.set_xlim(_day(start) - 0.5, _day(end) + 0.5)
    if not label:
        ax.set_xticks([])
        return
    span = (end - start).days
    ticks: list[float] = []
    names: list[str] = []
    if span > 70:
        d = dt.date(start.year, start.month, 1)
        if d < start:
            d = dt.date(d.year + (d.month == 12), d.month % 12 + 1, 1)
        step = 1 if span <= 240 else 2
        while d <= end:
            ticks.append(_day(d))
            names.append(
                d.strftime("%b %Y") if d.month == 1 or not ticks[:-1] else d.strftime("%b")
            )
            m = d.month - 1 + step
            d = dt.date(d.year + m // 12, m % 12 + 1, 1)
    else:
        d = start + dt.timedelta(days=(7 - start.weekday()) % 7)
        step = 7 if span <= 42 else 14
        while d <= end:
            ticks.append(_day(d))
            names.append(f"{d.day} {d.strftime('%b')}")
            d += dt.timedelta(days=step)
    while len(ticks) > max_ticks:
        ticks, names = ticks[::2], names[::2]
    _x_labels(ax, ticks, names)


def _x_labels(ax: Axes, ticks: Sequence[float], labels: Sequence[str]) -> None:
    """Tick marks below the axis and their labels, drawn as one line of markers and texts.

    They look like matplotlib's own ticks (marker, length, width, the 3.5 pt pad) but cost
    a few artists instead of a handful per tick, as the value labels (:func:`_y_labels`).
    """
    ax.set_xticks([])
    rc = matplotlib.rcParams
    size, pad = rc["xtick.major.size"], rc["xtick.major.pad"]
    ax.plot(
        ticks,
        [0.0] * len(ticks),
        transform=ax.get_xaxis_transform(),
        ls="none",
        marker=TICKDOWN,
        ms=size,
        mew=rc["xtick.major.width"],
        color=rc["xtick.color"],
        clip_on=False,
        zorder=2.01,
    )
    where, va, ha = ax.get_xaxis_text1_transform(size + pad)
    for t, label in zip(ticks, labels, strict=True):
        ax.text(
            t,
            0,
            label,
            transform=where,
            ha=ha,
            va=va,
            fontsize=rc["xtick.labelsize"],
            color=rc["xtick.color"],
            clip_on=False,
        )


def _y_ticks(ax: Axes, lo: float, hi: float, n: int = 4, min_span: float = 0.0) -> None:
    """Few round ticks over [lo, hi] (at least ``min_span`` wide) with a little headroom."""
    if not np.isfinite(lo) or not np.isfinite(hi):
        return
    if hi - lo < max(min_span, 1e-9):
        mid, half = (hi + lo) / 2, max(min_span, 2.0) / 2
        lo, hi = mid - half, mid + half
    raw = (hi - lo) / n
    mag = 10 ** np.floor(np.log10(raw))
    step = min((s * mag for s in (1, 2, 5, 10) if s * mag >= raw), default=10 * mag)
    first = np.floor(lo / step) * step
    ticks = np.arange(first, hi + step * 0.999, step)
    pad = (hi - lo) * 0.06
    ax.set_ylim(min(lo - pad, ticks[0]), max(hi + pad, ticks[-1]))
    # enough decimals that every label is exact for a 1-2-5 step (0.5 -> 1 dp, 0.02 -> 2 dp)
    dp = max(0, -int(np.floor(np.log10(step) + 1e-9)))
    # ASCII hyphen-minus: a U+2212 would make matplotlib embed a second font subset
    _y_labels(ax, [float(t) for t in ticks], [f"{t:,.{dp}f}" for t in ticks])


def _y_labels(ax: Axes, ticks: Sequence[float], labels: Sequence[str]) -> None:
    """Horizontal grid lines with their values at the left, and the axis label beside them.

    Drawn as one line collection and plain texts rather than matplotlib tick objects: each
    tick is several artists (two marks, two labels, a grid line), and they were the largest
    part of a chart's drawing time after the font.
    """
    ax.set_yticks([])
    ax.hlines(ticks, 0, 1, transform=ax.get_yaxis_transform(), colors=T.RULE, lw=0.4, zorder=0.6)
    fig = ax.get_figure()
    assert isinstance(fig, Figure)
    shift = ax.get_yaxis_transform() + ScaledTranslation(-3 / PT, 0, fig.dpi_scale_trans)
    for t, label in zip(ticks, labels, strict=True):
        ax.text(
            0,
            t,
            label,
            transform=shift,
            ha="right",
            va="center",
            fontsize=6.0,
            color=T.MUTED,
            clip_on=False,
        )
    axes_pt = ax.get_position().width * fig.get_figwidth() * PT
    widest = max((len(x) for x in labels), default=1) * 6.0 * 0.62 + 3
    ax.yaxis.set_label_coords(-(widest + 5) / axes_pt, 0.5)


def phase_label_lines(name: str, room: int, max_lines: int = 3) -> str:
    """A phase name for its band: whole on one line, or broken at spaces and after hyphens
    into at most ``max_lines`` lines of at most ``room`` characters; "" when it cannot be
    printed whole (a name is never cut short: the phase table names every phase)."""
    if room < 4 or not name:
        return ""
    if len(name) <= room:
        return name
    parts = re.findall(r"[^\s-]*-|[^\s-]+", name)
    lines: list[str] = []
    for part in parts:
        if lines and len(lines[-1]) + (0 if lines[-1].endswith("-") else 1) + len(part) <= room:
            joiner = "" if lines[-1].endswith("-") else " "
            lines[-1] += joiner + part
        else:
            lines.append(part)
    if len(lines) > max_lines or max(len(x) for x in lines) > room:
        return ""
    return "\n".join(lines)


def _shade_phases(
    ax: Axes, phases: Sequence[PhaseResult], ctx: ChartContext, *, names: bool
) -> None:
    x0, x1 = _day(ctx.start), _day(ctx.end)
    fig = ax.get_figure()
    axes_pt = (
        ax.get_position().width * (fig.get_figwidth() if isinstance(fig, Figure) else 6.0) * PT
    )
    for i, p in enumerate(phases):
        if p.kind == "month":  # no phases recorded: the report month is no phase to mark
            continue
        a, b = max(_day(p.start), x0), min(_day(p.window_end), x1)
        if b < a:
            continue
        ax.axvspan(a - 0.5, b + 0.5, color=T.PHASE_FILLS[i % 2], lw=0, zorder=0)
        if names:
            # fit the name inside its band (about 0.6 em per character at 5.8 pt), 2 pt in
            day_pt = axes_pt / max(x1 - x0 + 1, 1)
            room = int(((b - a + 1) * day_pt - 4) / (5.8 * 0.6))
            name = phase_label_lines(p.name, room)
            if name:
                ax.text(
                    a - 0.5 + 2 / day_pt,
                    0.97,
                    name,
                    transform=ax.get_xaxis_transform(),
                    va="top",
                    ha="left",
                    fontsize=5.8,
                    color=T.MUTED,
                    zorder=5,
                    clip_on=True,
                )


def _grid(ax: Axes) -> None:
    """Value grid lines are drawn with the value labels (:func:`_y_labels`)."""
    ax.set_axisbelow(True)


def _window(a: ClientAnalysis, dates: np.ndarray, ctx: ChartContext) -> np.ndarray:
    x = day_numbers(dates)
    return (x >= _day(ctx.start)) & (x <= _day(ctx.end))


# ---------------------------------------------------------------------------------------------
def _weight_figure(a: ClientAnalysis, ctx: ChartContext, height_mm: float = 78) -> Figure | None:
    log, u, L = a.log, ctx.units, ctx.labels
    sel = _window(a, log.dates, ctx)
    w = log.weight_kg[sel]
    if not np.isfinite(w).any():
        return None
    x = day_numbers(log.dates[sel])
    out = log.weight_outlier[sel]
    fig = _figure(ctx, height_mm, (14, 3, 8, 2))
    ax = fig.add_subplot()
    _shade_phases(ax, a.phases, ctx, names=True)
    _grid(ax)
    used = np.where(out, np.nan, w)
    lo_all, hi_all = np.nanmin(w), np.nanmax(w)
    ax.plot(
        x,
        u.weight(used),
        ls="none",
        marker="o",
        ms=2.0,
        mew=0,
        color=T.POINTS,
        label=L["weighins"],
        zorder=3,
    )
    if a.trend is not None and len(a.trend.dates):
        tsel = _window(a, a.trend.dates, ctx)
        xt = day_numbers(a.trend.dates[tsel])
        lo, hi = a.trend.level_low_kg[tsel], a.trend.level_high_kg[tsel]
        ax.fill_between(
            xt,
            u.weight(lo),
            u.weight(hi),
            color=ctx.accent,
            alpha=0.2,
            lw=0,
            label=L["band"],
            zorder=2,
        )
        ax.plot(
            xt,
            u.weight(a.trend.level_kg[tsel]),
            color=ctx.accent,
            lw=1.5,
            label=L["trend"],
            zorder=4,
        )
        if np.isfinite(lo).any():
            lo_all = min(lo_all, np.nanmin(lo))
            hi_all = max(hi_all, np.nanmax(hi))
    if out.any():
        ax.plot(
            x[out],
            u.weight(w[out]),
            ls="none",
            marker="x",
            ms=3.5,
            mew=0.9,
            color=T.OUTLIER,
            label=L["outliers"],
            zorder=5,
        )
    _y_ticks(ax, float(u.weight(lo_all)), float(u.weight(hi_all)), min_span=float(u.weight(2.0)))
    ax.set_ylabel(u.weight_unit)
    _time_ticks(ax, ctx.start, ctx.end, u)
    return fig


ENERGY_WEEK_DAYS = 7
ENERGY_WEEK_MIN_DAYS = 3  # a week's intake point needs this many logged days


def weekly_energy(
    a: ClientAnalysis, ctx: ChartContext
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Seven-day weeks ending on the report's last day, over the chart's time axis.

    Returns (week centre as day number, mean logged intake, mean estimated expenditure and
    the means of its daily 80 % bounds), all in kcal/day; NaN where a week has too few logged
    days (intake, fewer than ``ENERGY_WEEK_MIN_DAYS``) or no expenditure estimate.
    """
    end = _day(ctx.end)
    n_weeks = max(1, int((end - _day(ctx.start) + 1) // ENERGY_WEEK_DAYS))
    last = end - ENERGY_WEEK_DAYS * np.arange(n_weeks)[::-1]  # last day of each week
    centre = last - (ENERGY_WEEK_DAYS - 1) / 2
    x = day_numbers(a.log.dates)
    intake = np.full(n_weeks, np.nan)
    tdee, low, high = (np.full(n_weeks, np.nan) for _ in range(3))
    e = a.expenditure
    xe = day_numbers(e.dates) if e is not None else np.empty(0)
    for i, d1 in enumerate(last):
        sel = (x > d1 - ENERGY_WEEK_DAYS) & (x <= d1)
        v = a.log.intake_kcal[sel]
        v = v[np.isfinite(v)]
        if v.size >= ENERGY_WEEK_MIN_DAYS:
            intake[i] = float(v.mean())
        if e is not None:
            es = (xe > d1 - ENERGY_WEEK_DAYS) & (xe <= d1) & np.isfinite(e.tdee_kcal)
            if es.any():
                tdee[i] = float(e.tdee_kcal[es].mean())
                low[i] = float(e.low_kcal[es].mean())
                high[i] = float(e.high_kcal[es].mean())
    return centre, intake, tdee, low, high


def _energy_figure(a: ClientAnalysis, ctx: ChartContext, height_mm: float = 66) -> Figure | None:
    """Energy balance week by week: intake and expenditure as points, expenditure with its
    80 % range as an error bar, and the planned intake of each phase as a dotted step."""
    u = ctx.units
    centre, intake, tdee, low, high = weekly_energy(a, ctx)
    if not (np.isfinite(intake).any() or np.isfinite(tdee).any()):
        return None
    fig = _figure(ctx, height_mm, (14, 3, 8, 2))
    ax = fig.add_subplot()
    _shade_phases(ax, a.phases, ctx, names=True)
    _grid(ax)
    lo_all, hi_all = np.inf, -np.inf
    ok = np.isfinite(tdee)
    if ok.any():
        yerr = np.vstack([tdee[ok] - low[ok], high[ok] - tdee[ok]])
        ax.errorbar(
            centre[ok] + 0.9,
            u.energy(tdee[ok]),
            yerr=u.energy(yerr),
            fmt="D",
            ms=3.4,
            mfc="white",
            mec=ctx.accent,
            mew=1.0,
            ecolor=ctx.accent,
            elinewidth=0.9,
            capsize=1.6,
            capthick=0.8,
            zorder=5,
        )
        lo_all, hi_all = float(np.nanmin(low)), float(np.nanmax(high))
    ok = np.isfinite(intake)
    if ok.any():
        ax.plot(
            centre[ok] - 0.9,
            u.energy(intake[ok]),
            ls="none",
            marker="o",
            ms=3.6,
            mew=0,
            color=T.WARM,
            zorder=6,
        )
        lo_all = min(lo_all, float(np.nanmin(intake)))
        hi_all = max(hi_all, float(np.nanmax(intake)))
    x0, x1 = _day(ctx.start), _day(ctx.end)
    for ph in a.phases:
        if ph.target_kcal is None:
            continue
        s0 = max(_day(ph.start), x0)
        s1 = min(_day(ph.window_end), x1)
        if s1 <= s0:
            continue
        ax.plot(
            [s0, s1],
            [float(u.energy(ph.target_kcal))] * 2,
            color=T.DEEP,
            lw=1.0,
            ls=(0, (1, 1.5)),
            zorder=4,
        )
        lo_all, hi_all = min(lo_all, ph.target_kcal), max(hi_all, ph.target_kcal)
    _y_ticks(ax, float(u.energy(lo_all)), float(u.energy(hi_all)), min_span=float(u.energy(600)))
    ax.set_ylabel(u.energy_label)
    _time_ticks(ax, ctx.start, ctx.end, u)
    return fig


def has_planned_intake(a: ClientAnalysis, ctx: ChartContext) -> bool:
    """Whether the energy chart draws a planned intake (a phase target inside the axis)."""
    return any(
        ph.target_kcal is not None
        and min(_day(ph.window_end), _day(ctx.end)) > max(_day(ph.start), _day(ctx.start))
        for ph in a.phases
    )


def _signals_figure(a: ClientAnalysis, ctx: ChartContext, height_mm: float = 80) -> Figure | None:
    log, u, L = a.log, ctx.units, ctx.labels
    sel = _window(a, log.dates, ctx)
    series = [("steps", log.steps[sel]), ("hunger", log.hunger[sel]), ("energy", log.energy[sel])]
    if not any(np.isfinite(v).any() for _, v in series):
        return None
    x = day_numbers(log.dates[sel])
    baselines = {s.name: s.baseline for s in a.signals}
    colours = {"steps": ctx.accent, "hunger": T.WARM, "energy": T.DEEP}
    fig = _figure(ctx, height_mm, (14, 3, 7, 3))
    # not sharex: shared axes share tick locators, and only the bottom panel needs ticks
    axes = fig.subplots(3, 1)
    for i, (ax, (name, v)) in enumerate(zip(axes, series, strict=True)):
        _shade_phases(ax, a.phases, ctx, names=(i == 0))
        _grid(ax)
        ax.set_ylabel(L[f"signal_{name}"])
        if not np.isfinite(v).any():
            ax.set_yticks([])
            ax.text(
                0.5,
                0.5,
                L["signal_none"],
                transform=ax.transAxes,
                ha="center",
                va="center",
                fontsize=6.5,
                color=T.MUTED,
            )
        else:
            c = colours[name]
            ax.plot(x, v, ls="none", marker="o", ms=1.6, mew=0, color=c, alpha=0.4, zorder=3)
            ax.plot(x, rolling_mean(v), color=c, lw=1.3, zorder=4)
            lo, hi = float(np.nanmin(v)), float(np.nanmax(v))
            base = baselines.get(name)
            if base is not None:
                ax.axhline(base, color=T.INK, lw=0.8, ls=(0, (4, 2)), zorder=4)
                ax.text(
                    1.0,
                    base,
                    L["baseline"],
                    transform=ax.get_yaxis_transform(),
                    fontsize=5.5,
                    color=T.INK,
                    va="bottom",
                    ha="right",
                    zorder=6,
                    bbox={"fc": "white", "ec": "none", "pad": 0.6, "alpha": 0.85},
                )
                lo, hi = min(lo, base), max(hi, base)
            if name == "steps":
                _y_ticks(ax, lo, hi, n=3, min_span=2000.0)
            else:
                r0, r1 = RATING
                ax.set_ylim(r0 - 0.6, r1 + 0.6)
                mid = (r0 + r1) // 2
                _y_labels(ax, [r0, mid, r1], [f"{r0:.0f}", f"{mid:.0f}", f"{r1:.0f}"])
        _time_ticks(ax, ctx.start, ctx.end, u, label=(i == 2))
    return fig


def _scale_bodyfat(a: ClientAnalysis, ctx: ChartContext) -> tuple[np.ndarray, np.ndarray]:
    """A scale's body-fat readings (day numbers, %) on the chart's time axis."""
    bf = a.log.body_fat_pct
    if not np.isfinite(bf).any():
        return np.empty(0), np.empty(0)
    x = day_numbers(a.log.dates)
    ok = np.isfinite(bf) & (x >= _day(ctx.start)) & (x <= _day(ctx.end))
    return x[ok], bf[ok]


def _bodycomp_figure(a: ClientAnalysis, ctx: ChartContext, height_mm: float = 48) -> Figure | None:
    """Fat and lean mass as change since the first session (one scale), and the skinfold sum.

    A scale's body-fat readings (bioimpedance) get a panel of their own: a different method,
    never mixed into the skinfold estimates.
    """
    sessions = [s for s in a.bodycomp if not s.rough]
    scale_x, scale_pct = _scale_bodyfat(a, ctx)
    if not sessions and not len(scale_x):
        return None
    u, L = ctx.units, ctx.labels
    fig = _figure(ctx, height_mm, (14, 3, 8, 6))
    if not sessions:
        ax = fig.add_subplot()
        _scale_panel(ax, scale_x, scale_pct, ctx.start, ctx.end, ctx, max_ticks=6)
        return fig
    xs = np.array([_day(s.date) for s in sessions])
    fat = np.array([float(u.weight(s.fat_mass_kg)) for s in sessions])
    lean = np.array([float(u.weight(s.lean_mass_kg)) for s in sessions])
    sums = np.array([np.nan if s.sum_mm is None else s.sum_mm for s in sessions])
    ratios = (3, 2, 2) if len(scale_x) else (3, 2)
    gs = fig.add_gridspec(1, len(ratios), width_ratios=ratios, wspace=0.22)
    left, right = fig.add_subplot(gs[0]), fig.add_subplot(gs[1])
    pad = 10.0 if len(xs) > 1 else 21.0
    first = _date_of(min(xs.min() - pad, _day(ctx.start)) if len(xs) > 1 else xs.min() - pad)
    last = _date_of(xs.max() + pad)
    _grid(left)
    left.set_title(
        L["bodycomp_change"].format(unit=u.weight_unit),
        fontsize=6.5,
        color=T.INK,
        loc="left",
        pad=3,
    )
    left.axhline(0, color=T.MUTED, lw=0.6, zorder=2)
    d_fat, d_lean = fat - fat[0], lean - lean[0]
    left.plot(xs, d_fat, color=T.WARM, lw=1.3, marker="o", ms=3.2, zorder=4)
    left.plot(xs, d_lean, color=ctx.accent, lw=1.3, marker="s", ms=3.0, ls=(0, (4, 1.5)), zorder=4)
    for series, values, name in ((d_fat, fat, L["fat_mass"]), (d_lean, lean, L["lean_mass"])):
        left.annotate(
            f"{name} {values[-1]:.1f} {u.weight_unit}",
            (xs[-1], series[-1]),
            xytext=(4, 0),
            textcoords="offset points",
            va="center",
            ha="left",
            fontsize=5.8,
            color=T.INK,
        )
    lo = float(min(d_fat.min(), d_lean.min(), 0.0))
    hi = float(max(d_fat.max(), d_lean.max(), 0.0))
    _y_ticks(left, lo, hi, n=3, min_span=float(u.weight(1.0)))
    _time_ticks(left, first, last, u, max_ticks=4)
    # room at the right for the "now" labels at the line ends
    left.set_xlim(right=_day(last) + (_day(last) - _day(first)) * 0.28)

    _grid(right)
    right.set_title(L["skinfold_sum"] + " (mm)", fontsize=6.5, color=T.INK, loc="left", pad=3)
    ok = np.isfinite(sums)
    if ok.any():
        right.plot(xs[ok], sums[ok], color=T.DEEP, lw=1.3, marker="D", ms=2.8, zorder=4)
        right.annotate(
            f"{sums[ok][-1]:.0f}",
            (xs[ok][-1], sums[ok][-1]),
            xytext=(0, 4),
            textcoords="offset points",
            ha="center",
            fontsize=5.8,
            color=T.INK,
        )
        _y_ticks(right, float(np.nanmin(sums)), float(np.nanmax(sums)), n=3, min_span=4.0)
    else:
        right.set_yticks([])
    _time_ticks(right, first, last, u, max_ticks=3)
    if len(scale_x):
        start = min(first, _date_of(float(scale_x.min())))
        _scale_panel(fig.add_subplot(gs[2]), scale_x, scale_pct, start, ctx.end, ctx, max_ticks=3)
    return fig


def _scale_panel(
    ax: Axes,
    xs: np.ndarray,
    pct: np.ndarray,
    first: dt.date,
    last: dt.date,
    ctx: ChartContext,
    *,
    max_ticks: int,
) -> None:
    """Scale body-fat readings (%): daily points, labelled as a scale reading."""
    _grid(ax)
    ax.set_title(ctx.labels["scale_bodyfat"] + " (%)", fontsize=6.5, color=T.INK, loc="left", pad=3)
    ax.plot(xs, pct, ls="none", marker="^", ms=2.4, color=T.MUTED, zorder=4)
    ax.annotate(
        f"{pct[-1]:.1f}",
        (xs[-1], pct[-1]),
        xytext=(0, 4),
        textcoords="offset points",
        ha="center",
        fontsize=5.8,
        color=T.INK,
    )
    _y_ticks(ax, float(pct.min()), float(pct.max()), n=3, min_span=2.0)
    _time_ticks(ax, first, last, ctx.units, max_ticks=max_ticks)


def _date_of(day_number: float) -> dt.date:
    return dt.date(1970, 1, 1) + dt.timedelta(days=round(day_number))


def _projection_figure(
    a: ClientAnalysis, ctx: ChartContext, height_mm: float = 58
) -> Figure | None:
    p = a.projection
    if p is None or len(p.dates) == 0:
        return None
    n = len(p.dates) if ctx.projection_days is None else min(ctx.projection_days + 1, len(p.dates))
    if n < 2:
        return None
    p = dataclasses.replace(
        p, dates=p.dates[:n], weight_kg=p.weight_kg[:n], low_kg=p.low_kg[:n], high_kg=p.high_kg[:n]
    )
    u, L = ctx.units, ctx.labels
    start = max(ctx.end - dt.timedelta(days=41), ctx.start)
    end = dt.date.fromisoformat(str(p.dates[-1].astype("datetime64[D]")))
    sub = ChartContext(u, L, ctx.accent, ctx.width_mm, start, end)
    fig = _figure(sub, height_mm, (14, 3, 8, 2))
    ax = fig.add_subplot()
    _grid(ax)
    xp = day_numbers(p.dates)
    ax.axvspan(_day(ctx.end) + 0.5, _day(end) + 0.5, color=T.PHASE_FILLS[0], lw=0, zorder=0)
    ax.fill_between(
        xp,
        u.weight(p.low_kg),
        u.weight(p.high_kg),
        color=ctx.accent,
        alpha=0.16,
        lw=0,
        zorder=2,
        label=L["projection_band"],
    )
    ax.plot(
        xp,
        u.weight(p.weight_kg),
        color=ctx.accent,
        lw=1.5,
        ls=(0, (5, 2)),
        zorder=4,
        label=L["projection"],
    )
    lo_all, hi_all = float(np.nanmin(p.low_kg)), float(np.nanmax(p.high_kg))
    if a.trend is not None and len(a.trend.dates):
        tsel = _window(a, a.trend.dates, sub)
        ax.plot(
            day_numbers(a.trend.dates[tsel]),
            u.weight(a.trend.level_kg[tsel]),
            color=ctx.accent,
            lw=1.5,
            zorder=4,
            label=L["trend"],
        )
        if tsel.any():
            lo_all = min(lo_all, float(np.nanmin(a.trend.level_kg[tsel])))
            hi_all = max(hi_all, float(np.nanmax(a.trend.level_kg[tsel])))
    if p.goal_weight_kg is not None:
        g = float(u.weight(p.goal_weight_kg))
        ax.axhline(g, color=T.DEEP, lw=0.9, ls=(0, (1, 1.5)), zorder=3, label=L["goal"])
        # keep the goal in view only if it is reasonably near the projected range
        span = hi_all - lo_all
        if p.goal_weight_kg >= lo_all - span:
            lo_all = min(lo_all, p.goal_weight_kg)
            hi_all = max(hi_all, p.goal_weight_kg)
    _y_ticks(ax, float(u.weight(lo_all)), float(u.weight(hi_all)))
    ax.set_ylabel(u.weight_unit)
    _time_ticks(ax, start, end, u)
    return fig


# ---------------------------------------------------------------------------------------------
# Legends are set by the layout as a line of text above each chart (symbol in the series'
# colour, then its label): as text they are searchable and cost nothing to draw, where a
# matplotlib legend box is about a sixth of a chart's drawing time.
LegendEntry = tuple[str, str, str]  # (symbol, colour hex, label)
LINE, DOT, BLOCK, CROSS, DASHED, DOTTED, SQUARE, DIAMOND = "━", "●", "█", "✕", "╍", "┈", "■", "◆"
TRIANGLE = "▲"
OPEN_DIAMOND, BAR = "◇", "┃"


def _tint(colour: str, alpha: float) -> str:
    """The colour of ``colour`` at ``alpha`` over white (how a translucent band prints)."""
    rgb = [int(colour[i : i + 2], 16) for i in (1, 3, 5)]
    mixed = [round(255 - alpha * (255 - c)) for c in rgb]
    return "#" + "".join(f"{c:02X}" for c in mixed)


def legend(key: str, a: ClientAnalysis, ctx: ChartContext) -> list[LegendEntry]:
    """What each mark in chart ``key`` means, for the series this client's chart shows."""
    L, acc = ctx.labels, ctx.accent
    if key == "weight":
        out = [(DOT, T.POINTS, L["weighins"])]
        if a.trend is not None:
            out += [(LINE, acc, L["trend"]), (BLOCK, _tint(acc, 0.2), L["band"])]
        if a.log.weight_outlier.any():
            out.append((CROSS, T.OUTLIER, L["outliers"]))
        return out
    if key == "energy":
        out = [(DOT, T.WARM, L["intake_week"])]
        if a.expenditure is not None:
            out += [(OPEN_DIAMOND, acc, L["tdee_week"]), (BAR, acc, L["tdee_band"])]
        if has_planned_intake(a, ctx):
            out.append((DOTTED, T.DEEP, L["planned"]))
        return out
    if key == "bodycomp":
        out = []
        if any(not s.rough for s in a.bodycomp):
            out = [
                (DOT, T.WARM, L["legend_fat"]),
                (SQUARE, acc, L["legend_lean"]),
                (DIAMOND, T.DEEP, L["legend_sum"]),
            ]
        if len(_scale_bodyfat(a, ctx)[0]):
            out.append((TRIANGLE, T.MUTED, L["legend_scale_bodyfat"]))
        return out
    if key == "projection":
        out = [
            (LINE, acc, L["trend"]),
            (DASHED, acc, L["projection"]),
            (BLOCK, _tint(acc, 0.16), L["projection_band"]),
        ]
        if a.projection is not None and a.projection.goal_weight_kg is not None:
            out.append((DOTTED, T.DEEP, L["goal"]))
        return out
    return []


ChartFn = Callable[..., "Figure | None"]  # (analysis, context[, height_mm])

#: The charts in report order, each as a function drawing its figure (or None: nothing to draw).
FIGURES: dict[str, ChartFn] = {
    "weight": _weight_figure,
    "energy": _energy_figure,
    "signals": _signals_figure,
    "bodycomp": _bodycomp_figure,
    "projection": _projection_figure,
}


def _one(key: str) -> Callable[..., bytes | None]:
    def chart(a: ClientAnalysis, ctx: ChartContext, height_mm: float | None = None) -> bytes | None:
        fn = FIGURES[key]
        fig = fn(a, ctx) if height_mm is None else fn(a, ctx, height_mm)
        return None if fig is None else _save(fig)

    chart.__name__ = f"{key}_chart"
    chart.__doc__ = f"The {key} chart alone as PDF bytes (its own file, its own fonts)."
    return chart


weight_chart = _one("weight")
energy_chart = _one("energy")
signals_chart = _one("signals")
bodycomp_chart = _one("bodycomp")
projection_chart = _one("projection")

#: Each chart as its own file (PDF bytes, or another format where ``_save`` is replaced).
CHARTS = {
    "weight": weight_chart,
    "energy": energy_chart,
    "signals": signals_chart,
    "bodycomp": bodycomp_chart,
    "projection": projection_chart,
}


@dataclass(frozen=True)
class ChartPages:
    """Several charts in one PDF, one page each, so their fonts are embedded once.

    ``pages`` maps a chart key to its 0-based page in ``pdf``.
    """

    pdf: bytes
    pages: Mapping[str, int]


def chart_pages(
    figures: Iterable[tuple[str, Callable[[], Figure | None]]],
    on_chart: Callable[[str], None] | None = None,
) -> ChartPages | None:
    """Draw each chart and save it as one page of a single PDF (None when none has data).

    matplotlib subsets and embeds the fonts when the file is closed, once for all pages,
    instead of once per chart: with five charts this was about a sixth of the chart time.
    ``on_chart(key)`` is called after each chart is drawn and saved (for timings).
    """
    buf = io.BytesIO()
    pages: dict[str, int] = {}
    with PdfPages(buf, metadata=_PDF_METADATA) as pdf:
        for key, draw in figures:
            fig = draw()
            if fig is not None:
                pdf.savefig(fig)
                pages[key] = len(pages)
            if on_chart is not None:
                on_chart(key)
    return ChartPages(buf.getvalue(), pages) if pages else None
