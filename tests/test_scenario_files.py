"""Scenario files: the JSON definition and scenario CSVs."""

from __future__ import annotations

import io
import json

import numpy as np
import pytest

from loadcore.errors import InputError, ScenarioError
from loadcore.scenario import (
    Scenario,
    cold_snap,
    constant_path,
    heat_wave,
    make_scenario,
    read_scenario_csv,
    write_scenario_csv,
)


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


def test_definition_json_goes_through_the_depth_capped_reader():
    """Scenario definitions are read by loadcore.plainjson.loads: deep nesting and NaN are
    refused with a ScenarioError, not a crash."""
    with pytest.raises(ScenarioError, match="nests"):
        Scenario.from_json("[" * 5000 + "]" * 5000)
    scen = make_scenario("x", constant_path("2026-07-01", 2, 20.0))
    text = scen.to_json().replace("20.0", "NaN", 1)
    with pytest.raises(ScenarioError, match="not valid JSON"):
        Scenario.from_json(text)
    assert Scenario.from_json(scen.to_json().encode("utf-8")) == scen
