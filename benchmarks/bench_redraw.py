"""Benchmark: the server-side cost of a scenario edit and its redraw, against a refit.

When a planner edits one day of a scenario on the Build-a-scenario page, the server checks the
scenario (``make_scenario``), forecasts it with the fitted model (no refit) and builds the two
figures the page draws (path against the fitted range, forecast with its bands), which Streamlit
then serialises to JSON. That is the measured work. The baseline, measured in the same run, is the
same edit if it refitted the model: the parameters re-estimated on the history with the same
orders (``fit(..., orders=model.orders)``), then the same forecast and figures.

A full AppTest rerun of the Scenario page after an edit is timed too and reported beside it (it
includes Streamlit's own script and widget handling).

Target: an edit and redraw under 300 ms of server time, and cheaper than the refit.
"""

from __future__ import annotations

import json
import statistics
import sys
import time
from pathlib import Path

import pandas as pd

REPO = Path(__file__).resolve().parent.parent
for _folder in (REPO, REPO / "benchmarks"):
    if str(_folder) not in sys.path:
        sys.path.insert(0, str(_folder))

from common import benchmark_model  # noqa: E402

from app import charts  # noqa: E402
from loadcore.export import comparison_figure  # noqa: E402
from loadcore.history import read_history  # noqa: E402
from loadcore.model import fit  # noqa: E402
from loadcore.scenario import heat_wave, make_scenario, seasonal_normal_path  # noqa: E402

NAME = "redraw"
TARGET_MS = 300.0
EDITS = 15
APP_RERUNS = 5


def _model(history):
    return benchmark_model(history)


def _base_path(model):
    start = model.history_end + pd.Timedelta(days=1)
    path = seasonal_normal_path(model.history, start, 14)
    return heat_wave(path, model.temperature_range_c[1] + 3.0, 6, 2, 3)


def _redraw(model, path: pd.Series, day: int, value_c: float) -> int:
    """One edit: day ``day`` set to ``value_c``; check, forecast, build and serialise figures."""
    edited = path.copy()
    edited.iloc[day] = value_c
    scenario = make_scenario("Heat wave", edited, model_end=model.history_end)
    forecast = model.forecast(scenario)
    tail = model.history.frame["demand"].iloc[-28:]
    figures = [
        charts.path_figure(scenario.dates, scenario.temperature_c, model.temperature_range_c),
        comparison_figure([forecast], history_tail=tail),
    ]
    return sum(len(fig.to_json()) for fig in figures)


def _apptest_reruns(model) -> list[float]:
    from streamlit.testing.v1 import AppTest

    at = AppTest.from_file(str(REPO / "app" / "main.py"), default_timeout=600)
    at.session_state["model"] = model
    at.run()
    at.switch_page("pages/scenario.py")
    at.run()
    times = []
    for i in range(APP_RERUNS):
        key = at.data_editor[0].key
        at.session_state[key] = {
            "edited_rows": {0: {"temperature": 20.0 + i}},
            "added_rows": [],
            "deleted_rows": [],
        }
        t0 = time.perf_counter()
        at.run()
        times.append((time.perf_counter() - t0) * 1000.0)
        if at.exception:
            raise RuntimeError(f"the Scenario page failed: {at.exception[0].value}")
    return times


def run() -> dict:
    """Time the edit-and-redraw against the refit baseline; figures in milliseconds."""
    history = read_history(REPO / "demo_data" / "history.csv")
    model, source = _model(history)
    path = _base_path(model)
    _redraw(model, path, 0, 21.0)  # warm-up (imports, first plotly template)

    edit_ms = []
    for i in range(EDITS):
        t0 = time.perf_counter()
        _redraw(model, path, i % len(path), 15.0 + i)
        edit_ms.append((time.perf_counter() - t0) * 1000.0)

    t0 = time.perf_counter()
    refitted = fit(history, model.settings, orders=model.orders)
    _redraw(refitted, path, 0, 15.0)
    refit_ms = (time.perf_counter() - t0) * 1000.0

    app_ms = _apptest_reruns(model)
    median_ms = statistics.median(edit_ms)
    ratio = median_ms / refit_ms
    return {
        "name": NAME,
        "what": "scenario edit: check + forecast + two figures built and serialised (no refit)",
        "baseline": "same edit with the model refitted (same orders, parameters re-estimated)",
        "model": source,
        "edit_ms_median": round(median_ms, 1),
        "edit_ms_max": round(max(edit_ms), 1),
        "refit_ms": round(refit_ms, 1),
        "apptest_rerun_ms_median": round(statistics.median(app_ms), 1),
        "ratio": round(ratio, 5),
        "target_ms": TARGET_MS,
        "target": f"edit_ms_median < {TARGET_MS:g} ms and ratio < 1",
        "passed": bool(median_ms < TARGET_MS and ratio < 1.0),
    }


if __name__ == "__main__":
    result = run()
    out = REPO / "benchmarks" / "results" / f"{NAME}.json"
    out.parent.mkdir(parents=True, exist_ok=True)
    out.write_text(json.dumps(result, indent=2) + "\n", encoding="utf-8")
    print(json.dumps(result, indent=2))
