"""AppTest of the Build-a-scenario page: path tools, free editing, checks, adding to the set."""

from __future__ import annotations

import numpy as np
import pandas as pd
from test_app_support import (
    assert_no_exception,
    build_heat_wave_in_app,
    demo_model,
    heat_wave_by_loadcore,
    heat_wave_settings,
    new_app,
    texts,
)


def _scenario_page(**kw):
    return new_app(page="pages/scenario.py", model=demo_model(), **kw)


def _edit(at, rows: dict) -> None:
    """Seed the day-by-day editor's edit state (AppTest cannot type into cells)."""
    editor = at.data_editor[0]
    at.session_state[editor.key] = {"edited_rows": rows, "added_rows": [], "deleted_rows": []}
    at.run()


def test_the_window_starts_the_day_after_the_history_by_default():
    model = demo_model()
    at = _scenario_page()
    assert_no_exception(at)
    start = model.history_end + pd.Timedelta(days=1)
    assert at.date_input(key="scn_start").value == start.date()
    assert any(f"{start:%A %d %B %Y} to " in c for c in texts(at, "caption"))
    assert any("starting the day after the history ends" in c for c in texts(at, "caption"))


def test_heat_wave_above_the_fitted_range_names_the_right_dates():
    model = demo_model()
    settings = heat_wave_settings(model)
    at = _scenario_page()
    build_heat_wave_in_app(at, settings)
    assert_no_exception(at)
    assert not texts(at, "error")

    expected = heat_wave_by_loadcore(model, settings)
    forecast = model.forecast(expected)
    outside = forecast.frame.loc[forecast.frame["out_of_range"], "date"]
    assert len(outside) >= 1
    warning = next(w for w in texts(at, "warning") if "outside the fitted temperature range" in w)
    for day in pd.DatetimeIndex(forecast.frame["date"]):
        iso = day.date().isoformat()
        assert (iso in warning) == (day in set(outside)), iso
    # The public-safety note for days at or above 38 °C.
    assert any("heat-related illness" in w for w in texts(at, "warning"))

    [b for b in at.button if b.label == "Add to the set"][0].click()
    at.run()
    added = at.session_state["scenarios"]["Heat wave"]
    assert added == expected


def test_editing_a_day_recomputes_the_forecast_without_refitting():
    model = demo_model()
    settings = heat_wave_settings(model)
    at = _scenario_page()
    build_heat_wave_in_app(at, settings)
    _edit(at, {0: {"temperature": 5.0}, 1: {"day_type": "holiday"}})
    assert_no_exception(at)
    assert not texts(at, "error")
    [b for b in at.button if b.label == "Add to the set"][0].click()
    at.run()
    edited = at.session_state["scenarios"]["Heat wave"]
    assert edited.temperature_c[0] == 5.0
    assert edited.day_types[1] == "holiday"
    assert at.session_state["model"] is model  # no refit


def test_a_blank_temperature_gives_a_message_and_leaves_the_set_alone():
    model = demo_model()
    kept = heat_wave_by_loadcore(model, heat_wave_settings(model), name="Kept")
    at = _scenario_page(scenarios={"Kept": kept})
    build_heat_wave_in_app(at, heat_wave_settings(model), name="Edited")
    _edit(at, {2: {"temperature": None}})
    assert_no_exception(at)
    errors = texts(at, "error")
    day = (model.history_end + pd.Timedelta(days=3)).date().isoformat()
    assert errors and "blank" in errors[0] and day in errors[0]
    assert list(at.session_state["scenarios"]) == ["Kept"]
    assert at.session_state["scenarios"]["Kept"] == kept


def test_the_days_input_stops_at_the_loadcore_limit():
    """The length input's bounds are loadcore's one length limit (scenario.MAX_DAYS), so the
    builder never offers a length that loadcore refuses, and the longest one is accepted."""
    from loadcore.scenario import MAX_DAYS

    at = _scenario_page()
    days = at.number_input(key="scn_days")
    assert (days.proto.min, days.proto.max) == (1, MAX_DAYS)
    assert str(MAX_DAYS) in days.label
    days.set_value(MAX_DAYS)
    at.run()
    assert_no_exception(at)
    assert not texts(at, "error")
    assert len(at.data_editor[0].value) == MAX_DAYS


