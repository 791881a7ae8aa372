"""Forecasts of a fitted model: range flags, the checks that need the model, day types."""

from __future__ import annotations

from types import SimpleNamespace

import numpy as np
import pandas as pd
import pytest

from loadcore.errors import ScenarioError
from loadcore.scenario import MAX_DAYS, Scenario, constant_path, make_scenario
from loadcore.weather import _day_type_values


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


def test_scenario_must_start_inside_the_window_limits(demo_model):
    """A window starts from the day after the history to 24 months after it; outside that the
    message names both limits."""
    end = demo_model.history_end
    too_far = end + pd.DateOffset(months=24) + pd.Timedelta(days=1)
    early = end - pd.Timedelta(days=2)
    for first in (too_far, early):
        sc = Scenario("off", pd.date_range(first, periods=5, freq="D"), np.full(5, 20.0))
        with pytest.raises(ScenarioError, match="Start the scenario on a day from") as info:
            demo_model.forecast(sc)
        assert f"{end + pd.Timedelta(days=1):%Y-%m-%d}" in str(info.value)
        assert f"{end + pd.DateOffset(months=24):%Y-%m-%d}" in str(info.value)
    start = demo_model.history_end + pd.Timedelta(days=1)
    # A scenario is checked once, when it is built; the model checks only what needs it.
    with pytest.raises(ScenarioError, match="more than the 92"):
        Scenario("long", pd.date_range(start, periods=93, freq="D"), np.full(93, 20.0))
    with pytest.raises(ScenarioError, match="missing or not a number"):
        Scenario("blank", pd.date_range(start, periods=3, freq="D"), np.array([20.0, np.nan, 21]))
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


def test_the_model_checks_only_what_needs_the_model(demo_model):
    """A valid scenario of the longest length forecasts; the model refuses a wrong start, an
    unknown day type, and anything that is not a Scenario (which would not have been checked)."""
    start = demo_model.history_end + pd.Timedelta(days=1)
    longest = make_scenario("longest", constant_path(start, MAX_DAYS, 15.0))
    assert len(demo_model.forecast(longest).frame) == MAX_DAYS
    with pytest.raises(ScenarioError, match="starts on"):
        demo_model.forecast(
            make_scenario("early", constant_path(start - pd.Timedelta(days=1), 3, 15.0))
        )
    with pytest.raises(ScenarioError, match="not seen in the fitted history"):
        demo_model.forecast(
            make_scenario("odd", constant_path(start, 3, 15.0), ["", "shutdown", ""])
        )
    stand_in = SimpleNamespace(name="x", dates=longest.dates, temperature_c=longest.temperature_c)
    with pytest.raises(ScenarioError, match="Expected a Scenario"):
        demo_model.forecast(stand_in)


def test_model_and_weather_fill_blank_day_types_the_same_way(demo_model):
    """The model, the weather ensembles and the scenario use one rule for blank day types."""
    start = demo_model.history_end + pd.Timedelta(days=1)
    given = ["", "holiday", None, "", "sunday", "", ""]
    scenario = make_scenario("typed", constant_path(start, 7, 12.0), given)
    calendar = demo_model.calendar_types(scenario.dates)
    expected = scenario.day_types_with(calendar)
    assert tuple(demo_model.scenario_day_types(scenario)) == expected
    assert tuple(_day_type_values(demo_model, scenario.dates, given)) == expected
    assert tuple(demo_model.forecast(scenario).frame["day_type"]) == expected
