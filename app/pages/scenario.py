"""Step 3: build a scenario (temperature path and day types) and add it to the session's set."""

from __future__ import annotations

import hashlib

import numpy as np
import pandas as pd
import streamlit as st

from app import cache, charts, display, picker, state
from app.plain import md
from loadcore.calendar import BASE_TYPE
from loadcore.errors import LoadcoreError
from loadcore.export import comparison_figure
from loadcore.files import check_upload_size
from loadcore.scenario import (
    MAX_DAYS,
    Alignment,
    Scenario,
    cold_snap,
    constant_path,
    copy_period,
    copy_same_days,
    fill_blank_day_types,
    heat_wave,
    make_scenario,
    read_scenario_csv,
    same_days_source,
    seasonal_normal_path,
    shift_path,
)

st.title("Build a scenario")
fitted = display.need_model()
unit = display.unit_symbol()
low_c, high_c = (float(v) for v in fitted.temperature_range_c)

st.markdown(
    f"Choose the window, then the temperatures. The model's history ends on "
    f"**{fitted.history_end:%A %d %B %Y}**; it was fitted on daily highs from "
    f"{display.fmt_temp(low_c)} to {display.fmt_temp(high_c)}, and days outside that range are "
    "flagged."
)
state.default_builder_name("Heat wave")
name = st.text_input("Scenario name", key=state.NAME_WIDGET, max_chars=80)
source = st.radio(
    "Start from",
    ["tools", "set", "file"],
    format_func=lambda s: {
        "tools": "the path tools",
        "set": "a scenario in the set",
        "file": "a scenario file (CSV or a saved definition)",
    }[s],
    horizontal=True,
    key=state.SOURCE_WIDGET,
    on_change=state.builder_start_chosen,
)
if source == "tools":
    with st.container(border=True):
        start, horizon = picker.window_picker("scn", fitted)
else:
    st.caption("A scenario from the set or from a file keeps its own dates.")


def _days_ok(days: int) -> bool:
    """The horizon check is loadcore's: make_scenario raises with the allowed range."""
    try:
        make_scenario("check", constant_path(start, int(days), 0.0), max_days=MAX_DAYS)
    except LoadcoreError as exc:
        display.show_error(exc)
        return False
    return True


def _event_inputs(
    prefix: str, days: int, defaults: tuple[int, int, int], off: bool, extreme: str
) -> tuple[int, int, int]:
    """A heat wave's or cold snap's days: at the peak (or lowest), ramp days at each end and the
    window day the first ramp day falls on. The event lasts ramp + at-the-peak + ramp days."""
    at_top, ramp, first = defaults
    a, b, c = st.columns(3)
    top = a.number_input(
        f"Days at the {extreme}", 1, MAX_DAYS, at_top, key=f"scn_{prefix}_top", disabled=off
    )
    ramps = b.number_input(
        "Ramp days at each end",
        0,
        MAX_DAYS,
        ramp,
        key=f"scn_{prefix}_ramp",
        disabled=off,
        help="Days of build-up before and of easing off after, each; 0 for a sudden change.",
    )
    day = c.number_input(
        f"Starts on day (1 to {days})",
        1,
        max(int(days), 1),
        min(first, max(int(days), 1)),
        key=f"scn_{prefix}_day",
        disabled=off,
        help="The window day of the first ramp day (or of the first day at the "
        f"{extreme}, without ramps).",
    )
    top, ramps, day = int(top), int(ramps), int(day)
    if not off:
        last = day + top + 2 * ramps - 1
        st.caption(
            f"{ramps} day(s) building up, {top} day(s) at the {extreme}, {ramps} day(s) easing "
            f"off: window days {day} to {min(last, int(days))}"
            + (f" (the last {last - int(days)} fall after the window)." if last > days else ".")
        )
    return top, ramps, day


