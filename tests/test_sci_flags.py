"""Safety-flag rules (thresholds: science notes §8, each source named below)."""

from __future__ import annotations

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

from reportgen.results import Flag
from reportgen.science.flags import FLAG_CODES, FlagInputs, rapid_loss_weeks, safety_flags


def codes(inputs: FlagInputs) -> list[str]:
    return [f.code for f in safety_flags(inputs)]


def only(inputs: FlagInputs) -> Flag:
    (flag,) = safety_flags(inputs)
    return flag


def test_nothing_known_no_flags() -> None:
    assert safety_flags(FlagInputs()) == ()


def test_healthy_adult_no_flags() -> None:
    inputs = FlagInputs(
        sex="female",
        age_years=35,
        bmi_kg_m2=24.0,
        mean_intake_kcal=1600.0,
        weekly_rates_pct=(-0.6, -0.7, -0.5),
        bodyfat_pct=28.0,
        adaptation_implausible=False,
    )
    assert safety_flags(inputs) == ()


def test_rapid_loss_needs_two_weeks() -> None:
    # Helms 2014 (published): > 1.0 % of body weight per week sustained; "two weeks or more"
    # is the rule.
    assert codes(FlagInputs(weekly_rates_pct=(-0.5, -1.3))) == []
    f = only(FlagInputs(weekly_rates_pct=(-0.5, -1.2, -1.4)))
    assert f.code == "rapid-loss" and f.severity == "caution"
    assert f.values["weeks"] == 2.0
    assert f.values["mean_rate_pct_per_week"] == pytest.approx(-1.3)
    assert f.values["fastest_rate_pct_per_week"] == -1.4
    assert f.values["threshold_pct_per_week"] == -1.0
    # exactly 1.0 %/week is not "faster than"
    assert codes(FlagInputs(weekly_rates_pct=(-1.0, -1.0))) == []
    # an older run that ended does not count, nor a gap (NaN) inside the run
    assert codes(FlagInputs(weekly_rates_pct=(-1.5, -1.5, -0.4))) == []
    assert rapid_loss_weeks((-1.5, math.nan, -1.5)) == 1
    assert rapid_loss_weeks(()) == 0
    assert rapid_loss_weeks((-1.1, -1.2, -1.3)) == 3


def test_low_bmi() -> None:
    # WHO 2000 TRS 894 underweight < 18.5 (from memory, standard); < 17 moderate thinness.
    assert codes(FlagInputs(bmi_kg_m2=18.5)) == []
    f = only(FlagInputs(bmi_kg_m2=18.4))
    assert (f.code, f.severity) == ("low-bmi", "caution")
    assert f.values == {"bmi_kg_m2": 18.4, "threshold": 18.5}
    assert only(FlagInputs(bmi_kg_m2=16.9)).severity == "urgent"
    assert codes(FlagInputs(bmi_kg_m2=math.nan)) == []


@pytest.mark.parametrize(
    ("sex", "intake", "expected"),
    # floors 1200 women / 1500 men, < 800 VLCD (common practice; guideline from memory)
    [
        ("female", 1199.0, ["low-intake"]),
        ("female", 1200.0, []),
        ("male", 1499.0, ["low-intake"]),
        ("male", 1500.0, []),
        (None, 1199.0, ["low-intake"]),  # unknown sex: the lower floor
        (None, 1300.0, []),
        ("male", 799.0, ["very-low-intake"]),
        ("female", 800.0, ["low-intake"]),
    ],
)
def test_intake_floors(sex: str | None, intake: float, expected: list[str]) -> None:
    assert codes(FlagInputs(sex=sex, mean_intake_kcal=intake)) == expected  # type: ignore[arg-type]


def test_intake_flag_values() -> None:
    f = only(FlagInputs(sex="male", mean_intake_kcal=1400.0))
    assert f.values == {"intake_kcal": 1400.0, "threshold_kcal": 1500.0}
    f = only(FlagInputs(sex="female", mean_intake_kcal=700.0))
    assert (f.code, f.severity) == ("very-low-intake", "urgent")
    assert f.values == {"intake_kcal": 700.0, "threshold_kcal": 800.0}


def test_essential_fat() -> None:
    # men <= 5 %, women <= 14 % (from memory: Behnke; margins common practice)
    assert only(FlagInputs(sex="male", bodyfat_pct=5.0)).code == "essential-fat"
    assert codes(FlagInputs(sex="male", bodyfat_pct=5.1)) == []
    f = only(FlagInputs(sex="female", bodyfat_pct=13.0))
    assert f.values == {"bodyfat_pct": 13.0, "threshold_pct": 14.0}
    assert codes(FlagInputs(sex="female", bodyfat_pct=14.5)) == []
    assert codes(FlagInputs(bodyfat_pct=3.0)) == []  # sex unknown: no rule applies


