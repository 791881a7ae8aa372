"""Tests for loadcore.export.tables: the forecast table, the comparison summary, model summary."""

from __future__ import annotations

import re
from dataclasses import dataclass, field

import numpy as np
import pandas as pd
import pytest
from export_support import FakeForecast, make_forecast

from loadcore.errors import InputError
from loadcore.export import (
    comparison_summary,
    describe_orders,
    forecast_table,
    out_of_range_days,
    summarise_model,
)


def test_forecast_table_columns_and_units():
    """°F = °C x 9/5 + 32 (the definition of the Fahrenheit scale; common practice, no source)."""
    a = make_forecast("base", temps_c=np.array([0.0, 100.0, -40.0, 25.0]), days=4, out_idx=(1,))
    b = make_forecast("hot", days=4, seed=1)
    table = forecast_table([a, b])
    assert list(table.columns) == [
        "scenario",
        "date",
        "temperature_c",
        "day_type",
        "mean",
        "median",
        "lower_80",
        "upper_80",
        "lower_95",
        "upper_95",
        "out_of_range",
        "out_of_range_by_c",
        "sparse_temperature",
    ]
    assert table["scenario"].tolist() == ["base"] * 4 + ["hot"] * 4
    assert table.attrs["temp_unit"] == "C"
    f_table = forecast_table([a], temp_unit="F")
    assert f_table["temperature_f"].tolist() == pytest.approx([32.0, 212.0, -40.0, 77.0])
    assert f_table["out_of_range"].tolist() == [False, True, False, False]
    assert f_table["out_of_range_by_f"].tolist() == pytest.approx([0.0, 2.7, 0.0, 0.0])
    assert "temperature_c" not in f_table and "out_of_range_by_c" not in f_table
    np.testing.assert_allclose(f_table["mean"], a.frame["mean"])


def test_forecast_table_accepts_date_index_and_rejects_bad_input():
    fc = make_forecast("idx")
    indexed = FakeForecast(frame=fc.frame.set_index("date"), scenario_name="idx")
    assert len(forecast_table([indexed])) == len(fc.frame)
    with pytest.raises(InputError, match="share the scenario name"):
        forecast_table([fc, fc])
    with pytest.raises(InputError, match="temperature unit"):
        forecast_table([fc], temp_unit="K")
    with pytest.raises(InputError, match="no forecasts"):
        forecast_table([])
    broken = FakeForecast(frame=fc.frame.drop(columns=["upper_95"]), scenario_name="broken")
    with pytest.raises(InputError, match="upper_95"):
        forecast_table([broken])


def test_comparison_summary_against_hand_computation():
    base = make_forecast("base", seed=1)
    hot = make_forecast("hot", level_mw=2300.0, out_idx=(2, 5), seed=2)
    summary = comparison_summary([base, hot], "base")
    assert summary["scenario"].tolist() == ["base", "hot"]
    row = summary.set_index("scenario")
    for fc in (base, hot):
        m = fc.frame["mean"]
        r = row.loc[fc.scenario_name]
        assert r["peak_mean"] == pytest.approx(m.max())
        assert r["peak_date"] == fc.frame["date"][m.idxmax()]
        assert r["sum_of_daily_means"] == pytest.approx(m.sum())
        assert r["days"] == len(m)
    bm, hm = base.frame["mean"], hot.frame["mean"]
    assert row.loc["base", "peak_vs_base"] == 0.0
    assert row.loc["hot", "peak_vs_base"] == pytest.approx(hm.max() - bm.max())
    assert row.loc["hot", "peak_vs_base_pct"] == pytest.approx(100 * (hm.max() / bm.max() - 1))
    assert row.loc["hot", "sum_vs_base_pct"] == pytest.approx(100 * (hm.sum() / bm.sum() - 1))
    assert row.loc["hot", "days_out_of_range"] == 2
    assert row.loc["base", "days_out_of_range"] == 0
    assert "not energy" in row.loc["base", "sum_unit"]
    assert "not energy" in summary.attrs["sum_note"]


def test_comparison_summary_total_kind_and_errors():
    base = make_forecast("base")
    summary = comparison_summary([base], "base", demand_unit="MWh", demand_kind="total")
    assert summary["sum_unit"].iloc[0] == "MWh (sum of daily totals)"
    with pytest.raises(InputError, match="base scenario 'nope'"):
        comparison_summary([base], "nope")
    with pytest.raises(InputError, match="kind of daily demand"):
        comparison_summary([base], "base", demand_kind="average")
    empty = FakeForecast(frame=base.frame.assign(mean=np.nan), scenario_name="base")
    with pytest.raises(InputError, match="no demand values"):
        comparison_summary([empty], "base")


def test_comparison_summary_marks_unequal_horizons():
    summary = comparison_summary([make_forecast("a", days=5), make_forecast("b", days=9)], "a")
    assert "horizon_note" in summary.attrs


def test_out_of_range_days_lists_flagged_rows():
    fc = make_forecast("x", out_idx=(0, 3))
    flagged = out_of_range_days([fc], temp_unit="F")
    assert flagged["date"].tolist() == [fc.frame["date"][0], fc.frame["date"][3]]
    assert flagged["temperature_f"].tolist() == pytest.approx(
        (fc.frame["temperature_c"][[0, 3]] * 9 / 5 + 32).tolist()
    )


# ---------------------------------------------------------------------------------------------
# model summary helpers


def test_describe_orders_uses_plain_words():
    text = describe_orders((2, 1, 1), (1, 0, 1, 7))
    assert text == "AR 2 · MA 1 | weekly AR 1 · MA 1 | differencing 1, weekly 0"
    assert "(" not in text and "[" not in text


def test_summarise_model_reads_the_contract_attributes():
    @dataclass
    class FakeHistory:
        start: pd.Timestamp
        end: pd.Timestamp

    @dataclass
    class FakeModel:
        order: tuple = (1, 0, 1)
        seasonal_order: tuple = (1, 0, 0, 7)
        aicc: float = -1234.56
        converged: bool = True
        history: FakeHistory = field(
            default_factory=lambda: FakeHistory(
                pd.Timestamp("2026-01-01"), pd.Timestamp("2030-12-31")
            )
        )
        temperature_range_c: tuple = (-12.0, 38.5)
        fingerprint: str = "ab" * 32

        def describe_errors(self) -> str:
            return "today's error carries over to tomorrow"

    summary = summarise_model(FakeModel())
    assert summary["Error model"].startswith("AR 1 · MA 1 | weekly AR 1")
    assert summary["AICc"] == "-1,234.6"
    assert summary["History used"] == "2026-01-01 to 2030-12-31"
    assert summary["Fitted temperature range"] == "-12.0 °C to 38.5 °C"
    assert summary["Model fingerprint"] == "ab" * 8
    assert summary["Error model in words"].startswith("today's")
    assert not any(re.search(r"\(\d+,\s*\d+,\s*\d+\)", v) for v in summary.values())
