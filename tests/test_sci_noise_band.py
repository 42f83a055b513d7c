"""Variance of the mean of AR(1) points (Brockwell & Davis 2002, §2.4) and the band widening."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from reportgen.science.noise_band import ar1_mean_variance_factor, widen_level_variance


@pytest.mark.parametrize(("phi", "n"), [(0.5, 7), (0.8, 14), (0.9, 30), (0.3, 2)])
def test_closed_form_matches_the_covariance_matrix(phi: float, n: int) -> None:
    # Reference: the variance of the mean computed from the AR(1) covariance matrix
    # (cov = phi^|i-j|) with numpy, divided by the independent-noise value 1/n.
    lag = np.abs(np.subtract.outer(np.arange(n), np.arange(n)))
    exact = (phi**lag).sum() / n**2 / (1.0 / n)
    assert ar1_mean_variance_factor(phi, n) == pytest.approx(exact, rel=1e-12)


def test_limits() -> None:
    assert ar1_mean_variance_factor(0.0, 10) == 1.0
    assert ar1_mean_variance_factor(0.7, 1) == pytest.approx(1.0, abs=1e-12)
    # long windows: (1 + phi)/(1 - phi) (Brockwell & Davis 2002, §2.4)
    assert ar1_mean_variance_factor(0.6, 1e7) == pytest.approx(4.0, rel=1e-5)
    with pytest.raises(ValueError):
        ar1_mean_variance_factor(1.0, 5)


@given(st.floats(0.01, 0.95), st.floats(1e-4, 0.3), st.floats(0.0, 0.5), st.floats(0.0, 0.5))
def test_widening_never_narrows(phi: float, var: float, ar: float, white: float) -> None:
    out = widen_level_variance(np.array([var, np.nan]), 0.25, ar, phi, white)
    assert out[0] >= var * (1 - 1e-12)
    assert np.isnan(out[1])


def test_white_noise_leaves_the_band() -> None:
    v = np.array([0.01, 0.02])
    assert np.array_equal(widen_level_variance(v, 0.25, 0.0, 0.7, 0.2), v)
