"""AppTest of the Saved-scenarios page against a library file in a temporary folder."""

from __future__ import annotations

import dataclasses

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

from loadcore.library import ScenarioLibrary, entry_from_forecast


@pytest.fixture
def library_path(tmp_path, monkeypatch):
    path = tmp_path / "scenarios.sqlite"
    monkeypatch.setenv("LOADCORE_LIBRARY", str(path))
    return path


def _hot():
    model = demo_model()
    return heat_wave_by_loadcore(model, heat_wave_settings(model), name="Heat wave")


def _saved_page(**kw):
    return new_app(page="pages/saved.py", model=demo_model(), **kw)


def test_save_list_rename_duplicate_delete(library_path):
    at = _saved_page(scenarios={"Heat wave": _hot()})
    assert_no_exception(at)
    at.text_input(key="lib_note").set_value("July planning <b>draft</b>")
    at.text_input(key="lib_author").set_value("Planner A")
    at.button(key="lib_save").click()
    at.run()
    assert_no_exception(at)
    library = ScenarioLibrary(library_path)
    assert library.names() == ["Heat wave"]
    saved = library.get("Heat wave")
    assert saved.note == "July planning <b>draft</b>" and saved.author == "Planner A"
    assert saved.scenario() == _hot()
    assert at.dataframe[0].value["name"].tolist() == ["Heat wave"]

    at.text_input(key="lib_new_name").set_value("Heat wave July")
    at.button(key="lib_rename").click()
    at.run()
    assert library.names() == ["Heat wave July"]

    at.text_input(key="lib_copy").set_value("Heat wave copy")
    at.button(key="lib_duplicate").click()
    at.run()
    assert set(library.names()) == {"Heat wave copy", "Heat wave July"}

    at.text_input(key="lib_search").set_value("copy")
    at.run()
    assert at.dataframe[0].value["name"].tolist() == ["Heat wave copy"]
    at.checkbox(key="lib_sure").check()
    at.run()
    at.button(key="lib_delete").click()
    at.run()
    assert_no_exception(at)
    assert library.names() == ["Heat wave July"]


def test_a_second_save_under_the_same_name_is_refused_inline(library_path):
    at = _saved_page(scenarios={"Heat wave": _hot()})
    at.button(key="lib_save").click()
    at.run()
    at.button(key="lib_save").click()
    at.run()
    assert_no_exception(at)
    errors = texts(at, "error")
    assert errors and errors[0].startswith("Not saved")
    assert len(ScenarioLibrary(library_path)) == 1


def test_stale_model_notice_and_re_forecast(library_path):
    model = demo_model()
    hot = _hot()
    entry = entry_from_forecast(model.forecast(hot), scenario=hot, model=model)
    library = ScenarioLibrary(library_path)
    library.save(dataclasses.replace(entry, model_fingerprint="an older model"))
    at = _saved_page()
    assert any("different model" in w for w in texts(at, "warning"))
    at.button(key="lib_reforecast").click()
    at.run()
    assert_no_exception(at)
    refreshed = library.get("Heat wave")
    assert refreshed.version == 2
    assert refreshed.model_fingerprint == model.fingerprint
    assert not any("different model" in w for w in texts(at, "warning"))


def test_open_into_the_set_and_meeting_brief_download(library_path):
    model = demo_model()
    hot = _hot()
    ScenarioLibrary(library_path).save(
        entry_from_forecast(model.forecast(hot), scenario=hot, model=model, note="<script>x")
    )
    with recording_downloads():
        at = _saved_page()
        at.button(key="lib_open").click()
        at.run()
        html = download_bytes(at, "lib_brief").decode()
    assert_no_exception(at)
    assert at.session_state["scenarios"]["Heat wave"] == hot
    assert html.lstrip().lower().startswith("<!doctype html")
    assert "not an operating or reliability-compliance tool" in html
    assert "<script>x" not in html


def test_a_scenario_saved_in_one_session_opens_in_another_after_a_restart(library_path):
    """Save through the page in one app session; a brand-new session (a restarted app on the
    same library file) lists it and opens it into its own set, unchanged."""
    first = _saved_page(scenarios={"Heat wave": _hot()})
    first.text_input(key="lib_note").set_value("for Monday's meeting")
    first.button(key="lib_save").click()
    first.run()
    assert_no_exception(first)
    del first
    second = _saved_page()
    assert_no_exception(second)
    assert second.dataframe[0].value["name"].tolist() == ["Heat wave"]
    assert "scenarios" not in second.session_state or "Heat wave" not in dict(
        second.session_state["scenarios"]
    )
    second.button(key="lib_open").click()
    second.run()
    assert_no_exception(second)
    assert second.session_state["scenarios"]["Heat wave"] == _hot()
