"""Tests for loadcore.history: reading, validation rules and their messages."""

from __future__ import annotations

import io
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from loadcore.errors import HistoryError
from loadcore.history import (
    MAX_LISTED,
    History,
    HistoryReport,
    HistorySettings,
    Issue,
    check_history,
    history_from_frame,
    read_history,
)

START = "2023-01-01"


def table(n: int = 400, start: str = START) -> pd.DataFrame:
    """A small clean daily table: demand in MW, temperature in °C."""
    dates = pd.date_range(start, periods=n, freq="D")
    i = np.arange(n)
    return pd.DataFrame(
        {
            "date": dates,
            "demand": np.round(1000 + 50 * np.sin(i / 9) + 3 * (i % 7), 1),
            "temperature": np.round(15 + 12 * np.sin(2 * np.pi * i / 365), 1),
        }
    )


def to_csv(
    frame: pd.DataFrame,
    *,
    fmt: str = "%Y-%m-%d",
    sep: str = ",",
    header: tuple[str, str, str] = ("date", "demand", "temperature"),
) -> list[str]:
    """Lines of a CSV (header first), values written as given."""
    lines = [sep.join(header)]
    for d, m, t in zip(frame["date"], frame["demand"], frame["temperature"], strict=True):
        m_text = "" if pd.isna(m) else str(m)
        t_text = "" if pd.isna(t) else str(t)
        lines.append(sep.join([pd.Timestamp(d).strftime(fmt), m_text, t_text]))
    return lines


def as_bytes(lines: list[str]) -> bytes:
    return ("\n".join(lines) + "\n").encode()


def clean_bytes(n: int = 400, **kw) -> bytes:
    return as_bytes(to_csv(table(n), **kw))


def only(report: HistoryReport, severity: str, words: str) -> list[Issue]:
    return [i for i in report.issues if i.severity == severity and words in i.message]


# ---------------------------------------------------------------------------------------------
# The demo file and the shape of the result
# ---------------------------------------------------------------------------------------------


def test_demo_history_shape(demo_history):
    frame = demo_history.frame
    assert isinstance(frame.index, pd.DatetimeIndex)
    assert frame.index.name == "date"
    assert frame.index.freq == "D"
    assert list(frame.columns) == ["demand", "temperature_c", "temperature_filled"]
    assert frame["demand"].dtype == float and frame["temperature_c"].dtype == float
    assert frame["temperature_filled"].dtype == bool
    assert frame["temperature_c"].notna().all()
    assert demo_history.start == pd.Timestamp("2021-01-01")
    assert demo_history.end == pd.Timestamp("2026-11-29")
    low, high = demo_history.temperature_range_c
    assert low == frame["temperature_c"].min() and high == frame["temperature_c"].max()
    assert demo_history.report.ok


def test_clean_file_has_no_issues_and_keeps_values():
    history = read_history(clean_bytes())
    assert history.report.issues == ()
    expected = table()
    np.testing.assert_allclose(history.frame["demand"], expected["demand"])
    np.testing.assert_allclose(history.frame["temperature_c"], expected["temperature"])
    assert history.frame.index.equals(pd.DatetimeIndex(expected["date"]))


@pytest.mark.parametrize("sep", [",", ";", "\t", "|"])
def test_delimiters_are_detected(sep):
    history = read_history(clean_bytes(sep=sep))
    reference = read_history(clean_bytes())
    assert history.fingerprint == reference.fingerprint


@pytest.mark.parametrize(
    "fmt",
    [
        "%Y-%m-%d",
        "%d/%m/%Y",
        "%m/%d/%Y",
        "%d.%m.%Y",
        "%Y/%m/%d",
        "%Y-%m-%d %H:%M",
        "%d/%m/%Y %H:%M:%S",
    ],
)
def test_date_formats_are_detected(fmt):
    history = read_history(clean_bytes(fmt=fmt))
    assert history.frame.index.equals(pd.date_range(START, periods=400, freq="D", name="date"))
    assert not only(history.report, "info", "could be read as")


def test_iso_dates_with_a_time_only_on_some_rows():
    lines = clean_bytes().decode().splitlines()
    lines[5] = lines[5].replace(",", " 00:00,", 1)
    history = read_history(as_bytes(lines))
    assert len(history.frame) == 400


def test_ambiguous_dates_pick_the_regular_reading_and_say_so():
    """Twelve days written month first: only the month-first reading gives daily steps."""
    lines = to_csv(table(12), fmt="%m/%d/%Y")
    report = check_history(as_bytes(lines))
    notes = only(report, "info", "could be read as")
    assert len(notes) == 1
    assert "MM/DD/YYYY (month first) was chosen" in notes[0].message
    assert "date_format" in notes[0].fix and "%d/%m/%Y" in notes[0].fix
    assert notes[0].column == "date"
    day_first = check_history(as_bytes(to_csv(table(12), fmt="%d/%m/%Y")))
    assert (
        "DD/MM/YYYY (day first) was chosen" in only(day_first, "info", "could be read")[0].message
    )


