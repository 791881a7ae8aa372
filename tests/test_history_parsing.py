"""Tests for loadcore.history.parsing: date formats, UTC offsets and numbers."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from history_support import (
    START,
    as_bytes,
    clean_bytes,
    only,
    table,
    to_csv,
)

from loadcore.history import (
    HistorySettings,
    check_history,
    read_history,
)


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


def test_decimal_commas_in_a_semicolon_file():
    lines = [line.replace(".", ",") for line in to_csv(table(), sep=";")]
    history = read_history(as_bytes(lines))
    np.testing.assert_allclose(history.frame["demand"], table()["demand"])


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
