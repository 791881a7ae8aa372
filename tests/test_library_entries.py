"""Tests for loadcore.library.entries: entries from forecasts, plain settings, is_current."""

from __future__ import annotations

import json
from dataclasses import dataclass, field

import numpy as np
import pandas as pd
import pytest
from library_support import (
    FakeModel,
    FakeSettings,
    FakeTerms,
    forecast_table,
    make_entry,
)

from loadcore import library as lib
from loadcore.library import (
    ScenarioLibrary,
    entry_from_forecast,
    is_current,
    settings_to_dict,
)
from loadcore.scenario import constant_path, make_scenario


@pytest.fixture()
def library(tmp_path) -> ScenarioLibrary:
    return ScenarioLibrary(tmp_path / "lib.sqlite")


# ---------------------------------------------------------------------------------------------
# model fingerprints and entries from model objects


def test_is_current_compares_fingerprint_and_settings(library):
    saved = library.save(make_entry())
    assert is_current(saved, FakeModel())
    assert not is_current(saved, FakeModel(fingerprint="0" * 64))
    assert not is_current(saved, FakeModel(settings=FakeSettings(ar_up_to=3)))
    assert not is_current(saved, FakeModel(settings=FakeSettings(terms=FakeTerms("degree_days"))))
    assert not is_current(saved, object())


def test_settings_to_dict_prefers_to_dict_and_is_plain_json():
    class WithToDict:
        def to_dict(self):
            return {"b": (1, 2), "a": pd.Timestamp("2031-01-01")}

    assert settings_to_dict(WithToDict()) == {"a": "2031-01-01", "b": [1, 2]}
    plain = settings_to_dict(FakeSettings())
    assert plain == json.loads(json.dumps(plain))
    assert plain["terms"] == {"response": "quadratic", "reference_temp_c": 18.0}
    assert plain["holidays"] == ["US"]


def test_entry_from_forecast_with_contract_shaped_objects(library):
    @dataclass(frozen=True)
    class HistorySettings:
        demand_unit: str = "MW"
        subdaily_demand: str = "peak"

    @dataclass(frozen=True)
    class FakeHistory:
        frame: pd.DataFrame
        settings: HistorySettings = field(default_factory=HistorySettings)

    @dataclass(frozen=True)
    class Model(FakeModel):
        history: FakeHistory | None = None
        order: tuple = (1, 0, 1)
        seasonal_order: tuple = (1, 0, 0, 7)

    @dataclass(frozen=True)
    class Fc:
        frame: pd.DataFrame
        levels: tuple = (80, 95)
        scenario_name: str = "Hot"
        note: str = "plus 2 °C"

        def warnings(self):
            return ["2031-07-03: 41.0 °C is 1.0 °C above the fitted range"]

    hist = pd.DataFrame(
        {"demand": np.arange(100, dtype=float), "temperature_c": 20.0},
        index=pd.date_range("2031-03-23", periods=100, freq="D", name="date"),
    )
    model = Model(history=FakeHistory(hist))
    scenario = make_scenario("Hot", constant_path("2031-07-01", 14, 32.0))
    entry = entry_from_forecast(Fc(forecast_table()), scenario=scenario, model=model, author="me")
    assert entry.name == "Hot" and entry.note == "plus 2 °C" and entry.author == "me"
    assert len(entry.context["history_tail"]) == lib.HISTORY_TAIL_DAYS
    assert entry.context["history_tail"][-1] == {"date": "2031-06-30", "demand": 99.0}
    assert entry.context["history_period"] == ["2031-03-23", "2031-06-30"]
    assert entry.context["model_summary"]["Error model"].startswith("AR 1 · MA 1 | weekly AR 1")
    saved = library.save(entry)
    assert is_current(saved, model)
    tail = saved.history_tail()
    assert len(tail) == lib.HISTORY_TAIL_DAYS and tail.index[-1] == pd.Timestamp("2031-06-30")
    assert saved.to_forecast().warnings() == Fc(forecast_table()).warnings()
