"""The fitted model: recovery of known parameters, interval coverage, saving, scenario checks."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from loadcore.calendar import CalendarSpec, Override
from loadcore.errors import ModelError, ScenarioError
from loadcore.history import history_from_frame
from loadcore.model import FitSettings, fit, load_model
from loadcore.scenario import Scenario, constant_path, make_scenario
from loadcore.search import Orders
from loadcore.terms import TermSpec

REPO = Path(__file__).resolve().parent.parent

# A known regression with seasonal AR errors, used only in these tests (values are ours).
TRUE = {
    "const": 7.0,
    "temp": 0.04,
    "temp_sq": 0.06,
    "type_non_working": -0.12,
    "ar": 0.6,
    "weekly_ar": 0.3,
    "sigma": 0.02,
}


def _simulate(n_days: int, seed: int) -> pd.DataFrame:
    """Daily log demand = const + temp terms + non-working effect + AR(1) x weekly AR(1) errors."""
    rng = np.random.default_rng(seed)
    idx = pd.date_range("2020-01-06", periods=n_days, freq="D", name="date")
    doy = idx.day_of_year.to_numpy()
    temp = 18 + 12 * -np.cos(2 * np.pi * (doy - 20) / 365.25)
    anomaly = np.zeros(n_days)
    for t in range(1, n_days):
        anomaly[t] = 0.7 * anomaly[t - 1] + rng.normal(0, 3.0)
    temp = temp + anomaly
    x = (temp - 18.0) / 10.0
    weekend = (idx.day_of_week >= 5).astype(float)
    u = np.zeros(n_days + 200)
    e = rng.normal(0, TRUE["sigma"], n_days + 200)
    phi, Phi = TRUE["ar"], TRUE["weekly_ar"]
    for t in range(8, n_days + 200):
        u[t] = phi * u[t - 1] + Phi * u[t - 7] - phi * Phi * u[t - 8] + e[t]
    log_d = (
        TRUE["const"]
        + TRUE["temp"] * x
        + TRUE["temp_sq"] * x * x
        + TRUE["type_non_working"] * weekend
        + u[200:]
    )
    return pd.DataFrame({"demand": np.exp(log_d), "temperature_c": np.round(temp, 1)}, index=idx)


SIM_SETTINGS = FitSettings(
    search="quick",
    terms=TermSpec(annual_harmonics=0, trend=False),
    calendar=CalendarSpec(country=None, scheme="simple"),
)


@pytest.fixture(scope="module")
def simulated():
    frame = _simulate(3 * 365 + 400, seed=42)
    fit_part = history_from_frame(frame.iloc[: 3 * 365])
    model = fit(fit_part, SIM_SETTINGS, orders=Orders(1, 0, 0, 1, 0, 0))
    return frame, model


def test_estimates_fall_within_three_standard_errors_of_the_truth(simulated):
    """Recovery on data simulated from a known regression with seasonal AR errors
    (common practice for checking an estimator, no source)."""
    _, model = simulated
    table = dict(zip(model.columns, model.beta, strict=True))
    se = dict(zip(model.columns, model.std_errors()[: len(model.columns)], strict=True))
    for name in ("const", "temp", "temp_sq", "type_non_working"):
        assert abs(table[name] - TRUE[name]) < 3 * se[name], (name, table[name], se[name])
    names = list(model.param_names)
    ar = model.params[names.index("ar.L1")]
    sar = model.params[names.index("ar.S.L7")]
    se_all = model.std_errors()
    assert abs(ar - TRUE["ar"]) < 3 * se_all[names.index("ar.L1")]
    assert abs(sar - TRUE["weekly_ar"]) < 3 * se_all[names.index("ar.S.L7")]
    assert np.sqrt(model.sigma2) == pytest.approx(TRUE["sigma"], rel=0.08)


def test_search_follows_kpss_and_finds_the_error_structure(simulated):
    """The automatic search differences exactly when statsmodels' KPSS test (Kwiatkowski et al.,
    1992, long bandwidth) rejects level stationarity of the OLS residuals at 5 %, keeps both a
    daily and a weekly term for the daily x weekly AR errors, and returns the candidate with
    the lowest exact AICc."""
    from statsmodels.tsa.stattools import kpss

    frame, _ = simulated
    part = frame.iloc[: 3 * 365]
    model = fit(history_from_frame(part), SIM_SETTINGS)
    y = np.log(part["demand"].to_numpy())
    x = (part["temperature_c"].to_numpy() - 18.0) / 10.0
    X = np.column_stack([np.ones(len(y)), x, x * x, part.index.day_of_week >= 5])
    resid = y - X @ np.linalg.lstsq(X, y, rcond=None)[0]
    stat = kpss(resid, regression="c", nlags="legacy", result_object=False)[0]
    assert model.orders.d == int(stat > 0.463)
    assert model.orders.D == 0
    assert model.orders.p + model.orders.q >= 1 and model.orders.P + model.orders.Q >= 1
    assert model.converged
    chosen = model.candidates[model.candidates["chosen"]]
    assert len(chosen) == 1
    assert model.aicc <= model.candidates["aicc"].min() + 1e-6


@pytest.mark.slow
def test_95_percent_intervals_cover_93_to_97_percent_over_many_origins(simulated):
    """Coverage of 95 % intervals on held-back simulated days over 60 seeded forecast origins
    (nominal coverage of a correctly specified model; common practice, no source)."""
    frame, model = simulated
    start = 3 * 365
    hits = total = 0
    for origin in range(start, start + 400 - 14, 6):
        m = model.update(history_from_frame(frame.iloc[:origin]))
        future = frame.iloc[origin : origin + 14]
        sc = Scenario("check", future.index, future["temperature_c"].to_numpy())
        fc = m.forecast(sc, levels=(95,)).frame
        actual = future["demand"].to_numpy()
        hits += int(np.sum((actual >= fc["lower_95"]) & (actual <= fc["upper_95"])))
        total += len(actual)
    coverage = hits / total
    assert 0.93 <= coverage <= 0.97, coverage


@pytest.mark.slow
def test_demo_generator_parameters_are_recovered(demo_history, repo_root):
    """The demo generator's true parameters (demo_data/truth.json) are recovered by a fit with
    the generator's own structure: degree days at its bases, one annual harmonic, the
    year-end period on working days only (as the generator applies it)."""
    truth = json.loads((repo_root / "demo_data" / "truth.json").read_text())
    dates = demo_history.frame.index
    plain = CalendarSpec(country="US", scheme="detailed")
    from loadcore.calendar import day_types

    types = day_types(dates, plain)
    md = dates.strftime("%m-%d")
    in_window = (md >= "12-24") | (md <= "01-01")
    working = ~types.isin(["saturday", "sunday", "holiday"]).to_numpy()
    overrides = tuple(Override(d.date(), d.date(), "year_end") for d in dates[in_window & working])
    settings = FitSettings(
        search="quick",
        terms=TermSpec(
            response="degree_days",
            heating_base_c=truth["heating_base_c"],
            cooling_base_c=truth["cooling_base_c"],
            annual_harmonics=1,
        ),
        calendar=CalendarSpec(country="US", scheme="detailed", overrides=overrides),
    )
    model = fit(demo_history, settings)
    est = dict(zip(model.columns, model.beta, strict=True))
    se = dict(zip(model.columns, model.std_errors()[: len(model.columns)], strict=True))
    checks = {
        "hdd": truth["heating_per_degc"],
        "cdd": truth["cooling_per_degc"],
        "trend_years": truth["growth_per_year"],
    }
    for t, v in truth["day_type_effects"].items():
        if t != "midweek":
            checks[f"type_{t}"] = v
    for name, value in checks.items():
        assert abs(est[name] - value) < 3 * se[name] + 1e-9, (name, est[name], value, se[name])
    assert np.sqrt(model.sigma2) == pytest.approx(truth["sigma"], rel=0.1)


def test_saved_model_forecasts_identically(demo_model, heat_wave_scenario, tmp_path):
    """A model saved to JSON and loaded again forecasts exactly as the fitted one, no refit."""
    path = demo_model.save(tmp_path / "model.json")
    text = path.read_text()
    assert "NaN" not in text and json.loads(text)["kind"] == "loadcore fitted model"
    loaded = load_model(path)
    a = demo_model.forecast(heat_wave_scenario).frame
    b = loaded.forecast(heat_wave_scenario).frame
    pd.testing.assert_frame_equal(a, b, check_exact=True)
    np.testing.assert_array_equal(
        demo_model.sample_paths(heat_wave_scenario, 20, seed=4),
        loaded.sample_paths(heat_wave_scenario, 20, seed=4),
    )
    assert loaded.order == demo_model.order and loaded.aicc == demo_model.aicc
    assert loaded.fingerprint == demo_model.fingerprint
    assert loaded.diagnostics().ljung_box_stat == pytest.approx(
        demo_model.diagnostics().ljung_box_stat
    )


def test_damaged_model_file_gives_a_clear_message(demo_model, tmp_path):
    data = demo_model.to_dict()
    data["history"]["demand"][5] = 1.0
    p = tmp_path / "edited.json"
    p.write_text(json.dumps(data))
    with pytest.raises(ModelError, match="fingerprint"):
        load_model(p)
    with pytest.raises(ModelError, match="not a loadcore model"):
        load_model('{"kind": "something else"}')
    with pytest.raises(ModelError, match="does not exist"):
        load_model(tmp_path / "missing.json")


def test_heat_wave_days_above_the_range_are_flagged(demo_model, heat_wave_scenario):
    fc = demo_model.forecast(heat_wave_scenario)
    f = fc.frame
    hi = demo_model.temperature_range_c[1]
    above = f["temperature_c"] > hi
    assert above.any()
    assert (f["out_of_range"] == above).all()
    np.testing.assert_allclose(
        f.loc[above, "out_of_range_by_c"], f.loc[above, "temperature_c"] - hi
    )
    warnings = fc.warnings()
    for d in f.loc[above, "date"]:
        assert any(f"{d:%Y-%m-%d}" in w for w in warnings)
    assert "treat the scenario temperatures as known" in fc.note
    assert (f["lower_95"] < f["lower_80"]).all() and (f["upper_80"] < f["upper_95"]).all()
    assert (f["median"] < f["mean"]).all()


def test_scenario_must_start_the_day_after_the_history(demo_model):
    late = demo_model.history_end + pd.Timedelta(days=3)
    sc = Scenario("late", pd.date_range(late, periods=5, freq="D"), np.full(5, 20.0))
    with pytest.raises(ScenarioError, match="Start the scenario on"):
        demo_model.forecast(sc)
    start = demo_model.history_end + pd.Timedelta(days=1)
    long = Scenario("long", pd.date_range(start, periods=91, freq="D"), np.full(91, 20.0))
    with pytest.raises(ScenarioError, match="90 days"):
        demo_model.forecast(long)
    bad = Scenario("blank", pd.date_range(start, periods=3, freq="D"), np.array([20.0, np.nan, 21]))
    with pytest.raises(ScenarioError, match="missing or not a number"):
        demo_model.forecast(bad)
    odd = Scenario(
        "odd",
        pd.date_range(start, periods=3, freq="D"),
        np.full(3, 20.0),
        day_types=("midweek", "shutdown", ""),
    )
    with pytest.raises(ScenarioError, match="shutdown"):
        demo_model.forecast(odd)


def test_day_type_from_the_scenario_overrides_the_calendar(demo_model):
    start = demo_model.history_end + pd.Timedelta(days=1)
    path = constant_path(start, 7, 20.0)
    plain = make_scenario("plain", path, model_end=demo_model.history_end)
    sunday_all = Scenario("sundays", plain.dates, plain.temperature_c, day_types=("sunday",) * 7)
    a = demo_model.forecast(plain).frame
    b = demo_model.forecast(sunday_all).frame
    assert (b["day_type"] == "sunday").all()
    working = a["day_type"] != "sunday"
    assert (b.loc[working, "median"] < a.loc[working, "median"]).all()


def test_coefficient_table_gives_plain_meanings(demo_model):
    table = demo_model.coefficient_table()
    assert {"term", "estimate", "std_error", "meaning"} <= set(table.columns)
    holiday = table[table["term"] == "day type: public holiday"].iloc[0]
    assert "a public holiday lowers demand by" in holiday["meaning"]
    assert holiday["std_error"] > 0
    t = demo_model.lowest_demand_temperature_c()
    lo, hi = demo_model.temperature_range_c
    assert lo < t < hi
    curve = demo_model.response_curve([t - 10, t, t + 10])
    assert curve["demand"].iloc[1] < curve["demand"].iloc[0]
    assert curve["demand"].iloc[1] < curve["demand"].iloc[2]


def test_diagnostics_use_lag_14_with_model_degrees_of_freedom(demo_model):
    d = demo_model.diagnostics()
    assert d.ljung_box_lag == 14
    assert d.ljung_box_dof == 14 - demo_model.orders.n_arma
    assert d.acf_bound == pytest.approx(1.96 / np.sqrt(len(d.residuals)))
    assert len(d.acf) == 28 and np.all(np.abs(d.acf) < 1)


def test_too_short_history_is_refused():
    frame = _simulate(200, seed=1)
    with pytest.raises(ModelError, match="at least a year"):
        fit(history_from_frame(frame), SIM_SETTINGS)


def test_meanings_can_be_worded_in_fahrenheit(demo_model):
    """Per-degree effects convert with 1 °F = 5/9 °C and temperatures with F = 9/5 C + 32
    (the definition of the Fahrenheit scale; common practice, no source)."""
    c = demo_model.coefficient_table()
    f = demo_model.coefficient_table(temp_unit="F")
    np.testing.assert_array_equal(c["estimate"], f["estimate"])
    assert list(c["term"]) == list(f["term"])  # term labels carry no unit
    slope_c = c.loc[c["term"] == "temperature, linear term", "meaning"].iloc[0]
    slope_f = f.loc[f["term"] == "temperature, linear term", "meaning"].iloc[0]
    assert "at 18 °C" in slope_c and "at 64.4 °F" in slope_f and "per °F" in slope_f
    b = float(c.loc[c["term"] == "temperature, linear term", "estimate"].iloc[0])
    assert f"{100 * b / 10 / 1.8:+.2f} % per °F" in slope_f
    t = demo_model.lowest_demand_temperature_c()
    assert f"{t * 9 / 5 + 32:.1f} °F" in demo_model.describe_lowest_demand(temp_unit="F")
    with pytest.raises(Exception, match="not a temperature unit"):
        demo_model.coefficient_table(temp_unit="K")
