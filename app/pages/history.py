"""Step 1: the demand history, its validation report, charts and the day-type calendar."""

from __future__ import annotations

import dataclasses
import hashlib

import numpy as np
import pandas as pd
import streamlit as st

from app import charts, display, state, tables
from app.plain import md, quoted
from loadcore.calendar import day_types, overrides_from_text
from loadcore.errors import LoadcoreError
from loadcore.files import check_upload_size
from loadcore.history import HistorySettings, read_history
from loadcore.history.preview import preview_history_file

st.title("History")
st.caption(
    "The daily demand and temperature the model learns from. The demo data (the invented Calder "
    "Basin Power & Light) is loaded to start with; upload your own daily or sub-daily file below."
)


@st.cache_resource(max_entries=8, show_spinner=False)
def _preview(_data: bytes, digest: str):
    return preview_history_file(_data)


@st.cache_resource(max_entries=8, show_spinner="Reading and checking the file...")
def _read_upload(_data: bytes, digest: str, settings: HistorySettings):
    return read_history(_data, settings)


# --------------------------------------------------------------------------------------------
# Source: keep the demo data or upload a file
# --------------------------------------------------------------------------------------------
history = state.history()
st.info(
    f"In use: **{md(state.history_source())}**, {history.start.date()} to "
    f"{history.end.date()} ({len(history.frame)} days).",
    icon=":material/database:",
)

with st.expander("Upload a history file", expanded=False):
    upload = st.file_uploader(
        "History file (CSV or text; comma, semicolon, tab or pipe separated)",
        type=["csv", "txt", "tsv"],
        key="history_upload",
    )
    preview = None
    if upload is not None:
        ok, preview = display.attempt(
            lambda: _preview(upload.getvalue(), hashlib.sha256(upload.getvalue()).hexdigest()),
            f"{upload.name} cannot be read",
        )
    if preview is not None and preview.columns:
        state.prepare_history_form(hashlib.sha256(upload.getvalue()).hexdigest(), preview)
        st.caption(
            f"The file has {len(preview.columns)} columns ("
            + ", ".join(quoted(c, limit=40) for c in preview.columns[:12])
            + (", ..." if len(preview.columns) > 12 else "")
            + f") separated by a {preview.delimiter_name}"
            + (
                f"; its dates look like {' or '.join(preview.date_layouts)}"
                if preview.date_layouts
                else ""
            )
            + (f"; {md(preview.unit_reason)}" if preview.unit_reason else "")
            + ". The choices below start from loadcore's best guess."
        )
        columns = list(preview.columns)
        optional = ["", *columns]
        none_label = {"": "(none)"}
        left, middle, right = st.columns(3)
        date_col = left.selectbox("Date column", columns, key="history_date_col")
        demand_col = middle.selectbox("Demand column", columns, key="history_demand_col")
        temp_col = right.selectbox("Temperature column", columns, key="history_temp_col")
        hinted = {
            s: preview.guesses.get(s) for s in state.OPTIONAL_COLUMNS if preview.guesses.get(s)
        }
        if hinted:
            st.caption(
                "Also in the file: "
                + ", ".join(
                    f"{md(column)} (looks like the {'hour' if s == 'hour_col' else 'minimum'}"
                    " column)"
                    for s, column in hinted.items()
                )
                + "; choose it below if so."
            )
    else:
        columns, optional, none_label = [], [""], {"": "(none)"}
        date_col = demand_col = temp_col = ""
    left, middle, right = st.columns(3)
    file_unit = left.radio(
        "Temperatures in the file are in",
        ["C", "F"],
        format_func=display.unit_symbol,
        horizontal=True,
        key="history_file_unit",
    )
    temp_kind = middle.radio(
        "The temperature is the day's",
        ["max", "mean"],
        format_func=lambda kind: {"max": "maximum", "mean": "mean"}[kind],
        horizontal=True,
        key="history_temp_kind",
    )
    subdaily = right.radio(
        "With several readings a day, demand is the day's",
        ["peak", "total"],
        horizontal=True,
        key="history_subdaily",
        help="Hourly or half-hourly files are turned into one row a day: the peak or the total.",
    )
    left, middle, right = st.columns(3)
    date_format = left.text_input(
        "Date format (leave blank to detect)",
        value="",
        placeholder="e.g. %d/%m/%Y",
        key="history_date_format",
    )
    hour_col = middle.selectbox(
        "Hour column (if the hour has its own column)",
        optional,
        format_func=lambda c: none_label.get(c, c),
        key="history_hour_col",
        help="Hour numbers 1-24 (hour ending) or 0-23 (hour beginning), detected from the "
        "values, or a time of day such as 13:00.",
    )
    temp_min_col = right.selectbox(
        "Minimum temperature column (optional)",
        optional,
        format_func=lambda c: none_label.get(c, c),
        key="history_temp_min_col",
        help="For a daily file with the day's minimum beside its maximum; hourly files give "
        "it without this.",
    )
    drop_outliers = st.checkbox(
        "Treat outlying demand days as missing",
        value=False,
        key="history_drop_outliers",
        help="Days whose demand departs far from the days around them and from the same "
        "weekday in nearby weeks (likely data errors) are always listed in the checks; tick "
        "this to leave them out of the fit.",
    )
    rejected = False
    if st.button("Check and use this file", type="primary", disabled=not columns):
        data = upload.getvalue()
        try:
            check_upload_size(len(data))
            settings = HistorySettings(
                date_col=date_col.strip() or "date",
                demand_col=demand_col.strip() or "demand",
                temp_col=temp_col.strip() or "temperature",
                temp_unit=file_unit,
                temp_kind=temp_kind,
                subdaily_demand=subdaily,
                date_format=date_format.strip() or None,
                hour_col=hour_col.strip() or None,
                temp_min_col=temp_min_col.strip() or None,
                drop_outliers=drop_outliers,
            )
            new = _read_upload(data, hashlib.sha256(data).hexdigest(), settings)
        except LoadcoreError as exc:
            display.show_error(exc, "The file was not used")
            st.caption("The history in use, the model and the scenarios are unchanged.")
            rejected = True
        else:
            state.use_history(new, f"uploaded file {upload.name}")
            st.success(f"Using {md(upload.name)}: {new.start.date()} to {new.end.date()}.")
            st.rerun()
    if not state.using_demo_data():
        if st.button("Go back to the demo data"):
            state.use_demo_history()
            st.rerun()

