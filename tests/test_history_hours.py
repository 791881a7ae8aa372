"""Tests for loadcore.history.hours and the hour-column layouts of history files.

The layouts are those of utility load files (common practice, no source): one row per hour with
the date in one column and the hour in another, numbered 1-24 (hour ending) or 0-23 (hour
beginning), or a separate time-of-day column. Daylight-saving dates come from the IANA time zone
database through pandas (US Central time: 23 hours on 2023-03-12, 25 hours on 2023-11-05).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from history_support import START, as_bytes, only

from loadcore.errors import HistoryError
from loadcore.history import HistorySettings, check_history, history_from_frame, read_history

DAYS = 370


def _hourly(per_day: int = 24, days: int = DAYS) -> pd.DataFrame:
    """Readings of a known truth: demand and temperature rise through the day, so the daily
    peak is the day's last reading, the daily minimum temperature its first."""
    stamps = pd.date_range(START, periods=days * per_day, freq=pd.Timedelta(days=1) / per_day)
    k = np.arange(len(stamps)) % per_day
    return pd.DataFrame(
        {
            "stamp": stamps,
            "demand": 800 + k * 10.0 + (stamps.day_of_year.to_numpy() % 7),
            "temperature": np.round(2 + k * 0.5, 1),
        }
    )


def _lines(frame: pd.DataFrame, hour: pd.Series, name: str = "hour") -> list[str]:
    lines = [f"date,{name},demand,temperature"]
    for s, h, m, t in zip(frame["stamp"], hour, frame["demand"], frame["temperature"], strict=True):
        lines.append(f"{s:%Y-%m-%d},{h},{m},{t}")
    return lines


def _stamped(frame: pd.DataFrame) -> bytes:
    lines = ["date,demand,temperature"] + [
        f"{s:%Y-%m-%d %H:%M},{m},{t}"
        for s, m, t in zip(frame["stamp"], frame["demand"], frame["temperature"], strict=True)
    ]
    return as_bytes(lines)


HOURS = HistorySettings(hour_col="hour")


def test_hour_ending_1_to_24_gives_the_same_days_as_timestamps():
    frame = _hourly()
    history = read_history(as_bytes(_lines(frame, frame["stamp"].dt.hour + 1)), HOURS)
    reference = read_history(_stamped(frame))
    pd.testing.assert_frame_equal(history.frame, reference.frame)
    assert history.fingerprint == reference.fingerprint
    notes = only(history.report, "info", "hour numbers 1-24")
    assert len(notes) == 1 and "hour ending" in notes[0].message
    # Hour 24 is the last hour of the same date: the peak (the day's last reading) stays on it.
    assert history.frame["demand"].iloc[0] == 800 + 23 * 10.0 + 1


def test_hour_beginning_0_to_23_is_detected():
    frame = _hourly()
    history = read_history(as_bytes(_lines(frame, frame["stamp"].dt.hour)), HOURS)
    pd.testing.assert_frame_equal(history.frame, read_history(_stamped(frame)).frame)
    notes = only(history.report, "info", "hour numbers 0-23")
    assert len(notes) == 1 and "hour beginning" in notes[0].message


def test_hour_numbers_written_with_leading_zeros_or_decimals():
    frame = _hourly()
    hours = (frame["stamp"].dt.hour + 1).map(lambda h: f"{h:02d}" if h % 2 else f"{h}.0")
    history = read_history(as_bytes(_lines(frame, hours)), HOURS)
    pd.testing.assert_frame_equal(history.frame, read_history(_stamped(frame)).frame)


@pytest.mark.parametrize("layout", ["%H:%M", "%H:%M:%S"])
def test_a_time_of_day_column(layout):
    frame = _hourly(per_day=48)
    times = frame["stamp"].dt.strftime(layout)
    history = read_history(
        as_bytes(_lines(frame, times, name="time")), HistorySettings(hour_col="time")
    )
    pd.testing.assert_frame_equal(history.frame, read_history(_stamped(frame)).frame)
    assert only(history.report, "info", "start of each reading's interval")
    assert only(history.report, "info", "48 readings")


def test_times_running_to_24_00_end_their_interval():
    frame = _hourly()
    ends = frame["stamp"] + pd.Timedelta(hours=1)
    times = [
        "24:00" if e.hour == 0 else f"{e:%H:%M}" for e in ends
    ]  # 01:00 ... 24:00 on the same date
    history = read_history(
        as_bytes(_lines(frame, pd.Series(times), name="time")), HistorySettings(hour_col="time")
    )
    pd.testing.assert_frame_equal(history.frame, read_history(_stamped(frame)).frame)
    assert only(history.report, "info", "end of each reading's interval")


def test_half_hour_periods_1_to_48():
    frame = _hourly(per_day=48)
    periods = frame["stamp"].dt.hour * 2 + frame["stamp"].dt.minute // 30 + 1
    history = read_history(
        as_bytes(_lines(frame, periods, name="period")), HistorySettings(hour_col="period")
    )
    pd.testing.assert_frame_equal(history.frame, read_history(_stamped(frame)).frame)
    assert only(history.report, "info", "half-hour period numbers 1-48")


