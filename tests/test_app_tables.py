"""Tables in planner words (issue 10, section 3, defect 7).

Every table the app shows has headers without internal names (no ``snake_case``, units named),
numbers with a set number of digits, dates and times in a readable layout, and counts that agree
with each other (the Model page's candidates). Backtest coverage shows no "up" arrow.
"""

from __future__ import annotations

import json

import pandas as pd
import pytest
from test_app_backtests import _short_model
from test_app_ensembles import SMALL, _run
from test_app_support import (
    assert_no_exception,
    demo_model,
    heat_wave_by_loadcore,
    heat_wave_settings,
    new_app,
)

from loadcore.library import ScenarioLibrary, entry_from_forecast


def assert_planner_table(element) -> None:
    """Each shown column: a label without underscores; floats with a format; dates formatted."""
    config = json.loads(element.proto.columns or "{}")
    frame = element.value
    for column in frame.columns:
        cfg = config.get(str(column)) or {}
        if cfg.get("hidden"):
            continue
        label = cfg.get("label", str(column))
        assert "_" not in label, (label, list(frame.columns))
        kind = frame[column].dtype
        fmt = (cfg.get("type_config") or {}).get("format")
        if pd.api.types.is_float_dtype(kind):
            assert fmt, f"{label}: no number format"
        if pd.api.types.is_datetime64_any_dtype(kind):
            assert fmt, f"{label}: no date format"
        if (pd.api.types.is_object_dtype(kind) or pd.api.types.is_string_dtype(kind)) and len(
            frame
        ):
            values = frame[column].dropna().astype(str)
            assert not values.isin(["None", "nan", "True", "False"]).any(), label
            assert not values.str.match(r"\d{4}-\d\d-\d\dT\d\d:").any(), label


def _all_tables(at) -> None:
    assert at.dataframe, "no table shown"
    for element in at.dataframe:
        assert_planner_table(element)


def test_the_model_pages_tables_and_counts_agree():
    model = demo_model()
    at = new_app(page="pages/model_fit.py", model=model)
    assert_no_exception(at)
    _all_tables(at)
    metrics = {m.label: m.value for m in at.metric}
    screened = len(model.candidates)
    assert metrics["Error models screened"] == str(screened)
    expander = [e.label for e in at.expander if e.label.startswith("Every candidate")]
    assert expander and f"({screened} screened" in expander[0]
    exact = int(model.candidates["exact_fit"].sum())
    assert f"{exact} fitted exactly" in expander[0]


def test_the_compare_pages_tables():
    model = demo_model()
    hot = heat_wave_by_loadcore(model, heat_wave_settings(model))
    at = new_app(page="pages/compare.py", model=model, scenarios={"Heat wave": hot})
    assert_no_exception(at)
    _all_tables(at)


def test_the_ensemble_table():
    at = new_app(page="pages/ensembles.py", model=demo_model())
    _run(at, SMALL)
    assert_no_exception(at)
    _all_tables(at)


def test_the_backtest_tables_and_no_arrow_for_a_shortfall():
    history, model = _short_model()
    at = new_app(page="pages/backtests.py", model=model, extra={"history": history})
    at.number_input(key="bt_horizon").set_value(3)
    at.number_input(key="bt_origins").set_value(2)
    [b for b in at.get("button") if getattr(b, "label", "") == "Run the backtest"][0].click()
    at.run(timeout=1200)
    assert_no_exception(at)
    _all_tables(at)
    for metric in at.metric:
        assert not metric.proto.delta, (metric.label, metric.proto.delta)


@pytest.fixture
def library_path(tmp_path, monkeypatch):
    path = tmp_path / "scenarios.sqlite"
    monkeypatch.setenv("LOADCORE_LIBRARY", str(path))
    return path


def test_the_library_table(library_path):
    model = demo_model()
    hot = heat_wave_by_loadcore(model, heat_wave_settings(model))
    ScenarioLibrary(library_path).save(
        entry_from_forecast(model.forecast(hot), scenario=hot, model=model)
    )
    at = new_app(page="pages/saved.py", model=model)
    assert_no_exception(at)
    _all_tables(at)


def test_the_history_pages_tables():
    at = new_app(page="pages/history.py", model=demo_model())
    assert_no_exception(at)
    _all_tables(at)
