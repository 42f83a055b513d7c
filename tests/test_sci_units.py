"""Unit conversions: exact definitions (NIST SP 811, Appendix B) and round trips."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from reportgen.science.units import (
    CM_PER_INCH,
    KG_PER_LB,
    KJ_PER_KCAL,
    bmi_kg_m2,
    cm_to_inch,
    inch_to_cm,
    kcal_to_kj,
    kcal_to_mj,
    kg_to_lb,
    kj_to_kcal,
    lb_to_kg,
    mj_to_kcal,
)


def test_exact_definitions() -> None:
    # Exact by definition (1959 international yard and pound; thermochemical calorie),
    # as listed in NIST SP 811 Appendix B.
    assert KG_PER_LB == 0.45359237
    assert KJ_PER_KCAL == 4.184
    assert CM_PER_INCH == 2.54


def test_known_values() -> None:
    assert lb_to_kg(1.0) == pytest.approx(0.45359237, rel=1e-15)  # definition
    assert kg_to_lb(100.0) == pytest.approx(220.462262, abs=1e-6)  # computed from definition
    assert kcal_to_kj(1000.0) == pytest.approx(4184.0, rel=1e-15)  # definition
    assert kj_to_kcal(100.0) == pytest.approx(23.900574, abs=1e-6)  # computed (Hall 2011's
    # "100 kJ/d is about 24 kcal/d", published)
    assert inch_to_cm(12.0) == pytest.approx(30.48, rel=1e-15)  # 1 ft = 0.3048 m exactly
    # Hall 2008 (published): 39.5 MJ/kg fat = 9441 kcal/kg (computed in science notes §4.2)
    assert mj_to_kcal(39.5) == pytest.approx(9440.7, abs=0.1)
    assert kcal_to_mj(9440.0) == pytest.approx(39.497, abs=0.001)
    # 3500 kcal per lb = 7716.2 kcal per kg (science notes §10 item 28, computed)
    assert 3500.0 / lb_to_kg(1.0) == pytest.approx(7716.2, abs=0.1)


def test_arrays() -> None:
    a = np.array([0.0, 1.0, 2.5])
    assert np.allclose(kg_to_lb(lb_to_kg(a)), a, rtol=1e-15, atol=0)
    assert lb_to_kg(a).shape == (3,)


finite = st.floats(min_value=-1e9, max_value=1e9, allow_nan=False)


@given(finite)
def test_round_trips(x: float) -> None:
    assert kg_to_lb(lb_to_kg(x)) == pytest.approx(x, rel=1e-14, abs=1e-300)
    assert lb_to_kg(kg_to_lb(x)) == pytest.approx(x, rel=1e-14, abs=1e-300)
    assert kj_to_kcal(kcal_to_kj(x)) == pytest.approx(x, rel=1e-14, abs=1e-300)
    assert kcal_to_kj(kj_to_kcal(x)) == pytest.approx(x, rel=1e-14, abs=1e-300)
    assert mj_to_kcal(kcal_to_mj(x)) == pytest.approx(x, rel=1e-14, abs=1e-300)
    assert cm_to_inch(inch_to_cm(x)) == pytest.approx(x, rel=1e-14, abs=1e-300)
    assert inch_to_cm(cm_to_inch(x)) == pytest.approx(x, rel=1e-14, abs=1e-300)


@given(st.floats(min_value=0.0, max_value=1e6), st.floats(min_value=0.0, max_value=1e6))
def test_conversions_preserve_order(a: float, b: float) -> None:
    lo, hi = sorted([a, b])
    assert lb_to_kg(lo) <= lb_to_kg(hi)
    assert kcal_to_kj(lo) <= kcal_to_kj(hi)
    assert cm_to_inch(lo) <= cm_to_inch(hi)


def test_bmi() -> None:
    # Definition (WHO): kg / m²; 70 kg at 175 cm = 22.857 (computed)
    assert bmi_kg_m2(70.0, 175.0) == pytest.approx(22.857, abs=0.001)
    for bad in (0.0, -1.0, math.nan, math.inf):
        with pytest.raises(ValueError, match="weight_kg and height_cm must be positive"):
            bmi_kg_m2(bad, 175.0)
        with pytest.raises(ValueError, match="weight_kg and height_cm must be positive"):
            bmi_kg_m2(70.0, bad)
