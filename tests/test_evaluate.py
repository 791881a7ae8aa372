"""Tests for loadcore.evaluate: rolling-origin backtests."""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest

from loadcore.errors import InputError
from loadcore.evaluate import backtest, origin_dates, seasonal_naive
from loadcore.history import history_from_frame


def simulated_history(years: int = 6, seed: int = 42):
    """Daily history simulated from a known model, built here and nowhere else.

    Temperature (daily maximum, °C): a seasonal mean 17 - 11 cos(2 pi (doy - 20) / 365.25) plus
    AR 1 anomalies (coefficient 0.7, innovation sd 2.5 °C). Log demand: log 1500 MW, a quadratic
    response 0.0009 (T - 18)^2, weekday effects (Saturday -0.12, Sunday -0.16, Monday and
    Friday -0.02) and AR 1 errors (coefficient 0.6, innovation sd 0.02).
    """
    rng = np.random.default_rng(seed)
    index = pd.date_range("2018-01-01", periods=int(years * 365.25), freq="D", name="date")
    n = len(index)
    doy = index.day_of_year.to_numpy()
    mean_c = 17.0 - 11.0 * np.cos(2 * np.pi * (doy - 20) / 365.25)
    anomaly = np.zeros(n)
    eps = rng.normal(0.0, 2.5, n)
    for t in range(1, n):
        anomaly[t] = 0.7 * anomaly[t - 1] + eps[t]
    temp = mean_c + anomaly
    err = np.zeros(n)
    e = rng.normal(0.0, 0.02, n)
    for t in range(1, n):
        err[t] = 0.6 * err[t - 1] + e[t]
    weekday = index.day_of_week.to_numpy()
    week = np.select(
        [weekday == 5, weekday == 6, weekday == 0, weekday == 4], [-0.12, -0.16, -0.02, -0.02], 0.0
    )
    log_demand = np.log(1500.0) + 0.0009 * (temp - 18.0) ** 2 + week + err
    frame = pd.DataFrame(
        {"demand": np.round(np.exp(log_demand), 1), "temperature_c": np.round(temp, 1)},
        index=index,
    )
    return history_from_frame(frame)


def test_origin_dates_spacing():
    dates = origin_dates("2024-12-31", 14, 5, 100)
    assert len(dates) == 5
    assert dates[-1] == pd.Timestamp("2024-12-17")
    assert dates[0] == pd.Timestamp("2024-12-17") - pd.Timedelta(days=100)
    assert (np.diff(dates.asi8) > 0).all()
    assert len(origin_dates("2024-12-31", 14, 1, 100)) == 1


def test_seasonal_naive_same_weekday_last_observed_week():
    index = pd.date_range("2024-01-01", periods=40, freq="D")
    demand = pd.Series(np.arange(40, dtype=float), index=index)
    origin = index[20]
    target = pd.date_range(origin + pd.Timedelta(days=1), periods=14, freq="D")
    naive = seasonal_naive(demand, origin, target)
    # h = 1..7 -> 7 days earlier; h = 8..14 -> 14 days earlier; never after the origin.
    np.testing.assert_array_equal(naive[:7], np.arange(21, 28) - 7)
    np.testing.assert_array_equal(naive[7:], np.arange(28, 35) - 14)
    assert (naive <= 20).all()


# Tight search bounds keep the one order search of each backtest short; the simulated errors are
# AR 1, which the bounds include.
SMALL = dict(ar_up_to=1, ma_up_to=0, ar_ma_up_to=1, weekly_ar_up_to=0, weekly_ma_up_to=0)


def _settings():
    from loadcore.model import FitSettings

    return FitSettings(**SMALL)


@pytest.fixture(scope="module")
def history():
    return simulated_history(years=5, seed=7)


@pytest.fixture(scope="module")
def ex_post(history):
    return backtest(history, _settings(), horizon=7, origins=4, span_days=120, seed=1)


@pytest.fixture(scope="module")
def ex_ante(history):
    return backtest(
        history,
        _settings(),
        horizon=7,
        origins=4,
        span_days=120,
        mode="ex-ante",
        shift_days=2,
        paths_per_trace=40,
        seed=1,
    )


