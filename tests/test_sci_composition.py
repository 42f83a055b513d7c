"""Forbes/Hall partition and energy density of weight change.

Check values: science notes §4.3 table and §10 items 28-32 and 51, all
"computed here" from the formulas with C = 10.4 kg (from memory, unverified),
rhoF = 39.5 MJ/kg (published, Hall 2008) and rhoL = 7.6 MJ/kg (from memory).
The code uses rhoF = 9440 kcal/kg (= 39.497 MJ/kg) and rhoL = 1816 kcal/kg
(= 7.598 MJ/kg) as Hall 2011 does, so MJ/kg values agree to about 0.01.
"""

from __future__ import annotations

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

from reportgen.science.composition import (
    ENERGY_PARTITION_C_KG,
    FORBES_C_KG,
    KCAL_PER_KG_3500_RULE,
    RHO_FAT_KCAL_PER_KG,
    RHO_LEAN_KCAL_PER_KG,
    energy_density_kcal_per_kg,
    fat_and_lean_mass_kg,
    lean_fraction_forbes,
    partition_weight_change_hall,
)
from reportgen.science.units import kcal_to_mj


def test_constants_match_sources() -> None:
    # Hall 2008: rhoF 39.5 MJ/kg (published) -> 9441 kcal/kg; Hall 2011 uses 9440.
    assert kcal_to_mj(RHO_FAT_KCAL_PER_KG) == pytest.approx(39.5, abs=0.005)
    # rhoL 7.6 MJ/kg = 1816 kcal/kg (from memory, unverified).
    assert kcal_to_mj(RHO_LEAN_KCAL_PER_KG) == pytest.approx(7.6, abs=0.005)

    # Forbes' cross-sectional curve FFM = 10.4 ln(FM) + 14.2 (from memory, science notes
    # §4.3): the lean share of a small change is dFFM/dBW = (dFFM/dF) / (1 + dFFM/dF),
    # taken here by a numerical derivative of the curve itself, not from the constant.
    def ffm(fm: float) -> float:
        return 10.4 * math.log(fm) + 14.2

    for fm in (8.0, 20.0, 45.0):
        h = 1e-5
        d = (ffm(fm + h) - ffm(fm - h)) / (2 * h)
        assert lean_fraction_forbes(fm) == pytest.approx(d / (1 + d), rel=1e-8)
    assert lean_fraction_forbes(20.0) == pytest.approx(FORBES_C_KG / (FORBES_C_KG + 20.0))


def test_3500_rule_per_kg() -> None:
    # §10 item 28: 3500 kcal/lb = 7716.2 kcal/kg (computed).
    assert pytest.approx(7716.2, abs=0.1) == KCAL_PER_KG_3500_RULE
    # §4.1: 32.3 MJ/kg (computed; Hall 2008 quotes 32.2).
    assert kcal_to_mj(KCAL_PER_KG_3500_RULE) == pytest.approx(32.3, abs=0.05)


def test_energy_partition_constant() -> None:
    # §10 item 32: C' = 10.4 rhoL/rhoF = 2.001 kg (computed).
    assert pytest.approx(2.001, abs=0.001) == ENERGY_PARTITION_C_KG


@pytest.mark.parametrize(
    ("fat_kg", "lean_fraction", "ed_mj", "ed_kcal"),
    [
        # §4.3 table, infinitesimal rows (computed here)
        (10.0, 0.5098, 23.24, 5554),
        (20.0, 0.3421, 28.59, 6832),
        # §10 item 29 (computed): F0 = 30 kg
        (30.0, 0.2574, 31.29, None),
    ],
)
def test_infinitesimal_partition(
    fat_kg: float, lean_fraction: float, ed_mj: float, ed_kcal: float | None
) -> None:
    assert lean_fraction_forbes(fat_kg) == pytest.approx(lean_fraction, abs=1e-4)
    ed = energy_density_kcal_per_kg(fat_kg)
    assert kcal_to_mj(ed) == pytest.approx(ed_mj, abs=0.01)
    if ed_kcal is not None:
        assert ed == pytest.approx(ed_kcal, abs=2.0)  # kcal/kg; 9440 vs 9441 rounding


@pytest.mark.parametrize(
    ("fat_kg", "dbw", "d_fat", "d_lean", "ed_mj", "ed_kcal"),
    [
        # §4.3 table (computed here); rows 30 and 31 of §10 are (20, -10) and (40, -10)
        (10.0, -5.0, -2.292, -2.708, 22.22, 5312),
        (20.0, -10.0, -6.166, -3.834, 27.27, 6518),
        (30.0, -5.0, -3.651, -1.349, 30.89, 7383),
        (40.0, -10.0, -7.758, -2.242, 32.35, 7731),
        (60.0, -10.0, -8.426, -1.574, 34.48, 8241),
    ],
)
def test_macroscopic_partition(
    fat_kg: float, dbw: float, d_fat: float, d_lean: float, ed_mj: float, ed_kcal: float
) -> None:
    df, dl = partition_weight_change_hall(fat_kg, dbw)
    assert df == pytest.approx(d_fat, abs=0.001)
    assert dl == pytest.approx(d_lean, abs=0.001)
    ed = energy_density_kcal_per_kg(fat_kg, dbw)
    assert kcal_to_mj(ed) == pytest.approx(ed_mj, abs=0.01)
    assert ed == pytest.approx(ed_kcal, abs=2.0)


