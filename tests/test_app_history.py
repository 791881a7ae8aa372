"""AppTest of the History page: demo data by default, uploads, the report, the calendar."""

from __future__ import annotations

import json

import pandas as pd
import pytest
from test_app_support import (
    DEMO_CSV,
    assert_no_exception,
    demo_history,
    demo_model,
    new_app,
    texts,
)

from loadcore.calendar import day_type_label, day_types
from loadcore.errors import HistoryError
from loadcore.history import HistorySettings, read_history


def _upload(at, data: bytes, name: str = "upload.csv", **options):
    at.file_uploader(key="history_upload").set_value((name, data, "text/csv"))
    at.run()  # the column choices are the file's own columns
    for key, value in options.items():
        widget = at.get_by_key(key)
        widget.set_value(value)
    at.run()
    [b for b in at.button if b.label == "Check and use this file"][0].click()
    at.run()
    return at


def test_opens_on_the_demo_data_with_both_charts():
    at = new_app(page="pages/history.py")
    assert_no_exception(at)
    assert [t.value for t in at.title] == ["History"]
    history = at.session_state["history"]
    assert history.fingerprint == demo_history().fingerprint
    info = " ".join(texts(at, "info"))
    assert "Calder Basin" in info
    assert f"{history.start.date()} to {history.end.date()}" in info
    assert len(at.get("plotly_chart")) == 2
    # The caution is in the page footer.
    assert any("not an operating or reliability-compliance tool" in c for c in texts(at, "caption"))


def test_day_type_counts_come_from_the_calendar():
    at = new_app(page="pages/history.py")
    shown = at.dataframe[-1].value
    calendar = at.session_state["calendar_spec"]
    assert calendar.overrides, "the demo history comes with the demo's year-end period"
    expected = day_types(demo_history().frame.index, calendar).value_counts()
    assert expected["year_end"] > 0
    for name, count in expected.items():
        assert int(shown[name].iloc[0]) == int(count)


def test_a_bad_upload_shows_the_loadcore_message_and_keeps_the_demo():
    bad = b"date,demand,temperature\n2024-01-01,100,10\n2024-01-01,101,11\n2024-01-03,-5,abc\n"
    at = new_app(page="pages/history.py")
    before = at.session_state["history"].fingerprint
    _upload(at, bad, "broken.csv")
    assert_no_exception(at)
    errors = texts(at, "error")
    assert errors and errors[0].startswith("The file was not used")
    with pytest.raises(HistoryError) as raised:  # the same loadcore message the page shows
        read_history(bad, HistorySettings())
    assert str(raised.value) in errors[0]
    assert at.session_state["history"].fingerprint == before


def test_a_fahrenheit_upload_with_other_column_names_replaces_the_history():
    frame = pd.read_csv(DEMO_CSV).iloc[-800:]
    frame = frame.rename(columns={"date": "day", "demand": "load_mw", "temperature": "tmax"})
    frame["tmax"] = (frame["tmax"] * 9 / 5 + 32).round(2)
    data = frame.to_csv(index=False, sep=";").encode()
    at = new_app(page="pages/history.py")
    _upload(
        at,
        data,
        "fahrenheit.csv",
        history_date_col="day",
        history_demand_col="load_mw",
        history_temp_col="tmax",
        history_file_unit="F",
    )
    assert_no_exception(at)
    assert not texts(at, "error")
    used = at.session_state["history"]
    expected = read_history(
        data,
        HistorySettings(date_col="day", demand_col="load_mw", temp_col="tmax", temp_unit="F"),
    )
    assert used.fingerprint == expected.fingerprint
    assert "fahrenheit.csv" in at.session_state["history_source"]


def test_an_hourly_upload_with_an_hour_column():
    """A date column and an hour-ending column (1-24, common practice, no source); the page's
    hour field gives the same history as the reader with ``hour_col``."""
    days = pd.read_csv(DEMO_CSV).iloc[-400:].reset_index(drop=True)
    rows = days.loc[days.index.repeat(24)].reset_index(drop=True)
    rows.insert(1, "HE", list(range(1, 25)) * len(days))
    rows["demand"] = (rows["demand"] * (0.8 + 0.2 * rows["HE"] / 24)).round(1)
    data = rows.to_csv(index=False).encode()
    at = new_app(page="pages/history.py")
    _upload(at, data, "hourly.csv")
    assert any("--hour-col NAME" in e for e in texts(at, "error"))
    _upload(at, data, "hourly.csv", history_hour_col="HE")
    assert_no_exception(at)
    used = at.session_state["history"]
    assert used.fingerprint == read_history(data, HistorySettings(hour_col="HE")).fingerprint
    assert used.has_minimum


