"""Scenario minima: an optional daily minimum temperature per day, in files and definitions."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from loadcore.errors import ScenarioError
from loadcore.scenario import Scenario, read_scenario_csv, write_scenario_csv

DATES = pd.date_range("2027-01-01", periods=4, freq="D", name="date")


def test_minima_are_optional_and_blanks_stay_blank():
    plain = Scenario("s", DATES, [5.0, 6.0, 7.0, 8.0])
    assert plain.temperature_min_c is None
    some = Scenario("s", DATES, [5.0, 6.0, 7.0, 8.0], temperature_min_c=[-1.0, None, "", 2.5])
    np.testing.assert_array_equal(some.temperature_min_c, [-1.0, np.nan, np.nan, 2.5])
    blank = Scenario("s", DATES, [5.0, 6.0, 7.0, 8.0], temperature_min_c=[None] * 4)
    assert blank.temperature_min_c is None
    assert some != plain and some == Scenario("s", DATES, [5, 6, 7, 8], None, [-1, "", "", 2.5])


@pytest.mark.parametrize(
    ("minima", "message"),
    [
        ([0, 0, "cold", 0], "not a number"),
        ([0, 0, 0, 12.0], "above the day's maximum"),
        ([0, 0, -75, 0], "outside the plausible range"),
        ([0, 0], "4 dates but 2 minimum"),
    ],
)
def test_bad_minima_name_the_day(minima, message):
    with pytest.raises(ScenarioError, match=message) as err:
        Scenario("s", DATES, [5.0, 6.0, 7.0, 8.0], temperature_min_c=minima)
    if len(minima) == 4:
        assert "2027-01-0" in str(err.value)


def test_minima_survive_the_definition_and_the_csv_file_in_either_unit():
    scenario = Scenario("s", DATES, [5.0, 6.0, 7.0, 8.0], temperature_min_c=[-1.0, None, 0, 2])
    again = Scenario.from_json(scenario.to_json())
    assert again == scenario
    for unit in ("C", "F"):
        text = write_scenario_csv(scenario, temp_unit=unit)
        assert "temperature_min" in text.splitlines()[0]
        back = read_scenario_csv(text, temp_unit=unit, name="s")
        np.testing.assert_allclose(back.temperature_min_c, scenario.temperature_min_c, atol=1e-3)
    assert "temperature_min" not in write_scenario_csv(Scenario("s", DATES, [1, 2, 3, 4]))


def test_a_csv_minimum_that_is_not_a_number_names_row_and_column():
    text = "date,temperature,tmin\n2027-01-01,5,1\n2027-01-02,6,warm\n"
    with pytest.raises(ScenarioError) as err:
        read_scenario_csv(text, temp_min_col="tmin")
    message = str(err.value)
    assert "'warm'" in message and "row 2" in message and "tmin" in message
    assert "blank" in message
    ok = read_scenario_csv(
        "date,temperature,tmin\n2027-01-01,5,1\n2027-01-02,6,\n", temp_min_col="tmin"
    )
    np.testing.assert_array_equal(ok.temperature_min_c, [1.0, np.nan])
