"""Outputs a planner takes away: spreadsheet-safe CSV and an offline HTML meeting brief.

Every CSV download in the app and every CSV the CLI writes goes through :func:`to_csv_bytes`, which
neutralises text cells that a spreadsheet would run as a formula. The meeting brief is one HTML file
with the chart library embedded, so it opens on a machine without a network connection.

Forecasts are read through a small interface (``frame``, ``levels``, ``scenario_name``, ``note``,
optionally ``warnings()``), so a :class:`loadcore.model.Forecast` and a forecast reloaded from the
scenario library are treated alike.
"""

from __future__ import annotations

import html
import io
import logging
import math
import numbers
from collections.abc import Mapping, Sequence
from datetime import UTC, date, datetime
from typing import Any, Protocol

import numpy as np
import pandas as pd

from loadcore import __version__, texts, units
from loadcore import levels as interval_levels
from loadcore.errors import InputError

log = logging.getLogger(__name__)

# Leading characters that make a spreadsheet treat a cell as a formula (OWASP, "CSV Injection").
FORMULA_PREFIXES = ("=", "+", "-", "@", "\t", "\r")

DEFAULT_UPLOAD_LIMIT_MB = 50
BYTES_PER_MB = 1024 * 1024

PLANNING_CAUTION = texts.PLANNING_CAUTION
INTERVAL_CAUTION = texts.INTERVAL_CAUTION
RANGE_CAUTION = texts.RANGE_CAUTION
SUM_CAUTION_PEAK = texts.SUM_CAUTION_PEAK
SUM_CAUTION_TOTAL = texts.SUM_CAUTION_TOTAL

# Our own palette for the brief: history in charcoal, scenarios in these, warnings in brick red.
HISTORY_COLOUR = "#3b3f45"
SCENARIO_COLOURS = ("#1f6f78", "#b5562b", "#56702a", "#7a3f7d", "#a8861f", "#34508f", "#8c4a3a")
WARNING_COLOUR = "#a3162b"
PAGE_BACKGROUND = "#f7f5ef"


class ForecastLike(Protocol):
    """What export reads from a forecast (a model Forecast or one reloaded from the library)."""

    frame: pd.DataFrame
    levels: tuple
    scenario_name: str
    note: str


# --------------------------------------------------------------------------------------------
# Safe CSV
# --------------------------------------------------------------------------------------------


def safe_cell(value: Any) -> Any:
    """Neutralise a text cell that a spreadsheet would run as a formula.

    Text starting with ``=``, ``+``, ``-``, ``@``, a tab or a carriage return gets a single quote in
    front, as the OWASP guidance on CSV injection recommends. Numbers (int, float, bool and numpy
    numbers, negative ones included), missing values, dates and every other non-text value are
    returned unchanged.

    Parameters
    ----------
    value : Any
        One cell.

    Returns
    -------
    Any
        The cell, with a leading quote added when it is risky text.
    """
    if isinstance(value, (str, np.str_)) and str(value).startswith(FORMULA_PREFIXES):
        return "'" + str(value)
    return value


def _is_text_column(series: pd.Series) -> bool:
    dtype = series.dtype
    return (
        pd.api.types.is_object_dtype(dtype)
        or isinstance(dtype, pd.StringDtype)
        or isinstance(dtype, pd.CategoricalDtype)
    )


def safe_frame(frame: pd.DataFrame) -> pd.DataFrame:
    """Apply :func:`safe_cell` to the text columns of a table.

    Only object, string and categorical columns are touched, so numeric columns keep their dtype.
    Column names are neutralised too, since they become the header row. The input is not changed.

    Parameters
    ----------
    frame : pandas.DataFrame
        Any table.

    Returns
    -------
    pandas.DataFrame
        A copy with risky text cells prefixed by a single quote.
    """
    if not isinstance(frame, pd.DataFrame):
        raise InputError(
            f"Expected a table to export, got {type(frame).__name__}",
            fix="Pass a pandas DataFrame",
        )
    header = [safe_cell(c if isinstance(c, str) else str(c)) for c in frame.columns]
    columns = {}
    for i in range(frame.shape[1]):  # by position, so repeated column names are fine
        series = frame.iloc[:, i]
        if _is_text_column(series):
            series = series.astype(object).map(safe_cell).astype(object)
        columns[i] = series
    out = pd.DataFrame(columns, index=frame.index)
    out.columns = header
    out.attrs = dict(frame.attrs)
    return out


