"""Saved scenarios: the team's shared library of scenarios with the forecasts made for them."""

from __future__ import annotations

import pandas as pd
import streamlit as st

from app import cache, display, state, tables
from app.plain import md
from loadcore.errors import LoadcoreError
from loadcore.export import comparison_figure, comparison_summary, meeting_brief_html
from loadcore.library import (
    ScenarioLibrary,
    default_library_path,
    entry_from_forecast,
    is_current,
)
from loadcore.scenario import make_scenario

st.title("Saved scenarios")


@st.cache_resource(show_spinner=False)
def _library(path: str) -> ScenarioLibrary:
    return ScenarioLibrary(path)


path = str(default_library_path())
ok, library = display.attempt(lambda: _library(path), "The scenario library could not be opened")
if not ok:
    st.caption("Set the environment variable LOADCORE_LIBRARY to a writable file and restart.")
    display.footer()
    st.stop()
st.caption(f"Library file: {md(path)}. Everyone using this file sees the same saved scenarios.")
fitted = state.model()

# --------------------------------------------------------------------------------------------
# Save a scenario from the set
# --------------------------------------------------------------------------------------------
with st.expander("Save a scenario from the set", expanded=bool(state.scenarios())):
    if fitted is None or not state.scenarios():
        st.info("Fit a model and add a scenario to the set first.")
    else:
        last_save = state.prepare_library_form(list(state.scenarios()))
        a, b = st.columns(2)
        pick = a.selectbox(
            "Scenario",
            list(state.scenarios()),
            key=state.LIB_PICK_WIDGET,
            on_change=state.library_pick_chosen,
        )
        save_name = b.text_input("Save as", key=state.LIB_NAME_WIDGET, max_chars=120)
        a, b = st.columns([3, 1])
        note = a.text_input("Note", key=state.LIB_NOTE_WIDGET, max_chars=500)
        author = b.text_input("Your name", value="", key="lib_author", max_chars=80)
        if st.button("Save", type="primary", key="lib_save"):
            scenario = state.scenarios()[pick]
            try:
                fc = cache.forecast(fitted, scenario)
                entry = entry_from_forecast(
                    fc, scenario=scenario, model=fitted, name=save_name, note=note, author=author
                )
                saved = library.save(entry)
            except LoadcoreError as exc:
                display.show_error(exc, "Not saved")
            else:
                state.library_saved(f"Saved '{md(saved.name)}' (version {saved.version}).")
                st.rerun()
        if last_save:
            st.success(last_save)

# --------------------------------------------------------------------------------------------
# List and search
# --------------------------------------------------------------------------------------------
st.subheader("In the library")
search = st.text_input("Search names, notes and authors", value="", key="lib_search")
ok, found = display.attempt(lambda: library.scan(search or None))
if not ok:
    display.footer()
    st.stop()
listing = list(found.items)
for row in found.damaged:
    st.warning(
        f"The saved scenario '{md(row.name)}' is damaged and is left out of the list: "
        f"{md(row.reason)}. Delete it with a library tool or restore the file from a backup.",
        icon=":material/report:",
    )
if not listing:
    st.info("Nothing saved yet." if not search else "No saved scenario matches the search.")
    display.footer()
    st.stop()
table = pd.DataFrame([item.to_dict() for item in listing])
table = table[
    ["name", "note", "author", "first_date", "last_date", "days", "version", "changed_utc"]
]
table = table.assign(
    first_date=pd.to_datetime(table["first_date"]),
    last_date=pd.to_datetime(table["last_date"]),
    changed_utc=pd.to_datetime(table["changed_utc"], utc=True),
)
st.dataframe(table, hide_index=True, width="stretch", column_config=tables.library_columns())

# --------------------------------------------------------------------------------------------
# One saved scenario: open, re-forecast, rename, duplicate, delete
# --------------------------------------------------------------------------------------------
names = [item.name for item in listing]
chosen = st.selectbox("Saved scenario", names, key="lib_chosen")
ok, saved = display.attempt(lambda: library.get(chosen))
if not ok:
    display.footer()
    st.stop()

