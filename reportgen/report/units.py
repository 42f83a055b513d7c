"""Display formatting: canonical values (kg, kcal/day) to text in the configured units.

Conversion happens here, at display time only; everything upstream stays in kg and kcal.
Negative numbers use a true minus sign and intervals an en dash, as in print.
"""

from __future__ import annotations

import datetime as dt
import math
from dataclasses import dataclass

import numpy as np

from reportgen.config import Config
from reportgen.results import Estimate
from reportgen.unit_constants import KG_PER_LB, KJ_PER_KCAL

MINUS = "\u2212"
DASH = "\u2013"


def _num(x: float, dp: int, *, signed: bool = False, group: bool = True) -> str:
    if dp == 0:
        x = round(x)
        if x == 0:
            x = 0  # never print "-0"
    text = f"{abs(x):,.{dp}f}" if group else f"{abs(x):.{dp}f}"
    if float(text.replace(",", "")) == 0:
        return ("±" if signed else "") + text
    if x < 0:
        return MINUS + text
    return ("+" + text) if signed else text


def _round_to(x: float, step: float) -> float:
    return round(x / step) * step


@dataclass(frozen=True)
class Units:
    """The display units and date format of one configuration."""

    weight_unit: str = "kg"
    energy_unit: str = "kcal"
    date_format: str = "%d %b %Y"

    @classmethod
    def from_config(cls, config: Config) -> Units:
        r = config.report
        return cls(r.weight_unit, r.energy_unit, r.date_format)

    # ---- conversion (for charts) -----------------------------------------------------------
    def weight(self, kg: float | np.ndarray) -> float | np.ndarray:
        return kg / KG_PER_LB if self.weight_unit == "lb" else kg

    def energy(self, kcal: float | np.ndarray) -> float | np.ndarray:
        return kcal * KJ_PER_KCAL if self.energy_unit == "kJ" else kcal

    @property
    def energy_label(self) -> str:
        return f"{self.energy_unit}/day"

    # ---- text ------------------------------------------------------------------------------
    def w(self, kg: float | None, *, signed: bool = False, dp: int = 1, unit: bool = True) -> str:
        if kg is None or not math.isfinite(kg):
            return DASH
        text = _num(float(self.weight(kg)), dp, signed=signed)
        return f"{text} {self.weight_unit}" if unit else text

    def w_rate(self, kg_per_week: float | None, *, dp: int = 2) -> str:
        if kg_per_week is None:
            return DASH
        return f"{self.w(kg_per_week, signed=True, dp=dp)}/week"

    def e(self, kcal: float | None, *, signed: bool = False, unit: bool = True) -> str:
        """Energy rounded to 10 kcal or 50 kJ: daily estimates are not better than that."""
        if kcal is None or not math.isfinite(kcal):
            return DASH
        text = _num(self.e_shown(kcal), 0, signed=signed)
        return f"{text} {self.energy_label}" if unit else text

    def e_shown(self, kcal: float) -> float:
        """The number :meth:`e` prints for ``kcal`` (in the display unit), for decisions
        that must agree with the printed figure."""
        if self.energy_unit == "kJ":
            return _round_to(kcal * KJ_PER_KCAL, 50)
        return _round_to(kcal, 10)

    def zero_shown(self, low_kcal: float | None, high_kcal: float | None) -> bool:
        """Whether an energy range as :meth:`e` prints it includes zero ("-140 to ±0" does)."""
        if low_kcal is None or high_kcal is None:
            return False
        return self.e_shown(low_kcal) <= 0 <= self.e_shown(high_kcal)

    def pct(self, value: float | None, *, dp: int = 1, signed: bool = False) -> str:
        if value is None or not math.isfinite(value):
            return DASH
        return f"{_num(value, dp, signed=signed)} %"

    def pp(self, value: float | None, *, dp: int = 1) -> str:
        """A change in percentage points."""
        if value is None or not math.isfinite(value):
            return DASH
        return f"{_num(value, dp, signed=True)} points"

    def d(self, day: dt.date | None) -> str:
        return day.strftime(self.date_format) if day is not None else DASH

    def span(self, start: dt.date, end: dt.date | None, *, running: str = "now") -> str:
        return f"{self.d(start)} {DASH} {self.d(end) if end else running}"

    def number(self, value: float | None, dp: int = 0, *, signed: bool = False) -> str:
        if value is None or not math.isfinite(value):
            return DASH
        return _num(value, dp, signed=signed)

    # ---- intervals -------------------------------------------------------------------------
    def interval(self, est: Estimate, kind: str, **kw: object) -> str:
        """``low–high`` in the same unit as the value, or '' when there is no interval."""
        if est.low is None or est.high is None:
            return ""
        lo, hi = self.fmt(est.low, kind, unit=False, **kw), self.fmt(est.high, kind, **kw)
        # a bound that rounds to zero is "0", not the "±0" of a change (−140 to 0 kcal/day)
        lo, hi = lo.removeprefix("±"), hi.removeprefix("±")
        return (
            f"{lo} to {hi}" if lo.startswith(MINUS) or hi.startswith(MINUS) else f"{lo}{DASH}{hi}"
        )

    def fmt(self, value: float | None, kind: str, **kw: object) -> str:
        """Format by kind: 'w', 'w_change', 'w_rate', 'e', 'e_change', 'pct', 'pct_change'."""
        unit = bool(kw.get("unit", True))
        if kind == "w":
            return self.w(value, unit=unit)
        if kind == "w_change":
            return self.w(value, signed=True, unit=unit)
        if kind == "w_rate":
            return self.w(value, signed=True, dp=2, unit=unit)
        if kind == "e":
            return self.e(value, unit=unit)
        if kind == "e_change":
            return self.e(value, signed=True, unit=unit)
        if kind == "pct":
            return self.pct(value) if unit else self.number(value, 1)
        if kind == "pct_change":
            return (
                self.pct(value, dp=2, signed=True) if unit else self.number(value, 2, signed=True)
            )
        raise ValueError(f"unknown format kind {kind!r}")
