"""Zones: open or fit the zones of a system, forecast every zone and the system total."""

from __future__ import annotations

import tempfile

import pandas as pd
import streamlit as st
from plotly.subplots import make_subplots

from app import display, state
from app.plain import md
from loadcore import levels as interval_levels
from loadcore import texts
from loadcore.errors import LoadcoreError
from loadcore.export import to_csv_bytes
from loadcore.export.zone_brief import zone_brief_html
from loadcore.history import HistorySettings
from loadcore.zones import ZoneLayout, fit_zones, parse_cluster, read_zone_histories
from loadcore.zones.folder import load_zone_folder, zone_scenarios
from loadcore.zones.forecast import forecast_zones

st.title("Zones")
st.caption(
    "One model per zone of a system, fitted with the same settings, and the system total with "
    "bands from joint sample paths that keep how the zones move together."
)

with st.expander("Open a zones folder", expanded=state.zones() is None):
    folder = st.text_input("Zones folder on this machine", key="zn_folder")
    if st.button("Open the folder", key="zn_open") and folder.strip():
        ok, opened = display.attempt(
            lambda: load_zone_folder(folder.strip()), "The zones folder could not be opened"
        )
        if ok:
            state.use_zones(opened, f"folder {folder.strip()}")

with st.expander("Fit the zones of an uploaded history"):
    upload = st.file_uploader("Zones history CSV", type=["csv", "txt"], key="zn_upload")
    shape = st.radio("Layout", ["long", "wide"], key="zn_shape", horizontal=True)
    if shape == "long":
        zone_col = st.text_input("Zone column", "zone", key="zn_zone_col")
        pattern_d = pattern_t = None
    else:
        zone_col = None
        pattern_d = st.text_input("Demand columns", "{zone}_demand", key="zn_wide_demand")
        pattern_t = st.text_input("Temperature columns", "{zone}_temperature", key="zn_wide_temp")
    if st.button("Fit the zones", key="zn_fit") and upload is not None:
        bar = st.progress(0.0, text="Fitting the zones...")

        def _progress(done: int, total: int, zone: str) -> None:
            bar.progress(min(done / max(total, 1), 1.0), text=f"{zone} done ({done} of {total})")

        try:
            layout = ZoneLayout(zone_col=zone_col, wide_demand=pattern_d, wide_temp=pattern_t)
            read = read_zone_histories(upload.getvalue(), layout, HistorySettings())
            result = fit_zones(
                read, state.fit_settings(), cluster=parse_cluster("none"), progress=_progress
            )
            out = result.write(tempfile.mkdtemp(prefix="loadcore-zones-"))
            opened = load_zone_folder(out)
        except LoadcoreError as exc:
            bar.empty()
            display.show_error(exc, "The zones could not be fitted")
        else:
            bar.empty()
            state.use_zones(opened, f"fitted from {upload.name}")

zones = state.zones()
if zones is None:
    st.info("Open a zones folder or fit the zones of an uploaded history to begin.")
    st.stop()

st.write(md(f"Zones in use: {len(zones.models)} fitted ({state.zones_source()})."))
if zones.failed:
    st.warning("Not fitted, so not in the total:")
    st.dataframe(
        pd.DataFrame({"zone": list(zones.failed), "reason": list(zones.failed.values())}),
        hide_index=True,
    )

unit = state.temp_unit()
end = zones.history_end()
kind = st.radio(
    "Scenario",
    ["anomaly", "file"],
    format_func=lambda k: {
        "anomaly": "one change for every zone",
        "file": "a file with one column per zone",
    }[k],
    key="zn_kind",
    horizontal=True,
)
scenarios = None
if kind == "anomaly":
    a, b, c = st.columns(3)
    start = a.date_input("First day", (end + pd.Timedelta(days=1)).date(), key="zn_start")
    days = b.number_input("Days", 1, 366, 14, key="zn_days")
    change = c.number_input(
        f"Change from the seasonal normal ({display.unit_symbol()})",
        -30.0,
        30.0,
        0.0,
        0.5,
        key="zn_change",
    )
    dates = pd.date_range(pd.Timestamp(start), periods=int(days), freq="D")
    text = "date,temperature\n" + "".join(f"{d:%Y-%m-%d},{float(change)}\n" for d in dates)
    ok, scenarios = display.attempt(
        lambda: zone_scenarios(text, zones, temp_unit=unit, as_anomaly=True, name="zones"),
        "The scenario cannot be used",
    )
