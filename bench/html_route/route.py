"""The same report content through jinja2 HTML + WeasyPrint (benchmark comparison only).

Content is taken from the product's own pieces so that only the layout route differs:
the view model (``reportgen.report.viewmodel``), the wording templates
(``templates/report/*.j2`` through ``reportgen.report.wording``) and the same matplotlib
chart functions, saved as SVG (the vector format WeasyPrint embeds) instead of PDF.
The HTML page itself (``client.html.j2``, ``practitioner.html.j2``, ``style.css``) is ours.
"""

from __future__ import annotations

import base64
import contextlib
import io
from collections.abc import Iterator
from functools import cache
from pathlib import Path
from typing import Any

import jinja2
from markupsafe import Markup

from reportgen.config import Config
from reportgen.results import ClientAnalysis

HERE = Path(__file__).resolve().parent
FIGURE_KEYS = ("weight", "change", "rate", "intake", "deficit", "tdee", "adaptation", "bodyfat")


@cache
def _env() -> jinja2.Environment:
    return jinja2.Environment(
        loader=jinja2.FileSystemLoader(str(HERE)),
        autoescape=True,
        undefined=jinja2.StrictUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
    )


@cache
def _css() -> Any:
    from weasyprint import CSS

    return CSS(filename=str(HERE / "style.css"))


def markup_to_html(text: str) -> Markup:
    """The wording templates' line markup (see ``reportgen.report.wording``) as HTML.

    The template output is already escaped, with only its own inline tags, so it is
    inserted as markup.
    """
    out: list[str] = []
    para: list[str] = []
    cls = ""
    in_list = False

    def flush() -> None:
        nonlocal para, cls
        if para:
            attr = f' class="{cls}"' if cls else ""
            out.append(f"<p{attr}>{' '.join(para)}</p>")
        para, cls = [], ""

    def end_list() -> None:
        nonlocal in_list
        if in_list:
            out.append("</ul>")
            in_list = False

    for raw in text.splitlines():
        line = raw.strip()
        if not line:
            flush()
            end_list()
            continue
        if line.startswith("## "):
            flush()
            end_list()
            out.append(f"<h3>{line[3:]}</h3>")
        elif line.startswith("# "):
            flush()
            end_list()
            out.append(f"<h2>{line[2:]}</h2>")
        elif line.startswith("- "):
            flush()
            if not in_list:
                out.append("<ul>")
                in_list = True
            out.append(f"<li>{line[2:]}</li>")
        elif line.startswith("> ") and not para:
            end_list()
            cls = "lead"
            para.append(line[2:])
        elif line.startswith("~ ") and not para:
            end_list()
            cls = "caption"
            para.append(line[2:])
        elif line[:2] == "= ":
            flush()
            end_list()
            out.append(f'<h1 class="title">{line[2:]}</h1>')
        elif line[:2] == "+ ":
            flush()
            end_list()
            out.append(f'<p class="subtitle">{line[2:]}</p>')
        else:
            end_list()
            para.append(line)
    flush()
    end_list()
    return Markup("\n".join(out))


def _save_svg(fig: Any) -> bytes:
    buf = io.BytesIO()
    fig.savefig(buf, format="svg", metadata={"Date": None})
    return buf.getvalue()


@contextlib.contextmanager
def _charts_as_svg() -> Iterator[None]:
    """Let the product's chart functions save SVG instead of PDF while the route runs."""
    from reportgen.report import charts

    saved = charts._save
    charts._save = _save_svg  # type: ignore[assignment]
    try:
        yield
    finally:
        charts._save = saved  # type: ignore[assignment]


def _img(svg: bytes | None) -> str | None:
    if not svg:
        return None
    return "data:image/svg+xml;base64," + base64.b64encode(svg).decode("ascii")