def test_date_format_can_be_forced():
    history = read_history(clean_bytes(fmt="%d-%m-%Y"), HistorySettings(date_format="%d-%m-%Y"))
    assert history.start == pd.Timestamp(START)
    report = check_history(clean_bytes(), HistorySettings(date_format="%d/%m/%Y"))
    errors = only(report, "error", "cannot be read as DD/MM/YYYY")
    assert errors and errors[0].row == 1 and errors[0].column == "date"


def test_custom_column_names_ignore_case_and_spaces():
    lines = to_csv(table(), sep=";", header=(" Day ", "Peak MW", "Tmax"))
    settings_ = HistorySettings(date_col="day", demand_col="peak mw", temp_col="TMAX")
    history = read_history(as_bytes(lines), settings_)
    assert len(history.frame) == 400


def test_missing_column_names_the_columns_found():
    report = check_history(clean_bytes(), HistorySettings(demand_col="load"))
    assert not report.ok
    message = report.errors[0].message
    assert "'load'" in message and "'date', 'demand', 'temperature'" in message
    assert "demand_col" in report.errors[0].fix
    with pytest.raises(HistoryError) as err:
        read_history(clean_bytes(), HistorySettings(demand_col="load"))
    assert "'load'" in str(err.value)


def test_fahrenheit_is_converted_to_celsius():
    """°C = (°F - 32) * 5/9 (NIST Special Publication 811, appendix B; from memory)."""
    frame = table()
    frame["temperature"] = 50.0
    frame.loc[3, "temperature"] = 212.0 - 100.0  # 112 °F
    history = read_history(as_bytes(to_csv(frame)), HistorySettings(temp_unit="F"))
    assert history.frame["temperature_c"].iloc[0] == pytest.approx(10.0)
    assert history.frame["temperature_c"].iloc[3] == pytest.approx(80.0 * 5 / 9)


def test_decimal_commas_in_a_semicolon_file():
    lines = [line.replace(".", ",") for line in to_csv(table(), sep=";")]
    history = read_history(as_bytes(lines))
    np.testing.assert_allclose(history.frame["demand"], table()["demand"])


# ---------------------------------------------------------------------------------------------
# Sub-daily input
# ---------------------------------------------------------------------------------------------


def hourly_lines(days: int = 370, per_day: int = 24, drop: tuple[int, ...] = ()) -> list[str]:
    stamps = pd.date_range(START, periods=days * per_day, freq=pd.Timedelta(days=1) / per_day)
    k = np.arange(len(stamps))
    demand = 800 + (k % per_day) * 10.0  # rises through the day: peak is the last interval
    temp = 5 + (k % per_day) * 0.5
    lines = ["timestamp,load,temp"]
    for j, (s, m, t) in enumerate(zip(stamps, demand, temp, strict=True)):
        if j not in drop:
            lines.append(f"{s:%d/%m/%Y %H:%M},{m},{t}")
    return lines


SUBDAILY = HistorySettings(date_col="timestamp", demand_col="load", temp_col="temp")


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


def test_utc_offsets_keep_readings_on_their_local_day():
    """Hourly readings stamped with a UTC offset that changes at the daylight-saving switch
    (US Central time moved back one hour on 2023-11-05: IANA time zone database)."""
    stamps = pd.date_range("2023-01-01", periods=24 * 370, freq="h", tz="America/Chicago")
    lines = ["time,demand,temperature"] + [
        f"{t.isoformat()},{1000 + t.hour},{5 + t.hour * 0.1:.1f}" for t in stamps
    ]
    history = read_history(as_bytes(lines), HistorySettings(date_col="time"))
    assert history.start == pd.Timestamp("2023-01-01")
    assert (history.frame["demand"] == 1023.0).all()
    repeated = only(history.report, "warning", "appears more than once")
    assert {i.date for i in repeated} == {"2023-11-05"}


# ---------------------------------------------------------------------------------------------
# Validation rules and their messages
# ---------------------------------------------------------------------------------------------


def test_unparseable_date_names_row_value_and_column():
    lines = to_csv(table())
    lines[8] = "31/02/2023," + lines[8].split(",", 1)[1]
    report = check_history(as_bytes(lines))
    errors = only(report, "error", "cannot be read")
    assert len(errors) == 1
    assert errors[0].row == 8 and errors[0].column == "date"
    assert "'31/02/2023'" in errors[0].message


