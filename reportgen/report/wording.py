"""All wording comes from jinja2 templates: this module loads them and turns text into flowables.

Template lookup is a ``ChoiceLoader``: the configured ``[report] templates_dir`` first (laid
out like the shipped folder, e.g. ``report/client.j2``), the shipped templates second, so a
practice overrides one file and keeps the rest.  Autoescaping is on: every value from the
view model (client names, notes) is XML-escaped before it reaches reportlab's paragraph
markup, while the markup written in the templates themselves (``<b>``) passes through.

Templates write a tiny line-based markup, one block per paragraph:

``# Title``    section heading (bookmarked)      ``## Title``   sub-heading (bookmarked)
``- text``     bullet                            ``> text``     lead paragraph
``~ text``     small print (captions)            blank line     ends a paragraph
``= text``     document title                    ``+ text``     subtitle line
"""

from __future__ import annotations

import re
from collections.abc import Callable
from functools import cache
from pathlib import Path
from typing import Any

import jinja2
import jinja2.sandbox
from markupsafe import Markup, escape
from reportlab.platypus import Flowable

from reportgen.config import Config
from reportgen.resources import template_problem, templates_dir

from .para import Paragraph
from .theme import Theme


@cache
def _environment(override: str) -> jinja2.Environment:
    loaders: list[jinja2.BaseLoader] = []
    if override:
        loaders.append(jinja2.FileSystemLoader(override))
    loaders.append(jinja2.FileSystemLoader(str(templates_dir())))
    # Sandboxed: a template (the practice's override folder may be shared or copied from
    # elsewhere) can format values but never reach Python internals or run commands.
    return jinja2.sandbox.SandboxedEnvironment(
        loader=jinja2.ChoiceLoader(loaders),
        autoescape=True,
        undefined=jinja2.StrictUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
        keep_trailing_newline=False,
    )


def environment(config: Config) -> jinja2.Environment:
    folder = config.resolve_path(config.report.templates_dir)
    return _environment(str(folder) if folder else "")


class TemplateProblem(ValueError):
    """A template that cannot be used (syntax, a missing value, an unsafe operation)."""


class Wording:
    """The macros and label tables of one template file, e.g. ``report/client.j2``.

    Any template error (syntax, undefined value, an operation the sandbox refuses) becomes a
    :class:`TemplateProblem` naming the template.
    """

    def __init__(self, config: Config, name: str) -> None:
        env = environment(config)
        self._name = name
        self._env = env
        try:
            self._module = env.get_template(name).module
        except (jinja2.TemplateError, jinja2.sandbox.SecurityError) as exc:
            raise TemplateProblem(template_problem(exc, name, env)) from None

    def __getattr__(self, name: str) -> Any:
        value = getattr(self._module, name)
        if isinstance(value, jinja2.runtime.Macro):
            macro = value

            def call(*args: Any, **kwargs: Any) -> Any:
                try:
                    return macro(*args, **kwargs)
                except (jinja2.TemplateError, jinja2.sandbox.SecurityError) as exc:
                    raise TemplateProblem(template_problem(exc, self._name, self._env)) from None

            return call
        return value

    def text(self, macro: str, *args: Any) -> str:
        fn: Callable[..., Any] = getattr(self, macro)
        return str(fn(*args))


def esc(value: object) -> str:
    """Escape text for reportlab paragraph markup (for values laid out outside templates)."""
    return str(escape(str(value)))


_NUMBER_UNIT = re.compile(r"(\d) (%|kg/week|lb/week|kg|lb|kcal/day|kJ/day|points)(?![\w/])")


def keep_units(text: str) -> str:
    """A number and its unit on one line: '30.9 %' never wraps as '30.9' / '%'."""
    return _NUMBER_UNIT.sub("\\1\u00a0\\2", text)


def whole_dates(span: str) -> str:
    """'01 Aug 2026 – 21 Aug 2026' wraps only at its dash, never inside a date."""
    return " \u2013 ".join(part.replace(" ", "\u00a0") for part in span.split(" \u2013 "))


def markup(value: str) -> Markup:
    return Markup(value)


def blocks(
    text: str, theme: Theme, *, heading_hook: Callable[[Paragraph, int], None] | None = None
) -> list[Flowable]:
    """Turn template output in the line markup above into paragraphs."""
    out: list[Flowable] = []
    buf: list[str] = []
    style = "body"

    def flush() -> None:
        nonlocal buf, style
        if buf:
            out.append(Paragraph(keep_units(" ".join(buf)), theme[style]))
        buf = []
        style = "body"

    for raw in text.splitlines():
        line = raw.strip()
        if not line:
            flush()
            continue
        for prefix, kind in (("## ", "h2"), ("# ", "h1")):
            if line.startswith(prefix):
                flush()
                para = Paragraph(line[len(prefix) :], theme[kind])
                if heading_hook:
                    heading_hook(para, 0 if kind == "h1" else 1)
                out.append(para)
                break
        else:
            if line.startswith("- "):
                flush()
                out.append(Paragraph(keep_units(line[2:]), theme["bullet"], bulletText="\u2022"))
            elif line.startswith("> ") and not buf:
                style = "lead"
                buf.append(line[2:])
            elif line.startswith("~ ") and not buf:
                style = "caption"
                buf.append(line[2:])
            elif line[:2] in ("= ", "+ "):
                flush()
                out.append(Paragraph(line[2:], theme["title" if line[0] == "=" else "subtitle"]))
            else:
                buf.append(line)
    flush()
    return out


def template_path(config: Config, name: str) -> Path | None:
    """Where a template was found (for diagnostics)."""
    env = environment(config)
    source = env.loader.get_source(env, name) if env.loader else None
    return Path(source[1]) if source and source[1] else None
