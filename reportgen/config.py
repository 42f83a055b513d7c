"""Practice configuration: one TOML file a clinic edits once.

Every setting has a default, so no file at all is a valid configuration
(a neutral, unbranded report).  Unknown keys and bad values are refused with a
message that names the key, so a typo never silently falls back to a default.
"""

from __future__ import annotations

import dataclasses
import re
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, get_args, get_origin, get_type_hints

PAPER_SIZES = ("A4", "letter")
WEIGHT_UNITS = ("kg", "lb")
ENERGY_UNITS = ("kcal", "kJ")
SECTIONS = (
    "overview",
    "charts",
    "phases",
    "quality",
    "methods",
    "cautions",
)
BODYFAT_EQUATIONS = (
    "auto",
    "jackson-pollock-7",
    "jackson-pollock-3",
    "durnin-womersley-4",
)
DENSITY_CONVERSIONS = ("siri", "brozek")
MAIL_SECURITY = ("starttls", "tls", "none")


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
    mail: MailSettings = field(default_factory=MailSettings)
    source: str | None = None  # the file it was read from, if any

    def as_dict(self) -> dict[str, Any]:
        d = dataclasses.asdict(self)
        d.pop("source")
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
    "mail": MailSettings,
}
_CHOICES: dict[tuple[str, str], tuple[str, ...]] = {
    ("report", "paper"): PAPER_SIZES,
    ("report", "weight_unit"): WEIGHT_UNITS,
    ("report", "energy_unit"): ENERGY_UNITS,
    ("analysis", "bodyfat_equation"): BODYFAT_EQUATIONS,
    ("analysis", "density_conversion"): DENSITY_CONVERSIONS,
    ("mail", "security"): MAIL_SECURITY,
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
        return float(value)
    if hint is str:
        if not isinstance(value, str):
            raise ConfigError(f"{where} must be text in quotes, got {value!r}")
        return value
    raise ConfigError(f"{where}: unsupported setting type")  # pragma: no cover


def config_from_dict(data: dict[str, Any], source: str | None = None) -> Config:
    """Build a validated :class:`Config` from parsed TOML data."""
    parts: dict[str, Any] = {}
    for table, value in data.items():
        if table not in _TABLES:
            known = ", ".join(f"[{t}]" for t in _TABLES)
            raise ConfigError(f"unknown section [{table}]; known sections: {known}")
        if not isinstance(value, dict):
            raise ConfigError(f"[{table}] must be a section, not a single value")
        cls = _TABLES[table]
        hints = get_type_hints(cls)
        kwargs: dict[str, Any] = {}
        for key, v in value.items():
            if key not in hints:
                known = ", ".join(hints)
                raise ConfigError(f"unknown setting [{table}] {key}; known settings: {known}")
            coerced = _coerce(table, key, v, hints[key])
            choices = _CHOICES.get((table, key))
            if choices and coerced not in choices:
                raise ConfigError(
                    f"[{table}] {key} = {v!r} is not allowed; use one of: {', '.join(choices)}"
                )
            kwargs[key] = coerced
        parts[table] = cls(**kwargs)
    cfg = Config(**parts, source=source)
    _check(cfg)
    return cfg


def _check(cfg: Config) -> None:
    r = cfg.report
    if not _COLOUR.match(r.accent_colour):
        raise ConfigError(
            f"[report] accent_colour = {r.accent_colour!r} must be a colour like \"#1F5A7A\""
        )
    for s in r.sections:
        if s not in SECTIONS:
            raise ConfigError(
                f"[report] sections: {s!r} is not a section; use any of: {', '.join(SECTIONS)}"
            )
    if "cautions" not in r.sections:
        raise ConfigError("[report] sections must include \"cautions\": every report carries them")
    if not 1 <= r.projection_weeks <= 26:
        raise ConfigError("[report] projection_weeks must be between 1 and 26")
    if not 1.2 <= cfg.analysis.activity_factor <= 2.4:
        raise ConfigError("[analysis] activity_factor must be between 1.2 and 2.4")
    for rate in cfg.analysis.target_rates_pct_per_week:
        if not 0 < rate <= 1.5:
            raise ConfigError(
                "[analysis] target_rates_pct_per_week values must be above 0 and at most 1.5"
            )
    m = cfg.mail
    if not 0 < m.port < 65536:
        raise ConfigError(f"[mail] port = {m.port} is not a port number")
    if m.retries < 0 or m.retries > 10:
        raise ConfigError("[mail] retries must be between 0 and 10")


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
        return config_from_dict(data, source=str(p))
    except ConfigError as exc:
        raise ConfigError(f"{p}: {exc}") from None
