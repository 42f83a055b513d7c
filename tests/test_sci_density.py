"""Siri and Brozek conversions against science notes §1 and §10 items 1-5, 43."""

from __future__ import annotations

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

from reportgen.config import DENSITY_CONVERSIONS
from reportgen.science.density import (
    CONVERSIONS,
    body_fat_pct,
    body_fat_pct_brozek,
    body_fat_pct_siri,
    body_fat_se_pct,
    density_plausible,
)

# Formulas published (Johnson 1996 JSE documentation of the 252-men data); the %BF values
# below are computed from them in science notes §1.
TABLE = [
    (1.0708, 12.27, 12.58),
    (1.0500, 21.43, 21.04),
    (1.0300, 30.58, 29.49),
    (1.1000, 0.00, 1.25),
    (1.0000, 45.00, 42.80),
]


@pytest.mark.parametrize(("db", "siri", "brozek"), TABLE)
def test_table(db: float, siri: float, brozek: float) -> None:
    assert body_fat_pct_siri(db) == pytest.approx(siri, abs=0.005)
    assert body_fat_pct_brozek(db) == pytest.approx(brozek, abs=0.005)
    assert body_fat_pct(db, "siri") == body_fat_pct_siri(db)
    assert body_fat_pct(db, "brozek") == body_fat_pct_brozek(db)


def test_check_values_section_10() -> None:
    assert body_fat_pct_siri(1.0708) == pytest.approx(12.271, abs=0.001)  # item 1, computed
    assert body_fat_pct_brozek(1.0708) == pytest.approx(12.584, abs=0.001)  # item 2, computed
    assert body_fat_pct_siri(1.0500) == pytest.approx(21.429, abs=0.001)  # item 3, computed
    assert body_fat_pct_brozek(1.0300) == pytest.approx(29.489, abs=0.001)  # item 4, computed
    assert body_fat_pct_siri(1.1000) == pytest.approx(0.0, abs=1e-6)  # item 5, computed


def test_252_men_case_1() -> None:
    # Case 1 of the 252-men data (Johnson 1996; published via the notes §9.3): density
    # 1.0708 recorded with Siri 12.3 and Brozek 12.6 (Brozek value from memory).
    assert round(body_fat_pct_siri(1.0708), 1) == 12.3
    assert round(body_fat_pct_brozek(1.0708), 1) == 12.6


def test_siri_and_brozek_cross() -> None:
    # Equal at Db = 38/35.8 (computed, §1), about 16.3 %; Brozek higher when leaner.
    db = 38.0 / 35.8
    assert body_fat_pct_siri(db) == pytest.approx(body_fat_pct_brozek(db), abs=1e-9)
    assert body_fat_pct_siri(db) == pytest.approx(16.3, abs=0.05)
    assert body_fat_pct_brozek(1.08) > body_fat_pct_siri(1.08)
    assert body_fat_pct_brozek(1.03) < body_fat_pct_siri(1.03)


def test_not_clamped() -> None:
    # §1: above 1.100 Siri is negative and must not be clamped; 252-men case 182
    # (density 1.1089, published as a known error) gives -3.61 (computed).
    assert body_fat_pct_siri(1.1089) == pytest.approx(-3.61, abs=0.005)
    assert not density_plausible(1.1089)


def test_see_propagation() -> None:
    # §10 item 43 (computed): SEE 0.0077 g/ml at Db 1.055 is about 3.4 %BF.
    assert body_fat_se_pct(1.055, 0.0077) == pytest.approx(3.4, abs=0.1)
    # d(%BF)/dDb = -495/Db² = about -445 per g/ml at 1.055 (computed, §1)
    assert body_fat_se_pct(1.055, 1.0) == pytest.approx(445.0, abs=1.0)
    assert body_fat_se_pct(1.055, 1.0, "brozek") == pytest.approx(457 / 1.055**2, rel=1e-12)


def test_plausible_range() -> None:
    # §1 / §8: flag a density outside about 0.99-1.10 g/ml (common practice).
    assert density_plausible(0.99) and density_plausible(1.10) and density_plausible(1.05)
    assert not density_plausible(0.9899) and not density_plausible(1.1001)


def test_conversion_names_match_config() -> None:
    assert CONVERSIONS == DENSITY_CONVERSIONS


@pytest.mark.parametrize("bad", [0.0, -1.0, math.nan, math.inf])
def test_bad_density(bad: float) -> None:
    with pytest.raises(ValueError, match="density_g_ml must be a positive number"):
        body_fat_pct_siri(bad)
    with pytest.raises(ValueError, match="density_g_ml must be a positive number"):
        body_fat_pct_brozek(bad)


def test_bad_conversion() -> None:
    with pytest.raises(ValueError, match="unknown density conversion 'lohman'"):
        body_fat_pct(1.05, "lohman")
    with pytest.raises(ValueError, match="unknown density conversion 'x'"):
        body_fat_se_pct(1.05, 0.008, "x")
    with pytest.raises(ValueError, match="density_se_g_ml must be a non-negative number"):
        body_fat_se_pct(1.05, -0.008)


@given(st.floats(min_value=0.99, max_value=1.10), st.floats(min_value=0.99, max_value=1.10))
def test_denser_means_leaner(d1: float, d2: float) -> None:
    lo, hi = sorted([d1, d2])
    for conv in CONVERSIONS:
        assert body_fat_pct(hi, conv) <= body_fat_pct(lo, conv)
        assert -1.0 <= body_fat_pct(hi, conv) <= 50.001