def _from_tools(days: int) -> pd.Series | None:
    """The temperature path (°C) from the path tools, or None after an inline error."""
    history = fitted.history
    base_kind = st.selectbox(
        "Base path",
        ["normal", "constant", "same_days", "copy"],
        format_func=lambda k: {
            "normal": "seasonal normal (average for these calendar days)",
            "constant": "the same temperature every day",
            "same_days": "the same days of the latest earlier year in the history",
            "copy": "a copy of a past period of your choice",
        }[k],
        key="scn_base",
    )
    try:
        if base_kind == "constant":
            value_c = display.temperature_input(st, "Temperature", key="scn_const", default_c=25.0)
            path = constant_path(start, days, value_c)
        elif base_kind == "same_days":
            alignment = st.radio(
                "Line the copied days up",
                list(Alignment),
                format_func=lambda a: {
                    Alignment.BY_DATE: "by date (1 July onto 1 July)",
                    Alignment.BY_WEEKDAY: "by weekday (weekends onto weekends, moved up to 3 days)",
                }[a],
                horizontal=True,
                key="scn_align",
            )
            source_start = same_days_source(history, start, days, alignment)
            path = copy_same_days(history, start, days, alignment)
            source_end = source_start + pd.Timedelta(days=days - 1)
            st.caption(
                f"Copied from {source_start:%a %d %b %Y} to {source_end:%a %d %b %Y} "
                f"(the history's {source_start:%A} onto the window's {start:%A})."
            )
        elif base_kind == "copy":
            first, latest = history.start, history.end - pd.Timedelta(days=days - 1)
            try:  # the same days of the latest earlier year, when the history has them
                default = same_days_source(history, start, days)
            except LoadcoreError:
                default = max(latest, first)
            source_start = st.date_input(
                "First day of the past period",
                value=default.date(),
                min_value=first.date(),
                max_value=max(latest, first).date(),
                key=f"scn_copy_from_{start:%Y%m%d}_{days}",
                format="YYYY-MM-DD",
            )
            path = copy_period(history, source_start, start, days)
        else:
            path = seasonal_normal_path(history, start, days)

        cols = st.columns(2)
        with cols[0].container(border=True):
            wave = st.checkbox("Add a heat wave", value=True, key="scn_hw_on")
            peak_c = display.temperature_input(
                st, "Peak daily high", key="scn_hw_peak", default_c=41.0, disabled=not wave
            )
            hw_top, hw_ramp, hw_day = _event_inputs("hw", days, (2, 2, 4), not wave, "peak")
        with cols[1].container(border=True):
            snap = st.checkbox("Add a cold snap", value=False, key="scn_cs_on")
            trough_c = display.temperature_input(
                st, "Lowest daily high", key="scn_cs_low", default_c=-8.0, disabled=not snap
            )
            cs_top, cs_ramp, cs_day = _event_inputs("cs", days, (3, 1, 1), not snap, "lowest")
        shift_c = display.temperature_input(
            st,
            "Shift every day by (may be negative)",
            key="scn_shift",
            default_c=0.0,
            difference=True,
        )
        if wave:
            path = heat_wave(path, peak_c, hw_top + 2 * hw_ramp, hw_ramp, hw_day - 1)
        if snap:
            path = cold_snap(path, trough_c, cs_top + 2 * cs_ramp, cs_ramp, cs_day - 1)
        if shift_c:
            path = shift_path(path, shift_c)
        if base_kind == "normal" and not (wave or snap or shift_c):
            made["kind"] = "seasonal_normal"
    except LoadcoreError as exc:
        display.show_error(exc, "The path tools could not build this path")
        return None
    return path


def _from_set() -> Scenario | None:
    names = list(state.scenarios())
    if not names:
        st.info("The set is empty. Build a scenario from the path tools first.")
        return None
    chosen = st.selectbox(
        "Scenario to start from",
        names,
        key=state.FROM_SET_WIDGET,
        on_change=state.builder_start_chosen,
    )
    return state.scenarios()[chosen]


@st.cache_resource(max_entries=8, show_spinner=False)
def _read_scenario_file(_data: bytes, digest: str, file_name: str, temp_unit: str, end: str):
    if file_name.lower().endswith(".json"):
        return Scenario.from_json(_data, model_end=end)
    return read_scenario_csv(
        _data, temp_unit=temp_unit, model_end=end, name=file_name.rsplit(".")[0]
    )


def _from_file() -> Scenario | None:
    upload = st.file_uploader(
        "Scenario file: a CSV with date, temperature and optional day_type columns, or a "
        "definition (.json) downloaded from the Compare page",
        type=["csv", "txt", "json"],
        key="scn_upload",
    )
    file_unit = st.radio(
        "Temperatures in the file are in",
        ["C", "F"],
        index=["C", "F"].index(state.temp_unit()),
        format_func=display.unit_symbol,
        horizontal=True,
        key="scn_file_unit",
        help="The file's own unit; the °C/°F switch in the sidebar changes only what is shown.",
    )
    if upload is None:
        return None
    data = upload.getvalue()
    try:
        check_upload_size(len(data))
        return _read_scenario_file(
            data,
            hashlib.sha256(data).hexdigest(),
            upload.name,
            file_unit,
            fitted.history_end.date().isoformat(),
        )
    except LoadcoreError as exc:
        display.show_error(exc, f"{upload.name} was not used")
        return None


# --------------------------------------------------------------------------------------------
# The starting point: a path (°C) and the calendar's day types
# --------------------------------------------------------------------------------------------
base_temps: pd.Series | None = None
base_types: list[str] | None = None
made = {"kind": "file" if source == "file" else "built"}  # how the scenario was made
if source == "tools":
    if _days_ok(horizon):
        base_temps = _from_tools(int(horizon))
elif source == "set":
    picked = _from_set()
    if picked is not None:
        base_temps, base_types = picked.path(), list(picked.day_types or [])
else:
    picked = _from_file()
    if picked is not None:
        base_temps, base_types = picked.path(), list(picked.day_types or [])

if base_temps is None:
    display.footer()
    st.stop()