def test_heat_wave_days_at_the_peak_are_named_apart_from_the_ramps():
    """Issue 10, defect 10: "Days" used to include the ramps, so 6 days gave 2 at the peak.
    Now 6 days at the peak with 2 ramp days give 6 days at the peak inside a 10-day event."""
    model = demo_model()
    settings = {**heat_wave_settings(model), "at_peak": 6, "ramp": 2, "start_day": 2}
    at = _scenario_page()
    labels = [n.label for n in at.number_input]
    assert "Days at the peak" in labels and "Ramp days at each end" in labels
    assert "Days at the lowest" in labels  # the cold snap's fields read the same way
    build_heat_wave_in_app(at, settings)
    assert_no_exception(at)
    assert any("2 day(s) building up, 6 day(s) at the peak" in c for c in texts(at, "caption"))
    [b for b in at.button if b.label == "Add to the set"][0].click()
    at.run()
    added = at.session_state["scenarios"]["Heat wave"]
    peak = round(settings["peak_c"], 1)
    temps = np.asarray(added.temperature_c)
    assert int(np.sum(np.isclose(temps, peak))) == 6
    assert np.flatnonzero(np.isclose(temps, peak)).tolist() == list(range(3, 9))
    assert added == heat_wave_by_loadcore(model, settings)


def test_a_start_day_past_a_shortened_window_is_brought_inside():
    """The heat wave's start day is bounded by the window's length; shortening the window
    below it gives a start inside the window, not a failure."""
    at = _scenario_page()
    at.number_input(key="scn_hw_day").set_value(12)
    at.run()
    at.number_input(key="scn_days").set_value(5)
    at.run()
    assert_no_exception(at)
    start_day = at.number_input(key="scn_hw_day")
    assert start_day.proto.max == 5 and 1 <= start_day.value <= 5


def test_a_scenario_file_with_text_or_unordered_dates_is_refused():
    model = demo_model()
    start = model.history_end + pd.Timedelta(days=1)
    days = pd.date_range(start, periods=3)
    text_temp = (
        f"date,temperature\n{days[0].date()},30\n{days[1].date()},hot\n{days[2].date()},31\n"
    )
    unordered = f"date,temperature\n{days[1].date()},30\n{days[0].date()},31\n{days[2].date()},29\n"
    for data, must in ((text_temp, "hot"), (unordered, days[0].date().isoformat())):
        at = _scenario_page()
        at.radio(key="scn_source").set_value("file")
        at.run()
        at.file_uploader(key="scn_upload").set_value(("bad.csv", data.encode(), "text/csv"))
        at.run()
        assert_no_exception(at)
        errors = texts(at, "error")
        assert errors and must in errors[0], errors


def test_a_good_scenario_file_in_fahrenheit_is_read_at_the_edge():
    model = demo_model()
    start = model.history_end + pd.Timedelta(days=1)
    days = pd.date_range(start, periods=5)
    temps_f = [50.0, 59.0, 68.0, 77.0, 86.0]
    data = "date,temperature\n" + "".join(
        f"{d.date()},{t}\n" for d, t in zip(days, temps_f, strict=True)
    )
    at = _scenario_page(extra={"temp_unit": "F"})
    at.radio(key="scn_source").set_value("file")
    at.run()
    at.file_uploader(key="scn_upload").set_value(("mild.csv", data.encode(), "text/csv"))
    at.text_input(key="scn_name").set_value("Mild")
    at.run()
    assert_no_exception(at)
    assert not texts(at, "error")
    [b for b in at.button if b.label == "Add to the set"][0].click()
    at.run()
    added = at.session_state["scenarios"]["Mild"]
    # 50 °F = 10 °C, 86 °F = 30 °C (common practice, no source).
    np.testing.assert_allclose(added.temperature_c, [10.0, 15.0, 20.0, 25.0, 30.0], atol=0.06)
