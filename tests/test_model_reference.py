"""The engine checked against outside references: papers, a statsmodels dataset, scipy, statsmodels."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from loadcore.model import (
    Orders,
    RegressionArima,
    aicc,
    autocorrelations,
    build_state_space,
    css_fit,
    exact_fit,
    kpss_differences,
    kpss_statistic,
    ljung_box,
)
from loadcore.model.constraints import stationary_invertible
from loadcore.model.screening import css_residuals


def test_kpss_critical_values_match_the_published_table():
    """Kwiatkowski, Phillips, Schmidt and Shin (1992), Table 1, level-stationarity case:
    10 % 0.347, 5 % 0.463, 2.5 % 0.574, 1 % 0.739."""
    from statsmodels.tsa.stattools import kpss

    rng = np.random.default_rng(1)
    _, _, _, crit = kpss(rng.normal(size=500), regression="c", nlags="auto", result_object=False)
    assert crit == pytest.approx({"10%": 0.347, "5%": 0.463, "2.5%": 0.574, "1%": 0.739})
    _, crit5 = kpss_statistic(rng.normal(size=500))
    assert crit5 == pytest.approx(0.463)


def test_kpss_decisions_difference_a_random_walk_and_not_white_noise():
    """The decisions that Table 1 of Kwiatkowski et al. (1992) implies at 5 %: a random walk
    rejects level stationarity (one difference), white noise does not."""
    rng = np.random.default_rng(7)
    e = rng.normal(size=1500)
    d_rw, stats_rw, crit = kpss_differences(np.cumsum(e))
    assert d_rw == 1 and stats_rw[0] > crit and stats_rw[1] <= crit
    assert kpss_differences(e)[0] == 0


def test_aicc_matches_its_formula_and_statsmodels():
    """AICc = AIC + 2k(k+1)/(n-k-1) (Hurvich and Tsai, 1989), AIC = -2 logL + 2k (Akaike, 1974),
    against statsmodels' SARIMAXResults.aic and .aicc for the same fit."""
    rng = np.random.default_rng(3)
    n = 400
    e = rng.normal(size=n)
    y = np.zeros(n)
    for t in range(1, n):
        y[t] = 0.6 * y[t - 1] + e[t] + 0.3 * e[t - 1]
    res = build_state_space(y, None, Orders(1, 0, 1, 0, 0, 0)).fit(disp=False)
    k = len(res.params)
    assert -2 * res.llf + 2 * k == pytest.approx(res.aic, rel=1e-12)
    assert aicc(res.llf, k, n) == pytest.approx(res.aicc, rel=1e-10)
    assert aicc(res.llf, k, n) == pytest.approx(res.aic + 2 * k * (k + 1) / (n - k - 1))


def test_ljung_box_matches_formula_and_statsmodels():
    """Ljung and Box (1978): Q = n(n+2) sum_k r_k^2 / (n-k); compared with
    statsmodels.stats.diagnostic.acorr_ljungbox with the model's degrees of freedom removed."""
    from statsmodels.stats.diagnostic import acorr_ljungbox

    rng = np.random.default_rng(11)
    x = rng.normal(size=600)
    x[1:] += 0.2 * x[:-1]
    q, p = ljung_box(x, 14, 14 - 3)
    ref = acorr_ljungbox(x, lags=[14], model_df=3)
    assert q == pytest.approx(float(ref["lb_stat"].iloc[0]), rel=1e-10)
    assert p == pytest.approx(float(ref["lb_pvalue"].iloc[0]), rel=1e-8)
    r = autocorrelations(x, 14)
    n = len(x)
    by_hand = n * (n + 2) * sum(r[k - 1] ** 2 / (n - k) for k in range(1, 15))
    assert q == pytest.approx(by_hand)


def test_nile_arima_011_matches_the_local_level_estimates():
    """Durbin and Koopman, Time Series Analysis by State Space Methods, 2nd ed. (2012), section
    2.10: the local level model of the Nile data (statsmodels.datasets.nile) has maximum
    likelihood estimates sigma2_eps = 15099 and sigma2_eta = 1469.1. Its reduced form is
    ARIMA(0,1,1) with MA coefficient theta = (-(q+2) + sqrt(q^2 + 4q)) / 2, q = 1469.1/15099,
    about -0.733. Our exact fit must match it."""
    from statsmodels.datasets import nile

    flow = nile.load_pandas().data["volume"].to_numpy(float)
    q = 1469.1 / 15099.0
    theta = (-(q + 2) + np.sqrt(q * q + 4 * q)) / 2
    assert theta == pytest.approx(-0.733, abs=5e-4)
    scale = 1.0 / np.std(np.diff(flow))
    res = exact_fit(RegressionArima(flow * scale, None, Orders(0, 1, 1, 0, 0, 0)))
    assert res.converged and res.invertible
    assert res.params[0] == pytest.approx(theta, abs=0.01)
    # The innovation variance of the reduced form is sigma2_eps / (-theta) (Harvey, 1989).
    assert res.params[-1] / scale**2 == pytest.approx(15099.0 / -theta, rel=0.05)


