"""Header names as coaches write them: units in brackets, spaces, capitals, plurals.

A daily log written by hand or exported from a scale rarely uses the canonical column names
(``weight_kg``, ``intake_kcal``).  :func:`normalise_headers` reads the unambiguous forms as the
canonical column and says so once per file (a ``header-read-as`` note), refuses a name that
could mean two columns (``Weight`` with no unit) with one error that names both choices, and
suggests the closest known name for an unknown one ("did you mean").

The rules, for the README and the tests:

* matching ignores case, surrounding spaces and punctuation between words
  (``Body weight``, ``body_weight``, ``Body-Weight`` are the same);
* a unit may follow the name in round or square brackets or after a space
  (``Weight (kg)``, ``weight [lb]``, ``Weight kg``, ``Body fat %``);
* the unit decides the column: ``Weight (kg)`` is ``weight_kg``, ``Weight (lbs)`` is
  ``weight_lb``, ``Energy (kJ)`` is ``intake_kj`` while ``Energy`` alone is the 1-10 rating.
"""

from __future__ import annotations

import difflib
import re
from collections.abc import Iterable
from dataclasses import dataclass, replace
from typing import Final

from reportgen.io.model import Problem
from reportgen.io.tables import Table

#: Unit as written -> unit key.
_UNITS: Final[dict[str, str]] = {
    "kg": "kg",
    "kgs": "kg",
    "kilo": "kg",
    "kilos": "kg",
    "kilogram": "kg",
    "kilograms": "kg",
    "lb": "lb",
    "lbs": "lb",
    "pound": "lb",
    "pounds": "lb",
    "kcal": "kcal",
    "kcals": "kcal",
    "cal": "kcal",  # food labels' "Calories" are kilocalories
    "cals": "kcal",
    "calories": "kcal",
    "kilocalories": "kcal",
    "kj": "kj",
    "kilojoules": "kj",
    "h": "h",
    "hr": "h",
    "hrs": "h",
    "hour": "h",
    "hours": "h",
    "%": "pct",
    "pct": "pct",
    "percent": "pct",
    "1-10": "rating",
    "1 to 10": "rating",
    "steps": "steps",
}

#: Name as written (words joined by one space) -> {unit key or "" for none: canonical column}.
#: A name whose "" entry is missing needs a unit; when it has more than one unit, a header
#: without one is ambiguous.
_NAMES: Final[dict[str, dict[str, str]]] = {
    "date": {"": "date"},
    "day": {"": "date"},
    "date time": {"": "date"},
    "datetime": {"": "date"},
    "timestamp": {"": "date"},
    "weight": {"kg": "weight_kg", "lb": "weight_lb"},
    "body weight": {"kg": "weight_kg", "lb": "weight_lb"},
    "bodyweight": {"kg": "weight_kg", "lb": "weight_lb"},
    "scale weight": {"kg": "weight_kg", "lb": "weight_lb"},
    "calories": {"": "intake_kcal", "kcal": "intake_kcal", "kj": "intake_kj"},
    "kcal": {"": "intake_kcal"},
    "kj": {"": "intake_kj"},
    "intake": {"kcal": "intake_kcal", "kj": "intake_kj"},
    "energy intake": {"kcal": "intake_kcal", "kj": "intake_kj"},
    "calorie intake": {"": "intake_kcal", "kcal": "intake_kcal", "kj": "intake_kj"},
    "food energy": {"kcal": "intake_kcal", "kj": "intake_kj"},
    # "Energy" alone is the 1-10 energy rating; with an energy unit it is the intake.
    "energy": {"": "energy", "rating": "energy", "kcal": "intake_kcal", "kj": "intake_kj"},
    "hunger": {"": "hunger", "rating": "hunger"},
    "steps": {"": "steps", "steps": "steps"},
    "step count": {"": "steps"},
    "daily steps": {"": "steps"},
    "sleep": {"h": "sleep_h"},
    "sleep hours": {"": "sleep_h", "h": "sleep_h"},
    "body fat": {"pct": "body_fat_pct"},
    "bodyfat": {"pct": "body_fat_pct"},
    "body fat percentage": {"": "body_fat_pct", "pct": "body_fat_pct"},
    "fat": {"pct": "body_fat_pct"},
}

_BRACKET = re.compile(r"^(?P<name>.*?)\s*[(\[](?P<unit>[^)\]]*)[)\]]\s*$")
_WORDS = re.compile(r"[^0-9a-z%]+")


@dataclass(frozen=True)
class HeaderReading:
    """What one header means: a canonical column, two or more choices, or nothing known."""

    canonical: str | None
    choices: tuple[str, ...] = ()


def _key(text: str) -> str:
    """Lower case, words joined by single spaces (punctuation and underscores are spaces)."""
    return " ".join(w for w in _WORDS.split(text.lower().replace("%", " % ")) if w)


