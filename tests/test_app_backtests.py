"""AppTest of the Backtests page on a short history with small search bounds (to stay quick)."""

from __future__ import annotations

import functools

import numpy as np
from test_app_support import assert_no_exception, demo_history, new_app, texts

from loadcore.history import history_from_frame
from loadcore.model import FitSettings, fit

SMALL_SEARCH = FitSettings(
    search="quick", ar_up_to=1, ma_up_to=1, ar_ma_up_to=2, weekly_ar_up_to=1, weekly_ma_up_to=0
)


@functools.lru_cache(maxsize=1)
def _short_model():
    short = history_from_frame(demo_history().frame.iloc[-760:][["demand", "temperature_c"]])
    return short, fit(short, SMALL_SEARCH)


def test_backtest_tables_and_pit_histogram_are_loadcores():
    history, model = _short_model()
    at = new_app(page="pages/backtests.py", model=model, extra={"history": history})
    assert_no_exception(at)
    at.number_input(key="bt_horizon").set_value(5)
    at.number_input(key="bt_origins").set_value(3)
    [b for b in at.get("button") if getattr(b, "label", "") == "Run the backtest"][0].click()
    at.run(timeout=1200)
    assert_no_exception(at)
    assert not texts(at, "error")
    result = at.session_state["backtest"]["result"]
    assert result.summary["n_origins"] == 3 and result.summary["horizon"] == 5
    bands, by_days = (element.value for element in at.dataframe[:2])
    np.testing.assert_allclose(by_days["mape"], result.by_horizon["mape"])
    np.testing.assert_allclose(bands["coverage_80"], result.by_band["coverage_80"])
    metrics = {m.label: m.value for m in at.metric}
    assert metrics["MAPE over all days"] == f"{result.summary['mape']:.2f} %"
    assert (
        metrics["Days inside the 80 % interval"] == f"{100 * result.summary['coverage_80']:.0f} %"
    )
    # MAPE and coverage by horizon, and the PIT histogram
    assert len(at.get("plotly_chart")) == 3


def test_coverage_by_stretch_of_days_ahead_is_loadcores_by_band_in_planner_words():
    """The page reads BacktestResult.by_band out: one line per stretch of days ahead (the bands
    1-4, 5-9, 10-14 days and the rest), each with its days scored and the share of days each
    interval held, worded for a planner (no column names)."""
    from loadcore.evaluate import MAX_HORIZON_DAYS

    history, model = _short_model()
    at = new_app(page="pages/backtests.py", model=model, extra={"history": history})
    assert at.number_input(key="bt_horizon").proto.max == MAX_HORIZON_DAYS
    at.number_input(key="bt_horizon").set_value(11)
    at.number_input(key="bt_origins").set_value(2)
    [b for b in at.get("button") if getattr(b, "label", "") == "Run the backtest"][0].click()
    at.run(timeout=1200)
    assert_no_exception(at)
    result = at.session_state["backtest"]["result"]
    assert list(result.by_band["band"]) == ["1-4", "5-9", "10-11"]
    lines = [m for m in texts(at, "markdown") if "ahead** (" in m]
    assert len(lines) == 3, texts(at, "markdown")
    for line, row in zip(lines, result.by_band.itertuples(index=False), strict=True):
        assert f"Days {row.first_day} to {row.last_day} ahead" in line
        assert f"({int(row.n)} days scored)" in line
        assert f"80 % interval held the actual demand on {100 * row.coverage_80:.0f} %" in line
        assert f"95 % interval held the actual demand on {100 * row.coverage_95:.0f} %" in line
        assert "coverage_" not in line and "_" not in line
