"""Tests for loadcore.scores."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from loadcore.errors import InputError
from loadcore.scores import (
    coverage_standard_error,
    crps_ensemble,
    crps_normal,
    interval_coverage,
    mae,
    mape,
    mase,
    pinball_loss,
    pit_ensemble,
    pit_histogram,
    rmse,
    sample_quantiles,
    seasonal_naive_mae,
)


def test_crps_of_large_normal_sample_matches_closed_form():
    """Ensemble CRPS of a big N(mu, sd^2) sample against the closed form.

    Source: Gneiting and Raftery (2007), JASA 102(477), eq. (5) for the normal closed form
    and eq. (22) for the energy (kernel) form used on ensembles.
    """
    rng = np.random.default_rng(11)
    mu, sd = 3.0, 2.0
    sample = rng.normal(mu, sd, size=200_000)
    for y in (-1.0, 3.0, 4.5, 9.0):
        got = float(crps_ensemble(sample, np.float64(y)))
        want = float(crps_normal(mu, sd, y))
        assert got == pytest.approx(want, rel=5e-3, abs=5e-3)


def test_crps_normal_at_the_mean():
    """At y = mu the normal CRPS is sd * (2 phi(0) - 1/sqrt(pi)) = sd * (sqrt(2) - 1) / sqrt(pi).

    Source: Gneiting and Raftery (2007), eq. (5), evaluated at z = 0.
    """
    assert float(crps_normal(0.0, 1.0, 0.0)) == pytest.approx((np.sqrt(2) - 1) / np.sqrt(np.pi))


def test_crps_ensemble_sorting_matches_pairwise_definition():
    """Sorted O(m log m) pair term against the O(m^2) double sum of the definition.

    Source: Gneiting and Raftery (2007), eq. (22), E|X - y| - 0.5 E|X - X'|.
    """
    rng = np.random.default_rng(3)
    x = rng.gamma(2.0, 1.5, size=(4, 61))
    y = rng.normal(3.0, 1.0, size=4)
    direct = np.abs(x - y[:, None]).mean(axis=1) - 0.5 * np.abs(x[:, :, None] - x[:, None, :]).mean(
        axis=(1, 2)
    )
    np.testing.assert_allclose(crps_ensemble(x, y), direct, rtol=1e-12)


def test_crps_of_point_ensemble_is_absolute_error():
    """A one-member ensemble has CRPS |x - y| (the pair term vanishes). Common practice, no source."""
    assert float(crps_ensemble([5.0], np.float64(2.0))) == pytest.approx(3.0)


def test_sample_quantiles_match_numpy():
    """Linear-interpolation quantiles against numpy.quantile (default method 'linear').

    Source: numpy.quantile, which documents its default as Hyndman and Fan (1996) type 7.
    """
    rng = np.random.default_rng(5)
    x = rng.normal(size=(7, 333))
    probs = [0.0, 0.025, 0.1, 0.5, 0.9, 0.975, 1.0]
    np.testing.assert_allclose(
        sample_quantiles(x, probs, axis=1), np.quantile(x, probs, axis=1), rtol=1e-12
    )
    np.testing.assert_allclose(
        sample_quantiles(x, probs, axis=0), np.quantile(x, probs, axis=0), rtol=1e-12
    )


@settings(max_examples=40, deadline=None)
@given(
    st.lists(st.floats(-1e3, 1e3), min_size=1, max_size=50),
    st.floats(0.0, 1.0),
)
def test_sample_quantiles_property(values, p):
    """Same check on arbitrary small samples. Source: numpy.quantile (method 'linear')."""
    got = sample_quantiles(np.array(values), [p])[0]
    assert got == pytest.approx(np.quantile(values, p), rel=1e-9, abs=1e-9)


def test_pinball_hand_example():
    """Pinball loss from its definition, worked by hand.

    y = [10, 20], q = [12, 15], p = 0.9:
    day 1: y < q, loss (1 - 0.9) * (12 - 10) = 0.2; day 2: y >= q, loss 0.9 * (20 - 15) = 4.5;
    mean 2.35. Source: Koenker and Bassett (1978), the check function.
    """
    assert pinball_loss([10.0, 20.0], [12.0, 15.0], 0.9) == pytest.approx(2.35)


def test_pinball_median_is_half_mae():
    """At p = 0.5 the pinball loss is half the MAE. Common practice, no source."""
    rng = np.random.default_rng(1)
    y, f = rng.normal(size=50), rng.normal(size=50)
    assert pinball_loss(y, f, 0.5) == pytest.approx(0.5 * mae(y, f))


def test_pinball_rejects_bad_level():
    with pytest.raises(InputError, match="outside"):
        pinball_loss([1.0], [1.0], 1.5)


def test_mase_of_seasonal_naive_is_one_in_sample():
    """The seasonal-naive forecast scored on its own in-sample data has MASE exactly 1.

    Source: Hyndman and Koehler (2006), the definition of the MASE scale.
    """
    rng = np.random.default_rng(7)
    x = 1000 + 50 * np.sin(np.arange(400) * 2 * np.pi / 7) + rng.normal(0, 20, 400)
    assert mase(x[7:], x[:-7], x, lag=7) == pytest.approx(1.0, rel=1e-12)


def test_mase_skips_missing_values():
    x = np.arange(30, dtype=float) ** 1.5
    x[10] = np.nan
    assert np.isfinite(seasonal_naive_mae(x))
    assert mase(x[7:], x[:-7], x) == pytest.approx(1.0)


def test_mase_needs_enough_history():
    with pytest.raises(InputError, match="more than 7"):
        seasonal_naive_mae([1.0, 2.0, 3.0])


def test_point_errors_hand_example():
    """MAPE, RMSE and MAE on a hand example. Common practice, no source.

    y = [100, 200], f = [110, 180]: errors 10 and 20; MAPE (10 + 10) / 2 = 10 %;
    RMSE sqrt((100 + 400) / 2) = sqrt(250); MAE 15.
    """
    assert mape([100, 200], [110, 180]) == pytest.approx(10.0)
    assert rmse([100, 200], [110, 180]) == pytest.approx(np.sqrt(250))
    assert mae([100, 200], [110, 180]) == pytest.approx(15.0)


def test_point_errors_leave_out_missing():
    assert mape([100, np.nan], [110, 5]) == pytest.approx(10.0)
    assert np.isnan(rmse([np.nan], [1.0]))


def test_shape_mismatch_is_an_input_error():
    with pytest.raises(InputError, match="shape"):
        rmse([1, 2, 3], [1, 2])


def test_pit_uniform_for_calibrated_ensembles():
    """PIT of draws from the forecast distribution itself is uniform on [0, 1].

    Source: Gneiting, Balabdaoui and Raftery (2007), JRSS B 69(2), the PIT of a calibrated
    forecast (from memory).
    """
    rng = np.random.default_rng(9)
    ens = rng.normal(size=(4000, 199))
    y = rng.normal(size=4000)
    pit = pit_ensemble(ens, y)
    counts, edges = pit_histogram(pit, bins=10)
    assert counts.sum() == 4000
    assert edges[0] == 0.0 and edges[-1] == 1.0
    assert counts.min() > 320 and counts.max() < 480


def test_pit_ties_and_missing():
    pit = pit_ensemble([[1.0, 2.0, 3.0, 4.0], [1.0, 2.0, 3.0, 4.0]], [2.0, np.nan])
    assert pit[0] == pytest.approx((1 + 0.5) / 4)
    assert np.isnan(pit[1])


def test_interval_coverage():
    assert interval_coverage([1, 5, 9, np.nan], [0, 0, 0, 0], [4, 5, 8, 1]) == pytest.approx(2 / 3)


def test_coverage_standard_error_of_single_days_is_the_binomial_one():
    """One day per group: the ratio-estimator variance is the binomial p(1 - p) / n times
    n / (n - 1) (common practice, no source)."""
    inside = np.array([1.0] * 30 + [0.0] * 10)
    got = coverage_standard_error(inside, np.full(40, 0.5), np.full(40, 2.0), np.arange(40))
    p, n = 0.75, 40
    assert got == pytest.approx(np.sqrt(p * (1 - p) / n * n / (n - 1)))


def test_coverage_standard_error_counts_groups_not_days():
    """Days that move together (whole groups inside or outside) give the standard error of the
    number of groups, not of the number of days; NaN actuals are left out."""
    groups = np.repeat(np.arange(20), 5)
    inside = np.repeat([1.0] * 15 + [0.0] * 5, 5)
    actual = inside.copy()
    actual[3] = np.nan
    got = coverage_standard_error(actual, np.full(100, 0.5), np.full(100, 2.0), groups)
    days = coverage_standard_error(inside, np.full(100, 0.5), np.full(100, 2.0), np.arange(100))
    p, m = 0.75, 20
    assert got == pytest.approx(np.sqrt(p * (1 - p) / m * m / (m - 1)), rel=0.02)
    assert got > 2 * days
    assert np.isnan(coverage_standard_error([1.0, 1.0], [0, 0], [2, 2], [7, 7]))
