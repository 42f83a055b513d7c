"""Practice configuration: one TOML file a clinic edits once.

Every setting has a default, so no file at all is a valid configuration
(a neutral, unbranded report).  Unknown keys and bad values are refused with a
message that names the key, so a typo never silently falls back to a default.
"""

from __future__ import annotations

import dataclasses
import hashlib
import json
import math
import re
import textwrap
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Literal, get_args, get_origin, get_type_hints

from reportgen.choices import BODYFAT_EQUATIONS as BODYFAT_EQUATIONS
from reportgen.choices import DATE_ORDERS as DATE_ORDERS
from reportgen.choices import DENSITY_CONVERSIONS as DENSITY_CONVERSIONS
from reportgen.choices import ENERGY_UNITS as ENERGY_UNITS
from reportgen.choices import MAIL_SECURITY as MAIL_SECURITY

PAPER_SIZES = ("A4", "letter")
PROJECTION_WEEKS_MAX = 26  # the analysis projects this far; a report shows its configured part
WEIGHT_UNITS = ("kg", "lb")
SECTIONS = (
    "overview",
    "charts",
    "phases",
    "quality",
    "methods",
    "cautions",
)


class ConfigError(ValueError):
    """A configuration file that cannot be used; the message names the key."""


@dataclass(frozen=True)
class PracticeSettings:
    name: str = ""
    address: str = ""
    phone: str = ""
    email: str = ""
    website: str = ""
    logo: str = ""  # path to a PNG or SVG, relative to the configuration file


@dataclass(frozen=True)
class ReportSettings:
    paper: str = "A4"
    weight_unit: str = "kg"
    energy_unit: str = "kcal"
    date_format: str = "%d %b %Y"
    accent_colour: str = "#1F5A7A"
    sections: tuple[str, ...] = SECTIONS
    templates_dir: str = ""  # folder whose templates override the shipped ones
    projection_weeks: int = 8


@dataclass(frozen=True)
class AnalysisSettings:
    bodyfat_equation: str = "auto"
    density_conversion: str = "siri"
    activity_factor: float = 1.5  # PAL used only when a client has no usable baseline
    target_rates_pct_per_week: tuple[float, ...] = (0.5, 0.75, 1.0)


@dataclass(frozen=True)
class BookSettings:
    date_order: str = "auto"  # for logs whose dates could be day-first or month-first

    def date_order_setting(self) -> Literal["day-first", "month-first"] | None:
        """The order for the readers; None for "auto" (decide from the values or refuse)."""
        if self.date_order == "day-first":
            return "day-first"
        if self.date_order == "month-first":
            return "month-first"
        return None


@dataclass(frozen=True)
class MailSettings:
    host: str = "localhost"
    port: int = 587
    security: str = "starttls"
    user: str = ""
    from_address: str = ""
    from_name: str = ""
    reply_to: str = ""
    timeout_s: float = 30.0
    retries: int = 3
    encrypt: bool = False
    password_column: str = "pdf_password"
    secret_file: str = ""  # practice secret for derived PDF passwords; keep outside the book
    referral_column: str = "referral_email"
    send_practitioner_copy: bool = False


@dataclass(frozen=True)
class Config:
    practice: PracticeSettings = field(default_factory=PracticeSettings)
    report: ReportSettings = field(default_factory=ReportSettings)
    analysis: AnalysisSettings = field(default_factory=AnalysisSettings)
    book: BookSettings = field(default_factory=BookSettings)
    mail: MailSettings = field(default_factory=MailSettings)
    source: str | None = None  # the file it was read from, if any
    # sha256 of the bytes read from that file (bookkeeping, not a setting: not compared)
    source_sha256: str | None = field(default=None, compare=False)

    def as_dict(self) -> dict[str, Any]:
        d = dataclasses.asdict(self)
        d.pop("source")
        d.pop("source_sha256")
        return d

    def resolve_path(self, value: str) -> Path | None:
        """A path setting, resolved against the configuration file's folder."""
        if not value:
            return None
        p = Path(value).expanduser()
        if not p.is_absolute() and self.source:
            p = Path(self.source).parent / p
        return p


