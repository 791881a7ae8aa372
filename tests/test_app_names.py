"""Names in the scenario builder and the library (issue 10, section 3, defect 4).

Starting from a scenario in the set gives the new one a name of its own, so the main button adds
rather than overwrites; "Save as" follows the scenario picker; a save clears its note.
"""

from __future__ import annotations

import pandas as pd
import pytest
from test_app_support import (
    assert_no_exception,
    demo_model,
    heat_wave_by_loadcore,
    heat_wave_settings,
    new_app,
)

from loadcore.library import ScenarioLibrary
from loadcore.scenario import constant_path, make_scenario


def _set():
    model = demo_model()
    hot = heat_wave_by_loadcore(model, heat_wave_settings(model), name="Heat wave")
    start = model.history_end + pd.Timedelta(days=1)
    mild = make_scenario("Mild", constant_path(start, 14, 15.0), model_end=model.history_end)
    return {"Heat wave": hot, "Mild": mild}


def test_starting_from_a_scenario_in_the_set_gives_a_new_name():
    at = new_app(page="pages/scenario.py", model=demo_model(), scenarios=_set())
    at.radio(key="scn_source").set_value("set")
    at.run()
    assert_no_exception(at)
    assert at.text_input(key="scn_name").value == "Heat wave (variant)"
    at.selectbox(key="scn_from_set").set_value("Mild")
    at.run()
    assert at.text_input(key="scn_name").value == "Mild (variant)"
    labels = [b.label for b in at.button]
    assert "Add to the set" in labels and not any("Replace" in label for label in labels)
    [b for b in at.button if b.label == "Add to the set"][0].click()
    at.run()
    kept = at.session_state["scenarios"]
    assert list(kept) == ["Heat wave", "Mild", "Mild (variant)"]
    assert kept["Mild"] == _set()["Mild"]
    # A second variant of the same scenario gets the next free name.
    at.selectbox(key="scn_from_set").set_value("Heat wave")
    at.run()
    at.selectbox(key="scn_from_set").set_value("Mild")
    at.run()
    assert at.text_input(key="scn_name").value == "Mild (variant 2)"


@pytest.fixture
def library_path(tmp_path, monkeypatch):
    path = tmp_path / "scenarios.sqlite"
    monkeypatch.setenv("LOADCORE_LIBRARY", str(path))
    return path


def test_save_as_follows_the_picker_and_a_save_clears_its_note(library_path):
    at = new_app(page="pages/saved.py", model=demo_model(), scenarios=_set())
    assert at.text_input(key="lib_save_name").value == "Heat wave"
    at.selectbox(key="lib_pick").set_value("Mild")
    at.run()
    assert at.text_input(key="lib_save_name").value == "Mild"
    at.text_input(key="lib_note").set_value("cool fortnight")
    at.button(key="lib_save").click()
    at.run()
    assert_no_exception(at)
    saved = ScenarioLibrary(library_path).get("Mild")
    assert saved.note == "cool fortnight"
    assert at.text_input(key="lib_note").value == ""
    assert any("Saved" in s.value and "Mild" in s.value for s in at.success)
    at.selectbox(key="lib_pick").set_value("Heat wave")
    at.run()
    assert at.text_input(key="lib_save_name").value == "Heat wave"
    assert not any("Saved" in s.value for s in at.success)  # the old note is gone too
