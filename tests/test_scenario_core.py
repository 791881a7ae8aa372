"""The Scenario type and make_scenario: a scenario is validated once, by its constructor."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

import loadcore.model
import loadcore.scenario
from loadcore.errors import ScenarioError
from loadcore.scenario import (
    MAX_DAYS,
    Scenario,
    constant_path,
    fill_blank_day_types,
    make_scenario,
)

JULY = pd.date_range("2026-07-01", periods=5)


def test_make_scenario_builds_a_frozen_scenario():
    path = constant_path("2026-07-01", 14, 30.0)
    scen = make_scenario("Hot fortnight", path, model_end="2026-06-30")
    assert scen.horizon == 14
    assert scen.start == pd.Timestamp("2026-07-01")
    assert scen.end == pd.Timestamp("2026-07-14")
    assert scen.day_types is None
    frame = scen.to_frame()
    assert list(frame.columns) == ["date", "temperature_c", "day_type"]
    assert (frame["day_type"] == "").all()
    with pytest.raises(AttributeError):
        scen.name = "other"  # type: ignore[misc]
    with pytest.raises(ValueError):
        scen.temperature_c[0] = 0.0


def test_make_scenario_wrong_start_names_the_expected_date():
    path = constant_path("2028-07-03", 5, 30.0)
    with pytest.raises(ScenarioError) as info:
        make_scenario("late", path, model_end="2026-06-30")
    assert "2026-07-01" in str(info.value)
    assert "2028-06-30" in str(info.value)
    assert "2028-07-03" in str(info.value)


def test_make_scenario_horizon_limits():
    make_scenario("longest", constant_path("2026-07-01", MAX_DAYS, 20.0))
    with pytest.raises(ScenarioError, match="more than the 92"):
        make_scenario("too long", constant_path("2026-07-01", MAX_DAYS + 1, 20.0))
    with pytest.raises(ScenarioError, match="no days"):
        make_scenario("empty", pd.Series([], index=pd.DatetimeIndex([]), dtype=float))
    with pytest.raises(ScenarioError, match="more than the 10"):
        make_scenario("short limit", constant_path("2026-07-01", 11, 20.0), max_days=10)


def test_make_scenario_dates_must_be_consecutive():
    path = constant_path("2026-07-01", 10, 20.0)
    with pytest.raises(ScenarioError, match="Days are missing") as info:
        make_scenario("gap", path.drop(path.index[4]))
    assert "2026-07-06" in str(info.value)
    twice = pd.concat([path.iloc[:3], path.iloc[2:]])
    with pytest.raises(ScenarioError, match="appears twice"):
        make_scenario("dup", twice)
    with pytest.raises(ScenarioError, match="run forward"):
        make_scenario("backwards", path.iloc[::-1])


@pytest.mark.parametrize("bad", [np.nan, "", "  ", "warm", None, np.inf])
def test_make_scenario_refuses_non_numbers_naming_the_date(bad):
    path = constant_path("2026-07-01", 6, 20.0).astype(object)
    path.iloc[3] = bad
    with pytest.raises(ScenarioError, match="not a number") as info:
        make_scenario("bad", path)
    assert "2026-07-04" in str(info.value)


@pytest.mark.parametrize("value", [60.5, -61.0, 95.0])
def test_make_scenario_refuses_implausible_temperatures(value):
    """A daily maximum outside -60..60 °C is not plausible (common practice, no source)."""
    path = constant_path("2026-07-01", 3, 20.0)
    path.iloc[1] = value
    with pytest.raises(ScenarioError, match="plausible") as info:
        make_scenario("odd", path)
    assert "2026-07-02" in str(info.value)


def test_make_scenario_accepts_the_plausible_edges():
    path = pd.Series([-60.0, 60.0], index=pd.date_range("2026-07-01", periods=2))
    assert make_scenario("edges", path).temperature_c.tolist() == [-60.0, 60.0]


def test_make_scenario_text_numbers_and_blank_name():
    path = pd.Series(["21.5", " 22 "], index=pd.date_range("2026-07-01", periods=2), dtype=object)
    assert make_scenario("text", path).temperature_c.tolist() == [21.5, 22.0]
    with pytest.raises(ScenarioError, match="no name"):
        make_scenario("  ", path)


def test_make_scenario_day_types_blank_means_calendar_and_names_are_normalised():
    path = constant_path("2026-07-01", 4, 30.0)
    scen = make_scenario("types", path, ["", None, "Plant Shutdown", np.nan])
    assert scen.day_types == ("", "", "plant_shutdown", "")
    assert make_scenario("none", path, ["", None, " ", np.nan]).day_types is None
    with pytest.raises(ScenarioError, match="4 dates"):
        make_scenario("short", path, ["holiday"])
    with pytest.raises(ScenarioError, match="no letters") as info:
        make_scenario("junk", path, ["", "--", "", ""])
    assert "2026-07-02" in str(info.value)


def test_fill_day_types_from_calendar():
    path = constant_path("2026-07-01", 3, 30.0)
    scen = make_scenario("fill", path, ["", "holiday", ""])
    filled = scen.fill_day_types(["midweek", "midweek", "friday"])
    assert filled.day_types == ("midweek", "holiday", "friday")
    assert np.array_equal(filled.temperature_c, scen.temperature_c)
    with pytest.raises(ScenarioError):
        scen.fill_day_types(["midweek"])


def test_scenario_constructor_checks_lengths():
    dates = pd.date_range("2026-07-01", periods=3)
    with pytest.raises(ScenarioError, match="3 dates but 2 temperatures"):
        Scenario("x", dates, np.array([1.0, 2.0]))
    with pytest.raises(ScenarioError, match="day types"):
        Scenario("x", dates, np.ones(3), ("a",))


# ------------------------------------------------------------------ the one-validation rule


@pytest.mark.parametrize(
    "dates, temps, types, match",
    [
        (JULY.delete(2), np.full(4, 20.0), None, "Days are missing"),
        (JULY[::-1], np.full(5, 20.0), None, "run forward"),
        (JULY.insert(1, JULY[0]), np.full(6, 20.0), None, "appears twice"),
        (pd.date_range("2026-07-01", periods=MAX_DAYS + 1), np.full(MAX_DAYS + 1, 20.0), None,
         f"more than the {MAX_DAYS}"),
        (JULY[:0], np.zeros(0), None, "no days"),
        (["2026-07-01", None], [20.0, 21.0], None, "date is missing"),
        (JULY, [20.0, 21.0, np.inf, 20.0, 20.0], None, "2026-07-03"),
        (JULY, [20.0, "warm", 20.0, 20.0, 20.0], None, "not a number"),
        (JULY, [20.0, 20.0, 20.0, 61.0, 20.0], None, "plausible"),
        (JULY, np.full(5, 20.0), ["", "--", "", "", ""], "no letters"),
        (JULY, np.full(5, 20.0), "holiday", "one per date"),
    ],
)  # fmt: skip
def test_the_constructor_checks_everything_that_needs_no_model(dates, temps, types, match):
    """Scenario(...) itself refuses what make_scenario refuses: no unchecked scenario exists."""
    with pytest.raises(ScenarioError, match=match):
        Scenario("check", dates, temps, types)


def test_the_constructor_normalises_what_it_accepts():
    scen = Scenario(
        "  Warm week ",
        pd.DatetimeIndex(["2026-07-01 13:00", "2026-07-02 09:30"], tz="UTC"),
        ["21.5", 22],
        [None, "Plant Shutdown"],
    )
    assert scen.name == "Warm week"
    assert scen.dates.equals(pd.DatetimeIndex(["2026-07-01", "2026-07-02"], name="date"))
    assert scen.temperature_c.tolist() == [21.5, 22.0]
    assert not scen.temperature_c.flags.writeable
    assert scen.day_types == ("", "plant_shutdown")
    assert (
        Scenario("blank types", JULY, np.full(5, 20.0), [" ", None, np.nan, "", ""]).day_types
        is None
    )
    with pytest.raises(ScenarioError, match="no name"):
        Scenario(" ", JULY, np.full(5, 20.0))


def test_make_scenario_and_the_constructor_agree():
    path = constant_path("2026-07-01", 5, 24.0)
    types = ["", "Holiday", None, "", ""]
    assert make_scenario("same", path, types) == Scenario(
        "same", path.index, path.to_numpy(), types
    )


def test_one_length_limit():
    """MAX_DAYS of the scenario package is the only horizon limit; the model has none of its own."""
    assert loadcore.scenario.MAX_DAYS == 92
    assert not any("MAX_HORIZON" in name for name in dir(loadcore.model))
    with pytest.raises(ScenarioError, match="more than the 92"):
        make_scenario("long", constant_path("2026-07-01", 93, 20.0), max_days=200)


def test_blank_day_types_mean_the_calendar_in_one_place():
    calendar = ["midweek", "friday", "saturday"]
    assert fill_blank_day_types(None, calendar) == tuple(calendar)
    assert fill_blank_day_types(["", None, "holiday"], calendar) == ("midweek", "friday", "holiday")
    assert fill_blank_day_types([np.nan, " ", ""], calendar) == tuple(calendar)
    with pytest.raises(ScenarioError, match="3 calendar day types"):
        fill_blank_day_types(["holiday"], calendar)
    scen = Scenario("s", JULY[:3], np.full(3, 20.0), ["", "holiday", ""])
    assert scen.day_types_with(calendar) == ("midweek", "holiday", "saturday")
    assert Scenario("s", JULY[:3], np.full(3, 20.0)).day_types_with(calendar) == tuple(calendar)


def test_check_start_is_the_rule_of_the_window_position():
    scen = Scenario("s", JULY, np.full(5, 20.0))
    scen.check_start("2026-06-30")
    scen.check_start("2024-07-01")  # exactly 24 months before: the latest start
    with pytest.raises(ScenarioError, match="from 2024-07-01 to 2026-06-30") as info:
        scen.check_start(pd.Timestamp("2024-06-30"))
    assert "more than 24 months" in str(info.value)
    with pytest.raises(ScenarioError, match="from 2026-07-03 to 2028-07-02"):
        scen.check_start(pd.Timestamp("2026-07-02"))
