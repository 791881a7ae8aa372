"""Shared helpers for the planner-app tests (AppTest), plus tests of the app's own small helpers.

The other ``tests/test_app_*.py`` files import the helpers from here. The demo model is fitted once
per test process, through the app's Model page with the quick search, and reused by every test.
"""

from __future__ import annotations

import functools
import os
import re
import sys
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
import pytest
from streamlit.runtime.memory_media_file_storage import MemoryMediaFileStorage
from streamlit.testing.v1 import AppTest
from streamlit.testing.v1 import app_test as app_test_module

REPO = Path(__file__).resolve().parent.parent
if str(REPO) not in sys.path:
    sys.path.insert(0, str(REPO))

MAIN = str(REPO / "app" / "main.py")
DEMO_CSV = REPO / "demo_data" / "history.csv"

# AppTest runs can be slow on a busy machine; a fit through the app needs much longer.
RUN_TIMEOUT_S = 240
FIT_TIMEOUT_S = 1800


@functools.lru_cache(maxsize=1)
def demo_history():
    """The demo history, read once per test process."""
    from loadcore.history import read_history

    return read_history(DEMO_CSV)


def new_app(
    *,
    page: str | None = None,
    model: Any = None,
    scenarios: dict | None = None,
    extra: dict | None = None,
    timeout: float = RUN_TIMEOUT_S,
) -> AppTest:
    """An AppTest of app/main.py, session seeded with ``model``/``scenarios``, run on ``page``."""
    at = AppTest.from_file(MAIN, default_timeout=timeout)
    if model is not None:
        at.session_state["model"] = model
    if scenarios is not None:
        at.session_state["scenarios"] = dict(scenarios)
    for key, value in (extra or {}).items():
        at.session_state[key] = value
    at.run()
    if page is not None:
        at.switch_page(page)
        at.run()
    return at


@functools.lru_cache(maxsize=1)
def fitted_through_app() -> tuple[Any, dict]:
    """Fit the demo model once through the Model page (quick search, default settings).

    Returns the fitted model and what the page showed right after the fit (progress bar,
    exceptions, errors), so the Model page test can check the fit without fitting again.
    """
    at = AppTest.from_file(MAIN, default_timeout=RUN_TIMEOUT_S)
    at.session_state["model"] = None
    at.run()
    at.switch_page("pages/model_fit.py")
    at.run()
    assert at.radio(key="fit_search").value == "quick"
    submit = [b for b in at.get("button") if getattr(b, "label", "") == "Fit the model"]
    assert submit, "the Model page has no 'Fit the model' button"
    submit[0].click()
    at.run(timeout=FIT_TIMEOUT_S)
    seen = {
        "exceptions": [e.value for e in at.exception],
        "errors": [e.value for e in at.error],
        "progress": [(p.value, p.proto.text) for p in at.get("progress")],
        "markdown": [m.value for m in at.markdown],
        "metrics": {m.label: m.value for m in at.metric},
    }
    model = at.session_state["model"]
    assert model is not None, f"the fit through the app failed: {seen}"
    return model, seen


def demo_model():
    """The demo model fitted through the app (once per test process)."""
    return fitted_through_app()[0]


def texts(at: AppTest, kind: str) -> list[str]:
    """What a reader sees in every element of one kind (``"error"``, ``"warning"``,
    ``"markdown"``...): the element's text with the escapes that keep user text plain resolved
    (app/plain.py; the raw strings are checked by ``markdown_strings``)."""
    from app.plain import shown

    return [shown(str(e.value)) for e in at.get(kind)]


def assert_no_exception(at: AppTest) -> None:
    """No exception reached the page, neither uncaught nor caught by the app's last-resort guard."""
    from loadcore.texts import INTERNAL_ERROR

    assert not at.exception, [e.value for e in at.exception]
    assert INTERNAL_ERROR not in texts(at, "error"), "a page failed; see the log for the traceback"


class _RecordingStorage(MemoryMediaFileStorage):
    """The in-memory media store of an AppTest run, remembered so download bytes can be read."""

    made: list[MemoryMediaFileStorage] = []

    def __init__(self, media_endpoint: str) -> None:
        super().__init__(media_endpoint)
        _RecordingStorage.made.append(self)


@contextmanager
def recording_downloads() -> Iterator[None]:
    """While active, AppTest runs keep their media store so downloads can be read back."""
    original = app_test_module.MemoryMediaFileStorage
    app_test_module.MemoryMediaFileStorage = _RecordingStorage
    _RecordingStorage.made.clear()
    try:
        yield
    finally:
        app_test_module.MemoryMediaFileStorage = original


