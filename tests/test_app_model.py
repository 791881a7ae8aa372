"""AppTest of the Model page: the fit through the app, its results, saving and loading."""

from __future__ import annotations

import dataclasses
import json

from test_app_support import (
    assert_no_exception,
    demo_history,
    download_bytes,
    fitted_through_app,
    new_app,
    recording_downloads,
    texts,
)

from loadcore.calendar import CalendarSpec, day_types
from loadcore.history import history_from_frame
from loadcore.model import FitSettings, load_model


def test_the_fit_through_the_app_uses_the_quick_search_and_shows_progress():
    model, seen = fitted_through_app()
    assert not seen["exceptions"] and not seen["errors"], seen
    assert model.settings.search == "quick"
    import app.state as app_state

    assert model.settings == FitSettings(calendar=app_state.demo_calendar())
    assert model.history.fingerprint == demo_history().fingerprint
    value, text = seen["progress"][-1]
    assert value == 100  # the bar ends full (AppTest reports percent)
    assert f"{model.candidates_evaluated} candidates" in text
    assert seen["metrics"]["AICc"] == f"{model.aicc:,.1f}"


def test_results_are_the_models_own_words_and_tables():
    model, _ = fitted_through_app()
    at = new_app(page="pages/model_fit.py", model=model)
    assert_no_exception(at)
    markdown = texts(at, "markdown")
    assert model.describe_errors() in markdown
    assert any(model.describe_lowest_demand() in m for m in markdown)
    shown = at.dataframe[0].value
    table = model.coefficient_table()
    assert list(shown["term"]) == list(table["term"])
    assert list(shown["meaning"]) == list(table["meaning"])
    diag = model.diagnostics()
    verdicts = texts(at, "success") + texts(at, "warning")
    assert diag.verdict in verdicts
    if diag.ljung_box_pvalue < 0.05:
        assert any(diag.advice in m for m in markdown)
    # both temperature responses, residuals over time, ACF bars, histogram
    assert len(at.get("plotly_chart")) == 4
    assert len(at.dataframe[-1].value) == len(model.candidates)


def test_model_download_and_upload_round_trip():
    model, _ = fitted_through_app()
    with recording_downloads():
        at = new_app(page="pages/model_fit.py", model=model)
        data = download_bytes(at, "model_download")
    assert json.loads(data)  # valid JSON
    assert data.decode() == model.to_json()
    back = load_model(data)
    assert back.aicc == model.aicc and back.order == model.order

    at = new_app(page="pages/model_fit.py", model=None)
    at.file_uploader(key="model_upload").set_value(("model.json", data, "application/json"))
    at.run()
    at.button(key="model_use").click()
    at.run()
    assert_no_exception(at)
    used = at.session_state["model"]
    assert used.fingerprint == model.fingerprint
    assert model.describe_errors() in texts(at, "markdown")


def test_a_broken_model_file_is_refused_and_the_model_kept():
    model, _ = fitted_through_app()
    at = new_app(page="pages/model_fit.py", model=model)
    at.file_uploader(key="model_upload").set_value(("bad.json", b'{"kind": 3}', "application/json"))
    at.run()
    at.button(key="model_use").click()
    at.run()
    assert_no_exception(at)
    errors = texts(at, "error")
    assert errors and errors[0].startswith("bad.json was not used")
    assert at.session_state["model"] is model


def test_a_bad_setting_is_refused_before_fitting():
    model, _ = fitted_through_app()
    at = new_app(page="pages/model_fit.py", model=model)
    at.number_input(key="fit_hdd").set_value(30.0)
    at.number_input(key="fit_cdd").set_value(20.0)
    at.radio(key="fit_response").set_value("degree_days")
    [b for b in at.get("button") if getattr(b, "label", "") == "Fit the model"][0].click()
    at.run()
    assert_no_exception(at)
    errors = texts(at, "error")
    assert errors and errors[0].startswith("These settings cannot be used")
    assert at.session_state["model"] is model


def test_the_app_opens_ready_on_a_matching_pre_fitted_demo_model(tmp_path, monkeypatch):
    import app.state as app_state

    model, _ = fitted_through_app()
    path = tmp_path / "demo_model.json"
    model.save(path)
    monkeypatch.setattr(app_state, "DEMO_MODEL", path)
    app_state.demo_model.clear()
    try:
        at = new_app(page="pages/scenario.py")  # nothing seeded: the app loads what it finds
        assert_no_exception(at)
        assert at.session_state["model"].fingerprint == model.fingerprint
        assert at.session_state["fit_settings"] == model.settings
        assert [t.value for t in at.title] == ["Build a scenario"]
        assert at.data_editor, "the scenario builder is ready without a fit"
    finally:
        app_state.demo_model.clear()


