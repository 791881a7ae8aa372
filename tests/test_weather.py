"""Tests for loadcore.weather: temperature traces, pooling and the variance split."""

from __future__ import annotations

import json
from types import SimpleNamespace

import numpy as np
import pandas as pd
import pytest

from loadcore.errors import InputError, ScenarioError
from loadcore.scenario import Scenario
from loadcore.weather import (
    ensemble_forecast,
    ensemble_table,
    pool_trace_paths,
    quantile_column,
    temperature_traces,
    variance_split,
)


def _temps_history(start="2019-01-01", end="2023-12-31"):
    """A stand-in with a ``frame``: temperature_c equals a day counter, so values locate dates."""
    index = pd.date_range(start, end, freq="D", name="date")
    frame = pd.DataFrame(
        {"demand": 1000.0, "temperature_c": np.arange(len(index), dtype=float)}, index=index
    )
    return SimpleNamespace(frame=frame)


def _value(history, date):
    return history.frame.loc[pd.Timestamp(date), "temperature_c"]


def test_traces_names_shape_and_alignment():
    history = _temps_history()
    traces = temperature_traces(history, "2024-01-10", 30, shift_days=3, widen_for_few_years=False)
    # Years 2019..2023: 2019 needs 2019-01-07, inside the history.
    assert traces.shape == (30, 5 * 7)
    assert list(traces.columns[:7]) == [f"2019{s:+d}" for s in range(-3, 4)]
    assert "2023+0" in traces.columns and "2023-3" in traces.columns
    assert traces.index[0] == pd.Timestamp("2024-01-10") and traces.index.name == "date"
    # 2021+2 starts on 2021-01-12 and runs 30 consecutive days.
    assert traces["2021+2"].iloc[0] == _value(history, "2021-01-12")
    assert traces["2021-3"].iloc[29] == _value(history, "2021-02-05")
    np.testing.assert_array_equal(np.diff(traces["2020+1"].to_numpy()), 1.0)


def test_traces_skip_years_without_the_whole_window():
    history = _temps_history(start="2019-01-05")
    traces = temperature_traces(history, "2024-01-10", 30, shift_days=3, widen_for_few_years=False)
    # 2019 needs 2019-01-07 onwards: inside; a history from 2019-01-08 drops it.
    assert traces.shape[1] == 35
    history = _temps_history(start="2019-01-08")
    traces = temperature_traces(history, "2024-01-10", 30, shift_days=3, widen_for_few_years=False)
    assert traces.shape[1] == 28 and not any(c.startswith("2019") for c in traces.columns)


def test_traces_never_use_data_on_or_after_start():
    history = _temps_history(end="2023-12-31")
    # A window starting inside the history: traces from 2023 would overlap the start.
    traces = temperature_traces(history, "2023-12-20", 20, shift_days=2, widen_for_few_years=False)
    assert not any(c.startswith("2023") for c in traces.columns)
    start_value = _value(history, "2023-12-20")
    assert (traces.to_numpy() < start_value).all()


def test_traces_cross_the_year_end():
    history = _temps_history()
    traces = temperature_traces(history, "2023-12-25", 14, shift_days=0, widen_for_few_years=False)
    # Last usable year 2022: 2022-12-25 .. 2023-01-07.
    assert "2022+0" in traces.columns
    assert traces["2022+0"].iloc[-1] == _value(history, "2023-01-07")


def test_traces_feb_29_start_uses_feb_28_in_common_years():
    history = _temps_history(end="2024-02-28")
    traces = temperature_traces(history, "2024-02-29", 10, shift_days=0, widen_for_few_years=False)
    assert traces["2023+0"].iloc[0] == _value(history, "2023-02-28")
    assert traces["2020+0"].iloc[0] == _value(history, "2020-02-29")
    # A window crossing a leap day in the trace year stays consecutive.
    traces = temperature_traces(history, "2023-02-20", 15, shift_days=1, widen_for_few_years=False)
    assert traces["2020+0"].iloc[9] == _value(history, "2020-02-29")
    np.testing.assert_array_equal(np.diff(traces["2020+0"].to_numpy()), 1.0)