def download_bytes(at: AppTest, key: str) -> bytes:
    """The bytes behind the download button ``key`` in the last run (inside recording_downloads)."""
    button = at.download_button(key=key)
    url = button.proto.url
    assert url, f"download button {key!r} has no file"
    assert _RecordingStorage.made, "run the app inside recording_downloads()"
    return _RecordingStorage.made[-1].get_file(os.path.basename(url)).content


def heat_wave_settings(model) -> dict[str, Any]:
    """Path-tool inputs for a heat wave whose peak is 3 °C above the hottest fitted day."""
    return {
        "peak_c": float(model.temperature_range_c[1]) + 3.0,
        "at_peak": 2,
        "ramp": 2,
        "start_day": 4,
        "days": 14,
    }


def build_heat_wave_in_app(at: AppTest, settings: dict[str, Any], name: str = "Heat wave") -> None:
    """Set the Build-a-scenario page's tools for a seasonal-normal path plus a heat wave."""
    at.text_input(key="scn_name").set_value(name)
    if "start" in settings:
        at.date_input(key="scn_start").set_value(pd.Timestamp(settings["start"]).date())
    at.number_input(key="scn_days").set_value(settings["days"])
    at.selectbox(key="scn_base").set_value("normal")
    if not at.checkbox(key="scn_hw_on").value:  # its fields are disabled until it is ticked
        at.checkbox(key="scn_hw_on").set_value(True)
        at.run()
    at.number_input(key="scn_hw_peak").set_value(round(settings["peak_c"], 1))
    at.number_input(key="scn_hw_top").set_value(settings["at_peak"])
    at.number_input(key="scn_hw_ramp").set_value(settings["ramp"])
    at.number_input(key="scn_hw_day").set_value(settings["start_day"])
    at.run()


def heat_wave_by_loadcore(model, settings: dict[str, Any], name: str = "Heat wave"):
    """The same scenario built with loadcore calls only (what the app must match); the window
    starts on ``settings["start"]`` when given, else the day after the history."""
    from loadcore.scenario import heat_wave, make_scenario, seasonal_normal_path

    start = settings.get("start", model.history_end + pd.Timedelta(days=1))
    path = seasonal_normal_path(model.history, start, settings["days"])
    path = heat_wave(
        path,
        round(settings["peak_c"], 1),
        settings["at_peak"] + 2 * settings["ramp"],  # the event lasts ramp + peak + ramp days
        settings["ramp"],
        settings["start_day"] - 1,
    )
    return make_scenario(name, path, None, model_end=model.history_end)


# --------------------------------------------------------------------------------------------
# Tests of the app's small helpers
# --------------------------------------------------------------------------------------------


@pytest.mark.parametrize("unit", ["C", "F"])
def test_temperature_helpers_round_trip(unit):
    """°F conversion is loadcore's (scenario.c_to_f / f_to_c); the app only chooses the unit."""
    script = f"""
import streamlit as st
from app import display
st.session_state["temp_unit"] = "{unit}"
values = [-10.0, 0.0, 37.5]
shown = [float(display.to_display(v)) for v in values]
back = [float(display.from_display(v)) for v in shown]
st.session_state["out"] = (shown, back, display.delta_to_display(5.0), display.fmt_temp(100.0))
"""
    at = AppTest.from_string(script, default_timeout=60)
    at.run()
    assert_no_exception(at)
    shown, back, delta, text = at.session_state["out"]
    np.testing.assert_allclose(back, [-10.0, 0.0, 37.5])
    if unit == "F":
        # 0 °C = 32 °F and a 5 °C step = 9 °F (common practice, no source).
        assert shown[1] == pytest.approx(32.0)
        assert delta == pytest.approx(9.0)
        assert text == "212.0 °F"
    else:
        assert shown == [-10.0, 0.0, 37.5]
        assert text == "100.0 °C"