def test_a_shutdown_override_becomes_its_own_day_type():
    at = new_app(page="pages/history.py", extra={"model": None})  # no model: the next fit's days
    at.text_area(key="cal_overrides").set_value("2024-07-01..2024-07-05 shutdown Mill shutdown")
    at.run()
    [b for b in at.button if b.label == "Use these calendar settings"][0].click()
    at.run()
    assert_no_exception(at)
    spec = at.session_state["calendar_spec"]
    assert [o.day_type for o in spec.overrides] == ["shutdown"]
    shown = at.dataframe[-1].value
    assert int(shown["shutdown"].iloc[0]) == 5


def test_warnings_are_listed_and_every_changed_row_is_visible():
    frame = pd.read_csv(DEMO_CSV).iloc[-800:].reset_index(drop=True)
    frame.loc[100:101, "temperature"] = None  # a two-day temperature gap: filled in, warned
    frame.loc[300, "demand"] = None  # a blank demand cell: kept missing, warned
    data = frame.to_csv(index=False).encode()
    expected = read_history(data, HistorySettings())
    at = new_app(page="pages/history.py")
    _upload(at, data, "gappy.csv")
    assert_no_exception(at)
    assert at.session_state["history"].fingerprint == expected.fingerprint
    listed = " ".join(texts(at, "markdown"))
    for issue in expected.report.warnings:
        assert issue.message in listed
    changed = at.dataframe[1].value  # the "rows changed or missing" table
    shown = {pd.Timestamp(d).date().isoformat() for d in changed.index}
    for day in (frame.loc[100, "date"], frame.loc[101, "date"], frame.loc[300, "date"]):
        assert day in shown


def _chart_day_types(at) -> set[str]:
    """The day-type legend entries of the History page's demand chart."""
    spec = json.loads(at.get("plotly_chart")[0].proto.spec)  # the first chart: demand over time
    return {t["name"] for t in spec["data"] if t.get("mode") == "markers"}


def test_with_a_model_in_use_the_days_are_coloured_by_the_models_calendar():
    """A special period added after the fit belongs to the next fit, not to the model in use:
    the chart and the counts show the model's day types until the model is fitted again."""
    model = demo_model()
    at = new_app(page="pages/history.py", model=model)
    at.text_area(key="cal_overrides").set_value("2024-07-01..2024-07-05 shutdown Mill shutdown")
    at.run()
    [b for b in at.button if b.label == "Use these calendar settings"][0].click()
    at.run()
    assert_no_exception(at)
    assert [o.day_type for o in at.session_state["calendar_spec"].overrides] == ["shutdown"]
    expected = model.calendar_types(demo_history().frame.index)
    assert _chart_day_types(at) == {day_type_label(t) for t in set(expected)}
    assert day_type_label("shutdown") not in _chart_day_types(at)
    shown = at.dataframe[-1].value
    assert "shutdown" not in shown.columns
    for name, count in expected.value_counts().items():
        assert int(shown[name].iloc[0]) == int(count)


def test_a_history_file_from_the_command_line_that_cannot_be_read_is_named_and_the_demo_used(
    tmp_path, monkeypatch
):
    """``loadcore app --history FILE`` with a broken file: the session starts on the demo data and
    the first page says why, in loadcore's words (app/main.py shows what init_state reports)."""
    bad = tmp_path / "broken.csv"
    bad.write_bytes(b"date,demand,temperature\n2024-01-01,100,10\n2024-01-01,101,11\n")
    monkeypatch.setenv("LOADCORE_HISTORY", str(bad))
    at = new_app(page=None)
    assert_no_exception(at)
    errors = texts(at, "error")
    assert errors and errors[0].startswith(f"{bad} could not be used; the demo data is loaded")
    with pytest.raises(HistoryError) as raised:
        read_history(bad, HistorySettings())
    assert str(raised.value) in errors[0]
    assert at.session_state["history"].fingerprint == demo_history().fingerprint
