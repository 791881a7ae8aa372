"""``loadcore scenario``: a scenario file from a saved model, each option and its bad values
(issue 10, part 2)."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from loadcore.cli import main
from loadcore.scenario import (
    Alignment,
    copy_same_days,
    read_scenario_csv,
    seasonal_normal_path,
)


@pytest.fixture(scope="module")
def model_file(demo_model, tmp_path_factory) -> Path:
    path = tmp_path_factory.mktemp("scenario_cli") / "model.json"
    demo_model.save(path)
    return path


def _error(capsys) -> str:
    err = capsys.readouterr().err
    lines = [line for line in err.splitlines() if line.strip()]
    assert lines and "Traceback" not in err, err
    return lines[-1]


def _build(model_file: Path, out: Path, *options: str) -> int:
    return main(["scenario", str(model_file), *options, "--out", str(out)])


def test_a_heat_wave_next_july_names_its_days_at_the_peak_and_its_ramps(
    demo_model, model_file, tmp_path, capsys
):
    """6 days at 41 °C with 2 ramp days each side, beginning on window day 10: days 10-11
    build up, days 12-17 are at the peak, days 18-19 ease off (issue 10, defect 10)."""
    out = tmp_path / "heat_wave.csv"
    start = f"{demo_model.history_end.year + 1}-07-01"
    argv = ("--start", start, "--days", "31", "--heat-wave", "41,6,10", "--ramp-days", "2")
    assert _build(model_file, out, *argv) == 0
    printed = capsys.readouterr().out
    scen = read_scenario_csv(out)
    assert scen.start == pd.Timestamp(start) and scen.horizon == 31
    temps = scen.temperature_c
    normal = seasonal_normal_path(demo_model.history, start, 31).to_numpy()
    assert np.all(temps[11:17] == 41.0)
    assert np.all(
        (temps[[9, 10, 17, 18]] > normal[[9, 10, 17, 18]]) & (temps[[9, 10, 17, 18]] < 41)
    )
    np.testing.assert_allclose(temps[:9], normal[:9], atol=1e-4)
    np.testing.assert_allclose(temps[19:], normal[19:], atol=1e-4)
    year = demo_model.history_end.year + 1
    assert f"6 day(s) at the peak 41.0 °C ({year}-07-12 to {year}-07-17)" in printed
    assert f"2 ramp day(s) before ({year}-07-10 to {year}-07-11)" in printed
    assert "days after the history ends" in printed and "Public safety" in printed


def test_the_help_says_which_days_are_at_the_peak_and_which_are_ramps(capsys):
    assert main(["scenario", "--help"]) == 0
    text = " ".join(capsys.readouterr().out.split())
    assert "DAYS days at PEAK (ramp days not counted)" in text
    assert "RAMP days building up, DAYS days at the peak" in text
    assert "1 to 92 days" in text and "24 months" in text


def test_each_base_path(demo_model, model_file, tmp_path, capsys):
    end = demo_model.history_end
    first = end + pd.Timedelta(days=1)
    out = tmp_path / "a.csv"
    # The default window: the day after the history, 14 days, the seasonal normal.
    assert _build(model_file, out) == 0
    scen = read_scenario_csv(out)
    assert scen.start == first and scen.horizon == 14
    normal = seasonal_normal_path(demo_model.history, first, 14).to_numpy()
    np.testing.assert_allclose(scen.temperature_c, normal, atol=1e-4)
    # A constant in °F is written in °F.
    assert _build(model_file, out, "--base", "constant:77", "--temp-unit", "F", "--days", "3") == 0
    assert "--temp-unit F" in capsys.readouterr().out
    np.testing.assert_allclose(read_scenario_csv(out, temp_unit="F").temperature_c, 25.0)
    # A copy of a past period: the history's own temperatures from that date.
    assert _build(model_file, out, "--base", "copy:2024-07-01", "--days", "5") == 0
    hist = demo_model.history.frame["temperature_c"]
    np.testing.assert_allclose(
        read_scenario_csv(out).temperature_c, hist["2024-07-01":"2024-07-05"].to_numpy(), atol=1e-4
    )
    # The same days of an earlier year, by date and by weekday.
    start = f"{end.year + 1}-07-01"
    for base, alignment in (
        ("same-days", Alignment.BY_DATE),
        ("same-weekdays", Alignment.BY_WEEKDAY),
    ):
        assert _build(model_file, out, "--base", base, "--start", start, "--days", "10") == 0
        expected = copy_same_days(demo_model.history, start, 10, alignment).to_numpy()
        np.testing.assert_allclose(read_scenario_csv(out).temperature_c, expected, atol=1e-4)
    # A shift moves the base; the cold snap's lowest days stay at the lowest.
    argv = ("--base", "constant:10", "--shift", "-3", "--cold-snap", "-12,2,2", "--days", "6")
    assert _build(model_file, out, *argv) == 0
    temps = read_scenario_csv(out).temperature_c
    np.testing.assert_allclose(temps[[0, 5]], 7.0)
    np.testing.assert_allclose(temps[2:4], -12.0)
    assert -12 < temps[1] < 7 and -12 < temps[4] < 7


def test_a_json_definition_is_accepted_wherever_a_scenario_csv_is(
    demo_model, model_file, tmp_path, capsys
):
    """``--out x.json`` writes the app's definition; ``forecast`` and ``scenarios save`` read it."""
    definition = tmp_path / "july.json"
    start = f"{demo_model.history_end.year + 1}-07-01"
    assert _build(model_file, definition, "--start", start, "--days", "31", "--name", "July") == 0
    data = json.loads(definition.read_text())
    assert data["kind"] == "loadcore scenario" and len(data["days"]) == 31
    forecast = tmp_path / "july_forecast.csv"
    argv = ["forecast", str(model_file), str(definition), "--out", str(forecast)]
    assert main(argv) == 0
    table = pd.read_csv(forecast)
    assert table["date"].iloc[0] == start and len(table) == 31
    db = tmp_path / "lib.sqlite"
    argv = ["scenarios", "save", str(definition), "--name", "July normal"]
    assert main([*argv, "--model", str(model_file), "--db", str(db)]) == 0
    assert "31 days" in capsys.readouterr().out