def test_the_demo_model_has_the_demo_year_end_period(tmp_path, monkeypatch):
    """Issue 10, defect 11: a fit on the demo data uses the demo's year-end overrides
    (demo_data/overrides.txt), and a pre-fitted demo model without them is not used."""
    import app.state as app_state
    from loadcore.model import FitSettings, fit

    model, _ = fitted_through_app()
    assert "type_year_end" in model.columns
    assert model.settings.calendar == app_state.demo_calendar()
    stale = fit(model.history, FitSettings(search="quick"), orders=model.orders)
    path = tmp_path / "demo_model.json"
    stale.save(path)
    monkeypatch.setattr(app_state, "DEMO_MODEL", path)
    app_state.demo_model.clear()
    try:
        at = new_app(page="pages/model_fit.py")
        assert_no_exception(at)
        assert at.session_state["model"] is None
        assert at.session_state["calendar_spec"] == app_state.demo_calendar()
    finally:
        app_state.demo_model.clear()


def _press_fit(at) -> None:
    [b for b in at.get("button") if getattr(b, "label", "") == "Fit the model"][0].click()
    at.run()


def test_a_bad_calendar_code_is_refused_and_the_calendar_kept():
    import app.state as app_state

    at = new_app(page="pages/model_fit.py", extra={"model": None})
    at.text_input(key="fit_holiday_code").set_value("ZZ")
    _press_fit(at)
    assert_no_exception(at)
    assert any("ZZ" in e for e in texts(at, "error"))
    assert at.session_state["calendar_spec"] == app_state.demo_calendar()


def test_a_blank_holiday_code_is_refused_rather_than_read_as_a_country():
    """Blank used to become "US" without a word; now it is an error that says what to type."""
    model, _ = fitted_through_app()
    at = new_app(page="pages/model_fit.py", model=model)
    at.text_input(key="fit_holiday_code").set_value("   ")
    _press_fit(at)
    assert_no_exception(at)
    errors = texts(at, "error")
    assert errors and errors[0].startswith("These settings cannot be used")
    assert "No holiday calendar was given" in errors[0]
    assert at.session_state["model"] is model
    assert at.session_state["calendar_spec"] == model.settings.calendar


def test_no_public_holidays_can_be_chosen_and_fitted():
    """'No public holidays' fits with CalendarSpec(country=None): no holiday day type at all
    (the demo's year-end overrides stay: the history is the demo's)."""
    import app.state as app_state

    no_holidays = CalendarSpec(country=None, overrides=app_state.demo_calendar().overrides)
    frame = demo_history().frame.iloc[-730:]
    short = history_from_frame(frame[["demand", "temperature_c", "temperature_filled"]])
    at = new_app(page="pages/model_fit.py", extra={"model": None, "history": short})
    at.radio(key="fit_holidays").set_value("none")
    for key, value in {"fit_p": 1, "fit_q": 1, "fit_pq": 2, "fit_bp": 0, "fit_bq": 0}.items():
        at.number_input(key=key).set_value(value)  # a small search: this test is about holidays
    at.number_input(key="fit_harmonics").set_value(1)
    _press_fit(at)  # form widgets take their values when the form is submitted
    assert_no_exception(at)
    assert not texts(at, "error")
    fitted = at.session_state["model"]
    assert fitted is not None and fitted.history.fingerprint == short.fingerprint
    assert fitted.settings.calendar == no_holidays
    assert at.session_state["calendar_spec"] == no_holidays
    assert "holiday" not in fitted.day_type_levels
    assert "holiday" in set(day_types(short.frame.index, CalendarSpec()))  # the US would have had
    assert at.radio(key="fit_holidays").value == "none"


def test_model_page_advises_degree_days_and_switches_in_one_click():
    """The demo's invented utility has a degree-day response (demo_data/truth.json): the page
    of the quadratic demo model draws both response curves over the history, says in one
    sentence that degree days fit better, and its button refits with degree days (bases
    estimated) keeping every other setting; the form then shows the new response."""
    model, _ = fitted_through_app()
    at = new_app(page="pages/model_fit.py", model=model)
    assert_no_exception(at)
    note = model.response_note("C", medium="app")
    assert note in texts(at, "warning")
    assert any(m.startswith("Temperature response in use") for m in texts(at, "markdown"))
    chart = next(
        c for c in at.get("plotly_chart") if c.proto.id and "response_curves" in c.proto.id
    )
    figure = json.loads(chart.proto.spec)
    names = [trace.get("name", "") for trace in figure["data"]]
    assert "in use: smooth-curve (quadratic) response" in names
    assert "other: degree-day response" in names
    at.button(key="response_switch").click()
    at.run(timeout=300)
    assert_no_exception(at)
    switched = at.session_state["model"]
    other = model.response_comparison.other
    assert switched.settings.terms == other.terms
    assert switched.settings.terms.response == "degree_days"
    assert dataclasses.replace(switched.settings, terms=model.settings.terms) == model.settings
    assert at.radio(key="fit_response").value == "degree_days"
    assert at.number_input(key="fit_hdd").value == round(other.terms.heating_base_c, 1)
    assert at.number_input(key="fit_cdd").value == round(other.terms.cooling_base_c, 1)
    assert not [w for w in texts(at, "warning") if w.startswith("The degree-day response")]