def test_css_screening_recovers_a_seasonal_ar_process():
    """Conditional sum of squares (Box and Jenkins, 1976) on a simulated multiplicative AR
    process gives estimates near the truth; checked with statsmodels' simulator as the source."""
    from statsmodels.tsa.arima_process import ArmaProcess

    ar = np.convolve([1, -0.7], np.r_[1, np.zeros(6), -0.3])
    x = ArmaProcess(ar, [1]).generate_sample(3000, distrvs=np.random.default_rng(5).normal)
    orders = Orders(1, 0, 0, 1, 0, 0)
    params = css_fit(x, orders, burn=20)
    ok = all(stationary_invertible(params, orders))
    sigma2 = float(np.mean(css_residuals(params, x, orders, 20) ** 2))
    assert ok
    assert params == pytest.approx([0.7, 0.3], abs=0.05)
    assert sigma2 == pytest.approx(1.0, rel=0.08)


def test_lognormal_mean_is_the_bias_adjusted_back_transform():
    """For log Y ~ N(mu, s^2), E[Y] = exp(mu + s^2/2) and the median is exp(mu)
    (Aitchison and Brown, 1957); checked against scipy.stats.lognorm."""
    from loadcore.model import Forecast  # noqa: F401  (the formula lives in FittedModel.forecast)

    mu, s = np.log(1500.0), 0.04
    ref = stats.lognorm(s=s, scale=np.exp(mu))
    assert np.exp(mu + s * s / 2) == pytest.approx(ref.mean(), rel=1e-12)
    assert np.exp(mu) == pytest.approx(ref.median(), rel=1e-12)


def test_forecast_mean_matches_lognormal_reference(demo_model, heat_wave_scenario):
    """The forecast's mean and median equal scipy.stats.lognorm's for the model's own mu and
    sigma (taken from the 50 % and 95 % bounds), and the sample paths' average agrees."""
    fc = demo_model.forecast(heat_wave_scenario, levels=(95,))
    f = fc.frame
    mu = np.log(f["median"].to_numpy())
    sd = (np.log(f["upper_95"].to_numpy()) - mu) / stats.norm.ppf(0.975)
    ref = stats.lognorm(s=sd, scale=np.exp(mu)).mean()
    np.testing.assert_allclose(f["mean"].to_numpy(), ref, rtol=1e-10)
    paths = demo_model.sample_paths(heat_wave_scenario, 4000, seed=3)
    np.testing.assert_allclose(paths.mean(axis=0), f["mean"].to_numpy(), rtol=0.01)


def test_own_forecast_equals_statsmodels_forecast(demo_model, heat_wave_scenario):
    """Our propagation of the final state gives the same mean and variance as statsmodels'
    SARIMAXResults.get_forecast with the same exogenous rows (reference library check); the
    intervals add the coefficients' variance g' Cov(beta) g on top of statsmodels' (which takes
    the coefficients as known), computed here by hand from its definition."""
    from loadcore.model.forecast import coefficient_variance

    res = demo_model.statsmodels_results()
    dates = pd.DatetimeIndex(heat_wave_scenario.dates)
    types = demo_model.calendar_types(dates).to_numpy(dtype=object)
    X = demo_model.regressors(dates, heat_wave_scenario.temperature_c, types)
    ref = res.get_forecast(len(dates), exog=X)
    fc = demo_model.forecast(heat_wave_scenario, levels=(80,))
    np.testing.assert_allclose(np.log(fc.frame["median"]), ref.predicted_mean, rtol=1e-9)
    lo = np.log(fc.frame["lower_80"].to_numpy())
    extra = coefficient_variance(demo_model.end_state, X, demo_model.coefficient_covariance)
    ref_lo = ref.predicted_mean - stats.norm.ppf(0.9) * np.sqrt(ref.var_pred_mean + extra)
    np.testing.assert_allclose(lo, ref_lo, rtol=1e-8)
    assert np.all(extra > 0)


def test_sample_path_quantiles_match_the_analytic_intervals(demo_model, heat_wave_scenario):
    """Sample paths reproduce the analytic 80 % bounds (Monte Carlo check, 20,000 paths)."""
    fc = demo_model.forecast(heat_wave_scenario, levels=(80,)).frame
    paths = demo_model.sample_paths(heat_wave_scenario, 20000, seed=1)
    q = np.quantile(paths, [0.1, 0.9], axis=0)
    np.testing.assert_allclose(q[0], fc["lower_80"], rtol=0.005)
    np.testing.assert_allclose(q[1], fc["upper_80"], rtol=0.005)
    again = demo_model.sample_paths(heat_wave_scenario, 50, seed=1)
    np.testing.assert_array_equal(again, demo_model.sample_paths(heat_wave_scenario, 50, seed=1))
