"""Temperature memory terms: their arithmetic, the AICc selection, and their future values."""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest

from loadcore import load_model
from loadcore.errors import ModelError
from loadcore.model import FitSettings, TermSpec, fit
from loadcore.model.memory import lead_in_c, typical_spread_c
from loadcore.model.orders import Orders
from loadcore.model.simulate import MEMORY_RESPONSE, ErrorTruth, simulated_history
from loadcore.model.terms import MEMORY_WEIGHT, smoothed_past
from loadcore.scenario import Scenario, make_scenario, seasonal_normal_path

#: A short error process for these tests (plausible for daily load errors, our choice).
TRUTH = ErrorTruth(Orders(1, 0, 1, 1, 0, 0), (0.6, 0.2, 0.2))


@pytest.fixture(scope="module")
def memory_sim():
    return simulated_history(TRUTH, n_days=1200, seed=3, memory=MEMORY_RESPONSE)


@pytest.fixture(scope="module")
def memory_model(memory_sim):
    return fit(memory_sim.to_history(with_minimum=True))


def test_smoothed_past_by_hand_and_against_pandas_ewm():
    """S_t = w T_{t-1} + (1 - w) S_{t-1}, S_0 = T_0: by hand for four days, and equal to pandas'
    ``Series.ewm(alpha=w, adjust=False).mean()`` shifted one day (pandas documentation of
    ``adjust=False``: y_t = (1 - alpha) y_{t-1} + alpha x_t, y_0 = x_0)."""
    t = np.array([10.0, 20.0, 0.0, 30.0])
    # by hand, w = 0.5: S0 = 10, S1 = 10, S2 = .5*20 + .5*10 = 15, S3 = .5*0 + .5*15 = 7.5
    np.testing.assert_allclose(smoothed_past(t, 0.5), [10.0, 10.0, 15.0, 7.5])
    rng = np.random.default_rng(4)
    temps = 15 + 8 * rng.standard_normal(400)
    for w in (MEMORY_WEIGHT, 0.2, 0.9):
        ewm = pd.Series(temps).ewm(alpha=w, adjust=False).mean().shift(1)
        ewm.iloc[0] = temps[0]
        np.testing.assert_allclose(smoothed_past(temps, w), ewm.to_numpy(), rtol=0, atol=1e-12)


def test_span_three_is_the_default_weight():
    """pandas' span s gives alpha = 2 / (s + 1) (pandas documentation of ``ewm``): span 3."""
    assert MEMORY_WEIGHT == pytest.approx(2 / (3 + 1))


def test_the_lead_in_makes_a_scenario_run_on_from_the_history():
    """Smoothing a scenario after its history's lead-in equals smoothing the two joined."""
    rng = np.random.default_rng(5)
    history, future = rng.normal(10, 5, 300), rng.normal(25, 3, 14)
    joined = smoothed_past(np.r_[history, future], MEMORY_WEIGHT)
    np.testing.assert_allclose(smoothed_past(future, MEMORY_WEIGHT, history), joined[300:])


def test_a_truth_with_memory_keeps_both_groups_and_recovers_their_coefficients(
    memory_sim, memory_model
):
    """Simulated truth: demand responds to the smoothed past temperature (weight 0.5) and to the
    daily minimum; the fit keeps both groups, each coefficient within three standard errors."""
    model = memory_model
    assert model.memory_terms == ("past", "minimum")
    kept = [t for t in model.memory_trials if t.kept]
    assert len(kept) == 1 and kept[0].terms == ("past", "minimum")
    base = next(t.aicc for t in model.memory_trials if not t.terms)
    assert model.aicc == pytest.approx(kept[0].aicc) and model.aicc < base - 10
    truth = dict(zip(memory_sim.columns, memory_sim.beta, strict=True))
    se = dict(zip(model.param_names, model.std_errors(), strict=True))
    for name in ("temp_past", "temp_past_sq", "temp_min", "temp_min_sq"):
        estimate = model.beta[model.columns.index(name)]
        assert abs(estimate - truth.get(name, 0.0)) < 3 * se[name], name
    text = model.describe_memory()
    assert "smoothed past temperature" in text and "daily minimum" in text


def test_a_truth_without_memory_drops_the_terms():
    """Simulated truths without memory: AICc keeps a two-column group by chance about one time
    in seven (a likelihood-ratio statistic above 4 on 2 degrees of freedom, P = 0.135), so over
    six histories at most one keeps a group and most keep none."""
    kept = []
    for seed in range(6):
        sim = simulated_history(TRUTH, n_days=1200, seed=seed)
        model = fit(sim.to_history(with_minimum=True))
        kept.append(model.memory_terms)
        assert len(model.memory_trials) >= 3
    assert sum(bool(k) for k in kept) <= 1, kept


def test_memory_off_tries_nothing(memory_sim):
    model = fit(memory_sim.to_history(), FitSettings(terms=TermSpec(memory=False)))
    assert model.memory_terms == () and model.memory_trials == ()
    assert "not tried" in model.describe_memory()


