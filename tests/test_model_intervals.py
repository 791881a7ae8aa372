"""Prediction intervals that count the estimated regression coefficients.

Reference: statsmodels' SARIMAX with the regression coefficients in the state vector
(``mle_regression=False``, diffuse start), whose Kalman filter estimates them by GLS and whose
forecast variance therefore includes their uncertainty (Harvey, 1989, section 3.4; Durbin and
Koopman, 2012, section 6.2); the predictor with estimated coefficients is Goldberger's (1962).
"""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd
import pytest
from scipy import stats
from statsmodels.tsa.statespace.sarimax import SARIMAX

from loadcore.model import FitSettings, Orders, fit, load_model
from loadcore.model import forecast as propagation
from loadcore.model.simulate import ErrorTruth, simulated_history
from loadcore.scenario import Scenario

TRUTH = ErrorTruth(Orders(1, 0, 0, 1, 0, 0), (0.8, 0.2), sigma=0.015)


@pytest.fixture(scope="module")
def case():
    sim = simulated_history(TRUTH, n_days=800, missing_fraction=0.03, seed=3)
    history = sim.to_history()
    model = fit(history, FitSettings(), orders=TRUTH.orders)
    dates = pd.date_range(model.history_end + pd.Timedelta(days=1), periods=14, freq="D")
    scenario = Scenario("check", dates, sim.temperature_c[-14:])
    return history, model, scenario


def _rows(model, dates, temps):
    types = model.calendar_types(dates).to_numpy(dtype=object)
    return model.regressors(dates, temps, types)


def test_interval_variance_equals_state_regression_filter(case):
    """Our forecast standard deviation (error process plus g' Cov(beta) g) equals that of
    statsmodels' SARIMAX with the coefficients in the state (the reference, see the module
    docstring) at the same error parameters, to 1e-4 relative on every day of 14 (its diffuse
    start is approximate, variance 1e6, which pulls its coefficients slightly towards zero);
    and the log median to 5e-5 (0.005 % of demand) for the same reason."""
    history, model, scenario = case
    frame = history.frame
    X = _rows(model, frame.index, frame["temperature_c"].to_numpy(float))
    Xf = _rows(model, scenario.dates, scenario.temperature_c)
    y = np.log(frame["demand"].to_numpy(float))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        ref_model = SARIMAX(
            y,
            exog=X,
            order=model.orders.order,
            seasonal_order=model.orders.seasonal_order,
            mle_regression=False,
        )
        ref = ref_model.filter(model.params[len(model.columns) :]).get_forecast(14, exog=Xf)
    fc = model.forecast(scenario, levels=(80,)).frame
    z = stats.norm.ppf(0.9)
    sd = (np.log(fc["upper_80"].to_numpy()) - np.log(fc["median"].to_numpy())) / z
    np.testing.assert_allclose(sd, np.sqrt(ref.var_pred_mean), rtol=1e-4)
    np.testing.assert_allclose(np.log(fc["median"]), ref.predicted_mean, rtol=0, atol=5e-5)
    _m, noise_var = propagation.noise_moments(model.end_state, 14)
    assert np.all(sd**2 > noise_var)  # the coefficients add spread on every day


def test_sample_paths_carry_the_coefficient_spread(case):
    """Sample paths draw the coefficients too: their spread matches the analytic intervals
    (Monte Carlo check, 20,000 paths, common practice, no source) and is wider than the error
    process alone."""
    _history, model, scenario = case
    fc = model.forecast(scenario, levels=(80,)).frame
    paths = np.log(model.sample_paths(scenario, 20000, seed=5))
    sd = (np.log(fc["upper_80"].to_numpy()) - np.log(fc["median"].to_numpy())) / stats.norm.ppf(0.9)
    np.testing.assert_allclose(paths.std(axis=0), sd, rtol=0.03)
    noise = model.simulate_noise(14, 20000, seed=5)
    assert paths.std(axis=0)[-1] > noise.std(axis=0)[-1]


def test_saved_model_keeps_the_regression_weights(case, tmp_path):
    """The model file stores what the intervals need (the state's regression weights), so a
    loaded model gives the same intervals bit for bit (common practice, no source)."""
    _history, model, scenario = case
    again = load_model(model.save(tmp_path / "m.json"))
    np.testing.assert_array_equal(
        again.end_state.regression_weights, model.end_state.regression_weights
    )
    pd.testing.assert_frame_equal(
        again.forecast(scenario).frame, model.forecast(scenario).frame, check_exact=True
    )
