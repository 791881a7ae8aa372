"""Scenario windows anywhere in the 24 months after the history (issue 10, part 1)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from loadcore.errors import ScenarioError
from loadcore.export import forecast_table, meeting_brief_html, summarise_model, to_csv_bytes
from loadcore.history import history_from_frame
from loadcore.library import ScenarioLibrary, entry_from_forecast
from loadcore.model import forecast as propagation
from loadcore.scenario import (
    MAX_DAYS,
    MAX_LEAD_MONTHS,
    Alignment,
    Scenario,
    cold_snap,
    constant_path,
    copy_period,
    copy_same_days,
    heat_wave,
    make_scenario,
    same_days_source,
    seasonal_normal_path,
    shift_path,
    window_limits,
    window_starts,
)
from loadcore.weather import ensemble_forecast


def _history(start: str, end: str):
    """A daily history with a smooth annual temperature cycle peaking in mid-July (invented)."""
    dates = pd.date_range(start, end, freq="D", name="date")
    doy = dates.day_of_year.to_numpy()
    temps = 19.0 + 15.0 * np.cos(2 * np.pi * (doy - 196) / 365.25)
    frame = pd.DataFrame({"demand": 1500.0, "temperature": temps}, index=dates)
    return history_from_frame(frame.rename(columns={"temperature": "temperature_c"}))


def test_window_limits_have_one_owner():
    assert MAX_DAYS == 92 and MAX_LEAD_MONTHS == 24
    first, last = window_limits("2026-11-29")
    assert first == pd.Timestamp("2026-11-30") and last == pd.Timestamp("2028-11-29")
    # A month without the day: 31 August plus 24 months is the last day of August.
    assert window_limits("2024-02-29")[1] == pd.Timestamp("2026-02-28")


def test_window_starts_for_a_history_ending_in_november():
    choices = window_starts(_history("2022-01-01", "2026-11-29"))
    assert [c.kind for c in choices] == ["next", "hottest_month", "coldest_month", "year_end"]
    by_kind = {c.kind: c for c in choices}
    assert by_kind["next"].start == pd.Timestamp("2026-11-30")
    assert by_kind["hottest_month"].start == pd.Timestamp("2027-07-01")
    assert by_kind["hottest_month"].days == 31
    assert "July 2027" in by_kind["hottest_month"].label
    assert by_kind["coldest_month"].start == pd.Timestamp("2027-01-01")
    assert by_kind["year_end"].start == pd.Timestamp("2026-12-20")
    assert by_kind["year_end"].end == pd.Timestamp("2027-01-06")
    first, last = window_limits("2026-11-29")
    for c in choices:
        assert first <= c.start <= last and 1 <= c.days <= MAX_DAYS and c.label


def test_window_starts_take_the_coming_month_not_the_current_one():
    """A history ending on 15 July: the coming July is next year's (this July is under way)."""
    by_kind = {c.kind: c for c in window_starts(_history("2023-01-01", "2026-07-15"))}
    assert by_kind["next"].start == pd.Timestamp("2026-07-16")
    assert by_kind["hottest_month"].start == pd.Timestamp("2027-07-01")
    assert by_kind["coldest_month"].start == pd.Timestamp("2027-01-01")
    assert by_kind["year_end"].start == pd.Timestamp("2026-12-20")


def test_a_short_history_offers_only_the_months_it_has():
    """Months with fewer than 14 days of temperatures are not candidates."""
    by_kind = {c.kind: c for c in window_starts(_history("2026-05-10", "2026-08-05"))}
    # June and July are complete; May has 22 days, August only 5 (not a candidate).
    assert by_kind["hottest_month"].start == pd.Timestamp("2027-07-01")
    assert by_kind["coldest_month"].start == pd.Timestamp("2027-05-01")


def test_the_gap_propagation_continues_the_forecast_from_the_history(demo_model):
    """Moments, coefficient weights and error paths of a window after a gap equal the tail of
    the same quantities propagated from the history's end (the Kalman prediction equations;
    Durbin and Koopman, 2012, section 4.3)."""
    state = demo_model.end_state
    mean_all, var_all = propagation.noise_moments(state, 230)
    mean_far, var_far = propagation.noise_moments(state, 30, skip=200)
    np.testing.assert_allclose(mean_far, mean_all[200:], rtol=1e-10, atol=1e-14)
    np.testing.assert_allclose(var_far, var_all[200:], rtol=1e-10)
    X = np.ones((230, state.regression_weights.shape[1]))
    np.testing.assert_allclose(
        propagation.effective_regressors(state, X[:30], skip=200),
        propagation.effective_regressors(state, X)[200:],
        rtol=1e-10,
        atol=1e-12,
    )
    paths_all = propagation.simulate_noise(state, 60, 50, seed=3)
    paths_far = propagation.simulate_noise(state, 20, 50, seed=3, skip=40)
    np.testing.assert_allclose(paths_far, paths_all[:, 40:])


