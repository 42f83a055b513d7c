"""Unit conversion in the readers: exact factors and round trips through real files."""

from __future__ import annotations

import tempfile
from pathlib import Path

import pytest
from _io_helpers import csv_text, read_book_client, write_book
from hypothesis import given, settings
from hypothesis import strategies as st

from reportgen.io.units import CM_PER_IN, KCAL_PER_KJ, KG_PER_LB, UNIT_MAP, alternatives


def test_factors_are_the_exact_definitions() -> None:
    # NIST SP 811 (2008), appendix B: 1 lb = 0.45359237 kg, 1 in = 2.54 cm (exact);
    # 1 kcal (thermochemical) = 4.184 kJ (exact).
    assert KG_PER_LB == 0.45359237
    assert CM_PER_IN == 2.54
    assert abs(KCAL_PER_KJ * 4.184 - 1.0) < 1e-15
    assert UNIT_MAP["weight_lb"] == ("weight_kg", KG_PER_LB)
    assert alternatives("intake_kcal") == ("intake_kcal", "intake_kj")


@settings(max_examples=40, deadline=None)
@given(
    lb=st.floats(min_value=60.0, max_value=700.0),
    kj=st.floats(min_value=0.0, max_value=60000.0),
)
def test_lb_and_kj_written_to_csv_come_back_in_kg_and_kcal(lb: float, kj: float) -> None:
    rows = [["date", "weight_lb", "intake_kj"], ["2026-11-01", repr(lb), repr(kj)]]
    with tempfile.TemporaryDirectory() as tmp:
        rec = read_book_client(write_book(Path(tmp) / "b", logs={"c001.csv": csv_text(rows)}))
    assert rec.problems == ()
    assert rec.log.weight_kg[0] == pytest.approx(lb * 0.45359237, rel=1e-12)
    assert rec.log.intake_kcal[0] == pytest.approx(kj / 4.184, rel=1e-12, abs=1e-9)
    # and back: kg / 0.45359237 gives the pounds written
    assert rec.log.weight_kg[0] / KG_PER_LB == pytest.approx(lb, rel=1e-12)