_TABLES = {
    "practice": PracticeSettings,
    "report": ReportSettings,
    "analysis": AnalysisSettings,
    "book": BookSettings,
    "mail": MailSettings,
}
_CHOICES: dict[tuple[str, str], tuple[str, ...]] = {
    ("report", "paper"): PAPER_SIZES,
    ("report", "weight_unit"): WEIGHT_UNITS,
    ("report", "energy_unit"): ENERGY_UNITS,
    ("analysis", "bodyfat_equation"): BODYFAT_EQUATIONS,
    ("analysis", "density_conversion"): DENSITY_CONVERSIONS,
    ("mail", "security"): MAIL_SECURITY,
    ("book", "date_order"): DATE_ORDERS,
}
_COLOUR = re.compile(r"^#[0-9A-Fa-f]{6}$")


def _coerce(table: str, key: str, value: Any, hint: Any) -> Any:
    where = f"[{table}] {key}"
    origin = get_origin(hint)
    if origin is tuple:
        item_type = get_args(hint)[0]
        if not isinstance(value, list):
            raise ConfigError(f"{where} must be a list, got {value!r}")
        return tuple(_coerce(table, key, v, item_type) for v in value)
    if hint is bool:
        if not isinstance(value, bool):
            raise ConfigError(f"{where} must be true or false, got {value!r}")
        return value
    if hint is int:
        if isinstance(value, bool) or not isinstance(value, int):
            raise ConfigError(f"{where} must be a whole number, got {value!r}")
        return value
    if hint is float:
        if isinstance(value, bool) or not isinstance(value, int | float):
            raise ConfigError(f"{where} must be a number, got {value!r}")
        if not math.isfinite(value):  # TOML allows nan and inf
            raise ConfigError(f"{where} must be a finite number, got {value!r}")
        return float(value)
    if hint is str:
        if not isinstance(value, str):
            raise ConfigError(f"{where} must be text in quotes, got {value!r}")
        return value
    raise ConfigError(f"{where}: unsupported setting type")  # pragma: no cover


def _table_problems(table: str, value: Any) -> tuple[dict[str, Any], list[str]]:
    """Coerce one TOML table's keys; every bad key gives one message."""
    cls = _TABLES[table]
    hints = get_type_hints(cls)
    kwargs: dict[str, Any] = {}
    problems: list[str] = []
    for key, v in value.items():
        if key not in hints:
            known = ", ".join(hints)
            problems.append(f"unknown setting [{table}] {key}; known settings: {known}")
            continue
        try:
            coerced = _coerce(table, key, v, hints[key])
        except ConfigError as exc:
            problems.append(str(exc))
            continue
        choices = _CHOICES.get((table, key))
        if choices and isinstance(coerced, str) and coerced not in choices:
            # choices are matched without regard to case ("Letter" is letter)
            same = [c for c in choices if c.casefold() == coerced.strip().casefold()]
            if same:
                coerced = same[0]
        if choices and coerced not in choices:
            problems.append(
                f"[{table}] {key} = {v!r} is not allowed; use one of: {', '.join(choices)}"
            )
            continue
        kwargs[key] = coerced
    return kwargs, problems


def config_problems(data: dict[str, Any], source: str | None = None) -> list[str]:
    """Every problem in parsed TOML data, one message each (empty when it is valid)."""
    return _build(data, source)[1]


def _build(data: dict[str, Any], source: str | None) -> tuple[Config | None, list[str]]:
    parts: dict[str, Any] = {}
    problems: list[str] = []
    for table, value in data.items():
        if table not in _TABLES:
            known = ", ".join(f"[{t}]" for t in _TABLES)
            problems.append(f"unknown section [{table}]; known sections: {known}")
            continue
        if not isinstance(value, dict):
            problems.append(f"[{table}] must be a section, not a single value")
            continue
        kwargs, more = _table_problems(table, value)
        problems += more
        parts[table] = _TABLES[table](**kwargs)
    # The keys that were fine are checked for meaning too, so one run lists every problem.
    cfg = Config(**parts, source=source)
    problems += _check(cfg)
    return (None, problems) if problems else (cfg, [])