def test_state_transitions_are_the_only_writers_of_the_session():
    """Every transition in app/state.py, run as a page would run it."""
    script = """
import pandas as pd
import streamlit as st
from app import state
from loadcore.calendar import CalendarSpec
from loadcore.errors import InputError
from loadcore.scenario import constant_path, make_scenario

state.init_state()
a = make_scenario("A", constant_path("2031-07-01", 3, 20.0))
b = make_scenario("B", constant_path("2031-07-01", 3, 25.0))
hotter = make_scenario("A", constant_path("2031-07-01", 3, 30.0))
log = [state.put_scenario(a), state.put_scenario(b), state.put_scenario(hotter)]
view = state.scenarios()
view.pop("B")  # the getter is a copy: this changes nothing
log.append(list(state.scenarios()))
state.remove_scenarios(["B", "not there"])
log.append(list(state.scenarios()))
state.set_temp_unit("°f")
log.append(state.temp_unit())
try:
    state.set_temp_unit("K")
except InputError:
    log.append("refused")
state.set_meeting_view(1)
log.append(state.meeting_view())
state.use_calendar(CalendarSpec(country=None))
log.append(state.calendar().country)
st.session_state["out"] = (log, state.scenarios()["A"] == hotter)
"""
    at = AppTest.from_string(script, default_timeout=120)
    at.run()
    assert_no_exception(at)
    log, replaced = at.session_state["out"]
    assert log == [False, False, True, ["A", "B"], ["A"], "F", "refused", True, None]
    assert replaced
    assert at.session_state["temp_unit"] == "F" and at.session_state["meeting_view"] is True


def test_pages_leave_the_session_to_app_state():
    """Pages call app/state.py's transitions; none reads or writes st.session_state itself."""
    for path in sorted((REPO / "app" / "pages").glob("*.py")):
        assert "session_state" not in path.read_text(encoding="utf-8"), path.name


# --------------------------------------------------------------------------------------------
# What the app hands to Streamlit's Markdown renderer (for the no-injection checks)
# --------------------------------------------------------------------------------------------

# Proto fields Streamlit renders as Markdown: element bodies, labels, tooltips, metric deltas.
MARKDOWN_FIELDS = {"body", "label", "help", "delta", "title"}
# Elements whose text is shown as it is (no Markdown): code, plain text, tables, raw HTML we write.
PLAIN_ELEMENTS = {"code", "text", "dataframe", "arrow_data_frame", "html", "json", "plotly_chart"}


def _markdown_strings(message, out: list[str]) -> None:
    for field, value in message.ListFields():
        items = list(value) if field.is_repeated else [value]
        if field.type == field.TYPE_MESSAGE:
            for item in items:
                _markdown_strings(item, out)
        elif field.type == field.TYPE_STRING and field.name in MARKDOWN_FIELDS:
            out.extend(str(v) for v in items if v)


def markdown_strings(at: AppTest) -> list[str]:
    """Every string of the last run that Streamlit renders as Markdown (bodies, labels, help,
    metric deltas, expander and popover titles, radio options), main area and sidebar."""
    out: list[str] = []

    def walk(node) -> None:
        kind = getattr(node, "type", None)
        proto = getattr(node, "proto", None)
        if proto is not None and kind not in PLAIN_ELEMENTS:
            _markdown_strings(proto, out)
            if kind == "radio":
                out.extend(str(o) for o in proto.options)
        for child in (getattr(node, "children", None) or {}).values():
            walk(child)

    walk(at._tree)
    return out


def assert_renders_as_plain_text(at: AppTest, payloads: list[str]) -> None:
    """No Markdown string of the run holds a payload's link, image or HTML in a live form, and
    each payload that the page shows at all shows literally (after its escapes are resolved)."""
    from app.plain import shown

    strings = markdown_strings(at)
    for s in strings:
        assert "http://" not in s and "https://" not in s, s
        assert not re.search(r"(?<!\\)\]\(", s), s  # a link or image: [text](address)
        assert not re.search(r"(?<!\\)<\s*/?\s*[A-Za-z]", s), s  # an HTML tag
        for payload in payloads:  # shown verbatim, its Markdown would be live
            assert payload not in s, s
    visible = " ".join(shown(s) for s in strings)
    assert any(p in visible for p in payloads), "no payload is shown at all: nothing was tested"


@functools.lru_cache(maxsize=4)
def other_demo_csv(seed: int = 20261, later_by_days: int = 28) -> bytes:
    """A second demo history as CSV bytes: the invented generator (demo_data/generate.py) with
    another seed, its dates moved ``later_by_days`` later (so it ends after the demo history
    does), as a planner's next month of data would."""
    import importlib.util

    spec = importlib.util.spec_from_file_location(
        "demo_generate", REPO / "demo_data" / "generate.py"
    )
    assert spec is not None and spec.loader is not None
    generate = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(generate)
    frame = generate.make_history(seed)
    dates = pd.to_datetime(frame["date"]) + pd.Timedelta(days=later_by_days)
    frame = frame.assign(date=dates.dt.strftime("%Y-%m-%d"))
    return frame.to_csv(index=False).encode("utf-8")
