"""The one diet-break rule (science.diet_break) and both of its users.

Check values are hand-calculated from the rule's thresholds, which are judgment informed
by Byrne et al. 2018 (MATADOR: 2-week breaks at energy balance within restriction to
about 67 % of requirements; from memory) as the module documents.
"""

from __future__ import annotations

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

from reportgen.science import diet_break as db
from reportgen.science import plateau as pl


@pytest.mark.parametrize(
    ("days", "depth", "due"),
    [
        (84, 20.0, True),  # both thresholds met exactly
        (83, 35.0, False),  # a day short of 12 weeks
        (120, 19.9, False),  # long but shallow: no evidence for a break there
        (120, None, True),  # depth unknown: the length alone decides
        (120, math.nan, True),
        (None, 30.0, False),  # not in a deficit
        (0, None, False),
    ],
)
def test_rule_check_values(days: int | None, depth: float | None, due: bool) -> None:
    assert db.diet_break_due(days, depth) is due


def test_break_length_is_matador_s() -> None:
    assert db.BREAK_WEEKS == 2  # Byrne et al. 2018: 2-week blocks at energy balance


@given(
    days=st.one_of(st.none(), st.integers(min_value=-10, max_value=2000)),
    depth=st.one_of(st.none(), st.floats(allow_nan=True, allow_infinity=True)),
)
def test_plateau_option_follows_the_rule(days: int | None, depth: float | None) -> None:
    got = pl.discussion_options(
        "on-track",
        gap_kcal=None,
        intake_for_planned_rate=None,
        recent_intake_kcal=None,
        kcal_per_step=None,
        days_in_deficit=days,
        deficit_depth_pct=depth,
        sex="female",
        minor=False,
        pregnant=False,
        bmi_kg_m2=None,
    )
    offered = any(o.code == "maintenance-break" for o in got.options)
    assert offered is db.diet_break_due(days, depth)
