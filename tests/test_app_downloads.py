"""The app's CSV downloads (issue 10, section 3, defect 8): the one forecast table with its
unit-named temperature column and ``sparse_temperature``, weather ensembles and backtests
downloadable too, every CSV rounded to the digits a planner reads (0.1 °C, 1 MW, 0.1 %)."""

from __future__ import annotations

import io

import pandas as pd
import pytest
from test_app_backtests import _short_model
from test_app_ensembles import SMALL, _run
from test_app_support import (
    assert_no_exception,
    demo_model,
    download_bytes,
    heat_wave_by_loadcore,
    heat_wave_settings,
    new_app,
    recording_downloads,
)

from loadcore.export import forecast_table, round_for_planners, to_csv_bytes
from loadcore.weather import ensemble_forecast, ensemble_table


def _decimals(text: str) -> int:
    return len(text.split(".", 1)[1]) if "." in text else 0


@pytest.mark.parametrize("unit", ["C", "F"])
def test_the_forecast_csv_is_rounded_and_names_its_unit(unit):
    model = demo_model()
    hot = heat_wave_by_loadcore(model, heat_wave_settings(model))
    with recording_downloads():
        at = new_app(
            page="pages/compare.py",
            model=model,
            scenarios={"Heat wave": hot},
            extra={"temp_unit": unit},
        )
        data = download_bytes(at, "cmp_csv")
    assert_no_exception(at)
    expected = round_for_planners(forecast_table([model.forecast(hot)], temp_unit=unit))
    assert data == to_csv_bytes(expected)
    rows = pd.read_csv(io.BytesIO(data), dtype=str)
    temp = f"temperature_{unit.lower()}"
    assert {temp, "sparse_temperature", f"out_of_range_by_{unit.lower()}"} <= set(rows.columns)
    assert max(_decimals(v) for v in rows[temp]) <= 1
    for column in ("mean", "median", "lower_80", "upper_95"):
        assert max(_decimals(v) for v in rows[column]) == 0


def test_the_weather_ensemble_downloads_rounded():
    model = demo_model()
    with recording_downloads():
        at = new_app(page="pages/ensembles.py", model=model)
        _run(at, SMALL)
        data = download_bytes(at, "ens_csv")
    assert_no_exception(at)
    expected = ensemble_forecast(
        model,
        days=SMALL["days"],
        shift_days=SMALL["shift"],
        paths_per_trace=SMALL["paths"],
        seed=SMALL["seed"],
        threshold_mw=SMALL["threshold"],
    )
    assert data == to_csv_bytes(round_for_planners(ensemble_table(expected)))


def test_the_backtest_downloads_rounded():
    history, model = _short_model()
    with recording_downloads():
        at = new_app(page="pages/backtests.py", model=model, extra={"history": history})
        at.number_input(key="bt_horizon").set_value(3)
        at.number_input(key="bt_origins").set_value(2)
        [b for b in at.get("button") if getattr(b, "label", "") == "Run the backtest"][0].click()
        at.run(timeout=1200)
        by_horizon = download_bytes(at, "bt_csv")
        every = download_bytes(at, "bt_forecasts_csv")
    assert_no_exception(at)
    result = at.session_state["backtest"]["result"]
    assert by_horizon == to_csv_bytes(round_for_planners(result.by_horizon))
    assert every == to_csv_bytes(round_for_planners(pd.DataFrame(result.forecasts)))
