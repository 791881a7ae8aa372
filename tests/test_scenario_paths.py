"""Scenario path builders: constant, seasonal normal, heat wave, cold snap, copy, shift."""

from __future__ import annotations

from types import SimpleNamespace

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from loadcore.errors import ScenarioError
from loadcore.scenario import (
    cold_snap,
    constant_path,
    copy_period,
    heat_wave,
    make_scenario,
    seasonal_normal_path,
    shift_path,
)


def _history(temps: np.ndarray, start: str = "2020-01-01") -> SimpleNamespace:
    """Something shaped like a History: a ``frame`` with ``temperature_c`` on a daily index."""
    index = pd.date_range(start, periods=len(temps), freq="D", name="date")
    frame = pd.DataFrame({"demand": 1000.0, "temperature_c": np.asarray(temps, float)}, index=index)
    return SimpleNamespace(frame=frame)


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