def test_traces_warming_and_blend():
    history = _temps_history()
    base = temperature_traces(history, "2024-01-10", 7, shift_days=1)
    warm = temperature_traces(history, "2024-01-10", 7, shift_days=1, warming_c=2.5)
    np.testing.assert_allclose(warm.to_numpy(), base.to_numpy() + 2.5)
    path = pd.Series(np.linspace(30, 36, 7), index=base.index)
    mixed = temperature_traces(
        history, "2024-01-10", 7, shift_days=1, warming_c=2.5, blend_path=path, blend_weight=0.25
    )
    want = 0.75 * (base.to_numpy() + 2.5) + 0.25 * path.to_numpy()[:, None]
    np.testing.assert_allclose(mixed.to_numpy(), want)
    only_path = temperature_traces(
        history, "2024-01-10", 7, blend_path=path.to_numpy(), blend_weight=1.0
    )
    np.testing.assert_allclose(only_path.to_numpy(), np.repeat(path.to_numpy()[:, None], 35, 1))


def test_traces_input_errors():
    history = _temps_history(start="2023-06-01")
    with pytest.raises(ScenarioError, match="no past year") as info:
        temperature_traces(history, "2024-01-10", 30)
    assert info.value.fix and info.value.where
    history = _temps_history()
    with pytest.raises(InputError, match="blend weight"):
        temperature_traces(history, "2024-01-10", 7, blend_path=np.zeros(7), blend_weight=1.5)
    with pytest.raises(ScenarioError, match="7 days"):
        temperature_traces(history, "2024-01-10", 7, blend_path=np.zeros(5), blend_weight=0.5)
    with pytest.raises(InputError, match="without a blend path"):
        temperature_traces(history, "2024-01-10", 7, blend_weight=0.5)
    with pytest.raises(InputError, match="days"):
        temperature_traces(history, "2024-01-10", 0)
    with pytest.raises(InputError, match="not a date"):
        temperature_traces(history, "next tuesday", 5)


def test_variance_split_adds_up_to_total_variance():
    """Law of total variance: pooled variance = mean within-trace variance + variance of means.

    Common practice, no source (a textbook identity; exact for equal group sizes, ddof 0).
    """
    rng = np.random.default_rng(4)
    cube = rng.normal(size=(9, 50, 12)) * 3 + rng.normal(size=(9, 1, 12)) * 10
    split = variance_split(cube)
    pooled = cube.reshape(-1, 12).var(axis=0)
    np.testing.assert_allclose(split["within"] + split["between"], pooled, rtol=1e-12)
    np.testing.assert_allclose(split["total"], pooled, rtol=1e-12)
    assert ((split["share"] > 0.7) & (split["share"] < 1.0)).all()


def test_variance_split_without_weather_spread():
    cube = np.repeat(np.random.default_rng(2).normal(size=(1, 40, 5)), 6, axis=0)
    split = variance_split(cube)
    np.testing.assert_allclose(split["share"], 0.0, atol=1e-12)


def test_quantile_column_names():
    assert quantile_column(0.1) == "p10"
    assert quantile_column(0.5) == "p50"
    assert quantile_column(0.025) == "p2.5"
    assert quantile_column(0.975) == "p97.5"


# ---------------------------------------------------------------------------------------------
# With a fitted model


@pytest.fixture(scope="module")
def model():
    """A model fitted with fixed orders (AR 1) to the simulated history of test_evaluate."""
    from test_evaluate import simulated_history

    from loadcore.model import FitSettings, Orders, fit

    return fit(simulated_history(years=6), FitSettings(), orders=Orders(1, 0, 0, 0, 0, 0))


@pytest.fixture(scope="module")
def ensemble(model):
    return ensemble_forecast(
        model, days=21, paths_per_trace=60, seed=5, quantiles=(0.05, 0.95), threshold_mw=1700.0
    )