history = state.history()
fitted = state.model()
if fitted is not None and fitted.history.fingerprint != history.fingerprint:
    st.warning(
        "The fitted model was made from a different history. Fit again on the Model page to use "
        "this one.",
        icon=":material/sync_problem:",
    )

# --------------------------------------------------------------------------------------------
# Validation report
# --------------------------------------------------------------------------------------------
st.subheader("Checks on the data")
if rejected:
    st.caption(
        f"The checks below are those of the history still in use ({md(state.history_source())}), "
        "not of the file that was not used; its problems are listed above."
    )
report = history.report
issues = report.to_frame()
if report.ok and not len(report.warnings) and not rejected:
    st.success("No problems found.", icon=":material/check_circle:")
elif report.ok:
    st.warning(
        f"{len(report.warnings)} warning(s): the data can be used, but look at the changed rows.",
        icon=":material/warning:",
    )
for issue in report.warnings:
    st.markdown(f"- {md(issue.message)} {md(issue.fix)}".strip())
if len(issues):
    with st.expander(f"Every note on the data ({len(issues)})", expanded=not report.ok):
        st.dataframe(
            issues, hide_index=True, width="stretch", column_config=tables.report_columns()
        )

frame = history.frame
changed = frame[frame["temperature_filled"] | frame["demand"].isna()]
if len(changed):
    with st.expander(f"Rows changed or missing ({len(changed)})", expanded=False):
        shown = changed.assign(
            temperature=np.round(display.to_display(changed["temperature_c"].to_numpy()), 1)
        )[["demand", "temperature", "temperature_filled"]]
        shown = shown.rename(
            columns={
                "demand": f"demand, {history.settings.demand_unit} (blank = missing)",
                "temperature": f"temperature, {display.unit_symbol()}",
                "temperature_filled": "temperature filled in",
            }
        )
        st.dataframe(
            shown,
            width="stretch",
            column_config={
                "date": st.column_config.DateColumn("date", format=tables.DATE),
                shown.columns[0]: st.column_config.NumberColumn(format="%.0f"),
                shown.columns[1]: st.column_config.NumberColumn(format="%.1f"),
            },
        )

