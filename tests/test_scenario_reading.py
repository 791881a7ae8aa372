"""Scenario files read like histories (issue 11, items 13, 14, 17, 18).

Item 17: semicolon, tab and pipe files are read (the delimiter and header found by the code the
history reader uses, loadcore.tables), with decimal commas where the file uses them. Item 18: a
file far past the day limit is refused after reading only its head (no full parse of two
million rows). Item 13: dates with mixed UTC offsets (CSV and JSON) end well. Item 14: ZIP, XLSX
and UTF-16 files are named for what they are.
"""

from __future__ import annotations

import io
import json
import zipfile

import numpy as np
import pandas as pd
import pytest

from loadcore import tables
from loadcore.errors import InputError, LoadcoreError, ScenarioError
from loadcore.history import reading
from loadcore.scenario import MAX_DAYS, Scenario, read_scenario_csv
from loadcore.scenario.csv_files import HEAD_BYTES

DATES = pd.date_range("2031-07-01", periods=5, freq="D")


def _text(sep: str, decimal: str = ".", notes: str = "") -> str:
    rows = [sep.join(["date", "temperature", "day_type"])]
    for i, d in enumerate(DATES):
        temp = f"{20.5 + i}".replace(".", decimal)
        rows.append(sep.join([f"{d:%Y-%m-%d}", temp, "holiday" if i == 2 else ""]))
    return notes + "\n".join(rows) + "\n"


@pytest.mark.parametrize("sep", [",", ";", "\t", "|"])
def test_every_delimiter_is_read(sep):
    scenario = read_scenario_csv(_text(sep).encode())
    np.testing.assert_allclose(scenario.temperature_c, 20.5 + np.arange(5))
    assert scenario.day_types == ("", "", "holiday", "", "")


def test_decimal_commas_in_a_semicolon_file_and_notes_above_the_header():
    scenario = read_scenario_csv(
        _text(";", ",", notes="Hot week, drafted by planning\n\n").encode()
    )
    np.testing.assert_allclose(scenario.temperature_c, 20.5 + np.arange(5))


def test_the_history_reader_and_the_scenario_reader_share_the_delimiter_code():
    assert reading.DELIMITERS is tables.DELIMITERS
    lines = _text("\t").splitlines()
    assert tables.detect_delimiter(lines, ("date", "temperature")) == "\t"


class CountingFile(io.RawIOBase):
    """A readable file of ``rows`` scenario rows that counts the bytes handed out."""

    def __init__(self, rows: int):
        self.data = ("date,temperature\n" + "2031-01-01,20\n" * rows).encode()
        self.given = 0
        self.name = "huge.csv"

    def readable(self) -> bool:
        return True

    def read(self, n: int = -1) -> bytes:
        n = len(self.data) - self.given if n is None or n < 0 else n
        chunk = self.data[self.given : self.given + n]
        self.given += len(chunk)
        return chunk


def test_a_two_million_row_file_is_refused_after_reading_its_head():
    source = CountingFile(2_000_000)
    with pytest.raises(ScenarioError, match=f"more than {MAX_DAYS} days"):
        read_scenario_csv(source)
    assert source.given <= HEAD_BYTES + 1 < len(source.data) / 10


def test_a_long_file_on_disk_stops_at_the_limit(tmp_path):
    path = tmp_path / "long.csv"
    dates = pd.date_range("2031-01-01", periods=400, freq="D")
    path.write_text("date,temperature\n" + "".join(f"{d:%Y-%m-%d},20\n" for d in dates))
    with pytest.raises(ScenarioError, match="more than"):
        read_scenario_csv(path)


def test_a_file_of_few_but_huge_rows_is_refused_by_size(tmp_path):
    path = tmp_path / "wide.csv"
    path.write_text("date,temperature,notes\n" + f"2031-01-01,20,{'x' * (3 * HEAD_BYTES)}\n")
    with pytest.raises(LoadcoreError) as caught:
        read_scenario_csv(path)
    assert len(str(caught.value)) < 600


def test_mixed_utc_offsets_in_a_csv_keep_each_local_day():
    text = (
        "date,temperature\n2031-01-01T00:00:00+01:00,5\n2031-01-02T00:00:00-05:00,6\n"
        "2031-01-03T00:00:00Z,7\n2031-01-04,8\n"
    )
    scenario = read_scenario_csv(text)
    assert list(scenario.dates.strftime("%Y-%m-%d")) == [
        "2031-01-01",
        "2031-01-02",
        "2031-01-03",
        "2031-01-04",
    ]


def test_mixed_utc_offsets_in_a_definition_keep_each_local_day():
    days = [
        {"date": "2031-01-01T00:00:00+01:00", "temperature_c": 5},
        {"date": "2031-01-02T00:00:00-05:00", "temperature_c": 6},
        {"date": "2031-01-03T23:30:00+14:00", "temperature_c": 7},
    ]
    doc = {"kind": "loadcore scenario", "version": 1, "name": "x", "days": days}
    scenario = Scenario.from_json(json.dumps(doc))
    assert scenario.horizon == 3 and scenario.start == pd.Timestamp("2031-01-01")


def _xlsx_bytes() -> bytes:
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w") as archive:
        archive.writestr("[Content_Types].xml", "<Types/>")
        archive.writestr("xl/workbook.xml", "<workbook/>")
    return buffer.getvalue()


def _zip_bytes() -> bytes:
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w") as archive:
        archive.writestr("scenario.csv", _text(","))
    return buffer.getvalue()


@pytest.mark.parametrize(
    ("data", "words"),
    [
        (_xlsx_bytes(), "Excel workbook (XLSX)"),
        (_zip_bytes(), "ZIP archive"),
        (_text(",").encode("utf-16"), "UTF-16"),
        (_text(",").encode("utf-16-le"), "UTF-16"),
    ],
    ids=["xlsx", "zip", "utf16-bom", "utf16-le"],
)
def test_spreadsheets_and_utf16_are_named(data, words):
    with pytest.raises(InputError) as caught:
        read_scenario_csv(data)
    assert words in str(caught.value) and "UTF-8" in str(caught.value)


@pytest.mark.parametrize(
    ("data", "words"),
    [
        (_xlsx_bytes(), "Excel workbook (XLSX), not a JSON file"),
        (_zip_bytes(), "ZIP archive, not a JSON file"),
        ('{"kind": "loadcore scenario"}'.encode("utf-16"), "UTF-16"),
        ('{"kind": "loadcore scenario"}'.encode("utf-16-le"), "UTF-16"),
    ],
    ids=["xlsx", "zip", "utf16-bom", "utf16-le"],
)
def test_json_readers_name_spreadsheets_and_utf16(data, words):
    """Model files and scenario definitions say what such a file is (item 14)."""
    from loadcore.model import load_model

    for reader in (load_model, Scenario.from_json):
        with pytest.raises(LoadcoreError) as caught:
            reader(data)
        assert words in str(caught.value), str(caught.value)
