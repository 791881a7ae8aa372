"""The history's own demand unit on every page (no "MW" where the history says something else).

A history read with ``HistorySettings(demand_unit="GW")`` (demand in gigawatts, a tenth of the
demo's scale) is fitted once with small search bounds; the pages that label demand show "GW" in
their charts, inputs, metrics and tables, and never "MW".
"""

from __future__ import annotations

import functools
import json

import pandas as pd
from test_app_support import assert_no_exception, demo_history, new_app, texts

from loadcore.history import HistorySettings, history_from_frame
from loadcore.model import FitSettings, fit
from loadcore.scenario import constant_path, make_scenario, seasonal_normal_path

SMALL_SEARCH = FitSettings(
    search="quick", ar_up_to=1, ma_up_to=1, ar_ma_up_to=2, weekly_ar_up_to=1, weekly_ma_up_to=0
)
UNIT = "GW"


@functools.lru_cache(maxsize=1)
def _gw_model():
    frame = demo_history().frame.iloc[-760:][["demand", "temperature_c"]]
    frame = frame.assign(demand=frame["demand"] / 1000.0)
    history = history_from_frame(frame, HistorySettings(demand_unit=UNIT))
    return history, fit(history, SMALL_SEARCH)


def _chart_texts(at) -> str:
    """Every axis title, annotation and hover template of the page's charts, as one text."""
    out = []
    for chart in at.get("plotly_chart"):
        spec = json.loads(chart.proto.spec)
        layout = spec.get("layout", {})
        for name, axis in layout.items():
            if name.startswith(("xaxis", "yaxis")):
                out.append(str((axis.get("title") or {}).get("text", "")))
        out += [str(a.get("text", "")) for a in layout.get("annotations", [])]
        out += [str(t.get("hovertemplate", "")) for t in spec.get("data", [])]
    return " | ".join(out)


def _no_mw(strings) -> None:
    for s in strings:
        assert "MW" not in s, s


def test_the_history_page_names_the_historys_unit():
    history, model = _gw_model()
    at = new_app(model=model, extra={"history": history, "history_source": "file gw.csv"})
    assert_no_exception(at)
    charts = _chart_texts(at)
    assert f"demand, {UNIT}" in charts and "MW" not in charts


def test_the_ensembles_page_names_the_historys_unit():
    history, model = _gw_model()
    at = new_app(page="pages/ensembles.py", model=model, extra={"history": history})
    threshold = at.number_input(key="ens_threshold")
    assert threshold.label.startswith(f"Threshold, {UNIT}")
    at.number_input(key="ens_days").set_value(5)
    at.number_input(key="ens_shift").set_value(1)
    at.number_input(key="ens_paths").set_value(20)
    threshold.set_value(2.0)
    [b for b in at.get("button") if getattr(b, "label", "") == "Run the ensemble"][0].click()
    at.run()
    assert_no_exception(at)
    labels = [m.label for m in at.metric]
    assert f"Odds of any day above 2 {UNIT}" in labels
    _no_mw(labels + texts(at, "markdown") + [_chart_texts(at)])
    assert f"window peak, {UNIT}" in _chart_texts(at)


def test_compare_and_its_meeting_view_name_the_historys_unit():
    history, model = _gw_model()
    start = model.history_end.normalize() + pd.Timedelta(days=1)
    normal = make_scenario(
        "Seasonal normal", seasonal_normal_path(history, start, 10), model_end=model.history_end
    )
    hot = make_scenario("Hot", constant_path(start, 10, 30.0), model_end=model.history_end)
    scenarios = {"Seasonal normal": normal, "Hot": hot}
    extra = {"history": history, "scenario_kinds": {"Seasonal normal": "seasonal_normal"}}
    at = new_app(page="pages/compare.py", model=model, scenarios=scenarios, extra=extra)
    assert_no_exception(at)
    _no_mw(texts(at, "markdown") + texts(at, "caption") + [_chart_texts(at)])
    assert f"peak, {UNIT}" in list(at.dataframe[0].value.columns)
    meeting = new_app(
        page="pages/compare.py",
        model=model,
        scenarios=scenarios,
        extra={**extra, "meeting_view": True},
    )
    assert_no_exception(meeting)
    deltas = [m.proto.delta for m in meeting.metric if m.proto.delta]
    assert deltas and all(f" {UNIT} vs " in d for d in deltas), deltas
    _no_mw([m.value for m in meeting.metric] + deltas)