def _all_midnight(series: pd.Series) -> bool:
    valid = series.dropna()
    if valid.empty:
        return True
    return bool((valid == valid.dt.normalize()).all())


def to_csv_bytes(frame: pd.DataFrame, *, float_digits: int = 8) -> bytes:
    """The one CSV writer for downloads and CLI exports.

    Text cells are neutralised with :func:`safe_frame`, dates are written as ISO 8601
    (``YYYY-MM-DD`` when every value falls at midnight, else ``YYYY-MM-DDTHH:MM:SS``), floats with
    ``float_digits`` significant digits, missing values as empty cells, UTF-8 without a byte-order
    mark, CRLF line endings (RFC 4180; it also makes the writer quote any cell that holds a
    carriage return or line feed). A meaningful index (anything but a plain 0..n-1 range) is written as
    leading column(s).

    Parameters
    ----------
    frame : pandas.DataFrame
        The table to write.
    float_digits : int, default 8
        Significant digits for floats (8 keeps a demand of 123456.78 MW exact to 0.01 MW).

    Returns
    -------
    bytes
        The CSV file content.
    """
    if not isinstance(frame, pd.DataFrame):
        raise InputError(
            f"Expected a table to export, got {type(frame).__name__}",
            fix="Pass a pandas DataFrame",
        )
    if not 1 <= int(float_digits) <= 17:
        raise InputError(
            f"Float_digits must be between 1 and 17, got {float_digits}", fix="Use 8 unless told"
        )
    out = frame
    if not isinstance(out.index, pd.RangeIndex) or out.index.name is not None:
        out = out.reset_index()
    header = list(out.columns)
    columns = {}
    for i in range(out.shape[1]):  # by position, so repeated column names are fine
        series = out.iloc[:, i]
        if isinstance(series.dtype, pd.DatetimeTZDtype) or pd.api.types.is_datetime64_any_dtype(
            series.dtype
        ):
            pattern = "%Y-%m-%d" if _all_midnight(series) else "%Y-%m-%dT%H:%M:%S"
            series = series.dt.strftime(pattern).astype(object).where(series.notna(), None)
        elif pd.api.types.is_object_dtype(series.dtype):
            series = series.map(_iso_if_date)
        columns[i] = series
    out = pd.DataFrame(columns, index=out.index)
    out.columns = header
    out = safe_frame(out)
    buffer = io.StringIO()
    out.to_csv(buffer, index=False, float_format=f"%.{int(float_digits)}g", lineterminator="\r\n")
    return buffer.getvalue().encode("utf-8")


def _iso_if_date(value: Any) -> Any:
    if isinstance(value, pd.Timestamp):
        if pd.isna(value):
            return None
        return value.strftime("%Y-%m-%d") if value == value.normalize() else value.isoformat()
    if isinstance(value, datetime):
        return value.isoformat()
    if isinstance(value, date):
        return value.isoformat()
    return value


def check_upload_size(n_bytes: int, limit_mb: float = DEFAULT_UPLOAD_LIMIT_MB) -> None:
    """Refuse an upload larger than the limit before reading it.

    Parameters
    ----------
    n_bytes : int
        Size of the upload in bytes.
    limit_mb : float, default 50
        The limit in megabytes (1 MB = 1,048,576 bytes here).

    Raises
    ------
    InputError
        When the size is not a non-negative whole number of bytes, or exceeds the limit.
    """
    if isinstance(n_bytes, bool) or not isinstance(n_bytes, numbers.Integral) or n_bytes < 0:
        raise InputError(
            f"The upload size must be a whole number of bytes, got {n_bytes!r}",
            fix="Pass the file's length in bytes",
        )
    if (
        isinstance(limit_mb, bool)
        or not isinstance(limit_mb, numbers.Real)
        or not math.isfinite(limit_mb)
        or limit_mb <= 0
    ):
        raise InputError(
            f"The upload limit must be a positive number of MB, got {limit_mb!r}",
            fix=f"Use the default of {DEFAULT_UPLOAD_LIMIT_MB} MB",
        )
    limit_bytes = int(limit_mb * BYTES_PER_MB)
    if int(n_bytes) > limit_bytes:
        raise InputError(
            f"The file is {int(n_bytes) / BYTES_PER_MB:.1f} MB, more than the {limit_mb:g} MB limit",
            where="upload",
            fix="Upload daily data (one row per day) or cut the file to the years you need",
        )


