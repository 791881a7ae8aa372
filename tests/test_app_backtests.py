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
    shown = at.dataframe[0].value
    np.testing.assert_allclose(shown["mape"], result.by_horizon["mape"])
    metrics = {m.label: m.value for m in at.metric}
    assert metrics["MAPE over all days"] == f"{result.summary['mape']:.2f} %"
    assert (
        metrics["Days inside the 80 % interval"] == f"{100 * result.summary['coverage_80']:.0f} %"
    )
    # MAPE and coverage by horizon, and the PIT histogram
    assert len(at.get("plotly_chart")) == 3
