"""Tests for loadcore.scenario: path builders, validation, definition files and scenario CSVs."""

from __future__ import annotations

import io
import json
from types import SimpleNamespace

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from loadcore.errors import InputError, ScenarioError
from loadcore.scenario import (
    MAX_DAYS,
    Scenario,
    cold_snap,
    constant_path,
    copy_period,
    heat_wave,
    make_scenario,
    read_scenario_csv,
    seasonal_normal_path,
    shift_path,
    write_scenario_csv,
)


def _history(temps: np.ndarray, start: str = "2020-01-01") -> SimpleNamespace:
    """Something shaped like a History: a ``frame`` with ``temperature_c`` on a daily index."""
    index = pd.date_range(start, periods=len(temps), freq="D", name="date")
    frame = pd.DataFrame({"demand": 1000.0, "temperature_c": np.asarray(temps, float)}, index=index)
    return SimpleNamespace(frame=frame)


# ------------------------------------------------------------------------------------- path builders


def test_constant_path_shape():
    path = constant_path("2026-07-01", 10, 27.5)
    assert isinstance(path.index, pd.DatetimeIndex)
    assert path.index.name == "date"
    assert path.name == "temperature_c"
    assert path.index[0] == pd.Timestamp("2026-07-01")
    assert path.index[-1] == pd.Timestamp("2026-07-10")
    assert (path.index[1:] - path.index[:-1] == pd.Timedelta(days=1)).all()
    assert (path == 27.5).all()


@pytest.mark.parametrize("days", [0, -3, 2.5, "ten"])
def test_constant_path_rejects_bad_days(days):
    with pytest.raises(ScenarioError):
        constant_path("2026-07-01", days, 20.0)


def test_constant_path_rejects_bad_start_and_temperature():
    with pytest.raises(ScenarioError, match="not a date"):
        constant_path("not a day", 5, 20.0)
    with pytest.raises(ScenarioError, match="must be a number"):
        constant_path("2026-07-01", 5, float("nan"))


def test_seasonal_normal_of_constant_history_is_constant():
    hist = _history(np.full(3 * 365 + 1, 12.0))
    path = seasonal_normal_path(hist, "2026-01-01", 60)
    np.testing.assert_allclose(path.to_numpy(), 12.0)


def test_seasonal_normal_averages_years_and_smooths_a_cosine():
    """A yearly cosine averaged over a centred 15-day window is the cosine times
    (1/15) * sum_k cos(2 pi k / 365), k = -7..7 (a standard trigonometric identity, common
    practice, no source). Two years offset by +/-3 °C average to the bare cosine."""
    dates = pd.date_range("2021-01-01", "2022-12-31", freq="D")
    doy = np.where(dates.is_leap_year & (dates.month > 2), dates.day_of_year - 1, dates.day_of_year)
    angle = 2 * np.pi * (doy - 1) / 365
    offset = np.where(dates.year == 2021, 3.0, -3.0)
    temps = 15.0 + 10.0 * np.cos(angle) + offset
    frame = pd.DataFrame({"temperature_c": temps}, index=dates)
    path = seasonal_normal_path(frame, "2026-03-01", 90)
    factor = np.mean(np.cos(2 * np.pi * np.arange(-7, 8) / 365))
    target_doy = path.index.day_of_year.to_numpy()  # 2026 is not a leap year
    expected = 15.0 + 10.0 * factor * np.cos(2 * np.pi * (target_doy - 1) / 365)
    np.testing.assert_allclose(path.to_numpy(), expected, atol=1e-9)


def test_seasonal_normal_wraps_round_the_year_end():
    # Warm in the last week of December, cold otherwise: 1 January's normal must see the warm days.
    dates = pd.date_range("2021-01-01", "2021-12-31", freq="D")
    temps = np.where((dates.month == 12) & (dates.day >= 25), 20.0, 0.0)
    path = seasonal_normal_path(pd.Series(temps, index=dates), "2027-01-01", 1)
    assert path.iloc[0] == pytest.approx(20.0 * 7 / 15)