# --------------------------------------------------------------------------------------------
# Tidy tables
# --------------------------------------------------------------------------------------------


def _forecast_table(forecast: Any, position: int) -> pd.DataFrame:
    """The forecast's frame with ``date`` as a column, checked for the columns export needs."""
    name = getattr(forecast, "scenario_name", None)
    frame = getattr(forecast, "frame", None)
    if not isinstance(frame, pd.DataFrame):
        raise InputError(
            "This is not a forecast: it has no table of results",
            where=f"forecast {position + 1}",
            fix="Pass the forecasts made by the model or loaded from the scenario library",
        )
    if "date" not in frame.columns:
        if frame.index.name == "date" or isinstance(frame.index, pd.DatetimeIndex):
            frame = frame.rename_axis("date").reset_index()
    needed = ["date", "temperature_c", "day_type", "mean", "median", "out_of_range"]
    needed += interval_levels.interval_columns(_levels(forecast))
    missing = [c for c in needed if c not in frame.columns]
    if missing:
        raise InputError(
            f"The forecast table lacks the column(s) {', '.join(missing)}",
            where=f"scenario {name!r}" if name else f"forecast {position + 1}",
            fix="Re-run the forecast with this version of loadcore",
        )
    frame = frame.copy()
    frame["date"] = pd.to_datetime(frame["date"])
    if "out_of_range_by_c" not in frame.columns:
        frame["out_of_range_by_c"] = 0.0
    return frame


def _levels(forecast: Any) -> tuple[float, ...]:
    levels = getattr(forecast, "levels", None) or ()
    if not levels:
        return ()
    return interval_levels.parse_levels(levels, where="forecast levels")


def _names(forecasts: Sequence[Any]) -> list[str]:
    if isinstance(forecasts, (str, bytes)) or not isinstance(forecasts, Sequence):
        forecasts = [forecasts]
    if len(forecasts) == 0:
        raise InputError("There are no forecasts to export", fix="Forecast at least one scenario")
    names = []
    for i, fc in enumerate(forecasts):
        name = getattr(fc, "scenario_name", None)
        names.append(str(name) if name not in (None, "") else f"scenario {i + 1}")
    seen: set[str] = set()
    for name in names:
        if name in seen:
            raise InputError(
                f"Two forecasts share the scenario name {name!r}",
                fix="Give every scenario its own name before comparing or exporting",
            )
        seen.add(name)
    return names


