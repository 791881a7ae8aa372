"""The Compare page's choices (issue 10, section 3, defects 2, 3, 5 and 6).

One set of choices (scenarios shown, base, days of history) serves the Compare page and the meeting
view; everything on the page follows the scenarios shown; the base defaults to the seasonal
normal; scenarios that a new model cannot forecast are listed, can be moved or removed, and the
counts agree; the meeting brief downloads from Compare too.
"""

from __future__ import annotations

import functools
import json

import pandas as pd
from test_app_support import (
    assert_no_exception,
    demo_model,
    download_bytes,
    heat_wave_by_loadcore,
    heat_wave_settings,
    new_app,
    recording_downloads,
    texts,
)

from loadcore.export import forecast_table, round_for_planners, to_csv_bytes
from loadcore.scenario import constant_path, make_scenario, seasonal_normal_path


@functools.lru_cache(maxsize=1)
def _three() -> dict:
    model = demo_model()
    start = model.history_end + pd.Timedelta(days=1)
    hot = heat_wave_by_loadcore(model, heat_wave_settings(model), name="Heat wave")
    mild = make_scenario("Mild", constant_path(start, 14, 15.0), model_end=model.history_end)
    normal = make_scenario(
        "Seasonal normal",
        seasonal_normal_path(model.history, start, 14),
        model_end=model.history_end,
    )
    return {"Heat wave": hot, "Mild": mild, "Seasonal normal": normal}


def _compare(**extra):
    return new_app(page="pages/compare.py", model=demo_model(), scenarios=_three(), extra=extra)


def _chart_names(at) -> list[str]:
    spec = json.loads(at.get("plotly_chart")[0].proto.spec)
    return [t.get("name") for t in spec["data"] if t.get("showlegend", True) is not False]


def test_the_base_defaults_to_the_seasonal_normal():
    at = _compare()
    assert_no_exception(at)
    assert at.selectbox(key="cmp_base").value == "Seasonal normal"


def test_the_meeting_view_follows_the_compare_choices_and_back():
    at = _compare()
    at.multiselect(key="cmp_shown").set_value(["Mild", "Heat wave"])
    at.run()
    at.selectbox(key="cmp_base").set_value("Mild")
    at.number_input(key="cmp_tail").set_value(28)
    at.run()
    at.session_state["meeting_view"] = True
    at.run()
    assert_no_exception(at)
    assert [t.value for t in at.title] == ["Demand scenarios"]
    names = _chart_names(at)
    assert "Seasonal normal" not in " ".join(n for n in names if n)
    assert {m.label for m in at.metric} == {"Mild", "Heat wave"}
    deltas = [m.proto.delta for m in at.metric if m.label == "Heat wave"]
    assert deltas and "vs Mild" in deltas[0]
    spec = json.loads(at.get("plotly_chart")[0].proto.spec)
    history = next(t for t in spec["data"] if t.get("name") == "recorded demand")
    assert len(history["x"]) == 28
    at.button(key="leave_meeting").click()
    at.run()
    assert_no_exception(at)
    assert at.multiselect(key="cmp_shown").value == ["Heat wave", "Mild"]  # the set's order
    assert at.selectbox(key="cmp_base").value == "Mild"
    assert at.number_input(key="cmp_tail").value == 28


def test_everything_on_the_page_follows_the_scenarios_shown():
    model = demo_model()
    with recording_downloads():
        at = _compare()
        at.multiselect(key="cmp_shown").set_value(["Mild", "Seasonal normal"])
        at.run()
        data = download_bytes(at, "cmp_csv")
    assert_no_exception(at)
    # The heat wave is off the chart: no out-of-range or heat warning, no row, no line.
    assert not any("outside the fitted temperature range" in w for w in texts(at, "warning"))
    assert not any("heat-related illness" in w for w in texts(at, "warning"))
    assert "Heat wave" not in " ".join(n for n in _chart_names(at) if n)
    for frame in (df.value for df in at.dataframe):
        if "scenario" in frame.columns:
            assert set(frame["scenario"]) <= {"Mild", "Seasonal normal"}
    shown = [model.forecast(_three()[n]) for n in ("Mild", "Seasonal normal")]
    assert data == to_csv_bytes(round_for_planners(forecast_table(shown, temp_unit="C")))


def test_the_meeting_brief_downloads_from_compare():
    with recording_downloads():
        at = _compare()
        at.multiselect(key="cmp_shown").set_value(["Heat wave", "Seasonal normal"])
        at.run()
        html = download_bytes(at, "cmp_brief").decode()
    assert_no_exception(at)
    assert html.lstrip().lower().startswith("<!doctype html")
    assert "not an operating or reliability-compliance tool" in html
    assert "Heat wave" in html and "Seasonal normal" in html
    assert "Mild" not in html


def test_scenarios_a_new_model_cannot_forecast_are_listed_moved_or_removed():
    model = demo_model()
    old = make_scenario(
        "Last summer", constant_path(model.history_end - pd.Timedelta(days=40), 10, 30.0)
    )
    stale = make_scenario(
        "Last week", constant_path(model.history_end - pd.Timedelta(days=6), 5, 8.0)
    )
    at = new_app(
        page="pages/compare.py",
        model=model,
        scenarios={**_three(), "Last summer": old, "Last week": stale},
    )
    assert_no_exception(at)
    assert not at.error, "a scenario the model cannot forecast is not an error box"
    notice = " ".join(texts(at, "warning"))
    assert "Last summer" in notice and "Last week" in notice
    assert "2 of the 5 scenarios" in notice
    # The removal list reaches every scenario in the set.
    assert set(at.multiselect(key="cmp_drop").options) == {
        "Heat wave",
        "Mild",
        "Seasonal normal",
        "Last summer",
        "Last week",
    }
    at.multiselect(key="cmp_drop").set_value(["Last week"])
    at.run()
    at.button(key="cmp_drop_go").click()
    at.run()
    assert "Last week" not in at.session_state["scenarios"]
    # Move the other to its same calendar days in the first year that fits the model.
    at.button(key="cmp_move_go").click()
    at.run()
    assert_no_exception(at)
    moved = at.session_state["scenarios"]["Last summer"]
    assert moved.start > model.history_end
    assert moved.start.month == old.start.month and moved.start.day == old.start.day
    assert list(moved.temperature_c) == list(old.temperature_c)


def test_the_sidebar_counts_the_scenarios_that_cannot_be_forecast():
    model = demo_model()
    old = make_scenario("Old", constant_path(model.history_end - pd.Timedelta(days=40), 10, 30.0))
    at = new_app(model=model, scenarios={**_three(), "Old": old})
    assert_no_exception(at)
    captions = " ".join(texts(at, "caption"))
    assert "Scenarios in the set: 4" in captions
    assert "1 cannot be forecast" in captions
