"""How the app's tables read: planner words in the headers, units named, sensible digits.

Each function returns the ``column_config`` for one of loadcore's tables (``st.dataframe(frame,
column_config=...)``): the table's own column names and values stay as loadcore made them (tests
compare them with loadcore's), only the headers, number formats and date layouts change. Level
columns are read back by :mod:`loadcore.levels`, temperature columns named by
:mod:`loadcore.units`. Nothing here computes a statistic.
"""

from __future__ import annotations

from collections.abc import Iterable
from typing import Any

import streamlit as st

from loadcore import levels as interval_levels
from loadcore import units
from loadcore.calendar import day_type_label

DATE = "ddd YYYY-MM-DD"
DATETIME = "YYYY-MM-DD HH:mm"


def _number(label: str, digits: int, **kw: Any):
    return st.column_config.NumberColumn(label, format=f"%.{digits}f", **kw)


def _interval_columns(columns: Iterable[str], demand_unit: str) -> dict[str, Any]:
    """``lower_80`` -> "80 % low, MW" and so on, for every interval column present."""
    out: dict[str, Any] = {}
    for column in columns:
        se_level = interval_levels.level_of_coverage_se_column(column)
        if se_level is not None:
            out[column] = st.column_config.NumberColumn(
                f"± on the {interval_levels.level_label(se_level)} % share (standard error)",
                format="percent",
            )
            continue
        level = interval_levels.level_of_column(str(column))
        if level is None:
            continue
        label = interval_levels.level_label(level)
        if str(column).startswith("lower"):
            out[column] = _number(f"{label} % low, {demand_unit}", 0)
        elif str(column).startswith("upper"):
            out[column] = _number(f"{label} % high, {demand_unit}", 0)
        elif str(column).startswith("coverage"):
            out[column] = st.column_config.NumberColumn(
                f"inside the {label} % interval", format="percent"
            )
    return out


def forecast_columns(columns: Iterable[str], unit: units.Unit, demand_unit: str = "MW") -> dict:
    """The one forecast table (``loadcore.export.forecast_table``)."""
    columns = list(columns)
    symbol = units.symbol(unit)
    config: dict[str, Any] = {
        "scenario": st.column_config.TextColumn("scenario"),
        "date": st.column_config.DateColumn("date", format=DATE),
        units.temperature_column(unit): _number(f"daily high, {symbol}", 1),
        "day_type": st.column_config.TextColumn("day type"),
        "mean": _number(f"mean, {demand_unit}", 0),
        "median": _number(f"median, {demand_unit}", 0),
        "out_of_range": st.column_config.CheckboxColumn("outside the fitted range"),
        units.out_of_range_column(unit): _number(f"outside by, {symbol}", 1),
        "sparse_temperature": st.column_config.CheckboxColumn("few history days this warm/cold"),
    }
    config.update(_interval_columns(columns, demand_unit))
    return {k: v for k, v in config.items() if k in columns}


def summary_table(summary, base_name: str, demand_unit: str = "MW"):
    """``loadcore.export.comparison_summary`` against ``base_name``, with planner headers.

    Returns
    -------
    (pandas.DataFrame, dict)
        The summary with its columns renamed ("peak, MW", "peak vs <base>, %"...; the unit of
        the sum dropped, it is in its header) and the ``column_config`` of those columns.
    """
    du = demand_unit
    names = {
        "scenario": "scenario",
        "days": "days",
        "peak_date": "peak day",
        "peak_mean": f"peak, {du}",
        "sum_of_daily_means": f"sum of daily means, {du}-days",
        "peak_vs_base": f"peak vs {base_name}, {du}",
        "peak_vs_base_pct": f"peak vs {base_name}, %",
        "sum_vs_base": f"sum vs {base_name}, {du}-days",
        "sum_vs_base_pct": f"sum vs {base_name}, %",
        "days_out_of_range": "days outside fitted range",
    }
    formats = {
        "days": "%d",
        "peak_mean": "%.0f",
        "sum_of_daily_means": "%.0f",
        "peak_vs_base": "%+.0f",
        "peak_vs_base_pct": "%+.1f",
        "sum_vs_base": "%+.0f",
        "sum_vs_base_pct": "%+.1f",
        "days_out_of_range": "%d",
    }
    frame = summary.drop(columns=["sum_unit"], errors="ignore").rename(columns=names)
    config: dict[str, Any] = {
        names[k]: st.column_config.NumberColumn(format=f) for k, f in formats.items()
    }
    config[names["peak_date"]] = st.column_config.DateColumn(format=DATE)
    return frame, config


def candidate_columns() -> dict:
    """``FittedModel.candidates``: one row per error model the search looked at."""
    orders = ["ar", "differencing", "ma", "weekly_ar", "weekly_differencing", "weekly_ma"]
    config: dict[str, Any] = {name: None for name in orders}
    config.update(
        {
            "error model": st.column_config.TextColumn("error model", width="large"),
            "screening_aicc": _number("AICc, quick screen", 1, width="medium"),
            "aicc": _number("AICc, exact fit", 1, width="medium"),
            "exact_fit": st.column_config.CheckboxColumn("fitted exactly"),
            "converged": st.column_config.TextColumn("converged"),
            "stationary_invertible": st.column_config.TextColumn("stationary and invertible"),
            "chosen": st.column_config.CheckboxColumn("chosen"),
            "note": st.column_config.TextColumn("note", width="large"),
        }
    )
    return config


