"""Weather ensembles: the next weeks under the weather of past years, as odds rather than one path."""

from __future__ import annotations

import pandas as pd
import streamlit as st

from app import charts, display, picker, state, tables
from loadcore.errors import LoadcoreError
from loadcore.export import round_for_planners, to_csv_bytes
from loadcore.weather import ensemble_forecast, ensemble_table

st.title("Weather ensembles")
fitted = display.need_model()
st.caption(
    "Instead of one temperature path, the window's calendar days in every past year of the "
    "history (each also shifted a few days earlier and later) are run through the model with its "
    "error paths, and all of them are pooled into one spread of outcomes."
)

with st.container(border=True):
    start, days = picker.window_picker("ens", fitted)
with st.form("ens_form", border=True):
    a, b, c = st.columns(3)
    shift = a.number_input("Shift each past year by up to (days)", 0, 14, 3, key="ens_shift")
    warming_c = display.temperature_input(
        b, "Warming added to every trace", key="ens_warm", default_c=0.0, difference=True
    )
    paths = c.number_input("Error paths per trace", 10, 1000, 200, step=10, key="ens_paths")
    a, b = st.columns(2)
    threshold = a.number_input(
        f"Threshold, {fitted.demand_unit} (0 for none)",
        min_value=0.0,
        value=0.0,
        step=50.0,
        key="ens_threshold",
    )
    seed = b.number_input("Seed", 0, 2**31 - 1, 0, key="ens_seed")
    run = st.form_submit_button("Run the ensemble", type="primary")

if run:
    bar = st.progress(0.0, text="Running the weather traces...")

    def _progress(done: int, total: int, text: str) -> None:
        bar.progress(min(done / max(total, 1), 1.0), text=f"Trace {done} of {total}: {text}")

    try:
        result = ensemble_forecast(
            fitted,
            days=int(days),
            start=start,
            shift_days=int(shift),
            warming_c=warming_c,
            paths_per_trace=int(paths),
            seed=int(seed),
            threshold_mw=float(threshold) if threshold > 0 else None,
            progress=_progress,
        )
    except LoadcoreError as exc:
        bar.empty()
        display.show_error(exc, "The ensemble could not be run")
    else:
        bar.empty()
        state.keep_ensemble(fitted, result)

result = state.kept_ensemble(fitted)
if result is None:
    st.info("Set the window and press **Run the ensemble**.")
    display.footer()
    st.stop()

ran = pd.DatetimeIndex(result.daily["date"])
st.markdown(f"**Ensemble for {ran[0]:%a %d %b %Y} to {ran[-1]:%a %d %b %Y}** ({len(ran)} days).")
if (ran[0], len(ran)) != (start, int(days)):
    st.caption("The window above has changed since; press **Run the ensemble** to run it.")
tail = fitted.history.frame["demand"].iloc[-28:]
st.plotly_chart(
    theme=None,
    figure_or_data=charts.fan_figure(
        result.daily,
        history_tail=tail,
        threshold_mw=result.threshold_mw,
        demand_unit=fitted.demand_unit,
    ),
    key="ens_fan",
)
st.caption(result.note)

cols = st.columns(4)
cols[0].metric("Traces x paths", f"{result.n_traces} x {result.n_paths // max(result.n_traces, 1)}")
cols[1].metric(
    "Share of the spread due to weather",
    f"{100 * result.weather_share:.0f} %",
    help="Averaged over the window: the part of each day's predictive variance that comes from "
    "the weather traces, the rest from the model's own errors.",
)
if result.threshold_mw is not None:
    cols[2].metric(
        f"Odds of any day above {result.threshold_mw:,.0f} {fitted.demand_unit}",
        f"{100 * result.prob_any_above:.0f} %",
    )
    cols[3].metric("Expected days above", f"{result.expected_days_above:.1f}")
if result.out_of_range_share > 0:
    st.warning(
        f"{100 * result.out_of_range_share:.1f} % of the trace temperatures lie outside the "
        "fitted temperature range; those days are extrapolated.",
        icon=":material/thermostat:",
    )

st.subheader("Highest daily demand in the window")
peak = result.peak_distribution
hist = peak.to_frame()
mid = (hist["low_mw"] + hist["high_mw"]) / 2
st.plotly_chart(
    theme=None,
    figure_or_data=charts.bars_figure(
        mid.round(0),
        hist["share"] * 100,
        x_title=f"window peak, {fitted.demand_unit}",
        y_title="share of paths, %",
        hlines=None,
    ),
    key="ens_peak",
)
st.markdown(
    " · ".join(
        f"{name.upper()}: {value:,.0f} {fitted.demand_unit}"
        for name, value in peak.quantiles.items()
    )
    + f" · mean: {peak.mean_mw:,.0f} {fitted.demand_unit}"
)

st.subheader("Day by day")
st.dataframe(
    result.daily,
    hide_index=True,
    width="stretch",
    height=320,
    column_config=tables.ensemble_columns(fitted.demand_unit),
)
st.download_button(
    "Download the ensemble (CSV)",
    data=to_csv_bytes(round_for_planners(ensemble_table(result))),
    file_name="loadcore_ensemble.csv",
    mime="text/csv",
    icon=":material/download:",
    key="ens_csv",
    on_click="ignore",
)
display.footer()