def test_blank_date_is_an_error():
    lines = to_csv(table())
    lines[3] = "," + lines[3].split(",", 1)[1]
    errors = only(check_history(as_bytes(lines)), "error", "blank")
    assert errors and errors[0].row == 3


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


def test_non_numeric_values_are_errors_with_row_date_column():
    frame = table().astype({"demand": object, "temperature": object})
    frame.loc[4, "demand"] = "1,2,3"
    frame.loc[6, "temperature"] = "warm"
    report = check_history(as_bytes(to_csv(frame, sep=";")))
    demand_err = only(report, "error", "'1,2,3' is not a number")
    temp_err = only(report, "error", "'warm' is not a number")
    assert demand_err[0].row == 5 and demand_err[0].date == "2023-01-05"
    assert demand_err[0].column == "demand"
    assert temp_err[0].row == 7 and temp_err[0].column == "temperature"


@pytest.mark.parametrize("value", [0.0, -12.5])
def test_zero_or_negative_demand_is_an_error(value):
    frame = table()
    frame.loc[20, "demand"] = value
    report = check_history(as_bytes(to_csv(frame)))
    errors = only(report, "error", "must be above zero")
    assert len(errors) == 1
    assert errors[0].row == 21 and errors[0].date == "2023-01-21"
    assert "logarithm" in errors[0].message


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


@pytest.mark.parametrize(("value", "unit"), [(61.0, "C"), (-61.0, "C"), (150.0, "F")])
def test_implausible_temperatures_are_errors(value, unit):
    frame = table()
    frame["temperature"] = 50.0 if unit == "F" else 10.0
    frame.loc[7, "temperature"] = value
    report = check_history(as_bytes(to_csv(frame)), HistorySettings(temp_unit=unit))
    errors = only(report, "error", "outside the plausible range")
    assert len(errors) == 1 and errors[0].row == 8 and errors[0].column == "temperature"


def test_fahrenheit_file_read_as_celsius_gets_a_hint():
    frame = table()
    frame["temperature"] = 95.0
    report = check_history(as_bytes(to_csv(frame)))
    assert "temp_unit to 'F'" in report.errors[0].fix


def test_repeated_issues_are_capped_with_a_count():
    """A 50,000-row file with a bad value on every row still gives a short report."""
    dates = pd.date_range("1900-01-01", periods=50_000, freq="D")
    lines = ["date,demand,temperature"] + [f"{d:%Y-%m-%d},n/a?,12" for d in dates]
    report = check_history(as_bytes(lines))
    errors = report.errors
    assert len(errors) == MAX_LISTED + 1
    assert [e.row for e in errors[:MAX_LISTED]] == list(range(1, MAX_LISTED + 1))
    assert "49980 more" in errors[-1].message and "50000 in all" in errors[-1].message
    assert "rows 21 to 50000" in errors[-1].message
    assert len(report.to_text().splitlines()) == MAX_LISTED + 2


# ---------------------------------------------------------------------------------------------
# Nothing dropped silently
# ---------------------------------------------------------------------------------------------


def test_blank_rows_lines_before_the_header_and_extra_columns_are_reported():
    lines = ["Calder Basin Power & Light export", "generated by hand"]
    body = to_csv(table())
    body = [line + ",x" for line in body]
    body[0] = "date,demand,temperature,comment"
    body.insert(6, "")
    report = check_history(as_bytes(lines + body))
    assert report.ok
    assert only(report, "info", "first 2 line(s) before the header")
    assert only(report, "info", "'comment'")
    blank = only(report, "info", "blank and was ignored")
    assert [i.row for i in blank] == [6]


def test_rows_with_too_few_fields_are_errors():
    lines = to_csv(table())
    lines[9] = "2023-01-09"
    errors = only(check_history(as_bytes(lines)), "error", "field(s)")
    assert errors and errors[0].row == 9


def test_unsorted_rows_are_sorted_and_reported():
    lines = to_csv(table())
    body = lines[1:][::-1]
    history = read_history(as_bytes([lines[0], *body]))
    assert history.frame.index.is_monotonic_increasing
    assert only(history.report, "info", "sorted by date")
    assert history.fingerprint == read_history(clean_bytes()).fingerprint


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


def test_non_utf8_file_is_read_and_noted():
    lines = to_csv(table(), header=("Datum", "Last", "Température"))
    settings_ = HistorySettings(date_col="datum", demand_col="last", temp_col="température")
    history = read_history(("\n".join(lines)).encode("cp1252"), settings_)
    assert only(history.report, "info", "not UTF-8")


# ---------------------------------------------------------------------------------------------
# Sources, errors, report, fingerprint
# ---------------------------------------------------------------------------------------------


