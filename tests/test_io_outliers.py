"""The robust outlier rule on synthetic series (invented data; properties, not pins)."""

from __future__ import annotations

import warnings

import numpy as np

from reportgen.io.outliers import weight_outliers


def test_isolated_typo_is_flagged_on_a_perfectly_steady_client() -> None:
    w = np.full(30, 82.0)
    w[10] = 8.2
    flags, level = weight_outliers(w)
    assert flags.tolist() == [i == 10 for i in range(30)]
    assert abs(level[10] - 82.0) < 1e-9


def test_steady_client_ordinary_swings_are_not_flagged() -> None:
    """MAD is 0 for identical readings; the scale floor keeps a 1.5 kg swing legitimate."""
    w = np.full(30, 82.0)
    w[10] = 83.5
    w[20] = 80.6
    flags, _ = weight_outliers(w)
    assert not flags.any()


def test_noisy_losing_client_has_no_false_positives() -> None:
    rng = np.random.default_rng(20261130)
    days = np.arange(365)
    w = 95.0 - 1.0 / 7.0 * days + rng.normal(0.0, 0.6, size=365)  # 1 kg/week, SD 0.6 kg
    w[rng.random(365) < 0.2] = np.nan  # a fifth of the days without a weigh-in
    flags, _ = weight_outliers(w)
    assert not flags.any()


def test_two_typos_in_a_row_are_both_flagged() -> None:
    w = np.linspace(82.0, 80.0, 40)
    w[15] = 92.0
    w[16] = 92.1
    flags, _ = weight_outliers(w)
    assert np.flatnonzero(flags).tolist() == [15, 16]


def test_too_few_neighbours_means_no_judgement() -> None:
    w = np.full(20, np.nan)
    w[[0, 5, 10]] = [82.0, 8.2, 82.0]
    flags, _ = weight_outliers(w)
    assert not flags.any()


def test_empty_and_all_missing() -> None:
    assert weight_outliers(np.empty(0))[0].shape == (0,)
    assert not weight_outliers(np.full(5, np.nan))[0].any()


def test_no_false_positives_over_many_noisy_clients() -> None:
    """Normal noise (SD 0.5 kg) never reaches 5 robust SDs; window ends included."""
    rng = np.random.default_rng(7)
    for _ in range(200):
        level = rng.uniform(40.0, 160.0)
        w = level - 0.03 * np.arange(365) + rng.normal(0.0, 0.5, size=365)
        assert not weight_outliers(w)[0].any()


def test_row_median_matches_numpy_nanmedian() -> None:
    from reportgen.io.outliers import _row_nanmedian

    rng = np.random.default_rng(3)
    a = rng.normal(80.0, 2.0, size=(500, 15))
    a[rng.random(a.shape) < 0.4] = np.nan
    a[7] = np.nan
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)  # the all-NaN row
        expected = np.nanmedian(a, axis=1)
    np.testing.assert_allclose(_row_nanmedian(a), expected, rtol=0, atol=1e-12, equal_nan=True)