def config_from_dict(data: dict[str, Any], source: str | None = None) -> Config:
    """Build a validated :class:`Config` from parsed TOML data.

    Raises :class:`ConfigError` naming every bad key (one per line).
    """
    cfg, problems = _build(data, source)
    if cfg is None:
        raise ConfigError("\n".join(problems))
    return cfg


#: strftime directives a report date may use: portable ones only (no platform extensions
#: such as %-d, which Windows lacks).
_DATE_DIRECTIVES = frozenset("aAbBdmyYj%")
_DATE_PARTS = frozenset("bBdmyY")
_EMAIL = re.compile(r"^[^@\s<>\"]+@[^@\s<>\"]+\.[^@\s<>\"]+$")
_PNG_MAGIC = b"\x89PNG\r\n\x1a\n"


def _date_format_problem(fmt: str) -> str | None:
    where = f"[report] date_format = {fmt!r}"
    directives = re.findall(r"%(.?)", fmt)
    bad = sorted({d for d in directives if d not in _DATE_DIRECTIVES})
    if bad:
        shown = ", ".join("%" + d for d in bad)
        return (
            f"{where} uses {shown}, which is not a date code reportgen accepts; "
            'use %d %m %Y %y %b %B %a %A %j (e.g. "%d %b %Y" gives 03 Nov 2026)'
        )
    if not _DATE_PARTS.intersection(directives):
        return f'{where} shows no day, month or year; e.g. "%d %b %Y" gives 03 Nov 2026'
    return None


def _logo_problem(cfg: Config) -> str | None:
    path = cfg.resolve_path(cfg.practice.logo)
    if path is None:
        return None
    where = f"[practice] logo = {cfg.practice.logo!r}"
    if path.suffix.lower() not in (".png", ".svg"):
        return f"{where} must be a PNG or SVG file (.png or .svg)"
    from reportgen.io import guard

    if guard.file_state(path) == "absent":
        rel = " (relative paths are taken from the configuration file's folder)"
        return f"{where}: no such file at {path}{rel if cfg.source else ''}"
    try:  # type and size first: /dev/zero or a FIFO must neither hang nor fill memory
        head = guard.read_input(path, str(path), guard.MAX_LOGO_BYTES, "logo image")[:4096]
    except guard.InputRefused as exc:
        return f"{where}: {exc.message}"
    if path.suffix.lower() == ".png" and not head.startswith(_PNG_MAGIC):
        return f"{where}: {path.name} is not a PNG image (save it again as PNG)"
    if path.suffix.lower() == ".svg" and b"<svg" not in head:
        return f"{where}: {path.name} is not an SVG image (no <svg> element at its start)"
    return None


def _check(cfg: Config) -> list[str]:
    """Problems that involve a value's meaning (ranges, files, formats), one message each."""
    out: list[str] = []
    r = cfg.report
    if not _COLOUR.match(r.accent_colour):
        out.append(f'[report] accent_colour = {r.accent_colour!r} must be a colour like "#1F5A7A"')
    for s in r.sections:
        if s not in SECTIONS:
            out.append(
                f"[report] sections: {s!r} is not a section; use any of: {', '.join(SECTIONS)}"
            )
    dupes = sorted({s for s in r.sections if r.sections.count(s) > 1})
    if dupes:
        out.append(f"[report] sections lists {', '.join(dupes)} more than once")
    if "cautions" not in r.sections:
        out.append('[report] sections must include "cautions": every report carries them')
    if not 1 <= r.projection_weeks <= PROJECTION_WEEKS_MAX:
        out.append(f"[report] projection_weeks must be between 1 and {PROJECTION_WEEKS_MAX}")
    problem = _date_format_problem(r.date_format)
    if problem:
        out.append(problem)
    if r.templates_dir:
        folder = cfg.resolve_path(r.templates_dir)
        if folder is None or not folder.is_dir():
            out.append(f"[report] templates_dir = {r.templates_dir!r}: no such folder at {folder}")
    problem = _logo_problem(cfg)
    if problem:
        out.append(problem)
    if not 1.2 <= cfg.analysis.activity_factor <= 2.4:
        out.append("[analysis] activity_factor must be between 1.2 and 2.4")
    for rate in cfg.analysis.target_rates_pct_per_week:
        if not 0 < rate <= 1.5:
            out.append(
                "[analysis] target_rates_pct_per_week values must be above 0 and at most 1.5"
            )
            break
    for table in _TABLES:
        for key, value in dataclasses.asdict(getattr(cfg, table)).items():
            if isinstance(value, str) and any(ord(c) < 32 or 0x7F <= ord(c) <= 0x9F for c in value):
                out.append(f"[{table}] {key} holds a control character (line break, tab...)")
    m = cfg.mail
    if not 0 < m.port < 65536:
        out.append(f"[mail] port = {m.port} is not a port number")
    if m.retries < 0 or m.retries > 10:
        out.append("[mail] retries must be between 0 and 10")
    if m.timeout_s <= 0:
        out.append("[mail] timeout_s must be above 0 seconds")
    for key in ("from_address", "reply_to"):
        value = getattr(m, key)
        if value and not _EMAIL.match(value):
            out.append(f"[mail] {key} = {value!r} is not an e-mail address like name@example.org")
    for key in ("password_column", "referral_column"):
        if not getattr(m, key).strip():
            out.append(f"[mail] {key} must name a roster column")
    return out


