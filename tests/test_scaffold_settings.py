"""`reportgen settings write/check` and the configuration's validation."""

from __future__ import annotations

import dataclasses
import io
import tomllib
from pathlib import Path

import pytest
from click.testing import CliRunner
from hypothesis import given, settings
from hypothesis import strategies as st

from reportgen.cli import main
from reportgen.config import (
    SECTION_DOCS,
    SETTING_DOCS,
    AnalysisSettings,
    BookSettings,
    Config,
    ConfigError,
    MailSettings,
    PracticeSettings,
    ReportSettings,
    check_config_file,
    config_from_dict,
    config_problems,
    config_toml,
    load_config,
)

TABLES = {
    "practice": PracticeSettings,
    "report": ReportSettings,
    "analysis": AnalysisSettings,
    "book": BookSettings,
    "mail": MailSettings,
}


def _png_bytes() -> bytes:
    """A real PNG image written by matplotlib."""
    import numpy as np
    from matplotlib.image import imsave

    buf = io.BytesIO()
    imsave(buf, np.zeros((4, 4, 3)), format="png")
    return buf.getvalue()


def test_written_file_loads_back_as_the_defaults(tmp_path: Path) -> None:
    path = tmp_path / "practice.toml"
    r = CliRunner().invoke(main, ["settings", "write", str(path)], catch_exceptions=False)
    assert r.exit_code == 0, r.output
    cfg = load_config(path)
    assert dataclasses.replace(cfg, source=None) == Config()
    assert cfg.as_dict() == Config().as_dict()


def test_every_setting_is_written_with_its_documentation() -> None:
    text = config_toml()
    data = tomllib.loads(text)
    assert set(data) == set(TABLES) == set(SECTION_DOCS) == set(SETTING_DOCS)
    for table, cls in TABLES.items():
        fields = [f.name for f in dataclasses.fields(cls)]
        assert list(data[table]) == fields  # every field, in dataclass order
        assert set(SETTING_DOCS[table]) == set(fields)  # docs neither missing nor stale
        for name in fields:
            first_words = " ".join(SETTING_DOCS[table][name].split()[:4])
            assert first_words in " ".join(
                ln.lstrip("# ") for ln in text.splitlines() if ln.startswith("#")
            ), (table, name)
    assert "One of: A4, letter." in text
    assert all(len(ln) <= 88 for ln in text.splitlines())


def test_changed_settings_round_trip_and_show_the_default(tmp_path: Path) -> None:
    cfg = Config(
        practice=PracticeSettings(name='Kestrel Row "Nutrition" – Zoë\\Łódź', phone="+1 555"),
        report=ReportSettings(paper="letter", sections=("overview", "cautions")),
        analysis=AnalysisSettings(activity_factor=1.7, target_rates_pct_per_week=(0.25, 1.5)),
        mail=MailSettings(port=2525, encrypt=True, timeout_s=5.5),
    )
    text = config_toml(cfg)
    assert 'Default: "A4".' in text and "Default: 587." in text
    loaded = config_from_dict(tomllib.loads(text))
    assert loaded == cfg


def test_write_refuses_an_existing_file(tmp_path: Path) -> None:
    path = tmp_path / "practice.toml"
    path.write_text("# mine\n")
    r = CliRunner().invoke(main, ["settings", "write", str(path)])
    assert r.exit_code == 1
    assert "already exists; nothing was changed (use --force" in r.output
    assert path.read_text() == "# mine\n"
    r = CliRunner().invoke(main, ["settings", "write", str(path), "--force"])
    assert r.exit_code == 0 and load_config(path).as_dict() == Config().as_dict()
    r = CliRunner().invoke(main, ["settings", "write", str(tmp_path / "no" / "x.toml")])
    assert r.exit_code == 1 and "does not exist" in r.output


def test_check_accepts_a_good_file(tmp_path: Path) -> None:
    (tmp_path / "logo.png").write_bytes(_png_bytes())
    (tmp_path / "mine").mkdir()
    path = tmp_path / "practice.toml"
    path.write_text(
        '[practice]\nname = "Kestrel Row Nutrition"\nlogo = "logo.png"\n'
        '[report]\ndate_format = "%d/%m/%Y"\ntemplates_dir = "mine"\n'
        '[mail]\nfrom_address = "coach@example.org"\n',
        encoding="utf-8",
    )
    r = CliRunner().invoke(main, ["settings", "check", str(path)], catch_exceptions=False)
    assert r.exit_code == 0, r.output
    assert r.output.strip() == f"{path}: OK (5 settings differ from the defaults)"


@pytest.mark.parametrize(
    ("toml", "key", "value"),
    [
        ('[report]\npaper = "Letter"\n', "paper", "letter"),
        ('[report]\npaper = "a4"\n', "paper", "A4"),
        ('[report]\nweight_unit = "KG"\n', "weight_unit", "kg"),
        ('[report]\nenergy_unit = "KJ"\n', "energy_unit", "kJ"),
    ],
)
def test_choices_are_accepted_whatever_their_case(
    tmp_path: Path, toml: str, key: str, value: str
) -> None:
    path = tmp_path / "practice.toml"
    path.write_text(toml, encoding="utf-8")
    r = CliRunner().invoke(main, ["settings", "check", str(path)], catch_exceptions=False)
    assert r.exit_code == 0, r.output
    assert getattr(load_config(path).report, key) == value  # stored in its canonical spelling