def _check_structure(result, history):
    frame = result.forecasts
    assert len(frame) == 4 * 7
    assert list(result.by_horizon["horizon"]) == list(range(1, 8))
    for col in (
        "origin", "date", "horizon", "temperature_c", "actual", "mean", "median",
        "lower_80", "upper_80", "lower_95", "upper_95", "naive", "scale", "crps", "pit",
    ):  # fmt: skip
        assert col in frame.columns
    # The last origin leaves exactly the horizon before the end of the history.
    assert frame["origin"].max() == history.end - pd.Timedelta(days=7)
    assert (frame["date"] == frame["origin"] + pd.to_timedelta(frame["horizon"], unit="D")).all()
    demand = history.frame["demand"]
    np.testing.assert_array_equal(frame["actual"], demand.reindex(frame["date"]).to_numpy())
    np.testing.assert_array_equal(
        frame["naive"], demand.reindex(frame["date"] - pd.Timedelta(days=7)).to_numpy()
    )
    bands = frame[["lower_95", "lower_80", "median", "upper_80", "upper_95"]].to_numpy()
    assert (np.diff(bands, axis=1) >= 0).all()
    assert ((result.pit >= 0) & (result.pit <= 1)).all() and len(result.pit) == 28
    for col in ("coverage_80", "coverage_95"):
        assert result.by_horizon[col].between(0, 1).all()
    assert (result.by_horizon["crps"] > 0).all() and (result.by_horizon["pinball"] > 0).all()
    assert result.summary["n_origins"] == 4 and "not an operating" in result.summary["note"]
    assert "AR 1" in result.summary["orders"]
    text = result.to_text()
    assert "days ahead" in text and "all" in text and "not an operating" in text
    for band in result.by_band["band"]:
        assert f"days {band}" in text  # coverage per horizon band is printed


def test_ex_post_structure(ex_post, history):
    _check_structure(ex_post, history)
    # Ex post uses the actual temperatures.
    temps = history.frame["temperature_c"].reindex(ex_post.forecasts["date"]).to_numpy()
    np.testing.assert_array_equal(ex_post.forecasts["temperature_c"], temps)


def test_ex_ante_structure(ex_ante, history):
    _check_structure(ex_ante, history)
    assert ex_ante.summary["mode"] == "ex_ante"


def test_ex_post_beats_ex_ante_and_naive(ex_post, ex_ante):
    """Knowing the weather helps, and both beat repeating last week's demand on these data.

    Common practice, no source (weather knowledge lowers the error of a weather-driven load).
    """
    assert ex_post.summary["crps"] < ex_ante.summary["crps"]
    assert ex_post.summary["mase"] < ex_post.summary["naive_mase"]


def test_scores_by_horizon_match_the_long_table(ex_post):
    """The table by horizon is recomputed from the long table with loadcore.scores."""
    from loadcore.scores import interval_coverage, mape

    frame = ex_post.forecasts
    one = frame[frame["horizon"] == 3]
    row = ex_post.by_horizon.set_index("horizon").loc[3]
    assert row["mape"] == pytest.approx(mape(one["actual"], one["mean"]))
    assert row["coverage_80"] == pytest.approx(
        interval_coverage(one["actual"], one["lower_80"], one["upper_80"])
    )
    assert row["mase"] == pytest.approx(np.mean(np.abs(one["actual"] - one["mean"]) / one["scale"]))


def test_scores_by_band_pool_the_days_of_each_band(ex_post):
    """Coverage and accuracy per band of days ahead (1-4, 5-7 for a 7-day horizon) are the
    measures over the pooled rows of the long table (loadcore.scores; common practice, no
    source)."""
    from loadcore.scores import interval_coverage, mape

    frame = ex_post.forecasts
    table = ex_post.by_band.set_index("band")
    assert list(table.index) == ["1-4", "5-7"]
    for band, (a, b) in {"1-4": (1, 4), "5-7": (5, 7)}.items():
        rows = frame[frame["horizon"].between(a, b)]
        assert table.loc[band, "n"] == rows["actual"].notna().sum()
        assert table.loc[band, "coverage_95"] == pytest.approx(
            interval_coverage(rows["actual"], rows["lower_95"], rows["upper_95"])
        )
        assert table.loc[band, "mape"] == pytest.approx(mape(rows["actual"], rows["mean"]))


def test_ex_ante_uses_nothing_after_the_origin(history):
    """Changing temperatures and demand after the only origin leaves the forecast unchanged."""
    first = backtest(history, _settings(), horizon=7, origins=1, mode="ex_ante", seed=2)
    origin = first.forecasts["origin"].iloc[0]
    frame = history.frame.copy()
    later = frame.index > origin
    frame.loc[later, "temperature_c"] += 15.0
    frame.loc[later, "demand"] *= 1.3
    changed = backtest(
        history_from_frame(frame), _settings(), horizon=7, origins=1, mode="ex_ante", seed=2
    )
    cols = ["mean", "median", "lower_80", "upper_80", "naive"]
    pd.testing.assert_frame_equal(first.forecasts[cols], changed.forecasts[cols])
    assert not np.allclose(first.forecasts["actual"], changed.forecasts["actual"])


