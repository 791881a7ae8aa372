"""Step 4: compare the scenarios in the set: chart, warnings, summary, daily table, downloads."""

from __future__ import annotations

import streamlit as st

from app import display, state
from app.plain import md
from loadcore import units
from loadcore.errors import LoadcoreError
from loadcore.export import comparison_figure, comparison_summary, forecast_table, to_csv_bytes

meeting = state.meeting_view()
if not meeting:
    st.title("Compare")
fitted = display.need_model()
forecasts = state.forecasts_for_set(fitted)

leave = {"on_click": state.set_meeting_view, "args": (False,)}

if not forecasts:
    st.info("The set is empty. Build a scenario and add it to the set first.")
    st.page_link("pages/scenario.py", label="Build a scenario", icon=":material/thermostat:")
    if meeting:
        st.button("Leave the meeting view", **leave)
    display.footer()
    st.stop()

names = list(forecasts)
range_c = fitted.temperature_range_c
unit = state.temp_unit()

if meeting:
    # Meeting view: the chart large, the controls hidden, fonts readable on a projector.
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
    st.markdown(
        f"History to {fitted.history_end.date():%d %B %Y}, then each scenario's mean daily peak "
        "with its 80 % and 95 % prediction intervals."
    )
    tail = fitted.history.frame["demand"].iloc[-42:]
    st.plotly_chart(
        theme=None,
        figure_or_data=comparison_figure(
            list(forecasts.values()),
            history_tail=tail,
            temp_unit=unit,
            demand_unit=fitted.demand_unit,
            meeting=True,
        ),
        key="meeting_chart",
    )
    summary = comparison_summary(list(forecasts.values()), names[0])
    cols = st.columns(min(len(summary), 4))
    for i, row in enumerate(summary.itertuples(index=False)):
        cols[i % len(cols)].metric(
            md(row.scenario),
            f"{row.peak_mean:,.0f} MW",
            f"{row.peak_vs_base:+,.0f} MW vs {md(names[0])}" if i else None,
            delta_color="inverse",
            help=f"Highest daily mean, on {row.peak_date:%a %d %b}",
        )
    lines = display.out_of_range_lines(forecasts.values(), range_c)
    if lines:
        st.warning(
            "Outside the fitted temperature range (extrapolated):\n\n"
            + "\n".join(f"- {line}" for line in lines)
        )
    st.button("Leave the meeting view", key="leave_meeting", **leave)
    display.footer()
    st.stop()

left, middle, right = st.columns([2, 2, 1])
shown = left.multiselect("Scenarios on the chart", names, default=names, key="cmp_shown")
base_name = middle.selectbox("Compare against (base scenario)", names, key="cmp_base")
tail_days = right.number_input("History days shown", 7, 730, 56, step=7, key="cmp_tail")

chosen = [forecasts[n] for n in shown]
tail = fitted.history.frame["demand"].iloc[-int(tail_days) :]
st.plotly_chart(
    theme=None,
    figure_or_data=comparison_figure(
        chosen, history_tail=tail, temp_unit=unit, demand_unit=fitted.demand_unit
    ),
    key="cmp_chart",
)
st.caption(
    "Lines are mean daily peaks; shaded bands are 80 % and 95 % prediction intervals that treat "
    "the scenario temperatures as known. Triangles mark days outside the fitted temperature range."
)

lines = display.out_of_range_lines(forecasts.values(), range_c)
if lines:
    low, high = (display.fmt_temp(v) for v in range_c)
    st.warning(
        f"{len(lines)} scenario day(s) lie outside the fitted temperature range ({low} to "
        f"{high}); the forecast there is an extrapolation of the fitted response:\n\n"
        + "\n".join(f"- {line}" for line in lines),
        icon=":material/thermostat:",
    )
for name, scenario in state.scenarios().items():
    if name in forecasts:
        display.heat_note(name, scenario.temperature_c)

# --------------------------------------------------------------------------------------------
# Summary per scenario
# --------------------------------------------------------------------------------------------
st.subheader("Summary")
try:
    summary = comparison_summary(list(forecasts.values()), base_name)
except LoadcoreError as exc:
    display.show_error(exc)
else:
    table = summary.rename(
        columns={
            "scenario": "scenario",
            "days": "days",
            "peak_date": "peak day",
            "peak_mean": "peak, MW",
            "sum_of_daily_means": "sum of daily means, MW-days",
            "peak_vs_base": f"peak vs {base_name}, MW",
            "peak_vs_base_pct": f"peak vs {base_name}, %",
            "sum_vs_base": f"sum vs {base_name}, MW-days",
            "sum_vs_base_pct": f"sum vs {base_name}, %",
            "days_out_of_range": "days outside fitted range",
        }
    ).drop(columns=["sum_unit"])
    st.dataframe(
        table,
        hide_index=True,
        width="stretch",
        column_config={
            "peak day": st.column_config.DateColumn(format="ddd YYYY-MM-DD"),
            "peak, MW": st.column_config.NumberColumn(format="%.0f"),
            "sum of daily means, MW-days": st.column_config.NumberColumn(format="%.0f"),
            f"peak vs {base_name}, MW": st.column_config.NumberColumn(format="%+.0f"),
            f"peak vs {base_name}, %": st.column_config.NumberColumn(format="%+.1f"),
            f"sum vs {base_name}, MW-days": st.column_config.NumberColumn(format="%+.0f"),
            f"sum vs {base_name}, %": st.column_config.NumberColumn(format="%+.1f"),
        },
    )
    note = summary.attrs.get("sum_note")
    if note:
        st.caption(note)
    if summary.attrs.get("horizon_note"):
        st.caption(summary.attrs["horizon_note"])

# --------------------------------------------------------------------------------------------
# Daily table and downloads
# --------------------------------------------------------------------------------------------
st.subheader("Day by day")
daily = forecast_table(list(forecasts.values()), temp_unit=unit)
st.dataframe(
    daily,
    hide_index=True,
    width="stretch",
    column_config={
        "date": st.column_config.DateColumn(format="YYYY-MM-DD"),
        units.temperature_column(unit): st.column_config.NumberColumn(
            f"temperature, {display.unit_symbol()}", format="%.1f"
        ),
    },
    height=360,
)
left, right = st.columns(2)
left.download_button(
    "Download every scenario's forecast (CSV)",
    data=to_csv_bytes(daily),
    file_name="loadcore_scenarios.csv",
    mime="text/csv",
    icon=":material/download:",
    key="cmp_csv",
    on_click="ignore",
)
with right:
    which = st.selectbox("Scenario definition to download", names, key="cmp_def_pick")
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
    drop = st.multiselect("Scenarios to remove", names, key="cmp_drop")
    if st.button("Remove", disabled=not drop, key="cmp_drop_go"):
        state.remove_scenarios(drop)
        st.rerun()

display.footer()
