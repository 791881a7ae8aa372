"""The tables a planner takes away: the one forecast table, the comparison with a base scenario,
the days outside the fitted range, and a plain-words model summary.

Forecasts are read through :mod:`loadcore.export.forecasts`; temperatures are converted and their
columns named by :mod:`loadcore.units`, interval columns by :mod:`loadcore.levels`.
"""

from __future__ import annotations

import logging
import math
import numbers
from collections.abc import Sequence
from typing import Any

import numpy as np
import pandas as pd

from loadcore import levels as interval_levels
from loadcore import texts, units
from loadcore.errors import InputError, quote
from loadcore.export.forecasts import (
    ForecastLike,
    as_list,
    forecast_frame,
    forecast_levels,
    parse_demand_kind,
    scenario_names,
)

log = logging.getLogger(__name__)


def forecast_table(forecasts: Sequence[ForecastLike], temp_unit: str = "C") -> pd.DataFrame:
    """The one forecast table: every scenario's daily forecast, ready for CSV and display.

    Parameters
    ----------
    forecasts : sequence of Forecast
        Forecasts with distinct scenario names (a model Forecast or one reloaded from the library).
    temp_unit : {"C", "F"}, default "C"
        Unit of the temperature columns, named in the column: ``temperature_c`` and
        ``out_of_range_by_c``, or ``temperature_f`` and ``out_of_range_by_f``.

    Returns
    -------
    pandas.DataFrame
        Columns exactly ``scenario``, ``date``, ``temperature_<u>``, ``day_type``, ``mean``,
        ``median``, then ``lower_L``, ``upper_L`` for each interval level L (ascending, over the
        union of the forecasts' levels; empty where a forecast lacks a level), ``out_of_range``,
        ``out_of_range_by_<u>`` and ``sparse_temperature``. Demand columns are in the history's
        demand unit (MW for daily peak). ``attrs["temp_unit"]`` records the temperature unit.
    """
    unit = units.parse_unit(temp_unit)
    temp_col = units.temperature_column(unit)
    by_col = units.out_of_range_column(unit)
    items = as_list(forecasts)
    names = scenario_names(items)
    levels = sorted({lv for fc in items for lv in forecast_levels(fc)})
    level_cols = interval_levels.interval_columns(levels)
    columns = ["scenario", "date", temp_col, "day_type", "mean", "median"]
    columns += level_cols + ["out_of_range", by_col, "sparse_temperature"]
    parts = []
    for i, (fc, name) in enumerate(zip(items, names, strict=True)):
        frame = forecast_frame(fc, i)
        temps = frame["temperature_c"].astype(float)
        by_c = frame["out_of_range_by_c"].astype(float).fillna(0.0)
        part = pd.DataFrame(
            {
                "scenario": name,
                "date": frame["date"].to_numpy(),
                temp_col: units.to_unit(temps, unit).to_numpy(),
                "day_type": frame["day_type"].astype(str).to_numpy(),
                "mean": frame["mean"].astype(float).to_numpy(),
                "median": frame["median"].astype(float).to_numpy(),
            }
        )
        for col in level_cols:
            part[col] = frame[col].astype(float).to_numpy() if col in frame else np.nan
        part["out_of_range"] = frame["out_of_range"].astype(bool).to_numpy()
        part[by_col] = units.delta_to_unit(by_c, unit).to_numpy()
        sparse = frame["sparse_temperature"] if "sparse_temperature" in frame else False
        part["sparse_temperature"] = pd.Series(sparse, index=frame.index).astype(bool).to_numpy()
        parts.append(part[columns])
    out = pd.concat(parts, ignore_index=True)
    out["scenario"] = out["scenario"].astype(object)
    out["day_type"] = out["day_type"].astype(object)
    out.attrs["temp_unit"] = unit
    return out