def test_a_july_window_from_a_november_history(demo_model):
    """Next July from a history ending in November: day types from July's own calendar (4 July
    2027 is a Sunday, so the federal holiday is also observed on Monday 5 July; common
    practice, no source), wider intervals than a window right after the history, no temperatures needed in
    between."""
    end = demo_model.history_end
    july = pd.Timestamp(year=end.year + 1, month=7, day=1)
    path = seasonal_normal_path(demo_model.history, july, 31)
    far = demo_model.forecast(make_scenario("July normal", path, model_end=end))
    assert far.gap_days == (july - end).days - 1
    frame = far.frame.set_index("date")
    if july.year == 2027:
        assert frame.loc["2027-07-05", "day_type"] == "holiday"
        assert frame.loc["2027-07-02", "day_type"] == "friday"
    near_path = constant_path(end + pd.Timedelta(days=1), 31, float(path.mean()))
    near = demo_model.forecast(make_scenario("near", near_path)).frame
    log_width = lambda f: np.log(f["upper_80"] / f["lower_80"]).mean()  # noqa: E731
    assert log_width(far.frame) > log_width(near)
    # Paths drawn through the gap agree with the analytic band.
    paths = demo_model.sample_paths(make_scenario("July normal", path), 4000, seed=5)
    inside = (paths >= far.frame["lower_80"].to_numpy()) & (
        paths <= far.frame["upper_80"].to_numpy()
    )
    assert 0.77 < inside.mean() < 0.83


def test_the_growth_note_says_how_many_months(demo_model):
    end = demo_model.history_end
    assert "trend_years" in demo_model.columns
    within = constant_path(end + pd.DateOffset(months=11), 14, 20.0)
    assert not any(
        "growth term" in w for w in demo_model.forecast(make_scenario("a", within)).warnings()
    )
    beyond = constant_path(end + pd.DateOffset(months=20), 14, 20.0)
    fc = demo_model.forecast(make_scenario("b", beyond))
    assert 20 < fc.growth_months < 21
    assert any("extrapolated 20 months" in w for w in fc.warnings())


def test_the_latest_window_forecasts_and_one_day_more_is_refused(demo_model):
    first, last = window_limits(demo_model.history_end)
    fc = demo_model.forecast(make_scenario("last", constant_path(last, MAX_DAYS, 18.0)))
    assert len(fc.frame) == MAX_DAYS and np.isfinite(fc.frame["upper_95"]).all()
    late = Scenario("late", pd.date_range(last + pd.Timedelta(days=1), periods=3), np.full(3, 18.0))
    with pytest.raises(ScenarioError, match="more than 24 months"):
        demo_model.forecast(late)


def test_every_consumer_takes_a_far_window(demo_model, tmp_path):
    """Flags, the forecast table and CSV, the brief, the library and weather ensembles."""
    end = demo_model.history_end
    july = pd.Timestamp(year=end.year + 1, month=7, day=10)
    hot = constant_path(july, 10, demo_model.temperature_range_c[1] + 2.0)
    normal = seasonal_normal_path(demo_model.history, july, 10)
    forecasts = [
        demo_model.forecast(make_scenario("Hot July", hot)),
        demo_model.forecast(make_scenario("Normal July", normal)),
    ]
    assert forecasts[0].frame["out_of_range"].all()
    table = forecast_table(forecasts, temp_unit="F")
    assert table["date"].min() == july and len(table) == 20
    assert b"temperature_f" in to_csv_bytes(table)
    html = meeting_brief_html(
        forecasts,
        history_tail=demo_model.history.frame.tail(56),
        model_summary=summarise_model(demo_model),
        base_name="Normal July",
        title="July",
        period_text="July",
    )
    assert "Hot July" in html
    library = ScenarioLibrary(tmp_path / "lib.sqlite")
    library.save(
        entry_from_forecast(
            forecasts[0], scenario=make_scenario("Hot July", hot), model=demo_model, name="Hot July"
        )
    )
    saved = library.get("Hot July")
    assert saved.scenario().start == july
    assert saved.to_forecast().frame["date"].iloc[0] == july
    result = ensemble_forecast(demo_model, start=july, days=10, paths_per_trace=20, seed=1)
    assert result.daily["date"].iloc[0] == july and len(result.daily) == 10
    with pytest.raises(ScenarioError, match="more than 24 months"):
        ensemble_forecast(demo_model, start=end + pd.DateOffset(months=25), days=10)


