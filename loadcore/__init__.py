"""loadcore: scenario planning for weather-driven daily electricity demand.

The calls a script or notebook needs, in the order a planner uses them::

    import loadcore

    history = loadcore.read_history("demo_data/history.csv")        # validated daily table
    model = loadcore.fit(history, loadcore.FitSettings())            # choose and fit the model
    start = model.history_end + pd.Timedelta(days=1)
    path = loadcore.heat_wave(loadcore.seasonal_normal_path(history, start, 14), 41.0, 5, 2, 4)
    forecast = model.forecast(loadcore.make_scenario("Heat wave", path))
    forecast.frame                                                   # mean, median, intervals, flags

The names are loaded on first use, so ``import loadcore`` stays quick (the command line imports
only what each command needs). loadcore is a planning aid, not an operating or
reliability-compliance tool; defer to the system operator's procedures, local reliability
standards and licensed engineering judgement.
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING, Any

from loadcore.version import __version__

#: Public name -> the module that defines it.
_PUBLIC = {
    "read_history": "loadcore.history",
    "check_history": "loadcore.history",
    "HistorySettings": "loadcore.history",
    "fit": "loadcore.model",
    "FitSettings": "loadcore.model",
    "TermSpec": "loadcore.model",
    "load_model": "loadcore.model",
    "CalendarSpec": "loadcore.calendar",
    "Override": "loadcore.calendar",
    "make_scenario": "loadcore.scenario",
    "read_scenario_csv": "loadcore.scenario",
    "constant_path": "loadcore.scenario",
    "seasonal_normal_path": "loadcore.scenario",
    "heat_wave": "loadcore.scenario",
    "cold_snap": "loadcore.scenario",
    "copy_period": "loadcore.scenario",
    "shift_path": "loadcore.scenario",
    "backtest": "loadcore.evaluate",
    "ensemble_forecast": "loadcore.weather",
    "ScenarioLibrary": "loadcore.library",
    "forecast_table": "loadcore.export",
    "LoadcoreError": "loadcore.errors",
}

__all__ = [
    "__version__",
    "read_history",
    "check_history",
    "HistorySettings",
    "fit",
    "FitSettings",
    "TermSpec",
    "load_model",
    "CalendarSpec",
    "Override",
    "make_scenario",
    "read_scenario_csv",
    "constant_path",
    "seasonal_normal_path",
    "heat_wave",
    "cold_snap",
    "copy_period",
    "shift_path",
    "backtest",
    "ensemble_forecast",
    "ScenarioLibrary",
    "forecast_table",
    "LoadcoreError",
]

if TYPE_CHECKING:  # pragma: no cover - for type checkers and editors only
    from loadcore.calendar import CalendarSpec, Override
    from loadcore.errors import LoadcoreError
    from loadcore.evaluate import backtest
    from loadcore.export import forecast_table
    from loadcore.history import HistorySettings, check_history, read_history
    from loadcore.library import ScenarioLibrary
    from loadcore.model import FitSettings, TermSpec, fit, load_model
    from loadcore.scenario import (
        cold_snap,
        constant_path,
        copy_period,
        heat_wave,
        make_scenario,
        read_scenario_csv,
        seasonal_normal_path,
        shift_path,
    )
    from loadcore.weather import ensemble_forecast


def __getattr__(name: str) -> Any:
    module = _PUBLIC.get(name)
    if module is None:
        raise AttributeError(f"module 'loadcore' has no attribute {name!r}")
    value = getattr(importlib.import_module(module), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(_PUBLIC))