def _client_context(analysis: ClientAnalysis, config: Config) -> dict[str, Any]:
    from reportgen.report.client import client_page_view, draw_charts
    from reportgen.report.plateau_view import showing_causes
    from reportgen.report.theme import page_size
    from reportgen.report.wording import Wording

    words = Wording(config, "report/client.j2")
    # the same view and page-level facts (vm.extra) as the product's route
    vm, pv = client_page_view(analysis, config)
    progress = Markup("")
    if pv is not None:
        pw = Wording(config, "report/plateau.j2")
        parts = ["client"]
        if showing_causes(pv):
            parts.append("client_causes")  # the words; the small drawing is left out
        parts += ["options_heading", "client_options"]
        progress = Markup("\n".join(markup_to_html(pw.text(m, pv)) for m in parts))
    width_mm = page_size(config)[0] / 72 * 25.4 - 36
    with _charts_as_svg():
        charts = draw_charts(analysis, config, width_mm, words.labels["chart"])
    labels = words.labels
    figures = []
    for key in FIGURE_KEYS:
        f = vm.figures[key]
        figures.append(
            {
                "label": labels["figures"][key],
                "value": f.value if f.known else labels["not_enough"],
                "known": f.known,
                "note": Markup(words.text("figure_note", f, vm).strip()),
            }
        )
    chart_items = []
    for key, title in labels["charts"].items():
        chart_items.append(
            {
                "title": title,
                "src": _img(charts.get(key)),
                "missing": markup_to_html(words.text("chart_missing", key, vm)),
                "caption": markup_to_html(words.text("chart_caption", key, vm)),
            }
        )
    cols = labels["phase_cols"]
    units = [u.replace("{e}", vm.energy_unit + "/day") for u in labels["phase_units"]]
    return {
        "practice": config.practice,
        "vm": vm,
        "labels": labels,
        "paper": config.report.paper,
        "accent": config.report.accent_colour,
        "header": markup_to_html(words.text("header", vm)),
        "figures": figures,
        "narrative": markup_to_html(words.text("narrative", vm)),
        "progress": progress,
        "charts_intro": markup_to_html(words.text("charts_intro", vm)),
        "charts": chart_items,
        "phases_text": markup_to_html(words.text("phases", vm)),
        "phase_head": list(zip(cols, units, strict=True)),
        "phase_rows": vm.phases,
        "quality": markup_to_html(words.text("quality", vm)),
        "methods": markup_to_html(words.text("methods", vm)),
        "cautions": markup_to_html(words.text("cautions", vm)),
    }


def client_html(analysis: ClientAnalysis, config: Config) -> str:
    return _env().get_template("client.html.j2").render(**_client_context(analysis, config))


def _pdf(html: str) -> bytes:
    from weasyprint import HTML

    return HTML(string=html, base_url=str(HERE)).write_pdf(stylesheets=[_css()])


def render_client_html_pdf(analysis: ClientAnalysis, config: Config) -> bytes:
    """The client report through jinja2 HTML + WeasyPrint."""
    return _pdf(client_html(analysis, config))


def render_practitioner_html_pdf(analysis: ClientAnalysis, config: Config) -> bytes:
    """The one-page practitioner summary through jinja2 HTML + WeasyPrint."""
    ctx = _practitioner_context(analysis, config)
    return _pdf(_env().get_template("practitioner.html.j2").render(**ctx))


def _practitioner_context(analysis: ClientAnalysis, config: Config) -> dict[str, Any]:
    """The practitioner page from the product's summary view and practitioner wording."""
    from reportgen.report.plateau_view import plateau_view
    from reportgen.report.practitioner import summary_view
    from reportgen.report.wording import Wording

    words = Wording(config, "report/practitioner.j2")
    sv = summary_view(analysis, config, words)
    labels = words.labels
    progress: dict[str, Any] | None = None
    pv = plateau_view(analysis, config)
    if pv is not None:  # the product's progress block: status line, parts table, method
        pw = Wording(config, "report/plateau.j2")
        tl = pw.table_labels
        progress = {
            "status": Markup(pw.text("practitioner_status", pv)),
            "head": [
                tl["head"],
                tl["total"],
                *(tl["parts"][r.code] for r in pv.rows),
                tl["left-over"],
            ],
            "estimate": [
                tl["estimate"],
                pv.change_effect,
                *(r.effect if r.measured else tl["not-measured"] for r in pv.rows),
                pv.leftover_effect or "\u2013",
            ],
            "range": [
                tl["range"],
                pv.change_effect_interval,
                *(r.effect_interval if r.measured else "\u2013" for r in pv.rows),
                "",
            ],
            "notes": Markup(pw.text("practitioner_notes", pv)) if pv.rows else "",
            "method": Markup(pw.text("practitioner_method", pv)),
        }
    ident = [(labels["ident"][k], v) for k, v in sv.ident]
    half = (len(ident) + 1) // 2
    return {
        "practice": config.practice,
        "paper": config.report.paper,
        "accent": config.report.accent_colour,
        "labels": labels,
        "header": markup_to_html(words.text("header", sv)),
        "ident_rows": list(zip(ident[:half], [*ident[half:], ("", "")], strict=False)),
        "special": Markup(words.text("special_line", sv).strip()),
        "rows": [(labels["rows"][k], v, i, m) for k, v, i, m in sv.rows],
        "phases": sv.phases,
        "progress": progress,
        "flags": [Markup(words.text("flag_line", f)) for f in sv.flags],
        "quality": Markup(words.text("quality_line", sv)),
        "references": [Markup(words.text("reference_line", m)) for m in sv.methods],
        "footnote": Markup(words.text("footnote", sv)),
    }