def _local_hour_ending(days: int = DAYS) -> pd.DataFrame:
    """Hourly readings in US Central local time, hours numbered 1-23 / 1-24 / 1-25 within each
    local date (the clocks change on 2023-03-12 and 2023-11-05)."""
    utc = pd.date_range("2023-01-01 06:00", periods=days * 24, freq="h", tz="UTC")
    local = utc.tz_convert("America/Chicago")
    date = pd.Series(local.tz_localize(None).normalize())
    hour = date.groupby(date).cumcount() + 1
    k = hour.to_numpy()
    return pd.DataFrame(
        {
            "stamp": date,
            "hour": hour,
            "demand": 800 + k * 10.0,
            "temperature": np.round(2 + k * 0.5, 1),
        }
    )


def test_daylight_saving_days_with_23_and_25_hours_are_aggregated_and_noted():
    frame = _local_hour_ending().iloc[:-24]  # the last local date is incomplete: cut it
    frame = frame[frame["stamp"] < frame["stamp"].iloc[-1]]
    settings = HistorySettings(hour_col="hour", subdaily_demand="total")
    history = read_history(as_bytes(_lines(frame, frame["hour"])), settings)
    counts = frame.groupby("stamp").size()
    assert counts[pd.Timestamp("2023-03-12")] == 23 and counts[pd.Timestamp("2023-11-05")] == 25
    daily = history.frame["demand"]
    assert daily["2023-03-12"] == sum(800 + h * 10.0 for h in range(1, 24))
    assert daily["2023-11-05"] == sum(800 + h * 10.0 for h in range(1, 26))
    assert daily["2023-06-01"] == sum(800 + h * 10.0 for h in range(1, 25))
    notes = only(history.report, "info", "clocks change")
    assert len(notes) == 1
    assert "2023-03-12 (23)" in notes[0].message and "2023-11-05 (25)" in notes[0].message
    assert "one hour less or more" in notes[0].message
    assert not only(history.report, "warning", "instead of the usual")
    assert only(history.report, "info", "hour numbers 1-24")


def test_an_hour_25_on_many_dates_is_an_error():
    frame = _hourly()
    hours = frame["stamp"].dt.hour + 1
    hours[hours == 24] = 25
    report = check_history(as_bytes(_lines(frame, hours)), HOURS)
    assert only(report, "error", "hour 25 on more than one date a year")


def test_a_day_short_of_many_hours_is_still_warned_about():
    frame = _hourly()
    frame = frame.drop(index=range(24 * 10 + 3, 24 * 10 + 8))  # five hours gone on day 11
    history = read_history(as_bytes(_lines(frame, frame["stamp"].dt.hour + 1)), HOURS)
    warnings = only(history.report, "warning", "instead of the usual 24")
    assert [w.date for w in warnings] == ["2023-01-11"]
    assert not only(history.report, "info", "clocks change")


def test_repeated_dates_without_an_hour_column_say_how_to_name_it():
    frame = _hourly()
    report = check_history(as_bytes(_lines(frame, frame["stamp"].dt.hour + 1, name="HE")))
    errors = report.errors
    assert len(errors) == 1
    assert "Every date appears 24 times" in errors[0].message
    assert "--hour-col NAME" in errors[0].fix and "'HE'" in errors[0].fix


def test_half_hourly_repeats_without_an_hour_column_say_how_to_name_it():
    frame = _hourly(per_day=48)
    report = check_history(as_bytes(_lines(frame, frame["stamp"].dt.strftime("%H:%M"))))
    assert "Every date appears 48 times" in report.errors[0].message
    assert "'hour'" in report.errors[0].fix


def test_both_0_and_24_is_an_error():
    frame = _hourly()
    hours = frame["stamp"].dt.hour.copy()
    hours[(hours == 0) & (np.arange(len(hours)) % 48 == 0)] = 24  # every other date
    report = check_history(as_bytes(_lines(frame, hours)), HOURS)
    errors = only(report, "error", "both 0 and 24")
    assert len(errors) == 1 and errors[0].column == "hour"


def test_unreadable_hours_name_their_rows():
    frame = _hourly()
    hours = (frame["stamp"].dt.hour + 1).astype(str)
    hours.iloc[30] = "noon"
    hours.iloc[31] = ""
    report = check_history(as_bytes(_lines(frame, hours)), HOURS)
    bad = only(report, "error", "cannot be read as a whole hour number")
    blank = only(report, "error", "The hour is blank")
    assert [i.row for i in bad] == [31] and [i.row for i in blank] == [32]
    assert bad[0].date == "2023-01-02"


