"""Step 4: compare the scenarios in the set: chart, warnings, summary, daily table, downloads.

One set of choices (the scenarios shown, the base, the days of history) serves this page and its
meeting view (app/state.py: ``compare_choice``); everything on the page follows the scenarios
shown. Scenarios that the model in use cannot forecast (a window that starts before its history
ends, after a new history and model) are listed with the reason and can be moved or removed.
"""

from __future__ import annotations

import streamlit as st

from app import display, state, tables
from app.plain import md, quoted
from loadcore.errors import LoadcoreError
from loadcore.export import (
    comparison_figure,
    comparison_summary,
    forecast_table,
    meeting_brief_html,
    round_for_planners,
    summarise_model,
    to_csv_bytes,
)
from loadcore.scenario import same_days_after

meeting = state.meeting_view()
if not meeting:
    st.title("Compare")
fitted = display.need_model()
forecasts, problems = state.forecasts_for_set(fitted)
names = list(forecasts)
unit = state.temp_unit()
range_c = fitted.temperature_range_c
leave = {"on_click": state.set_meeting_view, "args": (False,)}


def _history_tail(days: int):
    return fitted.history.frame["demand"].iloc[-int(days) :]


def _brief(chosen: list, base: str) -> str:
    """The offline meeting brief of the scenarios shown (loadcore.export.meeting_brief_html)."""
    history = fitted.history
    return meeting_brief_html(
        chosen,
        history_tail=history.frame[["demand"]].iloc[-int(choice.tail_days) :],
        model_summary=summarise_model(fitted, temp_unit=unit),
        base_name=base,
        title="Calder Basin demand scenarios" if state.using_demo_data() else "Demand scenarios",
        period_text=f"History {history.start:%Y-%m-%d} to {history.end:%Y-%m-%d}",
        temp_unit=unit,
        demand_unit=fitted.demand_unit,
        demand_kind=history.settings.subdaily_demand,
    )


# --------------------------------------------------------------------------------------------
# Meeting view: the chart large, the controls hidden, fonts readable on a projector
# --------------------------------------------------------------------------------------------
if meeting:
    choice = state.compare_choice(names)
    st.html(
        "<style>"
        "section[data-testid='stSidebar'], [data-testid='stSidebarCollapsedControl'],"
        "header[data-testid='stHeader'] {display: none;}"
        ".block-container {padding-top: 1rem; max-width: 100%;}"
        ".stMarkdown p, .stMarkdown li, .stAlert p {font-size: 1.45rem; line-height: 1.5;}"
        "h1 {font-size: 2.6rem !important;}"
        "[data-testid='stMetricValue'] {font-size: 3rem;}"
        "[data-testid='stMetricLabel'] p {font-size: 1.4rem;}"
        "</style>"
    )
    st.title("Demand scenarios")
    if not choice.shown:
        st.info("No scenario is chosen for the chart. Leave the meeting view and choose some.")
        st.button("Leave the meeting view", key="leave_meeting", **leave)
        display.footer()
        st.stop()
    chosen = [forecasts[n] for n in choice.shown]
    st.markdown(
        f"History to {fitted.history_end.date():%d %B %Y}, then each scenario's mean daily peak "
        "with its 80 % and 95 % prediction intervals."
    )
    st.plotly_chart(
        theme=None,
        figure_or_data=comparison_figure(
            chosen,
            history_tail=_history_tail(choice.tail_days),
            temp_unit=unit,
            demand_unit=fitted.demand_unit,
            meeting=True,
        ),
        key="meeting_chart",
    )
    summary = comparison_summary(chosen, choice.base)
    cols = st.columns(min(len(summary), 4))
    for i, row in enumerate(summary.itertuples(index=False)):
        is_base = row.scenario == choice.base
        cols[i % len(cols)].metric(
            md(row.scenario),
            f"{row.peak_mean:,.0f} {fitted.demand_unit}",
            None
            if is_base
            else f"{row.peak_vs_base:+,.0f} {fitted.demand_unit} vs {md(choice.base)}",
            delta_color="inverse",
            help=f"Highest daily mean, on {row.peak_date:%a %d %b %Y}",
        )
    lines = display.out_of_range_lines(chosen, range_c)
    if lines:
        st.warning(
            "Outside the fitted temperature range (extrapolated):\n\n"
            + "\n".join(f"- {line}" for line in lines)
        )
    st.button("Leave the meeting view", key="leave_meeting", **leave)
    display.footer()
    st.stop()

# --------------------------------------------------------------------------------------------
# Scenarios the model in use cannot forecast: say why, offer to move or remove them
# --------------------------------------------------------------------------------------------
everything = list(state.scenarios())
if problems:
    listed = "\n".join(f"- {quoted(name)}: {md(exc)}" for name, exc in problems.items())
    st.warning(
        f"{len(problems)} of the {len(everything)} scenarios in the set cannot be forecast with "
        "the model in use, so they are left off the page until they are moved or removed:\n\n"
        + listed,
        icon=":material/event_busy:",
    )
    with st.container(border=True):
        moving = st.multiselect(
            "Scenarios to move to the same calendar days in the first year after the history",
            list(problems),
            default=list(problems),
            key="cmp_move",
        )
        if st.button("Move them", key="cmp_move_go", disabled=not moving):
            ok, moved = display.attempt(
                lambda: [
                    state.scenarios()[name].moved_to(
                        same_days_after(state.scenarios()[name].start, fitted.history_end)
                    )
                    for name in moving
                ],
                "Not moved",
            )
            if ok:
                state.move_scenarios(moved)
                st.rerun()