def test_ensemble_shape_and_columns(model, ensemble):
    daily = ensemble.daily
    assert len(daily) == 21
    assert daily["date"].iloc[0] == model.history_end + pd.Timedelta(days=1)
    for col in ("date", "day_type", "p5", "p10", "p50", "p90", "p95", "mean", "prob_above"):
        assert col in daily.columns
    # History 2018-01-01 .. 2023-12-31, window from 2024-01-01: years 2019..2023 qualify.
    assert ensemble.n_traces == 35 and ensemble.n_paths == 35 * 60
    q = daily[["p5", "p10", "p50", "p90", "p95"]].to_numpy()
    assert (np.diff(q, axis=1) >= 0).all()
    assert ensemble.quantiles == (0.05, 0.1, 0.5, 0.9, 0.95)
    assert "not an operating" in ensemble.note
    table = ensemble_table(ensemble)
    assert list(table.columns) == ["date", "p5", "p10", "p50", "p90", "p95", "mean", "prob_above"]


def test_pooled_paths_equal_per_trace_sample_paths(model):
    """Reusing one set of error paths across traces gives each trace exactly the paths that
    ``model.sample_paths`` draws for that trace with the same seed (the error process does not
    depend on temperature)."""
    start = model.history_end + pd.Timedelta(days=1)
    traces = temperature_traces(model.history, start, 10, shift_days=1)
    cube = pool_trace_paths(model, traces, paths_per_trace=25, seed=8)
    assert cube.shape == (traces.shape[1], 25, 10)
    for i in (0, 4, traces.shape[1] - 1):
        name = traces.columns[i]
        scenario = Scenario(name, traces.index, traces[name].to_numpy())
        np.testing.assert_allclose(cube[i], model.sample_paths(scenario, 25, 8), rtol=1e-12)


def test_ensemble_variance_split_adds_up(model):
    """Weather part + error part = pooled variance, day by day (law of total variance).

    Common practice, no source (a textbook identity).
    """
    start = model.history_end + pd.Timedelta(days=1)
    traces = temperature_traces(model.history, start, 14)
    cube = pool_trace_paths(model, traces, paths_per_trace=40, seed=2)
    split = variance_split(cube)
    pooled = cube.reshape(-1, 14).var(axis=0)
    np.testing.assert_allclose(split["within"] + split["between"], pooled, rtol=1e-10)
    result = ensemble_forecast(model, days=14, paths_per_trace=40, seed=2)
    np.testing.assert_allclose(result.daily["weather_share"], split["share"], rtol=1e-10)
    assert result.weather_share == pytest.approx(float(np.mean(split["share"])))
    assert 0.0 < result.weather_share < 1.0


def test_ensemble_exceedance_identities(ensemble):
    prob = ensemble.daily["prob_above"].to_numpy()
    assert ((prob >= 0) & (prob <= 1)).all()
    assert ensemble.expected_days_above == pytest.approx(prob.sum())
    assert prob.max() <= ensemble.prob_any_above <= min(1.0, prob.sum()) + 1e-12
    assert 0.0 < ensemble.prob_any_above < 1.0


def test_peak_quantiles_dominate_daily_quantiles(ensemble):
    """Each path's window maximum is at least its value on any day, so every quantile of the
    peak is at least the same quantile of any single day. Common practice, no source."""
    peak = ensemble.peak_distribution
    for name, value in peak.quantiles.items():
        assert value >= ensemble.daily[name].max() - 1e-9
    assert peak.counts.sum() == ensemble.n_paths
    assert peak.to_frame()["share"].sum() == pytest.approx(1.0)


def test_ensemble_is_reproducible_with_a_seed(model):
    a = ensemble_forecast(model, days=7, paths_per_trace=20, seed=1)
    b = ensemble_forecast(model, days=7, paths_per_trace=20, seed=1)
    c = ensemble_forecast(model, days=7, paths_per_trace=20, seed=2)
    pd.testing.assert_frame_equal(a.daily, b.daily)
    assert not np.allclose(a.daily["p50"], c.daily["p50"])


