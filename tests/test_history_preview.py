"""loadcore.history.preview: columns, delimiter and guesses from a file's first lines."""

from __future__ import annotations

import pytest

from loadcore.errors import InputError
from loadcore.history.preview import preview_history_file


def _rows(header: str, sep: str, rows: list[str]) -> bytes:
    return (header + "\n" + "\n".join(rows) + "\n").encode()


@pytest.mark.parametrize("sep", [",", ";", "\t", "|"])
def test_the_delimiter_and_the_columns_are_found(sep):
    data = _rows(
        sep.join(["Timestamp", "System load MW", "Temp C"]),
        sep,
        [sep.join([f"2024-03-{d:02d}", f"{1500 + d}", f"{10 + d / 10:.1f}"]) for d in range(1, 20)],
    )
    found = preview_history_file(data)
    assert found.delimiter == sep
    assert found.columns == ("Timestamp", "System load MW", "Temp C")
    assert found.guesses["date_col"] == "Timestamp"
    assert found.guesses["demand_col"] == "System load MW"
    assert found.guesses["temp_col"] == "Temp C"
    assert found.date_layouts == ("YYYY-MM-DD",)
    assert found.unit_hint == "C"


def test_day_first_or_month_first_is_left_open_when_the_sample_cannot_tell():
    data = _rows("date,demand,tmax", ",", [f"0{d}/0{d + 1}/2024,1500,85" for d in range(1, 8)])
    found = preview_history_file(data)
    assert set(found.date_layouts) == {"DD/MM/YYYY (day first)", "MM/DD/YYYY (month first)"}
    assert found.unit_hint == "F"  # a typical daily high of 85 is °F (common practice)


def test_hour_and_minimum_columns_are_guessed():
    data = _rows("day,HE,load,tmax,tmin", ",", ["2024-01-01,1,900,5,1"] * 6)
    found = preview_history_file(data)
    assert found.guesses["hour_col"] == "HE" and found.guesses["temp_min_col"] == "tmin"


def test_a_spreadsheet_is_refused_with_the_file_policys_message():
    with pytest.raises(InputError):
        preview_history_file(b"PK\x03\x04" + b"\x00" * 200)