def test_seasonal_normal_puts_leap_day_with_28_february():
    dates = pd.date_range("2024-02-01", "2024-03-31", freq="D")  # 2024 is a leap year
    temps = np.where((dates.month == 2) & (dates.day == 29), 30.0, 10.0)
    frame = pd.DataFrame({"temperature_c": temps}, index=dates)
    path = seasonal_normal_path(frame, "2028-02-28", 2)  # 2028-02-28 and 2028-02-29
    # 28 February's calendar day holds the values 10 and 30 (mean 20); 14 other days are 10.
    expected = (20.0 + 14 * 10.0) / 15
    assert path.iloc[0] == pytest.approx(expected)
    assert path.iloc[1] == pytest.approx(expected)


def test_seasonal_normal_needs_history_near_the_dates():
    dates = pd.date_range("2021-06-01", "2021-08-31", freq="D")
    frame = pd.DataFrame({"temperature_c": 30.0}, index=dates)
    with pytest.raises(ScenarioError, match="no temperatures near") as info:
        seasonal_normal_path(frame, "2026-12-01", 10)
    assert "2026-12-01" in str(info.value)


def test_heat_wave_profile_follows_linear_ramps():
    base = constant_path("2026-07-01", 20, 25.0)
    wave = heat_wave(base, 37.0, length_days=8, ramp_days=3, start_day=2)
    values = wave.to_numpy()
    # Ramp weights k/(ramp+1) = 1/4, 2/4, 3/4, then the peak, then the mirror image.
    weights = np.array([0.25, 0.5, 0.75, 1.0, 1.0, 0.75, 0.5, 0.25])
    np.testing.assert_allclose(values[2:10], 25.0 + weights * 12.0)
    np.testing.assert_allclose(values[:2], 25.0)
    np.testing.assert_allclose(values[10:], 25.0)
    assert values.max() == pytest.approx(37.0)
    assert (base == 25.0).all(), "the input path must not change"


def test_heat_wave_start_by_date_and_clipped_at_the_end():
    base = constant_path("2026-07-01", 10, 25.0)
    by_date = heat_wave(base, 35.0, 4, 0, "2026-07-08")
    assert by_date.index.equals(base.index)
    np.testing.assert_allclose(by_date.to_numpy()[7:], 35.0)
    np.testing.assert_allclose(by_date.to_numpy()[:7], 25.0)
    assert heat_wave(base, 35.0, 4, 0, 7).equals(by_date)


def test_heat_wave_keeps_days_already_hotter():
    base = constant_path("2026-07-01", 7, 25.0)
    base.iloc[3] = 41.0
    wave = heat_wave(base, 36.0, 5, 1, 1)
    assert wave.iloc[3] == 41.0
    assert wave.iloc[2] == pytest.approx(36.0)


@pytest.mark.parametrize(
    "length, ramp, start, match",
    [(4, 2, 0, "ramps at both ends"), (0, 0, 0, "whole number"), (5, -1, 0, "ramp"),
     (5, 1, 30, "outside"), (5, 1, "2027-01-01", "not in the path")],
)  # fmt: skip
def test_heat_wave_rejects_bad_shapes(length, ramp, start, match):
    base = constant_path("2026-07-01", 10, 25.0)
    with pytest.raises(ScenarioError, match=match):
        heat_wave(base, 38.0, length, ramp, start)