def _split_unit(text: str) -> tuple[str, str | None]:
    """(name, unit key) of a header; unit None when none is written."""
    m = _BRACKET.match(text)
    if m:
        unit = _key(m["unit"])
        return _key(m["name"]), _UNITS.get(unit, f"?{unit}")
    key = _key(text)
    words = key.split(" ")
    if len(words) > 1 and words[-1] in _UNITS:
        return " ".join(words[:-1]), _UNITS[words[-1]]
    return key, None


def read_header(raw: str, canonical_names: Iterable[str]) -> HeaderReading:
    """The canonical column ``raw`` stands for, among ``canonical_names``.

    A canonical name as written (any case) is itself.  Otherwise the name and unit are looked
    up in the table of accepted forms; a name that needs a unit and has two gets ``choices``.
    """
    known = set(canonical_names)
    plain = raw.strip().lower()
    if plain in known:
        return HeaderReading(plain)
    name, unit = _split_unit(raw)
    if name.replace(" ", "_") in known and unit is None:
        return HeaderReading(name.replace(" ", "_"))
    forms = _NAMES.get(name)
    if forms is None:
        return HeaderReading(None)
    if unit is None:
        if "" in forms:
            hit = forms[""]
            return HeaderReading(hit if hit in known else None)
        return HeaderReading(None, tuple(sorted({c for c in forms.values() if c in known})))
    by_unit = forms.get(unit)
    return HeaderReading(by_unit if by_unit in known else None)


def _suggest(raw: str, canonical_names: Iterable[str]) -> str | None:
    """The known name closest to an unknown header, if one is close."""
    names = list(canonical_names)
    pool = {n: n for n in names}
    for form, units in _NAMES.items():
        for unit, canonical in units.items():
            if canonical in names:
                pool.setdefault(form if not unit else f"{form} {unit}", canonical)
    key = _key(raw)
    match = difflib.get_close_matches(key, [_key(p) for p in pool], n=1, cutoff=0.75)
    if not match:
        return None
    by_key = {_key(p): c for p, c in pool.items()}
    return by_key[match[0]]


def normalise_headers(
    table: Table, canonical_names: Iterable[str], client_id: str | None
) -> tuple[Table, list[Problem], dict[str, str]]:
    """``table`` with its headers read as canonical names, the problems, and suggestions.

    Returns the new table (``raw_columns`` unchanged, so messages quote the header as
    written), a list with at most one ``header-read-as`` note for the file plus one
    ``ambiguous-column`` error per ambiguous header, and ``{header as written: canonical
    name}`` for unknown headers close to a known one (the caller's unknown-column warning
    adds "did you mean").
    """
    names = tuple(canonical_names)
    columns = list(table.columns)
    problems: list[Problem] = []
    read_as: list[str] = []
    suggestions: dict[str, str] = {}
    for pos, (raw, name) in enumerate(zip(table.raw_columns, table.columns, strict=True)):
        if not name or name in names:
            continue
        reading = read_header(raw, names)
        if reading.canonical is not None:
            columns[pos] = reading.canonical
            read_as.append(f'"{raw}" as {reading.canonical}')
        elif len(reading.choices) > 1:
            options = " or ".join(f'"{c}"' for c in reading.choices)
            problems.append(
                Problem(
                    "error",
                    "ambiguous-column",
                    f'column "{raw}" in {table.where()} could be {options}; write the unit in '
                    f'the header (e.g. "{raw} ({_unit_of(reading.choices[0])})") or use one '
                    "of those names",
                    file=table.file,
                    row=table.header_row,
                    column=raw,
                    value=raw,
                    client_id=client_id,
                )
            )
            columns[pos] = ""  # neither: not read, and no unknown-column warning on top
        else:
            hint = reading.choices[0] if reading.choices else _suggest(raw, names)
            if hint is not None:
                suggestions[raw] = hint
    seen: dict[str, int] = {}
    for pos, name in enumerate(columns):
        if name and name in seen:
            first, raw = table.raw_columns[seen[name]], table.raw_columns[pos]
            problems.append(
                Problem(
                    "error",
                    "duplicate-column",
                    f'columns "{first}" and "{raw}" in {table.where()} are both {name}; keep one',
                    file=table.file,
                    row=table.header_row,
                    column=raw,
                    client_id=client_id,
                )
            )
            columns[pos] = ""
        seen.setdefault(name, pos)
    if read_as:
        problems.insert(
            0,
            Problem(
                "note",
                "header-read-as",
                f"{table.where()}: read {', '.join(read_as)}",
                file=table.file,
                row=table.header_row,
                client_id=client_id,
            ),
        )
    return replace(table, columns=tuple(columns)), problems, suggestions


def _unit_of(canonical: str) -> str:
    return canonical.rsplit("_", 1)[-1]