def test_minor_and_pregnant() -> None:
    f = only(FlagInputs(age_years=17))
    assert (f.code, f.severity) == ("minor", "urgent")
    assert f.values == {"threshold_years": 18.0, "age_years": 17.0}
    assert codes(FlagInputs(age_years=18)) == []
    assert codes(FlagInputs(minor=True)) == ["minor"]
    assert codes(FlagInputs(minor=False, age_years=16)) == []  # the explicit answer wins
    assert codes(FlagInputs(pregnant=True)) == ["pregnant"]
    assert only(FlagInputs(pregnant=True)).severity == "urgent"


def test_implausible_adaptation() -> None:
    # the deficit-scaled rule is decided in reportgen.science.adaptation (tested there);
    # the flag carries both figures for its wording
    assert codes(FlagInputs(adaptation_implausible=False, adaptation_data_kcal=-500.0)) == []
    f = only(
        FlagInputs(
            adaptation_implausible=True, adaptation_data_kcal=-480.0, adaptation_typical_kcal=-75.0
        )
    )
    assert (f.code, f.severity) == ("implausible-adaptation", "caution")
    assert f.values == {"adaptation_kcal": -480.0, "typical_kcal": -75.0}


def test_stable_order_everything_at_once() -> None:
    inputs = FlagInputs(
        sex="female",
        age_years=17,
        pregnant=True,
        bmi_kg_m2=17.5,
        mean_intake_kcal=1000.0,
        weekly_rates_pct=(-1.5, -1.6),
        bodyfat_pct=12.0,
        adaptation_implausible=True,
    )
    got = codes(inputs)
    assert got == [c for c in FLAG_CODES if c != "very-low-intake"]
    assert safety_flags(inputs) == safety_flags(inputs)


@given(
    sex=st.sampled_from(["male", "female", None]),
    age=st.one_of(st.none(), st.integers(min_value=5, max_value=100)),
    bmi=st.one_of(st.none(), st.floats(allow_nan=True, allow_infinity=True)),
    intake=st.one_of(st.none(), st.floats(allow_nan=True, allow_infinity=True)),
    rates=st.lists(st.floats(allow_nan=True, allow_infinity=True), max_size=8),
    bf=st.one_of(st.none(), st.floats(allow_nan=True, allow_infinity=True)),
    ad=st.one_of(st.none(), st.floats(allow_nan=True, allow_infinity=True)),
    implausible=st.booleans(),
    pregnant=st.booleans(),
)
def test_any_input_gives_ordered_unique_codes(
    sex, age, bmi, intake, rates, bf, ad, implausible, pregnant
) -> None:
    flags = safety_flags(
        FlagInputs(
            sex=sex,
            age_years=age,
            pregnant=pregnant,
            bmi_kg_m2=bmi,
            mean_intake_kcal=intake,
            weekly_rates_pct=tuple(rates),
            bodyfat_pct=bf,
            adaptation_implausible=implausible,
            adaptation_data_kcal=ad,
        )
    )
    got = [f.code for f in flags]
    assert got == [c for c in FLAG_CODES if c in got]  # fixed order, no duplicates
    assert not {"low-intake", "very-low-intake"} <= set(got)
    for f in flags:
        assert f.severity in ("info", "caution", "urgent")
        assert all(isinstance(v, float) and math.isfinite(v) for v in f.values.values())


def test_rapid_loss_with_absurd_rates_does_not_raise() -> None:
    """Rates near the float limit (garbage in) still give a flag, not an OverflowError
    (found by the property test above: math.fsum raised on an intermediate overflow)."""
    huge = (-8.988465674311579e307, -8.98846567431158e307)
    flags = safety_flags(FlagInputs(sex="male", weekly_rates_pct=huge))
    assert [f.code for f in flags] == ["rapid-loss"]


def test_rapid_loss_mean_stays_finite_at_the_float_limit() -> None:
    """Three weeks at -1.797e308 (found by the property test): a sum of the thirds rounds
    past the float limit; the running mean stays at the common value."""
    limit = -1.7976931348623157e308
    flags = safety_flags(FlagInputs(sex="male", weekly_rates_pct=(limit, limit, limit)))
    (flag,) = flags
    assert flag.values["mean_rate_pct_per_week"] == limit
    assert all(math.isfinite(float(v)) for v in flag.values.values())
