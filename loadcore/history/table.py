"""The validated daily history: :class:`History`, its fingerprint and :func:`history_from_frame`.

:func:`history_from_frame` builds a History from a table that is already daily (saved models,
backtest cuts, tests); it gives the same fingerprint as :func:`loadcore.history.read_history` for
the same daily data.
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from loadcore.errors import HistoryError
from loadcore.history.daily import runs
from loadcore.history.report import HistoryReport
from loadcore.history.settings import HistorySettings


@dataclass(frozen=True, eq=False)
class History:
    """A validated, complete daily history.

    Attributes
    ----------
    frame : pandas.DataFrame
        Indexed by a complete daily ``DatetimeIndex`` named ``date``; columns ``demand``
        (float, in ``settings.demand_unit``, NaN on missing days), ``temperature_c`` (float, °C,
        no NaN), ``temperature_filled`` (bool, True where interpolated) and, where the source
        gave it (sub-daily readings or a minimum column), ``temperature_min_c`` (float, °C, the
        daily minimum, no NaN).
    settings : HistorySettings
    report : HistoryReport
    fingerprint : str
        sha256 hex digest of the daily dates and values (stable across runs).
    """

    frame: pd.DataFrame
    settings: HistorySettings = field(default_factory=HistorySettings)
    report: HistoryReport = field(default_factory=HistoryReport)
    fingerprint: str = ""

    def __post_init__(self) -> None:
        if not self.fingerprint:
            object.__setattr__(self, "fingerprint", frame_fingerprint(self.frame))

    @property
    def start(self) -> pd.Timestamp:
        """First date."""
        return self.frame.index[0]

    @property
    def end(self) -> pd.Timestamp:
        """Last date."""
        return self.frame.index[-1]

    @property
    def days(self) -> int:
        """Number of days covered."""
        return len(self.frame)

    @property
    def has_minimum(self) -> bool:
        """Whether the history has the daily minimum temperature (``temperature_min_c``)."""
        return "temperature_min_c" in self.frame.columns

    @property
    def temperature_range_c(self) -> tuple[float, float]:
        """(lowest, highest) daily temperature in °C."""
        temps = self.frame["temperature_c"]
        return float(temps.min()), float(temps.max())


def frame_fingerprint(frame: pd.DataFrame) -> str:
    """sha256 over the day numbers and the float/bool values, independent of time resolution."""
    digest = hashlib.sha256()
    days = np.asarray(frame.index.values.astype("datetime64[D]").astype(np.int64), dtype="<i8")
    digest.update(days.tobytes())
    for name in ("demand", "temperature_c", "temperature_filled", "temperature_min_c"):
        if name not in frame:
            continue
        digest.update(name.encode())
        values = frame[name].to_numpy()
        if name == "temperature_filled":
            digest.update(np.asarray(values, dtype=np.uint8).tobytes())
        else:
            arr = np.asarray(values, dtype="<f8").copy()
            arr[np.isnan(arr)] = np.nan  # one canonical NaN bit pattern
            digest.update(arr.tobytes())
    return digest.hexdigest()


def _filled(temp: pd.Series, name: str, settings: HistorySettings) -> tuple[pd.Series, np.ndarray]:
    """A daily temperature column with its short inner gaps interpolated, and where they were.

    Raises
    ------
    HistoryError
        For a gap at either end or longer than ``settings.max_temp_gap_days``.
    """
    missing = temp.isna().to_numpy()
    for a, b in runs(missing):
        if a == 0 or b == len(temp) - 1 or b - a + 1 > settings.max_temp_gap_days:
            raise HistoryError(
                f"Temperature is missing for {b - a + 1} day(s) and cannot be filled",
                where=f"date {temp.index[a]:%Y-%m-%d}",
                fix=f"Give a {name} value on every day (gaps of up to "
                f"{settings.max_temp_gap_days} days inside the history are interpolated)",
            )
    if missing.any():
        temp = temp.interpolate(method="linear")
    return temp, missing


def history_from_frame(
    frame: pd.DataFrame,
    settings: HistorySettings | None = None,
    report: HistoryReport | None = None,
) -> History:
    """Build a History from an already-daily frame.

    Parameters
    ----------
    frame : pandas.DataFrame
        Daily ``DatetimeIndex`` (or a ``date`` column) and columns ``demand`` (MW) and
        ``temperature_c`` (°C); optional ``temperature_filled`` (bool) and
        ``temperature_min_c`` (°C, the daily minimum). Missing dates are added with NaN demand;
        temperature must be present on every day (short gaps inside are interpolated).
    settings, report : optional
        Kept on the History as given (defaults: ``HistorySettings()`` and an empty report).

    Raises
    ------
    HistoryError
        If columns are missing, dates repeat or are not daily, temperature is missing or demand
        is not positive.
    """
    settings = settings or HistorySettings()
    data = frame.copy()
    if "date" in data.columns:
        data = data.set_index("date")
    for name in ("demand", "temperature_c"):
        if name not in data.columns:
            raise HistoryError(
                f"The table has no {name!r} column",
                where="columns: " + ", ".join(map(str, data.columns)),
                fix="Give columns 'demand' (MW) and 'temperature_c' (°C) on a daily date index",
            )
    try:
        index = pd.DatetimeIndex(data.index)
    except (TypeError, ValueError) as exc:
        raise HistoryError(
            "The table's index is not made of dates",
            where="index",
            fix="Index the table by date (a DatetimeIndex)",
        ) from exc
    if index.hasnans or index.has_duplicates:
        raise HistoryError(
            "The table's dates have blanks or repeats",
            where="index",
            fix="Give one row per date",
        )
    if (index != index.normalize()).any():
        raise HistoryError(
            "The table's dates carry times of day", where="index", fix="Use whole dates"
        )
    data.index = index
    data = data.sort_index()
    full = pd.date_range(data.index[0], data.index[-1], freq="D", name="date")
    data = data.reindex(full)
    demand = pd.to_numeric(data["demand"], errors="coerce").astype(float)
    temp = pd.to_numeric(data["temperature_c"], errors="coerce").astype(float)
    temp, missing_temp = _filled(temp, "temperature_c", settings)
    minimum = None
    if "temperature_min_c" in data.columns:
        minimum, _ = _filled(
            pd.to_numeric(data["temperature_min_c"], errors="coerce").astype(float),
            "temperature_min_c",
            settings,
        )
    if (demand <= 0).any():
        bad = demand.index[(demand <= 0).to_numpy()][0]
        raise HistoryError(
            "Demand must be above zero",
            where=f"date {bad:%Y-%m-%d}",
            fix="Correct the value or set it to NaN to mark it missing",
        )
    filled = (
        data["temperature_filled"].fillna(False).astype(bool)
        if "temperature_filled" in data.columns
        else pd.Series(False, index=full)
    ) | missing_temp
    columns = {
        "demand": demand.to_numpy(),
        "temperature_c": temp.to_numpy(),
        "temperature_filled": filled.to_numpy(),
    }
    if minimum is not None:
        columns["temperature_min_c"] = minimum.to_numpy()
    out = pd.DataFrame(columns, index=pd.DatetimeIndex(full, freq="D", name="date"))
    return History(frame=out, settings=settings, report=report or HistoryReport())