def test_dates_with_times_and_an_hour_column_is_an_error():
    frame = _hourly()
    lines = ["date,hour,demand,temperature"] + [
        f"{s:%Y-%m-%d %H:%M},{s.hour + 1},{m},{t}"
        for s, m, t in zip(frame["stamp"], frame["demand"], frame["temperature"], strict=True)
    ]
    report = check_history(as_bytes(lines), HOURS)
    assert only(report, "error", "already carries a time of day")


def test_a_named_hour_column_that_is_absent():
    frame = _hourly()
    report = check_history(_stamped(frame), HistorySettings(hour_col="hour"))
    errors = only(report, "error", "The column 'hour' is not in the file")
    # the fix names the app field and the CLI option, never the setting's own name (issue 10, 9)
    assert errors and "--hour-col" in errors[0].fix and "Hour column" in errors[0].fix
    assert "hour_col" not in errors[0].fix


def test_a_dataframe_with_an_hour_column():
    frame = _hourly()
    table = pd.DataFrame(
        {
            "date": frame["stamp"].dt.normalize(),
            "hour": frame["stamp"].dt.hour + 1,
            "demand": frame["demand"],
            "temperature": frame["temperature"],
        }
    )
    history = read_history(table, HOURS)
    pd.testing.assert_frame_equal(history.frame, read_history(_stamped(frame)).frame)


# ---- the daily minimum temperature ----------------------------------------------------------


def test_subdaily_readings_give_the_daily_minimum():
    frame = _hourly()
    history = read_history(as_bytes(_lines(frame, frame["stamp"].dt.hour + 1)), HOURS)
    assert history.has_minimum
    assert (history.frame["temperature_min_c"] == 2.0).all()
    assert (history.frame["temperature_c"] == 2 + 23 * 0.5).all()


def _daily_with_minimum(n: int = 400) -> pd.DataFrame:
    dates = pd.date_range(START, periods=n, freq="D")
    i = np.arange(n)
    tmax = np.round(15 + 12 * np.sin(2 * np.pi * i / 365), 1)
    return pd.DataFrame(
        {"date": dates, "demand": 1000 + 3.0 * (i % 7), "tmax": tmax, "tmin": tmax - 8.0}
    )


def test_a_daily_file_with_a_minimum_column_in_fahrenheit():
    data = _daily_with_minimum()
    as_f = data.assign(tmax=data["tmax"] * 9 / 5 + 32, tmin=data["tmin"] * 9 / 5 + 32)
    settings = HistorySettings(temp_col="tmax", temp_min_col="tmin", temp_unit="F")
    history = read_history(as_f.to_csv(index=False).encode(), settings)
    np.testing.assert_allclose(
        history.frame["temperature_min_c"], data["tmin"].to_numpy(), atol=1e-9
    )
    plain = read_history(data.drop(columns="tmin"), HistorySettings(temp_col="tmax"))
    assert not plain.has_minimum
    assert plain.fingerprint != history.fingerprint


def test_a_minimum_above_the_maximum_is_an_error():
    data = _daily_with_minimum()
    data.loc[40, "tmin"] = data.loc[40, "tmax"] + 3
    report = check_history(data, HistorySettings(temp_col="tmax", temp_min_col="tmin"))
    errors = only(report, "error", "is above the temperature")
    assert len(errors) == 1 and errors[0].row == 41 and errors[0].column == "tmin"


def test_short_minimum_gaps_are_filled_and_long_ones_drop_the_minimum():
    data = _daily_with_minimum()
    data.loc[50:51, "tmin"] = np.nan
    settings = HistorySettings(temp_col="tmax", temp_min_col="tmin")
    history = read_history(data, settings)
    assert history.has_minimum and not history.frame["temperature_min_c"].isna().any()
    assert only(history.report, "info", "minimum temperature is missing on 2 day(s)")
    data.loc[100:120, "tmin"] = np.nan
    history = read_history(data, settings)
    assert not history.has_minimum
    assert only(history.report, "warning", "used without its daily minimum")


def test_history_from_frame_keeps_the_minimum():
    frame = _hourly()
    history = read_history(as_bytes(_lines(frame, frame["stamp"].dt.hour + 1)), HOURS)
    again = history_from_frame(history.frame)
    assert again.fingerprint == history.fingerprint
    cut = history.frame.copy()
    cut.iloc[0, cut.columns.get_loc("temperature_min_c")] = np.nan
    with pytest.raises(HistoryError, match="cannot be filled"):
        history_from_frame(cut)


def test_reading_nine_years_of_hourly_rows_parses_each_date_once(monkeypatch):
    """The hour layout repeats every date 24 times; the reader parses each distinct date text
    once (the speed target itself is checked by the benchmarks)."""
    import loadcore.history.parsing as parsing

    seen: list[int] = []
    original = parsing._parse_family

    def counting(values, part):
        seen.append(len(values))
        return original(values, part)

    monkeypatch.setattr(parsing, "_parse_family", counting)
    frame = _hourly(days=400)
    read_history(as_bytes(_lines(frame, frame["stamp"].dt.hour + 1)), HOURS)
    assert max(seen) == 400
