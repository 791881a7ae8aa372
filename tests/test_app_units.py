"""The °C/°F switch changes only what is shown (issue 10, section 3, defect 1).

Scenarios and typed temperatures are kept in °C; switching the unit converts what the inputs show
and nothing else: a typed 41.0 °C peak reads 105.8 °F after the switch and builds the same
scenario, a day edited in the day-by-day table keeps its temperature, an uploaded scenario file is
read in the unit chosen beside the uploader, and the Model page's temperatures follow the switch.
0 °C = 32 °F and a 1 °C step is a 1.8 °F step (common practice, no source).
"""

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


def _switch(at, unit: str) -> None:
    """Switch the unit as the sidebar's radio does (app/state.py's transition)."""
    at.session_state["temp_unit"] = unit
    at.run()


def _add(at) -> None:
    [b for b in at.button if b.label in ("Add to the set", "Replace it in the set")][0].click()
    at.run()


def test_a_typed_peak_keeps_its_temperature_when_the_unit_changes():
    model = demo_model()
    settings = heat_wave_settings(model)
    at = new_app(page="pages/scenario.py", model=model)
    build_heat_wave_in_app(at, settings)
    expected = heat_wave_by_loadcore(model, settings)
    _switch(at, "F")
    assert_no_exception(at)
    peak = at.number_input(key="scn_hw_peak")
    assert "°F" in peak.label
    assert peak.value == round(settings["peak_c"] * 1.8 + 32, 1)
    _add(at)
    assert at.session_state["scenarios"]["Heat wave"] == expected
    _switch(at, "C")
    assert at.number_input(key="scn_hw_peak").value == round(settings["peak_c"], 1)


def test_a_peak_typed_in_fahrenheit_is_read_in_fahrenheit_once():
    model = demo_model()
    at = new_app(page="pages/scenario.py", model=model, extra={"temp_unit": "F"})
    at.number_input(key="scn_hw_peak").set_value(104.0)  # 40 °C
    at.run()
    _switch(at, "C")
    assert at.number_input(key="scn_hw_peak").value == 40.0
    _add(at)
    added = at.session_state["scenarios"]["Heat wave"]
    assert np.nanmax(added.temperature_c) == 40.0


def test_a_day_edited_in_the_table_survives_the_switch():
    model = demo_model()
    at = new_app(page="pages/scenario.py", model=model)
    build_heat_wave_in_app(at, heat_wave_settings(model))
    editor = at.data_editor[0]
    at.session_state[editor.key] = {
        "edited_rows": {0: {"temperature": 5.0}},
        "added_rows": [],
        "deleted_rows": [],
    }
    at.run()
    _switch(at, "F")
    assert_no_exception(at)
    shown = at.data_editor[0].value
    assert shown["temperature"].iloc[0] == 41.0  # 5 °C
    _add(at)
    assert at.session_state["scenarios"]["Heat wave"].temperature_c[0] == 5.0


def test_an_uploaded_file_keeps_its_own_unit_after_the_switch():
    model = demo_model()
    days = pd.date_range(model.history_end + pd.Timedelta(days=1), periods=4)
    temps_c = [10.0, 20.0, 30.0, 35.0]
    data = "date,temperature\n" + "".join(
        f"{d.date()},{t}\n" for d, t in zip(days, temps_c, strict=True)
    )
    at = new_app(page="pages/scenario.py", model=model)
    at.radio(key="scn_source").set_value("file")
    at.run()
    assert at.radio(key="scn_file_unit").value == "C"
    at.file_uploader(key="scn_upload").set_value(("celsius.csv", data.encode(), "text/csv"))
    at.text_input(key="scn_name").set_value("From file")
    at.run()
    _switch(at, "F")
    assert_no_exception(at)
    assert not texts(at, "error")
    assert at.radio(key="scn_file_unit").value == "C"
    _add(at)
    np.testing.assert_array_equal(at.session_state["scenarios"]["From file"].temperature_c, temps_c)


def test_the_model_pages_temperatures_follow_the_switch():
    model = demo_model()
    at = new_app(page="pages/model_fit.py", model=model)
    centre = at.number_input(key="fit_ref")
    assert centre.value == round(model.settings.terms.reference_temp_c, 1)
    _switch(at, "F")
    assert_no_exception(at)
    centre = at.number_input(key="fit_ref")
    assert "°F" in centre.label
    assert centre.value == round(model.settings.terms.reference_temp_c * 1.8 + 32, 1)
