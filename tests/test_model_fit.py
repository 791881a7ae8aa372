"""fit(): recovery of known parameters, the order search, interval coverage, refusals."""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest

from loadcore.calendar import CalendarSpec, Override
from loadcore.errors import ModelError
from loadcore.history import history_from_frame
from loadcore.model import FitSettings, Orders, TermSpec, fit
from loadcore.scenario import Scenario

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
    ar = model.params[names.index("error_ar_1")]
    sar = model.params[names.index("error_weekly_ar_1")]
    se_all = model.std_errors()
    assert abs(ar - TRUE["ar"]) < 3 * se_all[names.index("error_ar_1")]
    assert abs(sar - TRUE["weekly_ar"]) < 3 * se_all[names.index("error_weekly_ar_1")]
    assert np.sqrt(model.shock_variance) == pytest.approx(TRUE["sigma"], rel=0.08)


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
    assert np.sqrt(model.shock_variance) == pytest.approx(truth["sigma"], rel=0.1)


def test_too_short_history_is_refused():
    frame = _simulate(200, seed=1)
    with pytest.raises(ModelError, match="at least a year"):
        fit(history_from_frame(frame), SIM_SETTINGS)