def test_a_forecast_uses_the_history_s_last_days(memory_model):
    """A warm scenario after a cold spell forecasts less demand on its first day than the same
    scenario after a warm spell would, when the model kept the smoothed past temperature; and the
    smoothed term of the scenario runs on from the history's last days."""
    model = memory_model
    history = model.history
    start = history.end + pd.Timedelta(days=1)
    path = pd.Series(
        np.full(14, 8.0), index=pd.date_range(start, periods=14, freq="D", name="date")
    )
    scenario = make_scenario("steady", path)
    X = model.scenario_regressors(scenario)
    temps = history.frame["temperature_c"].to_numpy(float)
    expected = smoothed_past(np.r_[temps, path.to_numpy()], MEMORY_WEIGHT)[len(temps) :]
    column = model.columns.index("temp_past")
    spec = model.settings.terms
    np.testing.assert_allclose(X[:, column], (expected - spec.reference_temp_c) / 10)


def test_a_later_window_smooths_over_the_seasonal_normal(memory_model):
    """A window that starts 30 days after the history: the gap is the history's seasonal normal."""
    history = memory_model.history
    start = history.end + pd.Timedelta(days=31)
    lead = lead_in_c(history, start)
    normal = seasonal_normal_path(history, history.end + pd.Timedelta(days=1), 30).to_numpy()
    assert len(lead) == history.days + 30
    np.testing.assert_allclose(lead[-30:], normal)


def test_scenario_minima_are_used_or_taken_from_the_typical_spread(memory_model):
    model = memory_model
    history = model.history
    start = history.end + pd.Timedelta(days=1)
    dates = pd.date_range(start, periods=10, freq="D", name="date")
    temps = np.full(10, 20.0)
    spread = typical_spread_c(history, dates)
    frame = history.frame
    observed = (frame["temperature_c"] - frame["temperature_min_c"]).mean()
    assert 0 < spread.mean() < 2 * observed
    plain = Scenario("plain", dates, temps)
    given = Scenario("given", dates, temps, temperature_min_c=temps - spread)
    np.testing.assert_allclose(model.linear_predictor(plain), model.linear_predictor(given))
    warm_nights = Scenario("warm nights", dates, temps, temperature_min_c=temps - 2)
    assert not np.allclose(model.linear_predictor(plain), model.linear_predictor(warm_nights))


def test_the_model_file_keeps_the_memory_terms(memory_model):
    model = memory_model
    again = load_model(model.to_json())
    assert again.memory_terms == model.memory_terms
    assert again.memory_trials == model.memory_trials
    assert again.to_json() == model.to_json()
    path = pd.Series(
        np.linspace(5, 25, 14),
        index=pd.date_range(model.history.end + pd.Timedelta(days=1), periods=14, name="date"),
    )
    scenario = make_scenario("ramp", path)
    np.testing.assert_array_equal(
        again.forecast(scenario).frame["mean"], model.forecast(scenario).frame["mean"]
    )


def test_a_model_file_without_the_selection_loads(memory_model):
    """Files written before the memory terms have no ``memory_selection``: they load with none."""
    data = memory_model.to_dict()
    data.pop("memory_selection")
    again = load_model(json.dumps(data))
    assert again.memory_trials == () and again.memory_terms == ("past", "minimum")
    assert "not tried" in again.describe_memory()


def test_a_damaged_selection_is_one_clear_error(memory_model):
    data = memory_model.to_dict()
    data["memory_selection"] = [{"terms": ["yesterday"], "aicc": 1.0, "kept": True}]
    with pytest.raises(ModelError, match="not ones loadcore writes"):
        load_model(json.dumps(data))
    data = memory_model.to_dict()
    data["design"]["columns"] = [c for c in data["design"]["columns"] if c != "temp_min"]
    with pytest.raises(ModelError):
        load_model(json.dumps(data))


def test_a_far_window_and_weather_ensembles_forecast_with_memory_terms(memory_model):
    """A window 40 days after the history forecasts through the gap; an ensemble's traces each
    get their own smoothed term (two traces that differ only before the last day differ in the
    term's column on that last day only)."""
    from loadcore.weather import ensemble_forecast

    model = memory_model
    start = model.history.end + pd.Timedelta(days=41)
    path = pd.Series(
        np.full(10, 20.0), index=pd.date_range(start, periods=10, freq="D", name="date")
    )
    frame = model.forecast(make_scenario("far", path)).frame
    assert np.isfinite(frame["mean"]).all() and (frame["upper_95"] > frame["lower_95"]).all()
    first = model.history.end + pd.Timedelta(days=1)
    dates = pd.date_range(first, periods=5, freq="D", name="date")
    calm = Scenario("calm", dates, [10.0, 10, 10, 10, 10])
    spike = Scenario("spike", dates, [10.0, 10, 10, 25, 10])
    column = model.columns.index("temp_past")
    a, b = model.scenario_regressors(calm), model.scenario_regressors(spike)
    np.testing.assert_array_equal(a[:4, column], b[:4, column])
    assert b[4, column] > a[4, column]
    result = ensemble_forecast(model, days=14)
    assert np.isfinite(result.daily["mean"]).all()


def test_the_brief_s_model_summary_says_which_memory_terms_were_kept(memory_model):
    from loadcore.export import summarise_model

    summary = summarise_model(memory_model)
    assert summary["Temperature memory"] == memory_model.describe_memory()
    assert summary["Temperature memory"].startswith("Kept the smoothed past temperature and")