if not names:
    if everything:
        st.info("No scenario in the set can be forecast with the model in use.")
    else:
        st.info("The set is empty. Build a scenario and add it to the set first.")
        st.page_link("pages/scenario.py", label="Build a scenario", icon=":material/thermostat:")
    if everything:
        with st.expander("Remove scenarios from the set"):
            drop = st.multiselect("Scenarios to remove", everything, key="cmp_drop")
            if st.button("Remove", disabled=not drop, key="cmp_drop_go"):
                state.remove_scenarios(drop)
                st.rerun()
    display.footer()
    st.stop()

# --------------------------------------------------------------------------------------------
# The choices (shared with the meeting view) and the chart
# --------------------------------------------------------------------------------------------
choice = state.sync_compare_widgets(names)
chosen_cb = {"on_change": state.compare_chosen, "args": (names,)}
left, middle, right = st.columns([2, 2, 1])
left.multiselect("Scenarios on the chart", names, key=state.SHOWN_WIDGET, **chosen_cb)
if choice.shown:
    middle.selectbox(
        "Compare against (base scenario)", list(choice.shown), key=state.BASE_WIDGET, **chosen_cb
    )
right.number_input("History days shown", 7, 730, step=7, key=state.TAIL_WIDGET, **chosen_cb)
if not choice.shown:
    st.info("Choose at least one scenario for the chart.")
    display.footer()
    st.stop()

chosen = [forecasts[n] for n in choice.shown]
base_name = choice.base
st.plotly_chart(
    theme=None,
    figure_or_data=comparison_figure(
        chosen,
        history_tail=_history_tail(choice.tail_days),
        temp_unit=unit,
        demand_unit=fitted.demand_unit,
    ),
    key="cmp_chart",
)
st.caption(
    "Lines are mean daily peaks; shaded bands are 80 % and 95 % prediction intervals that treat "
    "the scenario temperatures as known. Triangles mark days outside the fitted temperature "
    "range. Click a scenario in the legend to hide or show it with its bands."
)

lines = display.out_of_range_lines(chosen, range_c)
if lines:
    low, high = (display.fmt_temp(v) for v in range_c)
    st.warning(
        f"{len(lines)} scenario day(s) lie outside the fitted temperature range ({low} to "
        f"{high}); the forecast there is an extrapolation of the fitted response:\n\n"
        + "\n".join(f"- {line}" for line in lines),
        icon=":material/thermostat:",
    )
for name in choice.shown:
    display.heat_note(name, state.scenarios()[name].temperature_c)

# --------------------------------------------------------------------------------------------
# Summary per scenario
# --------------------------------------------------------------------------------------------
st.subheader("Summary")
try:
    summary = comparison_summary(
        chosen,
        base_name,
        demand_unit=fitted.demand_unit,
        demand_kind=fitted.history.settings.subdaily_demand,
    )
except LoadcoreError as exc:
    display.show_error(exc)
else:
    shown_summary, summary_config = tables.summary_table(summary, base_name, fitted.demand_unit)
    st.dataframe(shown_summary, hide_index=True, width="stretch", column_config=summary_config)
    note = summary.attrs.get("sum_note")
    if note:
        st.caption(note)
    if summary.attrs.get("horizon_note"):
        st.caption(summary.attrs["horizon_note"])

# --------------------------------------------------------------------------------------------
# Daily table and downloads
# --------------------------------------------------------------------------------------------
st.subheader("Day by day")
daily = forecast_table(chosen, temp_unit=unit)
st.dataframe(
    daily,
    hide_index=True,
    width="stretch",
    column_config=tables.forecast_columns(daily.columns, unit, fitted.demand_unit),
    height=360,
)
left, middle, right = st.columns(3)
left.download_button(
    "Download the forecasts shown (CSV)",
    data=to_csv_bytes(round_for_planners(daily)),
    file_name="loadcore_scenarios.csv",
    mime="text/csv",
    icon=":material/download:",
    key="cmp_csv",
    on_click="ignore",
)
ok, brief = display.attempt(
    lambda: _brief(chosen, base_name), "The meeting brief could not be made"
)
if ok:
    middle.download_button(
        "Download the meeting brief (HTML, opens offline)",
        data=brief.encode("utf-8"),
        file_name="meeting_brief.html",
        mime="text/html",
        icon=":material/download:",
        key="cmp_brief",
        on_click="ignore",
    )
with right:
    which = st.selectbox("Scenario definition to download", list(choice.shown), key="cmp_def_pick")
    st.download_button(
        "Download the scenario definition (JSON, can be uploaded again)",
        data=state.scenarios()[which].to_json().encode("utf-8"),
        file_name=f"{which.strip().replace(' ', '_') or 'scenario'}.json",
        mime="application/json",
        icon=":material/download:",
        key="cmp_json",
        on_click="ignore",
    )

with st.expander("Remove scenarios from the set"):
    drop = st.multiselect("Scenarios to remove", everything, key="cmp_drop")
    if st.button("Remove", disabled=not drop, key="cmp_drop_go"):
        state.remove_scenarios(drop)
        st.rerun()

display.footer()