if fitted is not None and not is_current(saved, fitted):
    st.warning(
        "This forecast was made with a different model (or other settings) from the one in use.",
        icon=":material/update:",
    )
    if st.button("Re-forecast it with the current model", key="lib_reforecast"):
        try:
            scenario = make_scenario(
                saved.name,
                saved.scenario().path(),
                saved.scenario().day_types,
                model_end=fitted.history_end,
            )
            fc = cache.forecast(fitted, scenario)
            entry = entry_from_forecast(
                fc, scenario=scenario, model=fitted, note=saved.note, author=saved.author
            )
            library.update(saved.name, expected_version=saved.version, entry=entry)
        except LoadcoreError as exc:
            display.show_error(exc, "Not re-forecast")
        else:
            st.rerun()

a, b, c, d = st.columns(4)
if a.button("Open in the set", key="lib_open", disabled=fitted is None):
    try:
        scenario = make_scenario(
            saved.name,
            saved.scenario().path(),
            saved.scenario().day_types,
            model_end=fitted.history_end,
        )
    except LoadcoreError as exc:
        display.show_error(exc, "It does not fit the model in use")
    else:
        state.put_scenario(scenario)
        st.success(f"'{md(scenario.name)}' is in the set; see the Compare page.")
with b.popover("Rename"):
    new_name = st.text_input("New name", value=saved.name, key="lib_new_name")
    if st.button("Rename", key="lib_rename"):
        if display.attempt(lambda: library.rename(saved.name, new_name, saved.version))[0]:
            st.rerun()
with c.popover("Duplicate"):
    copy_name = st.text_input("Name of the copy", value=f"{saved.name} copy", key="lib_copy")
    if st.button("Duplicate", key="lib_duplicate"):
        if display.attempt(lambda: library.duplicate(saved.name, copy_name))[0]:
            st.rerun()
with d.popover("Delete"):
    sure = st.checkbox(f"Yes, delete '{md(saved.name)}'", key="lib_sure")
    if st.button("Delete", key="lib_delete", disabled=not sure):
        if display.attempt(lambda: library.delete(saved.name, saved.version))[0]:
            st.rerun()

st.caption(
    f"By {md(saved.author) or 'unknown'}, saved {saved.created_utc}, changed "
    f"{saved.changed_utc} (version {saved.version}). {md(saved.note)}"
)

# --------------------------------------------------------------------------------------------
# Compare saved scenarios and download a meeting brief
# --------------------------------------------------------------------------------------------
st.subheader("Compare saved scenarios")
picked = st.multiselect("Saved scenarios to compare", names, default=[chosen], key="lib_cmp")
if picked:
    ok, entries = display.attempt(lambda: [library.get(n) for n in picked])
    if ok:
        stored = [e.to_forecast() for e in entries]
        tail = entries[0].history_tail()["demand"]
        st.plotly_chart(
            theme=None,
            figure_or_data=comparison_figure(
                stored,
                history_tail=tail,
                temp_unit=state.temp_unit(),
                demand_unit=entries[0].context.get("demand_unit", "MW"),
            ),
            key="lib_chart",
        )
        base = st.selectbox("Base scenario", picked, key="lib_base")
        ok, summary = display.attempt(lambda: comparison_summary(stored, base))
        if ok:
            frame, config = tables.summary_table(
                summary, base, entries[0].context.get("demand_unit", "MW")
            )
            st.dataframe(frame, hide_index=True, width="stretch", column_config=config)
        period = entries[0].context.get("history_period") or []
        period_text = f"History {period[0]} to {period[1]}" if len(period) == 2 else ""
        ok, html = display.attempt(
            lambda: meeting_brief_html(
                stored,
                history_tail=entries[0].history_tail(),
                model_summary=entries[0].context.get("model_summary", {}),
                base_name=base,
                title="Calder Basin demand scenarios"
                if state.using_demo_data()
                else "Demand scenarios",
                period_text=period_text,
                temp_unit=state.temp_unit(),
                demand_unit=entries[0].context.get("demand_unit", "MW"),
                demand_kind=entries[0].context.get("demand_kind", "peak"),
            )
        )
        if ok:
            st.download_button(
                "Download the meeting brief (HTML, opens offline)",
                data=html.encode("utf-8"),
                file_name="meeting_brief.html",
                mime="text/html",
                icon=":material/download:",
                key="lib_brief",
                on_click="ignore",
            )

display.footer()
