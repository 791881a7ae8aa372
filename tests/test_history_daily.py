"""Tests for loadcore.history.daily: sub-daily aggregation and completing the daily table."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from history_support import (
    SUBDAILY,
    as_bytes,
    clean_bytes,
    hourly_lines,
    only,
    table,
    to_csv,
)

from loadcore.history import (
    MAX_LISTED,
    HistorySettings,
    check_history,
    read_history,
)


def test_hourly_data_become_daily_peaks():
    history = read_history(as_bytes(hourly_lines()), SUBDAILY)
    frame = history.frame
    assert len(frame) == 370
    assert (frame["demand"] == 800 + 23 * 10.0).all()
    assert (frame["temperature_c"] == 5 + 23 * 0.5).all()
    notes = only(history.report, "info", "aggregated")
    assert len(notes) == 1 and "24 readings" in notes[0].message and "peak" in notes[0].message


def test_half_hourly_totals():
    settings_ = HistorySettings(
        date_col="timestamp", demand_col="load", temp_col="temp", subdaily_demand="total"
    )
    history = read_history(as_bytes(hourly_lines(per_day=48)), settings_)
    expected_total = sum(800 + j * 10.0 for j in range(48))
    assert history.frame["demand"].iloc[0] == pytest.approx(expected_total)
    assert "48 readings" in only(history.report, "info", "aggregated")[0].message


def test_days_with_fewer_intervals_are_warned_about():
    history = read_history(as_bytes(hourly_lines(drop=(24 * 10 + 3, 24 * 10 + 4))), SUBDAILY)
    warnings = only(history.report, "warning", "instead of the usual 24")
    assert len(warnings) == 1
    assert warnings[0].date == "2023-01-11"
    assert "22 demand readings" in warnings[0].message


def test_repeated_times_in_subdaily_data_are_warned_about():
    lines = hourly_lines()
    lines.insert(5, lines[4])
    report = check_history(as_bytes(lines), SUBDAILY)
    repeated = only(report, "warning", "appears more than once")
    assert [i.row for i in repeated] == [4, 5]


def test_duplicate_dates_list_the_rows():
    lines = to_csv(table())
    lines[11] = lines[10].split(",")[0] + "," + lines[11].split(",", 1)[1]
    report = check_history(as_bytes(lines))
    errors = only(report, "error", "appears 2 times")
    assert len(errors) == 1
    assert "rows 10, 11" in errors[0].message
    assert errors[0].date == "2023-01-10"


def test_a_daily_file_pasted_twice_is_duplicates_not_subdaily():
    lines = to_csv(table())
    report = check_history(as_bytes(lines + lines[1:]))
    errors = only(report, "error", "appears 2 times")
    assert len(errors) == MAX_LISTED and "rows 1, 401" in errors[0].message
    assert "380 more duplicated dates" in report.errors[-1].message
    assert not only(report, "info", "aggregated")


def test_unsorted_rows_are_sorted_and_reported():
    lines = to_csv(table())
    body = lines[1:][::-1]
    history = read_history(as_bytes([lines[0], *body]))
    assert history.frame.index.is_monotonic_increasing
    assert only(history.report, "info", "sorted by date")
    assert history.fingerprint == read_history(clean_bytes()).fingerprint


def test_blank_demand_cells_are_missing_values_with_a_warning():
    frame = table()
    frame.loc[30, "demand"] = np.nan
    history = read_history(as_bytes(to_csv(frame)))
    assert np.isnan(history.frame["demand"].iloc[30])
    warnings = only(history.report, "warning", "Demand is missing for 1 day")
    assert len(warnings) == 1
    assert warnings[0].date == "2023-01-31" and "blank in the file" in warnings[0].message


def test_missing_days_keep_demand_missing_and_fill_short_temperature_gaps():
    """Linear interpolation between 10 °C and 16 °C over two missing days gives 12 and 14."""
    frame = table()
    frame.loc[49, "temperature"] = 10.0
    frame.loc[52, "temperature"] = 16.0
    frame = frame.drop(index=[50, 51])
    history = read_history(as_bytes(to_csv(frame)))
    out = history.frame
    assert len(out) == 400
    gap = out.loc["2023-02-20":"2023-02-21"]
    assert gap["demand"].isna().all()
    np.testing.assert_allclose(gap["temperature_c"], [12.0, 14.0])
    assert gap["temperature_filled"].all()
    assert out["temperature_filled"].sum() == 2
    temp_warn = only(history.report, "warning", "Temperature is missing for 2 day")
    assert len(temp_warn) == 1 and temp_warn[0].date == "2023-02-20"
    assert "2023-02-20 to 2023-02-21" in temp_warn[0].message
    demand_warn = only(history.report, "warning", "Demand is missing for 2 day")
    assert len(demand_warn) == 1 and "absent from the file" in demand_warn[0].message


def test_long_temperature_gap_is_an_error_that_says_where_to_cut():
    frame = table(500)
    frame.loc[400:404, "temperature"] = np.nan  # five blank days near the end
    report = check_history(as_bytes(to_csv(frame)))
    errors = only(report, "error", "Temperature is missing for 5 days")
    assert len(errors) == 1
    assert "end the history on 2024-02-04 or earlier" in errors[0].fix
    assert errors[0].date == "2024-02-05" and errors[0].column == "temperature"
    assert check_history(as_bytes(to_csv(frame)), HistorySettings(max_temp_gap_days=5)).ok


def test_long_demand_gap_is_an_error_that_says_where_to_cut():
    frame = table(900).drop(index=range(100, 140))  # 40 days absent near the start
    report = check_history(as_bytes(to_csv(frame)), HistorySettings(max_temp_gap_days=60))
    errors = only(report, "error", "Demand is missing for 40 days")
    assert len(errors) == 1
    assert "start the history on 2023-05-21 or later" in errors[0].fix
    assert errors[0].date == "2023-04-11"
    ok = HistorySettings(max_temp_gap_days=60, max_demand_gap_days=40)
    assert check_history(as_bytes(to_csv(frame)), ok).ok


def test_under_a_year_is_an_error():
    report = check_history(clean_bytes(364))
    errors = only(report, "error", "at least 365 days")
    assert len(errors) == 1 and "364 days" in errors[0].message
    assert check_history(clean_bytes(365)).ok


def test_days_without_demand_at_the_ends_are_trimmed_and_reported():
    frame = table(403)
    frame.loc[:1, "demand"] = np.nan
    frame.loc[402, "temperature"] = np.nan
    history = read_history(as_bytes(to_csv(frame)))
    assert history.start == pd.Timestamp("2023-01-03")
    assert len(history.frame) == 400
    notes = only(history.report, "info", "left out")
    assert len(notes) == 1
    assert "2 day(s) at the start" in notes[0].message and "1 day(s) at the end" in notes[0].message