def _as_list(forecasts: Sequence[Any] | Any) -> list[Any]:
    if isinstance(forecasts, (str, bytes)) or not isinstance(forecasts, Sequence):
        return [forecasts]
    return list(forecasts)


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
    items = _as_list(forecasts)
    names = _names(items)
    levels = sorted({lv for fc in items for lv in _levels(fc)})
    level_cols = interval_levels.interval_columns(levels)
    columns = ["scenario", "date", temp_col, "day_type", "mean", "median"]
    columns += level_cols + ["out_of_range", by_col, "sparse_temperature"]
    parts = []
    for i, (fc, name) in enumerate(zip(items, names, strict=True)):
        frame = _forecast_table(fc, i)
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
    kind = str(demand_kind).strip().lower()
    if kind not in ("peak", "total"):
        raise InputError(
            f"Unknown kind of daily demand {demand_kind!r}",
            fix='use "peak" (daily peak demand) or "total" (daily total)',
        )
    items = _as_list(forecasts)
    names = _names(items)
    if base_name not in names:
        raise InputError(
            f"The base scenario {base_name!r} is not among the forecasts",
            fix=f"Choose one of: {', '.join(repr(n) for n in names)}",
        )
    unit = str(demand_unit).strip() or "MW"
    if kind == "peak":
        sum_unit = f"{unit}-days (sum of daily peaks, not energy)"
        sum_note = SUM_CAUTION_PEAK
    else:
        sum_unit = f"{unit} (sum of daily totals)"
        sum_note = SUM_CAUTION_TOTAL
    rows = []
    for i, (fc, name) in enumerate(zip(items, names, strict=True)):
        frame = _forecast_table(fc, i)
        means = frame["mean"].astype(float)
        if means.notna().sum() == 0:
            raise InputError(
                "The forecast has no demand values",
                where=f"scenario {name!r}",
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
        out.attrs["horizon_note"] = (
            "The scenarios cover different numbers of days, so their sums are not like for like."
        )
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
    from .model import WEEKLY_PERIOD, Orders

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
    fingerprint = getattr(model, "fingerprint", None)
    if fingerprint:
        out["Model fingerprint"] = str(fingerprint)[:16]
    return out


# --------------------------------------------------------------------------------------------
# Meeting brief (offline HTML)
# --------------------------------------------------------------------------------------------


def _hex_to_rgba(colour: str, alpha: float) -> str:
    colour = colour.lstrip("#")
    r, g, b = (int(colour[i : i + 2], 16) for i in (0, 2, 4))
    return f"rgba({r},{g},{b},{alpha})"


def _history_series(history_tail: pd.DataFrame | None) -> pd.Series:
    if history_tail is None:
        return pd.Series(dtype=float)
    if isinstance(history_tail, pd.Series):
        series = history_tail.astype(float)
        series.index = pd.to_datetime(series.index)
        return series
    if not isinstance(history_tail, pd.DataFrame):
        raise InputError(
            f"The history tail must be a table, got {type(history_tail).__name__}",
            fix="Pass the last weeks of History.frame",
        )
    frame = history_tail
    if "date" in frame.columns:
        frame = frame.set_index("date")
    column = next((c for c in ("demand", "demand_mw") if c in frame.columns), None)
    if column is None:
        raise InputError(
            "The history tail has no demand column",
            fix="Pass a table with a 'demand' column on a date index",
        )
    series = pd.to_numeric(frame[column], errors="coerce").astype(float)
    series.index = pd.to_datetime(series.index)
    return series.sort_index()


def _figure_html(
    forecasts: list[Any],
    names: list[str],
    history: pd.Series,
    unit: str,
    demand_unit: str,
) -> str:
    import plotly.graph_objects as go
    import plotly.io as pio

    fig = go.Figure()
    if not history.empty:
        fig.add_trace(
            go.Scatter(
                x=history.index,
                y=history.to_numpy(),
                mode="lines",
                name="Recorded demand",
                line={"color": HISTORY_COLOUR, "width": 1.6},
                hovertemplate="%{x|%Y-%m-%d}: %{y:,.0f}<extra>recorded</extra>",
            )
        )
    for i, (fc, name) in enumerate(zip(forecasts, names, strict=True)):
        frame = _forecast_table(fc, i)
        colour = SCENARIO_COLOURS[i % len(SCENARIO_COLOURS)]
        label = html.escape(name)
        group = f"s{i}"
        levels = sorted(_levels(fc), reverse=True)
        for j, level in enumerate(levels):
            lab = interval_levels.level_label(level)
            alpha = 0.12 + 0.14 * j
            fig.add_trace(
                go.Scatter(
                    x=frame["date"],
                    y=frame[interval_levels.upper_column(level)].astype(float),
                    mode="lines",
                    line={"width": 0, "color": colour},
                    legendgroup=group,
                    showlegend=False,
                    hoverinfo="skip",
                )
            )
            fig.add_trace(
                go.Scatter(
                    x=frame["date"],
                    y=frame[interval_levels.lower_column(level)].astype(float),
                    mode="lines",
                    line={"width": 0, "color": colour},
                    fill="tonexty",
                    fillcolor=_hex_to_rgba(colour, alpha),
                    legendgroup=group,
                    name=f"{label}: {lab}% interval",
                    showlegend=True,
                    hoverinfo="skip",
                )
            )
        fig.add_trace(
            go.Scatter(
                x=frame["date"],
                y=frame["mean"].astype(float),
                mode="lines",
                line={"color": colour, "width": 2.4},
                legendgroup=group,
                name=f"{label}: mean",
                hovertemplate="%{x|%Y-%m-%d}: %{y:,.0f}<extra>" + label + "</extra>",
            )
        )
        flagged = frame[frame["out_of_range"].astype(bool)]
        if not flagged.empty:
            shown = units.to_unit(flagged["temperature_c"].astype(float), unit)
            by = units.delta_to_unit(flagged["out_of_range_by_c"].astype(float), unit)
            fig.add_trace(
                go.Scatter(
                    x=flagged["date"],
                    y=flagged["mean"].astype(float),
                    mode="markers",
                    marker={
                        "symbol": "triangle-down-open",
                        "size": 11,
                        "color": WARNING_COLOUR,
                        "line": {"width": 2},
                    },
                    legendgroup=group,
                    name=f"{label}: outside fitted temperatures",
                    customdata=np.column_stack([shown.to_numpy(), by.to_numpy()]),
                    hovertemplate=(
                        "%{x|%Y-%m-%d}: %{customdata[0]:.1f} °"
                        + unit
                        + ", %{customdata[1]:.1f} °"
                        + unit
                        + " outside<extra>"
                        + label
                        + "</extra>"
                    ),
                )
            )
    starts = [_forecast_table(fc, i)["date"].min() for i, fc in enumerate(forecasts)]
    if starts and not history.empty:
        first = min(starts)
        fig.add_shape(
            type="line",
            xref="x",
            yref="paper",
            x0=first,
            x1=first,
            y0=0,
            y1=1,
            line={"color": "#8f8a7c", "width": 1, "dash": "dot"},
        )
        fig.add_annotation(
            x=first,
            y=1,
            xref="x",
            yref="paper",
            text="scenarios start",
            showarrow=False,
            xanchor="left",
            yanchor="top",
            font={"size": 11, "color": "#5a5e66"},
        )
    fig.update_layout(
        paper_bgcolor=PAGE_BACKGROUND,
        plot_bgcolor="#ffffff",
        font={"family": "Georgia, 'Times New Roman', serif", "size": 13, "color": "#23262b"},
        margin={"l": 70, "r": 20, "t": 20, "b": 50},
        height=460,
        legend={"orientation": "v", "x": 1.01, "y": 1, "bgcolor": "rgba(0,0,0,0)"},
        hovermode="closest",
    )
    fig.update_xaxes(showgrid=True, gridcolor="#e6e2d6", linecolor="#8f8a7c", title_text="Date")
    fig.update_yaxes(
        showgrid=True,
        gridcolor="#e6e2d6",
        linecolor="#8f8a7c",
        title_text=f"Daily demand ({html.escape(demand_unit)})",
    )
    return pio.to_html(
        fig,
        include_plotlyjs=True,
        include_mathjax=False,
        full_html=False,
        config={"displaylogo": False, "responsive": True},
        div_id="demand-outlook",
    )


def _fmt_number(value: Any, digits: int = 0, signed: bool = False) -> str:
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return "–"
    sign = "+" if signed else ""
    return f"{float(value):{sign},.{digits}f}"


def _table(headers: Sequence[str], rows: Sequence[Sequence[str]], css: str = "") -> str:
    head = "".join(f"<th>{html.escape(h)}</th>" for h in headers)
    body = "".join(
        "<tr>" + "".join(f"<td>{html.escape(str(c))}</td>" for c in row) + "</tr>" for row in rows
    )
    cls = f' class="{css}"' if css else ""
    return f"<table{cls}><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>"


_STYLE = f"""
body {{ background: {PAGE_BACKGROUND}; color: #23262b; margin: 0;
  font-family: Georgia, 'Times New Roman', serif; line-height: 1.45; }}
main {{ max-width: 1080px; margin: 0 auto; padding: 28px 32px 48px; }}
h1 {{ font-size: 1.7rem; margin: 0 0 4px; letter-spacing: 0.01em; }}
h2 {{ font-size: 1.15rem; margin: 30px 0 8px; padding-bottom: 3px;
  border-bottom: 2px solid #d8d2c2; }}
.period {{ color: #5a5e66; margin: 0 0 14px; }}
.caution {{ border-left: 5px solid {WARNING_COLOUR}; background: #fbeeee; padding: 10px 14px;
  margin: 12px 0; }}
table {{ border-collapse: collapse; width: 100%; font-size: 0.92rem; background: #fff; }}
th, td {{ padding: 5px 9px; border-bottom: 1px solid #e6e2d6; text-align: left;
  vertical-align: top; }}
th {{ background: #ece7da; font-weight: 600; }}
table.numbers td:not(:first-child) {{ text-align: right; font-variant-numeric: tabular-nums;
  white-space: nowrap; }}
ul.plain {{ padding-left: 20px; }}
footer {{ margin-top: 36px; font-size: 0.82rem; color: #6d7078; }}
.note {{ color: #4a4e55; font-size: 0.9rem; }}
"""


def meeting_brief_html(
    forecasts: Sequence[ForecastLike],
    *,
    history_tail: pd.DataFrame | None,
    model_summary: Mapping[str, Any],
    base_name: str,
    title: str,
    period_text: str,
    temp_unit: str = "C",
    demand_unit: str = "MW",
    demand_kind: str = "peak",
) -> str:
    """A self-contained HTML brief for a planning meeting; opens offline.

    The chart library is embedded inline and nothing is fetched from the network. All user text
    (titles, scenario names, notes, model summary values) is HTML-escaped.

    Parameters
    ----------
    forecasts : sequence of Forecast
        The scenarios to show, with distinct names.
    history_tail : pandas.DataFrame or None
        Recent recorded demand: a ``demand`` column on a date index (or a ``date`` column), as in
        ``History.frame``; drawn before the scenarios. ``None`` draws no history.
    model_summary : mapping of str to Any
        Label -> value pairs describing the model (see :func:`summarise_model`).
    base_name : str
        The scenario the others are compared with.
    title : str
        Heading of the brief.
    period_text : str
        The data period in words, e.g. "History 2019-01-01 to 2024-12-31".
    temp_unit : {"C", "F"}, default "C"
        Unit for temperatures shown in the brief.
    demand_unit : str, default "MW"
        Demand unit of the history.
    demand_kind : {"peak", "total"}, default "peak"
        Whether daily demand is a daily peak or a daily total (see :func:`comparison_summary`).

    Returns
    -------
    str
        A complete HTML document.
    """
    unit = units.parse_unit(temp_unit)
    items = _as_list(forecasts)
    names = _names(items)
    summary = comparison_summary(items, base_name, demand_unit=demand_unit, demand_kind=demand_kind)
    flagged = out_of_range_days(items, temp_unit=unit)
    history = _history_series(history_tail)
    chart = _figure_html(items, names, history, unit, str(demand_unit))
    du = str(demand_unit)

    summary_rows = [
        [
            row.scenario + (" (base)" if row.scenario == base_name else ""),
            str(row.days),
            f"{row.peak_date:%Y-%m-%d}",
            _fmt_number(row.peak_mean),
            _fmt_number(row.peak_vs_base, signed=True),
            _fmt_number(row.peak_vs_base_pct, 1, signed=True),
            _fmt_number(row.sum_of_daily_means),
            _fmt_number(row.sum_vs_base_pct, 1, signed=True),
            str(row.days_out_of_range),
        ]
        for row in summary.itertuples(index=False)
    ]
    summary_table = _table(
        [
            "Scenario",
            "Days",
            "Peak day",
            f"Peak mean ({du})",
            f"Peak vs base ({du})",
            "Peak vs base (%)",
            f"Sum of daily means ({du}-days)"
            if str(demand_kind).strip().lower() == "peak"
            else f"Sum of daily means ({du})",
            "Sum vs base (%)",
            "Days outside range",
        ],
        summary_rows,
        css="numbers",
    )
    notes = [summary.attrs["sum_note"]]
    if "horizon_note" in summary.attrs:
        notes.append(summary.attrs["horizon_note"])

    if flagged.empty:
        range_html = (
            "<p>No scenario day lies outside the temperature range the model was fitted on.</p>"
        )
    else:
        temp_col, by_col = units.temperature_column(unit), units.out_of_range_column(unit)
        range_rows = [
            [
                row["scenario"],
                f"{row['date']:%Y-%m-%d}",
                f"{row[temp_col]:.1f} {units.symbol(unit)}",
                f"{row[by_col]:.1f} {units.symbol(unit)}",
            ]
            for _, row in flagged.iterrows()
        ]
        range_html = f'<p class="caution">{html.escape(RANGE_CAUTION)}</p>' + _table(
            ["Scenario", "Date", "Temperature", "How far outside"], range_rows
        )

    scenario_items = []
    for fc, name in zip(items, names, strict=True):
        note = str(getattr(fc, "note", "") or "")
        text = f"<li><strong>{html.escape(name)}</strong>"
        if note:
            text += f" - {html.escape(note)}"
        warnings_fn = getattr(fc, "warnings", None)
        messages: list[str] = []
        if callable(warnings_fn):
            try:
                messages = [str(w) for w in (warnings_fn(unit) or [])]
            except Exception:  # noqa: BLE001 - warnings are extra; never fail the brief on them
                log.exception("forecast warnings failed for %s", name)
        if messages:
            text += (
                '<ul class="plain">'
                + "".join(f"<li>{html.escape(m)}</li>" for m in messages)
                + "</ul>"
            )
        scenario_items.append(text + "</li>")

    if not isinstance(model_summary, Mapping):
        raise InputError(
            f"The model summary must be a mapping of labels to values, got {type(model_summary).__name__}",
            fix="Pass loadcore.export.summarise_model(model)",
        )
    model_rows = [[str(k), _summary_value(v)] for k, v in model_summary.items()]
    model_html = (
        _table(["Item", "Value"], model_rows) if model_rows else "<p>No model summary given.</p>"
    )
    if history.empty:
        history_text = "No recorded demand is drawn."
    else:
        history_text = (
            f"Recorded demand drawn: {history.index.min():%Y-%m-%d} to "
            f"{history.index.max():%Y-%m-%d}."
        )
    forecast_dates = pd.concat([_forecast_table(fc, i)["date"] for i, fc in enumerate(items)])
    horizon_text = (
        f"Scenario days: {forecast_dates.min():%Y-%m-%d} to {forecast_dates.max():%Y-%m-%d}."
    )
    generated = datetime.now(UTC).strftime("%Y-%m-%d %H:%M UTC")
    cautions = [PLANNING_CAUTION, INTERVAL_CAUTION, RANGE_CAUTION, *notes]

    return f"""<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="generator" content="loadcore {html.escape(__version__)}">
<title>{html.escape(str(title))}</title>
<style>{_STYLE}</style>
</head>
<body>
<main>
<h1>{html.escape(str(title))}</h1>
<p class="period">{html.escape(str(period_text))}</p>
<p class="caution" id="planning-caution">{html.escape(PLANNING_CAUTION)}</p>

<h2>Demand outlook</h2>
<p class="note">Lines are scenario means; shaded bands are prediction intervals; open triangles mark
days whose temperature lies outside the fitted range.</p>
{chart}

<h2>Scenarios</h2>
<ul class="plain">{"".join(scenario_items)}</ul>

<h2>Comparison with the base scenario</h2>
{summary_table}
{"".join(f'<p class="note">{html.escape(n)}</p>' for n in notes)}

<h2>Days outside the fitted temperature range</h2>
{range_html}

<h2>Model</h2>
{model_html}

<h2>Data period</h2>
<p>{html.escape(str(period_text))}</p>
<p>{html.escape(history_text)} {html.escape(horizon_text)}</p>

<h2>Read this before use</h2>
<ul class="plain" id="cautions">{"".join(f"<li>{html.escape(c)}</li>" for c in cautions)}</ul>

<footer>Prepared with loadcore {html.escape(__version__)} on {generated}.</footer>
</main>
</body>
</html>
"""


def _summary_value(value: Any) -> str:
    if isinstance(value, float):
        return f"{value:,.4g}" if math.isfinite(value) else "–"
    if isinstance(value, (list, tuple)):
        return ", ".join(str(v) for v in value)
    if isinstance(value, Mapping):
        return "; ".join(f"{k}: {v}" for k, v in value.items())
    return str(value)