# --------------------------------------------------------------------------------------------
# Calendar: special periods (public holidays and the day-type scheme are set on the Model page)
# --------------------------------------------------------------------------------------------
spec = state.calendar()
with st.expander("Calendar: special periods", expanded=False):
    override_text = st.text_area(
        "Special periods, one a line: first date[..last date] name [label]",
        value="\n".join(
            f"{o.start}..{o.end} {o.day_type} {o.label}".strip()
            if o.start != o.end
            else f"{o.start} {o.day_type} {o.label}".strip()
            for o in spec.overrides
        ),
        placeholder="2025-12-24..2026-01-01 year_end Year-end low load\n2026-07-03 bridge",
        key="cal_overrides",
        help="A plant shutdown, a year-end period or a bridge day becomes its own day type. "
        "Give the past dates too, so that the model can learn the effect. Public holidays and "
        "the day-type scheme are chosen on the Model page.",
    )
    if st.button("Use these calendar settings"):
        try:
            new_spec = dataclasses.replace(spec, overrides=overrides_from_text(override_text))
        except LoadcoreError as exc:
            display.show_error(exc, "The calendar was not changed")
        else:
            state.use_calendar(new_spec)
            st.success("Calendar updated. Fit the model again to use it.")

# --------------------------------------------------------------------------------------------
# Charts: day types as the model in use sees them (or, with no model, the calendar for the fit)
# --------------------------------------------------------------------------------------------
types = day_types(frame.index, state.calendar_in_use())
st.subheader("Demand and temperature over time")
if fitted is not None:
    st.caption(
        "Days are coloured by the day types of the model in use; calendar changes made since it "
        "was fitted count from the next fit."
    )
st.plotly_chart(
    theme=None,
    figure_or_data=charts.history_figure(
        frame,
        types,
        to_unit=display.to_display,
        unit=display.unit_symbol(),
        demand_unit=history.settings.demand_unit,
    ),
    key="history_chart",
)

st.subheader("Demand against temperature")
curve_c = curve_mw = None
range_c = history.temperature_range_c
if fitted is not None and fitted.history.fingerprint == history.fingerprint:
    low, high = fitted.temperature_range_c
    curve_c = np.linspace(low, high, 121)
    curve_mw = fitted.response_curve(curve_c)["demand"].to_numpy(dtype=float)
    range_c = fitted.temperature_range_c
    st.caption(
        "The line is the fitted response for the reference day type, at the end of the history; "
        "the shaded band is the temperature range the model was fitted on."
    )
else:
    st.caption("Fit a model to draw the fitted response. The band is the range in the data.")
st.plotly_chart(
    theme=None,
    figure_or_data=charts.response_figure(
        frame,
        types,
        curve_c=curve_c,
        curve_mw=curve_mw,
        range_c=range_c,
        to_unit=display.to_display,
        unit=display.unit_symbol(),
        demand_unit=history.settings.demand_unit,
    ),
    key="response_chart",
)
counts = pd.Series(types).value_counts().rename_axis("day type").rename("days")
st.dataframe(
    counts.to_frame().T,
    width="stretch",
    column_config=tables.day_type_count_columns(counts.index),
)

display.footer()