def test_winter_warming_lowers_demand(model):
    """In a winter window of a heating-dominated response, warmer traces mean lower demand.

    Common practice, no source.
    """
    base = ensemble_forecast(model, days=14, paths_per_trace=30, seed=4)
    warm = ensemble_forecast(model, days=14, paths_per_trace=30, seed=4, warming_c=3.0)
    assert (warm.daily["mean"] < base.daily["mean"]).all()
    np.testing.assert_allclose(warm.traces.to_numpy(), base.traces.to_numpy() + 3.0)


def test_ensemble_input_errors(model):
    with pytest.raises(InputError, match="threshold"):
        ensemble_forecast(model, days=7, threshold_mw=-5)
    with pytest.raises(InputError, match="between 0 and 1"):
        ensemble_forecast(model, days=7, quantiles=(1.5,))
    with pytest.raises(InputError, match="paths_per_trace"):
        ensemble_forecast(model, days=7, paths_per_trace=0)
    with pytest.raises(ScenarioError, match="day types"):
        ensemble_forecast(model, days=7, day_types=["midweek"] * 3)


def test_ensemble_with_planner_day_types(model):
    """Day types given by the planner replace the calendar's: a window of Sundays is lower."""
    base = ensemble_forecast(model, days=7, paths_per_trace=20, seed=3)
    sundays = ensemble_forecast(model, days=7, paths_per_trace=20, seed=3, day_types=["sunday"] * 7)
    assert list(sundays.daily["day_type"]) == ["sunday"] * 7
    assert sundays.daily["mean"].sum() < base.daily["mean"].sum()


def test_ensemble_cli(model, tmp_path, capsys):
    from loadcore.cli import main

    path = tmp_path / "model.json"
    model.save(path)
    out = tmp_path / "ens.csv"
    code = main(
        [
            "ensemble", str(path), "--days", "10", "--paths", "20", "--threshold", "1700",
            "--seed", "3", "--out", str(out), "--json",
        ]
    )  # fmt: skip
    assert code == 0
    figures = json.loads(capsys.readouterr().out)
    assert 0.0 < figures["weather_share"] < 1.0 and figures["n_paths"] == 35 * 20
    table = pd.read_csv(out)
    assert list(table.columns) == ["date", "p10", "p50", "p90", "mean", "prob_above"]
    assert len(table) == 10

    code = main(["ensemble", str(path), "--days", "5", "--paths", "10", "--out", str(out)])
    text = capsys.readouterr().out
    assert code == 0 and "weather" in text and "not an operating" in text


def test_ensemble_cli_bad_input_has_no_traceback(tmp_path, capsys):
    from loadcore.cli import main

    code = main(["ensemble", str(tmp_path / "missing.json"), "--out", str(tmp_path / "x.csv")])
    err = capsys.readouterr().err
    assert code == 1 and "Traceback" not in err and err.strip()


def test_traces_are_widened_for_few_years_about_their_mean():
    """With n past years the traces' spread about each day's mean grows by sqrt(1 + 1/n), the
    factor of a prediction interval for one new observation from a sample of n (Hahn and Meeker,
    Statistical Intervals, 1991, from memory); the daily mean is unchanged."""
    history = _temps_history()
    raw = temperature_traces(history, "2024-01-10", 21, shift_days=2, widen_for_few_years=False)
    wide = temperature_traces(history, "2024-01-10", 21, shift_days=2)
    n_years = len({c[:4] for c in raw.columns})
    assert n_years >= 2
    np.testing.assert_allclose(wide.mean(axis=1), raw.mean(axis=1), atol=1e-9)
    ratio = (wide.sub(wide.mean(axis=1), axis=0)).std(axis=1) / (
        raw.sub(raw.mean(axis=1), axis=0)
    ).std(axis=1)
    np.testing.assert_allclose(ratio, np.sqrt(1 + 1 / n_years), rtol=1e-9)