def load_config(path: str | Path | None) -> Config:
    """Read and validate a configuration file; ``None`` gives the defaults."""
    if path is None:
        return Config()
    p = Path(path)
    try:
        raw = p.read_bytes()
    except OSError as exc:
        raise ConfigError(f"{p}: cannot read the configuration file ({exc.strerror})") from exc
    try:
        data = tomllib.loads(raw.decode("utf-8-sig"))
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise ConfigError(f"{p}: not valid TOML ({exc})") from exc
    try:
        cfg = config_from_dict(data, source=str(p))
        return dataclasses.replace(cfg, source_sha256=hashlib.sha256(raw).hexdigest())
    except ConfigError as exc:
        raise ConfigError("\n".join(f"{p}: {line}" for line in str(exc).splitlines())) from None


def check_config_file(path: str | Path) -> list[str]:
    """Every problem in a configuration file, one message per line (empty: it is valid)."""
    try:
        load_config(path)
    except ConfigError as exc:
        return str(exc).splitlines()
    return []


# ---------------------------------------------------------------- the commented file

#: What each section is for (first lines of its block in the written file).
SECTION_DOCS: dict[str, str] = {
    "practice": "Your practice, as printed on every report and summary.",
    "report": "How the client reports look.",
    "analysis": "Methods and assumptions of the analysis.",
    "book": "How the client book is read.",
    "mail": "How `reportgen send` delivers the reports by e-mail.",
}