@pytest.mark.parametrize(
    ("options", "code", "words"),
    [
        (("--base", "warm"), 2, "is not a base path"),
        (("--base", "constant:hot"), 2, "is not a temperature"),
        (("--heat-wave", "41"), 2, "needs 2 or 3 values"),
        (("--heat-wave", "41,0"), 2, "number of days at the peak"),
        (("--heat-wave", "hot,3"), 2, "is not a temperature"),
        (("--cold-snap", "-10,3,0"), 2, "start day"),
        (("--cold-snap=-10,3,x",), 2, "start day"),
        (("--ramp-days", "-1"), 2, "ramp days"),
        (("--shift", "nan"), 2, "not a finite number"),
        (("--days", "0"), 1, "at least 1"),
        (("--days", "93"), 1, "more than the 92 allowed"),
        (("--start", "someday"), 1, "is not a date"),
        (("--start", "2021-06-01"), 1, "Start the scenario on a day from"),
        (("--start", "2035-06-01"), 1, "more than 24 months"),
        (("--heat-wave", "41,13"), 1, "longer than the 14-day window"),
        (("--heat-wave", "41,3,12"), 1, "past the window's last day"),
        (("--base", "copy:1999-01-01"), 1, "Pick a period inside the history"),
    ],
)
def test_bad_values_get_clear_messages(model_file, tmp_path, capsys, options, code, words):
    out = tmp_path / "bad.csv"
    assert _build(model_file, out, *options) == code
    line = _error(capsys)
    assert words in line and "error" in line
    assert not out.exists()
