"""Refusing temperature terms the history cannot identify (issue 11, item 11).

Before the check a constant temperature gave a "significant" +14 %/°C effect and a "lowest
demand at -7 °C". The variance-inflation rule follows Belsley, Kuh and Welsch (1980),
*Regression Diagnostics*; the thresholds are the module's own choices.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from loadcore.calendar import CalendarSpec
from loadcore.cli import main
from loadcore.errors import ModelError
from loadcore.history import history_from_frame
from loadcore.model import FitSettings, TermSpec, fit

SETTINGS = FitSettings(
    search="quick",
    terms=TermSpec(annual_harmonics=0, trend=False),
    calendar=CalendarSpec(country=None, scheme="simple"),
)


def _history(temperature: np.ndarray, seed: int = 3) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    n = len(temperature)
    idx = pd.date_range("2021-01-04", periods=n, freq="D", name="date")
    weekend = (idx.day_of_week >= 5).astype(float)
    log_d = 7.0 + 0.002 * (temperature - 18.0) ** 2 - 0.1 * weekend + rng.normal(0, 0.02, n)
    return pd.DataFrame({"demand": np.exp(log_d), "temperature_c": temperature}, index=idx)


def _seasonal(n: int, seed: int = 4) -> np.ndarray:
    rng = np.random.default_rng(seed)
    doy = np.arange(n)
    return np.round(18 + 10 * np.sin(2 * np.pi * doy / 365.25) + rng.normal(0, 2.5, n), 1)


@pytest.mark.parametrize(
    "temperature",
    [np.full(500, 21.0), 21.0 + 0.1 * (np.arange(500) % 3)],
    ids=["constant", "nearly constant"],
)
def test_a_constant_temperature_is_refused_with_a_fix(temperature):
    history = history_from_frame(_history(temperature))
    with pytest.raises(ModelError) as err:
        fit(history, SETTINGS)
    text = str(err.value)
    assert "nearly constant" in text and "sensor" in text


def test_a_constant_temperature_through_the_cli_is_one_line(tmp_path, capsys):
    path = tmp_path / "flat.csv"
    _history(np.full(500, 21.0)).rename(columns={"temperature_c": "temperature"}).to_csv(path)
    code = main(["fit", str(path), "--out", str(tmp_path / "m.json"), "--search", "quick"])
    err = capsys.readouterr().err
    assert code == 1
    assert "nearly constant" in err and "Traceback" not in err
    assert not (tmp_path / "m.json").exists()


def test_a_degree_day_base_outside_the_history_is_refused():
    history = history_from_frame(_history(_seasonal(600)))
    settings = FitSettings(
        search="quick",
        terms=TermSpec(
            response="degree_days",
            heating_base_c=-30.0,
            cooling_base_c=22.0,
            annual_harmonics=0,
            trend=False,
        ),
        calendar=CalendarSpec(country=None, scheme="simple"),
    )
    with pytest.raises(ModelError, match="heating"):
        fit(history, settings)


def test_a_temperature_that_is_the_yearly_cycle_is_refused():
    n = 730
    doy = pd.date_range("2021-01-04", periods=n, freq="D").day_of_year.to_numpy()
    # exactly one harmonic of the day of year, as the annual terms are built
    temperature = 18 + 10 * np.sin(2 * np.pi * doy / 365.25)
    history = history_from_frame(_history(temperature))
    settings = FitSettings(
        search="quick",
        terms=TermSpec(annual_harmonics=1, trend=False),
        calendar=CalendarSpec(country=None, scheme="simple"),
    )
    with pytest.raises(ModelError, match="copy of the other regression"):
        fit(history, settings)


def test_a_narrow_but_real_temperature_range_is_fitted():
    """A tropical-like spread of a few degrees is kept (the check refuses only what cannot be
    identified)."""
    rng = np.random.default_rng(8)
    temperature = np.round(29 + rng.normal(0, 1.5, 500), 1)
    model = fit(history_from_frame(_history(temperature)), SETTINGS)
    low, high = model.temperature_range_c
    assert high - low > 3


def test_column_fixes_name_the_app_field_and_the_option_not_the_setting(tmp_path):
    """Issue 10, defect 9: "Set the temp_col setting" became the app field and the CLI option."""
    from loadcore.history import check_history

    path = tmp_path / "h.csv"
    path.write_text("date,demand,temp\n2024-01-01,1,2\n")
    report = check_history(path)
    fixes = [issue.fix for issue in report.errors]
    assert any("Temperature column" in f and "--temp-col" in f for f in fixes)
    assert not any("temp_col" in f or "setting" in f for f in fixes)
