"""AppTest of the Compare page: chart, out-of-range warning, summary, downloads, meeting view."""

from __future__ import annotations

import functools
import json

import pandas as pd
import pytest
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

from loadcore.export import (
    comparison_figure,
    comparison_summary,
    forecast_table,
    round_for_planners,
    to_csv_bytes,
)
from loadcore.scenario import Scenario, make_scenario, seasonal_normal_path


@functools.lru_cache(maxsize=1)
def _two_scenarios() -> dict:
    model = demo_model()
    hot = heat_wave_by_loadcore(model, heat_wave_settings(model), name="Heat wave")
    start = model.history_end + pd.Timedelta(days=1)
    normal = make_scenario(
        "Seasonal normal",
        seasonal_normal_path(model.history, start, 14),
        model_end=model.history_end,
    )
    return {"Seasonal normal": normal, "Heat wave": hot}


def _compare(unit: str = "C", **extra):
    return new_app(
        page="pages/compare.py",
        model=demo_model(),
        scenarios=_two_scenarios(),
        extra={"temp_unit": unit, **extra},
    )


def test_the_page_draws_the_set_with_the_out_of_range_warning():
    model = demo_model()
    at = _compare()
    assert_no_exception(at)
    assert len(at.get("plotly_chart")) == 1
    hot = model.forecast(_two_scenarios()["Heat wave"])
    outside = pd.DatetimeIndex(hot.frame.loc[hot.frame["out_of_range"], "date"])
    warning = next(w for w in texts(at, "warning") if "outside the fitted temperature range" in w)
    for day in outside:
        assert day.date().isoformat() in warning
    by_c = hot.frame.loc[hot.frame["out_of_range"], "out_of_range_by_c"]
    for value in by_c:
        assert f"{abs(value):.1f} °C" in warning
    assert any("heat-related illness" in w for w in texts(at, "warning"))


def test_summary_matches_loadcore_for_the_chosen_base():
    model = demo_model()
    forecasts = [model.forecast(s) for s in _two_scenarios().values()]
    at = _compare()
    at.selectbox(key="cmp_base").set_value("Seasonal normal")
    at.run()
    shown = at.dataframe[0].value
    expected = comparison_summary(forecasts, "Seasonal normal")
    assert list(shown["scenario"]) == list(expected["scenario"])
    pd.testing.assert_series_equal(
        shown["peak, MW"].reset_index(drop=True),
        expected["peak_mean"].reset_index(drop=True),
        check_names=False,
    )
    pd.testing.assert_series_equal(
        shown["peak vs Seasonal normal, %"].reset_index(drop=True),
        expected["peak_vs_base_pct"].reset_index(drop=True),
        check_names=False,
    )


@pytest.mark.parametrize("unit", ["C", "F"])
def test_csv_download_is_loadcore_export_of_the_same_scenarios(unit):
    model = demo_model()
    forecasts = [model.forecast(s) for s in _two_scenarios().values()]
    with recording_downloads():
        at = _compare(unit)
        data = download_bytes(at, "cmp_csv")
    assert_no_exception(at)
    assert data == to_csv_bytes(round_for_planners(forecast_table(forecasts, temp_unit=unit)))
    header = data.decode().splitlines()[0].split(",")
    temp = "temperature_f" if unit == "F" else "temperature_c"
    assert header[:6] == ["scenario", "date", temp, "day_type", "mean", "median"]
    assert {"lower_80", "upper_80", "lower_95", "upper_95", "out_of_range"} <= set(header)


def test_scenario_definition_download_can_be_read_back():
    model = demo_model()
    with recording_downloads():
        at = _compare()
        at.selectbox(key="cmp_def_pick").set_value("Heat wave")
        at.run()
        data = download_bytes(at, "cmp_json")
    back = Scenario.from_json(data, model_end=model.history_end)
    assert back == _two_scenarios()["Heat wave"]


def test_meeting_view_shows_the_chart_large_and_hides_the_controls():
    at = _compare(meeting_view=True)
    assert_no_exception(at)
    assert [t.value for t in at.title] == ["Demand scenarios"]
    assert len(at.get("plotly_chart")) == 1
    assert not at.multiselect and not at.get("download_button")
    assert len(at.metric) == 2
    at.button(key="leave_meeting").click()
    at.run()
    assert at.session_state["meeting_view"] is False
    assert [t.value for t in at.title] == ["Compare"]


def test_meeting_view_is_reached_from_any_page():
    at = new_app(  # the app opens on the History page; the meeting view sends it to Compare
        model=demo_model(),
        scenarios=_two_scenarios(),
        extra={"meeting_view": True},
    )
    assert_no_exception(at)
    assert [t.value for t in at.title] == ["Demand scenarios"]


def test_removing_a_scenario_keeps_the_others():
    at = _compare()
    at.multiselect(key="cmp_drop").set_value(["Heat wave"])
    at.run()
    at.button(key="cmp_drop_go").click()
    at.run()
    assert_no_exception(at)
    assert list(at.session_state["scenarios"]) == ["Seasonal normal"]


def test_the_sidebar_switches_the_meeting_view_and_the_unit_through_the_state():
    # AppTest runs app/main.py's sidebar on the first run only (later runs run the page): the
    # sidebar is used there, and the browser test checks that the toggle follows the page.
    at = new_app(model=demo_model(), scenarios=_two_scenarios())
    at.toggle(key="meeting_choice").set_value(True)
    at.run()
    assert_no_exception(at)
    assert at.session_state["meeting_view"] is True
    at.switch_page("pages/compare.py")
    at.run()
    assert [t.value for t in at.title] == ["Demand scenarios"]
    at.button(key="leave_meeting").click()
    at.run()
    assert at.session_state["meeting_view"] is False
    at = new_app(model=demo_model(), scenarios=_two_scenarios())
    at.radio(key="unit_choice").set_value("F")
    at.run()
    assert_no_exception(at)
    assert at.session_state["temp_unit"] == "F"
    at.switch_page("pages/compare.py")
    at.run()
    assert any("°F" in w for w in texts(at, "warning"))


def test_the_chart_is_loadcores_comparison_figure():
    """The Compare page draws loadcore.export.comparison_figure, the figure the brief embeds."""
    model = demo_model()
    forecasts = [model.forecast(s) for s in _two_scenarios().values()]
    at = _compare()
    shown = json.loads(at.get("plotly_chart")[0].proto.spec)
    tail = model.history.frame["demand"].iloc[-56:]
    expected = comparison_figure(forecasts, history_tail=tail, demand_unit=model.demand_unit)
    want = json.loads(expected.to_json())
    assert [t.get("name") for t in shown["data"]] == [t.get("name") for t in want["data"]]
    for got, trace in zip(shown["data"], want["data"], strict=True):
        assert got.get("y") == trace.get("y")
    assert shown["layout"]["height"] == want["layout"]["height"]