def comparison_summary(
    forecasts: Sequence[ForecastLike],
    base_name: str,
    *,
    demand_unit: str = "MW",
    demand_kind: str = "peak",
) -> pd.DataFrame:
    """Per-scenario headline figures and their difference from the base scenario.

    Parameters
    ----------
    forecasts : sequence of Forecast
        Forecasts with distinct scenario names.
    base_name : str
        The scenario the others are compared with; must be one of the forecasts.
    demand_unit : str, default "MW"
        The demand unit of the history (only used to label ``sum_unit``).
    demand_kind : {"peak", "total"}, default "peak"
        Whether daily demand is a daily peak (the sum over days is then *not* energy, only a size
        measure in unit-days) or a daily total (the sum is energy over the horizon).

    Returns
    -------
    pandas.DataFrame
        One row per scenario, in the order given, with columns ``scenario``, ``days`` (horizon
        length), ``peak_date``, ``peak_mean`` (highest daily mean, demand unit),
        ``sum_of_daily_means`` (sum of the daily means over the horizon), ``sum_unit`` (the unit of
        that sum, spelled out), ``peak_vs_base`` and ``peak_vs_base_pct`` (peak minus the base
        peak, in the demand unit and in % of the base peak), ``sum_vs_base`` and
        ``sum_vs_base_pct`` (likewise for the sum), ``days_out_of_range``. Percentages are empty
        when the base value is zero. ``attrs["sum_note"]`` explains the sum in a sentence.
    """
    kind = parse_demand_kind(demand_kind)
    items = as_list(forecasts)
    names = scenario_names(items)
    if base_name not in names:
        raise InputError(
            f"The base scenario {quote(base_name)} is not among the forecasts",
            fix=f"Choose one of: {', '.join(repr(n) for n in names)}",
        )
    unit = str(demand_unit).strip() or "MW"
    if kind == "peak":
        sum_unit = f"{unit}-days (sum of daily peaks, not energy)"
        sum_note = texts.SUM_CAUTION_PEAK
    else:
        sum_unit = f"{unit} (sum of daily totals)"
        sum_note = texts.SUM_CAUTION_TOTAL
    rows = []
    for i, (fc, name) in enumerate(zip(items, names, strict=True)):
        frame = forecast_frame(fc, i)
        means = frame["mean"].astype(float)
        if means.notna().sum() == 0:
            raise InputError(
                "The forecast has no demand values",
                where=f"scenario {quote(name)}",
                fix="Re-run the forecast; check the scenario temperatures are numbers",
            )
        peak_pos = int(np.nanargmax(means.to_numpy()))
        rows.append(
            {
                "scenario": name,
                "days": len(frame),
                "peak_date": frame["date"].iloc[peak_pos],
                "peak_mean": float(means.iloc[peak_pos]),
                "sum_of_daily_means": float(means.sum(skipna=True)),
                "sum_unit": sum_unit,
                "days_out_of_range": int(frame["out_of_range"].astype(bool).sum()),
            }
        )
    base = rows[names.index(base_name)]
    lengths = {row["days"] for row in rows}
    if len(lengths) > 1:
        log.warning("scenarios have different horizons %s; sums are not like for like", lengths)
    for row in rows:
        row["peak_vs_base"] = row["peak_mean"] - base["peak_mean"]
        row["peak_vs_base_pct"] = _pct(row["peak_vs_base"], base["peak_mean"])
        row["sum_vs_base"] = row["sum_of_daily_means"] - base["sum_of_daily_means"]
        row["sum_vs_base_pct"] = _pct(row["sum_vs_base"], base["sum_of_daily_means"])
    columns = [
        "scenario",
        "days",
        "peak_date",
        "peak_mean",
        "sum_of_daily_means",
        "sum_unit",
        "peak_vs_base",
        "peak_vs_base_pct",
        "sum_vs_base",
        "sum_vs_base_pct",
        "days_out_of_range",
    ]
    out = pd.DataFrame(rows)[columns]
    out["peak_date"] = pd.to_datetime(out["peak_date"])
    out["scenario"] = out["scenario"].astype(object)
    out["sum_unit"] = out["sum_unit"].astype(object)
    out.attrs["sum_note"] = sum_note
    out.attrs["base_name"] = base_name
    out.attrs["demand_unit"] = unit
    if len(lengths) > 1:
        out.attrs["horizon_note"] = texts.HORIZON_CAUTION
    return out


def _pct(diff: float, base: float) -> float:
    if base == 0 or not math.isfinite(base):
        return float("nan")
    return 100.0 * diff / abs(base)