def test_all_source_kinds_give_the_same_history(tmp_path):
    data = clean_bytes()
    path = tmp_path / "history.csv"
    path.write_bytes(data)
    frame = table()
    indexed = frame.set_index("date")
    prints = {
        read_history(data).fingerprint,
        read_history(path).fingerprint,
        read_history(str(path)).fingerprint,
        read_history(io.BytesIO(data)).fingerprint,
        read_history(io.StringIO(data.decode())).fingerprint,
        read_history(frame).fingerprint,
        read_history(indexed).fingerprint,
        read_history(frame.astype(str)).fingerprint,
    }
    assert len(prints) == 1


def test_missing_file_is_reported_not_raised_as_traceback(tmp_path):
    path = tmp_path / "nope.csv"
    report = check_history(path)
    assert not report.ok and str(path) in report.errors[0].message
    with pytest.raises(HistoryError) as err:
        read_history(path)
    assert err.value.report is not None and not err.value.report.ok
    assert "does not exist" in str(err.value)


def test_empty_inputs():
    assert "empty" in check_history(b"").errors[0].message
    assert "no data rows" in check_history(b"date,demand,temperature\n").errors[0].message
    assert "cannot be read from" in check_history(12345).errors[0].message


def test_history_error_carries_the_report_and_names_the_place():
    frame = table()
    frame.loc[4, "demand"] = -1.0
    frame.loc[9, "demand"] = -2.0
    with pytest.raises(HistoryError) as err:
        read_history(as_bytes(to_csv(frame)))
    text = str(err.value)
    assert "row 5" in text and "column demand" in text and "1 more problem" in text
    assert len(err.value.report.errors) == 2


def test_report_frame_and_text():
    frame = table()
    frame.loc[4, "demand"] = -1.0
    report = check_history(as_bytes(to_csv(frame)))
    table_ = report.to_frame()
    assert list(table_.columns) == ["severity", "row", "date", "column", "message", "fix"]
    assert table_.loc[0, "row"] == 5 and table_.loc[0, "severity"] == "error"
    text = report.to_text()
    assert text.startswith("History check: 1 error(s)")
    assert "row 5, date 2023-01-05, column demand" in text
    assert HistoryReport().to_frame().empty


def test_fingerprint_is_stable_and_sensitive():
    a = read_history(clean_bytes())
    b = read_history(clean_bytes())
    assert a.fingerprint == b.fingerprint and len(a.fingerprint) == 64
    frame = table()
    frame.loc[200, "demand"] += 0.1
    assert read_history(as_bytes(to_csv(frame))).fingerprint != a.fingerprint


def test_settings_are_checked():
    with pytest.raises(HistoryError, match="temp_unit"):
        HistorySettings(temp_unit="K")
    with pytest.raises(HistoryError, match="subdaily_demand"):
        HistorySettings(subdaily_demand="mean")
    with pytest.raises(HistoryError, match="max_temp_gap_days"):
        HistorySettings(max_temp_gap_days=-1)
    assert HistorySettings(temp_unit="°f").temp_unit == "F"


def test_history_from_frame_matches_read_history():
    read = read_history(clean_bytes())
    built = history_from_frame(read.frame[["demand", "temperature_c"]])
    assert isinstance(built, History)
    assert built.fingerprint == read.fingerprint
    pd.testing.assert_frame_equal(built.frame, read.frame)


def test_history_from_frame_adds_missing_days_and_checks_values():
    frame = pd.DataFrame(
        {"demand": [100.0, 110.0, 120.0], "temperature_c": [1.0, 2.0, 3.0]},
        index=pd.to_datetime(["2024-01-01", "2024-01-02", "2024-01-04"]),
    )
    built = history_from_frame(frame)
    assert len(built.frame) == 4 and np.isnan(built.frame["demand"].iloc[2])
    assert built.frame["temperature_c"].iloc[2] == pytest.approx(2.5)
    assert list(built.frame["temperature_filled"]) == [False, False, True, False]
    with pytest.raises(HistoryError, match="Temperature is missing"):
        history_from_frame(frame.assign(temperature_c=[np.nan, 2.0, 3.0]))
    with pytest.raises(HistoryError, match="above zero"):
        history_from_frame(frame.assign(demand=[100.0, 0.0, 1.0]))
    with pytest.raises(HistoryError, match="temperature_c"):
        history_from_frame(frame[["demand"]])


def test_reading_the_demo_file_twice_is_deterministic(repo_root: Path, demo_history):
    again = read_history(repo_root / "demo_data" / "history.csv")
    assert again.fingerprint == demo_history.fingerprint


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.binary(max_size=400) | st.text(max_size=400).map(str.encode))
def test_check_history_never_raises_on_junk(data):
    report = check_history(b"date,demand,temperature\n" + data)
    assert isinstance(report, HistoryReport)
    assert not report.ok  # never a year of history
    assert not any("unexpected problem" in i.message for i in report.issues)
