"""How export reads a forecast: the small interface shared by tables, the figure and the brief.

A forecast is read through ``frame``, ``levels``, ``scenario_name``, ``note`` and, optionally,
``warnings(temp_unit)``, so a :class:`loadcore.model.Forecast` and a forecast reloaded from the
scenario library (:class:`loadcore.library.StoredForecast`) are treated alike.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any, Protocol

import pandas as pd

from loadcore import levels as interval_levels
from loadcore.errors import InputError, quote


class ForecastLike(Protocol):
    """What export reads from a forecast (a model Forecast or one reloaded from the library)."""

    frame: pd.DataFrame
    levels: tuple
    scenario_name: str
    note: str


def as_list(forecasts: Sequence[Any] | Any) -> list[Any]:
    """One forecast or a sequence of them, as a list."""
    if isinstance(forecasts, (str, bytes)) or not isinstance(forecasts, Sequence):
        return [forecasts]
    return list(forecasts)


def parse_demand_kind(demand_kind: Any) -> str:
    """``"peak"`` (daily peak demand) or ``"total"`` (daily total) from the user's text.

    Raises
    ------
    InputError
        For anything else.
    """
    kind = str(demand_kind).strip().lower()
    if kind not in ("peak", "total"):
        raise InputError(
            f"Unknown kind of daily demand {quote(demand_kind)}",
            fix='use "peak" (daily peak demand) or "total" (daily total)',
        )
    return kind


def forecast_levels(forecast: Any) -> tuple[float, ...]:
    """The forecast's interval levels (percent, checked by :mod:`loadcore.levels`)."""
    levels = getattr(forecast, "levels", None) or ()
    if not levels:
        return ()
    return interval_levels.parse_levels(levels, where="forecast levels")


def scenario_names(forecasts: Sequence[Any], *, allow_empty: bool = False) -> list[str]:
    """The forecasts' scenario names ("scenario N" for a nameless one), checked to be distinct.

    Raises
    ------
    InputError
        When there are no forecasts (unless ``allow_empty``) or two share a name.
    """
    items = as_list(forecasts)
    if not items and not allow_empty:
        raise InputError("There are no forecasts to export", fix="Forecast at least one scenario")
    names = []
    for i, fc in enumerate(items):
        name = getattr(fc, "scenario_name", None)
        names.append(str(name) if name not in (None, "") else f"scenario {i + 1}")
    seen: set[str] = set()
    for name in names:
        if name in seen:
            raise InputError(
                f"Two forecasts share the scenario name {quote(name)}",
                fix="Give every scenario its own name before comparing or exporting",
            )
        seen.add(name)
    return names


def forecast_frame(forecast: Any, position: int) -> pd.DataFrame:
    """The forecast's table with ``date`` as a column, checked for the columns export needs.

    Parameters
    ----------
    forecast : ForecastLike
        The forecast.
    position : int
        Its 0-based place in the list (for messages).

    Returns
    -------
    pandas.DataFrame
        A copy with ``date`` (datetime), ``temperature_c`` (°C), ``day_type``, ``mean``,
        ``median``, ``lower_L``/``upper_L`` per level, ``out_of_range`` and
        ``out_of_range_by_c`` (°C; zeros when the forecast lacks it).
    """
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
    needed += interval_levels.interval_columns(forecast_levels(forecast))
    missing = [c for c in needed if c not in frame.columns]
    if missing:
        raise InputError(
            f"The forecast table lacks the column(s) {', '.join(missing)}",
            where=f"scenario {quote(name)}" if name else f"forecast {position + 1}",
            fix="Re-run the forecast with this version of loadcore",
        )
    frame = frame.copy()
    frame["date"] = pd.to_datetime(frame["date"])
    if "out_of_range_by_c" not in frame.columns:
        frame["out_of_range_by_c"] = 0.0
    return frame


def history_series(history_tail: pd.DataFrame | pd.Series | None) -> pd.Series:
    """Recorded demand as a Series on a date index (empty for None).

    ``history_tail`` is a Series of demand, or a table with a ``demand`` (or ``demand_mw``)
    column on a date index or beside a ``date`` column, as in ``History.frame``.
    """
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