def test_refit_params_keeps_orders(history, ex_post):
    result = backtest(
        history, _settings(), horizon=7, origins=2, span_days=120, refit="params", seed=1
    )
    assert result.summary["orders"] == ex_post.summary["orders"]
    assert result.summary["refit"] == "params"
    assert np.isfinite(result.summary["crps"])


def test_backtest_input_errors(history):
    short = history_from_frame(history.frame.iloc[:300])
    with pytest.raises(InputError, match="at least"):
        backtest(short, _settings())
    with pytest.raises(InputError, match="mode"):
        backtest(history, _settings(), mode="sideways")
    with pytest.raises(InputError, match="refit"):
        backtest(history, _settings(), refit="always")
    with pytest.raises(InputError, match="span"):
        backtest(history, _settings(), span_days=5000)
    with pytest.raises(InputError, match="level"):
        backtest(history, _settings(), levels=(150,))


def test_backtest_cli(history, tmp_path, capsys, monkeypatch):
    import functools

    import loadcore.model
    from loadcore.cli import main

    # The CLI builds FitSettings(search=...); narrow its bounds to keep the test short.
    monkeypatch.setattr(
        loadcore.model, "FitSettings", functools.partial(loadcore.model.FitSettings, **SMALL)
    )
    path = tmp_path / "history.csv"
    out = history.frame.reset_index()[["date", "demand", "temperature_c"]]
    out.rename(columns={"temperature_c": "temperature"}).to_csv(path, index=False)
    code = main(["backtest", str(path), "--horizon", "5", "--origins", "2", "--json"])
    assert code == 0
    payload = json.loads(capsys.readouterr().out)
    assert len(payload["by_horizon"]) == 5 and payload["summary"]["n_origins"] == 2
    assert "coverage_80" in payload["by_horizon"][0]
    code = main(["backtest", str(path), "--horizon", "3", "--origins", "2", "--mode", "ex-ante"])
    text = capsys.readouterr().out
    assert code == 0 and "ex ante" in text and "days ahead" in text


def test_backtest_cli_bad_file(tmp_path, capsys):
    from loadcore.cli import main

    code = main(["backtest", str(tmp_path / "nope.csv")])
    err = capsys.readouterr().err
    assert code == 1 and "Traceback" not in err and err.strip()


@pytest.mark.slow
def test_ex_ante_80_bands_cover_about_80_percent_on_simulated_data():
    """Ex-ante 80 % bands cover 75-85 % of days on data simulated from a known model.

    Calibration check: a correct predictive distribution covers its nominal share (Gneiting,
    Balabdaoui and Raftery, 2007, JRSS B 69(2), from memory). The 75-85 % tolerance is ours: 560
    scored days in 40 windows. Twelve simulated years so that every origin has eight or more
    past years of weather to draw traces from.
    """
    history = simulated_history(years=12)
    result = backtest(
        history,
        _settings(),
        horizon=14,
        origins=40,
        mode="ex_ante",
        span_days=1095,
        shift_days=2,
        paths_per_trace=100,
        seed=1,
    )
    assert 0.75 <= result.summary["coverage_80"] <= 0.85


@pytest.mark.slow
def test_ex_ante_80_bands_on_held_back_demo_years(demo_history):
    """On the Calder Basin demo history, ex-ante 80 % bands on the last two (held-back) years
    cover 75-85 % of days. The orders are chosen on the earlier years only.

    Calibration check as above (Gneiting, Balabdaoui and Raftery, 2007, from memory); the demo
    data's errors are AR 1 with a weekly AR 1 (demo_data/truth.json), inside these bounds. The
    target is the team's brief. Before the traces were widened for the few past years
    (weather.temperature_traces, sqrt(1 + 1/n)) this measured 73 %; with it, 77 %.
    """
    from loadcore.model import FitSettings

    settings = FitSettings(
        ar_up_to=2, ma_up_to=1, ar_ma_up_to=3, weekly_ar_up_to=1, weekly_ma_up_to=1
    )
    result = backtest(
        demo_history, settings, horizon=14, origins=40, mode="ex_ante", span_days=700, seed=3
    )
    assert 0.75 <= result.summary["coverage_80"] <= 0.85