def test_forty_kg_fat_reproduces_3500_rule() -> None:
    # Hall 2008 (published statement): the rule is about right for F0 > 30 kg; §10 item 31.
    ed = energy_density_kcal_per_kg(40.0, -10.0)
    assert abs(ed - KCAL_PER_KG_3500_RULE) / KCAL_PER_KG_3500_RULE < 0.01
    # ... and overstates the energy per kg for a lean person (F0 = 10 kg) by more than 25 %.
    assert energy_density_kcal_per_kg(10.0, -5.0) < 0.75 * KCAL_PER_KG_3500_RULE


def test_final_fat_stays_on_forbes_curve() -> None:
    # Identity from the derivation (§4.3): F + C ln F = F0 + dBW + C ln F0.
    f0, dbw = 25.0, -7.0
    df, _ = partition_weight_change_hall(f0, dbw)
    f = f0 + df
    c = FORBES_C_KG
    assert f + c * math.log(f) == pytest.approx(f0 + dbw + c * math.log(f0), rel=1e-12)


def test_zero_change() -> None:
    assert partition_weight_change_hall(20.0, 0.0) == (0.0, 0.0)


def test_huge_gain_does_not_overflow() -> None:
    df, dl = partition_weight_change_hall(30.0, 8000.0)
    f = 30.0 + df
    c = FORBES_C_KG
    assert f + c * math.log(f) == pytest.approx(30.0 + 8000.0 + c * math.log(30.0), rel=1e-12)
    assert df + dl == pytest.approx(8000.0, rel=1e-12)


def test_fat_and_lean_mass_change() -> None:
    # §10 item 51 (computed): 80 kg at 25 % -> 76 kg at 22 %: dFM -3.28, dFFM -0.72.
    fm0, ffm0 = fat_and_lean_mass_kg(80.0, 25.0)
    fm1, ffm1 = fat_and_lean_mass_kg(76.0, 22.0)
    assert (fm0, ffm0) == pytest.approx((20.0, 60.0), abs=1e-9)
    assert fm1 - fm0 == pytest.approx(-3.28, abs=1e-9)
    assert ffm1 - ffm0 == pytest.approx(-0.72, abs=1e-9)


@pytest.mark.parametrize("bad", [0.0, -3.0, math.nan, math.inf])
def test_bad_fat_mass(bad: float) -> None:
    with pytest.raises(ValueError, match="fat_mass_kg must be a positive number"):
        lean_fraction_forbes(bad)
    with pytest.raises(ValueError, match="fat_mass_kg must be a positive number"):
        partition_weight_change_hall(bad, -1.0)


def test_bad_inputs() -> None:
    with pytest.raises(ValueError, match="delta_weight_kg must be a finite number"):
        partition_weight_change_hall(20.0, math.nan)
    with pytest.raises(ValueError, match="weight_kg must be a positive number"):
        fat_and_lean_mass_kg(0.0, 20.0)
    with pytest.raises(ValueError, match="bodyfat_pct must be a finite number"):
        fat_and_lean_mass_kg(70.0, math.nan)


@given(
    fat=st.floats(min_value=2.0, max_value=100.0),
    # subnormal changes (below 1e-9 kg) are meaningless and lose relative precision
    frac=st.floats(min_value=-0.5, max_value=0.5).filter(lambda f: f == 0 or abs(f) > 1e-9),
)
def test_partition_properties(fat: float, frac: float) -> None:
    dbw = frac * fat  # a loss of at most half the fat mass, or a gain
    df, dl = partition_weight_change_hall(fat, dbw)
    assert df + dl == pytest.approx(dbw, abs=1e-9)
    assert fat + df > 0
    if dbw != 0:
        # fat and lean move with the weight, and the lean share lies between the marginal
        # shares at the start and at the end (the Forbes curve is concave)
        assert df * dbw >= 0 and dl * dbw >= 0
        share = dl / dbw
        ends = sorted([lean_fraction_forbes(fat), lean_fraction_forbes(fat + df)])
        assert ends[0] - 1e-9 <= share <= ends[1] + 1e-9
        ed = energy_density_kcal_per_kg(fat, dbw)
        assert RHO_LEAN_KCAL_PER_KG < ed < RHO_FAT_KCAL_PER_KG


@given(st.floats(min_value=0.5, max_value=150.0), st.floats(min_value=0.5, max_value=150.0))
def test_energy_density_rises_with_fat(f1: float, f2: float) -> None:
    lo, hi = sorted([f1, f2])
    assert energy_density_kcal_per_kg(lo) <= energy_density_kcal_per_kg(hi)


@pytest.mark.parametrize("bad", [None, "20", True])
def test_non_numbers_refused_with_value_error(bad: object) -> None:
    with pytest.raises(ValueError, match="fat_mass_kg must be a positive number"):
        energy_density_kcal_per_kg(bad)  # type: ignore[arg-type]
    with pytest.raises(ValueError, match="delta_weight_kg must be a finite number"):
        partition_weight_change_hall(20.0, bad)  # type: ignore[arg-type]
