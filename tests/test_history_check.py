"""Tests for loadcore.history.check and settings: units, plausible values, errors, junk input."""

from __future__ import annotations

import pytest
from history_support import (
    as_bytes,
    only,
    table,
    to_csv,
)
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from loadcore.errors import HistoryError
from loadcore.history import (
    HistoryReport,
    HistorySettings,
    check_history,
    read_history,
)


def test_settings_are_checked():
    with pytest.raises(HistoryError, match="temp_unit"):
        HistorySettings(temp_unit="K")
    with pytest.raises(HistoryError, match="subdaily_demand"):
        HistorySettings(subdaily_demand="mean")
    with pytest.raises(HistoryError, match="max_temp_gap_days"):
        HistorySettings(max_temp_gap_days=-1)
    assert HistorySettings(temp_unit="°f").temp_unit == "F"


def test_fahrenheit_is_converted_to_celsius():
    """°C = (°F - 32) * 5/9 (NIST Special Publication 811, appendix B; from memory)."""
    frame = table()
    frame["temperature"] = 50.0
    frame.loc[3, "temperature"] = 212.0 - 100.0  # 112 °F
    history = read_history(as_bytes(to_csv(frame)), HistorySettings(temp_unit="F"))
    assert history.frame["temperature_c"].iloc[0] == pytest.approx(10.0)
    assert history.frame["temperature_c"].iloc[3] == pytest.approx(80.0 * 5 / 9)


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


@pytest.mark.parametrize("value", [0.0, -12.5])
def test_zero_or_negative_demand_is_an_error(value):
    frame = table()
    frame.loc[20, "demand"] = value
    report = check_history(as_bytes(to_csv(frame)))
    errors = only(report, "error", "must be above zero")
    assert len(errors) == 1
    assert errors[0].row == 21 and errors[0].date == "2023-01-21"
    assert "logarithm" in errors[0].message


def test_history_error_carries_the_report_and_names_the_place():
    frame = table()
    frame.loc[4, "demand"] = -1.0
    frame.loc[9, "demand"] = -2.0
    with pytest.raises(HistoryError) as err:
        read_history(as_bytes(to_csv(frame)))
    text = str(err.value)
    assert "row 5" in text and "column demand" in text and "1 more problem" in text
    assert len(err.value.report.errors) == 2


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.binary(max_size=400) | st.text(max_size=400).map(str.encode))
def test_check_history_never_raises_on_junk(data):
    report = check_history(b"date,demand,temperature\n" + data)
    assert isinstance(report, HistoryReport)
    assert not report.ok  # never a year of history
    assert not any("unexpected problem" in i.message for i in report.issues)