def yes_no(value: Any) -> str:
    """A table cell for a yes/no/unknown flag: "yes", "no" or "—" (not checked)."""
    if value is None or (isinstance(value, float) and value != value):
        return "—"
    return "yes" if bool(value) else "no"


def coefficient_columns(log_scale: bool) -> dict:
    """``FittedModel.coefficient_table``."""
    scale = " (log demand)" if log_scale else ""
    return {
        "term": st.column_config.TextColumn("term"),
        "estimate": _number(f"estimate{scale}", 4),
        "std_error": _number("standard error", 4),
        "meaning": st.column_config.TextColumn("what it means", width="large"),
    }


def ensemble_columns(demand_unit: str = "MW") -> dict:
    """``EnsembleResult.daily``."""
    du = demand_unit
    return {
        "date": st.column_config.DateColumn("date", format=DATE),
        "day_type": st.column_config.TextColumn("day type"),
        "p10": _number(f"P10, {du}", 0),
        "p50": _number(f"P50 (median), {du}", 0),
        "p90": _number(f"P90, {du}", 0),
        "mean": _number(f"mean, {du}", 0),
        "weather_share": st.column_config.NumberColumn(
            "share of the spread from the weather", format="percent"
        ),
        "prob_above": st.column_config.NumberColumn("chance above the threshold", format="percent"),
    }


def backtest_horizon_columns(columns: Iterable[str], demand_unit: str = "MW") -> dict:
    """``BacktestResult.by_horizon``: scores by days ahead."""
    du = demand_unit
    config: dict[str, Any] = {
        "horizon": st.column_config.NumberColumn("days ahead", format="%d"),
        "n": st.column_config.NumberColumn("days scored", format="%d"),
        "mape": _number("MAPE, %", 2),
        "rmse": _number(f"RMSE, {du}", 0),
        "mase": _number("MASE", 3),
        "naive_mape": _number("same weekday last week: MAPE, %", 2),
        "naive_rmse": _number(f"same weekday last week: RMSE, {du}", 0),
        "naive_mase": _number("same weekday last week: MASE", 3),
        "pinball": _number(f"pinball loss, {du}", 1),
        "crps": _number(f"CRPS, {du}", 1),
    }
    config.update(_interval_columns(columns, du))
    return {k: v for k, v in config.items() if k in list(columns)}


def backtest_band_columns(columns: Iterable[str], demand_unit: str = "MW") -> dict:
    """``BacktestResult.by_band``: the scores of :func:`backtest_horizon_columns` over stretches
    of days ahead (the first and last day are in the stretch's name)."""
    config = backtest_horizon_columns(columns, demand_unit)
    config.update(
        {
            "band": st.column_config.TextColumn("days ahead"),
            "first_day": None,
            "last_day": None,
        }
    )
    return {k: v for k, v in config.items() if k in list(columns)}


def backtest_forecast_columns(columns: Iterable[str], unit: units.Unit, demand_unit: str) -> dict:
    """``BacktestResult.forecasts`` (the page converts the temperature to the display unit)."""
    du = demand_unit
    config: dict[str, Any] = {
        "origin": st.column_config.DateColumn("forecast made on", format=DATE),
        "date": st.column_config.DateColumn("date", format=DATE),
        "horizon": st.column_config.NumberColumn("days ahead", format="%d"),
        f"temperature, {units.symbol(unit)}": _number(f"daily high, {units.symbol(unit)}", 1),
        "actual": _number(f"actual, {du}", 0),
        "mean": _number(f"mean, {du}", 0),
        "median": _number(f"median, {du}", 0),
        "naive": _number(f"same weekday last week, {du}", 0),
        "scale": _number(f"scale, {du}", 1),
        "crps": _number(f"CRPS, {du}", 1),
        "pit": _number("PIT", 3),
    }
    config.update(_interval_columns(columns, du))
    return {k: v for k, v in config.items() if k in list(columns)}


def library_columns() -> dict:
    """The Saved-scenarios listing (``SavedScenario.to_dict`` rows; times parsed by the page)."""
    return {
        "name": st.column_config.TextColumn("name"),
        "note": st.column_config.TextColumn("note", width="large"),
        "author": st.column_config.TextColumn("author"),
        "first_date": st.column_config.DateColumn("first day", format=DATE),
        "last_date": st.column_config.DateColumn("last day", format=DATE),
        "days": st.column_config.NumberColumn("days", format="%d"),
        "version": st.column_config.NumberColumn("version", format="%d"),
        "changed_utc": st.column_config.DatetimeColumn("changed (UTC)", format=DATETIME),
    }


def report_columns() -> dict:
    """``HistoryReport.to_frame``: the history check's findings."""
    return {
        "severity": st.column_config.TextColumn("kind"),
        "row": st.column_config.NumberColumn("file row", format="%d"),
        "date": st.column_config.TextColumn("date"),
        "column": st.column_config.TextColumn("column"),
        "message": st.column_config.TextColumn("what was found", width="large"),
        "fix": st.column_config.TextColumn("what to do", width="large"),
    }


def day_type_count_columns(types: Iterable[str]) -> dict:
    """The History page's day-type counts (one column per day type)."""
    return {t: st.column_config.NumberColumn(day_type_label(str(t)), format="%d") for t in types}