def out_of_range_days(forecasts: Sequence[ForecastLike], temp_unit: str = "C") -> pd.DataFrame:
    """The scenario days whose temperature lies outside the model's fitted range.

    Returns
    -------
    pandas.DataFrame
        Columns ``scenario``, ``date``, ``temperature_<u>`` and ``out_of_range_by_<u>`` (degrees
        beyond the nearest end of the fitted range) in the chosen unit, one row per flagged day.
    """
    table = forecast_table(forecasts, temp_unit=temp_unit)
    unit = table.attrs["temp_unit"]
    keep = ["scenario", "date", units.temperature_column(unit), units.out_of_range_column(unit)]
    flagged = table.loc[table["out_of_range"], keep].copy()
    flagged.attrs["temp_unit"] = unit
    return flagged.reset_index(drop=True)


def describe_orders(order: Sequence[int], seasonal_order: Sequence[int]) -> str:
    """Model orders in the product's one layout (:meth:`loadcore.model.Orders.describe`).

    Parameters
    ----------
    order : (p, d, q)
        Non-seasonal autoregressive order, differencing, moving-average order.
    seasonal_order : (P, D, Q, s)
        Seasonal orders; ``s`` is 7 (weekly) for daily data.
    """
    from loadcore.model import WEEKLY_PERIOD, Orders

    p, d, q = (int(x) for x in tuple(order)[:3])
    seasonal = tuple(seasonal_order)
    big_p, big_d, big_q = (int(x) for x in seasonal[:3])
    period = int(seasonal[3]) if len(seasonal) > 3 else WEEKLY_PERIOD
    return Orders(p, d, q, big_p, big_d, big_q, period).describe()


def summarise_model(model: Any, temp_unit: str = "C") -> dict[str, str]:
    """A short plain-words summary of a fitted model for the meeting brief.

    Reads the attributes of the FittedModel contract that are present; missing ones are left out.

    Returns
    -------
    dict of str to str
        Ordered label -> text pairs.
    """
    out: dict[str, str] = {}
    order = getattr(model, "order", None)
    seasonal = getattr(model, "seasonal_order", None)
    if order is not None and seasonal is not None:
        try:
            out["Error model"] = describe_orders(order, seasonal)
        except (TypeError, ValueError):
            log.debug("model orders not readable: %r %r", order, seasonal)
    aicc = getattr(model, "aicc", None)
    if isinstance(aicc, numbers.Real) and math.isfinite(float(aicc)):
        out["AICc"] = f"{float(aicc):,.1f}"
    converged = getattr(model, "converged", None)
    if converged is not None:
        out["Estimation converged"] = "yes" if converged else "no - treat results with care"
    history = getattr(model, "history", None)
    start = getattr(history, "start", None)
    end = getattr(history, "end", None) or getattr(model, "history_end", None)
    if start is not None and end is not None:
        out["History used"] = f"{pd.Timestamp(start):%Y-%m-%d} to {pd.Timestamp(end):%Y-%m-%d}"
    trange = getattr(model, "temperature_range_c", None)
    if trange is not None:
        try:
            low, high = (float(x) for x in trange)
            out["Fitted temperature range"] = units.format_range(
                low, high, units.parse_unit(temp_unit)
            )
        except (TypeError, ValueError):
            log.debug("temperature range not readable: %r", trange)
    describe = getattr(model, "describe_errors", None)
    if callable(describe):
        try:
            text = describe()
        except Exception:  # noqa: BLE001 - a summary must not fail the whole brief
            log.exception("describe_errors failed")
            text = None
        if text:
            out["Error model in words"] = str(text)
    out.update(_response_rows(model, temp_unit))
    memory = getattr(model, "describe_memory", None)
    if callable(memory) and getattr(model, "memory_trials", ()):
        out["Temperature memory"] = str(memory())
    fingerprint = getattr(model, "fingerprint", None)
    if fingerprint:
        out["Model fingerprint"] = str(fingerprint)[:16]
    return out


#: The model-summary label of the note that the other temperature response is clearly better;
#: the brief also shows it as a caution beside the model table.
RESPONSE_NOTE_LABEL = "Better temperature response"


def _response_rows(model: Any, temp_unit: str) -> dict[str, str]:
    """Both temperature responses' AICc and, when the other is clearly better, the note."""
    from loadcore.model.wording import describe_comparison

    comparison = getattr(model, "response_comparison", None)
    note_fn = getattr(model, "response_note", None)
    if comparison is None or not callable(note_fn):
        return {}
    unit = units.parse_unit(temp_unit)
    out = {"Temperature response": describe_comparison(comparison, unit)}
    note = note_fn(unit, medium="brief")
    if note:
        out[RESPONSE_NOTE_LABEL] = note
    return out