dates = pd.DatetimeIndex(base_temps.index)
try:
    calendar = [str(t) for t in fitted.calendar_types(dates)]
except LoadcoreError as exc:
    display.show_error(exc)
    display.footer()
    st.stop()
start_types = list(fill_blank_day_types(base_types or None, calendar))
base_type = BASE_TYPE[fitted.settings.calendar.scheme]
levels = [base_type] + [str(t) for t in fitted.day_type_levels if str(t) != base_type]
options = list(dict.fromkeys(levels + [t for t in start_types if t not in levels]))

# --------------------------------------------------------------------------------------------
# Free editing, day by day
# --------------------------------------------------------------------------------------------
st.subheader("Day by day")
st.caption(
    f"Change any temperature ({unit}) or day type. The calendar's day types come from the "
    "model's holiday calendar; to use a type such as a shutdown or a bridge day, add it as a "
    "special period on the History page (with past examples) and fit again."
)
base_c = base_temps.to_numpy(dtype=float)
base_id = hashlib.sha256(
    dates.asi8.tobytes() + base_c.tobytes() + "|".join(start_types).encode()
).hexdigest()[:12]
editor_key = state.day_editor_key(base_id)
kept_temps, kept_types = state.kept_day_edits()
shown_c = base_c.copy()
for pos, value in kept_temps.items():
    shown_c[pos] = np.nan if value is None else value
table = pd.DataFrame(
    {
        "date": dates.date,
        "weekday": dates.strftime("%a"),
        "temperature": np.asarray(display.to_display(shown_c), float),
        "day_type": [kept_types.get(i, t) for i, t in enumerate(start_types)],
    }
)
st.data_editor(
    table,
    key=editor_key,
    hide_index=True,
    num_rows="fixed",
    disabled=["date", "weekday"],
    column_config={
        "date": st.column_config.DateColumn("date", format="YYYY-MM-DD"),
        "weekday": st.column_config.TextColumn("day"),
        "temperature": st.column_config.NumberColumn(f"daily high, {unit}", format="%.1f"),
        "day_type": st.column_config.SelectboxColumn("day type", options=options),
    },
    height=min(38 + 35 * len(table), 420),
)

# --------------------------------------------------------------------------------------------
# The scenario: loadcore checks it, then the forecast is recomputed (no refit)
# --------------------------------------------------------------------------------------------
# Unedited days keep their °C values exactly; edited ones were converted once, when typed.
edited_temps, edited_types = state.day_edits()
raw = pd.Series(base_c, index=dates, dtype=object)
for pos, value in edited_temps.items():
    raw.iloc[pos] = value
chosen_types = []
for pos, cal in enumerate(calendar):
    picked_type = edited_types.get(pos, start_types[pos])
    chosen_types.append("" if picked_type is None or str(picked_type) == cal else str(picked_type))
try:
    scenario = make_scenario(name, raw, chosen_types, model_end=fitted.history_end)
    fc = cache.forecast(fitted, scenario)
except LoadcoreError as exc:
    display.show_error(exc, "This scenario cannot be forecast yet")
    st.caption("Nothing in the set has changed.")
    display.footer()
    st.stop()

st.plotly_chart(
    theme=None,
    figure_or_data=charts.path_figure(
        scenario.dates,
        scenario.temperature_c,
        fitted.temperature_range_c,
        to_unit=display.to_display,
        unit=unit,
    ),
    key="scn_path_chart",
)
display.heat_note(scenario.name, scenario.temperature_c)
outside = fc.frame[fc.frame["out_of_range"].astype(bool)]
if len(outside):
    lines = display.out_of_range_lines([fc], fitted.temperature_range_c)
    st.warning(
        f"{len(outside)} day(s) lie outside the fitted temperature range; the forecast there is "
        "an extrapolation:\n\n" + "\n".join(f"- {line}" for line in lines),
        icon=":material/thermostat:",
    )

st.subheader("Forecast for this scenario")
tail = fitted.history.frame["demand"].iloc[-28:]
st.plotly_chart(
    theme=None,
    figure_or_data=comparison_figure(
        [fc], history_tail=tail, temp_unit=state.temp_unit(), demand_unit=fitted.demand_unit
    ),
    key="scn_forecast_chart",
)
for line in fc.warnings():
    if "range" not in line.lower():
        st.caption(md(line))
if fc.note:
    st.caption(md(fc.note))

exists = scenario.name in state.scenarios()
label = "Replace it in the set" if exists else "Add to the set"
if exists:
    st.caption(f"A scenario named '{md(scenario.name)}' is already in the set.")
if st.button(label, type="primary", key="scn_add"):
    edited = any(v is not None for v in edited_temps.values()) or bool(edited_types)
    state.put_scenario(scenario, kind="built" if edited else made["kind"])
    st.success(
        f"'{md(scenario.name)}' is in the set ({len(state.scenarios())} scenario(s)). "
        "See them side by side on the Compare page."
    )
    st.page_link("pages/compare.py", label="Compare the set", icon=":material/stacked_line_chart:")

display.footer()
