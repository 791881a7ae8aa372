"""Backtests: how well the model's settings would have forecast the past, day by day ahead."""

from __future__ import annotations

import numpy as np
import pandas as pd
import streamlit as st

from app import charts, display, state, tables
from loadcore.errors import LoadcoreError
from loadcore.evaluate import DEFAULT_ORIGINS, MAX_HORIZON_DAYS, MAX_ORIGINS, backtest
from loadcore.export import round_for_planners, to_csv_bytes
from loadcore.levels import coverage_column, level_label

st.title("Backtests")
fitted = display.need_model()
history = state.history()
settings = fitted.settings
st.caption(
    "The model's settings are used to forecast from many past dates (origins) with only the data "
    "before each one, and the forecasts are scored against what happened. Ex post uses the actual "
    "temperatures; ex ante uses weather ensembles from earlier years, as a real forecast would."
)

with st.form("bt_form", border=True):
    a, b, c = st.columns(3)
    horizon = a.number_input(
        f"Days ahead (1 to {MAX_HORIZON_DAYS})", 1, MAX_HORIZON_DAYS, 14, key="bt_horizon"
    )
    origins = b.number_input(
        f"Origins (2 to {MAX_ORIGINS})", 2, MAX_ORIGINS, DEFAULT_ORIGINS, key="bt_origins"
    )
    mode = c.radio(
        "Temperatures",
        ["ex_post", "ex_ante"],
        format_func=lambda m: {"ex_post": "actual (ex post)", "ex_ante": "ensembles (ex ante)"}[m],
        key="bt_mode",
    )
    run = st.form_submit_button("Run the backtest", type="primary")

if run:
    bar = st.progress(0.0, text="Starting the backtest...")

    def _progress(done: int, total: int, text: str) -> None:
        bar.progress(min(done / max(total, 1), 1.0), text=text)

    try:
        result = backtest(
            history,
            settings,
            horizon=int(horizon),
            origins=int(origins),
            mode=mode,
            progress=_progress,
        )
    except LoadcoreError as exc:
        bar.empty()
        display.show_error(exc, "The backtest could not be run")
    else:
        bar.empty()
        state.keep_backtest(history, settings, result)

result = state.kept_backtest(history, settings)
if result is None:
    st.info("Choose the set-up and press **Run the backtest**.")
    display.footer()
    st.stop()

summary = result.summary
st.markdown(
    f"**{summary['mode_label']}**: {summary['n_origins']} origins from {summary['first_origin']} "
    f"to {summary['last_origin']}, {summary['horizon']} days ahead each. Error model: "
    f"{summary['orders']}."
)
levels = [level_label(lv) for lv in result.levels]
cols = st.columns(2 + len(levels))
cols[0].metric("MAPE over all days", f"{summary['mape']:.2f} %")
cols[1].metric(
    "MASE (1 = same-weekday-last-week)",
    f"{summary['mase']:.3f}",
    help=f"Same weekday last week scores {summary['naive_mase']:.3f}; lower is better.",
)
for i, level in enumerate(levels):
    cols[2 + i].metric(
        f"Days inside the {level} % interval",
        f"{100 * summary[coverage_column(level)]:.0f} %",
        help=f"A well-calibrated {level} % interval holds about {level} % of the days.",
    )

st.subheader("How often the intervals held, by stretch of days ahead")
bands = result.by_band
st.caption(
    "Each stretch pools every origin's days that far ahead, so its share rests on many more days "
    "than one day ahead alone. An interval that holds the actual demand on about its own share "
    "of days (80 % of days for the 80 % interval) is as wide as it should be; a clearly smaller "
    "share means it was too narrow there."
)
for row in bands.itertuples(index=False):
    held = "; ".join(
        f"the {level} % interval held the actual demand on "
        f"{100 * getattr(row, coverage_column(level)):.0f} % of them"
        for level in levels
    )
    first, last = int(row.first_day), int(row.last_day)
    stretch = f"Day {first} ahead" if first == last else f"Days {first} to {last} ahead"
    st.markdown(
        f"- **{stretch}** ({int(row.n)} days scored): {held}; the average miss was "
        f"{row.mape:.1f} % of demand (same weekday last week: {row.naive_mape:.1f} %)."
    )
st.dataframe(
    bands,
    hide_index=True,
    width="stretch",
    column_config=tables.backtest_band_columns(bands.columns, fitted.demand_unit),
)

by_h = result.by_horizon
st.subheader("By days ahead")
left, right = st.columns(2)
left.plotly_chart(
    theme=None,
    figure_or_data=charts.lines_figure(
        by_h, "horizon", ["mape", "naive_mape"], x_title="days ahead", y_title="MAPE, %"
    ),
    key="bt_mape",
)
coverage_cols = [coverage_column(lv) for lv in levels]
right.plotly_chart(
    theme=None,
    figure_or_data=charts.lines_figure(
        by_h.assign(**{c: by_h[c] * 100 for c in coverage_cols}),
        "horizon",
        coverage_cols,
        x_title="days ahead",
        y_title="share of days inside the interval, %",
        hlines={f"aim {lv} %": float(lv) for lv in levels},
    ),
    key="bt_coverage",
)
st.dataframe(
    by_h,
    hide_index=True,
    width="stretch",
    column_config=tables.backtest_horizon_columns(by_h.columns, fitted.demand_unit),
)
st.download_button(
    "Download the scores by days ahead (CSV)",
    data=to_csv_bytes(round_for_planners(by_h)),
    file_name="loadcore_backtest_by_days_ahead.csv",
    mime="text/csv",
    icon=":material/download:",
    key="bt_csv",
    on_click="ignore",
)

st.subheader("PIT histogram")
counts, edges = result.pit_histogram(10)
share = counts / max(counts.sum(), 1) * 100
st.plotly_chart(
    theme=None,
    figure_or_data=charts.bars_figure(
        np.round((edges[:-1] + edges[1:]) / 2, 2),
        share,
        x_title="PIT value",
        y_title="share of days, %",
        hlines={"flat = well calibrated": 100 / len(counts)},
    ),
    key="bt_pit",
)
st.caption(
    "Each bar counts where the actual demand fell within its forecast distribution. Flat bars mean "
    "well-calibrated intervals; a U shape means intervals too narrow, a hump too wide."
)
with st.expander("Every backtest forecast"):
    table = pd.DataFrame(result.forecasts)
    st.download_button(
        "Download every backtest forecast (CSV)",
        data=to_csv_bytes(round_for_planners(table)),
        file_name="loadcore_backtest_forecasts.csv",
        mime="text/csv",
        icon=":material/download:",
        key="bt_forecasts_csv",
        on_click="ignore",
    )
    if "temperature_c" in table.columns:
        table.insert(
            list(table.columns).index("temperature_c"),
            f"temperature, {display.unit_symbol()}",
            display.to_display(table.pop("temperature_c").to_numpy(dtype=float)),
        )
    st.dataframe(
        table,
        hide_index=True,
        width="stretch",
        column_config=tables.backtest_forecast_columns(
            table.columns, state.temp_unit(), fitted.demand_unit
        ),
    )
st.caption(summary.get("note", ""))
display.footer()