@settings(max_examples=60, deadline=None)
@given(
    temps=st.lists(st.floats(-30, 45), min_size=3, max_size=40),
    target=st.floats(-40, 50),
    length=st.integers(1, 20),
    ramp=st.integers(0, 9),
    start=st.integers(0, 39),
)
def test_events_move_only_one_way(temps, target, length, ramp, start):
    ramp = min(ramp, (length - 1) // 2)
    start = start % len(temps)
    base = pd.Series(temps, index=pd.date_range("2026-01-01", periods=len(temps)))
    hot = heat_wave(base, target, length, ramp, start).to_numpy()
    cold = cold_snap(base, target, length, ramp, start).to_numpy()
    old = base.to_numpy()
    assert (hot >= old).all()
    assert (cold <= old).all()
    outside = np.ones(len(old), bool)
    outside[start : start + length] = False
    np.testing.assert_array_equal(hot[outside], old[outside])
    np.testing.assert_array_equal(cold[outside], old[outside])


def test_cold_snap_mirrors_heat_wave():
    base = constant_path("2026-01-01", 12, 5.0)
    snap = cold_snap(base, -15.0, length_days=6, ramp_days=2, start_day=3).to_numpy()
    weights = np.array([1 / 3, 2 / 3, 1.0, 1.0, 2 / 3, 1 / 3])
    np.testing.assert_allclose(snap[3:9], 5.0 - weights * 20.0)
    np.testing.assert_allclose(snap[:3], 5.0)
    np.testing.assert_allclose(snap[9:], 5.0)
    base.iloc[5] = -20.0
    assert cold_snap(base, -15.0, 6, 2, 3).iloc[5] == -20.0


def test_copy_period_copies_temperatures_onto_new_dates():
    temps = np.arange(400, dtype=float) / 10
    hist = _history(temps, start="2024-01-01")
    path = copy_period(hist, "2024-02-10", "2026-07-01", 15)
    assert path.index[0] == pd.Timestamp("2026-07-01")
    assert len(path) == 15
    first = (pd.Timestamp("2024-02-10") - pd.Timestamp("2024-01-01")).days
    np.testing.assert_allclose(path.to_numpy(), temps[first : first + 15])


def test_copy_period_outside_history_names_the_date():
    hist = _history(np.zeros(30), start="2024-01-01")
    with pytest.raises(ScenarioError) as info:
        copy_period(hist, "2024-01-20", "2026-07-01", 20)
    assert "2024-01-31" in str(info.value)
    assert "2024-01-01 to 2024-01-30" in str(info.value)


def test_shift_path():
    base = constant_path("2026-07-01", 5, 20.0)
    np.testing.assert_allclose(shift_path(base, -2.5).to_numpy(), 17.5)
    assert shift_path(base, 3).index.equals(base.index)
    with pytest.raises(ScenarioError):
        shift_path([1, 2, 3], 1.0)


# ------------------------------------------------------------------------------------- make_scenario


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
    path = constant_path("2026-07-03", 5, 30.0)
    with pytest.raises(ScenarioError) as info:
        make_scenario("late", path, model_end="2026-06-30")
    assert "2026-07-01" in str(info.value)
    assert "2026-07-03" in str(info.value)


def test_make_scenario_horizon_limits():
    make_scenario("longest", constant_path("2026-07-01", MAX_DAYS, 20.0))
    with pytest.raises(ScenarioError, match="more than the 90"):
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


# ----------------------------------------------------------------------------- definitions and CSVs


def test_definition_round_trip_through_json():
    path = heat_wave(constant_path("2026-07-01", 20, 26.0), 39.0, 9, 2, 4)
    scen = make_scenario("Wave", path, [""] * 19 + ["holiday"], model_end="2026-06-30")
    text = json.dumps(scen.to_dict())
    again = Scenario.from_dict(json.loads(text), model_end="2026-06-30")
    assert again == scen
    assert Scenario.from_json(scen.to_json()) == scen
    days = scen.to_dict()["days"]
    assert days[0]["day_type"] is None and days[-1]["day_type"] == "holiday"


def test_definition_errors_are_scenario_errors():
    scen = make_scenario("x", constant_path("2026-07-01", 3, 20.0))
    with pytest.raises(ScenarioError, match="not a loadcore scenario"):
        Scenario.from_dict({"name": "x"})
    data = scen.to_dict()
    data["version"] = 99
    with pytest.raises(ScenarioError, match="version"):
        Scenario.from_dict(data)
    data = scen.to_dict()
    data["days"][1]["temperature_c"] = "hot"
    with pytest.raises(ScenarioError, match="2026-07-02"):
        Scenario.from_dict(data)
    with pytest.raises(ScenarioError, match="starts on"):
        Scenario.from_dict(scen.to_dict(), model_end="2026-07-05")
    with pytest.raises(ScenarioError, match="not valid JSON"):
        Scenario.from_json("{not json")


def test_read_scenario_csv_celsius_with_day_types(tmp_path):
    file = tmp_path / "july_heat.csv"
    file.write_text(
        "date,temperature,day_type\n2026-07-01,31.0,\n2026-07-02,33.5,holiday\n2026-07-03,35,\n"
    )
    scen = read_scenario_csv(file, model_end="2026-06-30")
    assert scen.name == "july_heat"
    assert scen.temperature_c.tolist() == [31.0, 33.5, 35.0]
    assert scen.day_types == ("", "holiday", "")


def test_read_scenario_csv_fahrenheit_and_other_columns():
    """°F to °C: (F - 32) * 5 / 9 (common practice, no source)."""
    text = b"Day,Tmax\n2026-01-05,14\n2026-01-06,-4\n"
    scen = read_scenario_csv(text, temp_unit="F", date_col="day", temp_col="tmax", name="Freeze")
    np.testing.assert_allclose(scen.temperature_c, [-10.0, -20.0])
    assert scen.day_types is None
    assert scen.name == "Freeze"


def test_write_and_read_back_in_both_units():
    path = cold_snap(constant_path("2026-12-01", 10, 3.0), -18.0, 6, 1, 2)
    scen = make_scenario("Snap", path, [""] * 9 + ["year_end"])
    for unit in ("C", "F"):
        again = read_scenario_csv(io.StringIO(write_scenario_csv(scen, temp_unit=unit)),
                                  temp_unit=unit, name="Snap")  # fmt: skip
        np.testing.assert_allclose(again.temperature_c, scen.temperature_c, atol=1e-3)
        assert again.day_types == scen.day_types
        assert again.dates.equals(scen.dates)


def test_read_scenario_csv_errors_name_row_column_or_file(tmp_path):
    with pytest.raises(ScenarioError, match="no 'temperature' column") as info:
        read_scenario_csv(b"date,temp\n2026-07-01,20\n")
    assert "temp" in str(info.value)
    with pytest.raises(ScenarioError, match="row 2") as info:
        read_scenario_csv(b"date,temperature\n2026-07-01,20\n2026-07-02,\n")
    assert "2026-07-02" in str(info.value)
    with pytest.raises(ScenarioError, match="row 3"):
        read_scenario_csv(b"date,temperature\n2026-07-01,20\n2026-07-02,21\nsoon,22\n")
    with pytest.raises(ScenarioError, match="no rows"):
        read_scenario_csv(b"date,temperature\n")
    with pytest.raises(InputError, match="does not exist"):
        read_scenario_csv(tmp_path / "missing.csv")
    with pytest.raises(InputError, match="unit"):
        read_scenario_csv(b"date,temperature\n2026-07-01,20\n", temp_unit="K")
    with pytest.raises(ScenarioError, match="plausible"):
        read_scenario_csv(b"date,temperature\n2026-07-01,95\n")  # °F read as °C


# ------------------------------------------------------------------------ with the demo History


def test_builders_accept_a_real_history(demo_history):
    end = demo_history.end
    start = end + pd.Timedelta(days=1)
    normal = seasonal_normal_path(demo_history, start, 30)
    low, high = demo_history.temperature_range_c
    assert ((normal > low) & (normal < high)).all()
    january = seasonal_normal_path(demo_history, "2027-01-10", 1).iloc[0]
    july = seasonal_normal_path(demo_history, "2027-07-10", 1).iloc[0]
    assert january + 15 < july  # the demo basin has cold winters and hot summers
    copied = copy_period(demo_history, "2024-07-01", start, 14)
    source = demo_history.frame["temperature_c"].loc["2024-07-01":"2024-07-14"].to_numpy()
    np.testing.assert_allclose(copied.to_numpy(), source)
    scen = make_scenario("Copy of July 2024", copied, model_end=end)
    assert scen.start == start and scen.horizon == 14