def test_copy_the_same_days_of_last_year_by_date_or_by_weekday():
    """A window from 1 July 2027 on a history ending 29 November 2026: by date it copies 1 July
    2026 on; by weekday the copy moves to the nearest day of the same weekday (1 July 2027 is a
    Thursday, 2 July 2026 too)."""
    history = _history("2022-01-01", "2026-11-29")
    temps = history.frame["temperature_c"]
    by_date = copy_same_days(history, "2027-07-01", 10, Alignment.BY_DATE)
    assert same_days_source(history, "2027-07-01", 10, Alignment.BY_DATE) == pd.Timestamp(
        "2026-07-01"
    )
    np.testing.assert_array_equal(by_date.to_numpy(), temps["2026-07-01":"2026-07-10"].to_numpy())
    source = same_days_source(history, "2027-07-01", 10, Alignment.BY_WEEKDAY)
    assert source == pd.Timestamp("2026-07-02")
    assert source.day_of_week == pd.Timestamp("2027-07-01").day_of_week
    # Two years on, last year's days are not in the history yet: the latest year that has them.
    assert same_days_source(history, "2028-11-20", 10, Alignment.BY_DATE) == pd.Timestamp(
        "2026-11-20"
    )
    assert same_days_source(history, "2028-11-25", 10, Alignment.BY_DATE) == pd.Timestamp(
        "2025-11-25"
    )
    with pytest.raises(ScenarioError, match="No earlier year of the history holds all"):
        copy_same_days(_history("2026-01-01", "2026-11-29"), "2026-12-10", 10)
    with pytest.raises(ScenarioError, match="Alignment.BY_DATE or Alignment.BY_WEEKDAY"):
        copy_same_days(history, "2027-07-01", 10, "weekday")


def test_the_builders_work_for_a_far_window(demo_model):
    """Seasonal normal, heat wave, cold snap, copy and shift on a window 20 months out."""
    start = demo_model.history_end + pd.DateOffset(months=20)
    normal = seasonal_normal_path(demo_model.history, start, 30)
    hot = heat_wave(normal, 41.0, length_days=8, ramp_days=1, start_day=5)
    cold = cold_snap(normal, -5.0, length_days=4, ramp_days=1, start_day=20)
    copied = copy_period(demo_model.history, "2025-07-01", start, 30)
    warmer = shift_path(copied, 2.0)
    for path in (normal, hot, cold, copied, warmer):
        fc = demo_model.forecast(make_scenario("far", path, model_end=demo_model.history_end))
        assert fc.frame["date"].iloc[0] == start and len(fc.frame) == 30
    assert (hot.iloc[6:12] == 41.0).all()


def test_a_far_window_matches_the_reference_filter_through_the_gap():
    """The variance and median of a window 150 days after the history equal days 151-164 of
    statsmodels' SARIMAX forecast with the regression coefficients in the state
    (``mle_regression=False``; the reference of tests/test_model_intervals.py: Harvey, 1989,
    section 3.4; Durbin and Koopman, 2012, section 6.2) run through the gap, at the same error
    parameters (1e-4 relative on the standard deviation, 5e-5 on the log median)."""
    import warnings

    from scipy import stats
    from statsmodels.tsa.statespace.sarimax import SARIMAX

    from loadcore.model import FitSettings, Orders, fit
    from loadcore.model.simulate import ErrorTruth, simulated_history

    truth = ErrorTruth(Orders(1, 0, 0, 1, 0, 0), (0.8, 0.2), sigma=0.015)
    sim = simulated_history(truth, n_days=800, missing_fraction=0.03, seed=3)
    history = sim.to_history()
    model = fit(history, FitSettings(), orders=truth.orders)
    gap, days = 150, 14
    all_dates = pd.date_range(model.history_end + pd.Timedelta(days=1), periods=gap + days)
    temps = 15.0 + 8.0 * np.sin(np.arange(gap + days) / 20.0)

    def rows(dates, t):
        return model.regressors(dates, t, model.calendar_types(dates).to_numpy(dtype=object))

    frame = history.frame
    X = rows(frame.index, frame["temperature_c"].to_numpy(float))
    Xf = rows(all_dates, temps)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        ref = (
            SARIMAX(
                np.log(frame["demand"].to_numpy(float)),
                exog=X,
                order=model.orders.order,
                seasonal_order=model.orders.seasonal_order,
                mle_regression=False,
            )
            .filter(model.params[len(model.columns) :])
            .get_forecast(gap + days, exog=Xf)
        )
    scenario = Scenario("far", all_dates[gap:], temps[gap:])
    fc = model.forecast(scenario, levels=(80,)).frame
    sd = (np.log(fc["upper_80"].to_numpy()) - np.log(fc["median"].to_numpy())) / stats.norm.ppf(0.9)
    np.testing.assert_allclose(sd, np.sqrt(ref.var_pred_mean[gap:]), rtol=1e-4)
    np.testing.assert_allclose(np.log(fc["median"]), ref.predicted_mean[gap:], rtol=0, atol=5e-5)


def test_a_saved_far_forecast_keeps_its_growth_note(demo_model, tmp_path):
    """The library gives the growth note again when a saved far forecast is read back (its
    other warnings are recomputed in the chosen unit)."""
    start = demo_model.history_end + pd.DateOffset(months=22)
    scenario = make_scenario("far", constant_path(start, 14, 20.0))
    forecast = demo_model.forecast(scenario)
    library = ScenarioLibrary(tmp_path / "lib.sqlite")
    library.save(entry_from_forecast(forecast, scenario=scenario, model=demo_model, name="far"))
    stored = library.get("far").to_forecast()
    assert any("extrapolated 22 months" in w for w in stored.warnings("F"))
    assert stored.warnings("F") == forecast.warnings("F")