else:
    scn = st.file_uploader(
        f"Scenario CSV: date, one column per zone (daily maximum, {display.unit_symbol()})",
        type=["csv", "txt"],
        key="zn_scenario",
    )
    if scn is not None:
        ok, scenarios = display.attempt(
            lambda: zone_scenarios(scn.getvalue(), zones, temp_unit=unit, name=scn.name),
            "The scenario file cannot be used",
        )
if not scenarios:
    st.stop()

ok, result = display.attempt(
    lambda: forecast_zones(zones.models, scenarios), "The zones could not be forecast"
)
if not ok:
    st.stop()

st.info(texts.ZONE_TOTAL_CAUTION)
system = result.system
level = result.levels[0]
lo, hi = interval_levels.lower_column(level), interval_levels.upper_column(level)
label = interval_levels.level_label(level)


def _add_band_and_mean(fig, frame: pd.DataFrame, *, legend: bool, **cell) -> None:
    """The band between ``lo`` and ``hi`` and the mean line of ``frame`` (one subplot cell)."""
    x = frame["date"]
    fig.add_scatter(x=x, y=frame[hi], mode="lines", line_width=0, showlegend=False, **cell)
    fig.add_scatter(
        x=x,
        y=frame[lo],
        mode="lines",
        line_width=0,
        fill="tonexty",
        name=f"{label} % band",
        showlegend=legend,
        **cell,
    )
    fig.add_scatter(x=x, y=frame["mean"], mode="lines", name="mean", showlegend=legend, **cell)


total = make_subplots(rows=1, cols=1)
_add_band_and_mean(total, system, legend=True)
total.update_layout(title="System total", yaxis_title=result.demand_unit, height=360)
st.plotly_chart(total, key="zn_total_chart")
if system["out_of_range"].any():
    st.warning(
        f"On {int(system['out_of_range'].sum())} day(s) some zone is outside the temperatures "
        "its model was fitted on."
    )

cmp = result.band_comparison()
st.write(
    md(
        f"The system's {label} % band is on average {cmp['system_width']:,.0f} "
        f"{result.demand_unit} wide; adding the zones' own bands would give "
        f"{cmp['sum_of_zone_widths']:,.0f} (the zones' daily shocks correlate "
        f"{cmp['mean_pairwise_correlation']:.2f} on average)."
    )
)

n = len(result.zones)
cols = min(3, n)
rows = -(-n // cols)
grid = make_subplots(rows=rows, cols=cols, subplot_titles=list(result.zones))
for i, zone in enumerate(result.zones):
    r, c = i // cols + 1, i % cols + 1
    _add_band_and_mean(grid, result.zone_forecasts[zone].frame, legend=False, row=r, col=c)
grid.update_layout(title="Every zone", height=240 * rows)
st.plotly_chart(grid, key="zn_zone_charts")

st.download_button(
    "Download the zones forecast (CSV)",
    to_csv_bytes(result.table(unit)),
    file_name="zones_forecast.csv",
    mime="text/csv",
    key="zn_csv",
)
st.download_button(
    "Download the zones brief (HTML, opens offline)",
    zone_brief_html(result, title="Zones outlook", temp_unit=unit),
    file_name="zones_brief.html",
    mime="text/html",
    key="zn_brief",
)
st.caption(texts.INTERVAL_CAUTION)
display.footer()