#: What each setting does; ``settings write`` prints these above each key.  A test checks
#: that every field of every settings dataclass has an entry here and nothing else does.
SETTING_DOCS: dict[str, dict[str, str]] = {
    "practice": {
        "name": "Practice name, shown at the top of every report.",
        "address": "Postal address (one line), shown under the practice name.",
        "phone": "Telephone number for clients, shown in the contact line under the name.",
        "email": "Contact e-mail address, shown in the contact line; also the Reply-To of report "
        "e-mails when [mail] reply_to is empty.",
        "website": "Web address, shown in the contact line.",
        "logo": "Logo printed at the top right of the reports: a PNG or SVG file. A "
        "relative path is taken from this file's folder. Empty: no logo.",
    },
    "report": {
        "paper": "Paper size of the PDFs.",
        "weight_unit": "Unit for weights in the reports (inputs may use either).",
        "energy_unit": "Unit for energy (intake, expenditure, deficit) in the reports.",
        "date_format": "How dates are printed, as strftime codes: %d day, %m month number, "
        '%b/%B month name, %Y year (e.g. "%d %b %Y" gives 03 Nov 2026).',
        "accent_colour": "Accent colour of the reports (rules, headings, chart highlights), as "
        '"#RRGGBB".',
        "sections": "Which sections the client report contains, in this order. "
        '"cautions" is always required.',
        "templates_dir": "Folder with your own versions of the wording templates, laid out like "
        "the shipped ones (report/..., mail/...); a file there replaces the shipped file of "
        "the same name. A relative path is taken from this file's folder. Empty: shipped "
        "wording only.",
        "projection_weeks": "How many weeks ahead the report projects weight (1-26).",
    },
    "analysis": {
        "bodyfat_equation": "Skinfold equation for body fat. auto picks Jackson-Pollock 7-site, "
        "then 3-site, then Durnin-Womersley 4-site, by the sites measured.",
        "density_conversion": "Conversion from body density to % fat (Siri 1961 or Brozek 1963).",
        "activity_factor": "Physical activity level (PAL, 1.2-2.4) times resting energy, used "
        "for expected expenditure only when a client has no usable maintenance baseline.",
        "target_rates_pct_per_week": "Weekly loss rates (% of body weight per week, each above "
        "0 and at most 1.5) for which the report shows the intake needed.",
    },
    "book": {
        "date_order": "How dates such as 03/04/2026 are read when no date in a log settles "
        "it (no day above 12): auto refuses such a log with a message; day-first reads "
        "03/04/2026 as 3 April, month-first as March 4. A log whose dates settle it is "
        "always read that way.",
    },
    "mail": {
        "host": "SMTP server that sends the mail.",
        "port": "SMTP port (587 for STARTTLS, 465 for TLS, 25 for plain).",
        "security": "Connection security: starttls, tls, or none (only for a server on this "
        "machine or a trusted network).",
        "user": "Login name on the SMTP server; empty: no login. The password is read from "
        "the REPORTGEN_SMTP_PASSWORD environment variable, never from this file.",
        "from_address": "Sender address of the report e-mails.",
        "from_name": "Sender name shown to clients.",
        "reply_to": "Address client replies go to; empty: [practice] email, else the sender.",
        "timeout_s": "Seconds to wait for the mail server before giving up on a message.",
        "retries": "How often a failed message is tried again (0-10).",
        "encrypt": "Protect each PDF with a password (AES-256) before sending it.",
        "password_column": "Roster column holding a client's PDF password (when encrypt is on).",
        "secret_file": "File with the practice secret from which PDF passwords are derived "
        "for clients without a password column entry. Keep it outside the book.",
        "referral_column": "Roster column with the e-mail address of a referring practitioner "
        "(used when send_practitioner_copy is on).",
        "send_practitioner_copy": "Also e-mail each practitioner summary to the address in the "
        "referral column.",
    },
}


def _toml_value(value: Any) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int | float):
        return repr(value)
    if isinstance(value, str):
        return json.dumps(value, ensure_ascii=False)  # JSON strings are valid TOML strings
    if isinstance(value, tuple | list):
        return "[" + ", ".join(_toml_value(v) for v in value) + "]"
    raise TypeError(f"no TOML form for {value!r}")  # pragma: no cover


def _comment(text: str, width: int = 88) -> list[str]:
    return ["# " + line for line in textwrap.wrap(text, width - 2)]


def config_toml(cfg: Config | None = None) -> str:
    """A commented TOML file with every setting, its value (the defaults) and what it does.

    Generated from the settings dataclasses and :data:`SETTING_DOCS`, so it never drifts
    from what :func:`load_config` accepts.
    """
    cfg = cfg or Config()
    lines = [
        "# reportgen practice configuration",
        "#",
        *_comment(
            "Every setting is listed with its default value. Change what you need; delete a "
            "line to go back to the default. Check the file with: reportgen settings check "
            "FILE. Use it with: reportgen batch BOOK --config FILE."
        ),
    ]
    for table, cls in _TABLES.items():
        lines += ["", *_comment(SECTION_DOCS[table]), f"[{table}]"]
        values = getattr(cfg, table)
        for f in dataclasses.fields(cls):
            doc = SETTING_DOCS[table][f.name]
            choices = _CHOICES.get((table, f.name))
            if choices:
                doc += " One of: " + ", ".join(choices) + "."
            elif table == "report" and f.name == "sections":
                doc += " Any of: " + ", ".join(SECTIONS) + "."
            default = getattr(cls(), f.name)
            if getattr(values, f.name) != default:
                doc += f" Default: {_toml_value(default)}."
            lines += ["", *_comment(doc), f"{f.name} = {_toml_value(getattr(values, f.name))}"]
    return "\n".join(lines) + "\n"
