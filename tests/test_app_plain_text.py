"""No user text is rendered as Markdown or HTML anywhere in the app (issue 11, item 2).

A file's column names and file name, a scenario's name, a library note and an author all reach
Streamlit elements that render Markdown (alerts, captions, labels, metrics). Each payload below
would show an image, a link or HTML if it were passed on as it is; the checks read what the app
hands to Streamlit (tests/test_app_support.py: markdown_strings). The real-browser test counts the
requests that leave the machine on the same kind of input.
"""

from __future__ import annotations

import pandas as pd
import pytest
from test_app_support import (
    DEMO_CSV,
    assert_no_exception,
    assert_renders_as_plain_text,
    demo_model,
    heat_wave_by_loadcore,
    heat_wave_settings,
    markdown_strings,
    new_app,
)

from app.plain import md, shown

IMAGE = "![x](http://example.invalid/p.png)"
NAME = "**Big** <img src=http://example.invalid/i.png> [site](http://example.invalid)"
NOTE = "<script>alert(1)</script> ![n](https://example.invalid/n.png) _draft_ :red[hot]"
AUTHOR = "<b>Planner</b> www.example.invalid a@example.invalid"


@pytest.mark.parametrize(
    "text",
    [IMAGE, NAME, NOTE, AUTHOR, "$x^2$ -> <= :streamlit: `code` # head\n- item | a | b |", "a\\b"],
)
def test_md_keeps_every_character_and_escapes_all_punctuation(text):
    escaped = md(text)
    assert shown(escaped) == " ".join(text.split("\n"))  # line breaks become spaces
    for i, ch in enumerate(escaped):
        if ch in "*[]<>`$|~&":  # every sign that opens Markdown or HTML is escaped
            assert escaped[i - 1] == "\\", (escaped, i)
    assert "http://" not in escaped and "www." not in escaped and "://" not in escaped


def test_md_cuts_long_text_before_escaping():
    assert shown(md("a" * 200, limit=10)) == "a" * 9 + "…"
    assert md(None) == ""


def test_a_history_header_with_an_image_is_shown_as_text():
    header = f"date,{IMAGE},temperature\n"
    rows = "".join(f"2024-01-{d:02d},{1000 + d},{10 + d}\n" for d in range(1, 20))
    at = new_app(page="pages/history.py")
    at.file_uploader(key="history_upload").set_value(
        ("<b>bad</b> [f](http://example.invalid).csv", (header + rows).encode(), "text/csv")
    )
    at.run()
    [b for b in at.button if b.label == "Check and use this file"][0].click()
    at.run()
    assert_no_exception(at)
    assert at.error, "the bad file was accepted"
    assert_renders_as_plain_text(at, [IMAGE, "<b>bad</b> [f](http://example.invalid).csv"])


def test_a_history_file_name_with_markdown_is_plain_in_the_messages_and_the_sidebar():
    frame = pd.read_csv(DEMO_CSV).iloc[-400:]
    name = "![f](http://example.invalid/f.png) <i>h</i>.csv"
    at = new_app(page="pages/history.py")
    at.file_uploader(key="history_upload").set_value(
        (name, frame.to_csv(index=False).encode(), "text/csv")
    )
    at.run()
    [b for b in at.button if b.label == "Check and use this file"][0].click()
    at.run()
    assert_no_exception(at)
    assert name in at.session_state["history_source"]
    assert_renders_as_plain_text(at, [name])
    # A new session on that history: the sidebar's first run names the file too.
    fresh = new_app(
        extra={
            "history": at.session_state["history"],
            "history_source": at.session_state["history_source"],
        }
    )
    assert_no_exception(fresh)
    assert_renders_as_plain_text(fresh, [name])


def test_a_scenario_name_with_markdown_and_html_is_plain_on_the_builder():
    model = demo_model()
    at = new_app(page="pages/scenario.py", model=model)
    at.text_input(key="scn_name").set_value(NAME)
    at.number_input(key="scn_hw_peak").set_value(round(model.temperature_range_c[1] + 3.0, 1))
    at.run()
    [b for b in at.button if b.label == "Add to the set"][0].click()
    at.run()
    assert_no_exception(at)
    assert NAME in at.session_state["scenarios"]
    assert_renders_as_plain_text(at, [NAME])


@pytest.mark.parametrize("meeting", [False, True])
def test_scenario_names_are_plain_on_compare_and_in_the_meeting_view(meeting):
    model = demo_model()
    hot = heat_wave_by_loadcore(model, heat_wave_settings(model), name=NAME)
    other = heat_wave_by_loadcore(model, {**heat_wave_settings(model), "peak_c": 30.0}, name=IMAGE)
    at = new_app(
        page="pages/compare.py",
        model=model,
        scenarios={IMAGE: other, NAME: hot},
        extra={"meeting_view": meeting},
    )
    assert_no_exception(at)
    assert_renders_as_plain_text(at, [NAME, IMAGE])


def test_library_names_notes_and_authors_are_plain(tmp_path, monkeypatch):
    monkeypatch.setenv("LOADCORE_LIBRARY", str(tmp_path / "lib [x](http://example.invalid).sqlite"))
    model = demo_model()
    hot = heat_wave_by_loadcore(model, heat_wave_settings(model), name=NAME)
    at = new_app(page="pages/saved.py", model=model, scenarios={NAME: hot})
    at.text_input(key="lib_note").set_value(NOTE)
    at.text_input(key="lib_author").set_value(AUTHOR)
    at.button(key="lib_save").click()
    at.run()
    assert_no_exception(at)
    assert not at.error, [e.value for e in at.error]
    assert_renders_as_plain_text(at, [NAME, NOTE, AUTHOR])
    visible = " ".join(shown(s) for s in markdown_strings(at))
    assert NOTE in visible and AUTHOR in visible
