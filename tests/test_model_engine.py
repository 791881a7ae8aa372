"""The fit pipeline on a simulated high-order truth: the engine inside ``fit``.

Reference library: statsmodels' SARIMAX state-space filter (Durbin and Koopman, 2012) at the
chosen parameters. Truths are simulated with the product's regressors
(:mod:`loadcore.model.simulate`); AICc of Hurvich and Tsai (1989).
"""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd
import pytest
from statsmodels.tsa.statespace.sarimax import SARIMAX

from loadcore.model import FitSettings, Orders, fit, load_model
from loadcore.model.simulate import ErrorTruth, simulated_history
from loadcore.scenario import Scenario

#: AR 3 · MA 2 | weekly AR 1 · MA 1 with well-separated coefficients (our choice).
TRUTH = ErrorTruth(Orders(3, 0, 2, 1, 0, 1), (0.6, -0.3, 0.2, 0.4, 0.3, 0.5, -0.3), sigma=0.015)

#: A space around the truth (4 x 4 x 2 x 2 = 64 orders), small enough for the suite.
SETTINGS = FitSettings(
    search="thorough", ar_up_to=3, ma_up_to=3, ar_ma_up_to=6, weekly_ar_up_to=1, weekly_ma_up_to=1
)


@pytest.fixture(scope="module")
def simulated():
    sim = simulated_history(TRUTH, n_days=1500, missing_fraction=0.03, seed=7)
    history = sim.to_history()
    return sim, history, fit(history, SETTINGS)


def _reference_loglik(model, y, X) -> float:
    o = model.orders
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        ref = SARIMAX(y, exog=X, order=o.order, seasonal_order=o.seasonal_order)
        return float(ref.loglike(model.params))


def test_chosen_model_loglik_matches_statsmodels_filter(simulated):
    """The chosen model's log-likelihood equals statsmodels' SARIMAX ``loglike`` at the same
    parameters to 1e-6 (reference: statsmodels' Kalman filter, stationary start), and so does
    the model's own statsmodels results object."""
    sim, history, model = simulated
    X = model.regressors(
        history.frame.index,
        history.frame["temperature_c"].to_numpy(float),
        model.calendar_types(history.frame.index).to_numpy(dtype=object),
    )
    assert list(model.columns) == list(sim.columns)
    assert model.loglik == pytest.approx(_reference_loglik(model, sim.y, X), abs=1e-6)
    assert model.loglik == pytest.approx(float(model.statsmodels_results().llf), abs=1e-6)


def test_search_finds_the_truth_or_within_two_aicc_and_recovers_it(simulated):
    """The thorough search returns the true orders or orders within 2 AICc of the truth's exact
    fit (common practice for AICc ties, no source); the fit at the true orders has every
    coefficient (regression, error process, shock variance) within 3 standard errors of the
    simulated truth (common practice, no source)."""
    sim, history, model = simulated
    at_truth = (
        model if model.orders == TRUTH.orders else fit(history, SETTINGS, orders=TRUTH.orders)
    )
    assert model.orders == TRUTH.orders or model.aicc <= at_truth.aicc + 2.0
    truth = np.r_[sim.beta, TRUTH.params, TRUTH.sigma**2]
    z = (at_truth.params - truth) / at_truth.std_errors()
    assert np.all(np.abs(z) < 3.0), dict(zip(at_truth.param_names, np.round(z, 2), strict=True))
    chosen = model.candidates[model.candidates["chosen"]]
    assert len(chosen) == 1 and chosen["aicc"].iloc[0] == pytest.approx(model.aicc)
    assert model.candidates["exact_fit"].sum() >= 1 and len(model.candidates) == 64


def test_saved_model_forecasts_bit_for_bit(simulated, tmp_path):
    """A model saved and loaded again forecasts exactly as the fitted one (the model file keeps
    what forecasting needs; common practice, no source)."""
    _sim, history, model = simulated
    dates = pd.date_range(model.history_end + pd.Timedelta(days=1), periods=21, freq="D")
    temps = history.frame["temperature_c"].to_numpy(float)[-21:]
    sc = Scenario("check", dates, temps)
    again = load_model(model.save(tmp_path / "m.json"))
    a = model.forecast(sc, levels=(80, 95)).frame
    b = again.forecast(sc, levels=(80, 95)).frame
    pd.testing.assert_frame_equal(a, b, check_exact=True)
    np.testing.assert_array_equal(model.sample_paths(sc, 20, 3), again.sample_paths(sc, 20, 3))