@pytest.mark.parametrize(
    ("toml", "message"),
    [
        ("[report]\ncolour = 1\n", r"unknown setting \[report\] colour; known settings: paper,"),
        ("[reports]\n", r"unknown section \[reports\]; known sections: \[practice\]"),
        ('report = "x"\n', r"\[report\] must be a section, not a single value"),
        ('[report]\npaper = "A5"\n', r"\[report\] paper = 'A5' is not allowed; use one of: A4"),
        ('[mail]\nport = "25"\n', r"\[mail\] port must be a whole number, got '25'"),
        ("[mail]\nencrypt = 1\n", r"\[mail\] encrypt must be true or false, got 1"),
        ("[mail]\nport = 70000\n", r"\[mail\] port = 70000 is not a port number"),
        ("[mail]\ntimeout_s = 0\n", r"\[mail\] timeout_s must be above 0 seconds"),
        ('[mail]\nfrom_address = "coach"\n', r"from_address = 'coach' is not an e-mail address"),
        ('[mail]\nreferral_column = " "\n', r"\[mail\] referral_column must name a roster column"),
        ("[report]\nprojection_weeks = 30\n", r"projection_weeks must be between 1 and 26"),
        ('[report]\nsections = ["overview"]\n', r'sections must include "cautions"'),
        (
            '[report]\nsections = ["cautions", "cautions"]\n',
            r"sections lists cautions more than once",
        ),
        ('[report]\naccent_colour = "blue"\n', r"accent_colour = 'blue' must be a colour"),
        ('[report]\ndate_format = "%Q %d"\n', r"uses %Q, which is not a date code"),
        ('[report]\ndate_format = "%-d %b"\n', r"uses %-, which is not a date code"),
        ('[report]\ndate_format = "week %%"\n', r"shows no day, month or year"),
        ('[report]\ntemplates_dir = "nope"\n', r"templates_dir = 'nope': no such folder"),
        ('[practice]\nlogo = "nope.png"\n', r"logo = 'nope.png': no such file at .*nope.png"),
        ('[practice]\nlogo = "logo.gif"\n', r"logo = 'logo.gif' must be a PNG or SVG file"),
        ('[practice]\nlogo = "fake.png"\n', r"fake.png is not a PNG image"),
        ('[practice]\nlogo = "fake.svg"\n', r"fake.svg is not an SVG image"),
        ("[analysis]\nactivity_factor = 3\n", r"activity_factor must be between 1.2 and 2.4"),
        ("[analysis]\ntarget_rates_pct_per_week = [2.0]\n", r"at most 1.5"),
        ("[report\n", r"not valid TOML"),
    ],
)
def test_check_names_the_bad_key(tmp_path: Path, toml: str, message: str) -> None:
    (tmp_path / "fake.png").write_text("not an image")
    (tmp_path / "fake.svg").write_text("<html></html>")
    path = tmp_path / "practice.toml"
    path.write_text(toml, encoding="utf-8")
    with pytest.raises(ConfigError, match=message):
        load_config(path)
    r = CliRunner().invoke(main, ["settings", "check", str(path)])
    assert r.exit_code == 1
    assert str(path) in r.output and "1 problem in" in r.output


def test_check_lists_every_problem_at_once(tmp_path: Path) -> None:
    path = tmp_path / "practice.toml"
    path.write_text(
        '[report]\npaper = "A5"\ndate_format = "%Q"\n[practice]\nlogo = "x.png"\nfax = "1"\n'
    )
    problems = check_config_file(path)
    assert len(problems) == 4, problems
    assert all(p.startswith(f"{path}: ") for p in problems)
    r = CliRunner().invoke(main, ["settings", "check", str(path)])
    assert r.exit_code == 1 and "4 problems in" in r.output


def test_svg_logo_and_relative_paths_resolve_from_the_file(tmp_path: Path) -> None:
    (tmp_path / "art").mkdir()
    (tmp_path / "art" / "logo.svg").write_text(
        '<?xml version="1.0"?>\n<svg xmlns="http://www.w3.org/2000/svg" width="4" height="4"/>'
    )
    path = tmp_path / "practice.toml"
    path.write_text('[practice]\nlogo = "art/logo.svg"\n')
    cfg = load_config(path)
    assert cfg.resolve_path(cfg.practice.logo) == tmp_path / "art" / "logo.svg"
    assert config_problems({"practice": {"logo": "art/logo.svg"}}, source=str(path)) == []


_TOML_SCALARS = (
    st.booleans()
    | st.integers(min_value=-(2**63), max_value=2**63 - 1)
    | st.floats(allow_nan=False, allow_infinity=False)
    | st.text(max_size=12)
)
_TOML_VALUES = _TOML_SCALARS | st.lists(_TOML_SCALARS, max_size=4)
_KEYS = st.sampled_from(
    [(t, f.name) for t, cls in TABLES.items() for f in dataclasses.fields(cls)]
    + [("report", "colour"), ("mail", "pasword")]
)


@settings(max_examples=200, deadline=None)
@given(st.lists(st.tuples(_KEYS, _TOML_VALUES), max_size=4))
def test_any_values_give_a_config_or_a_config_error(
    items: list[tuple[tuple[str, str], object]],
) -> None:
    data: dict[str, dict[str, object]] = {}
    for (table, key), value in items:
        data.setdefault(table, {})[key] = value
    try:
        cfg = config_from_dict(data)
    except ConfigError as exc:
        assert str(exc).startswith("[") or str(exc).startswith("unknown")
        assert config_problems(data)
    else:
        assert isinstance(cfg, Config)
        assert config_problems(data) == []
